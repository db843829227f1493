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
"""
from __future__ import annotations

import numpy as np

__all__ = ["d0", "tm_score", "tm_of_superposition"]


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
    w = W / W.sum(axis=1, keepdims=True)
    pc, qc = w @ P, w @ Q
    H = np.einsum("sl,sli,slj->sij", W, P[None] - pc[:, None], Q[None] - qc[:, None])
    U, _, Vt = np.linalg.svd(H)
    d = np.sign(np.linalg.det(np.einsum("sji,skj->sik", Vt, U)))
    d[d == 0] = 1.0
    D = np.zeros((len(W), 3, 3))
    D[:, 0, 0] = D[:, 1, 1] = 1.0
    D[:, 2, 2] = d
    R = np.einsum("sji,sjk,slk->sil", Vt, D, U)
    t = qc - np.einsum("sij,sj->si", R, pc)
    return R, t


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
    W = np.array(seeds)
    best = 0.0
    for _ in range(n_iter):
        R, t = _kabsch(P, Q, W)
        moved = np.einsum("sij,lj->sli", R, P) + t[:, None, :]
        dist = np.linalg.norm(moved - Q, axis=-1)
        best = max(best, float(np.max(np.sum(1.0 / (1.0 + (dist / dz) ** 2), axis=1))) / norm)
        newW = (dist < dsearch).astype(float)
        few = newW.sum(axis=1) < 3                      # keep at least the 3 closest residues
        if few.any():
            idx = np.argsort(dist[few], axis=1)[:, :3]
            sub = np.zeros((few.sum(), L))
            np.put_along_axis(sub, idx, 1.0, axis=1)
            newW[few] = sub
        if np.array_equal(newW, W):
            break
        W = np.unique(newW, axis=0)
    return best


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
