"""Side-chain torsions (shiftcheck.predict.sidechain) against Biopython's dihedral on a public
NMR model, and the fitted-shape hydrogen-bond basis (shiftcheck.predict.hbond_basis) against
the contact list it is built from."""
import numpy as np
import pytest

from shiftcheck.io.coords import read_models
from shiftcheck.predict.hbond import hbond_contacts, hbond_parameters
from shiftcheck.predict.hbond_basis import basis_features
from shiftcheck.predict.sidechain import chi2, sidechain_class, sidechain_features


@pytest.fixture(scope="module")
def ubq(realdata):
    return read_models([str(realdata / "ubiquitin" / "1D3Z.pdb")])[0]


def test_chi2_matches_biopython(ubq, realdata):
    # Reference: Bio.PDB.vectors.calc_dihedral on the same atoms of model 1 (reference library).
    from Bio.PDB import PDBParser
    from Bio.PDB.vectors import calc_dihedral

    s = PDBParser(QUIET=True).get_structure("u", str(realdata / "ubiquitin" / "1D3Z.pdb"))[0]
    chain = next(iter(s))
    ours = chi2(ubq)[0]
    checked = 0
    for i, (name, seq) in enumerate(zip(ubq.res_name, ubq.res_seq)):
        atoms = {"LEU": ("CG", "CD1"), "ILE": ("CG1", "CD1"), "PHE": ("CG", "CD1"), "LYS": ("CG", "CD")}.get(str(name))
        if atoms is None:
            assert str(name) in ("ARG", "ASN", "ASP", "GLN", "GLU", "HIS", "MET", "PRO", "TRP", "TYR") or np.isnan(ours[i])
            continue
        r = chain[int(seq)]
        ref = np.degrees(calc_dihedral(*(r[a].get_vector() for a in ("CA", "CB") + atoms)))
        assert ours[i] == pytest.approx(ref, abs=1e-3)
        checked += 1
    assert checked >= 15


def test_sidechain_features_are_zero_outside_their_class(ubq):
    tors = {"chi1": np.zeros((1, 3)) + 60.0, "chi2": np.zeros((1, 3)) + 180.0}
    names, f = sidechain_features(tors, np.array(["VAL", "GLY", "LEU"]), {"chi1": 1, "chi2": 1})
    assert f.shape == (1, 3, len(names)) and len(names) == 2 * 4 * 2
    assert np.all(f[0, 1] == 0)                                    # Gly: no side-chain class
    beta = [k for k, n in enumerate(names) if n.startswith("beta_chi1")]
    assert f[0, 0, beta] == pytest.approx([0.5, np.sqrt(3) / 2])   # cos 60, sin 60
    assert np.all(f[0, 0, [k for k, n in enumerate(names) if n.startswith("beta_chi2")]] == 0)  # Val has no chi2
    assert list(sidechain_class(np.array(["THR", "TYR", "ALA"]))) == ["beta", "arom", ""]


def test_hbond_basis_partitions_each_contact(ubq):
    # Triangular functions with half-width = spacing sum to 1 between the first and last centre
    # (property of the hat basis, common practice, no source), so per amide H the 'any' columns
    # add up to the number of its contacts in that range, and the 'lin' columns to their angle weights.
    par = hbond_parameters()
    lo, hi = min(par["basis_centres"]), max(par["basis_centres"])
    names = np.asarray(ubq.atom_name).astype(str)
    targets = np.flatnonzero(names == "H")
    f = basis_features(ubq, targets)
    c = hbond_contacts(ubq)
    h = par["basis_half_width"]
    # inside [lo, hi] a contact adds 1; outside, only the end function's tail
    part = np.where(c["dist"] < lo, 1 - (lo - c["dist"]) / h, np.where(c["dist"] > hi, 1 - (c["dist"] - hi) / h, 1.0))
    part = np.clip(part, 0, None)
    any_sum = sum(v for k, v in f.items() if k.endswith("_any"))
    lin_sum = sum(v for k, v in f.items() if k.endswith("_lin"))
    for t in targets[:40]:
        k = np.flatnonzero(targets == t)[0]
        sel = (c["h"] == t) & (c["model"] == 0)
        assert any_sum[0, k] == pytest.approx(part[sel].sum(), abs=1e-9)
        assert lin_sum[0, k] == pytest.approx((part * c["weight"])[sel].sum(), abs=1e-9)
    assert any_sum[0].max() >= 1   # ubiquitin's amide H do make contacts


def test_hbond_basis_of_backbone_n_is_that_of_its_amide_h(ubq):
    # definition of the candidate (common practice, no source): a backbone N takes the columns of
    # its own residue's amide H; Pro (no amide H) and other heavy atoms get zeros
    names = np.asarray(ubq.atom_name).astype(str)
    res = np.asarray(ubq.atom_res)
    n_at = np.flatnonzero(names == "N")
    own_h = ubq.indices(res[n_at], "H")
    f_n = basis_features(ubq, n_at)
    f_h = basis_features(ubq, np.where(own_h >= 0, own_h, -1))
    has = own_h >= 0
    assert has.sum() > 60 and (~has).sum() >= 3          # ubiquitin has Pro19, Pro37, Pro38
    for k in f_n:
        assert np.array_equal(f_n[k][:, has], f_h[k][:, has])
        assert np.all(f_n[k][:, ~has] == 0)
    assert max(v.max() for v in f_n.values()) > 0
    ca = basis_features(ubq, np.flatnonzero(names == "CA"))
    assert all(np.all(v == 0) for v in ca.values())
