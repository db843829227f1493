"""Per-model isolation (issue 13, item 1): one unusable model file does not stop ``score``.

Cases from ../shared/realdata/server_models (89 server models of aKMT D34A, as served; the
foldpro_*.pdb files carry '01'-style charge columns) and gb3/2OED.pdb (another protein: GB3),
plus a file of waters only, built here."""
import json

import pytest

from shiftcheck.cli import main
from shiftcheck.isolation import distinct_labels, read_models_tolerant

WATER = "HETATM    1  O   HOH W   1      10.000  10.000  10.000  1.00  0.00           O\nEND\n"


def _files(realdata, tmp_path):
    sm = realdata / "server_models"
    water = tmp_path / "waters.pdb"
    water.write_text(WATER)
    return (str(sm / "akmt_d34a_shifts.str21"),
            [str(sm / "itasser_1.pdb"), str(sm / "foldpro_1.pdb"), str(water),
             str(realdata / "gb3" / "2OED.pdb")])


def _score(shifts, models, out, *extra):
    return main(["score", shifts, *models, "-o", str(out), "--no-report", "--quiet",
                 "--bootstrap", "20", *extra])


def test_unusable_models_are_skipped_with_reasons(realdata, tmp_path, capsys):
    shifts, models = _files(realdata, tmp_path)
    assert _score(shifts, models, tmp_path / "out") == 0
    s = json.loads((tmp_path / "out" / "summary.json").read_text())
    ranked = {r["model"] for r in s["ranking"]}
    assert ranked == {"itasser_1.pdb", "foldpro_1.pdb"}
    reasons = {x["file"].split("/")[-1]: x["reason"] for x in s["skipped"]}
    assert set(reasons) == {"waters.pdb", "2OED.pdb"}
    assert "no protein residues" in reasons["waters.pdb"]
    assert "another protein" in reasons["2OED.pdb"]
    err = capsys.readouterr().err
    assert err.count("skipped:") == 2


def test_strict_turns_a_skip_into_the_one_line_error(realdata, tmp_path, capsys):
    shifts, models = _files(realdata, tmp_path)
    assert _score(shifts, models, tmp_path / "out", "--strict") == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "waters.pdb" in err and "no protein residues" in err
    assert not (tmp_path / "out").exists()


def test_no_model_left_names_every_file(realdata, tmp_path, capsys):
    shifts, models = _files(realdata, tmp_path)
    assert _score(shifts, models[2:], tmp_path / "out") == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "no model left" in err
    assert "waters.pdb" in err and "2OED.pdb" in err
    assert not (tmp_path / "out").exists()


def test_console_summary_lists_skipped(realdata, tmp_path, capsys):
    shifts, models = _files(realdata, tmp_path)
    assert main(["score", shifts, models[0], models[2], "-o", str(tmp_path / "o"), "--no-report",
                 "--bootstrap", "20"]) == 0
    out = capsys.readouterr().out
    assert "Skipped models: 1" in out and "waters.pdb" in out


def test_report_first_page_names_skipped(realdata, tmp_path):
    from shiftcheck.report.load import load_outdir
    from shiftcheck.report.pages import _lines

    shifts, models = _files(realdata, tmp_path)
    assert _score(shifts, [models[0], models[2]], tmp_path / "out") == 0
    text = "\n".join(t for _, t in _lines(load_outdir(tmp_path / "out")))
    assert "Skipped models (1" in text and "waters.pdb" in text


def test_same_name_files_get_distinct_labels(realdata, tmp_path):
    sm = realdata / "server_models"
    (tmp_path / "a").mkdir()
    (tmp_path / "a" / "itasser_1.pdb").write_bytes((sm / "itasser_2.pdb").read_bytes())
    paths = [sm / "itasser_1.pdb", tmp_path / "a" / "itasser_1.pdb", sm / "itasser_1.pdb"]
    ens, skipped = read_models_tolerant(paths, build_hydrogens=False)
    names = [e.name for e in ens]
    assert not skipped and len(set(names)) == 3
    assert names == ["server_models/itasser_1.pdb", "a/itasser_1.pdb", "server_models/itasser_1.pdb (2)"]


def test_distinct_labels_shortest_tail():
    assert distinct_labels(["/x/a/m.pdb", "/x/b/m.pdb", "/x/n.pdb"]) == ["a/m.pdb", "b/m.pdb", "n.pdb"]
    assert distinct_labels(["/p/q/r/m.pdb", "/p/s/r/m.pdb"]) == ["q/r/m.pdb", "s/r/m.pdb"]


def test_protein_on_chain_b_error_suggests_chain(realdata, tmp_path, capsys):
    """2OED (GB3) as chain A before an aKMT server model as chain B: the hint names --chain B."""
    sm = realdata / "server_models"
    a = [ln for ln in (realdata / "gb3" / "2OED.pdb").read_text().splitlines() if ln.startswith("ATOM")]
    b = [ln[:21] + "B" + ln[22:] for ln in (sm / "itasser_1.pdb").read_text().splitlines()
         if ln.startswith("ATOM")]
    f = tmp_path / "two_chains.pdb"
    f.write_text("\n".join(a + ["TER"] + b + ["END"]) + "\n")
    assert _score(str(sm / "akmt_d34a_shifts.str21"), [str(f)], tmp_path / "out") == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "--chain B" in err
    assert _score(str(sm / "akmt_d34a_shifts.str21"), [str(f)], tmp_path / "out", "--chain", "B") == 0


def test_inspect_describes_every_readable_file_and_names_the_rest(realdata, tmp_path, capsys):
    """``inspect`` reads each file on its own: the waters-only file is listed as unreadable, the
    two server models are still described, and the exit code is 2 with a one-line error."""
    shifts, models = _files(realdata, tmp_path)
    assert main(["inspect", shifts, *models[:3]]) == 2
    cap = capsys.readouterr()
    assert "itasser_1.pdb" in cap.out and "foldpro_1.pdb" in cap.out
    assert "Unreadable model files (1):" in cap.out and "no protein residues" in cap.out
    err = cap.err.strip()
    assert "\n" not in err and "waters.pdb" in err


def test_check_leaves_out_unusable_models(realdata, tmp_path, capsys):
    """``check`` with models: the unreadable and the other-protein files are named on stderr,
    the findings are compared with the usable models, exit 0; with none usable, exit 2."""
    shifts, models = _files(realdata, tmp_path)
    assert main(["check", shifts, *models]) == 0
    cap = capsys.readouterr()
    assert cap.err.count("skipped:") == 2
    assert "waters.pdb" in cap.err and "2OED.pdb" in cap.err
    assert "shifts;" in cap.out
    assert main(["check", shifts, *models[2:]]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "no model left" in err
