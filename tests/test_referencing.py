"""Referencing offsets: weighted median against numpy, offset recovery, the auto rule."""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.score.referencing import estimate_offsets, residue_weights, weighted_median
from shiftcheck.score.scoring import score

from scoring_synthetic import built_ensemble, shifts_from


def test_weighted_median_equals_median_of_repeated_values():
    # reference: numpy's median of the explicitly repeated sample (odd total weight -> unique median)
    rng = np.random.default_rng(1)
    v = rng.normal(size=40)
    W = rng.integers(0, 4, size=(50, 40)).astype(float)
    W[:, 0] += (W.sum(axis=1) % 2 == 0)          # make every total odd
    got = weighted_median(v, W)
    want = np.array([np.median(np.repeat(v, w.astype(int))) for w in W])
    np.testing.assert_allclose(got, want)


def test_residue_weights_are_multinomial_counts():
    W = residue_weights(30, 200, np.random.default_rng(0))
    assert W.shape == (200, 30)
    assert np.all(W.sum(axis=1) == 30)       # each replicate draws n residues
    assert np.all(W >= 0) and np.array_equal(W, np.round(W))
    # multinomial(n=30, p=1/30) counts (textbook): variance n p (1 - p) = 29/30 per residue;
    # 6000 counts give the sample variance to about +-0.025, the tolerance is 5 sigma. (The
    # mean count, 1, follows from the row sums alone and is therefore not checked again.)
    assert np.var(W) == pytest.approx(29 / 30, abs=0.12)
    # not the same draw in every replicate (a bootstrap, not a copy)
    assert len({tuple(w) for w in W}) > 190


@pytest.fixture(scope="module")
def ens_pred():
    from shiftcheck.predict.model import Predictor

    ens = built_ensemble()
    return ens, Predictor().predict(ens)


def _score(sl, ens, pred, **kw):
    from shiftcheck.structure.mapping import map_sequence

    return score(sl, [ens], [map_sequence(sl, ens)], [pred], **kw)


@pytest.mark.parametrize("dc,dh,dn", [(2.0, 0.3, 0.0), (-1.5, 0.0, 2.5), (0.0, 0.0, 0.0)])
def test_offsets_recovered_from_synthetic_list(ens_pred, dc, dh, dn):
    # shifts = model-1 prediction + noise of the size the predictor makes + known offsets
    ens, pred = ens_pred
    vals = pred.values[0].copy()
    iso = np.array([a[0] for a in pred.atom_id])
    vals[iso == "C"] += dc
    vals[iso == "H"] += dh
    vals[iso == "N"] += dn
    sl = shifts_from(vals, pred, noise=0.1, seed=3)
    res = _score(sl, ens, pred, n_boot=300)
    # consensus over three different models: C offset tolerance reflects conformation spread
    assert res.offsets["H"].value == pytest.approx(dh, abs=0.05)
    assert res.offsets["N"].value == pytest.approx(dn, abs=0.5)
    assert res.offsets["C"].value == pytest.approx(dc, abs=0.2)
    assert res.offsets["C"].applied == (abs(dc) > 0)
    assert res.offsets["H"].applied == (abs(dh) > 0)
    assert res.offsets["N"].applied == (abs(dn) > 0)
    for o in res.offsets.values():
        assert o.low <= o.value <= o.high


def test_modes_off_and_force(ens_pred):
    ens, pred = ens_pred
    vals = pred.values[0].copy()
    vals[np.array([a[0] for a in pred.atom_id]) == "C"] += 2.0
    sl = shifts_from(vals, pred, noise=0.1)
    off = _score(sl, ens, pred, n_boot=100, reref="off")
    force = _score(sl, ens, pred, n_boot=100, reref="force")
    assert not any(o.applied for o in off.offsets.values())
    assert all(o.applied for o in force.offsets.values())
    # correcting a real +2 ppm 13C offset must lower the CA RMSD of the true model
    b = 0
    assert force.metrics["CA"]["rmsd"][b] < off.metrics["CA"]["rmsd"][b] - 1.0
    with pytest.raises(ValueError):
        estimate_offsets(off.comparison, mode="sometimes")
