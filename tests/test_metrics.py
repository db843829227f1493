"""Per-nucleus metrics and the robust loss, checked against scipy/numpy reference functions."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import special, stats

from shiftcheck.score.metrics import combined_score, huber_q, per_nucleus_metrics


def test_huber_q_is_twice_scipy_huber():
    # reference: scipy.special.huber(delta, r) = r^2/2 (|r| <= delta), delta(|r| - delta/2) otherwise
    z = np.linspace(-8, 8, 161)
    for h in (1.345, 2.0, 3.0):
        np.testing.assert_allclose(huber_q(z, h), 2 * special.huber(h, z), rtol=1e-12, atol=1e-12)


def test_per_nucleus_metrics_match_numpy_and_scipy():
    rng = np.random.default_rng(0)
    n = 60
    nucleus = np.array(["CA"] * 30 + ["H"] * 20 + ["N"] * 10, dtype=object)
    meas = rng.normal(55, 3, n)
    pred = meas[None, :] + rng.normal(0, 1, (4, n))
    m = per_nucleus_metrics(meas, pred, nucleus)
    for c in ("CA", "H", "N"):
        s = nucleus == c
        for e in range(4):
            r = meas[s] - pred[e, s]
            assert m[c]["rmsd"][e] == pytest.approx(np.sqrt(np.mean(r ** 2)))
            assert m[c]["mad"][e] == pytest.approx(np.mean(np.abs(r)))
            assert m[c]["r"][e] == pytest.approx(stats.pearsonr(meas[s], pred[e, s])[0])
        assert m[c]["n"] == s.sum()
    assert m["CB"]["n"] == 0 and np.all(np.isnan(m["CB"]["rmsd"]))


def test_combined_score_is_rms_for_small_residuals_and_robust_for_wild_ones():
    z = np.array([[0.5, -1.0, 1.5, 0.2]])
    # all |z| <= h: the score is the plain RMS of z
    assert combined_score(huber_q(z, 2.0))[0] == pytest.approx(np.sqrt(np.mean(z ** 2)))
    # one wild value: the robust score grows linearly, not quadratically, with it
    wild = np.array([[0.5, -1.0, 1.5, 50.0]])
    robust = combined_score(huber_q(wild, 2.0))[0]
    plain = np.sqrt(np.mean(wild ** 2))
    assert robust < 0.5 * plain
    # by hand (Huber 1964 loss, doubled so that q = z^2 in the quadratic zone):
    # q = 0.25, 1, 2.25 and 2*2*(50 - 1) = 196 -> sqrt(199.5 / 4)
    assert robust == pytest.approx(np.sqrt(199.5 / 4), rel=1e-12)
    # an empty comparison has no score (common practice, no source)
    assert np.isnan(combined_score(np.zeros((2, 0)))).all()
