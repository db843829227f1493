"""The pipeline seam (shiftcheck.pipeline) and the reader dispatch table (io.shift_formats).

Checks of the plumbing only, common practice, no source: batches cover every ensemble once and
in order whatever the batch size or the order a mapper returns them in; the per-batch worker and
its inputs pickle (so a process pool can run it); a reader plugged into FORMATS is used.
"""
from __future__ import annotations

import dataclasses
import pickle

import numpy as np
import pytest

from shiftcheck.io import shift_formats
from shiftcheck.io.shift_formats import FORMATS, ShiftFormat, read_shifts
from shiftcheck.io.shift_rows import build_shift_list
from shiftcheck.pipeline import model_batches, predict_all, predict_batch, score_models
from shiftcheck.predict.model import Predictor
from shiftcheck.shiftlist import SampleConditions

from scoring_synthetic import built_ensemble, shifts_from


@pytest.fixture(scope="module")
def case():
    ens = built_ensemble()
    pred = Predictor()
    sl = shifts_from(pred.predict(ens).values[0], pred.predict(ens), noise=0.1, seed=2)
    others = [dataclasses.replace(ens, name=f"copy{i}", coords=ens.coords + 0.01 * i) for i in range(3)]
    return sl, [ens] + others, pred


def test_batches_keep_every_ensemble_once_in_order(case):
    _, ens, _ = case
    for size in (1, 2, 3, 10):
        got = [i for b in model_batches(ens, size) for i in b.index]
        assert got == list(range(len(ens)))
    with pytest.raises(ValueError):
        next(model_batches(ens, 0))


def test_batch_size_and_mapper_order_do_not_change_results(case):
    sl, ens, pred = case
    m1, p1 = predict_all(sl, ens, pred, batch_size=1)
    reversed_map = lambda f, *its: reversed(list(map(f, *its)))   # results arrive out of order
    m2, p2 = predict_all(sl, ens, pred, batch_size=3, mapper=reversed_map)
    assert [p.ensemble_name for p in p2] == [e.name for e in ens]
    for a, b in zip(p1, p2):
        assert np.array_equal(a.values, b.values, equal_nan=True)
    assert [m.res_to_seq for m in m1] == [m.res_to_seq for m in m2]


def test_worker_and_its_inputs_pickle(case):
    sl, ens, pred = case
    batch = next(model_batches(ens, 2))
    worker, args = pickle.loads(pickle.dumps((predict_batch, (sl, batch, pred, 0.9))))
    res = worker(*args)
    assert res.index == (0, 1) and len(res.predictions) == 2


def test_score_models_equals_score_of_predict_all(case):
    from shiftcheck.score.scoring import score

    sl, ens, pred = case
    a = score_models(sl, ens, n_boot=50, seed=3)
    m, p = predict_all(sl, ens, pred)
    b = score(sl, ens, m, p, params=pred.params_, ring_model=pred.ring_model_, n_boot=50, seed=3)
    assert np.array_equal(a.ranking.score, b.ranking.score)


def read_xyz(text, path, list_id=None, entity_id=None):
    """A toy format for the dispatch test: lines 'XYZ seq comp atom value'."""
    rows = [ln.split()[1:] for ln in text.splitlines() if ln.startswith("XYZ ")]
    cols = {"seq_id": [r[0] for r in rows], "auth_seq_id": None, "comp_id": [r[1] for r in rows],
            "atom_id": [r[2] for r in rows], "atom_type": None, "value": [r[3] for r in rows],
            "error": None, "ambiguity": None}
    return build_shift_list(path, cols, list(range(1, len(rows) + 1)), list_id="1", list_name="xyz",
                            entity_id="1", sequence=None, conditions=SampleConditions(),
                            other_lists=[], warnings=[])


def test_a_reader_plugged_into_the_table_is_used(tmp_path, monkeypatch):
    f = tmp_path / "toy.xyz"
    f.write_text("XYZ 1 ALA CA 52.1\nXYZ 2 GLY N 109.0\n")
    new = ShiftFormat("xyz", lambda text, low: text.startswith("XYZ "), "test_pipeline:read_xyz", "toy")
    monkeypatch.setattr(shift_formats, "FORMATS", (new,) + FORMATS)
    sl = read_shifts(f)
    assert list(sl.atom_id) == ["CA", "N"] and sl.list_name == "xyz"
    assert sl.value.tolist() == [52.1, 109.0]
