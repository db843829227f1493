"""Secondary chemical shifts of the measured data: ΔδCA − ΔδCB per residue.

A secondary shift is the measured shift minus the random-coil shift of the same residue type,
Δδ = δ_measured − δ_offset − δ_rc. CA secondary shifts are positive in helices and negative in
strands, CB the other way round (Spera & Bax 1991, J. Am. Chem. Soc. 113:5490; Wishart &
Sykes 1994, J. Biomol. NMR 4:171). Their difference ΔδCA − ΔδCB adds the two signals and cancels
a common referencing error of the 13C scale; it is common practice to read it per residue
(combination stated from memory, no single source here).

Conventions used here (documented in docs/method.md):

* random-coil values are the residue-type base values of the shipped table
  (``shiftcheck/data/random_coil.json``, via :func:`shiftcheck.predict.randomcoil.load_table`);
  the neighbour (following Pro), cis-Pro, disulfide, temperature and pH corrections that the
  predictor applies are **not** applied here; Cys uses the reduced (CYS) entry;
* the referencing ``offset`` of the row (residues.csv) is subtracted; NaN counts as 0;
* Gly has no CB: its value is ΔδCA alone;
* a residue lacking a measured CA, or a measured CB (other than Gly), gets NaN (no bar).
"""
from __future__ import annotations

import numpy as np

from ..predict.randomcoil import load_table, table_value

__all__ = ["secondary_shift_difference", "random_coil_base"]


def random_coil_base(comp_id: str, atom_id: str, table: dict | None = None) -> float:
    """Residue-type random-coil shift (no corrections) of ``atom_id`` in ``comp_id``; NaN if absent."""
    return table_value(load_table() if table is None else table, str(comp_id).upper(), atom_id)


def secondary_shift_difference(seq_id, comp_id, atom_id, measured, offset=None,
                               table: dict | None = None):
    """Per-residue ΔδCA − ΔδCB from per-atom measured shifts.

    Parameters
    ----------
    seq_id, comp_id, atom_id : array_like, shape (n,)
        Residue number, residue name (three-letter) and atom name of each row. Rows other than
        CA and CB are ignored. If a residue has several CA (or CB) rows, e.g. one per model
        of residues.csv, their mean is used (they hold the same measured value).
    measured : array_like of float, shape (n,)
        Measured shift (ppm) as deposited.
    offset : array_like of float, shape (n,), optional
        Referencing correction subtracted from ``measured`` (NaN or None: 0).
    table : dict, optional
        Random-coil table as returned by :func:`~shiftcheck.predict.randomcoil.load_table`
        (default: the shipped table).

    Returns
    -------
    seq : numpy.ndarray of int, shape (r,)
        Residue numbers that have at least one CA or CB row, ascending.
    value : numpy.ndarray of float, shape (r,)
        ΔδCA − ΔδCB in ppm; ΔδCA alone for Gly; NaN where CA (or CB for non-Gly) is missing
        or the table has no random-coil value.
    """
    seq_id = np.asarray(seq_id, dtype=int)
    comp = np.asarray(comp_id, dtype=object).astype(str)
    atom = np.asarray(atom_id, dtype=object).astype(str)
    meas = np.asarray(measured, dtype=float)
    off = np.zeros(meas.shape) if offset is None else np.asarray(offset, dtype=float)
    off = np.where(np.isfinite(off), off, 0.0)
    table = load_table() if table is None else table
    keep = np.isin(atom, ("CA", "CB")) & np.isfinite(meas)
    seq = np.unique(seq_id[np.isin(atom, ("CA", "CB"))])
    out = np.full(seq.size, np.nan)
    if not keep.any():
        return seq, out
    s, c, a, v = seq_id[keep], comp[keep], atom[keep], meas[keep] - off[keep]
    rc = np.array([random_coil_base(ci, ai, table) for ci, ai in zip(c, a)])
    delta = v - rc
    pos = np.searchsorted(seq, s)
    sums = {x: np.zeros(seq.size) for x in ("CA", "CB")}
    counts = {x: np.zeros(seq.size) for x in ("CA", "CB")}
    for x in ("CA", "CB"):
        m = a == x
        np.add.at(sums[x], pos[m], delta[m])
        np.add.at(counts[x], pos[m], 1)
    with np.errstate(invalid="ignore", divide="ignore"):
        dca = sums["CA"] / counts["CA"]
        dcb = sums["CB"] / counts["CB"]
    gly = np.zeros(seq.size, bool)
    gly[pos[c == "GLY"]] = True
    out = np.where(gly, dca, dca - dcb)
    out[~np.isfinite(out)] = np.nan
    return seq, out
