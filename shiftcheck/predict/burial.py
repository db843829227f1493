"""Burial (contact density) and half-sphere exposure of target atoms, vectorised over models.

Packing and solvent exposure shift backbone nuclei: amide and α protons of buried residues
differ systematically from those of exposed ones (common knowledge, no single source). These
features give the linear predictor a direct, through-space measure of how buried an atom is,
which the local terms (φ/ψ, neighbours) cannot see.

Contact density
    ``bur:<R>`` = Σ_j s(r_aj; R, w) over heavy atoms j of residues k with |k − i| > 1
    (the atom's own residue i and its sequence neighbours are excluded, because their
    positions follow from the local conformation already described by the torsion terms),
    where s is a smooth step (a cos² switch, common practice, no source)::

        s(r) = 1                          r ≤ R − w
        s(r) = cos²(π (r − R + w) / 4w)   R − w < r < R + w
        s(r) = 0                          r ≥ R + w

    so s(R) = 1/2 and the feature is the usual "number of heavy atoms within R" made continuous
    in the coordinates.

Half-sphere exposure (Hamelryck 2005, Proteins 59:38 — from memory)
    The sphere of radius R_hse around CA(i) is split by the plane through CA(i) normal to the
    CA→CB vector u(i). ``hse:up`` counts (smoothly, with the same switch) the CA atoms of other
    residues k (|k − i| > 1) on the CB side, ``hse:down`` those on the other side. For Gly the CB
    direction is that of a virtual CB placed from N, CA, C with ideal tetrahedral geometry
    (coefficients below, common practice, from memory). Every target atom of residue i gets its
    residue's values.

With numba installed the contact-density sum runs as a compiled cell-list loop
(:mod:`shiftcheck.predict._fast`); the numpy code here is the reference it is tested against.

Units: counts (dimensionless). Constants (radii, switch width) are in
``shiftcheck/data/calibration.json`` → ``burial`` and are copied into parameter files.
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from ._fast import contact_density_kernel, numba_enabled
from .rings import pairs_within

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["DEFAULT_SETTINGS", "switch", "virtual_cb_direction", "contact_density",
           "half_sphere_exposure", "burial_features"]

#: Used when a parameter file has no ``burial`` block.
DEFAULT_SETTINGS = {"radii": [6.0, 8.0, 10.0], "width": 1.0, "hse_radius": 13.0,
                    "exclude_neighbours": 1, "features": ["bur", "hse"]}

# Virtual CB from the backbone: b = CA − N, c = C − CA, a = b × c,
# CB − CA = −0.58273431 a + 0.56802827 b − 0.54067466 c (ideal geometry; common practice, from memory).
_VCB = (-0.58273431, 0.56802827, -0.54067466)


def switch(r: np.ndarray, radius: float, width: float) -> np.ndarray:
    """Smooth step: 1 inside ``radius − width``, 0 beyond ``radius + width``, cos² in between."""
    r = np.asarray(r, float)
    if width <= 0:
        return (r <= radius).astype(float)
    x = np.clip((r - radius + width) / (2.0 * width), 0.0, 1.0)
    return np.cos(0.5 * np.pi * x) ** 2


def virtual_cb_direction(ens: Ensemble) -> np.ndarray:
    """Unit CA→CB vector of every residue (n_models, n_res, 3); virtual CB where CB is absent."""
    r = np.arange(ens.n_residues)
    n, ca, c, cb = (ens.xyz(r, a) for a in ("N", "CA", "C", "CB"))
    b, cc = ca - n, c - ca
    a = np.cross(b, cc)
    v_virtual = _VCB[0] * a + _VCB[1] * b + _VCB[2] * cc
    v = np.where(np.isfinite(cb).all(axis=-1, keepdims=True), cb - ca, v_virtual)
    with np.errstate(invalid="ignore", divide="ignore"):
        return v / np.linalg.norm(v, axis=-1, keepdims=True)


def _target_arrays(ens, targets):
    targets = np.asarray(targets, dtype=np.int64).ravel()
    n_t = targets.size
    tx = np.full((ens.n_models, n_t, 3), np.nan)
    have = targets >= 0
    tx[:, have] = ens.coords[:, targets[have]]
    t_res = np.full(n_t, -10, dtype=np.int64)
    t_res[have] = np.asarray(ens.atom_res)[targets[have]]
    return targets, tx, t_res


def contact_density(ens: Ensemble, targets, radii=(6.0, 8.0, 10.0), width: float = 1.0,
                    exclude: int = 1) -> dict[str, np.ndarray]:
    """Smoothed heavy-atom counts around each target atom, one array per radius.

    Parameters
    ----------
    ens : Ensemble
    targets : array of int
        Atom indices (−1: absent, gives 0).
    radii : sequence of float
        Switch midpoints R (Å).
    width : float
        Half-width w of the switch (Å).
    exclude : int
        Heavy atoms of residues within ``exclude`` positions of the target's residue are ignored.

    Returns
    -------
    dict ``"bur:<R>"`` → (n_models, n_targets) float.
    """
    targets, tx, t_res = _target_arrays(ens, targets)
    n_models, n_t = tx.shape[:2]
    heavy = np.flatnonzero(np.asarray(ens.element).astype(str) != "H")
    h_res = np.asarray(ens.atom_res)[heavy]
    cutoff = float(max(radii)) + max(width, 0.0)
    if numba_enabled():   # compiled (optional numba); below: the reference
        val = contact_density_kernel(tx, t_res, ens.coords[:, heavy], h_res,
                                     np.asarray(radii, float), float(width), exclude, cutoff)
        return {f"bur:{float(rad):g}": val[k] for k, rad in enumerate(radii)}
    m, it, jh, dist = pairs_within(tx, ens.coords[:, heavy], cutoff)
    keep = np.abs(h_res[jh] - t_res[it]) > exclude
    flat = (m * n_t + it)[keep]
    dist = dist[keep]
    size = n_models * n_t
    out = {}
    for rad in radii:
        rad = float(rad)
        if width <= 0:
            val = np.bincount(flat, weights=switch(dist, rad, width), minlength=size)
        else:   # s = 1 inside R - w, 0 beyond R + w: only the shell needs the cos² (same sum)
            lo, hi = rad - width, rad + width
            val = np.bincount(flat, weights=dist <= lo, minlength=size)
            shell = (dist > lo) & (dist < hi)
            val += np.bincount(flat[shell], weights=switch(dist[shell], rad, width), minlength=size)
        out[f"bur:{rad:g}"] = val.reshape(n_models, n_t)
    return out


def half_sphere_exposure(ens: Ensemble, radius: float = 13.0, width: float = 1.0,
                         exclude: int = 1) -> dict[str, np.ndarray]:
    """Smoothed HSE-up / HSE-down CA counts per residue (n_models, n_res) (Hamelryck 2005)."""
    r = np.arange(ens.n_residues)
    ca = ens.xyz(r, "CA")
    u = virtual_cb_direction(ens)
    n_models, n_res = ca.shape[:2]
    m, i, j, dist = pairs_within(ca, ca, float(radius) + max(width, 0.0))
    keep = np.abs(i - j) > exclude
    m, i, j, dist = m[keep], i[keep], j[keep], dist[keep]
    w = np.where(np.isfinite(u[m, i]).all(axis=-1), switch(dist, float(radius), width), 0.0)
    up = np.einsum("pk,pk->p", ca[m, j] - ca[m, i], u[m, i]) > 0
    flat = m * n_res + i
    w_up = np.where(up, w, 0.0)
    return {"hse:up": np.bincount(flat, weights=w_up, minlength=n_models * n_res).reshape(n_models, n_res),
            "hse:down": np.bincount(flat, weights=w - w_up,
                                    minlength=n_models * n_res).reshape(n_models, n_res)}


def burial_features(ens: Ensemble, targets, settings: dict | None = None) -> dict[str, np.ndarray]:
    """All burial features of the targets (n_models, n_targets), as selected by ``settings``.

    ``settings`` keys (defaults :data:`DEFAULT_SETTINGS`): ``radii``, ``width``, ``hse_radius``,
    ``exclude_neighbours``, ``features`` (subset of ``"bur"``, ``"hse"``).
    """
    s = {**DEFAULT_SETTINGS, **(settings or {})}
    width, excl = float(s["width"]), int(s["exclude_neighbours"])
    out: dict[str, np.ndarray] = {}
    if "bur" in s["features"]:
        out.update(contact_density(ens, targets, s["radii"], width, excl))
    if "hse" in s["features"]:
        targets, _, t_res = _target_arrays(ens, targets)
        hse = half_sphere_exposure(ens, float(s["hse_radius"]), width, excl)
        ok = t_res >= 0
        for k, v in hse.items():
            g = np.zeros((ens.n_models, targets.size))
            g[:, ok] = v[:, t_res[ok]]
            out[k] = g
    return out
