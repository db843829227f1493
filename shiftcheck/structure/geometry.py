"""Vectorised geometry: dihedral angles over (models, n) stacks, backbone torsions, neighbour search."""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from .ensemble import Ensemble

__all__ = ["dihedral", "backbone_torsions", "chi1"]


def dihedral(p0: np.ndarray, p1: np.ndarray, p2: np.ndarray, p3: np.ndarray) -> np.ndarray:
    """Dihedral angle p0-p1-p2-p3 in degrees (IUPAC sign convention), any leading shape.

    NaN propagates: a missing atom gives a NaN angle.

    >>> import numpy as np
    >>> round(float(dihedral(np.array([1., 0, 0]), np.zeros(3), np.array([0., 0, 1]),
    ...                      np.array([0., 1, 1]))), 6)
    90.0
    """
    b0 = p0 - p1
    b1 = p2 - p1
    b2 = p3 - p2
    with np.errstate(invalid="ignore", divide="ignore"):
        b1n = b1 / np.linalg.norm(b1, axis=-1, keepdims=True)
        v = b0 - np.sum(b0 * b1n, axis=-1, keepdims=True) * b1n
        w = b2 - np.sum(b2 * b1n, axis=-1, keepdims=True) * b1n
        x = np.sum(v * w, axis=-1)
        y = np.sum(np.cross(b1n, v) * w, axis=-1)
        return np.degrees(np.arctan2(y, x))


def backbone_torsions(ens: Ensemble) -> dict[str, np.ndarray]:
    """φ, ψ, ω of every residue, arrays of shape (n_models, n_res), degrees, NaN where undefined.

    φ(i) = C(i-1)-N(i)-CA(i)-C(i); ψ(i) = N(i)-CA(i)-C(i)-N(i+1); ω(i) = CA(i-1)-C(i-1)-N(i)-CA(i)
    (the ω of the peptide bond *preceding* residue i, as used for cis-Pro). Neighbours must be
    chemically bonded (C(i-1)–N(i) < 2.0 Å), otherwise the angle is NaN (chain break).
    """
    r = np.arange(ens.n_residues)
    N = ens.xyz(r, "N")
    CA = ens.xyz(r, "CA")
    C = ens.xyz(r, "C")
    Cprev = np.full_like(C, np.nan)
    Cprev[:, 1:] = C[:, :-1]
    CAprev = np.full_like(CA, np.nan)
    CAprev[:, 1:] = CA[:, :-1]
    Nnext = np.full_like(N, np.nan)
    Nnext[:, :-1] = N[:, 1:]
    with np.errstate(invalid="ignore"):
        bonded_prev = np.linalg.norm(N - Cprev, axis=-1) < 2.0
        bonded_next = np.linalg.norm(Nnext - C, axis=-1) < 2.0
    phi = dihedral(Cprev, N, CA, C)
    psi = dihedral(N, CA, C, Nnext)
    omega = dihedral(CAprev, Cprev, N, CA)
    phi[~bonded_prev] = np.nan
    omega[~bonded_prev] = np.nan
    psi[~bonded_next] = np.nan
    return {"phi": phi, "psi": psi, "omega": omega}


_GAMMA = {"SER": "OG", "CYS": "SG", "THR": "OG1", "VAL": "CG1", "ILE": "CG1"}


def chi1(ens: Ensemble) -> np.ndarray:
    """Side-chain χ1 = N-CA-CB-Xγ per residue, (n_models, n_res) degrees, NaN where undefined."""
    r = np.arange(ens.n_residues)
    gname = np.array([_GAMMA.get(str(n), "CG") for n in ens.res_name], dtype=object)
    return dihedral(ens.xyz(r, "N"), ens.xyz(r, "CA"), ens.xyz(r, "CB"), ens.xyz(r, gname))
