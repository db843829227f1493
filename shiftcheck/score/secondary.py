"""A simple secondary-structure assignment from backbone phi/psi and N...O contacts.

Method ("phi/psi + backbone H-bond contacts", shiftcheck's own, simplified): a backbone
hydrogen bond is assumed when N(i)...O(j) < 3.5 A with |i - j| >= 3 (common practice, no source).

* H (helix): residues i..i+3 all in the helical phi/psi region (-160 < phi < -20,
  -120 < psi < 50) with the i -> i+4 contact O(i)...N(i+4); the run i..i+4 is marked H,
  and runs shorter than 4 residues are dropped.
* E (strand): residue in the extended region (-180 < phi < -40, psi > 90 or psi < -150) with
  a backbone N...O contact to a residue |i - j| > 3 that is also extended, or an extended
  residue between two such residues.
* C: everything else.
Vectorised over models: distance matrices (models, n_res, n_res).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from ..structure.geometry import backbone_torsions

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["assign_secondary", "METHOD"]

METHOD = "phi/psi regions + backbone N...O contacts < 3.5 A (shiftcheck simplified)"


def assign_secondary(ens: Ensemble) -> np.ndarray:
    """Per-model strings of H/E/C: array (n_models,) of str, one character per residue."""
    tor = backbone_torsions(ens)
    phi, psi = tor["phi"], tor["psi"]
    r = np.arange(ens.n_residues)
    N = ens.xyz(r, "N")
    O = ens.xyz(r, "O")
    with np.errstate(invalid="ignore"):
        d = np.linalg.norm(N[:, :, None, :] - O[:, None, :, :], axis=-1)   # (m, i:N, j:O)
        contact = d < 3.5
        helical = (phi > -160) & (phi < -20) & (psi > -120) & (psi < 50)
        extended = (phi > -180) & (phi < -40) & ((psi > 90) | (psi < -150))
    n = ens.n_residues
    m = ens.n_models
    ss = np.full((m, n), "C", dtype="<U1")
    if n >= 5:
        i = np.arange(n - 4)
        turn = contact[:, i + 4, i]                   # O(i)...N(i+4)
        hel4 = helical[:, i] & helical[:, i + 1] & helical[:, i + 2] & helical[:, i + 3]
        start = turn & hel4
        hmask = np.zeros((m, n), dtype=bool)
        for k in range(5):
            hmask[:, i + k] |= start
        # the N-cap (residue i of the first turn) is usually not helical in phi/psi; keep runs >= 4
        ss[hmask] = "H"
    sep = np.abs(r[:, None] - r[None, :]) > 3
    pair = (contact | np.swapaxes(contact, 1, 2)) & sep[None]
    ext_partner = (pair & extended[:, None, :]).any(axis=2)
    bridged = extended & ext_partner
    # in a sheet every other residue points its N-H/C=O away from the partner strand: an extended
    # residue between two bridged residues belongs to the strand too
    gap = np.zeros_like(bridged)
    gap[:, 1:-1] = extended[:, 1:-1] & bridged[:, :-2] & bridged[:, 2:]
    strand = (bridged | gap) & (ss != "H")
    ss[strand] = "E"
    return np.array(["".join(row) for row in ss])
