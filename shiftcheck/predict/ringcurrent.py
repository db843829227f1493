"""Ring-current geometric factors: point dipole, Johnson–Bovey and Haigh–Mallion.

Every model gives a *geometric factor* G for a nucleus P and a ring; the ring-current shift is
``δ_rc = B · i · G`` with i the ring type's relative intensity (benzene = 1) and B a constant
fitted per nucleus class (starting values with sources in ``shiftcheck/data/ring_current.json``).

Sign convention (δ, ppm direction): G < 0 above/below the ring (shielded, upfield) and
G > 0 in the ring plane outside the ring (deshielded, downfield); B > 0.

Models and units of G:

* point dipole (Pople 1956, J. Chem. Phys. 24:1111): ``G = (1 − 3cos²θ) / r³``, Å⁻³, with r the
  distance from the ring centre and θ the angle between P − c and the ring normal.
* Johnson–Bovey (Johnson & Bovey 1958, J. Chem. Phys. 29:1012): two circular current loops of
  the ring radius a at ±d along the normal (d = 0.64 Å, from memory). The axial field of one
  loop of unit radius at (ρ, z) is, in units of μ0·I/(4π·a),
  ``L(ρ, z) = 2/√((1+ρ)²+z²) · [K(m) + (1−ρ²−z²)/((1−ρ)²+z²) · E(m)]``,
  ``m = 4ρ/((1+ρ)²+z²)`` (complete elliptic integrals, parameter m). G is the mean over the
  two loops of ``−L/(π a³)``: Å⁻³, normalised so that far from the ring it equals the point
  dipole factor (the loop's moment is I·πa²). Hence B_JB ≈ B_PD.
* Haigh–Mallion (Haigh & Mallion 1979, Prog. NMR Spectrosc. 13:303):
  ``G = −Σ_edges(j,k) S_jk (1/r_j³ + 1/r_k³)``, Å⁻¹, S_jk the signed area of the triangle
  (projection of P on the ring plane, atom j, atom k), atoms in ring order, r_j = |P − a_j|.
  Far from the ring G → A·(1 − 3cos²θ)/r³ (A the ring area), hence B_HM ≈ B_PD / A.
"""
from __future__ import annotations

from functools import lru_cache
from typing import TYPE_CHECKING

import numpy as np
from ..datafiles import load_data
from ..defaults import RING_MODELS
from ._fast import hm_ring_kernel, numba_enabled
from .rings import RING_TYPES, find_rings, ring_frames

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["RING_MODELS", "JB_LOOP_OFFSET", "ring_current_parameters", "point_dipole", "johnson_bovey", "haigh_mallion",
           "johnson_bovey_loop_field", "ring_factor", "ring_current_factors"]



@lru_cache(maxsize=1)
def ring_current_parameters() -> dict:
    """Starting intensities, B constants and the loop offset from ``data/ring_current.json``."""
    return load_data("ring_current.json")


#: Loop displacement ±d along the normal for Johnson–Bovey, Å (benzene value from
#: Johnson & Bovey 1958, from memory; source recorded in data/ring_current.json).
JB_LOOP_OFFSET = float(ring_current_parameters()["johnson_bovey_loop_offset"]["value"])


def _frame(points, ring_xyz, centre, normal):
    ring_xyz = np.asarray(ring_xyz, dtype=float)
    if centre is None or normal is None:
        c, n, _ = ring_frames(ring_xyz)
        centre = c if centre is None else centre
        normal = n if normal is None else normal
    return np.asarray(points, dtype=float), ring_xyz, np.asarray(centre), np.asarray(normal)


def point_dipole(points: np.ndarray, centre: np.ndarray, normal: np.ndarray) -> np.ndarray:
    """Point-dipole factor ``(1 − 3cos²θ)/r³`` (Å⁻³), δ convention (Pople 1956).

    Parameters
    ----------
    points, centre, normal : np.ndarray, shape (..., 3), broadcastable; normal need not be unit.
    """
    v = np.asarray(points, float) - centre
    n = normal / np.linalg.norm(normal, axis=-1, keepdims=True)
    r2 = np.sum(v * v, axis=-1)
    z = np.sum(v * n, axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (1.0 - 3.0 * z * z / r2) / (r2 * np.sqrt(r2))


def johnson_bovey_loop_field(rho: np.ndarray, z: np.ndarray) -> np.ndarray:
    """Axial magnetic field of a unit-radius current loop, in units of μ0·I/(4π·a).

    ``L(ρ, z) = 2/√((1+ρ)²+z²) · [K(m) + (1−ρ²−z²)/((1−ρ)²+z²) · E(m)]``,
    ``m = 4ρ/((1+ρ)²+z²)``; ρ, z in units of the loop radius (Johnson & Bovey 1958;
    standard result for a circular loop). On the axis L = 2π/(1+z²)^{3/2}.
    """
    from scipy.special import ellipe, ellipk   # imported here: only this ring model needs it

    rho = np.abs(np.asarray(rho, dtype=float))
    z = np.asarray(z, dtype=float)
    s = (1.0 + rho) ** 2 + z * z
    m = np.clip(4.0 * rho / s, 0.0, 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        return 2.0 / np.sqrt(s) * (ellipk(m) + (1.0 - rho * rho - z * z)
                                   / ((1.0 - rho) ** 2 + z * z) * ellipe(m))


def johnson_bovey(points: np.ndarray, ring_xyz: np.ndarray, centre: np.ndarray | None = None,
                  normal: np.ndarray | None = None, radius: np.ndarray | None = None,
                  offset: float = JB_LOOP_OFFSET) -> np.ndarray:
    """Johnson–Bovey double-loop factor (Å⁻³), δ convention, far field = point dipole.

    Parameters
    ----------
    points : (..., 3)
    ring_xyz : (..., k, 3), ring atoms in order (used for centre, normal and radius if not given)
    centre, normal : (..., 3), optional
    radius : (...), optional; default the mean centre–atom distance of ``ring_xyz``.
    offset : float
        Loop displacement d along the normal, Å.
    """
    p, ring_xyz, c, n = _frame(points, ring_xyz, centre, normal)
    if radius is None:
        radius = np.linalg.norm(ring_xyz - c[..., None, :], axis=-1).mean(axis=-1)
    a = np.asarray(radius, dtype=float)
    n = n / np.linalg.norm(n, axis=-1, keepdims=True)
    v = p - c
    z = np.sum(v * n, axis=-1)
    rho = np.linalg.norm(v - z[..., None] * n, axis=-1)
    total = 0.0
    for sgn in (1.0, -1.0):
        total = total + johnson_bovey_loop_field(rho / a, (z - sgn * offset) / a)
    return -0.5 * total / (np.pi * a ** 3)


def haigh_mallion(points: np.ndarray, ring_xyz: np.ndarray,
                  normal: np.ndarray | None = None, centre: np.ndarray | None = None) -> np.ndarray:
    """Haigh–Mallion factor ``−Σ S_jk (1/r_j³ + 1/r_k³)`` (Å⁻¹), δ convention.

    Parameters
    ----------
    points : (..., 3)
    ring_xyz : (..., k, 3), ring atoms in order around the ring.
    normal, centre : (..., 3), optional; default from :func:`shiftcheck.predict.rings.ring_frames`
        (normal oriented by the atom order, which makes the result independent of that order).
    """
    p, ring_xyz, c, n = _frame(points, ring_xyz, centre, normal)
    n = n / np.linalg.norm(n, axis=-1, keepdims=True)
    proj = p - np.sum((p - c) * n, axis=-1)[..., None] * n          # P on the ring plane
    rel = ring_xyz - proj[..., None, :]
    nxt = np.roll(rel, -1, axis=-2)
    area = 0.5 * np.sum(np.cross(rel, nxt) * n[..., None, :], axis=-1)   # signed S_jk
    r = np.linalg.norm(ring_xyz - p[..., None, :], axis=-1)
    inv3 = 1.0 / r ** 3
    return -np.sum(area * (inv3 + np.roll(inv3, -1, axis=-1)), axis=-1)


def ring_factor(points: np.ndarray, ring_xyz: np.ndarray, model: str = "haigh-mallion",
                centre: np.ndarray | None = None, normal: np.ndarray | None = None,
                radius: np.ndarray | None = None) -> np.ndarray:
    """Geometric factor of the named model (see module docstring for units)."""
    if model == "haigh-mallion":
        return haigh_mallion(points, ring_xyz, normal=normal, centre=centre)
    if model == "johnson-bovey":
        return johnson_bovey(points, ring_xyz, centre=centre, normal=normal, radius=radius)
    if model == "point-dipole":
        p, _, c, n = _frame(points, ring_xyz, centre, normal)
        return point_dipole(p, c, n)
    raise ValueError(f"unknown ring-current model {model!r}; choose one of {', '.join(RING_MODELS)}")


def ring_current_factors(ens: Ensemble, targets: np.ndarray, model: str = "haigh-mallion",
                         cutoff: float = 15.0, rings: dict | None = None) -> dict[str, np.ndarray]:
    """Summed ring-current factors per ring type for target atoms in every model.

    Parameters
    ----------
    ens : shiftcheck.structure.ensemble.Ensemble
    targets : np.ndarray of int, shape (n_targets,)
        Atom indices; -1 (absent atom) allowed.
    model : {"haigh-mallion", "johnson-bovey", "point-dipole"}
    cutoff : float
        Rings whose centre is farther than this from the target (Å) are ignored.
    rings : dict, optional
        Output of :func:`shiftcheck.predict.rings.find_rings` (to reuse between calls).

    Returns
    -------
    dict ring type ("PHE", "TYR", "TRP6", "TRP5", "HIS") -> np.ndarray (n_models, n_targets)
        Sum of G over rings of that type within the cutoff, excluding the rings of the target's
        own residue. Units Å⁻¹ (Haigh–Mallion) or Å⁻³ (the others); δ convention (negative
        above a ring). Rings with missing atoms in a model are skipped in that model; a target
        absent from a model (or index -1) gets 0 — the caller masks absent targets.
    """
    if model not in RING_MODELS:
        raise ValueError(f"unknown ring-current model {model!r}; choose one of {', '.join(RING_MODELS)}")
    targets = np.asarray(targets, dtype=np.int64).ravel()
    n_models, n_t = ens.n_models, targets.size
    rings = find_rings(ens) if rings is None else rings
    tx = np.full((n_models, n_t, 3), np.nan)
    have = targets >= 0
    tx[:, have] = ens.coords[:, targets[have]]
    t_res = np.full(n_t, -1, dtype=np.int64)
    t_res[have] = np.asarray(ens.atom_res)[targets[have]]
    out: dict[str, np.ndarray] = {}
    flat_tx = tx.reshape(-1, 3)
    compiled = model == "haigh-mallion" and numba_enabled()
    for rt in RING_TYPES:
        acc = np.zeros(n_models * n_t)
        rs = rings.get(rt)
        if compiled and rs is not None and rs.n_rings and n_t:   # optional numba; below: the reference
            area0, edge = _hm_parts(rs)
            out[rt] = hm_ring_kernel(tx, t_res, rs.centre, rs.res_index, rs.valid, area0, edge, rs.xyz, cutoff)
            continue
        if rs is not None and rs.n_rings and n_t:
            centre = np.where(rs.valid[..., None], rs.centre, np.nan)
            ft, fr = _ring_pairs(tx, centre, t_res, rs.res_index, cutoff)
            if ft.size:
                kernel = _PAIR_KERNELS[model](rs)
                for s in range(0, ft.size, _CHUNK):          # bounded temporaries
                    fc = ft[s:s + _CHUNK]
                    acc += np.bincount(fc, weights=kernel(flat_tx[fc], fr[s:s + _CHUNK]),
                                       minlength=n_models * n_t)
        out[rt] = acc.reshape(n_models, n_t)
    return out


#: Pairs handled per block in :func:`ring_current_factors` (keeps temporaries to a few MB).
_CHUNK = 32768


def _ring_pairs(tx, centre, t_res, ring_res, cutoff):
    """(target, ring) pairs within ``cutoff`` in each model, rings of the target's residue left out.

    Rings are few, so the distances of every target to every ring centre are computed directly,
    a block of models at a time (blocks of about a million distances). Returns flat indices
    ``model * n_targets + target`` and ``model * n_rings + ring``, in (model, target, ring) order.
    """
    n_models, n_t = tx.shape[:2]
    n_r = centre.shape[1]
    other = t_res[:, None] != ring_res[None, :]                 # (n_t, n_r), topology only
    step = max(1, (1 << 20) // max(1, n_t * n_r))
    ft, fr = [], []
    c2 = cutoff * cutoff
    for m0 in range(0, n_models, step):
        d = tx[m0:m0 + step, :, None, :] - centre[m0:m0 + step, None, :, :]
        with np.errstate(invalid="ignore"):
            near = (np.einsum("mtrd,mtrd->mtr", d, d) <= c2) & other
        m, it, jr = np.nonzero(near)
        ft.append((m + m0) * n_t + it)
        fr.append((m + m0) * n_r + jr)
    return np.concatenate(ft), np.concatenate(fr)


def _flat(a):
    """(n_models, n_rings, ...) -> (n_models * n_rings, ...)."""
    return a.reshape((-1,) + a.shape[2:])


def _hm_parts(rs):
    """Per-ring-edge parts of the Haigh–Mallion factor (see :func:`_hm_kernel`): ``A_jk``
    (n_models, n_rings, k) and ``E_jk`` (n_models, n_rings, k, 3)."""
    n = rs.normal / np.linalg.norm(rs.normal, axis=-1, keepdims=True)
    u = rs.xyz - rs.centre[..., None, :]
    u_next = np.roll(u, -1, axis=-2)
    area0 = 0.5 * np.einsum("mrkd,mrd->mrk", np.cross(u, u_next), n)
    edge = 0.5 * np.cross(u - u_next, n[..., None, :])
    return area0, edge


def _hm_kernel(rs):
    """Haigh–Mallion factor of (point, ring) pairs with the per-ring parts computed once.

    With u_j = a_j − c (ring atoms about the centre), v = P − c and the projection of P on the
    plane P' = c + v − (v·n)n, the signed area of (P', a_j, a_k) is
    ``S_jk = ½ n·(u_j × u_k) + ½ v·((u_j − u_k) × n)`` (the component of v along n drops out),
    so only the scalar ``A_jk`` and the vector ``E_jk`` are stored per ring edge and each pair
    costs a dot product per edge. Equal to :func:`haigh_mallion` up to rounding.
    """
    area0, edge = _hm_parts(rs)
    area0, edge = _flat(area0), _flat(edge)
    centre, xyz = _flat(rs.centre), _flat(rs.xyz)

    def kernel(p, j):
        v = p - centre[j]
        area = area0[j] + np.einsum("pkd,pd->pk", edge[j], v)
        d = xyz[j] - p[:, None, :]
        r = np.sqrt(np.einsum("pkd,pkd->pk", d, d))
        inv3 = 1.0 / r ** 3
        return -np.sum(area * (inv3 + np.roll(inv3, -1, axis=-1)), axis=-1)
    return kernel


def _jb_kernel(rs):
    xyz, centre, normal, radius = _flat(rs.xyz), _flat(rs.centre), _flat(rs.normal), _flat(rs.radius)

    def kernel(p, j):
        return johnson_bovey(p, xyz[j], centre=centre[j], normal=normal[j], radius=radius[j])
    return kernel


def _pd_kernel(rs):
    centre, normal = _flat(rs.centre), _flat(rs.normal)

    def kernel(p, j):
        return point_dipole(p, centre[j], normal[j])
    return kernel


_PAIR_KERNELS = {"haigh-mallion": _hm_kernel, "johnson-bovey": _jb_kernel, "point-dipole": _pd_kernel}
