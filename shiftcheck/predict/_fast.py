"""Optional compiled kernels (numba) for the through-space terms; the numpy code is the reference.

With numba installed (``pip install shiftcheck[fast]``) the contact-density sum
(:func:`shiftcheck.predict.burial.contact_density`) and the peptide-group anisotropy sums
(:func:`shiftcheck.predict.anisotropy.anisotropy_features`) run as one compiled loop per model
over a cell list (cells at least as large as the cutoff, so the neighbours of an atom lie in its own
and the 26 adjacent cells) instead of a k-d tree pair list followed by several numpy passes;
the Haigh–Mallion ring-current sums (:func:`shiftcheck.predict.ringcurrent.ring_current_factors`)
loop over targets and the few rings directly, with the per-ring-edge parts computed by numpy
(the other two ring models keep the numpy path).
Results equal the numpy path up to the order of summation (tests/test_fast_kernels.py runs
both and compares to 1e-9); benchmarks/README.md gives the measured gain that justifies the
optional dependency.

``SHIFTCHECK_NUMBA=0`` in the environment forces the numpy path. The choice depends only on
that switch and on numba being installed, never on the size of a call, so a prediction does
not change with how the models are batched. Loading numba and its cached machine code costs
about a second per process (benchmarks/README.md), won back from a few hundred models on;
compiled code is cached on disk by numba (``cache=True``), so only the first run on a machine
pays the compilation (several seconds).
"""
from __future__ import annotations

import os

import numpy as np

__all__ = ["numba_enabled", "contact_density_kernel", "axial_dipole_kernel", "hm_ring_kernel", "preload"]

_KERNELS: dict = {}


def numba_enabled() -> bool:
    """True when numba is importable and not switched off by ``SHIFTCHECK_NUMBA=0``."""
    if os.environ.get("SHIFTCHECK_NUMBA", "").strip() == "0":
        return False
    if "numba" not in _KERNELS:
        try:
            import numba  # noqa: F401
            _KERNELS["numba"] = True
        except ImportError:
            _KERNELS["numba"] = False
    return _KERNELS["numba"]


def preload() -> bool:
    """Load the compiled kernels now (when numba is enabled); True if they are loaded.

    Called by :meth:`shiftcheck.predict.model.Predictor.load`, i.e. in the process that sets up
    a run, before it starts worker processes: forked workers then inherit the loaded machine
    code instead of each loading it again (about 0.35 s per process, more under load;
    benchmarks/README.md). Each kernel is called once on a few points with the argument types
    of a real call (so later calls find the compiled version); the results are discarded.
    """
    if not numba_enabled():
        return False
    if _KERNELS.get("loaded"):
        return True
    x = np.zeros((1, 2, 3))
    x[0, 1] = 1.0
    r = np.arange(2)
    contact_density_kernel(x, r, x, r, np.array([1.0]), 0.5, 0, 1.5)
    axial_dipole_kernel(x, r, x, np.ones((1, 1, 2, 3)), r, 1.5)
    hm_ring_kernel(x, r, x[:, :1], r[:1] + 5, np.ones((1, 1), bool), np.ones((1, 1, 2)),
                   np.ones((1, 1, 2, 3)), np.ones((1, 1, 2, 3)), 1.5)
    _KERNELS["loaded"] = True
    return True


def _kernel(name):
    from . import _fast_numba

    return getattr(_fast_numba, name)


def contact_density_kernel(tx, t_res, hx, h_res, radii, width, exclude, cutoff) -> np.ndarray:
    """Compiled contact-density sums, (n_radii, n_models, n_targets); see burial.contact_density."""
    return _kernel("contact_density")(np.ascontiguousarray(tx, dtype=np.float64),
                          np.ascontiguousarray(t_res, dtype=np.int64),
                          np.ascontiguousarray(hx, dtype=np.float64),
                          np.ascontiguousarray(h_res, dtype=np.int64),
                          np.ascontiguousarray(radii, dtype=np.float64),
                          float(width), int(exclude), float(cutoff))


def axial_dipole_kernel(tx, t_res, origin, axes, g_res, cutoff) -> np.ndarray:
    """Compiled sums of ``(1 − 3cos²θ)/r³`` over groups j within ``cutoff`` of each target
    (groups of the target's residue and the one before left out), one per unit axis set in
    ``axes`` (n_axes, n_models, n_groups, 3); (n_axes, n_models, n_targets). See
    :func:`shiftcheck.predict.anisotropy.anisotropy_features`."""
    return _kernel("axial_dipole")(np.ascontiguousarray(tx, dtype=np.float64),
                         np.ascontiguousarray(t_res, dtype=np.int64),
                         np.ascontiguousarray(origin, dtype=np.float64),
                         np.ascontiguousarray(axes, dtype=np.float64),
                         np.ascontiguousarray(g_res, dtype=np.int64), float(cutoff))


def hm_ring_kernel(tx, t_res, centre, ring_res, valid, area0, edge, xyz, cutoff) -> np.ndarray:
    """Compiled Haigh–Mallion sums over the rings of one type within ``cutoff`` of each target
    (own-residue rings left out), (n_models, n_targets); per-ring parts ``area0`` (n_models,
    n_rings, k) and ``edge`` (n_models, n_rings, k, 3) as in ``ringcurrent._hm_kernel``. See
    :func:`shiftcheck.predict.ringcurrent.ring_current_factors`."""
    return _kernel("hm_ring_sums")(np.ascontiguousarray(tx, dtype=np.float64),
                                   np.ascontiguousarray(t_res, dtype=np.int64),
                                   np.ascontiguousarray(centre, dtype=np.float64),
                                   np.ascontiguousarray(ring_res, dtype=np.int64),
                                   np.ascontiguousarray(valid, dtype=np.bool_),
                                   np.ascontiguousarray(area0, dtype=np.float64),
                                   np.ascontiguousarray(edge, dtype=np.float64),
                                   np.ascontiguousarray(xyz, dtype=np.float64), float(cutoff))
