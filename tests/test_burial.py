"""Burial features (contact density, half-sphere exposure; shiftcheck.predict.burial).

Checks: the vectorised features equal a brute-force loop over atom pairs (definition in the
module docstring); rigid-motion invariance (geometry); the switch is a step smoothed
symmetrically about its midpoint; on ubiquitin 1ubq (SHIFTCHECK_REALDATA) residues near the
protein's centre are more buried than residues far from it (packing of a globular protein:
common knowledge, no source), and HSE-up of the CB side is larger for the central residues.
"""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.predict.burial import (burial_features, contact_density, half_sphere_exposure,
                                       switch, virtual_cb_direction)
from shiftcheck.structure.ensemble import Ensemble

_NAMES = ("N", "H", "CA", "HA", "CB", "C", "O")


def _blob(n_res=12, n_models=3, seed=5):
    """Random compact 'protein' (atoms scattered in a 9 Å box), enough neighbours for every cutoff."""
    rng = np.random.default_rng(seed)
    n = n_res * len(_NAMES)
    coords = rng.uniform(-9, 9, size=(n_models, n, 3))
    coords[1, 3] = np.nan   # an atom missing in one model
    return Ensemble(name="b", sources=[], model_names=[str(i) for i in range(n_models)], chain_id="A",
                    res_seq=np.arange(1, n_res + 1), res_icode=np.array([""] * n_res),
                    res_name=np.array(["ALA"] * n_res), atom_res=np.repeat(np.arange(n_res), len(_NAMES)),
                    atom_name=np.array(_NAMES * n_res), element=np.array([a[0] for a in _NAMES] * n_res),
                    coords=coords, built=np.zeros(n, bool))


def test_switch_is_a_smoothed_step():
    r = np.array([0.0, 4.9, 5.0, 6.0, 7.0, 7.1])
    s = switch(r, 6.0, 1.0)
    np.testing.assert_allclose(s[[0, 1, 2, 4, 5]], [1, 1, 1, 0, 0], atol=1e-12)
    assert s[3] == pytest.approx(0.5)
    # symmetric about the midpoint: s(R - x) + s(R + x) = 1 (cos² + sin²)
    x = np.linspace(0, 1, 7)
    np.testing.assert_allclose(switch(6 - x, 6.0, 1.0) + switch(6 + x, 6.0, 1.0), 1.0, atol=1e-12)
    np.testing.assert_array_equal(switch(r, 6.0, 0.0), (r <= 6.0).astype(float))


@pytest.mark.parametrize("width", [0.0, 1.0])
def test_contact_density_equals_brute_force(width):
    ens = _blob()
    t = np.flatnonzero(np.isin(ens.atom_name, ["H", "CA", "N"]))
    got = contact_density(ens, t, radii=(4.0, 6.0), width=width, exclude=1)
    heavy = np.flatnonzero(ens.element != "H")
    for m in range(ens.n_models):
        for k, a in enumerate(t):
            for rad in (4.0, 6.0):
                want = 0.0
                for j in heavy:
                    if abs(ens.atom_res[j] - ens.atom_res[a]) <= 1:
                        continue
                    d = np.linalg.norm(ens.coords[m, a] - ens.coords[m, j])
                    if np.isfinite(d):
                        want += float(switch(d, rad, width))
                assert got[f"bur:{rad:g}"][m, k] == pytest.approx(want, abs=1e-9)
    assert got["bur:6"].max() > 5     # the check is not vacuous


def test_hse_equals_brute_force():
    ens = _blob()
    got = half_sphere_exposure(ens, radius=8.0, width=1.0, exclude=1)
    ca = np.stack([ens.coords[:, ens.index(i, "CA")] for i in range(ens.n_residues)], axis=1)
    u = virtual_cb_direction(ens)
    for m in range(ens.n_models):
        for i in range(ens.n_residues):
            up = down = 0.0
            for j in range(ens.n_residues):
                if abs(i - j) <= 1:
                    continue
                v = ca[m, j] - ca[m, i]
                w = float(switch(np.linalg.norm(v), 8.0, 1.0))
                if v @ u[m, i] > 0:
                    up += w
                else:
                    down += w
            assert got["hse:up"][m, i] == pytest.approx(up, abs=1e-9)
            assert got["hse:down"][m, i] == pytest.approx(down, abs=1e-9)


def test_virtual_cb_matches_real_cb_direction():
    # An ideal L-residue (N, CA, C, CB from standard geometry, coordinates typed from memory of
    # any tetrahedral CA): the virtual CB direction must be close to the real one.
    n = np.array([-0.525, 1.363, 0.0])
    ca = np.zeros(3)
    c = np.array([1.526, 0.0, 0.0])
    cb = np.array([-0.529, -0.774, -1.205])
    ens = Ensemble(name="x", sources=[], model_names=["1"], chain_id="A", res_seq=np.array([1]),
                   res_icode=np.array([""]), res_name=np.array(["GLY"]), atom_res=np.zeros(3, int),
                   atom_name=np.array(["N", "CA", "C"]), element=np.array(["N", "C", "C"]),
                   coords=np.array([[n, ca, c]]), built=np.zeros(3, bool))
    u = virtual_cb_direction(ens)[0, 0]
    assert u @ (cb / np.linalg.norm(cb)) > 0.98


def test_rigid_motion_invariance():
    ens = _blob()
    t = np.flatnonzero(ens.atom_name == "N")
    rng = np.random.default_rng(0)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    if np.linalg.det(q) < 0:
        q[:, 0] *= -1
    moved = Ensemble(**{**ens.__dict__, "coords": ens.coords @ q.T + np.array([30.0, -7.0, 2.0])})
    a = burial_features(ens, t, {"features": ["bur", "hse"], "hse_radius": 8.0})
    b = burial_features(moved, t, {"features": ["bur", "hse"], "hse_radius": 8.0})
    assert set(a) == {"bur:6", "bur:8", "bur:10", "hse:up", "hse:down"}
    for k in a:
        np.testing.assert_allclose(a[k], b[k], atol=1e-8)


@pytest.fixture(scope="module")
def ubq(realdata):
    from shiftcheck.io.coords import read_models

    return read_models([realdata / "ubiquitin" / "1ubq.pdb"])[0]


def test_core_of_ubiquitin_is_more_buried_than_its_surface(ubq):
    # Core and surface residues are named from the structure itself: the 8 residues whose CA lies
    # nearest to / farthest from the centroid of all CA atoms (residues 2-73; the flexible
    # C-terminal tail 74-76 is left out).
    r = np.arange(1, 73)
    ca = ubq.xyz(r, "CA")[0]
    d = np.linalg.norm(ca - ca.mean(axis=0), axis=1)
    core, surface = r[np.argsort(d)[:8]], r[np.argsort(d)[-8:]]
    t_core, t_surf = ubq.indices(core, "N"), ubq.indices(surface, "N")
    f = burial_features(ubq, np.concatenate([t_core, t_surf]), {"features": ["bur", "hse"]})
    for key in ("bur:6", "bur:8", "bur:10", "hse:up"):
        v = f[key][0]
        assert np.median(v[:8]) > np.median(v[8:]) + 2, (key, core, surface)
    # the core's N atoms have roughly twice as many heavy atoms within 10 Å as the surface's
    assert np.median(f["bur:10"][0, :8]) > 1.5 * np.median(f["bur:10"][0, 8:])
