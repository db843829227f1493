"""Assemble the predictor's design matrix: target atoms, fixed random-coil part, feature columns.

Every fitted term of the predictor is linear in its coefficients, so a prediction is
``δ = δ_rc + X · w`` per nucleus class, where ``δ_rc`` holds the random-coil table with its
published corrections (:mod:`shiftcheck.predict.randomcoil`) and the columns of X belong to named
groups, each reported as one term of the :class:`~shiftcheck.predict.prediction.Prediction`:

=============  ==============  ===================================================================
group          term            columns
=============  ==============  ===================================================================
offset         sequence        ``const`` and one indicator per residue type (``res:ALA``; side
                               chains per atom group, ``res:LEU.HD1``); fitted on top of the table
neighbour      sequence        indicators of the preceding / following residue (``prev:PRO``)
conformation   conformation    φ/ψ Fourier basis, neighbour torsions, χ1
                               (:mod:`shiftcheck.predict.conformation`)
ring_current   ring_current    summed geometric factor per ring type (``ring:PHE`` ...)
hbond          hbond           hydrogen-bond features (``hb:hn_r3`` ...)
anisotropy     anisotropy      peptide-group McConnell terms (``aniso:co_aniso_x``, ``_z``;
                               :mod:`shiftcheck.predict.anisotropy`)
burial         burial          contact density and half-sphere exposure (``bur:8``, ``hse:up``;
                               :mod:`shiftcheck.predict.burial`)
hbond_basis    hbond           fitted distance/angle basis of H···O contacts (``hbx:bb_r2.2_lin``;
                               :mod:`shiftcheck.predict.hbond_basis`)
sidechain      conformation    χ1/χ2 Fourier terms per side-chain class (``sc:beta_chi1_cos1``;
                               :mod:`shiftcheck.predict.sidechain`; orders in the ``conformation``
                               setting's ``sidechain`` entry)
=============  ==============  ===================================================================
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from ..chem.nuclei import AROMATIC_PROTONS, METHYL_PROTONS, nucleus_class
from ..chem.residues import AA20
from ..structure.geometry import backbone_torsions, chi1
from .conformation import conformation_features
from .randomcoil import _methyl_key, load_table, random_coil

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["GROUP_TERM", "HBOND_FEATURES", "Targets", "StructureFeatures", "find_targets"]

GROUP_TERM = {"offset": "sequence", "neighbour": "sequence", "conformation": "conformation",
              "ring_current": "ring_current", "hbond": "hbond", "anisotropy": "anisotropy",
              "burial": "burial", "hbond_basis": "hbond", "sidechain": "conformation"}
#: Hydrogen-bond features used per nucleus class (names from shiftcheck.predict.hbond).
HBOND_FEATURES = {"H": ("hn_r3", "hn_r3_sc"), "N": ("n_hb",), "HA": ("ha_r3",), "C": ("c_hb",)}
_BACKBONE_NAMES = ("H", "HA", "HA2", "HA3", "CA", "CB", "C", "N")


@dataclass
class Targets:
    """Atoms to predict (one entry per atom present in the ensemble)."""

    res_index: np.ndarray
    atom_id: np.ndarray
    nucleus: np.ndarray
    comp_id: np.ndarray
    atom_index: np.ndarray

    def __len__(self) -> int:
        return int(self.res_index.size)


def find_targets(ens: Ensemble) -> Targets:
    """Every atom of a nucleus class (:func:`shiftcheck.chem.nuclei.nucleus_class`) present in ``ens``."""
    present = ~np.all(np.isnan(ens.coords[..., 0]), axis=0)
    cand = set(_BACKBONE_NAMES)
    for d in (METHYL_PROTONS, AROMATIC_PROTONS):
        for names in d.values():
            cand.update(names)
    ri, an, nu, ai = [], [], [], []
    for i, (r, a) in enumerate(zip(ens.atom_res, ens.atom_name)):
        a = str(a)
        if a not in cand or not present[i]:
            continue
        cls = nucleus_class(str(ens.res_name[r]), a)
        if cls is None or (a == "HA" and ens.res_name[r] == "GLY"):
            continue
        ri.append(int(r)), an.append(a), nu.append(cls), ai.append(i)
    order = np.lexsort((np.array(ai), np.array(ri))) if ri else np.zeros(0, int)
    ri = np.array(ri, dtype=np.int64)[order]
    return Targets(res_index=ri, atom_id=np.array(an, dtype=object)[order],
                   nucleus=np.array(nu, dtype=object)[order],
                   comp_id=np.asarray(ens.res_name, dtype=object)[ri],
                   atom_index=np.array(ai, dtype=np.int64)[order])


def _residue_key(comp: str, atom: str, nucleus: str) -> str:
    if nucleus == "HMe":
        return f"{comp}.{_methyl_key(atom)}"
    if nucleus == "Haro":
        return f"{comp}.{atom[:2] if comp in ('PHE', 'TYR') else atom}"
    return comp


@dataclass
class StructureFeatures:
    """Everything structural the predictor needs from one ensemble, computed once.

    Ring-current and hydrogen-bond factors are computed lazily (per ring model) and cached.
    """

    ens: object
    targets: Targets
    torsions: dict
    rc: np.ndarray  # (n_models, n_targets) fixed random-coil part
    _ring: dict = field(default_factory=dict)
    _hb: dict | None = None
    _rings: object = None
    _aniso: dict = field(default_factory=dict)
    _burial: dict = field(default_factory=dict)
    _hbx: dict | None = None

    @classmethod
    def from_ensemble(cls, ens: Ensemble, conditions=None, table: dict | None = None) -> "StructureFeatures":
        t = find_targets(ens)
        tors = backbone_torsions(ens)
        tors["chi1"] = chi1(ens)
        rc = random_coil(ens, t.res_index, t.atom_id, t.nucleus, tors["omega"], conditions,
                         table or load_table())
        return cls(ens=ens, targets=t, torsions=tors, rc=rc)

    def ring(self, model: str, nucleus: str | None = None) -> dict[str, np.ndarray]:
        """Ring-current factors per ring type, (n_models, n_targets), or for the targets of one
        nucleus class only (n_models, n_selected) — so classes without a ring term cost nothing."""
        key = (model, nucleus)
        if key not in self._ring:
            from .ringcurrent import ring_current_factors
            from .rings import find_rings

            if self._rings is None:
                self._rings = find_rings(self.ens)
            idx = self.targets.atom_index
            if nucleus is not None:
                idx = idx[self.targets.nucleus == nucleus]
            self._ring[key] = ring_current_factors(self.ens, idx, model, rings=self._rings)
        return self._ring[key]

    def hbond(self) -> dict[str, np.ndarray]:
        if self._hb is None:
            from .hbond import hbond_features

            self._hb = hbond_features(self.ens, self.targets.atom_index)
        return self._hb

    def hbond_basis(self) -> dict[str, np.ndarray]:
        """Fitted-shape hydrogen-bond basis of all targets (cached)."""
        if getattr(self, "_hbx", None) is None:
            from .hbond_basis import basis_features

            self._hbx = basis_features(self.ens, self.targets.atom_index)
        return self._hbx

    def anisotropy(self, nucleus: str) -> dict[str, np.ndarray]:
        """McConnell peptide-group features of the targets of one nucleus class (cached)."""
        if nucleus not in self._aniso:
            from .anisotropy import anisotropy_features

            sel = np.flatnonzero(self.targets.nucleus == nucleus)
            self._aniso[nucleus] = anisotropy_features(self.ens, self.targets.atom_index[sel])
        return self._aniso[nucleus]

    def burial(self, nucleus: str, settings: dict | None = None) -> dict[str, np.ndarray]:
        """Burial features of the targets of one nucleus class (cached per settings)."""
        import json

        key = (nucleus, json.dumps(settings, sort_keys=True))
        if key not in self._burial:
            from .burial import burial_features

            sel = np.flatnonzero(self.targets.nucleus == nucleus)
            self._burial[key] = burial_features(self.ens, self.targets.atom_index[sel], settings)
        return self._burial[key]

    def matrix(self, nucleus: str, names: list[str] | None, groups: tuple[str, ...],
               ring_model: str, conformation: dict | tuple[int, int] = (2, 1),
               burial: dict | None = None
               ) -> tuple[list[str], list[str], np.ndarray, np.ndarray]:
        """Design matrix of one nucleus class.

        Returns (names, groups_of_columns, X (n_models, n_sel, k), selected target indices).
        With ``names`` given, the columns are returned in that order (unknown ones raise ParameterError).
        ``conformation`` is the ``conformation`` setting (dict with the Fourier orders ``order``,
        ``class_order`` and optionally ``neighbours``, ``chi1``; see
        :func:`shiftcheck.predict.conformation.conformation_features`) or just the two orders.
        ``burial`` is the ``burial`` setting (:func:`shiftcheck.predict.burial.burial_features`).
        """
        conf = (dict(conformation) if isinstance(conformation, dict)
                else {"order": conformation[0], "class_order": conformation[1]})
        sel = np.flatnonzero(self.targets.nucleus == nucleus)
        ri = self.targets.res_index[sel]
        m = self.ens.n_models
        cols: dict[str, tuple[str, np.ndarray]] = {}
        if "offset" in groups:
            cols["const"] = ("offset", np.ones((m, sel.size)))
            keys = np.array([_residue_key(str(c), str(a), nucleus) for c, a in
                             zip(self.targets.comp_id[sel], self.targets.atom_id[sel])], dtype=object)
            for k in np.unique(keys) if keys.size else []:
                cols[f"res:{k}"] = ("offset", np.broadcast_to((keys == k).astype(float), (m, sel.size)))
        if "neighbour" in groups:
            rn = np.asarray(self.ens.res_name).astype(str)
            n_res = rn.size
            for tag, shift in (("prev", -1), ("next", 1)):
                j = ri + shift
                ok = (j >= 0) & (j < n_res)
                nb = np.where(ok, rn[np.clip(j, 0, n_res - 1)], "")
                for aa in AA20:
                    cols[f"{tag}:{aa}"] = ("neighbour", np.broadcast_to((nb == aa).astype(float), (m, sel.size)))
        if "conformation" in groups:
            cn, cf = conformation_features(self.torsions, self.ens.res_name, nucleus,
                                           int(conf.get("order", 2)), int(conf.get("class_order", 1)),
                                           conf.get("neighbours"), conf.get("chi1"))
            for k, n in enumerate(cn):
                cols[f"conf:{n}"] = ("conformation", cf[:, ri, k])
        if "ring_current" in groups:
            for rt, g in self.ring(ring_model, nucleus).items():
                cols[f"ring:{rt}"] = ("ring_current", np.nan_to_num(g))
        if "hbond" in groups and nucleus in HBOND_FEATURES:
            hb = self.hbond()
            for f in HBOND_FEATURES[nucleus]:
                cols[f"hb:{f}"] = ("hbond", np.nan_to_num(np.asarray(hb[f], float)[:, sel]))
        if "hbond_basis" in groups:
            for f, g in self.hbond_basis().items():
                cols[f] = ("hbond_basis", g[:, sel])
        if "sidechain" in groups:
            from .sidechain import chi2, sidechain_features

            if "chi2" not in self.torsions:
                self.torsions["chi2"] = chi2(self.ens)
            sn, sfe = sidechain_features(self.torsions, self.ens.res_name,
                                         (conf.get("sidechain") or {}).get(nucleus))
            for k, n in enumerate(sn):
                cols[f"sc:{n}"] = ("sidechain", sfe[:, ri, k])
        if "anisotropy" in groups:
            for f, g in self.anisotropy(nucleus).items():
                cols[f"aniso:{f}"] = ("anisotropy", np.nan_to_num(g))
        if "burial" in groups:
            for f, g in self.burial(nucleus, burial).items():
                cols[f] = ("burial", np.nan_to_num(g))
        if names is None:
            names = list(cols)
        X = np.zeros((m, sel.size, len(names)))
        grp = []
        for k, n in enumerate(names):
            if n in cols:
                grp.append(cols[n][0])
                X[:, :, k] = cols[n][1]
            else:  # an indicator never seen in this protein is 0, anything else is an error
                if not n.startswith(("res:", "prev:", "next:")):
                    from ..errors import ParameterError

                    raise ParameterError(f"unknown feature column {n!r} for nucleus {nucleus} "
                                         f"(groups {', '.join(groups)}; not computed by this version)")
                grp.append("offset" if n.startswith("res:") else "neighbour")
        return list(names), grp, X, sel

