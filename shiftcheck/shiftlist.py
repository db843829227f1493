"""The assigned chemical-shift list as one typed object (struct of arrays).

Every reader (NMR-STAR 3.x, NMR-STAR 2.1, plain tables) returns a :class:`ShiftList`.
Atom names are already normalised to the IUPAC 1998 convention used by NMR-STAR
(Markley et al. 1998, Pure Appl. Chem. 70:117).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .chem.residues import THREE_TO_ONE
from .records import ShiftTables

__all__ = ["ShiftList", "SampleConditions"]

@dataclass
class SampleConditions:
    """Sample conditions stated in the entry (None where absent)."""

    temperature_K: float | None = None
    pH: float | None = None


@dataclass
class ShiftList(ShiftTables):
    """One assigned chemical-shift list of one entity.

    ``to_records()`` / ``to_frame()``: one row per shift (:mod:`shiftcheck.records`).

    Attributes
    ----------
    source : str
        Path of the file it was read from.
    list_id, list_name : str
        Assigned_chem_shift_list ID and saveframe name ("" for plain tables).
    entity_id : str
        Entity (or entity assembly) the shifts belong to.
    sequence : tuple of str
        Three-letter Comp_IDs of the entity sequence, in order. If the file gives no
        sequence, it is reconstructed from the shifts (gaps filled with 'UNK').
    sequence_seq_ids : np.ndarray of int
        Seq_ID of each entry of ``sequence``.
    seq_id, auth_seq_id : np.ndarray of int, shape (n,)
        Seq_ID (entity numbering) and Auth_seq_ID (author numbering; equals seq_id
        when the file has none) of each shift.
    comp_id, atom_id : np.ndarray of str, shape (n,)
        Residue name (three-letter, upper case) and IUPAC atom name.
    atom_type : np.ndarray of str
        'H', 'C', 'N', ...
    value, error : np.ndarray of float
        Shift in ppm; its stated error (NaN where not given).
    ambiguity : np.ndarray of int
        Ambiguity code (1 unique, 2 geminal/methyl pair, 3 aromatic ring, 4 intra-residue,
        5 inter-residue, 6 intermolecular, 9 ambiguous; 0 = not stated).
    line : np.ndarray of int
        Line in the source file (0 where unknown), for messages.
    conditions : SampleConditions
    other_lists : list of str
        Descriptions of shift lists / entities present in the file but not chosen.
    warnings : list of str
    placeholders : list of dict
        Rows set aside as placeholders (seq_id, comp_id, atom_id, value, line): not in the
        arrays above, reported by the data checks.
    duplicates : list of dict
        Repeated atoms (seq_id, comp_id, atom_id, kept, dropped, lines): the first value is
        kept; the data checks report the repeat (a warning when the values differ).
    """

    source: str
    list_id: str
    list_name: str
    entity_id: str
    sequence: tuple[str, ...]
    sequence_seq_ids: np.ndarray
    seq_id: np.ndarray
    auth_seq_id: np.ndarray
    comp_id: np.ndarray
    atom_id: np.ndarray
    atom_type: np.ndarray
    value: np.ndarray
    error: np.ndarray
    ambiguity: np.ndarray
    line: np.ndarray
    conditions: SampleConditions = field(default_factory=SampleConditions)
    other_lists: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    placeholders: list[dict] = field(default_factory=list)
    duplicates: list[dict] = field(default_factory=list)

    def __len__(self) -> int:
        return int(self.value.shape[0])

    @property
    def one_letter(self) -> str:
        """Entity sequence in one-letter code ('X' for unknown residues)."""
        return "".join(THREE_TO_ONE.get(c, "X") for c in self.sequence)

    def counts(self) -> dict[str, int]:
        """Number of shifts per atom type ('H', 'C', 'N', ...)."""
        types, n = np.unique(self.atom_type, return_counts=True)
        return {str(t): int(k) for t, k in zip(types, n)}

    def subset(self, mask: np.ndarray) -> "ShiftList":
        """A copy holding only the shifts where ``mask`` is true."""
        import dataclasses

        arrays = {f: getattr(self, f)[mask] for f in
                  ("seq_id", "auth_seq_id", "comp_id", "atom_id", "atom_type", "value", "error",
                   "ambiguity", "line")}
        return dataclasses.replace(self, **arrays, warnings=list(self.warnings),
                                   other_lists=list(self.other_lists))
