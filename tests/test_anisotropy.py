"""Peptide-group anisotropy features (McConnell 1957 point-dipole form, from memory).

Checks: the traceless identity Σ_i (1 − 3cos²θ_i) = 0 over three orthogonal axes (geometry),
rigid-motion invariance, exclusion of the target's own peptide groups and the ensemble function
against a brute-force loop.
"""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.predict.anisotropy import anisotropy_features, mcconnell_axis_factor, peptide_frames
from shiftcheck.structure.ensemble import Ensemble


def test_axis_factors_are_traceless_and_dipolar():
    rng = np.random.default_rng(2)
    p = rng.normal(scale=4, size=(100, 3))
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    total = sum(mcconnell_axis_factor(p, np.zeros(3), q[:, i]) for i in range(3))
    np.testing.assert_allclose(total, 0.0, atol=1e-12)
    # on the axis at distance r: (1 - 3)/r³ = -2/r³ (McConnell 1957)
    assert mcconnell_axis_factor(np.array([0, 0, 3.0]), np.zeros(3), np.array([0, 0, 2.0])) == pytest.approx(-2 / 27)


def _chain(n_res=8, n_models=2, seed=4):
    rng = np.random.default_rng(seed)
    names = ("N", "H", "CA", "HA", "C", "O")
    models = []
    for m in range(n_models):
        xyz, pos = [], np.zeros(3)
        for k in range(n_res):
            for nm in names:
                xyz.append(pos + rng.normal(scale=0.8, size=3))
            pos = pos + rng.normal(scale=1.0, size=3) + np.array([1.5, 0, 0])
        arr = np.array(xyz).reshape(n_res, 6, 3)
        arr[1:, 0] = arr[:-1, 4] + np.array([1.33, 0, 0])   # N(j+1) bonded to C(j)
        models.append(arr.reshape(-1, 3))
    coords = np.stack(models)
    return Ensemble(name="c", sources=[], model_names=[str(i) for i in range(n_models)], chain_id="A",
                    res_seq=np.arange(1, n_res + 1), res_icode=np.array([""] * n_res),
                    res_name=np.array(["ALA"] * n_res), atom_res=np.repeat(np.arange(n_res), 6),
                    atom_name=np.array(names * n_res), element=np.array([n[0] for n in names] * n_res),
                    coords=coords, built=np.zeros(n_res * 6, bool))


def test_peptide_frames_follow_the_atoms():
    # The brute-force check below reuses peptide_frames, so the frames are checked here on
    # their own from the atoms (geometry; frame as documented in shiftcheck.predict.anisotropy:
    # group j = C(j), O(j), N(j+1), x along C->O, z normal to the peptide plane, origin at the
    # C=O midpoint; common practice, no source). A group whose N(j+1) is not bonded is dropped.
    ens = _chain(n_res=6, n_models=2)
    ens.coords[1, ens.index(3, "N")] += np.array([0.0, 5.0, 0.0])   # break C(2)-N(3) in model 2
    origin, x, z, res = peptide_frames(ens)
    assert res.tolist() == list(range(6))
    for m in range(2):
        for j in range(6):
            c, o = ens.coords[m, ens.index(j, "C")], ens.coords[m, ens.index(j, "O")]
            if j == 5 or (m == 1 and j == 2):
                assert np.isnan(origin[m, j]).all()
                continue
            n = ens.coords[m, ens.index(j + 1, "N")]
            np.testing.assert_allclose(origin[m, j], (c + o) / 2, atol=1e-12)
            np.testing.assert_allclose(x[m, j], (o - c) / np.linalg.norm(o - c), atol=1e-12)
            assert np.linalg.norm(z[m, j]) == pytest.approx(1.0)
            assert abs(z[m, j] @ (o - c)) < 1e-9 and abs(z[m, j] @ (n - c)) < 1e-9
            assert z[m, j] @ np.cross(o - c, n - c) > 0           # right-handed (x, N-C, z)


def test_matches_brute_force_and_invariant():
    ens = _chain()
    t = np.flatnonzero(np.isin(ens.atom_name, ["H", "HA"]))
    got = anisotropy_features(ens, t, cutoff=30.0)
    origin, x, z, _ = peptide_frames(ens)
    nonzero = 0
    for m in range(ens.n_models):
        for ti, a in enumerate(t):
            ri = ens.atom_res[a]
            ex = ez = 0.0
            for j in range(ens.n_residues):
                if j in (ri, ri - 1) or not np.isfinite(origin[m, j]).all():
                    continue
                ex += mcconnell_axis_factor(ens.coords[m, a], origin[m, j], x[m, j])
                ez += mcconnell_axis_factor(ens.coords[m, a], origin[m, j], z[m, j])
            assert got["co_aniso_x"][m, ti] == pytest.approx(ex, rel=1e-10, abs=1e-14)
            assert got["co_aniso_z"][m, ti] == pytest.approx(ez, rel=1e-10, abs=1e-14)
            nonzero += ex != 0
    assert nonzero > 10
    rng = np.random.default_rng(9)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    if np.linalg.det(q) < 0:
        q[:, 0] *= -1
    moved = Ensemble(**{**ens.__dict__, "coords": ens.coords @ q.T + 5.0, "_index": None})
    mv = anisotropy_features(moved, t, cutoff=30.0)
    for k in got:
        np.testing.assert_allclose(mv[k], got[k], rtol=1e-9, atol=1e-12)
