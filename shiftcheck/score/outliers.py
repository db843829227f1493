"""Outlier atoms: |z| = |residual| / sigma_nucleus > k (default 3, ``--k-sigma``).

Class of a flagged atom, judged over the individual models (ensemble-mean entries excluded):

* ``every`` - flagged in every model: the disagreement does not depend on the structure, so it
  points at the data (misassignment, typo, referencing, a swapped pair) or at something the
  predictor does not capture (dynamics, ligand, pH).
* ``some`` - flagged only in some models: points at those models.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Outliers", "find_outliers", "residue_summary"]


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


def _r3(x) -> float:
    return round(float(x), 3)


def residue_summary(comp, z: np.ndarray, out: Outliers, best: int) -> list[dict]:
    """One dict per residue of the common atom set, across nuclei.

    Keys: seq_id, comp_id, n_atoms, rms_z_best (RMS normalised residual in the best model),
    max_abs_z_best, flagged_every (atoms flagged in every model), flagged_some (atoms flagged in
    some models), n_models_flagged (models with at least one flagged atom in this residue).
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
    return rows
