"""Tests of the internal-coordinate builder (shiftcheck.structure.builder).

The torsion read-back goes through shiftcheck.structure.geometry (written independently of the
builder), so each checks the other.
"""
from __future__ import annotations

import numpy as np
import pytest

from shiftcheck.structure.builder import (build_backbone, build_protein, geometry_table, n_chi,
                                          place_atom)
from shiftcheck.structure.geometry import backbone_torsions, chi1, dihedral

ALL20 = ["ALA", "ARG", "ASN", "ASP", "CYS", "GLN", "GLU", "GLY", "HIS", "ILE", "LEU", "LYS",
         "MET", "PHE", "PRO", "SER", "THR", "TRP", "TYR", "VAL"]


def _wrap(a):
    return (a + 180.0) % 360.0 - 180.0


def _angle(a, b, c):
    u, v = a - b, c - b
    cos = np.sum(u * v, -1) / np.linalg.norm(u, axis=-1) / np.linalg.norm(v, axis=-1)
    return np.degrees(np.arccos(np.clip(cos, -1, 1)))


@pytest.fixture(scope="module")
def random_chain():
    rng = np.random.default_rng(20240611)
    seq = ALL20 * 3
    n = len(seq)
    phi = rng.uniform(-180, 180, (4, n))
    psi = rng.uniform(-180, 180, (4, n))
    omega = rng.normal(180.0, 6.0, (4, n))
    chi = rng.uniform(-180, 180, (4, n, 4))
    ens = build_protein(seq, phi, psi, omega, chi)
    return ens, phi, psi, omega, chi


def test_place_atom_matches_definition():
    # definition of bond length, bond angle and dihedral (IUPAC); dihedral() is independent code
    rng = np.random.default_rng(3)
    a, b, c = rng.normal(size=(3, 50, 3)) * 2.0
    bond = rng.uniform(1.0, 2.0, 50)
    ang = rng.uniform(60, 170, 50)
    tor = rng.uniform(-180, 180, 50)
    d = place_atom(a, b, c, bond, ang, tor)
    assert np.allclose(np.linalg.norm(d - c, axis=-1), bond, atol=1e-9)
    assert np.allclose(_angle(b, c, d), ang, atol=1e-7)
    assert np.allclose(_wrap(dihedral(a, b, c, d) - tor), 0.0, atol=1e-7)


def test_torsions_read_back(random_chain):
    ens, phi, psi, omega, _ = random_chain
    t = backbone_torsions(ens)
    assert np.isnan(t["phi"][:, 0]).all() and np.isnan(t["psi"][:, -1]).all()
    assert np.max(np.abs(_wrap(t["phi"][:, 1:] - phi[:, 1:]))) < 1e-6
    assert np.max(np.abs(_wrap(t["psi"][:, :-1] - psi[:, :-1]))) < 1e-6
    assert np.max(np.abs(_wrap(t["omega"][:, 1:] - omega[:, 1:]))) < 1e-6


def test_chi1_read_back(random_chain):
    ens, _, _, _, chi = random_chain
    got = chi1(ens)
    has = np.array([n_chi(str(r)) >= 1 for r in ens.res_name])
    assert np.max(np.abs(_wrap(got[:, has] - chi[:, has, 0]))) < 1e-6
    assert np.isnan(got[:, ~has]).all()   # Gly, Ala


def test_backbone_ideal_geometry(random_chain):
    # Engh & Huber 1991, Acta Cryst. A47:392, Table 3 (values from memory): N-CA 1.458,
    # CA-C 1.525, C-N 1.329, C=O 1.231 Å; N-CA-C 111.2, CA-C-N 116.2, C-N-CA 121.7, CA-C-O 120.8°
    ens = random_chain[0]
    r = np.arange(ens.n_residues)
    N, CA, C, O = (ens.xyz(r, a) for a in ("N", "CA", "C", "O"))
    assert np.allclose(np.linalg.norm(CA - N, axis=-1), 1.458, atol=1e-9)
    assert np.allclose(np.linalg.norm(C - CA, axis=-1), 1.525, atol=1e-9)
    assert np.allclose(np.linalg.norm(N[:, 1:] - C[:, :-1], axis=-1), 1.329, atol=1e-9)
    assert np.allclose(np.linalg.norm(O - C, axis=-1), 1.231, atol=1e-9)
    assert np.allclose(_angle(N, CA, C), 111.2, atol=1e-7)
    assert np.allclose(_angle(CA[:, :-1], C[:, :-1], N[:, 1:]), 116.2, atol=1e-7)
    assert np.allclose(_angle(C[:, :-1], N[:, 1:], CA[:, 1:]), 121.7, atol=1e-7)
    assert np.allclose(_angle(CA, C, O), 120.8, atol=1e-7)


def test_sidechain_internal_coordinates(random_chain):
    # every side-chain atom sits at the bond length and angle of the geometry table
    ens = random_chain[0]
    table = geometry_table()["sidechain"]
    checked = 0
    for i, rn in enumerate(ens.res_name):
        for atom, ra, rb, rc, bond, angle, *_ in table[str(rn)]:
            d, b_, c_ = (ens.xyz(np.array([i]), x)[:, 0] for x in (atom, rb, rc))
            assert np.allclose(np.linalg.norm(d - c_, axis=-1), bond, atol=1e-9), (rn, atom)
            assert np.allclose(_angle(b_, c_, d), angle, atol=1e-7), (rn, atom)
            checked += 1
    assert checked > 150


def test_aromatic_rings_planar_and_closed(random_chain):
    # aromatic rings are planar and their closing bond is aromatic-length, 1.36-1.41 Å
    # (Engh & Huber 1991 ring bonds, from memory) although the builder never sets it
    ens = random_chain[0]
    rings = {"PHE": (["CG", "CD1", "CD2", "CE1", "CE2", "CZ"], ("CZ", "CE2")),
             "TYR": (["CG", "CD1", "CD2", "CE1", "CE2", "CZ"], ("CZ", "CE2")),
             "TRP": (["CD2", "CE2", "CE3", "CZ2", "CZ3", "CH2"], ("CZ3", "CH2")),
             "HIS": (["CG", "ND1", "CD2", "CE1", "NE2"], ("CE1", "NE2"))}
    for i, rn in enumerate(ens.res_name):
        if str(rn) not in rings:
            continue
        names, (x, y) = rings[str(rn)]
        pts = np.stack([ens.xyz(np.array([i]), a)[:, 0] for a in names], axis=1)
        for m in range(pts.shape[0]):
            p = pts[m] - pts[m].mean(0)
            assert np.linalg.svd(p, compute_uv=False)[-1] < 1e-6     # coplanar
        bond = np.linalg.norm(ens.xyz(np.array([i]), x) - ens.xyz(np.array([i]), y), axis=-1)
        assert np.all((bond > 1.30) & (bond < 1.42)), (rn, bond)


def test_alpha_helix_hydrogen_bond_geometry():
    # An ideal right-handed α-helix (φ -57°, ψ -47°; Pauling, Corey & Branson 1951, values as
    # commonly quoted) has O(i)···N(i+4) near 2.9-3.0 Å and CA(i)-CA(i+1) 3.8 Å (trans peptide);
    # about 3.6 residues per turn, i.e. 100° per residue around the axis.
    bb = build_backbone(np.full(20, -57.0), np.full(20, -47.0))
    d_on = np.linalg.norm(bb["O"][0, :-4] - bb["N"][0, 4:], axis=-1)
    assert np.all((d_on > 2.8) & (d_on < 3.2)), d_on
    d_cc = np.linalg.norm(np.diff(bb["CA"][0], axis=0), axis=-1)
    assert np.allclose(d_cc, 3.80, atol=0.03)
    # helix handedness: the CA trace dihedral is about +50° for a right-handed α-helix
    ca = bb["CA"][0]
    trace = dihedral(ca[:-3], ca[1:-2], ca[2:-1], ca[3:])
    assert np.all((trace > 40) & (trace < 60)), trace


def test_l_amino_acid_chirality_matches_crystal_structure(realdata):
    # the C-N-CA-CB improper of the builder matches a real protein (PDB 1UBQ, X-ray) within 4°
    import gemmi

    st = gemmi.read_structure(str(realdata / "ubiquitin" / "1ubq.pdb"))
    vals = []
    for res in st[0][0]:
        a = {at.name: np.array(at.pos.tolist()) for at in res}
        if all(k in a for k in ("C", "N", "CA", "CB")):
            vals.append(float(dihedral(a["C"], a["N"], a["CA"], a["CB"])))
    ens = build_protein(["ALA", "LEU", "ALA"], np.full(3, -65.0), np.full(3, -40.0))
    r = np.array([1])
    built = float(dihedral(*(ens.xyz(r, x)[0, 0] for x in ("C", "N", "CA", "CB"))))
    assert abs(built - np.median(vals)) < 4.0
