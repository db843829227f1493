"""Crashes and wrong results of issue 13, item 4, each on the case that showed it.

Cases built from ../shared/realdata/server_models (aKMT D34A shifts, NMR-STAR 2.1 fragment,
and the itasser_1.pdb server model): its Cys 37 has a CB shift (29.3 ppm)."""
import json

import pytest

from shiftcheck.cli import main


@pytest.fixture
def akmt(realdata):
    sm = realdata / "server_models"
    return sm / "akmt_d34a_shifts.str21", sm / "itasser_1.pdb"


def _without_sg(model, tmp_path, rename=None):
    lines = [ln for ln in model.read_text().splitlines() if not (ln.startswith("ATOM") and ln[12:16] == " SG ")]
    if rename:
        lines = [ln.replace("CYS A  37", f"{rename} A  37") for ln in lines]
    p = tmp_path / "nosg.pdb"
    p.write_text("\n".join(lines) + "\n")
    return p


@pytest.mark.parametrize("rename", [None, "SER"])
def test_cys_without_sg_no_traceback_no_verdict(akmt, tmp_path, capsys, rename):
    """SG atoms deleted (and Cys 37 renamed Ser): was IndexError in check_against_models."""
    shifts, model = akmt
    m = _without_sg(model, tmp_path, rename)
    assert main(["check", str(shifts), str(m), "--json"]) == 0
    found = [f for f in json.loads(capsys.readouterr().out) if f["rule"] == "cys_redox"]
    assert found and all("the models say" not in f["message"] for f in found)   # no SG: no verdict
    assert main(["score", str(shifts), str(m), "-o", str(tmp_path / "o"), "--no-report", "--quiet",
                 "--bootstrap", "20"]) == 0


def test_unknown_feature_column_is_one_line(akmt, tmp_path, capsys):
    from shiftcheck.predict.params import default_params_path

    shifts, model = akmt
    p = json.loads(open(default_params_path()).read())
    for block in p["coefficients"].values():      # every ring model: the default one is hit
        next(iter(block.values()))["names"][-1] = "hb:no_such_feature"
    f = tmp_path / "params.json"
    f.write_text(json.dumps(p))
    code = main(["predict", str(model), "--params", str(f)])
    err = capsys.readouterr().err.strip()
    assert code == 2 and "\n" not in err and "no_such_feature" in err and str(f) in err
