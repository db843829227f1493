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


def rank_models(S: np.ndarray, counts: np.ndarray, W: np.ndarray, p_group: float = 0.05) -> Ranking:
    """Rank entries from per-residue loss sums with a paired bootstrap.

    Parameters
    ----------
    S : (n_entries, n_res) per-residue sums of the robust loss
    counts : (n_res,) atoms per residue, or (n_entries, n_res) when entries lack some atoms
        (each entry is then scored on the atoms it has)
    W : (n_boot, n_res) bootstrap counts (:func:`shiftcheck.score.referencing.residue_weights`)
    p_group : float
        Share of replicates in which a model must beat (or tie) the best to join its group.
    """
    n_entries = S.shape[0]
    with np.errstate(invalid="ignore", divide="ignore"):
        if counts.ndim == 1:
            score = np.sqrt(S.sum(axis=1) / counts.sum())
            boot = np.sqrt((W @ S.T) / (W @ counts)[:, None])      # (n_boot, n_entries)
        else:
            score = np.sqrt(S.sum(axis=1) / counts.sum(axis=1))
            boot = np.sqrt((W @ S.T) / (W @ counts.T))
    boot = boot[np.all(np.isfinite(boot), axis=1)] if boot.size else boot
    # scores equal to 10 decimals are ties, broken by input order: the last bits of a prediction
    # may depend on the model's position in its batch (BLAS), the order must not
    order = np.lexsort((np.arange(n_entries), np.round(score, 10)))
    rank = np.empty(n_entries, dtype=int)
    rank[order] = np.arange(1, n_entries + 1)
    if boot.shape[0] == 0 or n_entries == 0:
        nan = np.full(n_entries, np.nan)
        best = rank == 1
        return Ranking(score, nan, nan.copy(), best.astype(float), best.astype(float), best, rank,
                       order, 0)
    low, high = np.percentile(boot, [2.5, 97.5], axis=0)
    mins = boot.min(axis=1, keepdims=True)
    is_min = np.isclose(boot, mins, rtol=0, atol=1e-12)
    p_best = (is_min / is_min.sum(axis=1, keepdims=True)).mean(axis=0)
    b = order[0]
    p_beats = (boot <= boot[:, [b]] + 1e-12).mean(axis=0)
    group = p_beats >= p_group
    group[b] = True
    return Ranking(score, low, high, p_best, p_beats, group, rank, order, int(boot.shape[0]))
