"""Ranking with confidence: a paired bootstrap over residues.

Each replicate draws residues with replacement (the same draw for every model: "paired"), so
differences between models are judged on the same data. With per-residue sums of the robust
normalised loss S (n_models, n_res) and atom counts c (n_res), one matrix product gives all
replicate scores: score_b = sqrt((W @ S.T) / (W @ c)) for the counts matrix W (n_boot, n_res).

Reported per model: score interval (2.5-97.5 % of replicates), p_best = share of replicates in
which it has the lowest score (ties shared), and membership of the best group: the best model
(lowest full-data score) and every model that scores at or below it in at least ``p_group``
(5 %) of replicates, i.e. models that the data cannot tell apart from the best.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Ranking", "rank_models", "per_residue_sums"]


@dataclass
class Ranking:
    """Arrays indexed like the input entries; ``order`` lists entry indices best first."""

    score: np.ndarray
    low: np.ndarray
    high: np.ndarray
    p_best: np.ndarray
    p_beats_best: np.ndarray
    best_group: np.ndarray
    rank: np.ndarray
    order: np.ndarray
    n_boot: int


def per_residue_sums(q: np.ndarray, residue: np.ndarray, n_res: int) -> tuple[np.ndarray, np.ndarray]:
    """Sum q (n_entries, n) over atoms of each residue -> (n_entries, n_res), and counts (n_res,).

    Summed row by row in atom order (``np.add.reduceat``), so a row's sums do not depend on which
    other rows are summed with it (streamed blocks give the same numbers as one array).
    """
    q = np.asarray(q, dtype=float)
    residue = np.asarray(residue, dtype=np.int64)
    out = np.zeros((q.shape[0], n_res))
    counts = np.bincount(residue, minlength=n_res).astype(float) if residue.size else np.zeros(n_res)
    if residue.size and q.shape[0]:
        order = np.argsort(residue, kind="stable")
        r = residue[order]
        starts = np.flatnonzero(np.r_[True, r[1:] != r[:-1]])
        out[:, r[starts]] = np.add.reduceat(q[:, order], starts, axis=1)
    return out, counts


def rank_models(S: np.ndarray, counts: np.ndarray, W: np.ndarray, p_group: float = 0.05,
                block: int = 256) -> Ranking:
    """Rank entries from per-residue loss sums with a paired bootstrap.

    Parameters
    ----------
    S : (n_entries, n_res) per-residue sums of the robust loss
    counts : (n_res,) atoms per residue, or (n_entries, n_res) when entries lack some atoms
        (each entry is then scored on the atoms it has)
    W : (n_boot, n_res) bootstrap counts (:func:`shiftcheck.score.referencing.residue_weights`)
    p_group : float
        Share of replicates in which a model must beat (or tie) the best to join its group.
    block : int
        Entries whose replicate scores are computed together (memory only: every statistic is
        per entry, the minimum over entries per replicate is exact).
    """
    n_entries = S.shape[0]
    with np.errstate(invalid="ignore", divide="ignore"):
        if counts.ndim == 1:
            score = np.sqrt(S.sum(axis=1) / counts.sum())
            wc = W @ counts
        else:
            score = np.sqrt(S.sum(axis=1) / counts.sum(axis=1))

    def boot_block(a: int, b: int) -> np.ndarray:
        """Replicate scores (n_boot, b - a) of entries a:b."""
        with np.errstate(invalid="ignore", divide="ignore"):
            if counts.ndim == 1:
                return np.sqrt((W @ S[a:b].T) / wc[:, None])
            return np.sqrt((W @ S[a:b].T) / (W @ counts[a:b].T))

    # scores equal to 10 decimals are ties, broken by input order: the last bits of a prediction
    # may depend on the model's position in its batch (BLAS), the order must not
    order = np.lexsort((np.arange(n_entries), np.round(score, 10)))
    rank = np.empty(n_entries, dtype=int)
    rank[order] = np.arange(1, n_entries + 1)
    # The replicate scores (n_boot, n_entries) are computed in fixed blocks of entries, three
    # passes, so only one block is held (at 10,000 models the whole matrix would be 80 MB, its
    # temporaries several times that); every per-entry statistic is a column statistic.
    blocks = [(a, min(a + block, n_entries)) for a in range(0, n_entries, block)]
    n_b = W.shape[0]
    finite = np.ones(n_b, dtype=bool)
    mins = np.full(n_b, np.inf)
    b = int(order[0]) if n_entries else 0
    best_col = None
    for a, z in blocks:                                   # pass 1: usable replicates, minima
        B = boot_block(a, z)
        finite &= np.all(np.isfinite(B), axis=1)
        with np.errstate(invalid="ignore"):
            mins = np.fmin(mins, B.min(axis=1)) if B.shape[1] else mins
        if a <= b < z:
            best_col = B[:, b - a].copy()
    if not finite.any() or n_entries == 0:
        nan = np.full(n_entries, np.nan)
        best = rank == 1
        return Ranking(score, nan, nan.copy(), best.astype(float), best.astype(float), best, rank,
                       order, 0)
    mins, best_col = mins[finite][:, None], best_col[finite][:, None]
    low, high = np.empty(n_entries), np.empty(n_entries)
    p_beats = np.empty(n_entries)
    n_min = np.zeros(mins.shape[0])
    for a, z in blocks:                                   # pass 2: intervals, ties at the minimum
        B = boot_block(a, z)[finite]
        low[a:z], high[a:z] = np.percentile(B, [2.5, 97.5], axis=0)
        n_min += np.isclose(B, mins, rtol=0, atol=1e-12).sum(axis=1)
        p_beats[a:z] = (B <= best_col + 1e-12).mean(axis=0)
    p_best = np.empty(n_entries)
    for a, z in blocks:                                   # pass 3: shares of the replicates' best
        B = boot_block(a, z)[finite]
        p_best[a:z] = (np.isclose(B, mins, rtol=0, atol=1e-12) / n_min[:, None]).mean(axis=0)
    group = p_beats >= p_group
    group[b] = True
    return Ranking(score, low, high, p_best, p_beats, group, rank, order, int(finite.sum()))
