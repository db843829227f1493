"""Synthetic shift lists for the scoring tests: built from a prediction of a built protein.

Not real data: used only to check that the scorer recovers what was put in (offsets, swaps,
noise level). Real-data checks live in test_injected_errors.py and test_score_cli.py.
"""
from __future__ import annotations

import numpy as np

from shiftcheck.shiftlist import ShiftList

SEQ = ("MET GLN ILE PHE VAL LYS THR LEU THR GLY LYS THR ILE THR LEU GLU VAL GLU PRO SER ASP THR "
       "ILE GLU ASN VAL LYS ALA LYS ILE GLN ASP LYS GLU GLY ILE PRO PRO ASP GLN GLN ARG LEU ILE "
       "PHE ALA GLY LYS GLN LEU").split()


def built_ensemble():
    """Three models of a 50-residue chain: all helix, helix with a strand segment, all strand."""
    from shiftcheck.structure.builder import build_protein
    from shiftcheck.structure.hydrogens import add_hydrogens

    n = len(SEQ)
    phi = np.full((3, n), -63.0)
    psi = np.full((3, n), -42.0)
    phi[1, 10:20], psi[1, 10:20] = -120.0, 130.0
    phi[2], psi[2] = -120.0, 130.0
    return add_hydrogens(build_protein(SEQ, phi, psi, name="syn", model_names=["syn#1", "syn#2", "syn#3"]))


def shifts_from(values, pred, noise=0.0, seed=0, source="/nonexistent/synthetic.str"):
    """A ShiftList holding ``values`` (n,) for the atoms of ``pred`` (NaN entries dropped)."""
    rng = np.random.default_rng(seed)
    ok = np.isfinite(values)
    sid = pred.res_index[ok] + 1
    atom = pred.atom_id[ok].astype(object)
    val = values[ok] + rng.normal(0.0, noise, ok.sum())
    n = len(val)
    return ShiftList(source=source, list_id="1", list_name="synthetic", entity_id="1",
                     sequence=tuple(SEQ), sequence_seq_ids=np.arange(1, len(SEQ) + 1),
                     seq_id=sid, auth_seq_id=sid.copy(), comp_id=pred.comp_id[ok].astype(object),
                     atom_id=atom, atom_type=np.array([a[0] for a in atom], dtype=object),
                     value=val, error=np.full(n, np.nan), ambiguity=np.ones(n, int),
                     line=np.zeros(n, int))
