"""Random-coil table and corrections (values typed from Wishart et al. 1995, J. Biomol. NMR 5:67,
from memory; ranges below are textbook knowledge of random-coil shifts, common practice)."""
import numpy as np
import pytest

from shiftcheck.predict.randomcoil import (cis_mask, load_table, ph_correction, table_value,
                                           temperature_correction)
from shiftcheck.chem.residues import AA20

T = load_table()


def test_known_anchor_values():
    # Gly CA near 45, Ala CB near 19, Ser CB near 64, Thr CB near 70, Gly N near 109 ppm
    assert table_value(T, "GLY", "CA") == pytest.approx(45.1, abs=0.5)
    assert table_value(T, "ALA", "CB") == pytest.approx(19.0, abs=0.5)
    assert table_value(T, "SER", "CB") == pytest.approx(63.8, abs=0.6)
    assert table_value(T, "THR", "CB") == pytest.approx(69.8, abs=0.6)
    assert table_value(T, "GLY", "N") == pytest.approx(108.8, abs=1.0)
    assert np.isnan(table_value(T, "PRO", "H"))       # proline has no amide proton
    assert np.isnan(table_value(T, "GLY", "CB"))
    assert table_value(T, "GLY", "HA2") == pytest.approx(3.96, abs=0.1)


@pytest.mark.parametrize("atom,lo,hi", [("H", 7.9, 8.5), ("HA", 3.9, 4.8), ("CA", 44.5, 63.5),
                                        ("CB", 18.5, 70.5), ("C", 173.5, 178.0), ("N", 108.0, 138.0)])
def test_backbone_ranges(atom, lo, hi):
    for aa in AA20:
        v = table_value(T, aa, atom)
        if (aa == "PRO" and atom == "H") or (aa == "GLY" and atom == "CB"):
            continue
        assert lo <= v <= hi, (aa, atom, v)


def test_cysteine_redox():
    # Sharma & Rajarathnam 2000 (from memory): CB ~28 reduced, ~40-41 oxidised
    assert table_value(T, "CYS", "CB") < 30 < 38 < table_value(T, "CYSS", "CB")


def test_side_chain_protons():
    assert 1.2 < table_value(T, "ALA", "HB1") < 1.6
    assert 0.7 < table_value(T, "LEU", "HD21") < 1.1
    assert 6.5 < table_value(T, "TYR", "HE2") < 7.2
    assert 9.5 < table_value(T, "TRP", "HE1") < 10.5


def test_temperature_correction_is_linear_in_T():
    # Kjaergaard, Brander & Poulsen 2011 (J. Biomol. NMR 49:139, from memory) form: delta(T) = delta(T0) + c (T - T0)
    nuc = np.array(["H", "N", "CA"])
    t0 = T["temperature"]["T0_K"]
    assert np.allclose(temperature_correction(T, nuc, t0), 0)
    a = temperature_correction(T, nuc, t0 + 10)
    b = temperature_correction(T, nuc, t0 + 20)
    assert np.allclose(b, 2 * a)
    assert a[0] < 0          # amide protons move upfield on heating (common knowledge)
    assert np.allclose(temperature_correction(T, nuc, None), 0)


def test_his_ph_titration_direction():
    comp, atom = np.array(["HIS"]), np.array(["HE1"])
    low, high = ph_correction(T, comp, atom, 4.0)[0], ph_correction(T, comp, atom, 9.0)[0]
    assert high < low        # deprotonation moves HE1 upfield (common knowledge)
    assert ph_correction(T, comp, atom, T["ph"]["pH0"])[0] == pytest.approx(0)


def test_cis_mask():
    # omega near 0 is cis, near 180 trans (IUPAC-IUB 1970 torsion convention); NaN is not cis
    assert cis_mask(np.array([0.0, 10.0, -170.0, 180.0, np.nan])).tolist() == [True, True, False, False, False]
