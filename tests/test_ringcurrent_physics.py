"""Physics checks of the three ring-current models (shiftcheck.predict.ringcurrent).

Sources named beside each check: /work/shared/science.md summarises them — Pople 1956 (point
dipole), Johnson & Bovey 1958 (current loops), Haigh & Mallion 1979 (signed areas); the
Biot–Savart law for a circular loop is textbook electromagnetism.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad

from shiftcheck.predict.rings import RING_ATOMS, find_rings, ring_frames
from shiftcheck.predict.ringcurrent import (RING_MODELS, haigh_mallion, johnson_bovey,
                                            johnson_bovey_loop_field, point_dipole,
                                            ring_current_factors, ring_factor)
from shiftcheck.structure.ensemble import Ensemble

SIDE = 1.39  # benzene C–C bond, Å (common practice; science.md uses it for the hexagon check)


def _polygon(k: int, radius: float) -> np.ndarray:
    ang = 2 * np.pi * np.arange(k) / k
    return np.stack([radius * np.cos(ang), radius * np.sin(ang), np.zeros(k)], axis=1)


def _rotation(rng) -> np.ndarray:
    q, r = np.linalg.qr(rng.normal(size=(3, 3)))
    q = q * np.sign(np.diag(r))
    if np.linalg.det(q) < 0:
        q[:, 0] = -q[:, 0]
    return q


HEX = _polygon(6, SIDE)                           # regular hexagon, side = radius = 1.39 Å
PENT = _polygon(5, SIDE / (2 * np.sin(np.pi / 5)))  # regular pentagon with the same side


# (a) Johnson–Bovey closed form vs an independent Biot–Savart integral over a unit loop
# (science.md, "verified here" to 1e-12; Biot–Savart law, textbook).
@pytest.mark.parametrize("rho,z", [(0, 0.5), (0.5, 0.3), (2, 0), (1.5, 1), (0.2, 2), (3, 3)])
def test_johnson_bovey_closed_form_equals_biot_savart(rho, z):
    # Loop r' = (cos φ, sin φ, 0), dl = (−sin φ, cos φ, 0) dφ, P = (ρ, 0, z):
    # (dl × (P − r'))_z = 1 − ρ cos φ;  B_z · 4π/(μ0 I) = ∫ (1 − ρ cos φ)/|P − r'|³ dφ (a = 1).
    def integrand(phi):
        return (1 - rho * np.cos(phi)) / (1 + rho ** 2 - 2 * rho * np.cos(phi) + z ** 2) ** 1.5

    numeric, _ = quad(integrand, 0, 2 * np.pi, epsabs=0, epsrel=1e-13, limit=400)
    closed = float(johnson_bovey_loop_field(rho, z))
    assert closed == pytest.approx(numeric, rel=1e-6)


def test_johnson_bovey_far_field_is_point_dipole():
    # Loop of moment I·πa² → dipole field (textbook); shiftcheck normalises G_JB to it.
    rng = np.random.default_rng(1)
    for _ in range(10):
        v = rng.normal(size=3)
        p = 40.0 * v / np.linalg.norm(v)
        jb = johnson_bovey(p, HEX)
        pd = point_dipole(p, np.zeros(3), np.array([0, 0, 1.0]))
        if abs(pd) > 1e-7:
            assert jb == pytest.approx(pd, rel=0.01)


# (b) Haigh–Mallion → A·(3cos²θ − 1)/r³ (σ convention) far from a regular hexagon
# (science.md: ratio 0.993–1.006 at r = 20 Å; Haigh & Mallion 1979 vs Pople 1956).
@pytest.mark.parametrize("theta", [0.0, 30.0, 70.0, 90.0])
@pytest.mark.parametrize("phi", [0.0, 17.0, 45.0])
def test_haigh_mallion_tends_to_point_dipole(theta, phi):
    area = 1.5 * np.sqrt(3) * SIDE ** 2
    t, f = np.radians(theta), np.radians(phi)
    p = 20.0 * np.array([np.sin(t) * np.cos(f), np.sin(t) * np.sin(f), np.cos(t)])
    sigma_hm = -haigh_mallion(p, HEX)                    # δ convention → σ convention
    expected = area * (3 * np.cos(t) ** 2 - 1) / 20.0 ** 3
    assert sigma_hm / expected == pytest.approx(1.0, abs=0.01)


def test_haigh_mallion_inside_projection_sums_to_area():
    # Signed areas of the fan from an interior point add up to the polygon area (geometry):
    # on the normal at height h, every r_j = sqrt(R² + h²) → G = −2·A/(R² + h²)^{3/2}.
    for h in (0.5, 2.0, 4.0):
        area = 1.5 * np.sqrt(3) * SIDE ** 2
        g = haigh_mallion(np.array([0, 0, h]), HEX)
        assert g == pytest.approx(-2 * area / (SIDE ** 2 + h ** 2) ** 1.5, rel=1e-12)


# (c) shielding above, deshielding in the plane outside (science.md conventions; all classic).
@pytest.mark.parametrize("model", RING_MODELS)
@pytest.mark.parametrize("ring", [HEX, PENT], ids=["six", "five"])
def test_sign_above_and_in_plane(model, ring):
    for h in np.linspace(2.0, 5.0, 7):
        for sgn in (1, -1):
            assert ring_factor(np.array([0, 0, sgn * h]), ring, model) < 0
    for d in np.linspace(3.0, 6.0, 7):
        for phi in np.radians([0, 13, 36, 90, 200]):
            p = d * np.array([np.cos(phi), np.sin(phi), 0.0])
            assert ring_factor(p, ring, model) > 0


# (d) invariance under rigid motion and reversal of the ring atom order (geometry).
@pytest.mark.parametrize("model", RING_MODELS)
def test_invariance(model):
    rng = np.random.default_rng(7)
    ring = HEX + rng.normal(scale=0.03, size=HEX.shape)   # slightly non-planar ring
    pts = rng.uniform(-6, 6, size=(50, 3))
    base = ring_factor(pts, np.broadcast_to(ring, (50, 6, 3)), model)
    rot, shift = _rotation(rng), rng.normal(scale=10, size=3)
    moved = ring_factor(pts @ rot.T + shift, np.broadcast_to(ring @ rot.T + shift, (50, 6, 3)), model)
    np.testing.assert_allclose(moved, base, rtol=1e-9, atol=1e-12)
    rev = ring_factor(pts, np.broadcast_to(ring[::-1], (50, 6, 3)), model)
    np.testing.assert_allclose(rev, base, rtol=1e-9, atol=1e-12)
    start = ring_factor(pts, np.broadcast_to(np.roll(ring, 2, axis=0), (50, 6, 3)), model)
    np.testing.assert_allclose(start, base, rtol=1e-9, atol=1e-12)


# (e) the ensemble-level function against a brute-force loop over targets and rings.
def _trp_ring_atoms(rng):
    hexa = HEX @ _rotation(rng).T
    c6 = hexa.mean(axis=0)
    v0, v1 = hexa[0], hexa[1]                       # CD2, CE2 shared with the pentagon
    mid = 0.5 * (v0 + v1)
    out = mid - c6
    out /= np.linalg.norm(out)
    c5 = mid + out * SIDE / (2 * np.tan(np.pi / 5))
    axis = np.cross(hexa[1] - c6, hexa[2] - c6)
    axis /= np.linalg.norm(axis)

    def rot(v, ang):
        return (v * np.cos(ang) + np.cross(axis, v) * np.sin(ang)
                + axis * np.dot(axis, v) * (1 - np.cos(ang)))

    cand = [c5 + rot(v1 - c5, s * 2 * np.pi / 5) for s in (1, -1)]
    sgn = 1 if np.linalg.norm(cand[0] - v0) > 0.1 else -1
    ne1, cd1, cg = (c5 + rot(v1 - c5, sgn * j * 2 * np.pi / 5) for j in (1, 2, 3))
    names = dict(zip(RING_ATOMS["TRP6"], hexa))
    names.update(CG=cg, CD1=cd1, NE1=ne1)
    return names


def _synthetic_ensemble(n_models=3, seed=3):
    rng = np.random.default_rng(seed)
    residues = ["PHE", "ALA", "HIS", "TRP", "GLY", "TYR", "PHE", "SER"]
    atom_res, atom_name, models = [], [], []
    for m in range(n_models):
        xyz = []
        for ri, rn in enumerate(residues):
            centre = rng.uniform(0, 22, size=3)
            if rn in ("PHE", "TYR"):
                ring = dict(zip(RING_ATOMS["PHE"], HEX @ _rotation(rng).T))
            elif rn == "HIS":
                ring = dict(zip(RING_ATOMS["HIS"], PENT @ _rotation(rng).T))
            elif rn == "TRP":
                ring = _trp_ring_atoms(rng)
            else:
                ring = {}
            atoms = {"N": rng.normal(size=3) * 3, "H": rng.normal(size=3) * 3,
                     "HA": rng.normal(size=3) * 3, **ring}
            for nm, p in atoms.items():
                if m == 0:
                    atom_res.append(ri)
                    atom_name.append(nm)
                xyz.append(centre + p)
        models.append(np.array(xyz))
    coords = np.stack(models)
    n_atoms = coords.shape[1]
    return Ensemble(name="synthetic", sources=[], model_names=[f"s#{i + 1}" for i in range(n_models)],
                    chain_id="A", res_seq=np.arange(1, len(residues) + 1),
                    res_icode=np.array([""] * len(residues)), res_name=np.array(residues),
                    atom_res=np.array(atom_res), atom_name=np.array(atom_name),
                    element=np.array([n[0] for n in atom_name]), coords=coords,
                    built=np.zeros(n_atoms, bool))


def _brute_force(ens, targets, model, cutoff):
    rings = find_rings(ens)
    out = {rt: np.zeros((ens.n_models, len(targets))) for rt in rings}
    for rt, rs in rings.items():
        for m in range(ens.n_models):
            for ti, a in enumerate(targets):
                if a < 0 or not np.isfinite(ens.coords[m, a]).all():
                    continue
                for k in range(rs.n_rings):
                    if rs.res_index[k] == ens.atom_res[a]:
                        continue
                    ring = ens.coords[m, rs.atom_index[k]]
                    if not np.isfinite(ring).all():
                        continue
                    c, _, _ = ring_frames(ring)
                    if np.linalg.norm(ens.coords[m, a] - c) > cutoff:
                        continue
                    out[rt][m, ti] += float(ring_factor(ens.coords[m, a], ring, model))
    return out


@pytest.mark.parametrize("model", RING_MODELS)
def test_ensemble_function_matches_brute_force(model):
    ens = _synthetic_ensemble()
    ens.coords[1, list(ens.atom_name).index("CZ")] = np.nan   # ring of residue 0 missing in model 2
    ens.coords[2, list(ens.atom_name).index("HA")] = np.nan   # a target missing in model 3
    targets = np.flatnonzero(np.isin(ens.atom_name, ["H", "HA", "CZ", "NE1"]))
    targets = np.append(targets, -1)
    got = ring_current_factors(ens, targets, model=model, cutoff=12.0)
    ref = _brute_force(ens, targets, model, 12.0)
    assert set(got) == {"PHE", "TYR", "TRP6", "TRP5", "HIS"}
    n_nonzero = 0
    for rt in got:
        assert got[rt].shape == (3, targets.size)
        assert np.isfinite(got[rt]).all()
        np.testing.assert_allclose(got[rt], ref[rt], rtol=1e-10, atol=1e-14)
        n_nonzero += np.count_nonzero(ref[rt])
    assert n_nonzero > 20     # the check is not vacuous
    # models computed one at a time give the same numbers
    for m in range(3):
        single = ring_current_factors(ens.select_models([m]), targets, model=model, cutoff=12.0)
        for rt in got:
            np.testing.assert_allclose(single[rt][0], got[rt][m], rtol=1e-12, atol=1e-15)


def test_own_ring_excluded_and_cutoff_respected():
    ens = _synthetic_ensemble(n_models=1, seed=5)
    cz = np.flatnonzero((ens.atom_name == "CZ") & (ens.atom_res == 0))
    got = ring_current_factors(ens, cz, cutoff=50.0)
    # residue 0 is the only ring of type PHE besides residue 6: only residue 6 counts
    rs = find_rings(ens)["PHE"]
    other = int(np.flatnonzero(rs.res_index == 6)[0])
    expect = haigh_mallion(ens.coords[0, cz[0]], rs.xyz[0, other])
    assert got["PHE"][0, 0] == pytest.approx(float(expect), rel=1e-12)
    far = ring_current_factors(ens, cz, cutoff=1e-3)
    assert all(np.all(v == 0) for v in far.values())


def test_unknown_model_rejected():
    ens = _synthetic_ensemble(n_models=1)
    with pytest.raises(ValueError):
        ring_current_factors(ens, np.array([0]), model="dipole")


# Real data: magnitudes with the starting constants (data/ring_current.json, from memory)
# against the fact of the trade in science.md: amide-proton ring-current shifts are mostly
# 0.1–0.7 ppm for amides close to an aromatic ring, larger only at close approach.
@pytest.mark.realdata
def test_ubiquitin_amide_ring_current_magnitudes(realdata):
    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.ringcurrent import ring_current_parameters

    ens = read_models(realdata / "ubiquitin" / "1D3Z.pdb")[0]
    par = ring_current_parameters()
    inten = {k: v["value"] for k, v in par["intensity"]["case1995"].items() if k != "source"}
    h = np.flatnonzero(ens.atom_name == "H")
    per_model = {}
    for model in RING_MODELS:
        f = ring_current_factors(ens, h, model=model)
        d = sum(par["B"][model]["value"] * inten[rt] * f[rt] for rt in f)
        per_model[model] = d
        mag = np.abs(d)
        assert 0.2 < mag.max() < 2.0                 # some amides sit near a ring (measured 0.72)
        assert np.percentile(mag, 90) < 0.7          # most are far from rings
        close = mag[mag > 0.1]
        assert close.size > 10 and np.median(close) < 0.7
    # the three models agree in sign where the effect is sizeable
    big = np.abs(per_model["haigh-mallion"]) > 0.15
    assert big.sum() > 5
    for model in ("johnson-bovey", "point-dipole"):
        assert np.all(np.sign(per_model[model][big]) == np.sign(per_model["haigh-mallion"][big]))
