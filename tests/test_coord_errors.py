"""Bad coordinate input: one InputError naming the file, one line; the CLI exits 2.

Expectations follow the project's error rules (common practice, no source): every reader
failure is a ShiftcheckError subclass with the path, and the command line prints exactly one
line on stderr and exits with status 2.
"""
from __future__ import annotations

import gzip
import os
import subprocess
import sys

import pytest

from shiftcheck.errors import InputError
from shiftcheck.io.coords import read_models

WATER_ONLY = "\n".join(
    f"HETATM{i:5d}  O   HOH A{100 + i:4d}    {1.0 * i:8.3f}{2.0:8.3f}{3.0:8.3f}  1.00 20.00           O"
    for i in range(1, 6)) + "\nEND\n"
CIF_NO_ATOMS = "data_test\n_entry.id TEST\n_exptl.method 'SOLUTION NMR'\n_cell.length_a 1.0\n"


def _cases(tmp_path):
    (tmp_path / "empty.pdb").write_text("")
    (tmp_path / "blank.pdb").write_text("\n\n   \n")
    (tmp_path / "binary.pdb").write_bytes(bytes(range(256)) * 40)
    (tmp_path / "water.pdb").write_text(WATER_ONLY)
    (tmp_path / "noatoms.cif").write_text(CIF_NO_ATOMS)
    (tmp_path / "prose.pdb").write_text("This is a letter, not a structure.\nRegards\n")
    (tmp_path / "bad.pdb.gz").write_bytes(gzip.compress(b"ATOM  ")[:12])
    (tmp_path / "adir").mkdir()
    return {
        "missing": (tmp_path / "nope.pdb", "not found"),
        "empty": (tmp_path / "empty.pdb", "empty"),
        "blank": (tmp_path / "blank.pdb", "empty"),
        "binary": (tmp_path / "binary.pdb", "binary"),
        "water only": (tmp_path / "water.pdb", "no protein"),
        "mmCIF without atom_site": (tmp_path / "noatoms.cif", "_atom_site"),
        "prose": (tmp_path / "prose.pdb", "no atoms"),
        "corrupt gzip": (tmp_path / "bad.pdb.gz", "gzip"),
        "directory": (tmp_path / "adir", "directory"),
    }


@pytest.mark.parametrize("case", ["missing", "empty", "blank", "binary", "water only",
                                  "mmCIF without atom_site", "prose", "corrupt gzip", "directory"])
def test_bad_input_raises_input_error(tmp_path, case):
    path, words = _cases(tmp_path)[case]
    with pytest.raises(InputError) as info:
        read_models(path)
    msg = str(info.value)
    assert "\n" not in msg
    assert str(path) in msg and words in msg


def test_unknown_chain(tmp_path, realdata):
    with pytest.raises(InputError, match="no chain 'Q'"):
        read_models(realdata / "ubiquitin" / "1ubq.pdb", chain="Q")


@pytest.mark.parametrize("case", ["missing", "binary", "water only", "mmCIF without atom_site"])
def test_cli_exits_2_with_one_line(tmp_path, realdata, case):
    path, words = _cases(tmp_path)[case]
    shifts = realdata / "ubiquitin" / "bmr17769.str"
    out = subprocess.run([sys.executable, "-m", "shiftcheck", "inspect", str(shifts), str(path)],
                         capture_output=True, text=True, env={**os.environ, "PYTHONWARNINGS": "ignore"})
    assert out.returncode == 2
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and str(path) in lines[0] and words in lines[0]
    assert "Traceback" not in out.stderr


def test_cli_refuses_other_protein(realdata):
    # ubiquitin shifts against the CI2 crystal: another protein, exit 2 with one line
    out = subprocess.run([sys.executable, "-m", "shiftcheck", "inspect",
                          str(realdata / "ubiquitin" / "bmr17769.str"), str(realdata / "ci2" / "3CI2.pdb")],
                         capture_output=True, text=True)
    assert out.returncode == 2
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and "another protein" in lines[0]
