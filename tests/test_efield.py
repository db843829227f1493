"""Electric-field features (Buckingham 1960 form, shiftcheck.predict.efield).

Physics checks: the field of the point charges equals minus the numerical gradient of the
Coulomb potential φ(r) = Σ q_j / |r − r_j| (central differences, computed here independently of
the module); a single charge on the bond axis gives ±q/r² (Coulomb's law); the features do not
change under a rigid motion. Charge placement: the peptide H sits 1.0 Å from N along O→C
(Kabsch & Sander 1983, from memory), the charges of a neutral peptide group sum to zero, a
proline N carries none (data/efield.json).
"""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.predict.efield import charge_sites, efield_features, efield_parameters
from shiftcheck.structure.ensemble import Ensemble

NAMES = ("N", "H", "CA", "HA", "C", "O")


def _chain(res_names, n_models=2, seed=3):
    rng = np.random.default_rng(seed)
    n_res = len(res_names)
    models = []
    for _ in range(n_models):
        xyz, pos = [], np.zeros(3)
        for _k in range(n_res):
            for _nm in NAMES:
                xyz.append(pos + rng.normal(scale=0.9, size=3))
            pos = pos + rng.normal(scale=1.2, size=3) + np.array([2.0, 0, 0])
        arr = np.array(xyz).reshape(n_res, 6, 3)
        arr[1:, 0] = arr[:-1, 4] + np.array([1.33, 0, 0])   # N(j+1) bonded to C(j)
        arr[:, 1] = arr[:, 0] + np.array([0.0, 1.01, 0.0])   # N-H 1.01 Å
        arr[:, 3] = arr[:, 2] + np.array([0.0, 0.0, 1.09])   # CA-HA 1.09 Å
        models.append(arr.reshape(-1, 3))
    coords = np.stack(models)
    return Ensemble(name="c", sources=[], model_names=[str(i) for i in range(n_models)], chain_id="A",
                    res_seq=np.arange(1, n_res + 1), res_icode=np.array([""] * n_res),
                    res_name=np.array(res_names), atom_res=np.repeat(np.arange(n_res), 6),
                    atom_name=np.array(NAMES * n_res), element=np.array([n[0] for n in NAMES] * n_res),
                    coords=coords, built=np.zeros(n_res * 6, bool))


def _potential(p, xyz, q):
    return float(np.sum(q / np.linalg.norm(p - xyz, axis=-1)))


def test_field_is_minus_the_gradient_of_the_coulomb_potential():
    ens = _chain(["ALA", "GLY", "PRO", "ALA", "SER", "ALA", "GLY", "ALA"])
    sites = charge_sites(ens)
    t = np.flatnonzero(np.isin(ens.atom_name, ["H", "HA"]))
    got = efield_features(ens, t, cutoff=1e3)
    h = 1e-4
    checked = 0
    for m in range(ens.n_models):
        for ti, a in enumerate(t):
            ri = ens.atom_res[a]
            keep = ~((sites["lo"] <= ri) & (ri <= sites["hi"])) & np.isfinite(sites["xyz"][m]).all(axis=1)
            xyz, q, bb = sites["xyz"][m][keep], sites["q"][keep], sites["backbone"][keep]
            p = ens.coords[m, a]
            parent = ens.index(ri, "N" if ens.atom_name[a] == "H" else "CA")
            u = p - ens.coords[m, parent]
            u /= np.linalg.norm(u)
            e = {}
            for kind, sel in (("bb", bb), ("sc", ~bb)):
                grad = np.array([(_potential(p + h * d, xyz[sel], q[sel]) - _potential(p - h * d, xyz[sel], q[sel]))
                                 / (2 * h) for d in np.eye(3)])
                e[kind] = -grad
            assert got["ef_bb"][m, ti] == pytest.approx(e["bb"] @ u, rel=1e-5, abs=1e-8)
            assert got["ef_sc"][m, ti] == pytest.approx(e["sc"] @ u, rel=1e-5, abs=1e-8)
            assert got["ef_sq"][m, ti] == pytest.approx(np.sum((e["bb"] + e["sc"]) ** 2), rel=1e-5, abs=1e-10)
            checked += 1
    assert checked == 2 * 16            # 8 H and 8 HA per model (the synthetic Pro has an H atom)


def test_single_charge_on_the_bond_axis_obeys_coulombs_law():
    # Lys NZ (+1 e) placed on the CA->HA axis of residue 0, 4 Å from HA on the CA side: the field
    # at HA points away from the charge, i.e. along CA->HA, +1/16 e/Å², |E|² = 1/256 (Coulomb's law; peptide charges of
    # the far-away groups removed by moving them 1000 Å away and using a 12 Å cutoff).
    ens = _chain(["ALA", "ALA", "ALA", "LYS"], n_models=1)
    far = np.array([1000.0, 0, 0])
    coords = ens.coords.copy()
    coords[0, 6:] += far                          # residues 1-3 far away
    nz = np.concatenate([coords, coords[:, -1:] * 0], axis=1)
    ha, ca = coords[0, 3], coords[0, 2]
    axis = (ha - ca) / np.linalg.norm(ha - ca)
    nz[0, -1] = ha - 4.0 * axis
    e2 = Ensemble(name="c", sources=[], model_names=["0"], chain_id="A", res_seq=ens.res_seq,
                  res_icode=ens.res_icode, res_name=ens.res_name,
                  atom_res=np.append(ens.atom_res, 3), atom_name=np.append(ens.atom_name, "NZ"),
                  element=np.append(ens.element, "N"), coords=nz, built=np.zeros(nz.shape[1], bool))
    got = efield_features(e2, np.array([3]), cutoff=12.0)
    assert got["ef_sc"][0, 0] == pytest.approx(1 / 16, rel=1e-9)
    assert got["ef_bb"][0, 0] == pytest.approx(0.0, abs=1e-12)
    assert got["ef_sq"][0, 0] == pytest.approx(1 / 256, rel=1e-9)


def test_charge_placement_and_rigid_motion():
    ens = _chain(["ALA", "PRO", "ASP", "ALA"], n_models=1)
    s = charge_sites(ens)
    pq = efield_parameters()["peptide_charges"]
    assert pq["C"] + pq["O"] + pq["N"] + pq["H"] == pytest.approx(0.0)
    # group 0 (C0 O0 N1) precedes a proline: C and O only; groups 1, 2 have four charges each
    assert np.sum(s["backbone"] & (s["lo"] == 0)) == 2
    assert np.sum(s["backbone"] & (s["lo"] == 1)) == 4
    # the peptide H of group 1 sits 1.0 Å from N(2) along O(1)->C(1)
    c1, o1, n2 = (ens.coords[0, ens.index(r, a)] for r, a in ((1, "C"), (1, "O"), (2, "N")))
    want = n2 + (c1 - o1) / np.linalg.norm(c1 - o1)
    hq = s["xyz"][0][s["backbone"] & (s["lo"] == 1) & (s["q"] == pq["H"])]
    np.testing.assert_allclose(hq[0], want, atol=1e-12)
    # free termini: +1 on residue 0's N, -0.5 on the last O (no OXT, no Asp side-chain atoms in
    # this backbone-only chain)
    assert sorted(s["q"][~s["backbone"]].tolist()) == pytest.approx([-0.5, 1.0])
    t = np.flatnonzero(np.isin(ens.atom_name, ["H", "HA"]))
    got = efield_features(ens, t)
    rng = np.random.default_rng(5)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    if np.linalg.det(q) < 0:
        q[:, 0] *= -1
    moved = Ensemble(**{**ens.__dict__, "coords": ens.coords @ q.T - 7.0, "_index": None})
    mv = efield_features(moved, t)
    for k in got:
        np.testing.assert_allclose(mv[k], got[k], rtol=1e-9, atol=1e-12)


def test_cb_field_is_projected_on_the_ca_cb_bond(realdata):
    # CB carries the CA->CB bond: its feature is the field (minus the numerical gradient of the
    # Coulomb potential, computed here) projected on that bond; public PDB 1UBQ (ubiquitin)
    from shiftcheck.io.coords import read_models

    ens = read_models([str(realdata / "ubiquitin" / "1ubq.pdb")])[0]
    sites = charge_sites(ens)
    t = np.flatnonzero(ens.atom_name == "CB")[::9]
    got = efield_features(ens, t, cutoff=1e3)
    h = 1e-4
    for ti, a in enumerate(t):
        ri = ens.atom_res[a]
        keep = ~((sites["lo"] <= ri) & (ri <= sites["hi"])) & np.isfinite(sites["xyz"][0]).all(axis=1)
        xyz, q = sites["xyz"][0][keep], sites["q"][keep]
        p = ens.coords[0, a]
        u = p - ens.coords[0, ens.index(ri, "CA")]
        u /= np.linalg.norm(u)
        grad = np.array([(_potential(p + h * d, xyz, q) - _potential(p - h * d, xyz, q)) / (2 * h)
                         for d in np.eye(3)])
        assert got["ef_bb"][0, ti] + got["ef_sc"][0, ti] == pytest.approx(-grad @ u, rel=1e-5, abs=1e-8)
        assert got["ef_sq"][0, ti] > 0
