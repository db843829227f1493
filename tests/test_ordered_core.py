"""Angular order parameter (tools/ordered_core.py) against its definition (Hyberts et al. 1992,
Protein Sci. 1:736, from memory: S = |mean of the unit vectors exp(i·θ)| over the models) evaluated
independently, and the ordered core of a public NMR ensemble."""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tools"))
from ordered_core import angular_order, ordered_residues  # noqa: E402


def test_angular_order_matches_the_mean_resultant_length():
    rng = np.random.default_rng(3)
    a = np.stack([np.full(20, -60.0), rng.uniform(-180, 180, 20), -60 + rng.normal(0, 10, 20),
                  np.r_[np.full(10, 170.0), np.full(10, -170.0)]], axis=1)
    s = angular_order(a)
    # independent: the mean resultant length from sums of cosines and sines
    c, sn = np.cos(np.radians(a)).mean(0), np.sin(np.radians(a)).mean(0)
    assert s == pytest.approx(np.hypot(c, sn))
    assert s[0] == pytest.approx(1.0) and s[3] == pytest.approx(np.cos(np.radians(10.0)))  # ±170 wraps
    assert s[2] > 0.95 and s[1] < 0.5
    # undefined angles (chain ends) are left out; a column without any gives NaN
    b = np.array([[np.nan, 30.0], [np.nan, 30.0]])
    assert np.isnan(angular_order(b)[0]) and angular_order(b)[1] == pytest.approx(1.0)


def test_ubiquitin_core_leaves_out_the_flexible_c_terminus(realdata):
    # public data: ubiquitin's C-terminal tail (about residues 72-76) is flexible in solution
    # (from memory); its NMR ensemble 1D3Z must leave out at least the last two residues and keep
    # most of the folded residues 2-70; the native is the X-ray 1ubq
    from plausible_decoys import load_native
    native = load_native(realdata, "ubiquitin")
    mask, src = ordered_residues(realdata, "ubiquitin", "bmr17769.str", native)
    assert src.endswith("ensemble") and mask.size == native.n_residues
    num = np.asarray(native.res_seq)
    assert not mask[num >= 75].any() and mask[(num >= 2) & (num <= 70)].mean() > 0.9
