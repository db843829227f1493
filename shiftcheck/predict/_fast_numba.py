"""Compiled kernels of :mod:`shiftcheck.predict._fast` (imported only when numba is installed).

Module-level functions so that numba's on-disk cache (``cache=True``) holds them: a process
compiles them once per machine, later processes load the machine code.
"""
from __future__ import annotations

import numba
import numpy as np

__all__ = ["contact_density", "axial_dipole"]


@numba.njit(cache=True, nogil=True)
def grid(pts, cutoff):   # pragma: no cover (compiled)
    """Cell list of the finite points of one model: cells >= cutoff (grid capped at a few
    cells per point); points sorted by cell, contiguous. Returns sorted points, their
    original indices, cell starts, lower corner, cell size and grid shape."""
    n = pts.shape[0]
    lo = np.full(3, np.inf)
    hi = np.full(3, -np.inf)
    cid = np.full(n, -1, np.int64)
    n_ok = 0
    for j in range(n):
        if np.isfinite(pts[j, 0]) and np.isfinite(pts[j, 1]) and np.isfinite(pts[j, 2]):
            n_ok += 1
            for d in range(3):
                lo[d] = min(lo[d], pts[j, d])
                hi[d] = max(hi[d], pts[j, d])
    if n_ok == 0:
        lo[:] = 0.0
    cell = max(cutoff, 1e-6)
    while True:
        nx = int((hi[0] - lo[0]) / cell) + 1 if n_ok else 1
        ny = int((hi[1] - lo[1]) / cell) + 1 if n_ok else 1
        nz = int((hi[2] - lo[2]) / cell) + 1 if n_ok else 1
        if nx * ny * nz <= 8 * n_ok + 64:
            break
        cell *= 1.5
    start = np.zeros(nx * ny * nz + 1, np.int64)
    for j in range(n):
        if np.isfinite(pts[j, 0]) and np.isfinite(pts[j, 1]) and np.isfinite(pts[j, 2]):
            c = ((int((pts[j, 0] - lo[0]) / cell) * ny + int((pts[j, 1] - lo[1]) / cell)) * nz
                 + int((pts[j, 2] - lo[2]) / cell))
            cid[j] = c
            start[c + 1] += 1
    for c in range(nx * ny * nz):
        start[c + 1] += start[c]
    fill = start[:-1].copy()
    spts = np.empty((n_ok, 3))
    sidx = np.empty(n_ok, np.int64)
    for j in range(n):
        c = cid[j]
        if c >= 0:
            q = fill[c]
            spts[q, 0], spts[q, 1], spts[q, 2] = pts[j, 0], pts[j, 1], pts[j, 2]
            sidx[q] = j
            fill[c] += 1
    shape = np.array([nx, ny, nz])
    return spts, sidx, start, lo, cell, shape


@numba.njit(cache=True, nogil=True)
def near_cells(px, py, pz, lo, cell, shape, cells):   # pragma: no cover (compiled)
    """Fill ``cells`` with the ids of the cells within one cell of the point (in (x, y, z)
    order); return their number, 0 for a point with a NaN coordinate."""
    if not (np.isfinite(px) and np.isfinite(py) and np.isfinite(pz)):
        return 0
    r = np.empty((3, 2), np.int64)
    for d, p in enumerate((px, py, pz)):
        g = int(np.floor(min(max((p - lo[d]) / cell, -2.0), shape[d] + 1.0)))
        r[d, 0], r[d, 1] = max(g - 1, 0), min(g + 1, shape[d] - 1) + 1
    n = 0
    for a in range(r[0, 0], r[0, 1]):
        for b in range(r[1, 0], r[1, 1]):
            for e in range(r[2, 0], r[2, 1]):
                cells[n] = (a * shape[1] + b) * shape[2] + e
                n += 1
    return n


@numba.njit(cache=True, nogil=True)
def contact_density(tx, t_res, hx, h_res, radii, width, exclude, cutoff):   # pragma: no cover
    n_models, n_t = tx.shape[0], tx.shape[1]
    n_r = radii.shape[0]
    out = np.zeros((n_r, n_models, n_t))
    c2 = cutoff * cutoff
    half_pi = 0.5 * np.pi
    cells = np.empty(27, np.int64)
    for m in range(n_models):
        spts, sidx, start, lo, cell, shape = grid(hx[m], cutoff)
        if spts.shape[0] == 0:
            continue
        for i in range(n_t):
            px, py, pz = tx[m, i, 0], tx[m, i, 1], tx[m, i, 2]
            ti = t_res[i]
            for ci in range(near_cells(px, py, pz, lo, cell, shape, cells)):
                c = cells[ci]
                for q in range(start[c], start[c + 1]):
                    dx = spts[q, 0] - px
                    dy = spts[q, 1] - py
                    dz = spts[q, 2] - pz
                    d2 = dx * dx + dy * dy + dz * dz
                    if d2 > c2 or abs(h_res[sidx[q]] - ti) <= exclude:
                        continue
                    r = np.sqrt(d2)
                    for k in range(n_r):
                        rad = radii[k]
                        if width <= 0.0:
                            if r <= rad:
                                out[k, m, i] += 1.0
                        elif r <= rad - width:
                            out[k, m, i] += 1.0
                        elif r < rad + width:
                            s = np.cos(half_pi * ((r - rad + width) / (2.0 * width)))
                            out[k, m, i] += s * s
    return out


@numba.njit(cache=True, nogil=True)
def axial_dipole(tx, t_res, origin, axes, g_res, cutoff):   # pragma: no cover (compiled)
    n_models, n_t = tx.shape[0], tx.shape[1]
    n_ax = axes.shape[0]
    out = np.zeros((n_ax, n_models, n_t))
    c2 = cutoff * cutoff
    cells = np.empty(27, np.int64)
    for m in range(n_models):
        spts, sidx, start, lo, cell, shape = grid(origin[m], cutoff)
        if spts.shape[0] == 0:
            continue
        for i in range(n_t):
            px, py, pz = tx[m, i, 0], tx[m, i, 1], tx[m, i, 2]
            ti = t_res[i]
            for ci in range(near_cells(px, py, pz, lo, cell, shape, cells)):
                c = cells[ci]
                for q in range(start[c], start[c + 1]):
                    j = sidx[q]
                    if g_res[j] == ti or g_res[j] == ti - 1:
                        continue
                    vx = px - spts[q, 0]
                    vy = py - spts[q, 1]
                    vz = pz - spts[q, 2]
                    r2 = vx * vx + vy * vy + vz * vz
                    if r2 > c2:
                        continue
                    for k in range(n_ax):
                        z = vx * axes[k, m, j, 0] + vy * axes[k, m, j, 1] + vz * axes[k, m, j, 2]
                        out[k, m, i] += (1.0 - 3.0 * z * z / r2) / (r2 * np.sqrt(r2))
    return out


@numba.njit(cache=True, nogil=True)
def hm_ring_sums(tx, t_res, centre, ring_res, valid, area0, edge, xyz, cutoff):   # pragma: no cover
    """Haigh–Mallion factors summed over the rings within ``cutoff`` of each target (rings of
    the target's own residue left out), (n_models, n_targets): the arithmetic of
    ``ringcurrent._hm_kernel`` pair by pair, rings in index order."""
    n_models, n_t = tx.shape[0], tx.shape[1]
    n_r, n_k = area0.shape[1], area0.shape[2]
    out = np.zeros((n_models, n_t))
    c2 = cutoff * cutoff
    inv3 = np.empty(n_k)
    for m in range(n_models):
        for i in range(n_t):
            px, py, pz = tx[m, i, 0], tx[m, i, 1], tx[m, i, 2]
            acc = 0.0
            for j in range(n_r):
                if not valid[m, j] or ring_res[j] == t_res[i]:
                    continue
                vx = px - centre[m, j, 0]
                vy = py - centre[m, j, 1]
                vz = pz - centre[m, j, 2]
                if not (vx * vx + vy * vy + vz * vz <= c2):
                    continue
                for k in range(n_k):
                    dx = xyz[m, j, k, 0] - px
                    dy = xyz[m, j, k, 1] - py
                    dz = xyz[m, j, k, 2] - pz
                    r = np.sqrt(dx * dx + dy * dy + dz * dz)
                    inv3[k] = 1.0 / r ** 3.0
                g = 0.0
                for k in range(n_k):
                    area = area0[m, j, k] + (edge[m, j, k, 0] * vx + edge[m, j, k, 1] * vy + edge[m, j, k, 2] * vz)
                    g += area * (inv3[k] + inv3[(k + 1) % n_k])
                acc += -g
            out[m, i] = acc
    return out
