"""Aromatic rings of a model stack (centres, normals, atoms) and neighbour search across models.

Ring definitions (atoms in order around the ring, IUPAC 1998 names, Markley et al. 1998,
Pure Appl. Chem. 70:117):

=====  ==============================  ==========================================
type   residue                         ring atoms (in order)
=====  ==============================  ==========================================
PHE    Phe                             CG CD1 CE1 CZ CE2 CD2
TYR    Tyr                             CG CD1 CE1 CZ CE2 CD2
TRP6   Trp, benzene ring               CD2 CE2 CZ2 CH2 CZ3 CE3
TRP5   Trp, pyrrole ring               CG CD1 NE1 CE2 CD2
HIS    His, imidazole ring             CG ND1 CE1 NE2 CD2
=====  ==============================  ==========================================

The ring normal is oriented by the atom order (right-hand rule:
``n ∝ Σ_j (a_j − c) × (a_{j+1} − c)``), so every signed quantity computed with it (such as the
Haigh–Mallion signed areas) is consistent with the order and independent of which way round
the ring is listed.

:func:`pairs_within` is the neighbour search the through-space terms share: one
:class:`scipy.spatial.cKDTree` over all models at once, models kept apart by an offset along x
larger than the structure plus the cutoff.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from scipy.spatial import cKDTree

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["RING_ATOMS", "RING_RESIDUE", "RING_TYPES", "RingSet", "find_rings", "ring_frames",
           "pairs_within"]

#: Ring atoms in order around the ring, per ring type.
RING_ATOMS: dict[str, tuple[str, ...]] = {
    "PHE": ("CG", "CD1", "CE1", "CZ", "CE2", "CD2"),
    "TYR": ("CG", "CD1", "CE1", "CZ", "CE2", "CD2"),
    "TRP6": ("CD2", "CE2", "CZ2", "CH2", "CZ3", "CE3"),
    "TRP5": ("CG", "CD1", "NE1", "CE2", "CD2"),
    "HIS": ("CG", "ND1", "CE1", "NE2", "CD2"),
}
#: Residue name carrying each ring type.
RING_RESIDUE: dict[str, str] = {"PHE": "PHE", "TYR": "TYR", "TRP6": "TRP", "TRP5": "TRP",
                                "HIS": "HIS"}
RING_TYPES: tuple[str, ...] = tuple(RING_ATOMS)


@dataclass
class RingSet:
    """All rings of one type in an ensemble.

    Attributes
    ----------
    ring_type : str
        One of :data:`RING_TYPES`.
    res_index : np.ndarray of int, shape (n_rings,)
        Residue index (into the ensemble's residue arrays) of each ring.
    atom_index : np.ndarray of int, shape (n_rings, k)
        Atom indices of the ring atoms in ring order, -1 where the topology lacks the atom.
    xyz : np.ndarray, shape (n_models, n_rings, k, 3)
        Ring atom coordinates (Å), NaN where missing.
    centre, normal : np.ndarray, shape (n_models, n_rings, 3)
        Centroid of the ring atoms (Å) and unit normal oriented by the atom order.
    radius : np.ndarray, shape (n_models, n_rings)
        Mean centre–atom distance (Å).
    valid : np.ndarray of bool, shape (n_models, n_rings)
        True where all ring atoms are present in that model.
    """

    ring_type: str
    res_index: np.ndarray
    atom_index: np.ndarray
    xyz: np.ndarray
    centre: np.ndarray
    normal: np.ndarray
    radius: np.ndarray
    valid: np.ndarray

    @property
    def n_rings(self) -> int:
        return int(self.res_index.shape[0])


def ring_frames(xyz: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Centre, unit normal and mean radius of rings given as ordered atom positions.

    Parameters
    ----------
    xyz : np.ndarray, shape (..., k, 3)
        Ring atoms in order around the ring (Å).

    Returns
    -------
    centre : (..., 3) ; normal : (..., 3), unit, right-handed with respect to the atom order ;
    radius : (...), mean centre–atom distance. NaN where any atom is NaN.
    """
    xyz = np.asarray(xyz, dtype=float)
    centre = xyz.mean(axis=-2)
    rel = xyz - centre[..., None, :]
    n = np.cross(rel, np.roll(rel, -1, axis=-2)).sum(axis=-2)
    with np.errstate(invalid="ignore", divide="ignore"):
        normal = n / np.linalg.norm(n, axis=-1, keepdims=True)
    radius = np.linalg.norm(rel, axis=-1).mean(axis=-1)
    return centre, normal, radius


def find_rings(ens: Ensemble, ring_types: tuple[str, ...] = RING_TYPES) -> dict[str, RingSet]:
    """Locate every aromatic ring of the given types in an ensemble.

    Parameters
    ----------
    ens : shiftcheck.structure.ensemble.Ensemble
    ring_types : tuple of str
        Subset of :data:`RING_TYPES`.

    Returns
    -------
    dict ring type -> :class:`RingSet` (present for every requested type, possibly empty).
    """
    out: dict[str, RingSet] = {}
    res_name = np.asarray(ens.res_name).astype(str)
    for rt in ring_types:
        names = RING_ATOMS[rt]
        k = len(names)
        res = np.flatnonzero(res_name == RING_RESIDUE[rt])
        if res.size:
            idx = np.stack([ens.indices(res, nm) for nm in names], axis=1)
        else:
            idx = np.zeros((0, k), dtype=np.int64)
        xyz = np.full((ens.n_models, res.size, k, 3), np.nan)
        ok = idx >= 0
        xyz[:, ok] = ens.coords[:, idx[ok]]
        centre, normal, radius = ring_frames(xyz)
        valid = np.isfinite(xyz).all(axis=(-1, -2)) & np.isfinite(normal).all(axis=-1)
        out[rt] = RingSet(rt, res, idx, xyz, centre, normal, radius, valid)
    return out


def pairs_within(a: np.ndarray, b: np.ndarray, cutoff: float
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """All (model, i, j) with |a[model, i] − b[model, j]| <= cutoff, for every model at once.

    One k-d tree per point set over the whole model stack: model m is shifted by
    ``m * span`` along x, with ``span`` larger than the structure's extent plus the cutoff,
    so points of different models are never neighbours. NaN points are ignored.

    Parameters
    ----------
    a : np.ndarray, shape (n_models, n_a, 3)
    b : np.ndarray, shape (n_models, n_b, 3)
    cutoff : float
        Å.

    Returns
    -------
    model, i, j : int arrays, shape (n_pairs,), in (model, i, j) order ; dist : float array (Å),
    shape (n_pairs,), computed from the unshifted coordinates — so the pairs and distances of a
    model do not depend on the other models in the stack.
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    n_models = a.shape[0]
    empty = (np.zeros(0, np.int64),) * 3 + (np.zeros(0),)
    oka = np.isfinite(a).all(axis=-1)
    okb = np.isfinite(b).all(axis=-1)
    if not oka.any() or not okb.any():
        return empty
    lo = min(np.nanmin(a[oka][:, 0]), np.nanmin(b[okb][:, 0]))
    hi = max(np.nanmax(a[oka][:, 0]), np.nanmax(b[okb][:, 0]))
    span = (hi - lo) + 2.0 * cutoff + 1.0
    ma, ia = np.nonzero(oka)
    mb, jb = np.nonzero(okb)
    pa = a[ma, ia].copy()
    pb = b[mb, jb].copy()
    pa[:, 0] += ma * span
    pb[:, 0] += mb * span
    # a little beyond the cutoff: the shifted coordinates round differently from the originals
    res = cKDTree(pa).sparse_distance_matrix(cKDTree(pb), cutoff * (1 + 1e-9) + 1e-9, output_type="ndarray")
    if not (n_models and res.size):   # the offsets keep models apart: |x| >= span - extent > cutoff
        return empty
    # (model, i, j) order and distances from the unshifted coordinates, so that every result
    # is the same whichever other models share the stack (batching must not change a number)
    n_a, n_b = a.shape[1], b.shape[1]
    fa = ma * n_a + ia                      # flat (model, i) of every finite point of a
    key = fa[res["i"]] * n_b + jb[res["j"]]
    key.sort()
    fa, j = np.divmod(key, n_b)
    m = fa // n_a
    fb = m * n_b + j
    d2 = np.zeros(key.size)
    for k in range(3):                      # one coordinate at a time: 1-D gathers are fast
        dk = np.ascontiguousarray(a[..., k]).ravel()[fa] - np.ascontiguousarray(b[..., k]).ravel()[fb]
        d2 += dk * dk
    dist = np.sqrt(d2)
    keep = dist <= cutoff
    if not keep.all():
        fa, m, j, dist = fa[keep], m[keep], j[keep], dist[keep]
    return m, fa - m * n_a, j, dist
