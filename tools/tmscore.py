"""TM-score of a model against a native with the same residue correspondence (Zhang & Skolnick 2004,
Proteins 57:702).

    TM = max over rigid superpositions of (1 / L) * sum_i 1 / (1 + (d_i / d0)^2),
    d0(L) = 1.24 * (L - 15)^(1/3) - 1.8   (Å; L = native length),

with d0 not below 0.5 Å for short chains (as in the authors' program, from memory). The maximum
is searched as the paper describes: superpose on seed fragments (lengths L, L/2, L/4, ... down to
4 residues, every start position), then repeatedly re-superpose on the residues closer than
d_search = d0 clamped to [4.5, 8] Å (from memory of the authors' program), keeping the best TM
seen. All seeds are iterated at once (weighted Kabsch, Kabsch 1976 Acta Cryst. A32:922, batched
over seeds).

GDT_TS (global distance test, Zemla 2003, Nucleic Acids Res. 31:3370) is computed with the same
seeds, windows of 3-8 residues and ``n_random`` random residue triples: (P1 + P2 + P4 + P8) / 4, where Pd is the largest fraction of the
native's residues that one rigid superposition brings within d Å; for each cutoff, largest first,
every seed is re-superposed on its residues within d until the set no longer changes, and the sets
found at one cutoff also seed the next smaller one. A seed search finds a lower bound of each Pd
(as any heuristic search does; the paper's LGA program searches similarly, from memory).
"""
from __future__ import annotations

import numpy as np

__all__ = ["d0", "tm_score", "tm_of_superposition", "gdt_ts", "lddt_ca"]


def d0(L: int) -> float:
    """Zhang & Skolnick 2004 distance scale in Å (at least 0.5)."""
    return max(0.5, 1.24 * np.cbrt(max(L - 15, 0)) - 1.8) if L > 15 else 0.5


def tm_of_superposition(P: np.ndarray, Q: np.ndarray, R: np.ndarray, t: np.ndarray) -> np.ndarray:
    """TM of model P (L, 3) moved by rotation R (..., 3, 3) and shift t (..., 3) onto Q (L, 3)."""
    moved = np.einsum("...ij,lj->...li", R, P) + t[..., None, :]
    dist = np.linalg.norm(moved - Q, axis=-1)
    return np.mean(1.0 / (1.0 + (dist / d0(len(Q))) ** 2), axis=-1)


def _kabsch(P: np.ndarray, Q: np.ndarray, W: np.ndarray):
    """Rotations (S, 3, 3) and shifts (S, 3) superposing P onto Q on the residues of each W row."""
    n = W.sum(axis=1, keepdims=True)
    pc, qc = (W @ P) / n, (W @ Q) / n
    # H = sum_l W_sl (P_l - pc)(Q_l - qc)^T = W @ (P_l Q_l^T) - n pc qc^T: one matrix product
    H = (W @ np.einsum("li,lj->lij", P, Q).reshape(len(P), 9)).reshape(-1, 3, 3) \
        - n[:, :, None] * pc[:, :, None] * qc[:, None, :]
    U, _, Vt = np.linalg.svd(H)
    d = np.sign(np.linalg.det(np.einsum("sji,skj->sik", Vt, U)))
    d[d == 0] = 1.0
    D = np.zeros((len(W), 3, 3))
    D[:, 0, 0] = D[:, 1, 1] = 1.0
    D[:, 2, 2] = d
    R = np.einsum("sji,sjk,slk->sil", Vt, D, U)
    t = qc - np.einsum("sij,sj->si", R, pc)
    return R, t


def _seeds(L: int) -> np.ndarray:
    """Seed windows (rows of 0/1 weights over L residues): lengths L, L/2, L/4, ... down to 4,
    every start position."""
    seeds = []
    ln = L
    while ln >= 4 or not seeds:
        ln = max(ln, 3)
        for s in range(0, L - ln + 1):
            w = np.zeros(L)
            w[s:s + ln] = 1.0
            seeds.append(w)
        if ln <= 4:
            break
        ln //= 2
    return np.array(seeds)


def _windows(L: int, lengths) -> np.ndarray:
    """Extra seed windows of the given short lengths (every start position) for GDT."""
    rows = []
    for ln in lengths:
        if 3 <= ln <= L:
            for s in range(0, L - ln + 1):
                w = np.zeros(L)
                w[s:s + ln] = 1.0
                rows.append(w)
    return np.array(rows).reshape(-1, L)


def _unique_rows(W: np.ndarray) -> np.ndarray:
    """Distinct rows of a 0/1 matrix (first occurrence order not kept), via packed bits."""
    bits = np.ascontiguousarray(np.packbits(W > 0.5, axis=1))
    _, first = np.unique(bits.view(np.dtype((np.void, bits.shape[1]))).ravel(), return_index=True)
    return W[np.sort(first)]


def _moved(R: np.ndarray, t: np.ndarray, P: np.ndarray) -> np.ndarray:
    """P (L, 3) moved by every rotation R (S, 3, 3) and shift t (S, 3): (S, L, 3)."""
    return np.matmul(P[None], np.transpose(R, (0, 2, 1))) + t[:, None, :]


def _closest_three(dist: np.ndarray, newW: np.ndarray) -> np.ndarray:
    """Rows of ``newW`` with fewer than 3 residues selected get the 3 closest residues instead."""
    few = newW.sum(axis=1) < 3
    if few.any():
        idx = np.argsort(dist[few], axis=1)[:, :3]
        sub = np.zeros((few.sum(), newW.shape[1]))
        np.put_along_axis(sub, idx, 1.0, axis=1)
        newW[few] = sub
    return newW


def tm_score(model: np.ndarray, native: np.ndarray, n_iter: int = 20, length: int | None = None) -> float:
    """TM-score of ``model`` (L, 3) CA coordinates against ``native`` (L, 3), same residue order.

    ``length``: the native's full length when only L of its residues have a model counterpart
    (a model covering part of the chain); d0 and the 1/L normalisation then use ``length``, so
    the residues the model lacks count zero, as in the paper's definition (TM normalised by the
    native's length). Default: L.
    """
    P, Q = np.asarray(model, float), np.asarray(native, float)
    L = len(Q)
    if L < 3:
        raise ValueError("TM-score needs at least 3 residues")
    norm = L if length is None else int(length)
    if norm < L:
        raise ValueError("length must be at least the number of aligned residues")
    dz = d0(norm)
    dsearch = float(np.clip(dz, 4.5, 8.0))
    W = _seeds(L)
    best = 0.0
    for _ in range(n_iter):
        R, t = _kabsch(P, Q, W)
        moved = np.einsum("sij,lj->sli", R, P) + t[:, None, :]
        dist = np.linalg.norm(moved - Q, axis=-1)
        best = max(best, float(np.max(np.sum(1.0 / (1.0 + (dist / dz) ** 2), axis=1))) / norm)
        newW = _closest_three(dist, (dist < dsearch).astype(float))
        if np.array_equal(newW, W):
            break
        W = np.unique(newW, axis=0)
    return best


def gdt_ts(model: np.ndarray, native: np.ndarray, cutoffs=(1.0, 2.0, 4.0, 8.0), n_iter: int = 20,
           length: int | None = None, n_random: int = 400) -> float:
    """GDT_TS of ``model`` (L, 3) CA coordinates against ``native`` (L, 3), same residue order
    (Zemla 2003): the mean over ``cutoffs`` of the largest fraction of residues within the cutoff
    after one rigid superposition. ``length``: the native's full length when the model covers only
    L of its residues (the missing ones count as not superposed). Rows of NaN are not allowed."""
    P, Q = np.asarray(model, float), np.asarray(native, float)
    L = len(Q)
    if L < 3:
        raise ValueError("GDT needs at least 3 residues")
    norm = L if length is None else int(length)
    if norm < L:
        raise ValueError("length must be at least the number of aligned residues")
    trip = np.zeros((n_random, L))      # random residue triples (fixed seed: reproducible)
    idx = np.random.default_rng(0).random((n_random, L)).argsort(axis=1)[:, :3]
    np.put_along_axis(trip, idx, 1.0, axis=1)
    W0 = _unique_rows(np.vstack([_seeds(L), _windows(L, (3, 4, 5, 6, 7, 8)), trip]))
    starts, frac = [W0], []
    for cut in sorted(cutoffs, reverse=True):
        W, best = _unique_rows(np.vstack(starts)), 0
        for _ in range(n_iter):
            R, t = _kabsch(P, Q, W)
            dist = np.linalg.norm(_moved(R, t, P) - Q, axis=-1)
            within = (dist < cut).astype(float)
            best = max(best, int(within.sum(axis=1).max()))
            newW = _closest_three(dist, within)
            if np.array_equal(newW, W):
                break
            W = _unique_rows(newW)
        starts.append(W)                  # the sets found at this cutoff seed the next smaller one
        frac.append(best / norm)
    return float(np.mean(frac))


def lddt_ca(model: np.ndarray, native: np.ndarray, radius: float = 15.0,
            thresholds: tuple[float, ...] = (0.5, 1.0, 2.0, 4.0)) -> float:
    """CA-only lDDT (local distance difference test, Mariani et al. 2013, Bioinformatics 29:2722):
    over all residue pairs closer than ``radius`` (15 Å) in the native, the fraction whose model
    distance differs from the native one by less than each threshold (0.5, 1, 2, 4 Å), averaged
    over the thresholds. Superposition-free, so it measures local agreement. Rows of ``model``
    that are NaN (residues the model lacks) count as not preserved."""
    P, Q = np.asarray(model, float), np.asarray(native, float)
    dq = np.linalg.norm(Q[:, None] - Q[None], axis=-1)
    dp = np.linalg.norm(P[:, None] - P[None], axis=-1)
    n = len(Q)
    pair = (dq < radius) & ~np.eye(n, dtype=bool) & np.isfinite(dq)
    if not pair.any():
        raise ValueError("no residue pairs within the inclusion radius")
    diff = np.abs(dp - dq)[pair]
    diff = np.where(np.isfinite(diff), diff, np.inf)
    return float(np.mean([(diff < t).mean() for t in thresholds]))
