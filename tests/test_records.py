"""Python API results as plain records and pandas DataFrames: the same numbers as the files the
command line writes (internal consistency with ranking.csv / residues.csv; common practice, no
source). Inputs: the demo (invented data)."""
from __future__ import annotations

import csv

import pytest

import shiftcheck as sc
from shiftcheck.commands.demo import demo_inputs


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    with demo_inputs() as (shifts, models, _):
        sl = sc.read_shifts(shifts)
        res = sc.score_models(sl, sc.read_models([str(m) for m in models]), n_boot=50)
    out = tmp_path_factory.mktemp("api")
    sc.write_tables(res, out)
    return sl, res, out


def _csv(path):
    return list(csv.DictReader(open(path, newline="")))


def _same(record: dict, row: dict):
    for k, v in row.items():
        r = record[k]
        if v == "":
            assert r in (None, ""), k
        elif isinstance(r, bool):
            assert str(r) == v, k
        elif isinstance(r, (int, float)):
            assert float(v) == pytest.approx(r, abs=1e-9), k
        else:
            assert str(r) == v, k


def test_records_match_the_written_tables(result):
    sl, res, out = result
    assert res.tables == ("ranking", "residues", "offsets")
    rec = res.to_records()
    rows = _csv(out / "ranking.csv")
    assert len(rec) == len(rows) == len(res.comparison.entries)
    for a, b in zip(rec, rows):
        _same(a, b)
    resid = res.to_records("residues")
    rrows = _csv(out / "residues.csv")
    assert len(resid) == len(rrows)
    for a, b in zip(resid[:200], rrows[:200]):
        _same(a, b)
    offs = {r["isotope"]: r for r in res.to_records("offsets")}
    assert offs["C"]["applied"] is True and offs["C"]["value"] == round(res.offsets["C"].value, 4)
    shifts = sl.to_records()
    assert len(shifts) == len(sl) and set(shifts[0]) >= {"seq_id", "atom_id", "value"}
    assert all(type(v) in (int, float, str, type(None)) for r in shifts[:50] for v in r.values())
    with pytest.raises(ValueError, match="unknown table 'nope'"):
        res.to_records("nope")


def test_to_frame_when_pandas_is_installed(result):
    pd = pytest.importorskip("pandas")
    sl, res, _ = result
    df = res.to_frame()
    assert isinstance(df, pd.DataFrame)
    assert list(df.columns)[:3] == ["rank", "model", "score"]
    assert df["model"].tolist() == [r["model"] for r in res.to_records()]
    assert df["score"].tolist() == pytest.approx([r["score"] for r in res.to_records()])
    fs = sl.to_frame()
    assert len(fs) == len(sl) and fs["value"].sum() == pytest.approx(float(sl.value.sum()))
