"""Well-defined residues of an NMR ensemble by the angular order parameter, for the fold-selection
diagnostic (tools/validate_folds.py: TM-score over the ordered core as well as over the chain).

S(θ) = |(1/M) Σ_m exp(iθ_m)| over the M models (Hyberts, Goldberg, Havel & Wagner 1992, Protein Sci.
1:736, from memory); a residue is ordered when S(φ) ≥ 0.9 and S(ψ) ≥ 0.9 (a common threshold, from
memory). The NMR ensemble is the multi-model structure of the protein's shift list in
tools/realdata_pairs.tsv with the most models; residues are matched to the native through the shift
list's sequence (shiftcheck.structure.mapping). Proteins without an ensemble count every residue.

:func:`ensemble_spread` gives the same ensemble's spread about the native: the median TM-score
(tools/tmscore.py) of its models to the native over the residues both have, the native itself
left out; a decoy closer to the native than that is as close as the deposited models are.
"""
from __future__ import annotations

import glob
from pathlib import Path

import numpy as np

__all__ = ["angular_order", "ordered_residues", "ensemble_spread"]

HERE = Path(__file__).resolve().parent
THRESHOLD = 0.9


def angular_order(angles_deg: np.ndarray) -> np.ndarray:
    """S per column of (n_models, n_residues) angles in degrees; NaN where no model defines it."""
    z = np.exp(1j * np.radians(np.asarray(angles_deg, float)))
    ok = np.isfinite(z)
    n = ok.sum(axis=0)
    s = np.abs(np.where(ok, z, 0).sum(axis=0)) / np.maximum(n, 1)
    return np.where(n > 0, s, np.nan)


def _ensemble(root: Path, shift_rel: str):
    from shiftcheck.io.coords import read_models

    best = None
    for line in (HERE / "realdata_pairs.tsv").read_text().splitlines():
        cols = line.split("\t")
        if not line or line.startswith("#") or cols[0] != shift_rel:
            continue
        for f in sorted(glob.glob(str(root / cols[1]))):
            e = read_models([f], chain=cols[2] if len(cols) > 2 and cols[2] else None, build_hydrogens=False)[0]
            if e.n_models > 1 and (best is None or e.n_models > best.n_models):
                best = e
    return best


def ordered_residues(root: Path, folder: str, shift_file: str, native) -> tuple[np.ndarray, str]:
    """(boolean mask over the native's residues, description of its source)."""
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.structure.geometry import backbone_torsions
    from shiftcheck.structure.mapping import map_sequence

    ens = _ensemble(root, f"{folder}/{shift_file}")
    if ens is None:
        return np.ones(native.n_residues, bool), "no NMR ensemble: every residue"
    sl = read_shifts(root / folder / shift_file)
    to_nat, to_ens = map_sequence(sl, native).seq_to_res, map_sequence(sl, ens).seq_to_res
    t = backbone_torsions(ens)
    with np.errstate(invalid="ignore"):
        ok = (angular_order(t["phi"]) >= THRESHOLD) & (angular_order(t["psi"]) >= THRESHOLD)
    mask = np.zeros(native.n_residues, bool)
    for s, j in to_nat.items():
        k = to_ens.get(s)
        mask[j] = k is not None and bool(ok[k])
    return mask, f"{ens.n_models}-model ensemble"


def ensemble_spread(root: Path, folder: str, shift_file: str, native) -> tuple[float, int]:
    """(median TM-score of the NMR ensemble's models to the native, number of models compared);
    (NaN, 0) without an ensemble. Models identical to the native (TM > 0.999) are left out."""
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.structure.mapping import map_sequence
    from tmscore import tm_score

    ens = _ensemble(root, f"{folder}/{shift_file}")
    if ens is None:
        return float("nan"), 0
    sl = read_shifts(root / folder / shift_file)
    to_nat, to_ens = map_sequence(sl, native).seq_to_res, map_sequence(sl, ens).seq_to_res
    pairs = [(j, to_ens[s]) for s, j in to_nat.items() if s in to_ens]
    if len(pairs) < 3:                  # too few residues in common to superpose
        return float("nan"), 0
    nat_ca = native.xyz(np.array([j for j, _ in pairs]), "CA")[0]
    ens_ca = ens.xyz(np.array([k for _, k in pairs]), "CA")
    tms = []
    for m in range(ens.n_models):
        ok = np.isfinite(nat_ca).all(1) & np.isfinite(ens_ca[m]).all(1)
        if ok.sum() >= 3:
            t = tm_score(ens_ca[m][ok], nat_ca[ok], length=int(np.isfinite(nat_ca).all(1).sum()))
            if t <= 0.999:
                tms.append(t)
    return (float(np.median(tms)), len(tms)) if tms else (float("nan"), 0)
