"""Hydrogen-bond basis with fitted distance and angle dependence, for amide H and HA (and backbone N).

:mod:`shiftcheck.predict.hbond` fixes the shape of the H···O term (r⁻³, cos² angle weight) and
fits one coefficient. Here the shape itself is fitted: each proton···O contact within the cutoff
(the same contacts, acceptors and exclusions as :func:`shiftcheck.predict.hbond.hbond_contacts`,
side-chain acceptors included) is spread over triangular distance functions
B_k(r) = max(0, 1 − |r − c_k| / h) (centres c_k and half-width h in ``data/hbond.json``), each
taken with two angle factors, 1 (any angle) and w = cos²(180° − ∠X–H···O) for ∠ > 90° (else 0),
and separately for backbone and side-chain acceptors. A linear fit of these columns is a
piecewise-linear distance dependence with a fitted angle dependence (Wagner, Pardi & Wüthrich
1983, J. Am. Chem. Soc. 105:5948, from memory, for the downfield shift of hydrogen-bonded amide
protons; the basis is shiftcheck's own). Columns are summed over contacts per proton.
"""
from __future__ import annotations

import numpy as np

from .hbond import hbond_contacts, hbond_parameters

__all__ = ["basis_features"]


def basis_features(ens, targets: np.ndarray) -> dict[str, np.ndarray]:
    """{name: (n_models, n_targets)} for target atoms (H, HA, HA2, HA3; backbone N gets the columns
    of its residue's amide H, a candidate for N that was tried and not kept; 0 for other atoms).

    Names ``hbx:bb_r2.2_any``, ``hbx:sc_r2.6_lin`` ...: acceptor kind, distance centre, angle factor.
    """
    par = hbond_parameters()
    centres = [float(c) for c in par["basis_centres"]]
    h = float(par["basis_half_width"])
    targets = np.asarray(targets, dtype=np.int64).ravel()
    c = hbond_contacts(ens)
    nd = c["donors"].size
    n_models = ens.n_models
    slot = np.full(ens.n_atoms + 1, -1, dtype=np.int64)
    slot[c["donors"]] = np.arange(nd)
    t_slot = slot[np.where(targets >= 0, targets, ens.n_atoms)]
    have = targets >= 0
    t_name = np.where(have, np.asarray(ens.atom_name).astype(str)[np.maximum(targets, 0)], "")
    is_n = t_name == "N"
    if is_n.any():      # backbone N: the contacts of the residue's own amide H
        own_h = ens.indices(np.asarray(ens.atom_res)[targets[is_n]], "H")
        t_slot[is_n] = slot[np.where(own_h >= 0, own_h, ens.n_atoms)]
    key = c["model"] * nd + c["slot_h"]
    dist = np.nan_to_num(c["dist"], nan=np.inf)
    ang = {"any": np.ones_like(dist), "lin": c["weight"]}
    kind = {"bb": c["o_backbone"], "sc": ~c["o_backbone"]}
    out = {}
    for kn, km in kind.items():
        for ck in centres:
            b = np.clip(1.0 - np.abs(dist - ck) / h, 0.0, None) * km
            for an, a in ang.items():
                per = np.bincount(key, weights=b * a, minlength=n_models * nd).reshape(n_models, nd)
                col = np.zeros((n_models, targets.size))
                ok = t_slot >= 0
                col[:, ok] = per[:, t_slot[ok]]
                out[f"hbx:{kn}_r{ck:g}_{an}"] = col
    return out
