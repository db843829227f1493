"""Names of the nucleus classes shiftcheck predicts and scores.

The backbone classes follow the trade's usual grouping (amide H, HA, CA, CB, C', N);
side-chain classes group methyl protons and aromatic ring protons.
"""
from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from collections.abc import Sequence
    from ..shiftlist import ShiftList
    from ..structure.ensemble import Ensemble

__all__ = ["BACKBONE", "SIDECHAIN", "ALL_CLASSES", "nucleus_class", "METHYL_PROTONS",
           "AROMATIC_PROTONS"]

BACKBONE: tuple[str, ...] = ("H", "HA", "CA", "CB", "C", "N")
SIDECHAIN: tuple[str, ...] = ("HMe", "Haro")
ALL_CLASSES: tuple[str, ...] = BACKBONE + SIDECHAIN

# IUPAC 1998 names (Markley et al., Pure Appl. Chem. 70:117)
METHYL_PROTONS: dict[str, tuple[str, ...]] = {
    "ALA": ("HB1", "HB2", "HB3"),
    "VAL": ("HG11", "HG12", "HG13", "HG21", "HG22", "HG23"),
    "LEU": ("HD11", "HD12", "HD13", "HD21", "HD22", "HD23"),
    "ILE": ("HG21", "HG22", "HG23", "HD11", "HD12", "HD13"),
    "THR": ("HG21", "HG22", "HG23"),
    "MET": ("HE1", "HE2", "HE3"),
}
AROMATIC_PROTONS: dict[str, tuple[str, ...]] = {
    "PHE": ("HD1", "HD2", "HE1", "HE2", "HZ"),
    "TYR": ("HD1", "HD2", "HE1", "HE2"),
    # Trp HE1 is the indole N-H (about 10 ppm, exchangeable, hydrogen-bonding), not a ring C-H:
    # it is left out of the class rather than mixed with the 6-8 ppm ring protons
    "TRP": ("HD1", "HE3", "HZ2", "HZ3", "HH2"),
    "HIS": ("HD2", "HE1"),
}


def nucleus_class(comp_id: str, atom_id: str) -> str | None:
    """Return the scoring class of an atom (IUPAC name), or None if not scored.

    >>> nucleus_class("GLY", "HA2"), nucleus_class("ALA", "HB2"), nucleus_class("ALA", "CB")
    ('HA', 'HMe', 'CB')
    """
    if atom_id in ("H", "CA", "CB", "C", "N"):
        if atom_id == "CB" and comp_id == "GLY":
            return None
        return atom_id
    if atom_id in ("HA", "HA2", "HA3"):
        return "HA"
    if atom_id in METHYL_PROTONS.get(comp_id, ()):
        return "HMe"
    if atom_id in AROMATIC_PROTONS.get(comp_id, ()):
        return "Haro"
    return None


#: Atoms whose shifts the charged chain ends move by several ppm (free amine of the first residue,
#: carboxylate of the last). The predictor has no term for them (its random-coil table is measured
#: inside peptides), so calibration and scoring leave them out. Common practice, no single source.
N_TERMINAL_ATOMS: tuple[str, ...] = ("N", "H", "C")
C_TERMINAL_ATOMS: tuple[str, ...] = ("C",)


def entity_ends(shifts: ShiftList, ensembles: Sequence[Ensemble] = (), seq_to_res=()) -> tuple[int | None, int | None]:
    """Seq_IDs of the residues at the charged chain ends, or None where there is no end.

    The ends are the first and last Seq_ID of the entity sequence of ``shifts`` (of its shifts if
    it has no sequence). Some files list only part of the construct (re-wrapped tables that start
    at the first assigned residue, while the expressed protein carries a tag): so an end is
    cancelled when a model has a residue beyond it, i.e. the mapped model residue is not the first
    (last) residue of its chain. A model that simply stops earlier does not cancel anything.

    Parameters
    ----------
    shifts : ShiftList
    ensembles : sequence of Ensemble, optional
    seq_to_res : sequence of dict, optional
        One Seq_ID -> residue-index map per ensemble (``Mapping.seq_to_res``).
    """
    import numpy as np

    ids = shifts.sequence_seq_ids if len(shifts.sequence_seq_ids) else shifts.seq_id
    ids = np.asarray(ids, dtype=int)
    if not ids.size:
        return None, None
    first, last = int(ids.min()), int(ids.max())
    for ens, s2r in zip(ensembles, seq_to_res):
        r = s2r.get(first)
        if first is not None and r is not None and r > 0:
            first = None
        r = s2r.get(last)
        if last is not None and r is not None and r < ens.n_residues - 1:
            last = None
    return first, last


def at_chain_terminus(seq_id: int, atom_id: str, ends: tuple[int | None, int | None]) -> bool:
    """True for N, H, C of the first residue of the entity and C of the last."""
    first, last = ends
    return (seq_id == first and atom_id in N_TERMINAL_ATOMS) or (seq_id == last and atom_id in C_TERMINAL_ATOMS)
