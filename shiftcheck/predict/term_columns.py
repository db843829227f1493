"""Column builders of the shipped predictor terms (registered in :mod:`shiftcheck.predict.terms`).

Each builder is ``f(sf, nucleus, sel, settings) -> {name: (n_models, sel.size) array}``: ``sf`` a
:class:`~shiftcheck.predict.features.StructureFeatures`, ``sel`` the indices of the targets of
class ``nucleus``, ``settings`` a :class:`~shiftcheck.predict.terms.FeatureSettings`. They are thin
adapters over the term modules, which compute the physics vectorised over models; expensive parts
are cached on ``sf``. Through-space terms (ring currents, hydrogen bonds, peptide anisotropy,
burial, electric field) sum over :func:`surroundings`, which includes the partner chains.
Columns are finite (geometric factors that cannot be computed are 0).
"""
from __future__ import annotations

import numpy as np

from ..chem.residues import AA20
from .conformation import class_order_for, conformation_features
from .randomcoil import _methyl_key

__all__ = ["ring_factors", "offset", "neighbour", "conformation", "ring_current", "hbond", "anisotropy", "burial",
           "hbond_basis", "sidechain", "efield"]

#: Hydrogen-bond features used per nucleus class (names from shiftcheck.predict.hbond).
HBOND_FEATURES = {"H": ("hn_r3", "hn_r3_sc"), "N": ("n_hb",), "HA": ("ha_r3",), "C": ("c_hb",)}


def _residue_key(comp: str, atom: str, nucleus: str) -> str:
    if nucleus == "HMe":
        return f"{comp}.{_methyl_key(atom)}"
    if nucleus == "Haro":
        return f"{comp}.{atom[:2] if comp in ('PHE', 'TYR') else atom}"
    return comp


def surroundings(sf):
    """The ensemble the through-space terms sum over: the chain plus its partner chains
    (:func:`shiftcheck.structure.ensemble.with_partners`; the chain alone when it has none).
    Target atom indices are the same in both."""
    from ..structure.ensemble import with_partners

    return sf.cached("surroundings", lambda: with_partners(sf.ens))


def _selected(sf, nucleus: str | None) -> np.ndarray:
    idx = sf.targets.atom_index
    return idx if nucleus is None else idx[sf.targets.nucleus == nucleus]


def ring_factors(sf, model: str, nucleus: str | None = None) -> dict[str, np.ndarray]:
    """Ring-current factors per ring type, (n_models, n_targets), or for the targets of one
    nucleus class only (n_models, n_selected) — so classes without a ring term cost nothing."""
    from .ringcurrent import ring_current_factors
    from .rings import find_rings

    env = surroundings(sf)
    rings = sf.cached("rings", lambda: find_rings(env))
    return sf.cached(("ring", model, nucleus),
                     lambda: ring_current_factors(env, _selected(sf, nucleus), model, rings=rings))


def offset(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """``const`` and one indicator per residue type (side chains per atom group, ``res:LEU.HD1``)."""
    m = sf.ens.n_models
    t = sf.targets
    cols = {"const": np.ones((m, sel.size))}
    seen: dict = {}                       # one key per distinct (residue, atom)
    keys = np.array([seen[ca] if ca in seen else seen.setdefault(ca, _residue_key(*ca, nucleus))
                     for ca in zip(map(str, t.comp_id[sel]), map(str, t.atom_id[sel]))], dtype=object)
    if keys.size:
        kinds, which = np.unique(keys, return_inverse=True)
        for i, k in enumerate(kinds):
            cols[f"res:{k}"] = np.broadcast_to((which == i).astype(float), (m, sel.size))
    return cols


def neighbour(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """Indicators of the preceding / following residue type (``prev:PRO``, ``next:GLY``)."""
    m = sf.ens.n_models
    ri = sf.targets.res_index[sel]
    rn = np.asarray(sf.ens.res_name).astype(str)
    n_res = rn.size
    cols = {}
    for tag, shift in (("prev", -1), ("next", 1)):
        j = ri + shift
        ok = (j >= 0) & (j < n_res)
        nb = np.where(ok, rn[np.clip(j, 0, n_res - 1)], "")
        for aa in AA20:
            cols[f"{tag}:{aa}"] = np.broadcast_to((nb == aa).astype(float), (m, sel.size))
    return cols


def conformation(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """φ/ψ Fourier basis, neighbour torsions, χ1 (:mod:`shiftcheck.predict.conformation`)."""
    conf = settings.conformation
    cn, cf = conformation_features(sf.torsions, sf.ens.res_name, nucleus,
                                   class_order_for(conf.get("order", 2), nucleus), conf.get("class_order", 1),
                                   conf.get("neighbours"), conf.get("chi1"),
                                   conf.get("type_order"))
    ri = sf.targets.res_index[sel]
    return {f"conf:{n}": cf[:, ri, k] for k, n in enumerate(cn)}


def ring_current(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """Summed geometric factor per ring type (:mod:`shiftcheck.predict.ringcurrent`)."""
    return {f"ring:{rt}": np.nan_to_num(g) for rt, g in ring_factors(sf, settings.ring_model, nucleus).items()}


def hbond(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """Fixed-form hydrogen-bond features of the class (:mod:`shiftcheck.predict.hbond`)."""
    if nucleus not in HBOND_FEATURES:
        return {}
    from .hbond import hbond_features

    hb = sf.cached("hbond", lambda: hbond_features(surroundings(sf), sf.targets.atom_index))
    return {f"hb:{f}": np.nan_to_num(np.asarray(hb[f], float)[:, sel]) for f in HBOND_FEATURES[nucleus]}


def hbond_basis(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """Fitted distance/angle basis of H···O contacts (:mod:`shiftcheck.predict.hbond_basis`)."""
    from .hbond_basis import basis_features

    basis = sf.cached("hbond_basis", lambda: basis_features(surroundings(sf), sf.targets.atom_index))
    return {f: g[:, sel] for f, g in basis.items()}


def sidechain(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """χ1/χ2 Fourier terms per side-chain class (:mod:`shiftcheck.predict.sidechain`; orders in
    the ``conformation`` setting's ``sidechain`` entry)."""
    from .sidechain import chi2, sidechain_features

    if "chi2" not in sf.torsions:
        sf.torsions["chi2"] = chi2(sf.ens)
    sn, sfe = sidechain_features(sf.torsions, sf.ens.res_name, (settings.conformation.get("sidechain") or {}).get(nucleus))
    ri = sf.targets.res_index[sel]
    return {f"sc:{n}": sfe[:, ri, k] for k, n in enumerate(sn)}


def anisotropy(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """Peptide-group McConnell terms (:mod:`shiftcheck.predict.anisotropy`)."""
    from .anisotropy import anisotropy_features

    got = sf.cached(("anisotropy", nucleus),
                    lambda: anisotropy_features(surroundings(sf), _selected(sf, nucleus)))
    return {f"aniso:{f}": np.nan_to_num(g) for f, g in got.items()}


def burial(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """Contact density and half-sphere exposure (:mod:`shiftcheck.predict.burial`)."""
    import json

    from .burial import burial_features

    got = sf.cached(("burial", nucleus, json.dumps(settings.burial, sort_keys=True)),
                    lambda: burial_features(surroundings(sf), _selected(sf, nucleus), settings.burial))
    return {f: np.nan_to_num(g) for f, g in got.items()}


def efield(sf, nucleus, sel, settings) -> dict[str, np.ndarray]:
    """Buckingham electric-field terms of H/HA (:mod:`shiftcheck.predict.efield`)."""
    from .efield import efield_features

    got = sf.cached(("efield", nucleus),
                    lambda: efield_features(surroundings(sf), _selected(sf, nucleus)))
    return {f"ef:{f}": g for f, g in got.items()}
