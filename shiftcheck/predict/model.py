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
from .features import StructureFeatures
from .params import load_params
from .prediction import Prediction
from .terms import OUTPUTS, term

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["Predictor", "predict", "TERMS"]

#: Terms reported in :attr:`Prediction.terms`, in order (from the registry, :mod:`shiftcheck.predict.terms`).
TERMS = OUTPUTS


class Predictor:
    """Predict chemical shifts of every model of an ensemble.

    Follows the estimator convention: ``__init__`` only stores its arguments; :meth:`fit` learns
    the coefficients from (shift list, structure) pairs and returns ``self``; the learned values
    live in ``params_`` (a complete parameter dict, :mod:`shiftcheck.predict.params`),
    ``ring_model_`` (the ring model used) and ``coef_`` ({nucleus class: (names, values)} of that
    ring model). Without :meth:`fit`, the learned values are read from the parameter file
    ``params`` the first time they are needed (or by :meth:`load`).

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
        self.params = params
        self.ring_model = ring_model

    def _learned(self, fitted: dict) -> "Predictor":
        rm = self.ring_model or fitted["default_ring_model"]["value"]
        if rm not in fitted["coefficients"]:
            raise ParameterError(
                f"ring model '{rm}' has no coefficients in the parameter file "
                f"(available: {', '.join(fitted['coefficients'])})", path=fitted.get("_path"))
        self.params_, self.ring_model_ = fitted, rm
        self.coef_ = {nuc: (list(b["names"]), [float(v) for v in b["values"]])
                      for nuc, b in fitted["coefficients"][rm].items()}
        return self

    def load(self) -> "Predictor":
        """Read the learned values from the parameter file ``params`` (validated); returns self.
        Raises ParameterError naming the file. Also loads the compiled kernels when numba is
        enabled (:func:`shiftcheck.predict._fast.preload`), so worker processes forked after
        this call share them."""
        from ._fast import preload

        self._learned(load_params(self.params))
        preload()
        return self

    def fit(self, data, settings: dict | None = None, description: str = "") -> "Predictor":
        """Learn the coefficients from (shift list, structure) pairs; returns self.

        ``data`` is a list of :class:`~shiftcheck.predict.calibrate.Pair` (read with the
        project's readers) or of already featurised :class:`~shiftcheck.predict.calibrate.Dataset`;
        ``settings`` the calibration settings (default ``data/calibration.json``). The fit is
        :func:`shiftcheck.predict.calibrate.calibrate`; its parameter dict becomes ``params_``.
        """
        from .calibrate import Pair, calibrate, load_datasets

        data = list(data)
        datasets = load_datasets(data) if data and isinstance(data[0], Pair) else data
        return self._learned(load_params(calibrate(datasets, settings, description)))

    def _check(self) -> None:
        if not hasattr(self, "params_"):
            self.load()

    def features(self, ens: Ensemble, conditions=None) -> StructureFeatures:
        """The structural features of ``ens`` (reusable for several predictions)."""
        self._check()
        return StructureFeatures.from_ensemble(ens, conditions, self.params_["random_coil"])

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
        self._check()
        sf = features or self.features(ens, conditions)
        t = sf.targets
        n_models, n = ens.n_models, len(t)
        terms = {name: np.zeros((n_models, n)) for name in TERMS}
        terms["random_coil"] = sf.rc.copy()
        p = self.params_
        predicted = np.zeros(n, bool)
        for nuc, (names, values) in self.coef_.items():
            if not names:
                continue
            try:
                _, grp, X, sel = sf.matrix(nuc, names, tuple(p["groups"][nuc]), self.ring_model_,
                                          p.get("conformation", {}), p.get("burial"))
            except ParameterError as exc:     # name the parameter file
                raise ParameterError(exc.message, path=exc.path or p.get("_path")) from None
            w = np.asarray(values, float)
            grp = np.asarray(grp)
            for g in np.unique(grp):
                terms[term(g).output][:, sel] += X[:, :, grp == g] @ w[grp == g]
            predicted[sel] = True
        values = sum(terms.values())
        values[:, ~predicted] = np.nan
        values[np.isnan(ens.coords[:, t.atom_index, 0])] = np.nan   # atom absent from that model
        return Prediction(ensemble_name=ens.name, model_names=list(ens.model_names),
                          chain_id=ens.chain_id, res_index=t.res_index.copy(),
                          res_seq=np.asarray(ens.res_seq)[t.res_index], comp_id=t.comp_id.astype(str),
                          atom_id=t.atom_id.astype(str), nucleus=t.nucleus.astype(str),
                          values=values, terms=terms,
                          params_source=str(p.get("_path", "<dict>")) + f" [{self.ring_model_}]")

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
