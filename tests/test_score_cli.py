"""``shiftcheck score`` / ``check`` end to end: outputs, columns, and every failure path
(exit 2, one line on stderr, no output directory left behind or a pre-existing one untouched).

Sources: column and key contract of docs/outputs.md; error behaviour from the project's
input-error rules (common practice, no source); inputs are public BMRB/PDB files."""
from __future__ import annotations

import csv
import json
import shutil

import pytest

from shiftcheck.cli import main

RANKING = ["rank", "model", "score", "score_low", "score_high", "p_best"] + \
    [f"{s}_{x}" for x in ("H", "HA", "CA", "CB", "C", "N") for s in ("rmsd", "mad", "r", "n")]
RESIDUES = ["model", "chain", "seq_id", "comp_id", "atom_id", "measured", "predicted", "residual", "z", "flag"]
SUMMARY_KEYS = ["shiftcheck_version", "created", "inputs", "mapping", "reref_mode", "offsets", "metrics",
                "ranking", "best_model", "expected_error", "flags", "residue_summary", "data_checks",
                "secondary_structure", "left_out", "warnings", "parameters"]


@pytest.fixture(scope="module")
def ubq(realdata):
    d = realdata / "ubiquitin"
    return d / "bmr17769.str", d / "1ubq.pdb", d / "1D3Z.pdb"


def _one_line_error(capsys):
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("shiftcheck: error:")
    return err[0]


def test_score_writes_three_files_with_columns(ubq, tmp_path, capsys):
    shifts, xray, nmr = ubq
    out = tmp_path / "out"
    rc = main(["score", str(shifts), str(xray), str(nmr), "-o", str(out), "--bootstrap", "50",
               "--no-report"])
    assert rc == 0
    text = capsys.readouterr().out
    assert "Referencing offsets" in text and "Ranking" in text
    with open(out / "ranking.csv") as fh:
        rows = list(csv.DictReader(fh))
    assert list(rows[0])[:len(RANKING)] == RANKING
    names = {r["model"] for r in rows}
    assert {"1ubq.pdb", "1D3Z.pdb#1", "1D3Z.pdb#10", "1D3Z.pdb#mean"} <= names
    assert len(rows) == 1 + 10 + 1
    with open(out / "residues.csv") as fh:
        res = csv.DictReader(fh)
        assert res.fieldnames[:len(RESIDUES)] == RESIDUES
        first = next(res)
    # residual = measured - offset - predicted (docs/outputs.md)
    assert float(first["residual"]) == pytest.approx(
        float(first["measured"]) - float(first["offset"]) - float(first["predicted"]), abs=2e-4)
    summ = json.loads((out / "summary.json").read_text())
    for k in SUMMARY_KEYS:
        assert k in summ
    assert summ["inputs"]["shifts"]["sha256"] and len(summ["inputs"]["models"]) == 2
    assert summ["best_model"] == rows[0]["model"]
    assert set(summ["offsets"]) == {"C", "N", "H"}
    assert not list(tmp_path.glob(".out.tmp-*"))          # no temporary directory left


def test_missing_shift_file(tmp_path, capsys, ubq):
    out = tmp_path / "o"
    assert main(["score", str(tmp_path / "nope.str"), str(ubq[1]), "-o", str(out)]) == 2
    _one_line_error(capsys)
    assert not out.exists() and not list(tmp_path.glob(".o.tmp-*"))


def test_bad_model_file(tmp_path, capsys, ubq):
    bad = tmp_path / "bad.pdb"
    bad.write_bytes(b"\x00\x01garbage\xff" * 50)
    out = tmp_path / "o"
    assert main(["score", str(ubq[0]), str(bad), "-o", str(out)]) == 2
    assert "bad.pdb" in _one_line_error(capsys)
    assert not out.exists()


def test_shifts_of_another_protein(tmp_path, capsys, realdata, ubq):
    out = tmp_path / "o"
    assert main(["score", str(realdata / "ci2" / "bmrb4974.str"), str(ubq[1]), "-o", str(out)]) == 2
    _one_line_error(capsys)
    assert not out.exists()


def test_non_empty_outdir_refused_and_untouched(tmp_path, capsys, ubq):
    out = tmp_path / "o"
    out.mkdir()
    (out / "keep.txt").write_text("mine")
    assert main(["score", str(ubq[0]), str(ubq[1]), "-o", str(out), "--no-report"]) == 2
    assert "--force" in _one_line_error(capsys)
    assert [p.name for p in out.iterdir()] == ["keep.txt"]


def test_force_keeps_other_files_and_refuses_input_folder(tmp_path, capsys, ubq):
    out = tmp_path / "o"
    out.mkdir()
    (out / "keep.txt").write_text("mine")
    assert main(["score", str(ubq[0]), str(ubq[1]), "-o", str(out), "--force", "--no-report",
                 "--bootstrap", "20", "--quiet"]) == 0
    assert capsys.readouterr().out == ""
    assert {p.name for p in out.iterdir()} == {"keep.txt", "ranking.csv", "residues.csv", "summary.json"}
    # an input inside OUTDIR: --force would overwrite beside the inputs -> refused
    local = out / "1ubq.pdb"
    shutil.copy(ubq[1], local)
    assert main(["score", str(ubq[0]), str(local), "-o", str(out), "--force"]) == 2
    _one_line_error(capsys)


def test_no_common_atoms(tmp_path, capsys, ubq):
    # a list holding only side-chain atoms that are not scored: nothing to compare
    lst = tmp_path / "t.txt"
    lst.write_text("".join(f"{i} LYS CG 25.0\n" for i in (6, 11, 27, 29, 33)))
    out = tmp_path / "o"
    rc = main(["score", str(lst), str(ubq[1]), "-o", str(out)])
    assert rc == 2
    assert "no atom is common" in _one_line_error(capsys)
    assert not out.exists()


def test_check_command(ubq, capsys):
    assert main(["check", str(ubq[0]), "--notes"]) == 0
    out = capsys.readouterr().out
    assert "cys_redox" not in out          # ubiquitin has no cysteine
    assert "cis_pro" in out                # Pro 19, 37, 38 CB/CG notes (all trans)
    assert main(["check", str(ubq[0]), "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert all({"seq_id", "comp_id", "atom_id", "rule", "message", "source"} <= set(r) for r in rows)


@pytest.mark.parametrize("folder,shifts", [("yppr", "16570_v2.str"), ("gb3", "bmr2575.str"),
                                           ("hsr50", "2lok_shifts.str"), ("engrailed_hd", "bmr15536.str")])
def test_score_real_folders(realdata, tmp_path, folder, shifts):
    # representative subset of the realdata walk (NMR-STAR 2.1, 1H-only list, single-model
    # files with odd numbering, 25-model NMR ensemble with an X-ray structure)
    d = realdata / folder
    models = sorted(str(p) for p in d.glob("*.pdb"))
    out = tmp_path / "o"
    assert main(["score", str(d / shifts), *models, "-o", str(out), "--bootstrap", "20",
                 "--no-report", "--quiet"]) == 0
    summ = json.loads((out / "summary.json").read_text())
    assert summ["ranking"][0]["rank"] == 1 and summ["left_out"]["n_compared"] > 50
