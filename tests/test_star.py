"""NMR-STAR 3.x reader (pynmrstar) and the real-data walk over every shift file."""
import numpy as np
import pytest

from shiftcheck.errors import InputError
from shiftcheck.io.shift_formats import read_shifts
from shiftcheck.chem.nuclei import nucleus_class

# A small NMR-STAR 3.1 entry written for this test (tag names from the NMR-STAR 3.1 dictionary):
# two shift lists, two entities in list 1, conditions in °C.
STAR3 = """\
data_test
save_entity_a
   _Entity.Sf_category   entity
   _Entity.ID            1
   _Entity.Polymer_seq_one_letter_code
;
MKG
;
save_
save_entity_b
   _Entity.Sf_category   entity
   _Entity.ID            2
   loop_
      _Entity_comp_index.ID
      _Entity_comp_index.Comp_ID
      1 ALA
      2 SER
   stop_
save_
save_cond_hot
   _Sample_condition_list.Sf_category  sample_conditions
   _Sample_condition_list.ID           2
   loop_
      _Sample_condition_variable.Type
      _Sample_condition_variable.Val
      _Sample_condition_variable.Val_units
      temperature   37   C
      pH            6.0  pH
   stop_
save_
save_cond_cold
   _Sample_condition_list.Sf_category  sample_conditions
   _Sample_condition_list.ID           1
   loop_
      _Sample_condition_variable.Type
      _Sample_condition_variable.Val
      _Sample_condition_variable.Val_units
      'temperature controller setting'   270   K
      temperature   283   K
   stop_
save_
save_list_one
   _Assigned_chem_shift_list.Sf_category  assigned_chemical_shifts
   _Assigned_chem_shift_list.ID           1
   _Assigned_chem_shift_list.Sample_condition_list_label  $cond_hot
   loop_
      _Atom_chem_shift.ID
      _Atom_chem_shift.Entity_assembly_ID
      _Atom_chem_shift.Entity_ID
      _Atom_chem_shift.Seq_ID
      _Atom_chem_shift.Auth_seq_ID
      _Atom_chem_shift.Comp_ID
      _Atom_chem_shift.Atom_ID
      _Atom_chem_shift.Atom_type
      _Atom_chem_shift.Val
      _Atom_chem_shift.Val_err
      _Atom_chem_shift.Ambiguity_code
      1 1 1 1 11 MET H   H 8.30 0.02 1
      2 1 1 1 11 MET CA  C 55.0 0.2  1
      3 1 1 3 13 GLY HA2 H 3.90 0.02 2
      4 1 1 3 13 GLY HA3 H 3.80 0.02 2
      5 2 2 1 101 ALA CA C 52.0 .    .
   stop_
save_
save_list_two
   _Assigned_chem_shift_list.Sf_category  assigned_chemical_shifts
   _Assigned_chem_shift_list.ID           2
   _Assigned_chem_shift_list.Sample_condition_list_ID  1
   loop_
      _Atom_chem_shift.ID
      _Atom_chem_shift.Entity_ID
      _Atom_chem_shift.Seq_ID
      _Atom_chem_shift.Comp_ID
      _Atom_chem_shift.Atom_ID
      _Atom_chem_shift.Val
      1 1 2 LYS N  121.0
   stop_
save_
"""


@pytest.fixture
def star3(tmp_path):
    p = tmp_path / "entry.str"
    p.write_text(STAR3)
    return p


def test_star3_default_choices(star3):
    s = read_shifts(star3)
    # largest list (list 1), then the entity with most shifts (entity 1, 4 shifts)
    assert s.list_id == "1" and s.list_name == "list_one" and s.entity_id == "1"
    assert len(s) == 4
    assert s.seq_id.tolist() == [1, 1, 3, 3] and s.auth_seq_id.tolist() == [11, 11, 13, 13]
    assert s.ambiguity.tolist() == [1, 1, 2, 2]
    np.testing.assert_allclose(s.error, [0.02, 0.2, 0.02, 0.02])
    assert s.sequence == ("MET", "LYS", "GLY") and s.sequence_seq_ids.tolist() == [1, 2, 3]
    # 37 °C -> 310.15 K (T/K = t/°C + 273.15), from the referenced conditions
    assert s.conditions.temperature_K == pytest.approx(310.15) and s.conditions.pH == 6.0
    joined = " ".join(s.warnings)
    assert "list_two" in joined and "entity 2" in joined
    assert len(s.other_lists) == 2
    # each row's line holds that row (atom name in column 7, value in column 9)
    rows = [STAR3.splitlines()[ln - 1].split() for ln in s.line]
    assert [r[6] for r in rows] == ["H", "CA", "HA2", "HA3"]
    assert [float(r[8]) for r in rows] == s.value.tolist()


def test_star3_explicit_choices(star3):
    b = read_shifts(star3, entity_id="2")
    assert b.entity_id == "2" and b.comp_id.tolist() == ["ALA"] and b.sequence == ("ALA", "SER")
    assert np.isnan(b.error[0]) and b.ambiguity[0] == 0
    two = read_shifts(star3, list_id="list_two")
    assert two.list_id == "2" and two.atom_id.tolist() == ["N"]
    # referenced by ID: 283 K; the 'temperature controller setting' row is not the temperature
    assert two.conditions.temperature_K == 283
    assert read_shifts(star3, list_id="2").list_name == "list_two"
    with pytest.raises(InputError, match="no assigned shift list '9'"):
        read_shifts(star3, list_id="9")
    with pytest.raises(InputError, match="no entity"):
        read_shifts(star3, entity_id="7")


# ------------------------------------------------------------------ real data (public BMRB files)

@pytest.fixture(scope="module")
def all_shift_files(realdata):
    files = sorted(realdata.rglob("*.str"))
    return {f.relative_to(realdata).as_posix(): read_shifts(f) for f in files}


def test_every_real_shift_file_reads(all_shift_files):
    assert len(all_shift_files) >= 16
    for name, s in all_shift_files.items():
        assert len(s) > 0, name
        assert len(s.sequence) > 40, name
        # IUPAC 1998 names (Markley et al. 1998): no HN, no digit-first PDB v2 names, no
        # old Gly HA1, no wildcard pseudo atoms
        names = set(s.atom_id.tolist())
        assert "HN" not in names, name
        assert not any(a[0].isdigit() or a[-1] in "%*#" for a in names), name
        gly = set(s.atom_id[s.comp_id == "GLY"].tolist())
        assert "HA1" not in gly and "HA" not in gly, name
        assert (s.line > 0).all(), name
        assert np.all(np.diff(s.seq_id) >= 0), name


def test_real_file_contents(all_shift_files):
    f = all_shift_files
    # gb3/bmr2575.str holds 1H shifts only; gb3/bmr15283.str (solid state) 13C and 15N only
    # (BMRB entries 2575 and 15283, see realdata/README.md)
    assert set(f["gb3/bmr2575.str"].counts()) == {"H"}
    assert set(f["gb3/bmr15283.str"].counts()) == {"C", "N"}
    # ubiquitin (BMRB 17769): 76 residues MQIFVKTLTG..., 298 K, pH 6.5
    u = f["ubiquitin/bmr17769.str"]
    assert u.one_letter.startswith("MQIFVKTLTG") and len(u.sequence) == 76
    assert u.conditions.temperature_K == 298 and u.conditions.pH == 6.5
    # every backbone class is present in the H/C/N entries
    for name in ("ubiquitin/bmr17769.str", "ci2/bmrb4974.str", "hr3102a/2krk_shifts.str"):
        s = f[name]
        classes = {nucleus_class(c, a) for c, a in zip(s.comp_id, s.atom_id)}
        assert {"H", "HA", "CA", "N"} <= classes, name
    # the re-wrapped tables are numbered from 1 along the entity sequence (README)
    k = f["hr3102a/2krk_shifts.str"]
    assert k.sequence_seq_ids[0] == 1 and k.one_letter.startswith("NEEARLD")
