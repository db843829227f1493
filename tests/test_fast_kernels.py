"""The fast ring-current, contact-density and anisotropy kernels equal straightforward reference loops.

The references below follow the definitions in the module docstrings directly: every model,
every ring (or every heavy atom) in turn, all target atoms at once, with the textbook formula
functions (:func:`haigh_mallion`, :func:`johnson_bovey`, :func:`point_dipole` — checked against
an independent numerical integral in test_ringcurrent_physics.py) and plain distances. They run
on public NMR ensembles (SHIFTCHECK_REALDATA: 2K5P, 20 models; 1D3Z ubiquitin, 10 models) and
must agree to 1e-9 (ppm-scale factors; the kernels only reorder the arithmetic).

The contact-density checks run twice (the ring-current and anisotropy kernels are compared
path against path): numpy path (``SHIFTCHECK_NUMBA=0``) and the optional
compiled numba path (shiftcheck[fast]; skipped where numba is not installed), and the two paths
are compared with each other on the same structures, including absent atoms (NaN, index -1)
and the switch edge cases (width 0, a far-flung outlier atom).
"""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.io.coords import read_models
from shiftcheck.predict.burial import contact_density, switch
from shiftcheck.predict.features import find_targets
from shiftcheck.predict.ringcurrent import RING_MODELS, ring_current_factors, ring_factor
from shiftcheck.predict.rings import find_rings

FILES = ("this/2k5p.pdb", "ubiquitin/1D3Z.pdb")


@pytest.fixture(scope="module", params=FILES)
def ens(request, realdata):
    e = read_models([realdata / request.param])[0]
    return e.select_models(range(min(e.n_models, 4)))


def _reference_rings(ens, targets, model, cutoff=15.0):
    rings = find_rings(ens)
    t_res = ens.atom_res[targets]
    out = {}
    for rt, rs in rings.items():
        acc = np.zeros((ens.n_models, targets.size))
        for m in range(ens.n_models):
            p = ens.coords[m, targets]
            for j in range(rs.n_rings):
                if not rs.valid[m, j]:
                    continue
                near = (np.linalg.norm(p - rs.centre[m, j], axis=-1) <= cutoff) & (t_res != rs.res_index[j])
                g = ring_factor(p[near], np.broadcast_to(rs.xyz[m, j], (near.sum(),) + rs.xyz.shape[2:]),
                                model, centre=rs.centre[m, j], normal=rs.normal[m, j], radius=rs.radius[m, j])
                acc[m, near] += g
        out[rt] = acc
    return out


@pytest.mark.parametrize("model", RING_MODELS)
def test_ring_kernel_equals_reference_loop(ens, model):
    t = find_targets(ens).atom_index
    fast = ring_current_factors(ens, t, model)
    ref = _reference_rings(ens, t, model)
    assert sum(np.count_nonzero(v) for v in ref.values()) > 100      # the test sees ring terms
    for rt in ref:
        np.testing.assert_allclose(fast[rt], ref[rt], rtol=0, atol=1e-9, err_msg=rt)


def test_ring_kernel_leaves_out_target_subsets_consistently(ens):
    """Factors for a subset of targets (one nucleus class) are the same numbers as for all."""
    tg = find_targets(ens)
    full = ring_current_factors(ens, tg.atom_index)
    sel = np.flatnonzero(tg.nucleus == "HA")
    part = ring_current_factors(ens, tg.atom_index[sel])
    for rt in full:
        np.testing.assert_allclose(part[rt], full[rt][:, sel], rtol=0, atol=1e-12)


@pytest.fixture(params=["numpy", "numba"])
def engine(request, monkeypatch):
    if request.param == "numba":
        pytest.importorskip("numba")
    monkeypatch.setenv("SHIFTCHECK_NUMBA", "1" if request.param == "numba" else "0")
    return request.param


def test_contact_density_equals_reference_loop(ens, engine):
    tg = find_targets(ens)
    t = tg.atom_index[np.isin(tg.nucleus, ["CB", "C", "N"])]
    radii, width, excl = (6.0, 8.0, 10.0), 1.0, 1
    fast = contact_density(ens, t, radii, width, excl)
    heavy = np.flatnonzero(ens.element != "H")
    far = np.abs(ens.atom_res[heavy][None, :] - ens.atom_res[t][:, None]) > excl
    for rad in radii:
        ref = np.zeros((ens.n_models, t.size))
        for m in range(ens.n_models):
            d = np.linalg.norm(ens.coords[m, t][:, None, :] - ens.coords[m, heavy][None, :, :], axis=-1)
            ref[m] = np.where(far & (d <= rad + width), switch(d, rad, width), 0.0).sum(axis=1)
        assert ref.max() > 20
        np.testing.assert_allclose(fast[f"bur:{rad:g}"], ref, rtol=0, atol=1e-9)


@pytest.mark.parametrize("width", [1.0, 0.0])
def test_contact_density_numba_equals_numpy(ens, monkeypatch, width):
    pytest.importorskip("numba")
    tg = find_targets(ens)
    t = np.concatenate([tg.atom_index[np.isin(tg.nucleus, ["CB", "C", "N", "H"])], [-1]])
    e = ens.select_models(range(ens.n_models))
    e.coords = e.coords.copy()
    e.coords[0, t[3]] = np.nan                     # a target absent from one model
    e.coords[1, 7] = (900.0, -400.0, 250.0)        # an outlier far from the rest
    out = {}
    for flag in ("0", "1"):
        monkeypatch.setenv("SHIFTCHECK_NUMBA", flag)
        out[flag] = contact_density(e, t, (5.0, 8.0, 10.0), width, 1)
    for k in out["0"]:
        assert out["0"][k].max() > 10 and out["0"][k][:, -1].max() == 0
        np.testing.assert_allclose(out["1"][k], out["0"][k], rtol=0, atol=1e-9, err_msg=k)


def test_anisotropy_numba_equals_numpy(ens, monkeypatch):
    """The compiled peptide-group dipole sums equal the numpy pair-list path (1e-9 Å⁻³)."""
    pytest.importorskip("numba")
    from shiftcheck.predict.anisotropy import anisotropy_features

    tg = find_targets(ens)
    t = np.concatenate([tg.atom_index[np.isin(tg.nucleus, ["H", "HA", "N"])], [-1]])
    e = ens.select_models(range(ens.n_models))
    e.coords = e.coords.copy()
    e.coords[0, t[5]] = np.nan                     # a target absent from one model
    out = {}
    for flag in ("0", "1"):
        monkeypatch.setenv("SHIFTCHECK_NUMBA", flag)
        out[flag] = anisotropy_features(e, t)
    for k in out["0"]:
        assert np.abs(out["0"][k]).max() > 0.01 and out["0"][k][:, -1].max() == 0
        np.testing.assert_allclose(out["1"][k], out["0"][k], rtol=0, atol=1e-9, err_msg=k)


def test_ring_current_numba_equals_numpy(ens, monkeypatch):
    """The compiled Haigh–Mallion ring sums equal the numpy pair path (1e-9), with a ring atom
    missing in one model (that ring skipped there) and absent targets (NaN, index -1)."""
    pytest.importorskip("numba")
    tg = find_targets(ens)
    t = np.concatenate([tg.atom_index, [-1]])
    e = ens.select_models(range(ens.n_models))
    e.coords = e.coords.copy()
    e.coords[0, t[5]] = np.nan                     # a target absent from one model
    rings = find_rings(e)
    rt = next(k for k, v in rings.items() if v.n_rings)
    e.coords[1, rings[rt].atom_index[0, 0]] = np.nan   # a broken ring in model 1
    out = {}
    for flag in ("0", "1"):
        monkeypatch.setenv("SHIFTCHECK_NUMBA", flag)
        out[flag] = ring_current_factors(e, t, "haigh-mallion")
    assert np.count_nonzero(out["0"][rt]) > 100 and out["0"][rt][:, -1].max() == 0
    for k in out["0"]:
        np.testing.assert_allclose(out["1"][k], out["0"][k], rtol=0, atol=1e-9, err_msg=k)


def test_numba_switch(monkeypatch):
    """SHIFTCHECK_NUMBA=0 keeps the numpy path whatever the size; otherwise numba when installed."""
    pytest.importorskip("numba")
    from shiftcheck.predict import _fast

    monkeypatch.setenv("SHIFTCHECK_NUMBA", "0")
    assert not _fast.numba_enabled()
    monkeypatch.delenv("SHIFTCHECK_NUMBA")
    assert _fast.numba_enabled()
