"""The residue rule (shiftcheck/score/outliers.py): a residue flagged as a whole when the sum of
its atoms' losses passes c times the chi-square quantile for its atom count.

References: the chi-square distribution (textbook: Σ z² of k independent standard normal z;
for k = 2 its quantile is −2 ln(1 − p) in closed form) and synthetic shifts made from a
prediction of a built protein (tests/scoring_synthetic.py; not real data).
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from shiftcheck.score.outliers import residue_classes, residue_limit, residue_rule_scale

TAIL = 0.9973


def test_limit_is_the_chi_square_quantile():
    # chi-square with 2 degrees of freedom is exponential with mean 2: quantile -2 ln(1 - p)
    assert residue_limit(2, 1.0, TAIL) == pytest.approx(-2 * math.log(1 - TAIL), rel=1e-9)
    # scale multiplies; no atoms -> no limit
    lim = residue_limit(np.array([2, 0]), 1.5, TAIL)
    assert lim[0] == pytest.approx(-3 * math.log(1 - TAIL)) and np.isnan(lim[1])


def test_limit_agrees_with_scipy_chi_square_quantile():
    # reference library: scipy.stats.chi2.ppf, for every atom count a residue can have
    from scipy.stats import chi2

    k = np.arange(1, 40)
    np.testing.assert_allclose(residue_limit(k, 1.0, TAIL), chi2.ppf(TAIL, k), rtol=1e-10)


def test_scale_is_one_for_normal_residuals_with_squared_loss():
    # Σ z² of k normal z follows chi-square(k), so the fraction above χ²_k(0.9973) is already
    # 0.27 % and the fitted scale is 1 (to sampling error: 300000 residues, 810 above)
    rng = np.random.default_rng(7)
    k = rng.integers(2, 10, 300000)
    q = np.array([np.sum(rng.normal(size=n) ** 2) for n in k])
    assert residue_rule_scale(q, k, TAIL) == pytest.approx(1.0, abs=0.04)


def test_heavier_tails_need_a_larger_scale():
    rng = np.random.default_rng(8)
    k = np.full(100000, 6)
    q = np.sum(rng.standard_t(4, size=(100000, 6)) ** 2, axis=1) / 2.0   # variance 1, heavy tails
    assert residue_rule_scale(q, k, TAIL) > 1.2


def test_classes_over_individual_models():
    flagged = np.array([[True, True, False], [True, False, False], [False, False, False]])
    counts = np.array([[5, 5, 5], [5, 5, 5], [5, 5, 5]])
    is_mean = np.array([False, False, True])
    assert list(residue_classes(flagged, counts, is_mean)) == ["every", "some", ""]


@pytest.fixture(scope="module")
def ens_pred():
    from scoring_synthetic import built_ensemble
    from shiftcheck.predict.model import Predictor

    ens = built_ensemble()
    return ens, Predictor().predict(ens)


def test_misassigned_residue_flagged_as_a_whole_without_atom_flags(ens_pred):
    # every shift of one residue moved by 2.5 of its expected errors: no atom passes 3 sigma,
    # the residue as a whole does (k atoms x 2.5^2 = 6.25 k against about 1.35 x chi2_k(0.9973))
    from scoring_synthetic import shifts_from
    from shiftcheck.score.scoring import atom_sigma, residue_error_factors, score
    from shiftcheck.structure.mapping import map_sequence

    ens, pred = ens_pred
    params = pred_params()
    vals = pred.values[0].copy()
    target = 24
    nuc = np.array([_class(a, c) for a, c in zip(pred.atom_id, pred.comp_id)], dtype=object)
    sel = (pred.res_index == target) & np.isfinite(vals) & (nuc != "")
    ee = params["expected_error"]["values"]
    sig = atom_sigma(nuc[sel], pred.comp_id[sel], ee, residue_error_factors(params))
    vals[sel] += 2.5 * sig
    sl = shifts_from(vals, pred)
    res = score(sl, [ens], [map_sequence(sl, ens)], [pred], n_boot=50, reref="off", params=params)
    row = next(r for r in res.residue_summary if r["seq_id"] == target + 1)
    assert row["n_atoms"] >= 4
    assert not row["flagged_every"] and row["max_abs_z_best"] < 3
    assert row["residue_q_best"] > row["residue_limit_best"]
    assert res.residue_flags[0, [r["seq_id"] for r in res.residue_summary].index(target + 1)]
    # no other residue of model 1 (the exact source of the other shifts) is flagged
    assert res.residue_flags[0].sum() == 1


def pred_params():
    from shiftcheck.predict.params import load_params

    return load_params(None)


def _class(atom, comp):
    from shiftcheck.chem.nuclei import nucleus_class

    return nucleus_class(str(comp), str(atom)) or ""
