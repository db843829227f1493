"""Referencing offsets: one per isotope (13C, 15N, 1H), estimated from measured - predicted.

Estimate: the median over atoms of (measured - consensus prediction), where the consensus is the
median prediction over all individual models (ensemble-mean entries excluded). 13C uses CA, CB
and C' together (with a per-atom breakdown); 15N uses N; 1H uses H, HA and methyl protons
(aromatic protons are left out, ring currents dominate them). The classes and thresholds live in
shiftcheck/data/scoring.json with their sources.

Interval: percentile bootstrap (2.5-97.5 %) resampling *residues* with replacement (all atoms of a
drawn residue go together), vectorised as weighted medians over a counts matrix.

Decision (``mode``): 'off' never corrects; 'force' always corrects; 'auto' corrects when the
95 % interval excludes zero AND |offset| exceeds the isotope's threshold (typical
between-laboratory referencing uncertainty: 13C 0.5, 15N 1.0, 1H 0.1 ppm, from memory).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ._constants import scoring_constants

__all__ = ["Offset", "estimate_offsets", "weighted_median", "residue_weights", "REREF_MODES"]

REREF_MODES = ("auto", "off", "force")


@dataclass
class Offset:
    """Referencing offset of one isotope (ppm, measured - predicted)."""

    isotope: str
    value: float
    low: float
    high: float
    n: int
    applied: bool
    threshold: float
    per_atom: dict[str, dict] = field(default_factory=dict)

    def as_dict(self) -> dict:
        return {"value": _f(self.value), "low": _f(self.low), "high": _f(self.high), "n": self.n,
                "applied": self.applied, "threshold": self.threshold, "per_atom": self.per_atom}

    @property
    def correction(self) -> float:
        """The amount subtracted from the measured shifts (0 when not applied)."""
        return self.value if self.applied else 0.0


def _f(x: float):
    return None if x is None or not np.isfinite(x) else round(float(x), 4)


def residue_weights(n_res: int, n_boot: int, rng: np.random.Generator) -> np.ndarray:
    """Bootstrap counts (n_boot, n_res): how often each residue is drawn in each replicate."""
    if n_res == 0:
        return np.zeros((n_boot, 0))
    draws = rng.integers(0, n_res, size=(n_boot, n_res))
    w = np.zeros((n_boot, n_res))
    np.add.at(w, (np.repeat(np.arange(n_boot), n_res), draws.ravel()), 1.0)
    return w


def weighted_median(values: np.ndarray, weights: np.ndarray) -> np.ndarray:
    """Lower weighted median of ``values`` (n,) under each row of ``weights`` (k, n) -> (k,).

    NaN where a row's weights sum to zero.
    """
    order = np.argsort(values)
    v = values[order]
    w = np.atleast_2d(weights)[:, order]
    cum = np.cumsum(w, axis=1)
    total = cum[:, -1:] if v.size else np.zeros((w.shape[0], 1))
    idx = np.argmax(cum >= 0.5 * total, axis=1) if v.size else np.zeros(w.shape[0], int)
    out = v[idx] if v.size else np.full(w.shape[0], np.nan)
    return np.where(total[:, 0] > 0, out, np.nan)


def _one(diff: np.ndarray, residue: np.ndarray, W: np.ndarray) -> tuple[float, float, float]:
    if diff.size == 0:
        return np.nan, np.nan, np.nan
    value = float(np.median(diff))
    boot = weighted_median(diff, W[:, residue])
    boot = boot[np.isfinite(boot)]
    lo, hi = (np.percentile(boot, [2.5, 97.5]) if boot.size else (np.nan, np.nan))
    return value, float(lo), float(hi)


def _consensus(predicted: np.ndarray, rows: np.ndarray, budget: int = 1 << 25) -> np.ndarray:
    """Median over the given rows of each column (models lacking an atom: the others), taken over
    blocks of columns so that no copy of all rows x all columns is made (exact: per column)."""
    import warnings

    n = predicted.shape[1]
    width = max(1, budget // (8 * max(1, rows.size)))
    out = np.empty(n)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)      # an atom no model has: NaN
        for a in range(0, n, width):
            out[a:a + width] = np.nanmedian(predicted[rows, a:a + width], axis=0)
    return out


def estimate_offsets(comp, mode: str = "auto", n_boot: int = 1000, seed: int | None = None,
                     weights: np.ndarray | None = None) -> dict[str, Offset]:
    """Estimate the 13C, 15N and 1H offsets of the measured shifts.

    Parameters
    ----------
    comp : Comparison
        The common atom set (:func:`shiftcheck.score.comparison.build_comparison`).
    mode : {'auto', 'off', 'force'}
    n_boot : int
        Bootstrap replicates for the interval.
    seed : int, optional
        Seed of the bootstrap (default: the documented seed in scoring.json).
    weights : array (n_boot, n_res), optional
        Pre-drawn residue counts (to share the resampling with other estimates).

    Returns
    -------
    dict 'C' | 'N' | 'H' -> Offset
    """
    if mode not in REREF_MODES:
        raise ValueError(f"reref mode must be one of {REREF_MODES}")
    const = scoring_constants()
    seed = const["seed"]["value"] if seed is None else seed
    if weights is None:
        weights = residue_weights(comp.n_residues, n_boot, np.random.default_rng(seed))
    indiv = ~comp.is_mean
    if comp.predicted.shape[0] == 0 or not indiv.any():
        consensus = np.full(len(comp), np.nan)
    else:
        consensus = _consensus(comp.predicted, np.flatnonzero(indiv))
    diff = comp.measured - consensus
    out = {}
    for iso in ("C", "N", "H"):
        classes = const["offset_classes"][iso]
        sel = np.isin(comp.nucleus.astype(str), classes)
        value, lo, hi = _one(diff[sel], comp.residue[sel], weights)
        per_atom = {}
        if iso in ("C", "H"):
            for c in classes:
                s = comp.nucleus.astype(str) == c
                v, l, h = _one(diff[s], comp.residue[s], weights)
                per_atom[c] = {"value": _f(v), "low": _f(l), "high": _f(h), "n": int(s.sum())}
        thr = float(const["reref_threshold"][iso])
        n = int(sel.sum())
        if mode == "off" or n == 0:
            applied = False
        elif mode == "force":
            applied = True
        else:
            applied = bool(np.isfinite(lo) and (lo > 0 or hi < 0) and abs(value) > thr)
        out[iso] = Offset(iso, value, lo, hi, n, applied, thr, per_atom)
    return out
