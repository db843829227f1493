"""Errors injected into a real shift list (BMRB 17769, ubiquitin) are found by the scorer.

Goals from the scoring issue: referencing offsets recovered within 0.2 ppm (13C) and 0.03 ppm
(1H); the CA/CB-swapped residue and the residue carrying another residue's shifts flagged
"in every model" of the X-ray structure 1UBQ and the NMR ensemble 1D3Z; no new "every" flags
elsewhere beyond a small number.
"""
from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tools"))
from validate_scoring import injected_error_run  # noqa: E402


@pytest.fixture(scope="module")
def ubq_run(realdata):
    return injected_error_run(realdata, "ubiquitin", "bmr17769.str", ["1ubq.pdb", "1D3Z.pdb"],
                              n_boot=100, seed=7)


def test_offsets_recovered(ubq_run):
    assert ubq_run["dC"] == pytest.approx(2.0, abs=0.2)
    assert ubq_run["dH"] == pytest.approx(0.3, abs=0.03)
    assert ubq_run["C_applied"] and ubq_run["H_applied"]


def test_swap_and_move_flagged_in_every_model(ubq_run):
    assert ubq_run["swap_flagged"]
    assert ubq_run["move_flagged"]
    assert ubq_run["recall"] >= 0.5


def test_few_false_flags(ubq_run):
    # a +2 ppm / +0.3 ppm offset, once corrected, must not create flags elsewhere
    assert ubq_run["false_flags"] <= 2


def test_injection_itself(realdata):
    # the injector changes exactly what it says (independent of the scorer)
    import numpy as np

    from shiftcheck.io.shift_formats import read_shifts
    from validate_scoring import inject_errors

    s = read_shifts(realdata / "ubiquitin" / "bmr17769.str")
    bad, inj = inject_errors(s, swap_seq=71, move_from=53, move_to=49)
    iso = np.array([str(a)[:1] for a in s.atom_id])
    touched = np.zeros(len(s), bool)
    for seq, atom in inj:
        touched |= (s.seq_id == seq) & (s.atom_id == atom)
    d = bad.value - s.value
    assert np.allclose(d[(iso == "C") & ~touched], 2.0) and np.allclose(d[(iso == "H") & ~touched], 0.3)
    assert np.allclose(d[iso == "N"][~touched[iso == "N"]], 0.0)
    ca = (s.seq_id == 71) & (s.atom_id == "CA")
    cb = (s.seq_id == 71) & (s.atom_id == "CB")
    assert bad.value[ca][0] == pytest.approx(s.value[cb][0] + 2.0)
