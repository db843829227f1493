"""Hydrogen-bond features for shift prediction, vectorised over the model stack.

Amide-proton shifts move downfield as the H···O distance shrinks, roughly as r⁻³ (Wagner,
Pardi & Wüthrich 1983, J. Am. Chem. Soc. 105:5948 — form from memory); HA shifts respond to
C–H···O contacts in the same way. Each contact between a proton X–H and an oxygen acceptor O
contributes

    t = w · (1/r³ − 1/r_c³)   for r = |H − O| < r_c,   w = max(0, −cos∠(X–H···O))²,

i.e. w = cos²(180° − ∠XHO) for angles above 90° and 0 otherwise: 1 for a linear bond, 0 at a
right angle. t is in Å⁻³, continuous (zero) at the cutoff r_c. The constants (r_c = 3.5 Å, the
counting criterion, the acceptor list) and their sources are in ``data/hbond.json``.

Acceptors: backbone O and OXT of every residue; Asp OD1/OD2, Glu OE1/OE2, Asn OD1, Gln OE1,
Ser OG, Thr OG1, Tyr OH. Excluded as covalently close: every acceptor of the proton's own
residue and the backbone O of the preceding residue. Features are linear in their coefficients,
fitted elsewhere; signs: t ≥ 0, a larger t means a shorter/straighter bond (expected downfield).
"""
from __future__ import annotations

from functools import lru_cache
from typing import TYPE_CHECKING

import numpy as np

from ..datafiles import load_data, values
from .rings import pairs_within

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["hbond_parameters", "hbond_contacts", "hbond_features", "DONOR_PARENT"]

#: Proton -> bonded heavy atom (same residue) for the donors considered.
DONOR_PARENT = {"H": "N", "HA": "CA", "HA2": "CA", "HA3": "CA"}


@lru_cache(maxsize=1)
def hbond_parameters() -> dict:
    """Constants of the hydrogen-bond features from ``data/hbond.json`` (values only)."""
    return {k: v["value"] for k, v in values(load_data("hbond.json")).items()}


def _acceptors(ens, table: dict) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    names = np.asarray(ens.atom_name).astype(str)
    rn = np.asarray(ens.res_name).astype(str)[np.asarray(ens.atom_res)]
    is_bb = np.isin(names, table["*"])
    sc = np.zeros_like(is_bb)
    for res, atoms in table.items():
        if res != "*":
            sc |= (rn == res) & np.isin(names, atoms)
    idx = np.flatnonzero(is_bb | sc)
    return idx, np.asarray(ens.atom_res)[idx], is_bb[idx]


def hbond_contacts(ens: Ensemble, cutoff: float | None = None) -> dict[str, np.ndarray]:
    """Every proton···O contact within the cutoff in every model, with its weight and term.

    Returns
    -------
    dict with arrays over contacts: ``model``, ``h`` (atom index of the proton), ``parent``
    (its heavy atom), ``o`` (acceptor atom index), ``o_backbone`` (bool), ``dist`` (Å),
    ``cos`` (cos ∠X–H···O), ``weight``, ``term`` (Å⁻³); and ``donors`` (atom indices of all
    protons considered), ``acceptors`` (atom indices of all acceptors).
    """
    par = hbond_parameters()
    rc = float(par["cutoff"] if cutoff is None else cutoff)
    names = np.asarray(ens.atom_name).astype(str)
    ares = np.asarray(ens.atom_res)
    donors = np.flatnonzero(np.isin(names, list(DONOR_PARENT)))
    parents = ens.indices(ares[donors], np.array([DONOR_PARENT[n] for n in names[donors]], dtype=object))
    acc, acc_res, acc_bb = _acceptors(ens, par["acceptors"])
    xyz = ens.coords
    m, i, j, _ = pairs_within(xyz[:, donors], xyz[:, acc], rc)
    d_res = ares[donors][i]
    keep = (acc_res[j] != d_res) & ~(acc_bb[j] & (acc_res[j] == d_res - 1))
    m, i, j = m[keep], i[keep], j[keep]
    order = np.lexsort((j, i, m))      # (model, donor, acceptor): sums independent of the stacking
    m, i, j = m[order], i[order], j[order]
    h = xyz[m, donors[i]]
    o = xyz[m, acc[j]]
    pidx = parents[i]
    x = np.where((pidx >= 0)[:, None], xyz[m, np.maximum(pidx, 0)], np.nan)
    u, v = x - h, o - h
    dist = np.linalg.norm(v, axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        cos = np.sum(u * v, axis=-1) / (np.linalg.norm(u, axis=-1) * dist)
        w = np.where(cos < 0, cos * cos, 0.0)
        term = w * (1.0 / dist ** 3 - 1.0 / rc ** 3)
    term = np.where(np.isfinite(term) & (dist < rc), term, 0.0)
    w = np.nan_to_num(w)
    return {"model": m, "h": donors[i], "parent": pidx, "o": acc[j], "o_backbone": acc_bb[j],
            "dist": dist, "cos": cos, "weight": w, "term": term, "donors": donors,
            "acceptors": acc, "slot_h": i, "slot_o": j}


def hbond_features(ens: Ensemble, targets: np.ndarray, cutoff: float | None = None) -> dict[str, np.ndarray]:
    """Hydrogen-bond features of target atoms in every model.

    Parameters
    ----------
    ens : shiftcheck.structure.ensemble.Ensemble
    targets : np.ndarray of int, shape (n_targets,)
        Atom indices (-1 allowed for an absent atom).
    cutoff : float, optional
        H···O cutoff r_c in Å (default from ``data/hbond.json``, 3.5 Å).

    Returns
    -------
    dict feature -> np.ndarray (n_models, n_targets); zero where the feature does not apply
    to the target or an atom it needs is missing:

    ``hn_r3`` (Å⁻³), amide H targets: Σ over acceptors of w·(1/r³ − 1/r_c³).
    ``hn_r3_sc`` (Å⁻³), amide H: the part of ``hn_r3`` from side-chain acceptors.
    ``hn_hbonded`` (count), amide H: acceptors with r ≤ 2.5 Å and ∠N–H···O ≥ 120°
    (Baker & Hubbard 1984 criterion, from memory).
    ``ha_r3`` (Å⁻³), HA/HA2/HA3 targets: as ``hn_r3`` for C–H···O contacts (CA–HA···O angle).
    ``n_hb`` (Å⁻³), backbone N targets: ``hn_r3`` of the residue's own amide H.
    ``c_hb`` (Å⁻³), carbonyl C targets: Σ over amide H bonded to the residue's O
    (same term, N–H···O angle; amide H of residues i and i+1 excluded).
    ``hn_dist`` (Å, not a fit feature), H and N targets: H···O distance of the contact with the
    largest term; NaN if there is none or the target is not an amide H/N.
    """
    par = hbond_parameters()
    targets = np.asarray(targets, dtype=np.int64).ravel()
    n_models, n_t = ens.n_models, targets.size
    c = hbond_contacts(ens, cutoff)
    donors, acc = c["donors"], c["acceptors"]
    nd, na = donors.size, acc.size
    names = np.asarray(ens.atom_name).astype(str)
    m, i, j, term = c["model"], c["slot_h"], c["slot_o"], c["term"]

    key_d = m * nd + i
    per_d = np.bincount(key_d, weights=term, minlength=n_models * nd).reshape(n_models, nd)
    per_d_sc = np.bincount(key_d, weights=term * ~c["o_backbone"],
                           minlength=n_models * nd).reshape(n_models, nd)
    with np.errstate(invalid="ignore"):
        bonded = ((c["dist"] <= par["hbond_distance_max"])
                  & (c["cos"] <= np.cos(np.radians(par["hbond_angle_min"]))))
    n_bond = np.bincount(key_d, weights=bonded.astype(float),
                         minlength=n_models * nd).reshape(n_models, nd)
    best = np.full(n_models * nd, np.nan)
    pos = term > 0
    if pos.any():
        order = np.lexsort((-term[pos], key_d[pos]))
        k_sorted = key_d[pos][order]
        first = np.r_[True, k_sorted[1:] != k_sorted[:-1]]
        best[k_sorted[first]] = c["dist"][pos][order][first]
    best = best.reshape(n_models, nd)

    is_amide_h = names[donors][i] == "H"
    is_o = names[acc][j] == "O"
    per_o = np.bincount(m * na + j, weights=term * (is_amide_h & is_o),
                        minlength=n_models * na).reshape(n_models, na)

    # map targets onto donor / acceptor slots
    slot_d = np.full(ens.n_atoms + 1, -1, dtype=np.int64)
    slot_d[donors] = np.arange(nd)
    slot_o = np.full(ens.n_atoms + 1, -1, dtype=np.int64)
    slot_o[acc] = np.arange(na)
    have = targets >= 0
    t_name = np.where(have, names[np.maximum(targets, 0)], "")
    t_res = np.where(have, np.asarray(ens.atom_res)[np.maximum(targets, 0)], -1)
    own_h = np.where(have, ens.indices(t_res, "H"), -1)
    own_o = np.where(have, ens.indices(t_res, "O"), -1)

    def pick(table, slots, mask, fill):
        out = np.full((n_models, n_t), fill, dtype=float)
        s = np.where(mask, slots, -1)
        ok = s >= 0
        out[:, ok] = table[:, s[ok]]
        return out

    h_slot = slot_d[np.where(have, targets, -1)]
    nh_slot = slot_d[own_h]
    is_h, is_n = t_name == "H", t_name == "N"
    is_ha = np.isin(t_name, ["HA", "HA2", "HA3"])
    hn_dist = pick(best, h_slot, is_h, np.nan)
    hn_dist[:, is_n] = pick(best, nh_slot, is_n, np.nan)[:, is_n]
    return {
        "hn_r3": pick(per_d, h_slot, is_h, 0.0),
        "hn_r3_sc": pick(per_d_sc, h_slot, is_h, 0.0),
        "hn_hbonded": pick(n_bond, h_slot, is_h, 0.0),
        "ha_r3": pick(per_d, h_slot, is_ha, 0.0),
        "n_hb": pick(per_d, nh_slot, is_n, 0.0),
        "c_hb": pick(per_o, slot_o[own_o], t_name == "C", 0.0),
        "hn_dist": hn_dist,
    }
