"""Outputs (issue 13, item 4): validated options, one atomic writer honouring the umask, never
over an input, --force replaces the whole previous output, no temporary folder after a signal.

Inputs: ../shared/realdata/ubiquitin (BMRB 17769 shifts, PDB 1UBQ X-ray model)."""
import json
import os
import signal
import stat
import subprocess
import sys
import time
from pathlib import Path

import pytest

from shiftcheck.cli import main


@pytest.fixture
def ubq(realdata):
    return realdata / "ubiquitin" / "bmr17769.str", realdata / "ubiquitin" / "1ubq.pdb"


def _score(ubq, out, *extra, models=None):
    s, m = ubq
    return main(["score", str(s), *(models or [str(m)]), "-o", str(out), "--quiet", "--bootstrap", "20",
                 *extra])


@pytest.mark.parametrize("opt", [["--bootstrap", "-1"], ["--bootstrap", "0"], ["--seed", "-1"],
                                 ["--k-sigma", "nan"], ["--k-sigma", "0"], ["--k-sigma", "-2"],
                                 ["--show", "no_such_model.pdb"]])
def test_bad_options_refused_before_work(ubq, tmp_path, capsys, opt):
    assert _score(ubq, tmp_path / "out", *opt) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and opt[0] in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_modes_follow_the_umask(ubq, tmp_path):
    old = os.umask(0o022)
    try:
        assert _score(ubq, tmp_path / "out", "--no-report") == 0
        assert main(["predict", str(ubq[1]), "-o", str(tmp_path / "p.csv")]) == 0
        from shiftcheck.predict.params import load_params, save_params
        save_params(load_params(), tmp_path / "params.json")
    finally:
        os.umask(old)
    for f in [tmp_path / "out" / "summary.json", tmp_path / "p.csv", tmp_path / "params.json"]:
        assert stat.S_IMODE(f.stat().st_mode) == 0o644, f


def test_predict_output_checks(ubq, tmp_path, capsys):
    model = tmp_path / "m.pdb"
    model.write_bytes(ubq[1].read_bytes())
    before = model.read_bytes()
    for target in (str(model), str(tmp_path / "sub" / ".." / "m.pdb"), str(tmp_path)):
        if "sub" in target:
            (tmp_path / "sub").mkdir(exist_ok=True)
        assert main(["predict", str(model), "-o", target]) == 2
        err = capsys.readouterr().err.strip()
        assert "\n" not in err and ("input" in err or "directory" in err)
    assert model.read_bytes() == before


def test_score_never_writes_over_an_input(ubq, tmp_path, capsys):
    d = tmp_path / "inputs"
    d.mkdir()
    inp = d / "residues.csv"          # a table of shifts that happens to be called residues.csv
    inp.write_text("1 MET CA 54.5\n2 GLN CA 55.9\n3 ILE CA 59.6\n4 PHE CA 55.4\n5 VAL CA 60.6\n")
    (d / "sub").mkdir()
    link = tmp_path / "link"
    link.symlink_to(d)
    for out in (d / "sub" / "..", link):
        code = main(["score", str(inp), str(ubq[1]), "-o", str(out), "--force", "--quiet",
                     "--no-report", "--bootstrap", "20"])
        assert code == 2 and "holds an input" in capsys.readouterr().err
    assert inp.read_text().startswith("1 MET CA 54.5")


def test_read_only_parent_is_one_line(ubq, tmp_path, capsys):
    if os.geteuid() == 0:
        pytest.skip("root ignores folder permissions")
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o555)
    try:
        assert _score(ubq, ro / "out", "--no-report") == 2
        assert "not writable" in capsys.readouterr().err
    finally:
        ro.chmod(0o755)


def test_force_replaces_the_previous_output(ubq, tmp_path):
    out = tmp_path / "out"
    assert _score(ubq, out) == 0
    assert (out / "report.pdf").is_file() and (out / "plots").is_dir()
    (out / "my_notes.txt").write_text("keep me")
    assert _score(ubq, out, "--force", "--no-report") == 0
    assert not (out / "report.pdf").exists() and not (out / "plots").exists()
    assert (out / "my_notes.txt").read_text() == "keep me"
    assert json.loads((out / "summary.json").read_text())["ranking"]


SLOW_WRITE = """
import sys, time
import shiftcheck.report.tables as t
real = t.write_tables
def slow(res, outdir):
    paths = real(res, outdir)
    print("STAGED", flush=True)
    time.sleep(60)
    return paths
t.write_tables = slow
from shiftcheck.cli import main
sys.exit(main(sys.argv[1:]))
"""


def test_sigterm_leaves_no_temporary_folder(ubq, tmp_path):
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    p = subprocess.Popen([sys.executable, "-c", SLOW_WRITE, "score", str(ubq[0]), str(ubq[1]),
                          "-o", str(tmp_path / "out"), "--no-report", "--quiet", "--bootstrap", "20"],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
    assert p.stdout.readline().strip() == "STAGED"
    assert any(x.name.startswith(".out.tmp-") for x in tmp_path.iterdir())
    p.send_signal(signal.SIGTERM)
    _, err = p.communicate(timeout=30)
    assert p.returncode == 128 + signal.SIGTERM and "signal" in err
    assert list(tmp_path.iterdir()) == []


def test_predict_csv_keeps_insertion_codes(ubq, tmp_path):
    lines = []
    for ln in ubq[1].read_text().splitlines():
        if ln.startswith("ATOM") and ln[22:26] == "  10":
            ln = ln[:22] + "   9A" + ln[27:]
        lines.append(ln)
    m = tmp_path / "icode.pdb"
    m.write_text("\n".join(lines) + "\n")
    assert main(["predict", str(m), "-o", str(tmp_path / "p.csv")]) == 0
    import csv
    rows = list(csv.DictReader(open(tmp_path / "p.csv")))
    keys = {(r["res_seq"], r["ins_code"], r["comp_id"]) for r in rows}
    assert ("9", "A", "GLY") in keys and ("9", "", "THR") in keys
