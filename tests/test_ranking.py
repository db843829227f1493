"""Paired bootstrap ranking: vectorised replicate scores equal an explicit resampling loop."""
from __future__ import annotations

import numpy as np

from shiftcheck.score.metrics import huber_q
from shiftcheck.score.ranking import per_residue_sums, rank_models
from shiftcheck.score.referencing import residue_weights


def _data(seed=0):
    rng = np.random.default_rng(seed)
    n_res = 40
    residue = np.repeat(np.arange(n_res), 3)
    z = rng.normal(0, 1, (4, residue.size))
    z[1] *= 1.02           # nearly the same as model 0
    z[2] *= 2.0            # clearly worse
    z[3] = z[0]            # identical to model 0
    return z, residue, n_res


def test_vectorised_bootstrap_equals_explicit_loop():
    z, residue, n_res = _data()
    q = huber_q(z, 2.0)
    S, c = per_residue_sums(q, residue, n_res)
    rng = np.random.default_rng(5)
    W = residue_weights(n_res, 50, rng)
    rk = rank_models(S, c, W)
    # explicit loop (independent computation): draw residues, collect their atoms, RMS of q
    rng = np.random.default_rng(5)
    draws = rng.integers(0, n_res, size=(50, n_res))
    boot = []
    for d in draws:
        atoms = np.concatenate([np.flatnonzero(residue == r) for r in d])
        boot.append(np.sqrt(q[:, atoms].mean(axis=1)))
    boot = np.array(boot)
    np.testing.assert_allclose(rk.low, np.percentile(boot, 2.5, axis=0))
    np.testing.assert_allclose(rk.high, np.percentile(boot, 97.5, axis=0))
    np.testing.assert_allclose(rk.score, np.sqrt(q.mean(axis=1)))


def test_groups_and_probabilities():
    # hand-built cases with known answers (common practice, no source): identical residuals
    # cannot be ranked apart, doubled residuals are clearly worse; p_best is a probability
    # distribution over models; the percentile interval holds the full-data score.
    z, residue, n_res = _data()
    S, c = per_residue_sums(huber_q(z, 2.0), residue, n_res)
    rk = rank_models(S, c, residue_weights(n_res, 500, np.random.default_rng(1)))
    assert abs(rk.p_best.sum() - 1.0) < 1e-9
    assert rk.best_group[0] and rk.best_group[3]      # identical models cannot be told apart
    assert not rk.best_group[2]                       # twice the residuals: clearly worse
    assert rk.p_best[2] == 0.0
    assert rk.rank[2] == 4
    assert sorted(rk.rank.tolist()) == [1, 2, 3, 4]
    assert np.all(rk.low <= rk.score + 1e-12) and np.all(rk.score <= rk.high + 1e-12)
