"""Outlier atoms: |z| = |residual| / sigma_nucleus > k (default 3, ``--k-sigma``).

Class of a flagged atom, judged over the individual models (ensemble-mean entries excluded):

* ``every`` - flagged in every model: the disagreement does not depend on the structure, so it
  points at the data (misassignment, typo, referencing, a swapped pair) or at something the
  predictor does not capture (dynamics, ligand, pH).
* ``some`` - flagged only in some models: points at those models.

Whole residues are judged as well (:func:`residue_limit`): a residue whose atoms together
disagree more than a correct structure's residues do, although no single atom need pass 3σ
(the signature of shifts assigned to the wrong residue). Its statistic is Q = Σ q(z) over the
residue's compared atoms, with q the score's Huber-type loss (z² up to h, linear beyond); it is
flagged when Q > c · χ²_k(tail) for k atoms, where χ²_k(tail) is the chi-square quantile (k
degrees of freedom; the distribution of Σ z² for k independent normal z) and c the scale that
makes the rule fire on the stated fraction of held-out residues of correct structures
(:func:`residue_rule_scale`, fitted by ``shiftcheck calibrate``).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Outliers", "find_outliers", "residue_summary", "residue_limit", "residue_rule_scale",
           "residue_classes"]


@dataclass
class Outliers:
    flagged: np.ndarray        # bool (n_entries, n)
    klass: np.ndarray          # per atom: 'every', 'some' or '' (not flagged in any model)
    n_models_flagged: np.ndarray   # per atom, individual models only
    k: float


def find_outliers(z: np.ndarray, is_mean: np.ndarray, k: float = 3.0) -> Outliers:
    """Flag |z| > k and classify each atom across the individual models."""
    with np.errstate(invalid="ignore"):
        flagged = np.abs(z) > k            # NaN (atom absent from a model): not flagged there
    zi = z[~is_mean] if (~is_mean).any() else z
    indiv = flagged[~is_mean] if (~is_mean).any() else flagged
    n = indiv.sum(axis=0)
    total = np.isfinite(zi).sum(axis=0)    # models that have the atom
    klass = np.where((n == total) & (total > 0), "every", np.where(n > 0, "some", "")).astype(object)
    if zi.shape[0] == 0:
        klass[:] = ""
    return Outliers(flagged, klass, n, k)


def residue_limit(k, scale: float, tail: float) -> np.ndarray:
    """Residue-rule limit c · χ²_k(tail) for k compared atoms (NaN where k = 0).

    χ²_k(p) = 2 · P⁻¹(k/2, p), P the regularised lower incomplete gamma function (the chi-square
    distribution is a gamma distribution with shape k/2 and scale 2); scipy.special is used
    rather than scipy.stats, whose import alone takes about a second."""
    from scipy.special import gammaincinv

    k = np.asarray(k, dtype=float)
    u, inv = np.unique(k, return_inverse=True)      # few distinct atom counts: one quantile each
    q = np.where(u > 0, scale * 2.0 * gammaincinv(np.maximum(u, 1) / 2.0, tail), np.nan)
    return q[inv].reshape(k.shape)


def residue_rule_scale(q_sum, k, tail: float) -> float:
    """Scale c with a fraction 1 − ``tail`` of residues above c · χ²_k(tail): the ``tail``
    quantile of Q / χ²_k(tail) over held-out residues (Q = Σ q(z), k atoms each)."""
    q_sum, k = np.asarray(q_sum, float), np.asarray(k, float)
    ok = np.isfinite(q_sum) & (k > 0)
    return float(np.quantile(q_sum[ok] / residue_limit(k[ok], 1.0, tail), tail))


def residue_classes(flagged: np.ndarray, counts: np.ndarray, is_mean: np.ndarray) -> np.ndarray:
    """'every' / 'some' / '' per residue from (n_entries, n_res) flags, judged over the
    individual models that have atoms there (as for atoms)."""
    ind = ~is_mean if (~is_mean).any() else np.ones(len(is_mean), bool)
    f, have = flagged[ind], counts[ind] > 0
    n, total = (f & have).sum(axis=0), have.sum(axis=0)
    return np.where((n == total) & (total > 0), "every", np.where(n > 0, "some", "")).astype(object)


def _r3(x) -> float:
    return round(float(x), 3)


def residue_summary(comp, z: np.ndarray, out: Outliers, best: int, residue_rule: dict | None = None) -> list[dict]:
    """One dict per residue of the common atom set, across nuclei.

    Keys: seq_id, comp_id, n_atoms, rms_z_best (RMS normalised residual in the best model),
    max_abs_z_best, flagged_every (atoms flagged in every model), flagged_some (atoms flagged in
    some models), n_models_flagged (models with at least one flagged atom in this residue);
    with ``residue_rule`` ({'q_best', 'limit_best', 'klass'}, arrays per residue) also
    residue_q_best, residue_limit_best and residue_flag ('every', 'some' or '').
    """
    rows = []
    is_mean = comp.is_mean
    models = out.flagged[~is_mean] if (~is_mean).any() else out.flagged
    for r in range(comp.n_residues):
        s = comp.residue == r
        zb = z[best, s]
        atoms = comp.atom_id[s]
        kl = out.klass[s]
        fl = models[:, s]
        rows.append({
            "seq_id": int(comp.seq_id[s][0]), "comp_id": str(comp.comp_id[s][0]),
            "n_atoms": int(s.sum()),
            "rms_z_best": _r3(np.sqrt(np.mean(zb[np.isfinite(zb)] ** 2))) if np.isfinite(zb).any() else None,
            "max_abs_z_best": _r3(np.max(np.abs(zb[np.isfinite(zb)]))) if np.isfinite(zb).any() else None,
            "flagged_every": [str(a) for a, c in zip(atoms, kl) if c == "every"],
            "flagged_some": [str(a) for a, c in zip(atoms, kl) if c == "some"],
            "n_models_flagged": int(fl.any(axis=1).sum()),
        })
        if residue_rule is not None:
            q, lim = residue_rule["q_best"][r], residue_rule["limit_best"][r]
            rows[-1].update({"residue_q_best": _r3(q) if np.isfinite(q) else None,
                             "residue_limit_best": _r3(lim) if np.isfinite(lim) else None,
                             "residue_flag": str(residue_rule["klass"][r])})
    return rows
