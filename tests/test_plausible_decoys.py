"""tools/plausible_decoys.py: threading keeps the donor's backbone exactly under the native's
sequence; torsion candidates put moved loop residues into the named backbone basins and leave
helix/strand residues alone; the OpenMM step (development-only, skipped without OpenMM) returns a
model whose heavy atoms no longer clash."""
from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tools"))
from plausible_decoys import BASINS, heavy_only, thread_backbone, torsion_candidates, with_native_side_chains  # noqa: E402,E501

from shiftcheck.structure.builder import build_protein  # noqa: E402
from shiftcheck.structure.geometry import backbone_torsions  # noqa: E402


def _protein(seq, phi, psi):
    return heavy_only(build_protein(seq, np.asarray(phi, float), np.asarray(psi, float), name="p"))


def test_threading_copies_the_donor_backbone():
    target = _protein(["ALA", "GLY", "LEU", "SER", "LYS", "GLU"], [-63] * 6, [-42] * 6)
    donor = _protein(["VAL"] * 9, [-120] * 9, [130] * 9)
    bb, term = thread_backbone(target, donor, 2)
    assert term == ([], [])
    assert list(bb.res_name) == list(target.res_name) and bb.n_atoms == 4 * 6
    r = np.arange(6)
    for name in ("N", "CA", "C", "O"):
        assert np.allclose(bb.xyz(r, name)[0], donor.xyz(r + 2, name)[0])
    small = _protein(["VAL"] * 4, [-120] * 4, [130] * 4)
    bb2, term2 = thread_backbone(target, small, 0)
    assert bb2.n_residues == 4 and term2 == (["ALA"], ["GLU"])   # one residue to build at each end


def test_torsion_candidates_use_basins_and_keep_secondary_structure(realdata):
    from shiftcheck.io.coords import read_models
    from shiftcheck.score.secondary import assign_secondary

    nat = heavy_only(read_models([realdata / "ubiquitin" / "1ubq.pdb"], build_hydrogens=False)[0])
    xyz, kinds = torsion_candidates(nat, 6, np.random.default_rng(0))
    cand = dataclasses.replace(nat, coords=xyz, model_names=[str(k) for k in range(6)], _index=None)
    t0, t1 = backbone_torsions(nat), backbone_torsions(cand)
    ss = np.array(list(assign_secondary(nat)[0]))
    wrap = lambda a: (a + 180) % 360 - 180
    centres = np.array(list(BASINS.values()))
    for k in np.flatnonzero(np.array(kinds) == "tertiary"):
        moved = np.abs(np.nan_to_num(wrap(t1["phi"][k] - t0["phi"][0]))) > 1e-6
        assert moved.any() and not moved[ss != "C"].any()
        for r in np.flatnonzero(moved & np.isfinite(t1["psi"][k])):
            d = np.hypot(wrap(t1["phi"][k, r] - centres[:, 0]), wrap(t1["psi"][k, r] - centres[:, 1]))
            assert d.min() < 50.0              # within 5 sigma (10 deg each) of a basin centre


def test_minimisation_removes_clashes(tmp_path):
    pytest.importorskip("openmm")
    pytest.importorskip("pdbfixer")
    from plausible_decoys import _pdb_text, minimise

    from shiftcheck.io.coords import read_models
    from shiftcheck.structure.quality import geometry_summary

    pep = _protein(["ALA", "LEU", "LYS", "PHE", "GLU", "ALA", "LEU", "LYS"], [-63] * 8, [-42] * 8)
    xyz = pep.coords.copy()
    side = (pep.atom_res == 3) & ~np.isin(pep.atom_name.astype(str), ["N", "CA", "C", "O", "CB"])
    target = (pep.atom_res == 6) & ~np.isin(pep.atom_name.astype(str), ["N", "CA", "C", "O", "CB"])
    xyz[0, side] += 0.6 * (xyz[0, target].mean(0) - xyz[0, side].mean(0))
    bad = dataclasses.replace(pep, coords=xyz, _index=None)
    before = geometry_summary(bad)[0]["clashes"]
    energy = minimise(_pdb_text(bad), tmp_path / "m.pdb", threads=1)
    after = geometry_summary(read_models([tmp_path / "m.pdb"])[0])[0]
    assert np.isfinite(energy) and before > 0 and after["clashes"] < before and after["severe_pairs"] == 0


def test_partial_threading_leaves_unmatched_termini_out():
    target = _protein(["ALA", "GLY", "LEU", "SER", "LYS", "GLU", "ASP", "ARG"], [-63] * 8, [-42] * 8)
    small = _protein(["VAL"] * 5, [-120] * 5, [130] * 5)
    bb, term = thread_backbone(target, small, 0, offset=2)
    assert term == ([], []) and bb.n_residues == 5
    assert list(bb.res_name) == ["LEU", "SER", "LYS", "GLU", "ASP"]
    assert list(bb.res_seq) == list(target.res_seq[2:7])
    for name in ("N", "CA", "C", "O"):
        assert np.allclose(bb.xyz(np.arange(5), name)[0], small.xyz(np.arange(5), name)[0])
    with pytest.raises(ValueError):
        thread_backbone(target, small, 0, offset=4)      # 4 + 5 > 8 residues


def test_ladder_noise_changes_every_torsion_by_the_drawn_amount(realdata):
    """The ladder's candidates carry exactly the phi/psi changes drawn (torsions measured on the
    rebuilt coordinates by shiftcheck.structure.geometry), their spread scales with sigma, and
    TM-score to the native falls as sigma grows (real protein: ubiquitin 1UBQ)."""
    from plausible_decoys import ladder_candidates, load_native
    from tmscore import tm_score

    nat = load_native(realdata, "ubiquitin")
    xyz, sig, dphi, dpsi = ladder_candidates(nat, 8, np.random.default_rng(3))
    cand = dataclasses.replace(nat, coords=xyz, model_names=[str(k) for k in range(8)], _index=None)
    t0, t1 = backbone_torsions(nat), backbone_torsions(cand)
    wrap = lambda a: (a + 180) % 360 - 180
    assert not dphi[:, nat.res_name.astype(str) == "PRO"].any()
    for key, drawn in (("phi", dphi), ("psi", dpsi)):
        got = wrap(t1[key] - t0[key][0])
        ok = np.isfinite(got)
        assert ok.sum() > 0.9 * got.size
        assert np.allclose(got[ok], wrap(drawn)[ok], atol=1e-3)
    assert np.all(sig >= 0.3 - 1e-9) and np.all(sig <= 12.0)
    ca = nat.indices(np.arange(nat.n_residues), "CA")
    tm = np.array([tm_score(xyz[k, ca], nat.coords[0, ca], n_iter=4) for k in range(8)])
    lo, hi = np.argsort(sig)[:3], np.argsort(sig)[-3:]
    assert tm[lo].mean() > tm[hi].mean()


def test_native_side_chains_ride_on_the_donor_backbone():
    """Threaded model with the native's side chains: backbone atoms exactly the donor's, every
    side-chain atom at the same position relative to its residue's N, CA, C as in the native
    (rigid-body geometry: distances to N, CA, C kept), for a full and a partial window."""
    seq = ["PHE", "LEU", "LYS", "TRP", "GLU", "ARG", "TYR"]
    target = _protein(seq, [-63] * 7, [-42] * 7)
    donor = _protein(["VAL"] * 9, [-120] * 9, [130] * 9)
    for start, offset, size in ((1, None, 7), (0, 2, 5)):
        small = donor if offset is None else _protein(["VAL"] * 5, [-120] * 5, [130] * 5)
        bb, _ = thread_backbone(target, small, start, offset=offset)
        first = offset or 0
        full = with_native_side_chains(target, bb, first)
        assert full.n_residues == size and list(full.res_name) == seq[first:first + size]
        r = np.arange(size)
        for name in ("N", "CA", "C", "O"):
            assert np.allclose(full.xyz(r, name)[0], bb.xyz(r, name)[0])
        names = full.atom_name.astype(str)
        side = ~np.isin(names, ["N", "CA", "C", "O"])
        assert side.sum() == sum(((target.atom_res == i + first) & ~np.isin(
            target.atom_name.astype(str), ["N", "CA", "C", "O", "OXT"])).sum() for i in r)
        for a in np.flatnonzero(side):
            i = full.atom_res[a]
            t = target.index(i + first, names[a])
            for ref in ("N", "CA", "C"):
                d_full = np.linalg.norm(full.coords[0, a] - full.xyz(np.array([i]), ref)[0, 0])
                d_nat = np.linalg.norm(target.coords[0, t] - target.xyz(np.array([i + first]), ref)[0, 0])
                assert abs(d_full - d_nat) < 1e-4      # both built with the same ideal N-CA-C geometry
