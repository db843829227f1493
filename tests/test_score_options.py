"""`score --min-identity`: the sequence-identity gate between shift list and models.

Source of the case: BMRB 2575 is protein G domain B2 and PDB 2OED is GB3; the two sequences
differ at one of 56 positions (identity 0.982, computed by the mapping from the files
themselves), so the default threshold 0.9 accepts the pair and 0.99 refuses it."""
import pytest

from shiftcheck.cli import main


def _score(realdata, tmp_path, *extra):
    return main(["score", str(realdata / "gb3" / "bmr2575.str"), str(realdata / "gb3" / "2OED.pdb"),
                 "-o", str(tmp_path / "out"), "--no-report", "--quiet", "--bootstrap", "50", *extra])


def test_default_threshold_accepts_the_b2_b3_pair(realdata, tmp_path):
    assert _score(realdata, tmp_path) == 0
    assert (tmp_path / "out" / "ranking.csv").is_file()


def test_stricter_threshold_refuses_with_one_line(realdata, tmp_path, capsys):
    assert _score(realdata, tmp_path, "--min-identity", "0.99") == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "bmr2575.str" in err and "0.99" in err
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("value", ["0", "1.5"])
def test_threshold_outside_zero_one_is_refused(realdata, tmp_path, capsys, value):
    assert _score(realdata, tmp_path, "--min-identity", value) == 2
    assert "--min-identity" in capsys.readouterr().err
