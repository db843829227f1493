"""Property-based robustness: mutated shift files give a ShiftList or a ShiftcheckError.

Mutations (delete, duplicate, swap, scramble lines; overwrite, insert, delete bytes; truncate)
of small excerpts of real BMRB files when SHIFTCHECK_REALDATA is set (NMR-STAR 3.1: the entity
and the first 120 shift rows of hr3102a/2krk_shifts.str; NMR-STAR 2.1: the sample conditions
and the first 120 shift rows of yppr/16570_v2.str), else of small STAR texts written here,
plus a plain table. The requirement (issue: bad input) is that no other exception type escapes
read_shifts (common practice, no source).
"""
from __future__ import annotations

import random

import numpy as np
from _mutations import byte_op, line_op, mutate
from conftest import realdata_dir
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from shiftcheck.errors import ShiftcheckError
from shiftcheck.io.shift_formats import read_shifts

_ROWS = 120

_SMALL3 = """data_small
save_entity_1
   _Entity.Sf_category entity
   _Entity.ID 1
   _Entity.Polymer_seq_one_letter_code MKGA
save_
save_list_1
   _Assigned_chem_shift_list.Sf_category assigned_chemical_shifts
   _Assigned_chem_shift_list.ID 1
   loop_
      _Atom_chem_shift.ID
      _Atom_chem_shift.Entity_ID
      _Atom_chem_shift.Seq_ID
      _Atom_chem_shift.Comp_ID
      _Atom_chem_shift.Atom_ID
      _Atom_chem_shift.Atom_type
      _Atom_chem_shift.Val
      _Atom_chem_shift.Val_err
      _Atom_chem_shift.Ambiguity_code
      1 1 1 MET H   H 8.30 0.02 1
      2 1 1 MET CA  C 55.0 0.2  1
      3 1 2 LYS HB2 H 1.80 0.02 2
      4 1 3 GLY HA2 H 3.90 0.02 2
      5 1 4 ALA HB  H 1.39 0.02 1
   stop_
save_
"""
_SMALL21 = """data_small
save_cond
   _Saveframe_category sample_conditions
   loop_
      _Variable_type _Variable_value _Variable_value_units
      temperature 25 C
      pH 7.0 pH
   stop_
save_
save_list_1
   _Saveframe_category assigned_chemical_shifts
   _Sample_conditions_label $cond
   _Details
;
text
;
   loop_
      _Atom_shift_assign_ID _Residue_seq_code _Residue_label _Atom_name _Atom_type
      _Chem_shift_value _Chem_shift_value_error _Chem_shift_ambiguity_code
      1 1 MET HN  H 8.30 0.02 1
      2 1 MET CA  C 55.0 0.2  1
      3 2 GLY HA1 H 3.90 0.02 2
      4 3 'ALA' HB H 1.39 0.02 1
   stop_
save_
"""


def _excerpt(lines: list[str], start: int, first_row: int) -> list[str]:
    return lines[start:first_row + _ROWS] + ["   stop_", "save_"]


def _bases() -> dict[str, bytes]:
    d = realdata_dir()
    table = "# seq res atom shift err\n" + "\n".join(
        f"{i} {'AGLKS'[i % 5]} {a} {v:.2f} 0.02" for i in range(1, 30)
        for a, v in (("HN", 8.1), ("CA", 55.2), ("HB", 1.4 + i / 100)))
    if d is None:
        return {"star3": _SMALL3.encode(), "star21": _SMALL21.encode(), "table": table.encode()}
    l3 = (d / "hr3102a" / "2krk_shifts.str").read_text().splitlines()
    r3 = next(i for i, s in enumerate(l3) if s.strip().startswith("1 ") and "ASN" in s and " H " in s)
    l2 = (d / "yppr" / "16570_v2.str").read_text().splitlines()
    c0 = next(i for i, s in enumerate(l2) if s.startswith("save_sample_conditions_1"))
    c1 = next(i for i in range(c0 + 1, len(l2)) if l2[i].startswith("save_"))
    s0 = next(i for i, s in enumerate(l2) if s.startswith("save_assigned_chem_shift_list_1"))
    r2 = next(i for i in range(s0, len(l2)) if l2[i].strip().startswith("1 "))
    star21 = [l2[0]] + l2[c0:c1 + 1] + _excerpt(l2, s0, r2)
    return {"star3": "\n".join(_excerpt(l3, 0, r3)).encode(), "star21": "\n".join(star21).encode(),
            "table": table.encode()}


BASES = _bases()



def test_bases_read_cleanly(tmp_path):
    for name, data in BASES.items():
        p = tmp_path / f"{name}.txt"
        p.write_bytes(data)
        assert len(read_shifts(p)) > 0, name


@settings(max_examples=500, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(lops=st.lists(line_op, max_size=6), bops=st.lists(byte_op, max_size=6),
       seed=st.integers(0, 2**16), base=st.sampled_from(sorted(BASES)))
def test_mutated_shift_files_raise_only_project_errors(tmp_path_factory, lops, bops, seed, base):
    data = mutate(BASES[base], lops, bops, random.Random(seed))
    path = tmp_path_factory.mktemp("fuzz") / "m.str"
    path.write_bytes(data)
    try:
        s = read_shifts(path)
    except ShiftcheckError as exc:
        assert "\n" not in str(exc)
        return
    # a successful read is a consistent list
    n = len(s)
    assert n > 0
    for f in ("seq_id", "auth_seq_id", "comp_id", "atom_id", "atom_type", "error", "ambiguity", "line"):
        assert getattr(s, f).shape == (n,), f
    assert np.all(np.isfinite(s.value)) and len(s.sequence) == len(s.sequence_seq_ids)
