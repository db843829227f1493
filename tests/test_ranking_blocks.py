"""The bootstrap ranking computed over blocks of entries (score/ranking.py) equals the
whole-matrix definition of its module docstring (score_b = sqrt((W @ S.T) / (W @ c)); intervals
= 2.5-97.5 % percentiles of the replicates; p_best = share of replicates with the lowest score,
ties shared; best group = p(score <= best's) >= p_group). Common practice, no source: the
reference is the formula written out with numpy on the whole matrix."""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.score.ranking import rank_models


def _whole(S, counts, W, p_group=0.05):
    with np.errstate(invalid="ignore", divide="ignore"):
        boot = np.sqrt((W @ S.T) / ((W @ counts)[:, None] if counts.ndim == 1 else (W @ counts.T)))
    boot = boot[np.all(np.isfinite(boot), axis=1)]
    score = np.sqrt(S.sum(axis=1) / (counts.sum() if counts.ndim == 1 else counts.sum(axis=1)))
    best = int(np.lexsort((np.arange(len(score)), np.round(score, 10)))[0])
    is_min = np.isclose(boot, boot.min(axis=1, keepdims=True), rtol=0, atol=1e-12)
    p_best = (is_min / is_min.sum(axis=1, keepdims=True)).mean(axis=0)
    beats = (boot <= boot[:, [best]] + 1e-12).mean(axis=0)
    low, high = np.percentile(boot, [2.5, 97.5], axis=0)
    group = beats >= p_group
    group[best] = True
    return low, high, p_best, group, boot.shape[0]


@pytest.mark.parametrize("n_entries,per_entry_counts", [(1, False), (9, False), (300, True), (600, False)])
@pytest.mark.parametrize("block", [1, 7, 256])
def test_blocked_ranking_equals_whole_matrix(n_entries, per_entry_counts, block):
    rng = np.random.default_rng(n_entries)
    S = rng.random((n_entries, 25))
    S[rng.random(n_entries) < 0.3] = S[0]                 # exact copies: tied replicates
    W = rng.integers(0, 3, (150, 25)).astype(float)
    W[3] = 0.0                                            # a replicate without data: dropped
    c = rng.integers(1, 4, 25).astype(float)
    counts = np.tile(c, (n_entries, 1)) if per_entry_counts else c
    got = rank_models(S, counts, W, block=block)
    low, high, p_best, group, n_boot = _whole(S, counts, W)
    assert got.n_boot == n_boot == 149
    np.testing.assert_allclose(got.low, low, rtol=1e-13)
    np.testing.assert_allclose(got.high, high, rtol=1e-13)
    np.testing.assert_allclose(got.p_best, p_best, rtol=1e-13, atol=1e-15)
    assert np.array_equal(got.best_group, group)
    assert got.p_best.sum() == pytest.approx(1.0)
