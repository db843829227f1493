"""Electric-field features of backbone atoms and CB (Buckingham 1960), vectorised over models.

Buckingham (1960, Can. J. Chem. 38:300) writes the shielding change of a proton bonded to
atom X in an external electric field **E** as ``Δσ = −A E_z − B E²`` (form from memory), E_z the
field component along the X–H bond. In a protein the field comes from the partial charges of
the other residues, so it changes with packing: the same φ/ψ of a residue gives a different
field when the helix next to it moves. Both terms are linear in their coefficients A and B,
which are fitted with the other terms; this module gives the geometric parts:

* ``ef_bb`` — Σ_j q_j (r_H − r_j)·û / |r_H − r_j|³ over the backbone peptide charges,
* ``ef_sc`` — the same over the ionised side-chain and terminal charges,
* ``ef_sq`` — |E|² of all charges together,

û the unit vector X → H (N → H for amide H, CA → HA for HA/HA2/HA3). Units e Å⁻² (``ef_bb``,
``ef_sc``) and e² Å⁻⁴ (``ef_sq``); Coulomb's constant and the sign of the physical coefficient
are left to the fit. The field is that of point charges in vacuum (no dielectric screening, so
the fit absorbs a mean screening factor).

Charges (``data/efield.json``): Kabsch & Sander's peptide charges C +0.42, O −0.42, N −0.20,
H +0.20 e on every bonded peptide group C(j) O(j) N(j+1) H(j+1) (H placed from N, C, O as they
do, so that models with and without hydrogens see the same charges; none on a proline N), formal
charges on Asp, Glu, Lys, Arg and the chain termini. Excluded for a proton of residue i: the
peptide groups i−1 and i (they hold atoms of residue i, so their field follows from the local
conformation the torsion terms describe) and residue i's own side-chain and terminal charges
(the same for every target atom of residue i).
The same field, at the atom and projected on the N–H, C=O, CA–HA or CA–CB bond it carries, is
computed for backbone N, C, CA and for CB (the bond's polarisation by the field; applying the
proton form to heavy atoms is shiftcheck's extrapolation, kept where validation shows a gain);
other targets (methyl and aromatic protons) get 0.
"""
from __future__ import annotations

from functools import lru_cache
from typing import TYPE_CHECKING

import numpy as np

from ..datafiles import load_data, values
from .rings import pairs_within

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["efield_parameters", "charge_sites", "field_at", "efield_features", "AXIS"]

#: Target atom name -> the two atoms (same residue) whose vector is the field's projection axis:
#: the X–H bond for protons; for the backbone heavy atoms the N–H, C=O and CA–HA bond they carry
#: (Gly CA: HA2; a Pro N has no H and gets 0); for CB the CA→CB bond.
AXIS = {"H": ("N", "H"), "HA": ("CA", "HA"), "HA2": ("CA", "HA2"), "HA3": ("CA", "HA3"),
        "N": ("N", "H"), "C": ("C", "O"), "CA": ("CA", "HA"), "CB": ("CA", "CB")}


@lru_cache(maxsize=1)
def efield_parameters() -> dict:
    """Constants from ``data/efield.json`` (values only)."""
    return {k: v["value"] for k, v in values(load_data("efield.json")).items()}


def charge_sites(ens: Ensemble) -> dict[str, np.ndarray]:
    """Every point charge of every model.

    Returns
    -------
    dict with ``xyz`` (n_models, n_sites, 3; NaN where an atom is absent), ``q`` (n_sites,) in e,
    ``backbone`` (n_sites,) bool (peptide charges), ``lo``/``hi`` (n_sites,) int: the site is
    excluded for protons of residues lo..hi (peptide group j: j..j+1; a side chain of k: k..k).
    """
    par = efield_parameters()
    pq = par["peptide_charges"]
    n_res = ens.n_residues
    r = np.arange(n_res)
    c, o, n = ens.xyz(r, "C"), ens.xyz(r, "O"), ens.xyz(r, "N")
    rn = np.asarray(ens.res_name).astype(str)
    # peptide group j = C(j) O(j) N(j+1) H(j+1), where C(j)-N(j+1) is bonded in every model
    n_next = n[:, 1:]
    with np.errstate(invalid="ignore"):
        bonded = (np.linalg.norm(n_next - c[:, :-1], axis=-1) < 2.0).all(axis=0)
    j = np.flatnonzero(bonded)
    co = c[:, j] - o[:, j]
    with np.errstate(invalid="ignore", divide="ignore"):
        h = n_next[:, j] + float(par["amide_h_bond"]) * co / np.linalg.norm(co, axis=-1, keepdims=True)
    donor = rn[j + 1] != "PRO"
    xyz = [c[:, j], o[:, j], n_next[:, j][:, donor], h[:, donor]]
    q = [np.full(j.size, pq["C"]), np.full(j.size, pq["O"]),
         np.full(donor.sum(), pq["N"]), np.full(donor.sum(), pq["H"])]
    lo = [j, j, j[donor], j[donor]]
    bb = [np.ones(j.size, bool)] * 2 + [np.ones(donor.sum(), bool)] * 2
    # side chains and termini
    names = np.asarray(ens.atom_name).astype(str)
    atom_res = np.asarray(ens.atom_res, dtype=np.int64)
    idx, qs = [], []
    for res, atoms in par["side_chain_charges"].items():
        for atom, qa in atoms.items():
            hit = np.flatnonzero((names == atom) & (rn[atom_res] == res))
            idx.append(hit), qs.append(np.full(hit.size, float(qa)))
    term = par["terminal_charges"]
    starts = [int(x) for x in getattr(ens, "chain_starts", (0,))]
    ends = [x - 1 for x in starts[1:]] + [n_res - 1]
    for atom, qa in term.items():
        for res in (starts if atom == "N" else ends):       # termini of every chain
            k = ens.index(res, atom)
            if k >= 0:
                idx.append(np.array([k])), qs.append(np.array([float(qa)]))
    idx = np.concatenate(idx) if idx else np.zeros(0, np.int64)
    qs = np.concatenate(qs) if qs else np.zeros(0)
    # a terminal atom carries its terminal charge in place of its peptide charge: the first N is
    # in no peptide group (group j holds N(j+1)); the last residue's O is in none either (no j+1)
    xyz.append(ens.coords[:, idx])
    q.append(qs)
    lo.append(atom_res[idx])
    bb.append(np.zeros(idx.size, bool))
    lo_all = np.concatenate(lo).astype(np.int64)
    hi_all = lo_all + np.concatenate([np.ones(sum(a.size for a in lo[:4]), np.int64),
                                      np.zeros(idx.size, np.int64)])
    return {"xyz": np.concatenate(xyz, axis=1), "q": np.concatenate(q), "backbone": np.concatenate(bb),
            "lo": lo_all, "hi": hi_all}


def field_at(points: np.ndarray, res: np.ndarray, sites: dict, cutoff: float) -> tuple[np.ndarray, np.ndarray]:
    """Field (e Å⁻²) at ``points`` (n_models, n_p, 3), target atoms of residues ``res`` (n_p,),
    split into the backbone and the other charges: two arrays (n_models, n_p, 3). Sites within
    ``cutoff`` Å and not excluded for the point's residue (``lo <= res <= hi``) contribute."""
    n_models, n_p = points.shape[:2]
    out = np.zeros((2, n_models * n_p, 3))
    m, i, s, dist = pairs_within(points, sites["xyz"], cutoff)
    keep = ~((sites["lo"][s] <= res[i]) & (res[i] <= sites["hi"][s])) & (dist > 1e-6)
    m, i, s, dist = m[keep], i[keep], s[keep], dist[keep]
    d = points[m, i] - sites["xyz"][m, s]
    f = sites["q"][s] / dist ** 3
    flat = m * n_p + i
    for kind in (0, 1):
        sel = sites["backbone"][s] if kind == 0 else ~sites["backbone"][s]
        for k in range(3):
            out[kind, :, k] = np.bincount(flat[sel], weights=f[sel] * d[sel, k], minlength=n_models * n_p)
    return out[0].reshape(n_models, n_p, 3), out[1].reshape(n_models, n_p, 3)


def efield_features(ens: Ensemble, targets: np.ndarray, cutoff: float | None = None) -> dict[str, np.ndarray]:
    """``ef_bb``, ``ef_sc`` (e Å⁻²) and ``ef_sq`` (e² Å⁻⁴) of the targets (n_models, n_targets);
    0 for targets not in :data:`AXIS` or whose axis atoms are absent."""
    rc = float(efield_parameters()["cutoff"] if cutoff is None else cutoff)
    targets = np.asarray(targets, dtype=np.int64).ravel()
    n_models, n_t = ens.n_models, targets.size
    out = {k: np.zeros((n_models, n_t)) for k in ("ef_bb", "ef_sc", "ef_sq")}
    names = np.asarray(ens.atom_name).astype(str)
    have = targets >= 0
    t_name = np.where(have, names[np.maximum(targets, 0)], "")
    use = np.flatnonzero(np.isin(t_name, list(AXIS)))
    if use.size == 0:
        return out
    res = np.asarray(ens.atom_res, dtype=np.int64)[targets[use]]
    rn = np.asarray(ens.res_name).astype(str)[res]
    to_name = [("HA2" if r == "GLY" and a == "CA" else AXIS[a][1]) for a, r in zip(t_name[use], rn)]
    a0 = ens.indices(res, np.array([AXIS[a][0] for a in t_name[use]], dtype=object))
    a1 = ens.indices(res, np.array(to_name, dtype=object))
    ok = (a0 >= 0) & (a1 >= 0)
    use, res, a0, a1 = use[ok], res[ok], a0[ok], a1[ok]
    hx = ens.coords[:, targets[use]]
    u = ens.coords[:, a1] - ens.coords[:, a0]
    with np.errstate(invalid="ignore", divide="ignore"):
        u = u / np.linalg.norm(u, axis=-1, keepdims=True)
    e_bb, e_sc = field_at(hx, res, charge_sites(ens), rc)
    fin = np.isfinite(u).all(axis=-1)
    out["ef_bb"][:, use] = np.where(fin, np.einsum("mpk,mpk->mp", e_bb, np.nan_to_num(u)), 0.0)
    out["ef_sc"][:, use] = np.where(fin, np.einsum("mpk,mpk->mp", e_sc, np.nan_to_num(u)), 0.0)
    out["ef_sq"][:, use] = np.where(fin, ((e_bb + e_sc) ** 2).sum(axis=-1), 0.0)
    return out
