"""Atom-name normalisation against the IUPAC 1998 recommendations.

Source for every expected name: Markley et al. (1998) Pure Appl. Chem. 70:117-142,
"Recommendations for the presentation of NMR structures of proteins and nucleic acids"
(amide proton H; methylene protons labelled 2 and 3; methyl protons 1, 2, 3 after the
heavy-atom label; Ile delta carbon CD1; Gly HA2/HA3). PDB v2 digit-first names (1HB, 2HB)
and their v3 equivalents (HB2, HB3) follow the wwPDB remediation (PDB format v3.0, 2007)
- from memory.
"""
import pytest

from shiftcheck.chem.names import (expand_pseudo_atom, expand_residue_atom_names,
                                        is_pseudo_atom, normalise_atom_name, normalise_comp_id,
                                        normalise_residue_atom_names)


@pytest.mark.parametrize("raw,expected", [("MSE", "MET"), ("hse", "HIS"), ("HID", "HIS"),
                                          ("HIE", "HIS"), ("HIP", "HIS"), ("HSD", "HIS"),
                                          ("HSP", "HIS"), ("CYX", "CYS"), ("ala", "ALA"),
                                          (" GLY ", "GLY")])
def test_comp_aliases(raw, expected):
    # force-field aliases of standard residues (common practice, no source); MSE read as MET
    assert normalise_comp_id(raw) == expected


@pytest.mark.parametrize("comp,raw,expected", [
    # Markley et al. 1998: amide proton is H
    ("ALA", "HN", "H"), ("GLY", "H", "H"),
    # PDB v2 methylene 1HB/2HB -> HB2/HB3 (wwPDB remediation, from memory)
    ("SER", "1HB", "HB2"), ("SER", "2HB", "HB3"), ("LYS", "1HE", "HE2"), ("PRO", "2HD", "HD3"),
    # old geminal label 1 on a CH2 group cannot be IUPAC 1998 (labels 2/3) -> 2
    ("GLY", "HA1", "HA2"), ("SER", "HB1", "HB2"), ("ILE", "HG11", "HG12"),
    ("GLY", "1HA", "HA2"), ("GLY", "2HA", "HA3"),
    # methyl protons keep 1/2/3 (Markley et al. 1998)
    ("ALA", "HB1", "HB1"), ("ALA", "HB2", "HB2"), ("ALA", "HB3", "HB3"), ("ALA", "1HB", "HB1"),
    ("VAL", "1HG1", "HG11"), ("VAL", "3HG2", "HG23"), ("LEU", "2HD1", "HD12"),
    ("THR", "HG21", "HG21"), ("MET", "HE1", "HE1"), ("ILE", "1HG2", "HG21"),
    # Ile CH2 gamma via PDB v2 names: 1HG1/2HG1 -> HG12/HG13
    ("ILE", "1HG1", "HG12"), ("ILE", "2HG1", "HG13"),
    # Ile delta: CD -> CD1, HD1..3 -> HD11..13 (Markley et al. 1998)
    ("ILE", "CD", "CD1"), ("ILE", "HD1", "HD11"), ("ILE", "HD3", "HD13"), ("ILE", "HD12", "HD12"),
    # side-chain NH2
    ("ASN", "1HD2", "HD21"), ("ASN", "2HD2", "HD22"), ("GLN", "1HE2", "HE21"),
    ("ARG", "2HH1", "HH12"), ("ARG", "HH21", "HH21"), ("LYS", "3HZ", "HZ3"),
    # termini
    ("MET", "1H", "H1"), ("MET", "HT2", "H2"), ("MET", "H3", "H3"), ("GLY", "OT2", "OXT"),
    ("GLY", "OT1", "O"), ("GLY", "OXT", "OXT"),
    # selenium of selenomethionine
    ("MSE", "SE", "SD"),
    # IUPAC names pass through unchanged
    ("PHE", "HD1", "HD1"), ("HIS", "HD1", "HD1"), ("TRP", "HE1", "HE1"), ("LEU", "HB2", "HB2"),
    ("LEU", "HB3", "HB3"), ("ASP", "CA", "CA"), ("GLY", "HA3", "HA3"),
])
def test_normalise_atom_name(comp, raw, expected):
    assert normalise_atom_name(comp, raw) == expected


def test_residue_level_old_geminal_pairs():
    # old naming 1/2 on CH2 groups -> 2/3 (Markley et al. 1998 label methylene protons 2, 3)
    assert normalise_residue_atom_names("GLY", ["HA1", "HA2"]) == ["HA2", "HA3"]
    assert normalise_residue_atom_names("LYS", ["HB1", "HB2", "HG2", "HG3"]) == ["HB2", "HB3", "HG2", "HG3"]
    # new naming is left alone, methyls are never shifted
    assert normalise_residue_atom_names("SER", ["HB2", "HB3"]) == ["HB2", "HB3"]
    assert normalise_residue_atom_names("ALA", ["HB1", "HB2", "HB3"]) == ["HB1", "HB2", "HB3"]
    assert normalise_residue_atom_names("VAL", ["HG11", "HG12", "HG13"]) == ["HG11", "HG12", "HG13"]


def test_pseudo_atoms():
    # methyl pseudo atoms stand for three protons (Markley et al. 1998 list methyls per proton)
    assert is_pseudo_atom("HB%") and is_pseudo_atom("MB") and is_pseudo_atom("QB")
    assert is_pseudo_atom("HG*") and is_pseudo_atom("HD1#")
    assert not is_pseudo_atom("HB2") and not is_pseudo_atom("CA")
    assert is_pseudo_atom("HB", "ALA") and not is_pseudo_atom("HB", "THR")
    assert expand_pseudo_atom("ALA", "MB") == ("HB1", "HB2", "HB3")
    assert expand_pseudo_atom("ALA", "HB") == ("HB1", "HB2", "HB3")
    assert expand_pseudo_atom("SER", "QB") == ("HB2", "HB3")
    assert expand_pseudo_atom("LEU", "HD1") == ("HD11", "HD12", "HD13")
    assert expand_pseudo_atom("LEU", "QD") == ("HD11", "HD12", "HD13", "HD21", "HD22", "HD23")
    assert expand_pseudo_atom("THR", "MG") == ("HG21", "HG22", "HG23")
    assert expand_pseudo_atom("ILE", "MD") == ("HD11", "HD12", "HD13")
    assert expand_pseudo_atom("ASN", "QD2") == ("HD21", "HD22")
    assert expand_pseudo_atom("PHE", "QD") == ("HD1", "HD2")
    assert expand_pseudo_atom("LYS", "HZ") == ("HZ1", "HZ2", "HZ3")
    assert expand_pseudo_atom("GLY", "HA") == ("HA2", "HA3")
    assert expand_pseudo_atom("GLY", "CA") == ("CA",)


def test_ile_hd1_depends_on_neighbours():
    # alone, Ile HD1 is the delta methyl as a group; beside HD2/HD3 it is one old proton name
    assert expand_residue_atom_names("ILE", ["HD1"]) == [("HD11", "HD12", "HD13")]
    assert expand_residue_atom_names("ILE", ["HD1", "HD2", "HD3"]) == [("HD11",), ("HD12",), ("HD13",)]
