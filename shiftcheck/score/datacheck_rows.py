"""Data checks on the rows of a shift list that the reader has already tidied (run by
:func:`shiftcheck.score.datacheck.check_shifts`, so ``check`` reports what ``score`` notices):

* ``duplicate`` - an atom listed twice (the reader keeps the first value): a warning when the
  values differ, a note when they agree.
* ``unknown_atom`` - an atom name the residue does not have (e.g. ALA HG), against the IUPAC
  1998 names (heavy atoms, buildable protons and shiftcheck/data/atom_names_extra.json).
* ``residue_conflict`` - rows at one position naming another residue than the entity sequence
  or than each other (e.g. ``5 ALA CA`` and ``5 GLY HA2``).
"""
from __future__ import annotations

from functools import lru_cache
from ..datafiles import load_data

__all__ = ["check_rows", "known_atoms"]

_SRC_NAMES = "IUPAC 1998 atom names (Markley et al., Pure Appl. Chem. 70:117), from memory"


@lru_cache(maxsize=1)
def _tables():
    from ..chem.residues import HEAVY_ATOMS
    from ..structure.hydrogens import HYDROGEN_SITES

    extra = load_data("atom_names_extra.json")
    out = {}
    for res in HEAVY_ATOMS:
        out[res] = frozenset(HEAVY_ATOMS[res]) | frozenset(HYDROGEN_SITES.get(res, ())) | \
            frozenset(extra["all"]) | frozenset(extra["residues"].get(res, ()))
    return out


def known_atoms(comp_id: str) -> frozenset | None:
    """IUPAC atom names of a standard residue (None for other residues)."""
    return _tables().get(str(comp_id))


def check_rows(shifts) -> list:
    """Findings for repeated atoms, unknown atom names and residue-type conflicts."""
    from .findings import Finding

    out = []
    for d in getattr(shifts, "duplicates", ()):
        same = abs(float(d["kept"]) - float(d["dropped"])) < 5e-4
        out.append(Finding(int(d["seq_id"]), str(d["comp_id"]), str(d["atom_id"]), "duplicate",
                           f"lines {d['lines'][0]} and {d['lines'][1]}: {d['atom_id']} listed twice "
                           f"({float(d['kept']):.3f} and {float(d['dropped']):.3f} ppm); the first is used",
                           "common practice, no source", "note" if same else "warning"))
    bad: dict[tuple[int, str, str], int] = {}
    for sid, comp, atom, ln in zip(shifts.seq_id, shifts.comp_id, shifts.atom_id, shifts.line):
        names = known_atoms(str(comp))
        if names is not None and str(atom) not in names:
            bad.setdefault((int(sid), str(comp), str(atom)), int(ln))
    for (sid, comp, atom), ln in bad.items():
        out.append(Finding(sid, comp, atom, "unknown_atom",
                           f"line {ln}: {comp} has no atom {atom}; the shift is not compared",
                           _SRC_NAMES))
    entity = dict(zip((int(x) for x in shifts.sequence_seq_ids), shifts.sequence))
    at: dict[int, dict[str, int]] = {}
    for sid, comp, ln in zip(shifts.seq_id, shifts.comp_id, shifts.line):
        at.setdefault(int(sid), {}).setdefault(str(comp), int(ln))
    for sid, comps in sorted(at.items()):
        ent = entity.get(sid)
        names = set(comps) | ({ent} if ent and ent != "UNK" else set())
        if len(names) > 1:
            rows = ", ".join(f"{c} (line {ln})" for c, ln in comps.items())
            seq = f"; the entity sequence has {ent}" if ent and ent != "UNK" else ""
            out.append(Finding(sid, "/".join(sorted(names)), "-", "residue_conflict",
                               f"position {sid}: rows name {rows}{seq}", "common practice, no source"))
    return out
