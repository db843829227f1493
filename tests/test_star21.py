"""STAR syntax (Hall 1991, J. Chem. Inf. Comput. Sci. 31:326) and the NMR-STAR 2.1 reader."""
import numpy as np
import pytest

from shiftcheck.errors import InputError
from shiftcheck.io.shift_formats import read_shifts
from shiftcheck.io.star_syntax import parse_star_syntax

# STAR rules exercised here (Hall 1991; Hall & Spadaccini 1994): comments, quotes closing only
# before whitespace, semicolon text blocks, several loops per save frame, rows across lines.
STAR_TEXT = """\
data_test   # a comment
save_frame_one
   _Cat.Name   'it's quoted'   # quote closes only before whitespace
   _Cat.Other  "double "inner"x"
   _Cat.Text
;
line one
  line two
;
   loop_
      _A.x
      _A.y
      1 a   2 b
      3 'c d'
   stop_
   loop_
      _B.z
      ; # not a text block: not at line start
   stop_
save_
"""


def test_parse_star_syntax_rules():
    (blk,) = parse_star_syntax(STAR_TEXT)
    assert blk.name == "test"
    (f,) = blk.frames
    assert f.name == "frame_one" and f.line == 2
    assert f.tag("_Cat.Name") == "it's quoted"
    assert f.tag("_Cat.Other") == 'double "inner"x'
    assert f.tag("_Cat.Text") == "line one\n  line two"
    a, b = f.loops
    assert a.rows == [["1", "a"], ["2", "b"], ["3", "c d"]]
    assert a.row_lines == [13, 13, 14]
    assert b.rows == [[";"]]


@pytest.mark.parametrize("text,where,words", [
    ("data_x\nloop_\n_A.a\n_A.b\n1 2\n3\nstop_\n", 2, "not a multiple"),
    ("data_x\nsave_f\n_A.a 1\nloop_\n_A.b\n1\n", 4, "loop"),
    ("data_x\nsave_f\n_A.a\n;\nabc\n", 4, "never closed"),
    ("data_x\nsave_f\n_A.a 1\n", 2, "save frame"),
    ("data_x\n_A.a 'unclosed\n", 2, "quote"),
    ("_A.a 1\n", 1, "data_"),
])
def test_syntax_errors_name_line(text, where, words):
    with pytest.raises(InputError) as ei:
        parse_star_syntax(text, "f.str")
    assert ei.value.line == where
    assert words in str(ei.value) and "\n" not in str(ei.value)


def _cols(s):
    return (s.seq_id.tolist(), s.comp_id.tolist(), s.atom_id.tolist(), s.value.tolist(),
            s.ambiguity.tolist())


@pytest.fixture(scope="module")
def yppr(realdata):
    return (read_shifts(realdata / "yppr" / "16570_v2.str"),
            read_shifts(realdata / "yppr" / "16570_v3.str"))


def test_yppr_21_equals_31(yppr):
    # BMRB 16570 deposited once, distributed as NMR-STAR 2.1 and 3.1: same shifts expected
    v2, v3 = yppr
    assert len(v2) == len(v3) > 1000
    assert _cols(v2) == _cols(v3)
    np.testing.assert_array_equal(v2.auth_seq_id, v3.auth_seq_id)
    np.testing.assert_array_equal(v2.error, v3.error)
    assert v2.sequence == v3.sequence and len(v2.sequence) == 96
    np.testing.assert_array_equal(v2.sequence_seq_ids, v3.sequence_seq_ids)
    # sample conditions of the entry (sample_conditions_1: 293 K, pH 4.5)
    assert v2.conditions == v3.conditions
    assert v2.conditions.temperature_K == 293 and v2.conditions.pH == 4.5


def test_yppr_21_line_numbers(realdata, yppr):
    v2, _ = yppr
    lines = (realdata / "yppr" / "16570_v2.str").read_text().splitlines()
    # every row's line holds its residue label and value as written
    for k in (0, 100, len(v2) - 1):
        row = lines[v2.line[k] - 1]
        assert v2.comp_id[k] in row
        nums = []
        for tok in row.split():
            try:
                nums.append(float(tok))
            except ValueError:
                pass
        assert v2.value[k] in nums, (k, row)


def test_engrailed_21(realdata):
    s = read_shifts(realdata / "engrailed_hd" / "bmr15536.str")
    # BMRB 15536: 61 residues (MDEKRP...), author numbering from -1, 278 K and pH 5.7
    assert s.one_letter.startswith("MDEKRP") and len(s.sequence) == 61
    assert s.auth_seq_id.min() == -1 and s.seq_id.min() == 1
    np.testing.assert_array_equal(s.auth_seq_id, s.seq_id - 2)
    assert s.conditions.temperature_K == 278 and s.conditions.pH == 5.7
    assert s.entity_id == "EnHD"
    # 2.1 methyl pseudo atoms (Ala HB) became three IUPAC protons with one value
    ala = (s.comp_id == "ALA") & np.char.startswith(s.atom_id.astype(str), "HB")
    assert set(s.atom_id[ala]) == {"HB1", "HB2", "HB3"}


TWO_LISTS_21 = """\
data_x
save_sample_1
   _Saveframe_category sample_conditions
   loop_
      _Variable_type _Variable_value _Variable_value_units
      temperature 25 C
      pH 7.0 pH
   stop_
save_
save_shifts_a
   _Saveframe_category assigned_chemical_shifts
   _Sample_conditions_label $sample_1
   _Mol_system_component_name protA
   loop_
      _Atom_shift_assign_ID _Residue_seq_code _Residue_label _Atom_name _Atom_type
      _Chem_shift_value _Chem_shift_value_error _Chem_shift_ambiguity_code
      1 1 GLY HA1 H 3.9 . 2
      2 1 GLY HA2 H 3.8 . 2
   stop_
save_
save_shifts_b
   _Saveframe_category assigned_chemical_shifts
   _Mol_system_component_name protB
   loop_
      _Atom_shift_assign_ID _Residue_seq_code _Residue_label _Atom_name _Atom_type
      _Chem_shift_value _Chem_shift_value_error _Chem_shift_ambiguity_code
      1 1 ALA HN H 8.1 0.01 1
      2 1 ALA CA C 52.0 0.1 1
      3 2 SER CA C 58.0 0.1 1
   stop_
save_
"""


def test_21_several_lists(tmp_path):
    p = tmp_path / "two.str"
    p.write_text(TWO_LISTS_21)
    s = read_shifts(p)  # default: the largest list, with a warning naming the other
    assert s.list_name == "shifts_b" and len(s) == 3
    assert any("shifts_a" in w for w in s.warnings) and len(s.other_lists) == 1
    assert s.atom_id.tolist() == ["H", "CA", "CA"]
    a = read_shifts(p, list_id="shifts_a")
    # old Gly HA1/HA2 -> HA2/HA3 (Markley et al. 1998)
    assert a.atom_id.tolist() == ["HA2", "HA3"]
    # 25 °C -> 298.15 K (T/K = t/°C + 273.15)
    assert a.conditions.temperature_K == pytest.approx(298.15) and a.conditions.pH == 7.0
    assert read_shifts(p, entity_id="protA").list_name == "shifts_a"
    with pytest.raises(InputError, match="no shift list"):
        read_shifts(p, list_id="nope")


def test_star3_line_numbers_from_the_shift_frame(realdata):
    # NMR-STAR 3.1 (BMRB 17769, as deposited): the line of each row is found by parsing only
    # the shift list's save frame; every row's line holds its residue label and value as written
    sl = read_shifts(realdata / "ubiquitin" / "bmr17769.str")
    lines = (realdata / "ubiquitin" / "bmr17769.str").read_text().splitlines()
    assert len(set(sl.line)) == len(sl) and min(sl.line) > 1
    for k in (0, len(sl) // 2, len(sl) - 1):
        row = lines[sl.line[k] - 1].split()
        assert sl.comp_id[k] in row and sl.atom_id[k] in row
        assert any(t.replace(".", "", 1).isdigit() and float(t) == sl.value[k] for t in row), row
