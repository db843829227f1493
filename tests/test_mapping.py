"""Sequence mapping of shift lists onto model chains.

Sources: human ubiquitin sequence (UniProt P0CG48, residues 1-76; typed from memory and
checked here against the SEQRES-free residues of PDB 1UBQ when SHIFTCHECK_REALDATA is set);
alignment arithmetic checked by construction (common practice, no source); the real
shift/model pairs of ../shared/realdata for offsets.
"""
from __future__ import annotations

import random

import numpy as np
import pytest

from shiftcheck.errors import MappingError
from shiftcheck.chem.residues import ONE_TO_THREE
from shiftcheck.shiftlist import ShiftList
from shiftcheck.structure.ensemble import Ensemble
from shiftcheck.structure.mapping import map_sequence

UBQ = "MQIFVKTLTGKTITLEVEPSDTIENVKAKIQDKEGIPPDQQRLIFAGKQLEDGRTLSDYNIQKESTLHLVLRLRGG"


def _shifts(seq, first=1, auth_offset=0, with_sequence=True, only=None):
    ids = np.arange(first, first + len(seq))
    res = [(i, ONE_TO_THREE[a]) for i, a in zip(ids, seq) if only is None or i in only]
    n = len(res)
    sid = np.array([r[0] for r in res], dtype=np.int64)
    return ShiftList(
        source="test.str", list_id="1", list_name="", entity_id="1",
        sequence=tuple(ONE_TO_THREE[a] for a in seq) if with_sequence else (),
        sequence_seq_ids=ids if with_sequence else np.array([], dtype=np.int64),
        seq_id=sid, auth_seq_id=sid + auth_offset, comp_id=np.array([r[1] for r in res]),
        atom_id=np.full(n, "CA"), atom_type=np.full(n, "C"), value=np.full(n, 55.0),
        error=np.full(n, np.nan), ambiguity=np.ones(n, dtype=np.int64), line=np.zeros(n, dtype=np.int64))


def _model(seq, first=1, name="m.pdb"):
    n = len(seq)
    return Ensemble(name=name, sources=[name], model_names=[name], chain_id="A",
                    res_seq=np.arange(first, first + n), res_icode=np.full(n, "", dtype="U1"),
                    res_name=np.array([ONE_TO_THREE[a] for a in seq]), atom_res=np.arange(n),
                    atom_name=np.full(n, "CA"), element=np.full(n, "C"),
                    coords=np.zeros((1, n, 3)), built=np.zeros(n, dtype=bool))


def test_tagged_model_offset_found_by_alignment():
    tag = "MGSSHHHHHHSSG"
    m = map_sequence(_shifts(UBQ), _model(tag + UBQ, first=-12))
    assert m.identity == 1.0 and m.coverage == 1.0 and m.n_aligned == 76
    # model residue of Seq_ID 1 is the first residue after the 13-residue tag, numbered 1
    assert m.seq_to_res[1] == len(tag) and m.res_to_seq[len(tag)] == 1
    assert m.offsets == ["Seq_ID 1-76 -> model 1-76 (offset +0)"]
    assert "Seq_ID" in m.numbering and "equals" in m.numbering


def test_offset_and_auth_numbering():
    m = map_sequence(_shifts(UBQ, auth_offset=4), _model(UBQ, first=5))
    assert m.offsets == ["Seq_ID 1-76 -> model 5-80 (offset +4)"]
    assert "Auth_seq_ID" in m.numbering


def test_point_mutations_listed_and_identity():
    mut = list(UBQ)
    for i in (10, 47, 62):
        mut[i] = "A" if mut[i] != "A" else "G"
    m = map_sequence(_shifts("".join(mut)), _model(UBQ))
    assert m.identity == pytest.approx(73 / 76)
    assert [x[0] for x in m.mismatches] == [11, 48, 63]


def test_deletion_in_model_splits_segments():
    model = UBQ[:30] + UBQ[35:]          # residues 31-35 missing, numbering kept
    ens = _model(model)
    ens.res_seq = np.concatenate([np.arange(1, 31), np.arange(36, 77)])
    m = map_sequence(_shifts(UBQ), ens)
    assert m.identity == 1.0
    assert m.offsets == ["Seq_ID 1-30 -> model 1-30 (offset +0)", "Seq_ID 36-76 -> model 36-76 (offset +0)"]
    assert m.unmapped_seq_ids == [31, 32, 33, 34, 35]
    assert m.coverage == pytest.approx(71 / 76)


def test_sequence_rebuilt_from_shifts():
    sl = _shifts(UBQ, first=3, with_sequence=False, only=set(range(3, 79)) - {20, 21})
    m = map_sequence(sl, _model(UBQ, first=1))
    assert m.identity == 1.0
    assert m.seq_to_res[3] == 0 and m.seq_to_res[78] == 75


def test_other_protein_refused():
    rnd = random.Random(7)
    other = list(UBQ)
    rnd.shuffle(other)
    with pytest.raises(MappingError, match="another protein") as info:
        map_sequence(_shifts("".join(other)), _model(UBQ))
    assert "threshold 0.9" in str(info.value) or "align" in str(info.value)
    assert "\n" not in str(info.value)


def test_ubiquitin_sequence_matches_1ubq(realdata):
    from shiftcheck.io.coords import read_model_file

    assert read_model_file(realdata / "ubiquitin" / "1ubq.pdb").one_letter == UBQ


@pytest.mark.parametrize("folder,shifts,model,offset,identity", [
    ("hr3102a", "2krk_shifts.str", "2KRK.pdb", 11, 1.0),     # issue text: shifts start at Asn 1, model at Met 1
    ("hr4527e", "2l33_shifts.str", "3P1X.pdb", 524, 1.0),
    ("gb3", "bmr2575.str", "2OED.pdb", 0, 55 / 56),          # protein G B2 vs GB3: T2Q
])
def test_real_offsets(realdata, folder, shifts, model, offset, identity):
    from shiftcheck.io.coords import read_model_file
    from shiftcheck.io.shift_formats import read_shifts

    m = map_sequence(read_shifts(realdata / folder / shifts), read_model_file(realdata / folder / model))
    assert m.segments[0][4] == offset
    assert m.identity == pytest.approx(identity)
