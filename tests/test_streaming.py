"""Streamed scoring (shiftcheck.stream / shiftcheck.engine) gives the in-memory numbers.

Consistency checks between engines (no external source needed: the reference is the library's
own in-memory path, :func:`shiftcheck.pipeline.score_models`). Models: the 20 NMR models of
PDB 2K5P with its BMRB shifts (public data in SHIFTCHECK_REALDATA), repeated to make a
40-model file and 30 single-model files. Tiny runs of 3 models per task exercise the splitting.
"""
from __future__ import annotations

import filecmp
import json
import subprocess
import sys
from pathlib import Path

import pytest

from shiftcheck.io.shift_formats import read_shifts
from shiftcheck.isolation import map_models_tolerant, read_models_tolerant
from shiftcheck.pipeline import score_files, score_models
from shiftcheck.report.tables import write_tables
from shiftcheck.stream import group_tasks, plan_tasks

pytestmark = pytest.mark.realdata


def _models(pdb: Path) -> tuple[str, list[str]]:
    text = pdb.read_text()
    head = text[:text.index("\nMODEL ") + 1]
    bodies, pos = [], text.index("\nMODEL ") + 1
    while True:
        end = text.index("\nENDMDL", pos)
        body = text[pos:end + 1]
        bodies.append(body[body.index("\n") + 1:])          # without the MODEL line
        nxt = text.find("\nMODEL ", end)
        if nxt < 0:
            return head, bodies
        pos = nxt + 1


@pytest.fixture(scope="module")
def sets(realdata, tmp_path_factory):
    tmp = tmp_path_factory.mktemp("stream")
    head, bodies = _models(realdata / "this" / "2k5p.pdb")
    multi = tmp / "decoys.pdb"
    with open(multi, "w") as fh:
        fh.write(head)
        for k in range(40):
            fh.write(f"MODEL     {k + 1:4d}\n{bodies[k % len(bodies)]}ENDMDL\n")
        fh.write("END\n")
    files = []
    for k in range(30):
        p = tmp / "files" / f"decoy_{k + 1:03d}.pdb"
        p.parent.mkdir(exist_ok=True)
        p.write_text(head + bodies[(7 * k) % len(bodies)] + "END\n")
        files.append(str(p))
    return {"shifts": realdata / "this" / "2k5p_shifts.str", "multi": str(multi), "files": files, "tmp": tmp}


def _in_memory(shifts_path, paths):
    shifts = read_shifts(shifts_path)
    ens, _ = read_models_tolerant(paths)
    ens, maps, _ = map_models_tolerant(shifts, ens)
    return score_models(shifts, ens, mappings=maps)


def _same_tables(a, b, tmp: Path, tag: str) -> None:
    write_tables(a, tmp / f"{tag}_a")
    write_tables(b, tmp / f"{tag}_b")
    for name in ("ranking.csv", "residues.csv"):
        assert filecmp.cmp(tmp / f"{tag}_a" / name, tmp / f"{tag}_b" / name, shallow=False), name
    sa = json.loads((tmp / f"{tag}_a" / "summary.json").read_text())
    sb = json.loads((tmp / f"{tag}_b" / "summary.json").read_text())
    sa.pop("created"), sb.pop("created")
    assert sa == sb


def test_multi_model_file_is_split_at_its_model_records(sets):
    tasks = plan_tasks([sets["multi"]], models_per_task=3)
    assert len(tasks) == 14                       # 40 models in runs of 3
    assert tasks[0].head == tasks[-1].head > 0    # every run gets the file's header
    assert plan_tasks([sets["multi"]], models_per_task=40)[0].body is None   # small: read whole


@pytest.mark.parametrize("text", [
    b"HEADER x\nMODEL        1\nATOM a\nENDMDL\nMODEL        2\nATOM b\nENDMDL\nEND\n",
    b"MODEL        1\nATOM a\nENDMDL\nMODEL        2\nATOM b\nENDMDL",      # no header, no final newline
    b"HEADER x\nMODEL 1\nATOM a\n",                                          # no ENDMDL
    b"HEADER x\nATOM a\nEND\n", b""])
def test_model_records_found_across_read_chunks(tmp_path, text):
    """The chunked scan finds the MODEL records a whole-text search finds, whatever the chunk
    size (common practice, no source: the reference is a plain search of the whole text)."""
    from shiftcheck.stream import _model_spans

    p = tmp_path / "m.pdb"
    p.write_bytes(text)
    starts = ([0] if text.startswith(b"MODEL ") else []) + [
        i + 1 for i in range(len(text)) if text.startswith(b"\nMODEL ", i)]
    want = list(zip(starts[:-1], starts[1:]))
    if starts:
        end = text.find(b"\nENDMDL", starts[-1])
        stop = text.find(b"\n", end + 1) + 1 if end >= 0 else len(text)
        want.append((starts[-1], stop if stop > 0 else len(text)))
    for chunk in (1, 2, 5, 7, 8, 13, 1 << 20):
        assert _model_spans(str(p), chunk=chunk) == want, chunk


def test_streamed_multi_model_file_equals_in_memory(sets):
    ref = _in_memory(sets["shifts"], [sets["multi"]])
    got = score_files(sets["shifts"], [sets["multi"]], models_per_task=3)
    assert got.comparison.names == ref.comparison.names      # decoys.pdb#1..#40, decoys.pdb#mean
    assert len(got.comparison.entries) == 41
    _same_tables(ref, got, sets["tmp"], "multi")


def test_streamed_files_equal_in_memory(sets):
    ref = _in_memory(sets["shifts"], sets["files"])
    got = score_files(sets["shifts"], sets["files"])          # one task of 30 files
    _same_tables(ref, got, sets["tmp"], "files")


@pytest.mark.parametrize("per_task", [1, 7])
def test_files_in_tasks_of_any_size_equal_in_memory(sets, per_task):
    """Files read, mapped and predicted several to a task (stacked) or one by one give the
    in-memory tables, a multi-model file among them split into runs of its own."""
    paths = sets["files"][:10] + [sets["multi"]] + sets["files"][10:16]
    ref = _in_memory(sets["shifts"], paths)
    got = score_files(sets["shifts"], paths, models_per_task=per_task)
    _same_tables(ref, got, sets["tmp"], f"files{per_task}")


def test_tasks_grouped_in_input_order_within_the_model_budget(sets):
    paths = sets["files"][:5] + [sets["multi"]] + sets["files"][5:9]
    tasks = plan_tasks(paths, models_per_task=3)
    groups = group_tasks(tasks, models_per_task=3)
    assert [t for g in groups for t in g] == tasks            # every task once, in order
    assert all(sum(t.n_models for t in g) <= 3 for g in groups)
    assert all(len(g) == 1 for g in groups if g[0].body is not None)   # runs of a large file alone
    assert [len(g) for g in groups if g[0].body is None] == [3, 2, 3, 1]
    assert tasks[5].n_models == 3 and tasks[-1].n_models == 1


def _cli(*args):
    return subprocess.run([sys.executable, "-m", "shiftcheck", *args], capture_output=True, text=True)


def test_jobs_1_and_2_write_identical_tables(sets):
    out = sets["tmp"]
    for n in (1, 2):
        r = _cli("score", str(sets["shifts"]), *sets["files"][:12], sets["multi"], "-o", str(out / f"j{n}"),
                 "--no-report", "--quiet", "--jobs", str(n))
        assert r.returncode == 0, r.stderr
    for name in ("ranking.csv", "residues.csv", "summary.json"):
        a, b = (out / "j1" / name).read_text(), (out / "j2" / name).read_text()
        if name == "summary.json":                     # the creation time may differ
            a, b = (json.dumps({**json.loads(x), "created": ""}) for x in (a, b))
        assert a == b, name


def test_jobs_below_one_is_refused(sets):
    r = _cli("score", str(sets["shifts"]), sets["files"][0], "-o", str(sets["tmp"] / "j0"), "--jobs", "0")
    assert r.returncode == 2 and "--jobs" in r.stderr and "Traceback" not in r.stderr


def test_dask_local_cluster_equals_local_engine(sets):
    distributed = pytest.importorskip("distributed", reason="dask.distributed not installed "
                                      "(pip install 'shiftcheck[cluster]')")
    paths = sets["files"][:6] + [sets["multi"]]
    ref = score_files(sets["shifts"], paths, models_per_task=10)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False,
                                  dashboard_address=":0", protocol="tcp",
                                  host="127.0.0.1") as cluster:
        got = score_files(sets["shifts"], paths, models_per_task=10, scheduler=cluster.scheduler_address)
    _same_tables(ref, got, sets["tmp"], "dask")
