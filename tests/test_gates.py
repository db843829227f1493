"""``score --fail-on`` and ``--json`` through the command line, on the demo (invented data: a
planted 13C offset and planted misassignments, shiftcheck/demo/planted.json).

Sources: the gate vocabulary and exit codes documented in shiftcheck/gates.py and docs/outputs.md
(the project's own contract; common practice, no source).
"""
from __future__ import annotations

import json

import pytest

from shiftcheck.cli import main
from shiftcheck.commands.demo import demo_inputs
from shiftcheck.gates import evaluate, parse_conditions


@pytest.fixture(scope="module")
def demo_files():
    with demo_inputs() as (shifts, models, planted):
        yield str(shifts), [str(m) for m in models], planted


@pytest.mark.parametrize("bad", ["offsets", "flags>x", "score>", "flags>1.5", "offset,,skipped", "score<3"])
def test_bad_conditions_fail_before_any_work(bad, demo_files, tmp_path, capsys):
    shifts, models, _ = demo_files
    out = tmp_path / "out"
    assert main(["score", shifts, *models, "-o", str(out), "--fail-on", bad]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("shiftcheck: error: --fail-on:")
    assert not out.exists()


def test_json_and_fail_on_through_the_cli(demo_files, tmp_path, capsys):
    shifts, models, planted = demo_files
    out = tmp_path / "gated"
    rc = main(["score", shifts, *models, "-o", str(out), "--no-report", "--bootstrap", "100",
               "--json", "--fail-on", "offset, flags>2, score>50, skipped"])
    cap = capsys.readouterr()
    assert rc == 3
    view = json.loads(cap.out)                       # stdout holds exactly one JSON object
    summary = json.loads((out / "summary.json").read_text())
    assert view["ranking"] == summary["ranking"] and view["offsets"] == summary["offsets"]
    assert view["best_model"] == summary["best_model"]
    # planted: a 13C offset (applied) and misassigned residues flagged in every model
    assert summary["offsets"]["C"]["applied"] and planted["offset"]["ppm"] != 0
    kinds = [r.split(":")[0] for r in view["fail_on"]]
    assert kinds == ["offset", "flags>2"]
    assert [ln.split(": ")[2] for ln in cap.err.splitlines() if "fail-on" in ln] == kinds
    assert (out / "ranking.csv").is_file() and (out / "shifts_corrected.str").is_file()

    # the same run with conditions that do not hold: exit 0, console summary on stdout
    out2 = tmp_path / "passed"
    best = summary["ranking"][0]["score"]
    n_every = len({(f["seq_id"], f["atom_id"]) for f in summary["flags"] if f["class"] == "every"})
    rc = main(["score", shifts, *models, "-o", str(out2), "--no-report", "--bootstrap", "100",
               "--fail-on", f"score>{best + 0.01:.2f},flags>{n_every},skipped"])
    cap = capsys.readouterr()
    assert rc == 0 and "Ranking" in cap.out and "fail-on" not in cap.err


def test_conditions_on_summary_dicts():
    conds = parse_conditions("offset,flags>1,score>2,skipped")
    none = {"offsets": {"C": {"value": 0.1, "applied": False}}, "ranking": [{"model": "m", "score": 1.0}],
            "flags": [{"seq_id": 4, "atom_id": "CA", "class": "every"},
                      {"seq_id": 4, "atom_id": "CA", "class": "every"},
                      {"seq_id": 5, "atom_id": "N", "class": "some"}]}
    assert evaluate(conds, none) == []               # no 'skipped' key counts as none skipped
    some = dict(none, skipped=[{"path": "x.pdb"}], ranking=[{"model": "m", "score": 2.5}],
                offsets={"N": {"value": 1.2, "applied": True}})
    some["flags"] = none["flags"] + [{"seq_id": 9, "atom_id": "H", "class": "every"}]
    assert [r.split(":")[0] for r in evaluate(conds, some)] == ["offset", "flags>1", "score>2", "skipped"]
