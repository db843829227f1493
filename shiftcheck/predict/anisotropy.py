"""Peptide-group magnetic anisotropy (McConnell 1957) as linear features, vectorised over models.

McConnell (1957, J. Chem. Phys. 27:226) gives the shielding at distance r from a group with
magnetic susceptibility tensor χ (principal axes i, point-dipole approximation) as
``σ = (1/(3 r³)) Σ_i Δχ_i (1 − 3cos²θ_i)`` up to unit factors (form from memory), θ_i the angle
between the group→nucleus vector and axis i. Because Σ_i (1 − 3cos²θ_i) = 0, two independent
features per group describe any tensor:

* ``co_aniso_x = Σ_groups (1 − 3cos²θ_x)/r³`` with x along the C=O bond (C → O),
* ``co_aniso_z = Σ_groups (1 − 3cos²θ_z)/r³`` with z normal to the peptide plane (O, C, N).

Units Å⁻³. The ``(1 − 3cos²θ)`` sign convention matches the ring-current point dipole
(negative along the axis); the fitted coefficients carry the physical sign. Peptide group j is
C(j), O(j), N(j+1) (bonded, C–N < 2.0 Å); the origin (C=O midpoint) and cutoff are in
``data/anisotropy.json``. Groups j = i−1 and j = i (those containing atoms of the target's own
residue i) are excluded. Used together with ring currents for protons by Ösapay & Case 1991
(J. Am. Chem. Soc. 113:9436, from memory). Optional: include only if validation shows a gain.
"""
from __future__ import annotations

from functools import lru_cache
from typing import TYPE_CHECKING

import numpy as np

from ..datafiles import load_data, values
from ._fast import axial_dipole_kernel, numba_enabled
from .ringcurrent import point_dipole
from .rings import pairs_within

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["anisotropy_parameters", "peptide_frames", "mcconnell_axis_factor", "anisotropy_features"]


@lru_cache(maxsize=1)
def anisotropy_parameters() -> dict:
    """Constants from ``data/anisotropy.json`` (values only)."""
    return {k: v["value"] for k, v in values(load_data("anisotropy.json")).items()}


def mcconnell_axis_factor(points: np.ndarray, origin: np.ndarray, axis: np.ndarray) -> np.ndarray:
    """``(1 − 3cos²θ)/r³`` (Å⁻³) with θ between ``points − origin`` and ``axis`` (any shape (..., 3)).

    The same axial dipolar factor as the ring-current point dipole
    (:func:`shiftcheck.predict.ringcurrent.point_dipole`), here about a bond axis.
    """
    return point_dipole(points, origin, axis)


def peptide_frames(ens: Ensemble) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Origin, x axis (C→O) and z axis (plane normal) of every peptide group, all models.

    Returns
    -------
    origin, x, z : np.ndarray (n_models, n_res, 3), group j = C(j) O(j) N(j+1); NaN where the
    group is incomplete or not bonded. res : np.ndarray (n_res,) the index j.
    """
    r = np.arange(ens.n_residues)
    c, o = ens.xyz(r, "C"), ens.xyz(r, "O")
    n = np.full_like(c, np.nan)
    n[:, :-1] = ens.xyz(r[1:], "N")
    with np.errstate(invalid="ignore"):
        bonded = np.linalg.norm(n - c, axis=-1) < 2.0
    x = o - c
    z = np.cross(x, n - c)
    with np.errstate(invalid="ignore", divide="ignore"):
        x = x / np.linalg.norm(x, axis=-1, keepdims=True)
        z = z / np.linalg.norm(z, axis=-1, keepdims=True)
    origin = 0.5 * (c + o)
    origin[~bonded] = np.nan
    return origin, x, z, r


def anisotropy_features(ens: Ensemble, targets: np.ndarray, cutoff: float | None = None) -> dict[str, np.ndarray]:
    """McConnell peptide-group features ``co_aniso_x``, ``co_aniso_z`` (n_models, n_targets), Å⁻³.

    Targets absent from a model (or index -1) get 0; the caller masks absent targets.
    """
    rc = float(anisotropy_parameters()["cutoff"] if cutoff is None else cutoff)
    targets = np.asarray(targets, dtype=np.int64).ravel()
    n_models, n_t = ens.n_models, targets.size
    tx = np.full((n_models, n_t, 3), np.nan)
    have = targets >= 0
    tx[:, have] = ens.coords[:, targets[have]]
    t_res = np.full(n_t, -10, dtype=np.int64)
    t_res[have] = np.asarray(ens.atom_res)[targets[have]]
    origin, x, z, gres = peptide_frames(ens)
    if numba_enabled():   # compiled (optional numba); below: the reference
        with np.errstate(invalid="ignore", divide="ignore"):
            axes = np.stack([a / np.linalg.norm(a, axis=-1, keepdims=True) for a in (x, z)])
        val = axial_dipole_kernel(tx, t_res, origin, axes, gres, rc)
        return {"co_aniso_x": val[0], "co_aniso_z": val[1]}
    m, it, jg, _ = pairs_within(tx, origin, rc)
    keep = (gres[jg] != t_res[it]) & (gres[jg] != t_res[it] - 1)
    m, it, jg = m[keep], it[keep], jg[keep]
    p, o = tx[m, it], origin[m, jg]
    out = {}
    for key, ax in (("co_aniso_x", x), ("co_aniso_z", z)):
        g = mcconnell_axis_factor(p, o, ax[m, jg])
        out[key] = np.bincount(m * n_t + it, weights=g, minlength=n_models * n_t).reshape(n_models, n_t)
    return out
