"""Property-based robustness: mutated coordinate files give a result or a ShiftcheckError.

Mutations (delete, duplicate, swap lines; overwrite, insert, delete bytes; truncate) of a small
real PDB excerpt (the first 150 ATOM lines of 1D3Z when SHIFTCHECK_REALDATA is set), else of a
small PDB text written here from ideal geometry, and of the same excerpt as mmCIF (gemmi). The requirement (issue: bad input) is that no
other exception type escapes the reader (common practice, no source).
"""
from __future__ import annotations

import numpy as np
from _mutations import byte_op, line_op, mutate
from conftest import realdata_dir
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from shiftcheck.errors import ShiftcheckError
from shiftcheck.io.coords import read_models


def _base_text() -> str:
    d = realdata_dir()
    if d is not None:
        lines = [ln.rstrip("\n") for ln in open(d / "ubiquitin" / "1D3Z.pdb") if ln.startswith("ATOM")]
        return "\n".join(["EXPDTA    SOLUTION NMR", "MODEL        1"] + lines[:150] + ["ENDMDL", "END"]) + "\n"
    from shiftcheck.structure.builder import build_protein

    seq = ["MET", "GLN", "ILE", "PHE", "VAL", "LYS", "THR", "LEU", "GLY"]
    ens = build_protein(seq, np.full(len(seq), -120.0), np.full(len(seq), 130.0))
    out = []
    for k in range(ens.n_atoms):
        r = ens.atom_res[k]
        x, y, z = ens.coords[0, k]
        out.append(f"ATOM  {k + 1:5d}  {ens.atom_name[k]:<3s} {ens.res_name[r]:>3s} A{ens.res_seq[r]:4d}    "
                   f"{x:8.3f}{y:8.3f}{z:8.3f}  1.00 20.00           {ens.atom_name[k][0]:>2s}")
    return "\n".join(out) + "\nEND\n"


def _as_mmcif(pdb_text: str) -> bytes:
    import gemmi

    return gemmi.read_pdb_string(pdb_text).make_mmcif_document().as_string().encode()


BASE = _base_text().encode()
BASES = {".pdb": BASE, ".cif": _as_mmcif(BASE.decode())}
LINES = BASE.split(b"\n")



@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(lops=st.lists(line_op, max_size=8), bops=st.lists(byte_op, max_size=8), seed=st.integers(0, 2**16),
       suffix=st.sampled_from([".pdb", ".cif"]))
def test_mutated_files_raise_only_project_errors(tmp_path_factory, lops, bops, seed, suffix):
    import random

    data = mutate(BASES[suffix], lops, bops, random.Random(seed))
    path = tmp_path_factory.mktemp("fuzz") / ("m" + suffix)
    path.write_bytes(data)
    try:
        ens = read_models(path)
    except ShiftcheckError as exc:
        assert "\n" not in str(exc)
        return
    for e in ens:                     # a successful read is a consistent ensemble
        assert e.coords.shape == (e.n_models, e.n_atoms, 3)
        assert e.atom_res.max() < e.n_residues
