"""Assemble the predictor's design matrix: target atoms, fixed random-coil part, feature columns.

Every fitted term of the predictor is linear in its coefficients, so a prediction is
``δ = δ_rc + X · w`` per nucleus class, where ``δ_rc`` holds the random-coil table with its
published corrections (:mod:`shiftcheck.predict.randomcoil`) and the columns of X belong to the
terms registered in :mod:`shiftcheck.predict.terms` (name, column prefixes, the output column of
the :class:`~shiftcheck.predict.prediction.Prediction` it feeds, the nucleus classes it applies
to, its column builder). :meth:`StructureFeatures.matrix` asks each term listed for a nucleus
class for its columns; nothing here names a term.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from ..chem.nuclei import AROMATIC_PROTONS, METHYL_PROTONS, nucleus_class
from ..structure.geometry import backbone_torsions, chi1
from .randomcoil import load_table, random_coil
from .terms import REGISTRY, FeatureSettings, default_groups, term_of_column

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["Targets", "StructureFeatures", "find_targets"]

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
    names = np.asarray(ens.atom_name).astype(str)
    atom_res = np.asarray(ens.atom_res, dtype=np.int64)
    res_name = np.asarray(ens.res_name).astype(str)
    ai = np.flatnonzero(np.isin(names, sorted(cand)) & present)
    an, rn = names[ai].tolist(), res_name[atom_res[ai]].tolist()
    classes: dict = {}                    # one nucleus_class call per distinct (residue, atom)
    nu = [classes[k] if k in classes else classes.setdefault(k, nucleus_class(*k)) for k in zip(rn, an)]
    keep = [c is not None and not (a == "HA" and r == "GLY") for c, a, r in zip(nu, an, rn)]
    ai = ai[np.asarray(keep, dtype=bool)] if ai.size else ai
    an = [a for a, k in zip(an, keep) if k]
    nu = [c for c, k in zip(nu, keep) if k]
    ri = atom_res[ai]
    order = np.lexsort((ai, ri)) if ri.size else np.zeros(0, int)
    ri = ri[order]
    return Targets(res_index=ri, atom_id=np.array(an, dtype=object)[order],
                   nucleus=np.array(nu, dtype=object)[order],
                   comp_id=np.asarray(ens.res_name, dtype=object)[ri],
                   atom_index=ai[order].astype(np.int64))


@dataclass
class StructureFeatures:
    """Everything structural the predictor needs from one ensemble, computed once.

    Expensive parts (geometric factors of the terms) are computed lazily by the term builders
    and cached here (:meth:`cached`), so that several ring models or fits reuse them.
    """

    ens: object
    targets: Targets
    torsions: dict
    rc: np.ndarray  # (n_models, n_targets) fixed random-coil part
    _cache: dict = field(default_factory=dict)

    @classmethod
    def from_ensemble(cls, ens: Ensemble, conditions=None, table: dict | None = None) -> "StructureFeatures":
        t = find_targets(ens)
        tors = backbone_torsions(ens)
        tors["chi1"] = chi1(ens)
        rc = random_coil(ens, t.res_index, t.atom_id, t.nucleus, tors["omega"], conditions,
                         table or load_table())
        return cls(ens=ens, targets=t, torsions=tors, rc=rc)

    def cached(self, key, compute):
        """``compute()`` once per ``key`` (hashable), then from the cache."""
        if key not in self._cache:
            self._cache[key] = compute()
        return self._cache[key]

    def matrix(self, nucleus: str, names: list[str] | None, groups: tuple[str, ...] | None,
               ring_model: str, conformation: dict | tuple[int, int] = (2, 1),
               burial: dict | None = None
               ) -> tuple[list[str], list[str], np.ndarray, np.ndarray]:
        """Design matrix of one nucleus class.

        Returns (names, term name of each column, X (n_models, n_sel, k), selected target indices).
        ``groups`` names the registered terms to use (None: those that apply to ``nucleus``,
        :func:`shiftcheck.predict.terms.default_groups`). With ``names`` given, the columns are
        returned in that order (unknown ones raise ParameterError; an indicator never seen in
        this protein is 0). ``conformation`` is the ``conformation`` setting (dict with the
        Fourier orders ``order``, ``class_order`` and optionally ``neighbours``, ``chi1``,
        ``sidechain``; see :func:`shiftcheck.predict.conformation.conformation_features`) or just
        the two orders. ``burial`` is the ``burial`` setting
        (:func:`shiftcheck.predict.burial.burial_features`).
        """
        conf = (dict(conformation) if isinstance(conformation, dict)
                else {"order": conformation[0], "class_order": conformation[1]})
        settings = FeatureSettings(ring_model, conf, burial)
        groups = tuple(default_groups().get(nucleus, ()) if groups is None else groups)
        sel = np.flatnonzero(self.targets.nucleus == nucleus)
        m = self.ens.n_models
        cols: dict[str, tuple[str, np.ndarray]] = {}
        for t in REGISTRY:
            if t.name in groups:
                for n, g in t.columns(self, nucleus, sel, settings).items():
                    cols[n] = (t.name, g)
        if names is None:
            names = list(cols)
        X = np.zeros((m, sel.size, len(names)))
        grp = []
        for k, n in enumerate(names):
            if n in cols:
                grp.append(cols[n][0])
                X[:, :, k] = cols[n][1]
                continue
            owner = term_of_column(n)
            if owner is None or not owner.indicators:
                from ..errors import ParameterError

                raise ParameterError(f"unknown feature column {n!r} for nucleus {nucleus} "
                                     f"(groups {', '.join(groups)}; not computed by this version)")
            grp.append(owner.name)      # an indicator never seen in this protein is 0
        return list(names), grp, X, sel
