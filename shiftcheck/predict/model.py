"""The shift predictor: random coil + fitted linear terms, vectorised over the model stack.

For atom a of residue i in model m::

    δ(m, a) = δ_rc(res_i, a; res_i+1, ω_i, SG–SG, T, pH)
              + Σ_k w_k(nucleus) · f_k(m, a)

with δ_rc from :mod:`shiftcheck.predict.randomcoil` and the features f_k from
:mod:`shiftcheck.predict.features` (residue/neighbour offsets, φ/ψ Fourier basis, ring-current
factors, hydrogen-bond terms, peptide-group anisotropy). The coefficients w come from a parameter file
(:mod:`shiftcheck.predict.params`), one set per ring-current model.
"""
from __future__ import annotations

import dataclasses
from typing import TYPE_CHECKING

import numpy as np

from ..errors import ParameterError
from .features import GROUP_TERM, StructureFeatures
from .params import load_params
from .prediction import Prediction

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["Predictor", "predict", "TERMS"]

#: Terms reported in :attr:`Prediction.terms`, in order.
TERMS = ("random_coil", "sequence", "conformation", "ring_current", "hbond", "anisotropy", "burial")


class Predictor:
    """Predict chemical shifts of every model of an ensemble.

    Parameters
    ----------
    params : None, path or dict
        Parameter file (None: the shipped defaults, ``shiftcheck/data/params_default.json``).
    ring_model : str, optional
        'haigh-mallion', 'johnson-bovey' or 'point-dipole'; default: the file's default.

    Examples
    --------
    >>> from shiftcheck.io.coords import read_models            # doctest: +SKIP
    >>> pred = Predictor().predict(read_models("1D3Z.pdb")[0])   # doctest: +SKIP
    >>> pred.values.shape                                        # doctest: +SKIP
    (10, 1100)
    """

    def __init__(self, params=None, ring_model: str | None = None):
        self.params = load_params(params)
        self.ring_model = ring_model or self.params["default_ring_model"]["value"]
        if self.ring_model not in self.params["coefficients"]:
            raise ParameterError(
                f"ring model '{self.ring_model}' has no coefficients in the parameter file "
                f"(available: {', '.join(self.params['coefficients'])})",
                path=self.params.get("_path"))

    def features(self, ens: Ensemble, conditions=None) -> StructureFeatures:
        """The structural features of ``ens`` (reusable for several predictions)."""
        return StructureFeatures.from_ensemble(ens, conditions, self.params["random_coil"])

    def predict(self, ens: Ensemble, conditions=None, features: StructureFeatures | None = None) -> Prediction:
        """Predicted shifts of all target atoms in all models, with each term separately.

        Parameters
        ----------
        ens : Ensemble
        conditions : SampleConditions, optional
            Temperature and pH of the sample (random-coil corrections).
        features : StructureFeatures, optional
            Precomputed features of ``ens`` (must use the same conditions).

        Returns
        -------
        Prediction
        """
        sf = features or self.features(ens, conditions)
        t = sf.targets
        n_models, n = ens.n_models, len(t)
        terms = {name: np.zeros((n_models, n)) for name in TERMS}
        terms["random_coil"] = sf.rc.copy()
        coeffs = self.params["coefficients"][self.ring_model]
        predicted = np.zeros(n, bool)
        for nuc, block in coeffs.items():
            names = list(block["names"])
            groups = tuple(self.params["groups"][nuc])
            if not names:
                continue
            conf = self.params.get("conformation", {})
            try:
                _, grp, X, sel = sf.matrix(nuc, names, groups, self.ring_model, conf,
                                          self.params.get("burial"))
            except ParameterError as exc:     # name the parameter file
                raise ParameterError(exc.message, path=exc.path or self.params.get("_path")) from None
            w = np.asarray(block["values"], float)
            grp = np.asarray(grp)
            for g in np.unique(grp):
                term = GROUP_TERM[g]
                terms[term][:, sel] += X[:, :, grp == g] @ w[grp == g]
            predicted[sel] = True
        values = sum(terms.values())
        values[:, ~predicted] = np.nan
        values[np.isnan(ens.coords[:, t.atom_index, 0])] = np.nan   # atom absent from that model
        return Prediction(ensemble_name=ens.name, model_names=list(ens.model_names),
                          chain_id=ens.chain_id, res_index=t.res_index.copy(),
                          res_seq=np.asarray(ens.res_seq)[t.res_index], comp_id=t.comp_id.astype(str),
                          atom_id=t.atom_id.astype(str), nucleus=t.nucleus.astype(str),
                          values=values, terms=terms,
                          params_source=str(self.params.get("_path", "<dict>")) + f" [{self.ring_model}]")

    def predict_many(self, ensembles, conditions=None, max_models: int = 1024) -> list[Prediction]:
        """Predictions of several ensembles, equal to ``[predict(e) for e in ensembles]``
        (exactly: no computed number depends on the other models of a stack): runs of consecutive stack-compatible ensembles
        (:func:`shiftcheck.structure.ensemble.stack_compatible` — the files of one decoy set)
        are predicted as one model stack of at most ``max_models`` models and split again, so
        the per-topology work (targets, random-coil table, design-matrix layout, ring and
        hydrogen-bond partners) is done once per run instead of once per file."""
        from ..structure.ensemble import stack_compatible, stack_ensembles

        ensembles = list(ensembles)
        out: list[Prediction] = []
        k = 0
        while k < len(ensembles):
            group, n = [ensembles[k]], ensembles[k].n_models
            while (k + len(group) < len(ensembles) and n + ensembles[k + len(group)].n_models <= max_models
                   and stack_compatible(group[0], ensembles[k + len(group)])):
                n += ensembles[k + len(group)].n_models
                group.append(ensembles[k + len(group)])
            k += len(group)
            if len(group) == 1:
                out.append(self.predict(group[0], conditions))
                continue
            p = self.predict(stack_ensembles(group), conditions)
            a = 0
            for e in group:
                b = a + e.n_models
                out.append(dataclasses.replace(p, ensemble_name=e.name, model_names=list(e.model_names),
                                               res_index=p.res_index.copy(), res_seq=p.res_seq.copy(),
                                               comp_id=p.comp_id.copy(), atom_id=p.atom_id.copy(),
                                               nucleus=p.nucleus.copy(), values=p.values[a:b].copy(),
                                               terms={t: v[a:b].copy() for t, v in p.terms.items()}))
                a = b
        return out


def predict(ens: Ensemble, params=None, ring_model: str | None = None, conditions=None) -> Prediction:
    """Convenience wrapper: ``Predictor(params, ring_model).predict(ens, conditions)``."""
    return Predictor(params, ring_model).predict(ens, conditions)
