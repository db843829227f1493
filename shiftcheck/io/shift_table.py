"""Plain shift tables, for users without an NMR-STAR file.

Format
------
One shift per line; columns separated by whitespace or by commas::

    # seq_id  residue  atom  shift  [error]
    1   MET   H    8.35   0.02
    1   M     CA   55.1
    2,GLY,HA2,3.97

* Column order without a header: **seq_id, residue, atom, shift, error** (error optional).
  ``residue`` is the three-letter code (``ALA``) or the one-letter code (``A``); ``atom`` is
  the atom name in any common convention (normalised to IUPAC 1998; ``HN`` -> ``H``).
* An optional header line names the columns; then the order is free and other columns are
  ignored. Recognised names (case-insensitive): seq_id/seq/resnum/residue_number/num/resid/
  res_num/seq_code; comp_id/residue/res/resname/res_name/aa/comp/residue_label; atom/
  atom_id/atom_name/name; shift/value/val/ppm/cs/chemical_shift/delta; error/err/val_err/
  sd/uncertainty.
* ``#`` starts a comment (whole line or the rest of a line); blank lines are ignored.
* A shift written ``.`` or ``?`` is skipped with a warning.
* The sequence is rebuilt from the rows (residues without shifts become ``UNK``).
* Rows of an NMR-STAR 2.1 shift loop without its tags (``ID seq residue atom type shift error
  ambiguity``, as copied out of an entry) are recognised by their first row (two integers, a
  residue code, an atom name, an element letter, a number) and read with a note.
"""
from __future__ import annotations

import re

from ..chem.residues import ONE_TO_THREE
from ..errors import InputError
from ..shiftlist import SampleConditions
from .shift_rows import build_shift_list

__all__ = ["read_table", "TABLE_COLUMNS"]

#: Column order of a table without header.
TABLE_COLUMNS = ("seq_id", "comp_id", "atom_id", "value", "error")

_HEADER = {
    "seq_id": {"seq_id", "seq", "resnum", "residue_number", "num", "resid", "res_num", "seq_code",
               "seqid", "residue_no", "resno", "res_no", "number", "n"},
    "comp_id": {"comp_id", "residue", "res", "resname", "res_name", "aa", "comp", "residue_label",
                "residue_name", "compid", "type3"},
    "atom_id": {"atom", "atom_id", "atom_name", "name", "atomname", "atomid"},
    "value": {"shift", "value", "val", "ppm", "cs", "chemical_shift", "delta", "shift_ppm",
              "chem_shift", "chemical_shift_value"},
    "error": {"error", "err", "val_err", "sd", "uncertainty", "shift_error", "esd", "sigma"},
}
_SPLIT_WS = re.compile(r"\s+")
_COMP_OK = re.compile(r"^[A-Za-z][A-Za-z0-9]{0,3}$")


def _fields(line: str) -> list[str]:
    line = line.split("#", 1)[0].strip()
    if not line:
        return []
    if "," in line:
        return [f.strip() for f in line.split(",")]
    return _SPLIT_WS.split(line)


def _header_map(fields: list[str]) -> dict[str, int] | None:
    norm = [f.strip().lower().replace(" ", "_").replace("-", "_").strip("\"'") for f in fields]
    out = {}
    for k, name in enumerate(norm):
        for key, names in _HEADER.items():
            if name in names and key not in out:
                out[key] = k
    known = sum(1 for n in norm if any(n in s for s in _HEADER.values()))
    if known >= 2:
        return out
    return None


def _is_number(s: str) -> bool:
    try:
        float(s)
        return True
    except ValueError:
        return False


#: Column positions of headerless NMR-STAR 2.1 loop rows: ID seq residue atom type shift error amb.
STAR21_ROW_COLUMNS = {"seq_id": 1, "comp_id": 2, "atom_id": 3, "value": 5, "error": 6}


def _star_rows(f: list[str]) -> bool:
    """True for a headerless NMR-STAR 2.1 loop row (ID seq residue atom type shift ...)."""
    return (len(f) >= 7 and f[0].isdigit() and f[1].lstrip("-").isdigit() and f[2].isalpha()
            and len(f[2]) >= 1 and f[4].isalpha() and len(f[4]) <= 2 and _is_number(f[5])
            and not _is_number(f[3]))


def read_table(text: str, path: str, list_id: str | None = None, entity_id: str | None = None):
    """Read a plain shift table (see module docstring for the format) into a ShiftList.

    ``list_id`` and ``entity_id`` are accepted for the common reader signature and ignored (a
    table holds one list of one entity).

    Raises
    ------
    InputError
        No data rows, a header without the needed columns, a row with too few columns,
        an unknown residue code, a non-integer residue number or a non-numeric shift.
    """
    cols: dict[str, int] = {k: i for i, k in enumerate(TABLE_COLUMNS)}
    header_seen = False
    data: dict[str, list[str]] = {k: [] for k in TABLE_COLUMNS}
    lines: list[int] = []
    warnings: list[str] = []
    for ln, raw in enumerate(text.splitlines(), start=1):
        f = _fields(raw)
        if not f:
            continue
        if not header_seen and not lines and _star_rows(f):
            cols, header_seen = dict(STAR21_ROW_COLUMNS), True
            warnings.append(f"line {ln}: rows read as NMR-STAR 2.1 shift-loop rows without tags "
                            "(ID, seq, residue, atom, type, shift, error, ambiguity)")
        if not header_seen and not lines and not _is_number(f[0]):
            hm = _header_map(f)
            if hm is None:
                raise InputError("not a shift table: expected columns seq_id residue atom shift "
                                 "[error] (or a header naming them)", path=path, line=ln)
            missing = [k for k in ("seq_id", "comp_id", "atom_id", "value") if k not in hm]
            if missing:
                raise InputError(f"table header lacks column(s) {', '.join(missing)}", path=path, line=ln)
            cols, header_seen = hm, True
            continue
        need = max(v for k, v in cols.items() if k != "error") + 1
        if len(f) < need:
            raise InputError(f"expected at least {need} columns (seq_id residue atom shift "
                             f"[error]), found {len(f)}", path=path, line=ln)
        comp = f[cols["comp_id"]].strip().upper()
        if len(comp) == 1:
            if comp not in ONE_TO_THREE:
                raise InputError(f"unknown one-letter residue code {comp!r}", path=path, line=ln)
            comp = ONE_TO_THREE[comp]
        elif not _COMP_OK.match(comp):
            raise InputError(f"residue name {comp[:12]!r} is not a residue code", path=path, line=ln)
        data["seq_id"].append(f[cols["seq_id"]])
        data["comp_id"].append(comp)
        data["atom_id"].append(f[cols["atom_id"]])
        data["value"].append(f[cols["value"]])
        e = cols.get("error")
        data["error"].append(f[e] if e is not None and e < len(f) else ".")
        lines.append(ln)
    if not lines:
        raise InputError("no shift rows found in the table", path=path)
    colmap = dict(data, auth_seq_id=None, atom_type=None, ambiguity=None)
    return build_shift_list(path, colmap, lines, list_id="1", list_name="", entity_id="1",
                            sequence=None, conditions=SampleConditions(), other_lists=[],
                            warnings=warnings)
