"""Coordinate reader: formats, models, chains, altlocs, MSE, waters, insertion codes, stacks.

Checks are against the PDB/mmCIF format definitions (wwPDB format guide v3.3, mmCIF
dictionary: column layout, MODEL/ENDMDL, altloc, iCode) and, with SHIFTCHECK_REALDATA, against
record counts taken from the public files themselves by a plain text scan.
"""
from __future__ import annotations

import gzip

import numpy as np
import pytest

from shiftcheck.io.coords import read_model_file, read_models
from shiftcheck.structure.builder import build_protein

SEQ = ["MET", "ALA", "GLY", "PHE", "PRO", "LYS", "VAL", "ASN"]


def _ens(shift=0.0):
    n = len(SEQ)
    ens = build_protein(SEQ, np.full(n, -65.0), np.full(n, -40.0))
    ens.coords = ens.coords + shift
    return ens


def pdb_lines(ens, model=0, names=None, resnames=None, record="ATOM", chain="A", start=1):
    """ATOM records in the fixed columns of the wwPDB format guide v3.3."""
    out = []
    for k in range(ens.n_atoms):
        r = ens.atom_res[k]
        name = (names or {}).get(k, str(ens.atom_name[k]))
        rn = (resnames or {}).get(int(r), str(ens.res_name[r]))
        x, y, z = ens.coords[model, k]
        el = name[0]
        nm = f" {name:<3}" if len(name) < 4 else name
        out.append(f"{record:<6}{start + k:5d} {nm:4s} {rn:>3s} {chain}{int(ens.res_seq[r]):4d}    "
                   f"{x:8.3f}{y:8.3f}{z:8.3f}{1.0:6.2f}{20.0:6.2f}          {el:>2s}")
    return out


def _rec(record, serial, name, resn, resi, x, el):
    return (f"{record:<6}{serial:5d} {name:4s} {resn:>3s} A{resi:4d}    {x:8.3f}{x:8.3f}{x:8.3f}"
            f"{1.0:6.2f}{20.0:6.2f}          {el:>2s}")


def write(tmp_path, name, lines):
    p = tmp_path / name
    p.write_text("\n".join(lines) + "\nEND\n")
    return p


def test_single_model_roundtrip_and_gzip(tmp_path):
    ens = _ens()
    p = write(tmp_path, "one.pdb", pdb_lines(ens))
    got = read_model_file(p)
    assert got.model_names == ["one.pdb"] and got.n_models == 1
    assert list(got.atom_name) == list(ens.atom_name)
    assert np.allclose(got.coords, ens.coords, atol=6e-4)      # 3 decimals in the PDB format
    assert got.coords.dtype == np.float64
    gz = tmp_path / "one.pdb.gz"
    gz.write_bytes(gzip.compress(p.read_bytes()))
    assert np.array_equal(read_model_file(gz).coords, got.coords)


def test_multi_model_file_and_mmcif(tmp_path):
    import gemmi

    a, b = _ens(), _ens(shift=1.5)
    lines = ["MODEL        1"] + pdb_lines(a) + ["ENDMDL", "MODEL        2"] + pdb_lines(b) + ["ENDMDL"]
    p = write(tmp_path, "two.pdb", lines)
    got = read_models(p, build_hydrogens=False)[0]
    assert got.model_names == ["two.pdb#1", "two.pdb#2"]
    assert np.allclose(got.coords[1] - got.coords[0], 1.5, atol=2e-3)
    # the same structure as mmCIF (written by gemmi) reads to the same coordinates
    st = gemmi.read_structure(str(p))
    cif = tmp_path / "two.cif"
    st.make_mmcif_document().write_file(str(cif))
    got2 = read_models(cif, build_hydrogens=False)[0]
    assert np.allclose(got2.coords, got.coords)
    assert list(got2.atom_name) == list(got.atom_name)


def test_names_mse_waters_hetero_and_chains(tmp_path):
    ens = _ens()
    # old amide-proton name HN, MSE with SE, a water, a ligand and a second protein chain
    names = {int(np.flatnonzero(ens.atom_name == "SD")[0]): "SE"}
    lines = pdb_lines(ens, names=names, resnames={0: "MSE"})
    lines = [(ln[:0] + "HETATM" + ln[6:]) if " MSE " in ln else ln for ln in lines]
    lines.append(_rec("ATOM", 9990, " HN ", "ALA", 2, 11.0, "H"))
    lines.append(_rec("HETATM", 9991, " O  ", "HOH", 101, 30.0, "O"))
    lines.append(_rec("HETATM", 9992, " C1 ", "LIG", 102, 31.0, "C"))
    lines += pdb_lines(_ens(shift=20.0), chain="B", start=5000)
    got = read_model_file(write(tmp_path, "mix.pdb", lines))
    assert got.chain_id == "A"
    assert got.res_name[0] == "MET"
    sd = got.index(0, "SD")
    assert sd >= 0 and got.element[sd] == "S"
    assert got.index(1, "H") >= 0                     # HN read as H (IUPAC 1998)
    assert got.n_residues == len(SEQ)                 # water and ligand dropped
    text = " | ".join(got.warnings)
    assert "water" in text and "LIG" in text and "chain" in text and "B" in text
    other = read_model_file(tmp_path / "mix.pdb", chain="B")
    r = np.arange(len(SEQ))
    assert other.chain_id == "B" and np.allclose(other.xyz(r, "CA") - got.xyz(r, "CA"), 20.0, atol=2e-3)


def test_altloc_highest_occupancy_and_icode(tmp_path):
    ens = _ens()
    lines = pdb_lines(ens)
    i = int(np.flatnonzero(ens.atom_name == "CB")[0])
    base = lines[i]
    alt_a = base[:16] + "A" + base[17:54] + "  0.30" + base[60:]
    alt_b = base[:16] + "B" + base[17:30] + f"{9.0:8.3f}{9.0:8.3f}{9.0:8.3f}" + "  0.70" + base[60:]
    lines[i:i + 1] = [alt_a, alt_b]
    # insertion code on the last residue
    lines = [ln[:26] + "A" + ln[27:] if ln[22:26].strip() == str(len(SEQ)) else ln for ln in lines]
    got = read_model_file(write(tmp_path, "alt.pdb", lines))
    assert np.allclose(got.coords[0, got.index(0, "CB")], 9.0)     # occupancy 0.70 wins
    assert got.res_icode[-1] == "A" and got.res_seq[-1] == len(SEQ)
    assert any("alternate" in w for w in got.warnings)


def test_models_with_different_atoms_use_union(tmp_path):
    a, b = _ens(), _ens(shift=0.5)
    la, lb = pdb_lines(a), pdb_lines(b)
    drop = int(np.flatnonzero(b.atom_name == "CE")[0])
    lb = lb[:drop] + lb[drop + 1:]
    lines = ["MODEL        1"] + la + ["ENDMDL", "MODEL        2"] + lb + ["ENDMDL"]
    got = read_model_file(write(tmp_path, "diff.pdb", lines))
    ce = got.index(0, "CE")
    assert np.isfinite(got.coords[0, ce]).all() and np.isnan(got.coords[1, ce]).all()
    assert any("models differ" in w for w in got.warnings)
    assert any("lack side-chain atoms" in w for w in got.warnings) is False


def test_missing_side_chain_reported(tmp_path):
    ens = _ens()
    lines = [ln for ln, n, r in zip(pdb_lines(ens), ens.atom_name, ens.atom_res)
             if not (r == 5 and n in ("CD", "CE", "NZ"))]
    got = read_model_file(write(tmp_path, "trunc.pdb", lines))
    assert any("1 residue(s) lack side-chain atoms: LYS 6" in w for w in got.warnings)


# ------------------------------------------------------------------ real files

def _count_model1_atoms(path):
    """Plain text count of protein ATOM/HETATM(MSE) records of chain A in the first model."""
    n = 0
    for line in open(path):
        if line.startswith("ENDMDL"):
            break
        if line.startswith(("ATOM", "HETATM")) and line[21] == "A" and line[17:20] not in ("HOH",) \
                and (line.startswith("ATOM") or line[17:20] == "MSE") and line[16] in " A":
            n += 1
    return n


@pytest.mark.parametrize("folder,name,n_models,method", [
    ("ubiquitin", "1D3Z.pdb", 10, "SOLUTION NMR"), ("hr3102a", "2KRK.pdb", 20, "SOLUTION NMR"),
    ("hr3102a", "3KW6.pdb", 1, "X-RAY DIFFRACTION"), ("hsr50", "2LOK_0006.pdb", 1, ""),
    ("ci2", "1YPA.pdb", 1, "")])
def test_real_files(realdata, folder, name, n_models, method):
    path = realdata / folder / name
    ens = read_model_file(path, chain="I" if name == "1YPA.pdb" else None)
    assert ens.n_models == n_models and ens.method == method
    if name != "1YPA.pdb":
        assert ens.n_atoms == _count_model1_atoms(path)
    assert np.isfinite(ens.coords).all()


def test_left_justified_residue_numbers(realdata):
    # 2LOK_0006: residue numbers written left-justified ("A  1     ") and a lone MODEL 7
    ens = read_model_file(realdata / "hsr50" / "2LOK_0006.pdb")
    assert list(ens.res_seq) == list(range(1, 178))
    assert ens.model_names == ["2LOK_0006.pdb"]


def test_selenomethionine_crystal(realdata):
    ens = read_models(realdata / "hr3102a" / "3KW6.pdb")[0]
    met = np.flatnonzero(ens.res_name == "MET")
    assert met.size and (ens.indices(met, "SD") >= 0).all()
    assert any("MSE -> MET" in w for w in ens.warnings)
    assert any("water" in w for w in ens.warnings)


def test_old_geminal_names_read_as_iupac(tmp_path):
    # PDB v2 / old X-PLOR names: Gly HA1/HA2 and Lys 1HB/2HB mean IUPAC 1998 HA2/HA3, HB2/HB3
    # (Markley et al. 1998, Pure Appl. Chem. 70:117)
    ens = _ens()
    lines = pdb_lines(ens)
    lines.append(_rec("ATOM", 9001, " HA1", "GLY", 3, 1.0, "H"))
    lines.append(_rec("ATOM", 9002, " HA2", "GLY", 3, 2.0, "H"))
    lines.append(_rec("ATOM", 9003, "1HB ", "LYS", 6, 3.0, "H"))
    lines.append(_rec("ATOM", 9004, "2HB ", "LYS", 6, 4.0, "H"))
    p = write(tmp_path, "old.pdb", lines)
    got = read_model_file(p)
    assert np.allclose(got.xyz([2, 2, 5, 5], np.array(["HA2", "HA3", "HB2", "HB3"], dtype=object))[0],
                       np.array([[1.0] * 3, [2.0] * 3, [3.0] * 3, [4.0] * 3]))


def _same_ensemble(a, b):
    assert a.model_names == b.model_names and a.chain_id == b.chain_id
    for f in ("res_seq", "res_icode", "res_name", "atom_res", "atom_name", "element"):
        assert np.array_equal(getattr(a, f), getattr(b, f)), f
    assert np.array_equal(a.coords, b.coords, equal_nan=True)
    assert a.warnings == b.warnings


def _read_both(path, monkeypatch):
    from shiftcheck.io import _flat

    out = []
    for flag in (True, False):
        monkeypatch.setattr(_flat, "USE_FLAT", flag)
        try:
            out.append(read_model_file(path))
        except Exception as exc:      # a refused file must be refused the same way
            out.append(type(exc).__name__ + str(exc))
    return out


def test_flat_arrays_with_other_records_and_free_format(tmp_path, monkeypatch):
    """Later models with other records, or coordinates not in %8.3f (two decimals, -0.000),
    are read from the flat arrays as from gemmi's objects."""
    e0, e1 = _ens(), _ens(1.25)
    m2 = pdb_lines(e1)
    m2 = [ln[:30] + f"{float(ln[30:38]):8.2f}" + ln[38:] for ln in m2]           # 2 decimals
    m3 = [ln for ln in pdb_lines(_ens(-2.5)) if ln[12:16].strip() != "CB"]       # atoms missing
    m4 = [ln[:30] + "  -0.000" + ln[38:] for ln in pdb_lines(e0)]                # negative zero
    text = "".join(f"MODEL     {k + 1:4d}\n" + "\n".join(m) + "\nENDMDL\n"
                   for k, m in enumerate([pdb_lines(e0), m2, m3, m4, pdb_lines(e1)])) + "END\n"
    path = tmp_path / "five.pdb"
    path.write_text(text)
    fast, slow = _read_both(path, monkeypatch)
    _same_ensemble(fast, slow)
    assert fast.n_models == 5 and np.isnan(fast.coords[2]).any() and not np.isnan(fast.coords[1]).any()


def test_flat_arrays_give_identical_ensembles_on_every_realdata_file(realdata, monkeypatch):
    """Further models read from gemmi.FlatStructure arrays (shiftcheck/io/_flat.py) equal those
    read by walking gemmi's objects: coordinates, names, numbering, warnings; every public
    coordinate file (PDB, mmCIF, gzip)."""
    paths = sorted(p for p in realdata.rglob("*") if p.suffix in (".pdb", ".cif", ".gz"))
    assert len(paths) > 100
    multi = 0
    for p in paths:
        fast, slow = _read_both(p, monkeypatch)
        if isinstance(slow, str):
            assert fast == slow, p
            continue
        _same_ensemble(fast, slow)
        multi += fast.n_models > 1
    assert multi > 20


def test_flat_arrays_follow_changed_models(tmp_path, monkeypatch):
    """A later model with other atoms, other atom names or a renumbered residue is read as the
    object walk reads it (topology rebuilt, union of atoms), and the flat path is really taken."""
    from shiftcheck.io import _flat

    m1, m2 = pdb_lines(_ens()), pdb_lines(_ens(1.25))
    m3 = [ln for ln in pdb_lines(_ens(-2.5)) if ln[12:16].strip() != "CB"]       # atoms missing
    m4 = [ln.replace(" CD1 ", " CD  ") if " ILE " in ln else ln for ln in pdb_lines(_ens(0.5))]
    m5 = [ln[:22] + ("  99" if ln[22:26] == "   3" else ln[22:26]) + ln[26:] for ln in pdb_lines(_ens(3.0))]
    text = "".join(f"MODEL     {k + 1:4d}\n" + "\n".join(m) + "\nENDMDL\n"
                   for k, m in enumerate([m1, m2, m3, m4, m5, m1])) + "END\n"
    path = tmp_path / "six.pdb"
    path.write_text(text)
    used = []
    orig = _flat.FlatModels.positions
    monkeypatch.setattr(_flat.FlatModels, "positions", lambda self, k: used.append(k) or orig(self, k))
    fast, slow = _read_both(path, monkeypatch)
    _same_ensemble(fast, slow)
    assert fast.n_models == 6 and fast.n_residues == len(SEQ) + 1 and np.isnan(fast.coords[2]).any()
    assert np.array_equal(fast.coords[5], fast.coords[0], equal_nan=True)
    assert sorted(set(used)) == list(range(6))        # every model from the flat arrays


def test_indices_equal_one_by_one_lookup(realdata):
    """Ensemble.indices (per-name tables) equals Ensemble.index called atom by atom, including
    residues outside the chain, absent names and arrays of names (1D3Z, ubiquitin)."""
    ens = read_models([realdata / "ubiquitin" / "1D3Z.pdb"])[0]
    r = np.arange(-2, ens.n_residues + 3)
    for nm in ("CA", "H", "HA", "HA2", "CB", "SG", "HD21", "XX"):
        assert np.array_equal(ens.indices(r, nm), [ens.index(i, nm) for i in r])
    names = np.array(ens.atom_name, dtype=object)[::-1]
    res = np.array(ens.atom_res)[::-1]
    assert np.array_equal(ens.indices(res, names), [ens.index(i, n) for i, n in zip(res, names)])
    assert np.array_equal(ens.indices(res, names), np.arange(ens.n_atoms)[::-1])


def test_topology_remembered_between_files_only_when_equal(tmp_path, monkeypatch):
    """A second file of the same topology reuses the first one's (io.coords._KNOWN) and reads
    as a fresh read does; other elements, names or waters in an otherwise equal file are not
    taken from the remembered topology."""
    from shiftcheck.io import _flat, coords

    lines = pdb_lines(_ens())
    files = {"a": lines, "b": pdb_lines(_ens(2.0)),
             "elem": [ln[:76] + " S" + ln[78:] if ln[12:16] == " CB " else ln for ln in lines],
             "name": [ln.replace(" CG  LYS", " CX  LYS") for ln in lines],
             "water": lines + ["HETATM 9999  O   HOH A 101       1.000   2.000   3.000  1.00  0.00           O"]}
    monkeypatch.setattr(coords, "_KNOWN", {})
    for k, ls in files.items():
        (tmp_path / f"{k}.pdb").write_text("\n".join(ls) + "\nEND\n")
        fast = read_model_file(tmp_path / f"{k}.pdb")
        monkeypatch.setattr(_flat, "USE_FLAT", False)
        slow = read_model_file(tmp_path / f"{k}.pdb")
        monkeypatch.setattr(_flat, "USE_FLAT", True)
        _same_ensemble(fast, slow)
    assert len(coords._KNOWN) == 4          # a and b share one topology
