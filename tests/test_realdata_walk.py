"""`shiftcheck score` on every folder of the public data: each shift file of a folder against all
of that folder's coordinate files (source of the data: BMRB and PDB entries listed in
SHIFTCHECK_REALDATA/README.md). Checks the three tables' columns (issue contract,
docs/outputs.md) and that the best model is one of the inputs. Without the report (it took two
thirds of this test's time): report.pdf and the plots of real data are checked by
tests/test_report.py::test_realdata_score_then_report and tests/test_html_report.py."""
from __future__ import annotations

import csv
import json
import os

import pytest

from conftest import realdata_dir
from shiftcheck.cli import main

NUCLEI = ("H", "HA", "CA", "CB", "C", "N")
RANKING_HEAD = ["rank", "model", "score", "score_low", "score_high", "p_best"] + [
    f"{m}_{x}" for x in NUCLEI for m in ("rmsd", "mad", "r", "n")]
RESIDUE_HEAD = ["model", "chain", "seq_id", "comp_id", "atom_id", "measured", "predicted", "residual",
                "z", "flag"]


def _cases():
    root = realdata_dir()
    if root is None:
        return [pytest.param(None, marks=pytest.mark.skip(
            reason="real-data test skipped: set SHIFTCHECK_REALDATA to the folder of public BMRB/PDB files"))]
    out = []
    for folder in sorted(p for p in root.iterdir() if p.is_dir()):
        for shifts in sorted(folder.glob("*.str")):
            out.append(pytest.param(shifts, id=f"{folder.name}-{shifts.stem}"))
    return out


@pytest.mark.parametrize("shifts", _cases())
def test_score_every_folder(shifts, tmp_path, capsys):
    models = sorted(str(p) for p in shifts.parent.glob("*.pdb"))
    out = tmp_path / "out"
    code = main(["score", str(shifts), *models, "-o", str(out), "--bootstrap", "100", "--quiet",
                 "--no-report"])
    assert code == 0, capsys.readouterr().err
    with open(out / "ranking.csv", newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0][:len(RANKING_HEAD)] == RANKING_HEAD
    names = [r[1] for r in rows[1:]]
    bases = {os.path.basename(m) for m in models}
    assert all(n.split("#")[0] in bases for n in names)
    assert [int(r[0]) for r in rows[1:]] == list(range(1, len(rows)))
    with open(out / "residues.csv", newline="") as fh:
        head = next(csv.reader(fh))
    assert head[:len(RESIDUE_HEAD)] == RESIDUE_HEAD
    summary = json.loads((out / "summary.json").read_text())
    assert summary["best_model"] == names[0]
