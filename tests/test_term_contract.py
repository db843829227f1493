"""The contract every registered predictor term keeps (shiftcheck.predict.terms.REGISTRY).

Checks of the plumbing, common practice, no source (one contract test over every estimator, as
is usual for libraries of estimators): each term declares its fields; its builder gives finite
columns of the right shape, named with its prefixes, on a public structure (ubiquitin 1D3Z, two
NMR models, BMRB/PDB realdata) and on a small synthetic peptide built by the project's builder;
the shipped parameter file holds its coefficients for every class it applies to; its output
column is in the prediction and moves when (and only when) its coefficients change; a class it
does not apply to gets none of its columns.
"""
from __future__ import annotations

import copy

import numpy as np
import pytest

from shiftcheck.chem.nuclei import ALL_CLASSES
from shiftcheck.predict.features import StructureFeatures
from shiftcheck.predict.model import TERMS, Predictor
from shiftcheck.predict.params import load_params
from shiftcheck.predict.terms import OUTPUTS, REGISTRY, FeatureSettings, default_groups

IDS = [t.name for t in REGISTRY]
PEPTIDE = ("ALA", "PHE", "LYS", "TRP", "ILE", "GLU", "VAL", "TYR", "LEU", "SER", "THR", "ASN", "MET", "ALA")


@pytest.fixture(scope="module")
def params():
    return load_params()


@pytest.fixture(scope="module")
def peptide():
    """Two models of a 14-residue peptide: α-helix and β-strand (heavy atoms + built hydrogens)."""
    from shiftcheck.structure.builder import build_protein
    from shiftcheck.structure.hydrogens import add_hydrogens

    n = len(PEPTIDE)
    phi = np.array([np.full(n, -63.0), np.full(n, -120.0)])
    psi = np.array([np.full(n, -42.0), np.full(n, 130.0)])
    return add_hydrogens(build_protein(PEPTIDE, phi, psi, name="pep", model_names=["pep#1", "pep#2"]))


@pytest.fixture(scope="module")
def ubq(realdata):
    from shiftcheck.io.coords import read_models

    return read_models([str(realdata / "ubiquitin" / "1D3Z.pdb")])[0].select_models([0, 1])


def _settings(params, ring_model=None):
    return FeatureSettings(ring_model or params["default_ring_model"]["value"], params["conformation"],
                           params.get("burial"))


@pytest.mark.parametrize("t", REGISTRY, ids=IDS)
def test_term_declares_its_fields(t):
    assert isinstance(t.name, str) and t.name
    assert t.prefixes and all(isinstance(p, str) and p for p in t.prefixes)
    assert t.output in OUTPUTS and t.output != "random_coil"
    assert t.nuclei and set(t.nuclei) <= set(ALL_CLASSES)
    assert callable(t.builder())
    others = [p for u in REGISTRY if u is not t for p in u.prefixes]
    # no prefix of this term is the start of another term's prefix (a column has one owner)
    assert not any(o.startswith(p) or p.startswith(o) for p in t.prefixes for o in others)


def test_registry_is_the_one_list_of_terms(params):
    assert len(set(IDS)) == len(IDS)
    assert TERMS == OUTPUTS == ("random_coil", *dict.fromkeys(t.output for t in REGISTRY))
    # the shipped parameter file was fitted with exactly the registry's terms per class
    assert params["groups"] == default_groups()


def _check_columns(t, ens, params):
    sf = StructureFeatures.from_ensemble(ens, None, params["random_coil"])
    built = 0
    for rm in params["coefficients"]:
        st = _settings(params, rm)
        for nuc in t.nuclei:
            sel = np.flatnonzero(sf.targets.nucleus == nuc)
            cols = t.columns(sf, nuc, sel, st)
            for name, col in cols.items():
                assert t.owns(name), (t.name, name)
                assert np.shape(col) == (ens.n_models, sel.size), (t.name, nuc, name)
                assert np.all(np.isfinite(col)), (t.name, nuc, name)
            built += len(cols) * sel.size
    return built


@pytest.mark.parametrize("t", REGISTRY, ids=IDS)
def test_columns_finite_and_shaped_on_realdata(t, ubq, params):
    assert _check_columns(t, ubq, params) > 0


@pytest.mark.parametrize("t", REGISTRY, ids=IDS)
def test_columns_finite_and_shaped_on_synthetic_peptide(t, peptide, params):
    assert _check_columns(t, peptide, params) > 0


@pytest.mark.parametrize("t", REGISTRY, ids=IDS)
def test_shipped_coefficients_cover_the_classes_it_applies_to(t, params):
    for rm, per in params["coefficients"].items():
        for nuc in t.nuclei:
            assert any(t.owns(n) for n in per[nuc]["names"]), (t.name, rm, nuc)
        for nuc in set(per) - set(t.nuclei):
            assert not any(t.owns(n) for n in per[nuc]["names"]), (t.name, rm, nuc)


@pytest.mark.parametrize("t", REGISTRY, ids=IDS)
def test_its_output_column_carries_its_contribution(t, peptide, params):
    """Zeroing the term's coefficients changes its output column at the classes it applies to,
    and no other column of the prediction."""
    base = Predictor(params).predict(peptide)
    assert t.output in base.terms
    p = copy.deepcopy(params)
    for per in p["coefficients"].values():
        for block in per.values():
            block["values"] = [0.0 if t.owns(n) else v for n, v in zip(block["names"], block["values"])]
    off = Predictor(p).predict(peptide)
    on = np.isin(base.nucleus, t.nuclei)
    assert not np.allclose(base.terms[t.output][:, on], off.terms[t.output][:, on])
    assert np.array_equal(base.terms[t.output][:, ~on], off.terms[t.output][:, ~on])
    for other in set(TERMS) - {t.output}:
        assert np.array_equal(base.terms[other], off.terms[other]), other


@pytest.mark.parametrize("t", [t for t in REGISTRY if set(ALL_CLASSES) - set(t.nuclei)],
                         ids=[t.name for t in REGISTRY if set(ALL_CLASSES) - set(t.nuclei)])
def test_no_columns_for_a_class_it_does_not_apply_to(t, peptide, params):
    sf = StructureFeatures.from_ensemble(peptide, None, params["random_coil"])
    st = _settings(params)
    for nuc in set(ALL_CLASSES) - set(t.nuclei):
        names, groups, _, _ = sf.matrix(nuc, None, None, st.ring_model, st.conformation, st.burial)
        assert names, nuc                      # other terms do build columns for that class
        assert not any(t.owns(n) for n in names) and t.name not in groups, (t.name, nuc)


def test_offset_applies_to_every_class():
    # the one term without an excluded class (so the test above cannot cover it)
    assert set(REGISTRY[0].nuclei) == set(ALL_CLASSES) and REGISTRY[0].name == "offset"
