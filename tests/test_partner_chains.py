"""Partner chains as surroundings (Ensemble.partners, structure.ensemble.with_partners).

A homodimer's partner or a complex's other subunits shift the scored chain's nuclei through
space (ring currents, hydrogen bonds, peptide anisotropy, burial, electric field). Checks:
reading real files as deposited (PDB 2JR2, an NMR homodimer, public data in
../shared/realdata/nef_set; an X-ray file with several chains), the point-dipole factor of the
partner's rings against Pople's formula written out here (Pople 1956, J. Chem. Phys. 24:1111,
from memory), translation of the partner far away (physics: the terms are local), termini of
each chain in the electric-field charges, clashes with the partner in the geometry line (a
built interpenetrating case), and the CLI option.
"""
from __future__ import annotations

import dataclasses
import subprocess
import sys

import numpy as np
import pytest

from shiftcheck.io.coords import read_models
from shiftcheck.predict.efield import charge_sites
from shiftcheck.predict.features import StructureFeatures
from shiftcheck.predict.ringcurrent import ring_current_factors
from shiftcheck.predict.rings import RING_ATOMS
from shiftcheck.structure.ensemble import with_partners
from shiftcheck.structure.quality import describe, geometry_summary, is_bad, partner_clashes


@pytest.fixture(scope="module")
def dimer(realdata):
    return read_models(realdata / "nef_set" / "2jr2" / "2jr2.pdb.gz", chain="A")[0]


def test_nmr_homodimer_reads_its_partner(dimer, realdata):
    # 2JR2 (SOLUTION NMR, 20 models): chain B has chain A's sequence and every model
    assert [p.chain_id for p in dimer.partners] == ["B"]
    b = dimer.partners[0]
    assert b.n_models == dimer.n_models == 20
    assert b.one_letter == dimer.one_letter
    assert any("used as surroundings of chain A" in w for w in dimer.warnings)
    alone = read_models(realdata / "nef_set" / "2jr2" / "2jr2.pdb.gz", chain="A", partners="ignore")[0]
    assert alone.partners == []
    np.testing.assert_array_equal(alone.coords, dimer.coords)      # the scored chain is unchanged
    # the partner got its protons like the chain (the file has them: none built)
    assert (b.element == "H").sum() == (dimer.element == "H").sum()


def test_selecting_models_keeps_the_partner_aligned(dimer):
    sub = dimer.select_models([3, 7])
    assert sub.partners[0].n_models == 2
    np.testing.assert_array_equal(sub.partners[0].coords, dimer.partners[0].coords[[3, 7]])


def test_combined_ensemble_keeps_the_chain_indices(dimer):
    env = with_partners(dimer)
    n = dimer.n_atoms
    np.testing.assert_array_equal(env.coords[:, :n], dimer.coords)
    assert env.chain_starts == (0, dimer.n_residues)
    assert env.n_residues == 2 * dimer.n_residues
    np.testing.assert_array_equal(env.atom_name[:n], dimer.atom_name)
    alone = dataclasses.replace(dimer, partners=[])
    assert with_partners(alone) is alone                            # one chain: nothing combined


def test_partner_ring_factor_is_poples_point_dipole(dimer):
    # (with partner - alone) = sum over the partner's Phe rings of (1 - 3 cos^2 theta) / r^3,
    # written out here from the ring atoms (centre = mean, normal of the mean plane)
    ens = dimer.select_models([0])
    targets = np.flatnonzero(ens.atom_name == "H")
    env = with_partners(ens)
    alone = ring_current_factors(ens, targets, "point-dipole")["PHE"][0]
    both = ring_current_factors(env, targets, "point-dipole")["PHE"][0]
    b = ens.partners[0]
    expect = np.zeros(targets.size)
    phe = np.flatnonzero(b.res_name == "PHE")
    assert phe.size > 0
    for r in phe:
        ring = np.array([b.coords[0, b.index(r, a)] for a in RING_ATOMS["PHE"]])
        centre = ring.mean(axis=0)
        rel = ring - centre                      # mean plane normal: sum of consecutive cross products
        normal = np.cross(rel, np.roll(rel, -1, axis=0)).sum(axis=0)
        normal /= np.linalg.norm(normal)
        v = ens.coords[0, targets] - centre
        dist = np.linalg.norm(v, axis=1)
        cos = v @ normal / dist
        g = (1 - 3 * cos ** 2) / dist ** 3
        expect += np.where(dist <= 15.0, g, 0.0)          # the 15 A cutoff of the ring sums
    np.testing.assert_allclose(both - alone, expect, atol=1e-9)
    assert np.count_nonzero(expect) > 10                  # partner rings within 15 A of many H


def test_partner_far_away_changes_nothing(dimer):
    ens = dimer.select_models([0, 1])
    far = dataclasses.replace(ens, partners=[dataclasses.replace(
        ens.partners[0], coords=ens.partners[0].coords + np.array([500.0, 0, 0]))])
    alone = dataclasses.replace(ens, partners=[])
    for nuc in ("H", "HA", "CA", "C", "N"):
        x_far = StructureFeatures.from_ensemble(far).matrix(nuc, None, None, "haigh-mallion")[2]
        x_alone = StructureFeatures.from_ensemble(alone).matrix(nuc, None, None, "haigh-mallion")[2]
        np.testing.assert_allclose(x_far, x_alone, atol=1e-12)
        x_near = StructureFeatures.from_ensemble(ens).matrix(nuc, None, None, "haigh-mallion")[2]
        assert np.abs(x_near - x_alone).max() > 1e-4, nuc        # the close partner is seen


def test_each_chain_has_its_termini_charged(dimer):
    # formal terminal charges (data/efield.json): +1 on the first N and -1 spread over O/OXT of
    # the last residue of every chain; the junction is no peptide bond
    env = with_partners(dimer.select_models([0]))
    s = charge_sites(env)
    sc = ~s["backbone"]
    first_n = [env.index(0, "N"), env.index(dimer.n_residues, "N")]
    xyz = env.coords[0]
    for k in first_n:
        hit = np.flatnonzero(sc & np.all(np.isclose(s["xyz"][0], xyz[k]), axis=1))
        assert hit.size == 1 and s["q"][hit[0]] == pytest.approx(1.0)
    last_o = [env.index(dimer.n_residues - 1, "O"), env.index(env.n_residues - 1, "O")]
    for k in last_o:
        hit = np.flatnonzero(sc & np.all(np.isclose(s["xyz"][0], xyz[k]), axis=1))
        assert hit.size == 1 and s["q"][hit[0]] == pytest.approx(-0.5)
    # peptide groups: none spans the chain junction (C of A's last residue, N of B's first)
    last_c = xyz[env.index(dimer.n_residues - 1, "C")]
    assert not np.any(s["backbone"] & np.all(np.isclose(s["xyz"][0], last_c), axis=1))


def test_crystal_copies_are_left_out_unless_asked(realdata, tmp_path):
    # an X-ray file with two copies of one chain: the asymmetric unit is not the solution
    # assembly, so 'auto' leaves the copy out (and says so); 'use' takes it
    src = (realdata / "ubiquitin" / "1ubq.pdb").read_text()
    atoms = [ln for ln in src.splitlines() if ln.startswith("ATOM")]
    moved = []
    for ln in atoms:
        x = float(ln[30:38]) + 40.0
        moved.append(ln[:21] + "B" + ln[22:30] + f"{x:8.3f}" + ln[38:])
    header = [ln for ln in src.splitlines() if ln.startswith(("HEADER", "EXPDTA"))]
    f = tmp_path / "two_copies.pdb"
    f.write_text("\n".join(header + atoms + ["TER"] + moved + ["END"]) + "\n")
    auto = read_models(f)[0]
    assert auto.method.upper().startswith("X-RAY")
    assert auto.partners == []
    assert any("asymmetric unit" in w for w in auto.warnings)
    use = read_models(f, partners="use")[0]
    assert [p.chain_id for p in use.partners] == ["B"]
    with pytest.raises(ValueError):
        read_models(f, partners="sometimes")


def test_cli_predict_option(realdata, tmp_path):
    f = realdata / "nef_set" / "2jr2" / "2jr2.pdb.gz"
    out = {}
    for mode in ("auto", "ignore"):
        o = tmp_path / f"{mode}.csv"
        r = subprocess.run([sys.executable, "-m", "shiftcheck", "predict", str(f), "--chain", "A",
                            "--partner-chains", mode, "-o", str(o)], capture_output=True, text=True)
        assert r.returncode == 0, r.stderr
        out[mode] = o.read_text().splitlines()
    assert len(out["auto"]) == len(out["ignore"])              # the same atoms are predicted
    assert out["auto"] != out["ignore"]                        # ... from other surroundings
    bad = subprocess.run([sys.executable, "-m", "shiftcheck", "predict", str(f), "--partner-chains", "x"],
                         capture_output=True, text=True)
    assert bad.returncode == 2 and "Traceback" not in bad.stderr


def test_clashes_with_the_partner_count_in_the_geometry_line(dimer):
    # built clash case: the partner moved onto the chain (1 A off) interpenetrates it; moved far
    # away it cannot touch it; the deposited dimer (NMR, refined) has few inter-chain clashes
    ens = dimer.select_models([0, 1])
    b = ens.partners[0]
    onto = dataclasses.replace(ens, partners=[dataclasses.replace(
        b, coords=ens.coords[:, :b.n_atoms] + np.array([1.0, 0, 0]))])
    far = dataclasses.replace(ens, partners=[dataclasses.replace(b, coords=b.coords + 500.0)])
    assert b.n_atoms == ens.n_atoms and np.array_equal(b.atom_name, ens.atom_name)
    n_onto, sev_onto = partner_clashes(onto)
    assert (n_onto > 300).all() and (sev_onto > 100).all()
    assert not partner_clashes(far)[0].any()
    rec = geometry_summary(onto)[0]
    alone = geometry_summary(dataclasses.replace(ens, partners=[]))[0]
    assert rec["partner_clashes"] == n_onto[0]
    assert rec["clashes"] == alone["clashes"] + n_onto[0]
    assert is_bad(rec)[0]
    assert is_bad(geometry_summary(far)[0]) == is_bad(alone)
    deposited = geometry_summary(ens)
    assert all(r["partner_clashes"] < 20 for r in deposited)
    assert "with partner chains" in describe(rec)
