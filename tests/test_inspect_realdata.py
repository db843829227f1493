"""`shiftcheck inspect` over the whole public test set (SHIFTCHECK_REALDATA).

Every shift file of every folder is read and mapped onto every coordinate file of the same
folder; the folder pairs come from the public archives (BMRB/PDB, see realdata/README.md), so
the mapping must find the same protein: identity >= 0.9 (the documented threshold).
"""
from __future__ import annotations

from functools import lru_cache
from pathlib import Path

import pytest

from conftest import realdata_dir

COORD_SUFFIXES = (".pdb", ".cif", ".pdb.gz", ".cif.gz", ".ent", ".ent.gz", ".mmcif")


def _pairs():
    d = realdata_dir()
    if d is None:
        return [pytest.param(None, None, marks=pytest.mark.skip(reason="SHIFTCHECK_REALDATA not set"))]
    out = []
    for folder in sorted(p for p in d.iterdir() if p.is_dir()):
        shifts = sorted(p for p in folder.iterdir() if p.suffix == ".str")
        for s in shifts:
            out.append(pytest.param(folder, s, id=f"{folder.name}/{s.name}"))
    return out


@lru_cache(maxsize=None)
def _models(folder: Path):
    from shiftcheck.io.coords import read_models

    files = sorted(p for p in folder.iterdir() if p.name.lower().endswith(COORD_SUFFIXES))
    return tuple(read_models(files))


@pytest.mark.parametrize("folder,shift_file", _pairs())
def test_inspect_every_pair(realdata, folder, shift_file):
    from shiftcheck.commands.inspect import describe
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.structure.mapping import map_sequence

    shifts = read_shifts(shift_file)
    models = _models(folder)
    assert models, f"no coordinate files in {folder}"
    text, failed = describe(shifts, list(models))
    assert not failed, text
    for ens in models:
        m = map_sequence(shifts, ens)
        print(f"{folder.name}: {shift_file.name} -> {ens.name}: identity {m.identity:.3f} "
              f"coverage {m.coverage:.3f} {'; '.join(m.offsets)}")
        assert m.identity >= 0.9
        assert m.coverage > 0.5
        # mapped residues agree in type where both sequences say so
        assert len(m.mismatches) <= 0.1 * m.n_aligned
    assert f"Shifts: {shift_file}" in text and "Warnings" in text


def test_cli_inspect_runs(realdata, capsys):
    from shiftcheck.cli import main

    folder = realdata / "hr3102a"
    code = main(["inspect", str(folder / "2krk_shifts.str"), str(folder / "2KRK.pdb"), str(folder / "3KW6.pdb")])
    out = capsys.readouterr().out
    assert code == 0
    assert "offset +11" in out and "built" in out and "MSE -> MET" in out
