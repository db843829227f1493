"""The predictor on real structures (SHIFTCHECK_REALDATA) and on its own building blocks."""
import csv

import numpy as np
import pytest

from shiftcheck.cli import main
from shiftcheck.io.coords import read_models
from shiftcheck.predict.conformation import conformation_features, fourier_1d, fourier_2d, neighbour_block
from shiftcheck.predict.model import TERMS, Predictor, predict


def test_fourier_basis_nan_is_zero_and_periodic():
    names, f = fourier_1d(np.array([np.nan, 30.0, 390.0]), 2, "x")
    assert names == ["xcos1", "xsin1", "xcos2", "xsin2"]
    assert np.all(f[0] == 0) and np.allclose(f[1], f[2])
    names, f2 = fourier_2d(np.array([-60.0]), np.array([np.nan]), 2)
    assert len(names) == 4 + 4 + 16
    assert np.all(f2[0, 4:] == 0) and np.any(f2[0, :4] != 0)


def test_neighbour_blocks_take_the_neighbours_torsions():
    # definition of the blocks (common practice, no source): the value at residue i is the
    # Fourier term of residue i + offset; no neighbour (chain end) gives 0
    phi = np.array([[np.nan, -60.0, -120.0, 70.0]])
    psi = np.array([[140.0, -40.0, 130.0, np.nan]])
    tors = {"phi": phi, "psi": psi}
    names, f = neighbour_block(tors, "psi", -1, 2)
    assert names == ["psi_prev_cos1", "psi_prev_sin1", "psi_prev_cos2", "psi_prev_sin2"]
    assert np.all(f[0, 0] == 0)
    assert np.allclose(f[0, 1:], fourier_1d(psi[0, :-1], 2, "")[1])
    names, f = neighbour_block(tors, "phi", 1, 1)
    assert names == ["phi_next_cos1", "phi_next_sin1"] and np.all(f[0, 3] == 0)
    assert np.allclose(f[0, 1], [np.cos(np.radians(-120.0)), np.sin(np.radians(-120.0))])
    names, f = neighbour_block(tors, "phi_psi", -1, 1)
    assert len(names) == 8 and names[0] == "prev:phi_cos1"
    assert np.allclose(f[0, 2], fourier_2d(phi[0, 1:2], psi[0, 1:2], 1)[1][0])
    with pytest.raises(ValueError):
        neighbour_block(tors, "omega", 1, 1)
    # chi1 of residue i-1 (undefined for Gly/Ala: NaN -> 0); needs the chi1 torsions
    chi = np.array([[np.nan, -65.0, 180.0, 60.0]])
    names, f = neighbour_block(dict(tors, chi1=chi), "chi1", -1, 1)
    assert names == ["chi1_prev_cos1", "chi1_prev_sin1"] and np.all(f[0, :2] == 0)
    assert np.allclose(f[0, 2], [np.cos(np.radians(-65.0)), np.sin(np.radians(-65.0))])
    with pytest.raises(ValueError):
        neighbour_block(tors, "chi1", -1, 1)
    # without settings (older parameter files): psi(i-1) for N, chi1 only for CB
    n_old, _ = conformation_features(tors, np.array(["ALA"] * 4), "N")
    assert "psi_prev_cos2" in n_old and not any(n.startswith(("prev:", "chi1")) for n in n_old)
    n_new, _ = conformation_features(dict(tors, chi1=phi), np.array(["ALA"] * 4), "N",
                                     neighbours={"N": [["phi_psi", -1, 2]]}, chi1={"N": 1})
    assert "prev:phi_sin2*psi_cos2" in n_new and "chi1_cos1" in n_new


def test_class_masked_neighbour_block_counts_only_that_class():
    # definition of the setting (common practice, no source): [kind, offset, order, class] is the
    # neighbour block of residue i + offset, zero unless that residue is of the class
    tors = {"phi": np.array([[-60.0, -70.0, 80.0, -100.0]]), "psi": np.array([[130.0, -40.0, 10.0, 120.0]])}
    res = np.array(["VAL", "ALA", "GLY", "ALA"])
    names, f = conformation_features(tors, res, "N", neighbours={"N": [["psi", -1, 2, "BETA"]]}, chi1={})
    cols = [k for k, n in enumerate(names) if n.startswith("BETA@psi_prev_")]
    assert [names[k] for k in cols] == ["BETA@psi_prev_cos1", "BETA@psi_prev_sin1",
                                        "BETA@psi_prev_cos2", "BETA@psi_prev_sin2"]
    # only residue 1 follows a beta-branched residue (Val 0); its value is psi(0) = 130 degrees
    assert np.all(f[0, [0, 2, 3]][:, cols] == 0)
    assert np.allclose(f[0, 1, cols[:2]], [np.cos(np.radians(130.0)), np.sin(np.radians(130.0))])


def test_residue_type_blocks_are_the_shared_basis_at_that_type_only():
    # definition of the candidate (common practice, no source): one phi/psi block per residue
    # type (Gly and Pro excluded, they have class blocks), equal to the order-k 2-D Fourier basis
    # at residues of that type and zero elsewhere; the same 18 x 8 names whatever the sequence
    tors = {"phi": np.array([[-60.0, -120.0, 75.0]]), "psi": np.array([[-40.0, 130.0, 20.0]])}
    res = np.array(["ALA", "VAL", "GLY"])
    names, f = conformation_features(tors, res, "CA", 2, 1, neighbours={}, chi1={}, type_order={"CA": 1})
    plain, _ = conformation_features(tors, res, "CA", 2, 1, neighbours={}, chi1={})
    typ = [n for n in names if n.startswith("TYPE:")]
    assert len(typ) == 18 * 8 and names[:len(plain)] == plain
    other, _ = conformation_features(tors, np.array(["TRP", "SER", "LYS"]), "CA", 2, 1, neighbours={},
                                     chi1={}, type_order={"CA": 1})
    assert other == names
    basis = fourier_2d(tors["phi"][0], tors["psi"][0], 1)[1]
    ala = [names.index(n) for n in typ if n.startswith("TYPE:ALA:")]
    val = [names.index(n) for n in typ if n.startswith("TYPE:VAL:")]
    assert np.allclose(f[0, 0, ala], basis[0]) and np.all(f[0, 1:, ala] == 0)
    assert np.allclose(f[0, 1, val], basis[1]) and np.all(f[0, [0, 2]][:, val] == 0)
    assert np.all(f[0, 2, [names.index(n) for n in typ]] == 0)      # Gly: no type block
    h_names, _ = conformation_features(tors, res, "H", 2, 1, neighbours={}, chi1={}, type_order={"CA": 1})
    assert not any(n.startswith("TYPE:") for n in h_names)


def test_residue_class_order_can_differ_per_nucleus():
    # definition of the setting (common practice, no source): an int is one order for every
    # class; a dict names orders per nucleus class with "default" for the rest. A 2-D Fourier
    # basis of order k has 4k + 4k^2 columns (8 for k = 1, 24 for k = 2), per residue class
    tors = {"phi": np.array([[-60.0, -120.0]]), "psi": np.array([[-40.0, 130.0]])}
    res = np.array(["GLY", "VAL"])
    co = {"default": 1, "CA": 2}
    for nuc, k in (("CA", 24), ("H", 8)):
        names, f = conformation_features(tors, res, nuc, 2, co, neighbours={}, chi1={})
        gly = [n for n in names if n.startswith("GLY:")]
        assert len(gly) == k and f.shape[-1] == len(names)
        same, _ = conformation_features(tors, res, nuc, 2, 2 if k == 24 else 1, neighbours={}, chi1={})
        assert same == names
        # the Gly block is zero on the Val residue and the Val (beta-branched) block on Gly
        g = [names.index(n) for n in gly]
        assert np.all(f[0, 1, g] == 0) and np.any(f[0, 0, g] != 0)


def test_own_torsion_order_can_differ_per_nucleus():
    # the 'order' setting takes the same int-or-dict form as 'class_order' (common practice,
    # no source); the shared 2-D basis of order k has 4k + 4k^2 columns (48 for k = 3)
    from shiftcheck.predict.term_columns import conformation
    from shiftcheck.predict.terms import FeatureSettings

    class SF:  # the attributes the column builder reads: torsions, residue names, targets' residue index
        torsions = {"phi": np.array([[-60.0, -120.0]]), "psi": np.array([[-40.0, 130.0]]),
                    "chi1": np.array([[np.nan, 60.0]])}

        class ens:
            res_name = np.array(["ALA", "VAL"])

        class targets:
            res_index = np.array([0, 1])

    for nuc, k in (("N", 3), ("H", 2)):
        s = FeatureSettings("haigh-mallion", {"order": {"default": 2, "N": 3}, "class_order": 1,
                                              "neighbours": {}, "chi1": {}})
        cols = conformation(SF, nuc, np.array([0, 1]), s)
        shared = [c for c in cols if not c.startswith(("conf:GLY:", "conf:PRO:", "conf:BETA:"))]
        assert len(shared) == 4 * k + 4 * k * k


@pytest.fixture(scope="session")
def ubq(realdata):
    return read_models([str(realdata / "ubiquitin" / "1D3Z.pdb")])[0]


def test_terms_sum_and_shapes(ubq):
    pred = Predictor().predict(ubq)
    assert pred.values.shape == (ubq.n_models, len(pred))
    assert set(TERMS) <= set(pred.terms)
    total = sum(pred.terms.values())
    ok = np.isfinite(pred.values)
    assert ok.mean() > 0.99
    assert np.allclose(total[ok], pred.values[ok])
    for nuc in ("H", "HA", "CA", "CB", "C", "N", "HMe", "Haro"):
        assert (pred.nucleus == nuc).sum() > 10
    # helix residues of ubiquitin (23-34) have CA above random coil (Spera & Bax 1991)
    helix = np.isin(pred.res_seq, np.arange(24, 33)) & (pred.nucleus == "CA")
    assert np.mean(pred.values[0, helix] - pred.terms["random_coil"][0, helix]) > 1.0
    # strand residues 1-7: CA below random coil
    strand = np.isin(pred.res_seq, np.arange(2, 7)) & (pred.nucleus == "CA")
    assert np.mean(pred.values[0, strand] - pred.terms["random_coil"][0, strand]) < -0.5


def test_anisotropy_term_only_where_fitted(ubq):
    # the shipped parameter file names the nucleus classes with the peptide-anisotropy group
    pred = Predictor()
    used = {n for n, g in pred.load().params_["groups"].items() if "anisotropy" in g}
    assert used, "no class uses the anisotropy term"
    p = pred.predict(ubq)
    a = p.terms["anisotropy"]
    on = np.isin(p.nucleus, sorted(used))
    assert np.all(a[:, ~on] == 0)
    # McConnell term of a backbone proton in a folded protein: nonzero, well below 1 ppm
    # in magnitude on average (order of magnitude from memory)
    assert np.mean(np.abs(a[:, on]) > 0) > 0.9
    assert 0.005 < np.mean(np.abs(a[:, on])) < 0.5


def test_burial_term_only_where_fitted_and_follows_packing(ubq):
    # the shipped parameter file names the classes with the burial group (CB, C, N per
    # docs/validation.md); the term is 0 elsewhere and varies between residues where used
    pred = Predictor()
    used = {n for n, g in pred.load().params_["groups"].items() if "burial" in g}
    assert used, "no class uses the burial term"
    p = pred.predict(ubq)
    b = p.terms["burial"]
    on = np.isin(p.nucleus, sorted(used))
    assert np.all(b[:, ~on] == 0)
    assert np.all(np.isfinite(b[:, on]))
    # a packing correction, not a second random-coil table: spread across residues of a few
    # tenths of a ppm, not several ppm (order of magnitude, common knowledge, no source)
    for nuc in used:
        s = np.std(b[0, p.nucleus == nuc])
        assert 0.01 < s < 1.5, (nuc, s)


def test_ring_model_choice_changes_the_ring_term_not_the_table(ubq):
    # The random-coil term is a table look-up (Wishart et al. 1995, from memory) and cannot
    # depend on the ring-current model; the ring term must. The other terms may move slightly,
    # because every ring model has its own fitted coefficient set (params_default.json).
    a = predict(ubq, ring_model="point-dipole")
    b = predict(ubq, ring_model="johnson-bovey")
    assert a.values.shape == b.values.shape
    assert np.array_equal(a.terms["random_coil"], b.terms["random_coil"], equal_nan=True)
    assert not np.allclose(a.terms["ring_current"], b.terms["ring_current"])
    # the two models differ where rings are close (Johnson & Bovey 1958 vs Pople 1956 differ
    # in the near field, agree in the far field): not everywhere
    d = np.abs(a.terms["ring_current"] - b.terms["ring_current"])[0]
    assert 0 < np.mean(d > 1e-3) < 0.9


def test_stripped_hydrogens_give_close_predictions(realdata, tmp_path):
    src = realdata / "ubiquitin" / "1D3Z.pdb"
    lines = src.read_text().splitlines(keepends=True)
    keep = [ln for ln in lines if not (ln.startswith("ATOM") and ln[76:78].strip() == "H")]
    stripped = tmp_path / "1D3Z_noH.pdb"
    stripped.write_text("".join(keep))
    full = read_models([str(src)])[0].select_models([0])
    noh = read_models([str(stripped)])[0].select_models([0])
    assert noh.built.any()
    p1, p2 = predict(full), predict(noh)
    k1 = {(r, a): i for i, (r, a) in enumerate(zip(p1.res_index, p1.atom_id))}
    for nuc, tol in (("H", 0.1), ("HA", 0.05)):
        idx = [(k1[(r, a)], j) for j, (r, a, n) in enumerate(zip(p2.res_index, p2.atom_id, p2.nucleus))
               if n == nuc and (r, a) in k1]
        assert len(idx) > 50
        i1, i2 = np.array(idx).T
        d = p1.values[0, i1] - p2.values[0, i2]
        assert np.nanmedian(np.abs(d)) < tol, nuc


def test_predict_every_realdata_file(realdata):
    # every public PDB file of the test set gets a prediction for almost every backbone atom
    # (common practice, no source: a missing prediction would silently drop data)
    pr = Predictor()
    for path in sorted(realdata.glob("*/*.pdb")):
        for ens in read_models([str(path)]):
            pred = pr.predict(ens.select_models([0]))
            assert np.isfinite(pred.values).mean() > 0.95, path.name


def test_predict_command_csv(realdata, tmp_path, capsys):
    out = tmp_path / "pred.csv"
    rc = main(["predict", str(realdata / "ubiquitin" / "1ubq.pdb"), "-o", str(out)])
    assert rc == 0
    rows = list(csv.DictReader(out.open()))
    assert rows and set(TERMS) <= set(rows[0])
    r = rows[0]
    assert float(r["predicted"]) == pytest.approx(sum(float(r[t]) for t in TERMS), abs=0.01)
    assert main(["predict", str(realdata / "ubiquitin" / "1ubq.pdb"), "--ring-model", "point-dipole"]) == 0
    assert "random_coil" in capsys.readouterr().out


def test_bad_params_exit_2(realdata, tmp_path, capsys):
    bad = tmp_path / "p.json"
    bad.write_text("[]")
    assert main(["predict", str(realdata / "ubiquitin" / "1ubq.pdb"), "--params", str(bad)]) == 2
    assert str(bad) in capsys.readouterr().err


def test_predictor_follows_the_estimator_convention(realdata, tmp_path):
    # common practice, no source: __init__ only stores its arguments (a missing file is not read
    # until needed), fit() returns self with the learned values in params_ / coef_, and the
    # fitted predictor predicts with them (public BMRB/PDB pairs: ubiquitin, CI2)
    from shiftcheck.errors import ParameterError
    from shiftcheck.predict.calibrate import Pair

    lazy = Predictor(str(tmp_path / "missing.json"), ring_model="point-dipole")
    assert lazy.params == str(tmp_path / "missing.json") and lazy.ring_model == "point-dipole"
    assert not hasattr(lazy, "params_")
    with pytest.raises(ParameterError):
        lazy.load()
    pairs = [Pair(str(realdata / "ubiquitin/bmr17769.str"), str(realdata / "ubiquitin/1ubq.pdb")),
             Pair(str(realdata / "ci2/bmrb4974.str"), str(realdata / "ci2/3CI2.pdb"))]
    est = Predictor(ring_model="point-dipole")
    assert est.fit(pairs, description="two pairs") is est
    assert est.ring_model_ == "point-dipole" and est.params_["training"]["n_shift_lists"] == 2
    names, values = est.coef_["CA"]
    assert names == est.params_["coefficients"]["point-dipole"]["CA"]["names"] and len(values) == len(names)
    shipped = Predictor(ring_model="point-dipole").load()
    assert not np.allclose(values, shipped.coef_["CA"][1][:len(values)]) or names != shipped.coef_["CA"][0]
    ens = read_models([str(realdata / "ubiquitin/1ubq.pdb")])[0]
    a, b = est.predict(ens), shipped.predict(ens)
    ca = a.nucleus == "CA"
    assert np.all(np.isfinite(a.values[:, ca])) and not np.allclose(a.values[:, ca], b.values[:, ca])


@pytest.mark.parametrize("engine", ["0", "1"])
def test_predict_many_stacks_same_topology_files_with_equal_results(realdata, engine, monkeypatch):
    """Files of one decoy set (here the 20 models of 2K5P as 20 one-model ensembles, with
    ubiquitin 1D3Z in between) predicted as stacks equal one-by-one predictions exactly (no
    number depends on the other models of a stack), names and shapes included; numpy path
    (SHIFTCHECK_NUMBA=0) and compiled path."""
    if engine == "1":
        pytest.importorskip("numba")
    monkeypatch.setenv("SHIFTCHECK_NUMBA", engine)
    import dataclasses

    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.model import Predictor
    from shiftcheck.structure.ensemble import stack_compatible

    a = read_models([realdata / "this" / "2k5p.pdb"])[0]
    u = read_models([realdata / "ubiquitin" / "1D3Z.pdb"])[0].select_models([0, 1])
    singles = [dataclasses.replace(a.select_models([i]), name=f"m{i}.pdb", model_names=[f"m{i}.pdb"])
               for i in range(a.n_models)]
    ens = singles[:12] + [u] + singles[12:]
    assert stack_compatible(singles[0], singles[5]) and not stack_compatible(singles[0], u)
    pred = Predictor()
    many = pred.predict_many(ens, max_models=8)
    assert len(many) == len(ens)
    for e, p in zip(ens, many):
        q = pred.predict(e)
        assert p.ensemble_name == q.ensemble_name and p.model_names == q.model_names
        assert np.array_equal(p.atom_id, q.atom_id) and np.array_equal(p.res_index, q.res_index)
        assert np.array_equal(p.values, q.values, equal_nan=True)
        for t in q.terms:
            assert np.array_equal(p.terms[t], q.terms[t], equal_nan=True), t
    assert np.isfinite(many[0].values).sum() > 500
