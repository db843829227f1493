"""Residue facts: names and codes of the 20 standard amino acids and their heavy atoms.

Names and one-letter codes: IUPAC-IUB Joint Commission on Biochemical Nomenclature (1984),
Eur. J. Biochem. 138:9 (from memory); atom names IUPAC 1998 (Markley et al., Pure Appl. Chem. 70:117).
Selenomethionine (MSE) reads as Met.
"""
from __future__ import annotations

__all__ = ["THREE_TO_ONE", "ONE_TO_THREE", "AA20", "HEAVY_ATOMS"]

#: Three-letter residue name -> one-letter code.
THREE_TO_ONE = {
    "ALA": "A", "ARG": "R", "ASN": "N", "ASP": "D", "CYS": "C", "GLN": "Q", "GLU": "E",
    "GLY": "G", "HIS": "H", "ILE": "I", "LEU": "L", "LYS": "K", "MET": "M", "PHE": "F",
    "PRO": "P", "SER": "S", "THR": "T", "TRP": "W", "TYR": "Y", "VAL": "V", "MSE": "M",
}
#: One-letter code -> three-letter residue name (the 20 standard amino acids).
ONE_TO_THREE = {v: k for k, v in THREE_TO_ONE.items() if k != "MSE"}
#: The 20 standard amino acids, alphabetical by three-letter name.
AA20 = ("ALA", "ARG", "ASN", "ASP", "CYS", "GLN", "GLU", "GLY", "HIS", "ILE", "LEU", "LYS", "MET",
        "PHE", "PRO", "SER", "THR", "TRP", "TYR", "VAL")

#: Heavy atoms of each standard residue (IUPAC names), for the missing-atom report.
HEAVY_ATOMS: dict[str, tuple[str, ...]] = {
    "GLY": (), "ALA": ("CB",), "SER": ("CB", "OG"), "CYS": ("CB", "SG"),
    "VAL": ("CB", "CG1", "CG2"), "THR": ("CB", "OG1", "CG2"), "PRO": ("CB", "CG", "CD"),
    "LEU": ("CB", "CG", "CD1", "CD2"), "ILE": ("CB", "CG1", "CG2", "CD1"),
    "MET": ("CB", "CG", "SD", "CE"), "ASP": ("CB", "CG", "OD1", "OD2"),
    "ASN": ("CB", "CG", "OD1", "ND2"), "GLU": ("CB", "CG", "CD", "OE1", "OE2"),
    "GLN": ("CB", "CG", "CD", "OE1", "NE2"), "LYS": ("CB", "CG", "CD", "CE", "NZ"),
    "ARG": ("CB", "CG", "CD", "NE", "CZ", "NH1", "NH2"),
    "HIS": ("CB", "CG", "ND1", "CD2", "CE1", "NE2"),
    "PHE": ("CB", "CG", "CD1", "CD2", "CE1", "CE2", "CZ"),
    "TYR": ("CB", "CG", "CD1", "CD2", "CE1", "CE2", "CZ", "OH"),
    "TRP": ("CB", "CG", "CD1", "CD2", "NE1", "CE2", "CE3", "CZ2", "CZ3", "CH2"),
}
