"""Agreement between measured and predicted shifts: per-nucleus RMSD, MAD, Pearson r, N, and the
robust normalised loss the combined score is built from.

Definitions (docs/outputs.md):

* residual r = (measured - applied offset) - predicted (ppm); z = r / sigma_nucleus, with sigma the
  predictor's expected error for that nucleus class.
* RMSD = sqrt(mean r^2); MAD = mean |r| (mean absolute deviation, the usual "MAE");
  r = Pearson correlation of measured and predicted; N = number of compared atoms.
* Robust loss per atom q(z) = z^2 for |z| <= h, 2h|z| - h^2 beyond (twice the Huber 1964 loss,
  Ann. Math. Stat. 35:73; h in shiftcheck/data/scoring.json). Combined score =
  sqrt(sum over atoms q / number of atoms): a count-weighted root mean robust square of the
  normalised residuals; 1 means "as good as the predictor usually is"; lower is better.
"""
from __future__ import annotations

import warnings

import numpy as np

from ..chem.nuclei import ALL_CLASSES

__all__ = ["huber_q", "per_nucleus_metrics", "combined_score"]


def huber_q(z: np.ndarray, h: float) -> np.ndarray:
    """Robust squared normalised residual: z^2 inside |z| <= h, 2h|z| - h^2 outside."""
    a = np.abs(z)
    return np.where(a <= h, a * a, 2.0 * h * a - h * h)


def _pearson(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Row-wise Pearson r of x (n,) against each row of y (k, n); NaN in y: that row's own atoms.

    Each row is computed on its own (no matrix product), so a row's r does not depend on the
    other rows given with it."""
    bad = ~np.isfinite(y)
    if bad.any():
        out = np.full(y.shape[0], np.nan)
        for k in range(y.shape[0]):
            ok = ~bad[k]
            out[k] = _pearson(x[ok], y[k:k + 1, ok])[0] if ok.any() else np.nan
        return out
    if x.size < 3:
        return np.full(y.shape[0], np.nan)
    xc = x - x.mean()
    yc = y - y.mean(axis=1, keepdims=True)
    den = np.sqrt((xc * xc).sum() * (yc * yc).sum(axis=1))
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(den > 0, (yc * xc).sum(axis=1) / den, np.nan)


def per_nucleus_metrics(measured_ref: np.ndarray, predicted: np.ndarray, nucleus: np.ndarray,
                        classes=ALL_CLASSES) -> dict[str, dict[str, np.ndarray]]:
    """RMSD, MAD, r and N per nucleus class for every entry.

    Parameters
    ----------
    measured_ref : (n,) measured shifts with the applied offset subtracted
    predicted : (n_entries, n)
    nucleus : (n,) class labels

    Returns
    -------
    dict class -> {'rmsd', 'mad', 'r': arrays (n_entries,), 'n': int}
    """
    out = {}
    nuc = nucleus.astype(str)
    for c in classes:
        s = nuc == c
        n = int(s.sum())
        if n == 0:
            nan = np.full(predicted.shape[0], np.nan)
            out[c] = {"rmsd": nan, "mad": nan.copy(), "r": nan.copy(), "n": 0}
            continue
        res = measured_ref[s][None, :] - predicted[:, s]
        with np.errstate(invalid="ignore"), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)     # a model lacking every atom
            out[c] = {"rmsd": np.sqrt(np.nanmean(res ** 2, axis=1)),
                      "mad": np.nanmean(np.abs(res), axis=1),
                      "r": _pearson(measured_ref[s], predicted[:, s]), "n": n}
    return out


def combined_score(q: np.ndarray) -> np.ndarray:
    """Combined score of each entry from its robust losses q (n_entries, n): sqrt(mean q)."""
    if q.shape[1] == 0:
        return np.full(q.shape[0], np.nan)
    with np.errstate(invalid="ignore"), warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return np.sqrt(np.nanmean(q, axis=1))         # NaN: an atom the model lacks
