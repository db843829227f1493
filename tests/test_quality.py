"""Model geometry summary (shiftcheck.structure.quality) against independent computations.

Clash counts are recomputed by brute force: every heavy-atom pair (O(N^2) numpy), covalent
separation from a graph of bonds found by distance in the unmodified deposited model
(< 1.9 A; common practice, no source) and scipy's shortest paths, radii typed in here from
Bondi 1964 (J. Phys. Chem. 68:441, from memory), overlap 0.4 A (Word et al. 1999, J. Mol. Biol.
285:1735, from memory), N/O pairs only below 2.5 A (the documented hydrogen-bond exception).
"""
from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy.sparse.csgraph import shortest_path

from shiftcheck.structure.builder import build_protein
from shiftcheck.structure.geometry import backbone_torsions
from shiftcheck.structure.quality import (chain_breaks, clash_pairs, constants, geometry_summary,
                                          rama_outliers)

BONDI = {"C": 1.70, "N": 1.55, "O": 1.52, "S": 1.80}


def _heavy(ens):
    keep = np.char.upper(ens.element.astype(str)) != "H"
    return dataclasses.replace(ens, atom_res=ens.atom_res[keep], atom_name=ens.atom_name[keep],
                               element=ens.element[keep], coords=ens.coords[:, keep],
                               built=ens.built[keep], _index=None)


def _brute_force_clashes(xyz_models: np.ndarray, ref: np.ndarray, element: np.ndarray) -> list[int]:
    """Clash count per model, all pairs; bond graph from distances in the reference model."""
    dref = np.linalg.norm(ref[:, None] - ref[None], axis=-1)
    bonded = (dref < 1.9) & ~np.eye(len(ref), dtype=bool)
    hops = shortest_path(bonded.astype(float), unweighted=True)
    rad = np.array([BONDI[e] for e in element])
    limit = rad[:, None] + rad[None] - 0.4
    polar = np.isin(element, ["N", "O"])
    limit = np.where(polar[:, None] & polar[None], np.minimum(limit, 2.5), limit)
    iu = np.triu_indices(len(ref), 1)
    out = []
    for xyz in xyz_models:
        d = np.linalg.norm(xyz[:, None] - xyz[None], axis=-1)
        hit = (d < limit) & (hops > 3)
        out.append(int(hit[iu].sum()))
    return out


@pytest.fixture(scope="module")
def ubq(realdata):
    from shiftcheck.io.coords import read_models

    return _heavy(read_models([realdata / "ubiquitin" / "1ubq.pdb"], build_hydrogens=False)[0])


def test_built_clash_matches_brute_force(ubq):
    # move Leu 50's side chain (beyond CB) onto Ile 44's side chain (buried core neighbours)
    r_from, r_to = int(np.flatnonzero(ubq.res_seq == 50)[0]), int(np.flatnonzero(ubq.res_seq == 44)[0])
    side = lambda r: (ubq.atom_res == r) & ~np.isin(ubq.atom_name.astype(str), ["N", "CA", "C", "O", "CB"])
    xyz = ubq.coords[0].copy()
    shift = xyz[side(r_to)].mean(0) - xyz[side(r_from)].mean(0)
    xyz[side(r_from)] += shift
    two = dataclasses.replace(ubq, coords=np.stack([ubq.coords[0], xyz]), model_names=["orig", "moved"],
                              _index=None)
    got = np.bincount(clash_pairs(two)["model"], minlength=2)
    el = np.char.upper(ubq.element.astype(str))
    want = _brute_force_clashes(two.coords, ubq.coords[0], el)
    assert got.tolist() == want
    assert want[1] >= want[0] + 5          # the moved side chain really clashes
    recs = geometry_summary(two)
    assert recs[1]["clashes_per_1000"] == pytest.approx(1000 * want[1] / ubq.n_atoms, abs=0.01)
    assert recs[1]["severe_pairs"] > 0 and recs[1]["bad"] and not recs[0]["bad"]


def test_two_overlapping_copies(ubq):
    """Every atom of a copy shifted by 0.5 A sits on its twin: the model stack is searched
    model by model (copies in one model clash, models never clash with each other)."""
    n = ubq.n_atoms
    xyz = np.concatenate([ubq.coords[0], ubq.coords[0] + [0.5, 0.0, 0.0]])
    dup = dataclasses.replace(ubq, atom_res=np.concatenate([ubq.atom_res, ubq.atom_res + ubq.n_residues]),
                              atom_name=np.concatenate([ubq.atom_name] * 2),
                              element=np.concatenate([ubq.element] * 2), built=np.zeros(2 * n, bool),
                              res_seq=np.concatenate([ubq.res_seq, ubq.res_seq + 1000]),
                              res_icode=np.concatenate([ubq.res_icode] * 2),
                              res_name=np.concatenate([ubq.res_name] * 2), coords=xyz[None],
                              _index=None)
    c = clash_pairs(dup)
    twins = np.sum(c["j"] - c["i"] == n)
    assert twins == n                       # each atom with its own twin (0.5 A apart)
    assert np.all(c["severe"][c["j"] - c["i"] == n])
    stacked = dataclasses.replace(ubq, coords=np.stack([ubq.coords[0], ubq.coords[0] + 0.1]),
                                  model_names=["a", "b"], _index=None)
    one = np.bincount(clash_pairs(stacked)["model"], minlength=2)
    assert one[0] == one[1]                 # a rigid shift changes nothing; no cross-model pairs


def test_chain_break_after_deleting_a_residue(ubq):
    gone = int(np.flatnonzero(ubq.res_seq == 30)[0])
    keep_atoms = ubq.atom_res != gone
    keep_res = np.arange(ubq.n_residues) != gone
    new_index = np.cumsum(keep_res) - 1
    cut = dataclasses.replace(ubq, res_seq=ubq.res_seq[keep_res], res_icode=ubq.res_icode[keep_res],
                              res_name=ubq.res_name[keep_res], atom_res=new_index[ubq.atom_res[keep_atoms]],
                              atom_name=ubq.atom_name[keep_atoms], element=ubq.element[keep_atoms],
                              coords=ubq.coords[:, keep_atoms], built=ubq.built[keep_atoms], _index=None)
    assert chain_breaks(ubq).sum() == 0
    br = chain_breaks(cut)
    assert br.sum() == 1 and cut.res_seq[np.flatnonzero(br[0])[0]] == 29
    # independent check of the distance: C(29)-N(31) in the deposited file, well above 2.0 A
    c29 = ubq.coords[0, ubq.index(gone - 1, "C")]
    n31 = ubq.coords[0, ubq.index(gone + 1, "N")]
    assert np.linalg.norm(c29 - n31) > 2.0
    rec = geometry_summary(cut)[0]
    assert rec["chain_breaks"] == 1 and rec["bad"] and "A:29 " in rec["break_after"][0]


def test_ramachandran_on_constructed_dihedrals():
    """phi=+60, psi=-120 is outside every allowed region of the hard-sphere map for a residue with
    a CB (Ramachandran et al. 1963); for Gly it is allowed (no CB); helix (-63, -42) is allowed."""
    seq = ["ALA", "LEU", "LYS", "ALA", "VAL", "GLY", "GLU", "ALA", "LEU", "SER"]
    phi, psi = np.full(10, -63.0), np.full(10, -42.0)
    phi[[3, 5]], psi[[3, 5]] = 60.0, -120.0
    ens = build_protein(seq, phi, psi, name="r")
    t = backbone_torsions(ens)
    assert t["phi"][0, 3] == pytest.approx(60.0, abs=0.5) and t["psi"][0, 3] == pytest.approx(-120.0, abs=0.5)
    out, defined = rama_outliers(ens)
    assert out[0].tolist() == [False, False, False, True, False, False, False, False, False, False]
    assert not defined[0, 0] and not defined[0, -1]     # termini lack phi or psi
    rec = geometry_summary(ens)[0]
    assert rec["rama_outliers"] == 1 and rec["rama_outliers_pct"] == pytest.approx(100 / 8)


@pytest.mark.parametrize("name", ["1ubq.pdb", "1D3Z.pdb"])
def test_deposited_ubiquitin_is_not_flagged(realdata, name):
    from shiftcheck.io.coords import read_models

    ens = read_models([realdata / "ubiquitin" / name])[0]
    w = constants()["warning"]
    for rec in geometry_summary(ens):
        assert not rec["bad"], rec
        assert rec["clashes_per_1000"] <= w["clashes_per_1000"] and rec["severe_pairs"] == 0
        assert rec["chain_breaks"] == 0 and rec["rama_outliers_pct"] <= 2.0


def test_score_outputs_carry_geometry(realdata):
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.pipeline import score_models
    from shiftcheck.report.tables import RANKING_COLUMNS, ranking_rows, summary_dict

    shifts = read_shifts(realdata / "ubiquitin" / "bmr17769.str")
    ens = read_models([realdata / "ubiquitin" / "1ubq.pdb", realdata / "ubiquitin" / "1D3Z.pdb"])
    res = score_models(shifts, ens, n_boot=20)
    rows = {r["model"]: r for r in ranking_rows(res)}
    assert {"clashes_per_1000", "chain_breaks", "rama_outliers_pct", "geometry_warning"} <= set(RANKING_COLUMNS)
    direct = {r["model"]: r for e in ens for r in geometry_summary(e)}
    for name, rec in direct.items():
        assert rows[name]["clashes_per_1000"] == rec["clashes_per_1000"]
        assert rows[name]["geometry_warning"] is rec["bad"]
    assert rows["1D3Z.pdb#mean"]["clashes_per_1000"] is None
    geo = summary_dict(res)["geometry"]
    assert [g["model"] for g in geo] == [r for r in rows if r in direct]
