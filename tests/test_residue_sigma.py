"""Residue-type factors of the expected error (crossval.residue_factors, scorer.atom_sigma).

References: the normal distribution (numpy's generator; P(|z| > 3) = 0.27 %, textbook) and the
definition of the factors in shiftcheck/predict/crossval.py; synthetic residuals, no real data.
"""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.predict.crossval import choose_residue_shrinkage, residue_factors
from shiftcheck.score.scoring import atom_sigma, residue_error_factors

TAIL = 0.9973   # P(|z| <= 3), standard normal (textbook)


def _two_types(seed=0, n=6000, s_gly=2.0, groups=8):
    rng = np.random.default_rng(seed)
    types = np.where(rng.random(n) < 0.5, "GLY", "ALA")
    r = rng.normal(0.0, np.where(types == "GLY", s_gly, 1.0))
    return r, types, rng.integers(0, groups, n)


def test_factors_recover_the_ratio_of_normal_scales():
    # GLY residuals drawn with twice the standard deviation of ALA: without shrinkage the
    # factors keep that ratio (to sampling error, about 2 % with 3000 draws each)
    r, t, _ = _two_types()
    f = residue_factors(r, t, 0.0, TAIL)
    assert f["GLY"] / f["ALA"] == pytest.approx(2.0, rel=0.05)


def test_factors_stay_tail_matched_over_the_class():
    # sigma_class x F keeps |z| > 3 at the normal rate pooled over the class, as the class-wide
    # tail-matched sigma does (the 0.9973 quantile / 3)
    r, t, _ = _two_types(seed=1)
    s = np.quantile(np.abs(r), TAIL) / 3.0
    f = residue_factors(r, t, 0.0, TAIL)
    z = r / (s * np.array([f[x] for x in t]))
    assert np.mean(np.abs(z) > 3) == pytest.approx(1 - TAIL, abs=0.0007)
    # and per type it is now near normal for both (a single sigma gives GLY far more than ALA)
    for x in ("GLY", "ALA"):
        assert np.mean(np.abs(z[t == x]) > 3) < 0.008
    assert np.mean(np.abs(r[t == "ALA"]) / s > 3) < 1e-3 < np.mean(np.abs(r[t == "GLY"]) / s > 3)


def test_infinite_shrinkage_is_one_sigma_per_class():
    r, t, _ = _two_types(seed=2)
    f = residue_factors(r, t, np.inf, TAIL)
    assert f["GLY"] == pytest.approx(1.0) and f["ALA"] == pytest.approx(1.0)


def test_shrinkage_pulls_small_types_towards_one():
    r, t, _ = _two_types(seed=3)
    few = np.flatnonzero(t == "GLY")[:20]
    keep = np.ones(r.size, bool)
    keep[np.setdiff1d(np.flatnonzero(t == "GLY"), few)] = False
    r, t = r[keep], t[keep]
    raw = residue_factors(r, t, 0.0, TAIL)
    shrunk = residue_factors(r, t, 100.0, TAIL)
    assert abs(np.log(shrunk["GLY"] / shrunk["ALA"])) < abs(np.log(raw["GLY"] / raw["ALA"]))


def test_cross_validation_finds_real_and_absent_differences():
    # types that differ: a finite n0 beats one sigma on held-out groups
    r, t, g = _two_types(seed=4)
    n0, nll = choose_residue_shrinkage(r, t, g, [0, 30, 100, 300], TAIL)
    assert np.isfinite(n0) and nll[n0] < nll[float("inf")]
    # identical types: per-type factors only add noise, the likelihood does not improve by
    # more than sampling noise, and whatever n0 is chosen the factors stay within sampling error
    # of each other (3000 draws per type: about 1.3 % on an RMS)
    r, t, g = _two_types(seed=5, s_gly=1.0)
    n0, nll = choose_residue_shrinkage(r, t, g, [0, 30, 100, 300], TAIL)
    assert nll[float("inf")] - min(nll.values()) < 0.002
    f = residue_factors(r, t, n0, TAIL)
    assert f["GLY"] / f["ALA"] == pytest.approx(1.0, abs=0.04)


def test_atom_sigma_multiplies_class_sigma_by_residue_factor():
    params = {"expected_error": {"values": {"CA": 1.5, "HA": 0.36},
                                 "by_residue": {"values": {"CA": {"ALA": 0.7, "GLY": 1.1}}}}}
    f = residue_error_factors(params)
    sig = atom_sigma(np.array(["CA", "CA", "CA", "HA"]), np.array(["ALA", "gly", "MSE", "GLY"]),
                     {"CA": 1.5, "HA": 0.36}, f)
    np.testing.assert_allclose(sig, [1.05, 1.65, 1.5, 0.36])
    assert residue_error_factors({"expected_error": {"values": {"CA": 1.0}}}) == {}


def test_shipped_parameters_carry_factors_chosen_by_held_out_likelihood():
    import json
    from pathlib import Path

    p = json.loads((Path(__file__).resolve().parents[1] / "shiftcheck/data/params_default.json").read_text())
    br = p["expected_error"]["by_residue"]
    for nuc, per in br["values"].items():
        nll = br["heldout_nll"][nuc]
        assert nll["by_residue"] <= nll["one_sigma"]       # kept only where it helped
        assert all(0.3 < v < 3.0 for v in per.values())


def test_heldout_sigma_ignores_the_residuals_of_its_own_group():
    # the sigma predicted for group 0 must not see group 0: scaling its residuals changes
    # nothing there, and changes the other groups' sigmas (which do use group 0)
    from shiftcheck.predict.crossval import heldout_sigma

    r, t, g = _two_types(seed=6)
    a = heldout_sigma(r, t, g, 30.0, TAIL)
    r2 = r.copy()
    r2[g == 0] *= 5.0
    b = heldout_sigma(r2, t, g, 30.0, TAIL)
    np.testing.assert_allclose(a[g == 0], b[g == 0])
    assert np.all(b[g != 0] > a[g != 0])
