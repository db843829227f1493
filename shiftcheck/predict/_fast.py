"""Optional compiled kernels (numba) for the through-space terms; the numpy code is the reference.

With numba installed (``pip install shiftcheck[fast]``) the contact-density sum
(:func:`shiftcheck.predict.burial.contact_density`) runs as one compiled loop per model over a
cell list (cells at least as large as the cutoff, so the neighbours of an atom lie in its own
and the 26 adjacent cells) instead of a k-d tree pair list followed by several numpy passes.
Results equal the numpy path up to the order of summation (tests/test_fast_kernels.py runs
both and compares to 1e-9); benchmarks/README.md gives the measured gain that justifies the
optional dependency.

``SHIFTCHECK_NUMBA=0`` in the environment forces the numpy path. Compiled code is cached on
disk by numba (``cache=True``), so only the first run on a machine pays the compilation.
"""
from __future__ import annotations

import os

import numpy as np

__all__ = ["numba_enabled", "contact_density_kernel"]

_KERNELS: dict = {}


def numba_enabled() -> bool:
    """True when numba is importable and not switched off by ``SHIFTCHECK_NUMBA=0``."""
    if os.environ.get("SHIFTCHECK_NUMBA", "1").strip() == "0":
        return False
    if "numba" not in _KERNELS:
        try:
            import numba  # noqa: F401
            _KERNELS["numba"] = True
        except ImportError:
            _KERNELS["numba"] = False
    return _KERNELS["numba"]


def _build_contact_density():
    import numba

    @numba.njit(cache=True, nogil=True)
    def kernel(tx, t_res, hx, h_res, radii, width, exclude, cutoff):   # pragma: no cover (compiled)
        n_models, n_t = tx.shape[0], tx.shape[1]
        n_h, n_r = hx.shape[1], radii.shape[0]
        out = np.zeros((n_r, n_models, n_t))
        c2 = cutoff * cutoff
        half_pi = 0.5 * np.pi
        cid = np.empty(n_h, np.int64)
        for m in range(n_models):
            lo = np.full(3, np.inf)
            hi = np.full(3, -np.inf)
            n_ok = 0
            for j in range(n_h):
                ok = True
                for d in range(3):
                    if not np.isfinite(hx[m, j, d]):
                        ok = False
                if ok:
                    n_ok += 1
                    for d in range(3):
                        lo[d] = min(lo[d], hx[m, j, d])
                        hi[d] = max(hi[d], hx[m, j, d])
            if n_ok == 0:
                continue
            cell = max(cutoff, 1e-6)
            while True:               # cap the grid at a few cells per atom (far-flung outliers)
                nx = int((hi[0] - lo[0]) / cell) + 1
                ny = int((hi[1] - lo[1]) / cell) + 1
                nz = int((hi[2] - lo[2]) / cell) + 1
                if nx * ny * nz <= 8 * n_ok + 64:
                    break
                cell *= 1.5
            n_cells = nx * ny * nz
            start = np.zeros(n_cells + 1, np.int64)
            for j in range(n_h):
                x, y, z = hx[m, j, 0], hx[m, j, 1], hx[m, j, 2]
                if np.isfinite(x) and np.isfinite(y) and np.isfinite(z):
                    c = ((int((x - lo[0]) / cell) * ny + int((y - lo[1]) / cell)) * nz
                         + int((z - lo[2]) / cell))
                    cid[j] = c
                    start[c + 1] += 1
                else:
                    cid[j] = -1
            for c in range(n_cells):
                start[c + 1] += start[c]
            fill = start[:-1].copy()
            sxyz = np.empty((n_ok, 3))        # heavy atoms sorted by cell, contiguous
            sres = np.empty(n_ok, np.int64)
            for j in range(n_h):
                c = cid[j]
                if c >= 0:
                    q = fill[c]
                    sxyz[q, 0], sxyz[q, 1], sxyz[q, 2] = hx[m, j, 0], hx[m, j, 1], hx[m, j, 2]
                    sres[q] = h_res[j]
                    fill[c] += 1
            for i in range(n_t):
                px, py, pz = tx[m, i, 0], tx[m, i, 1], tx[m, i, 2]
                if not (np.isfinite(px) and np.isfinite(py) and np.isfinite(pz)):
                    continue
                gx = int(np.floor(min(max((px - lo[0]) / cell, -2.0), nx + 1.0)))
                gy = int(np.floor(min(max((py - lo[1]) / cell, -2.0), ny + 1.0)))
                gz = int(np.floor(min(max((pz - lo[2]) / cell, -2.0), nz + 1.0)))
                ti = t_res[i]
                for a in range(max(gx - 1, 0), min(gx + 1, nx - 1) + 1):
                    for b in range(max(gy - 1, 0), min(gy + 1, ny - 1) + 1):
                        for e in range(max(gz - 1, 0), min(gz + 1, nz - 1) + 1):
                            c = (a * ny + b) * nz + e
                            for q in range(start[c], start[c + 1]):
                                dx = sxyz[q, 0] - px
                                dy = sxyz[q, 1] - py
                                dz = sxyz[q, 2] - pz
                                d2 = dx * dx + dy * dy + dz * dz
                                if d2 > c2 or abs(sres[q] - ti) <= exclude:
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

    return kernel


def contact_density_kernel(tx, t_res, hx, h_res, radii, width, exclude, cutoff) -> np.ndarray:
    """Compiled contact-density sums, (n_radii, n_models, n_targets); see burial.contact_density."""
    if "cd" not in _KERNELS:
        _KERNELS["cd"] = _build_contact_density()
    return _KERNELS["cd"](np.ascontiguousarray(tx, dtype=np.float64),
                          np.ascontiguousarray(t_res, dtype=np.int64),
                          np.ascontiguousarray(hx, dtype=np.float64),
                          np.ascontiguousarray(h_res, dtype=np.int64),
                          np.ascontiguousarray(radii, dtype=np.float64),
                          float(width), int(exclude), float(cutoff))
