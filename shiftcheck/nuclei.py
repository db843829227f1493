"""Names of the nucleus classes shiftcheck predicts and scores.

The backbone classes follow the trade's usual grouping (amide H, HA, CA, CB, C', N);
side-chain classes group methyl protons and aromatic ring protons.
"""
from __future__ import annotations

__all__ = ["BACKBONE", "SIDECHAIN", "ALL_CLASSES", "nucleus_class", "isotope_of", "METHYL_PROTONS",
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
    "TRP": ("HD1", "HE1", "HE3", "HZ2", "HZ3", "HH2"),
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


def isotope_of(atom_id: str) -> str:
    """'H', 'C', 'N', 'O' or 'S' from the first letter of an IUPAC atom name."""
    return atom_id[:1].upper()
