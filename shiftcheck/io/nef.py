"""NEF (NMR Exchange Format) assigned chemical shifts, read with pynmrstar.

NEF is STAR syntax (Gutmanas et al. 2015, Nat. Struct. Mol. Biol. 22:433, "NMR Exchange Format:
a unified and open standard for representation of NMR restraint data"); pynmrstar parses it.
Used here: the ``nef_molecular_system`` save frame (loop ``_nef_sequence.{chain_code,
sequence_code, residue_name}``) and the ``nef_chemical_shift_list`` save frames (loop
``_nef_chemical_shift.{chain_code, sequence_code, residue_name, atom_name, value,
value_uncertainty}``).

Atom names (:func:`nef_atom_names`; rules of the NEF specification, quoted from memory):

* plain names are IUPAC names already (``H``, ``CA``, ``HB2``);
* ``%`` stands for any string of digits: ``HB%`` of Ala is HB1/HB2/HB3, of Ser HB2/HB3,
  ``HD1%`` of Leu HD11/HD12/HD13, ``HD%`` of Leu all six methyl protons, ``CD%`` of Phe CD1/CD2;
  every atom gets the listed value;
* ``x`` / ``y`` in place of a digit name the two members of a pair that is not stereo-assigned:
  ``HBx``/``HBy`` (geminal protons), ``CGx``/``HGx%`` (Val isopropyl methyls), ``HD2x`` (Asn
  NH2), ``HDx`` of Tyr (ring). ``x`` becomes the lower IUPAC label, ``y`` the higher, and both
  get NMR-STAR Ambiguity_code 2 (geminal atoms or isopropyl methyls; 3 for the symmetric ring
  positions of Phe/Tyr), so the scorer treats the pair as unassigned.

Expansion is matched against the residue's atom names taken from the project's tables
(backbone + :func:`shiftcheck.structure.builder.sidechain_atoms` heavy atoms,
:data:`shiftcheck.structure.hydrogens.HYDROGEN_SITES` protons and
:data:`shiftcheck.structure.names.NH2_GROUPS`); names the tables cannot expand go on to
:func:`shiftcheck.structure.names.expand_pseudo_atom`, and what is still unknown is kept as
written (it is then not scored).

Selection mirrors the NMR-STAR reader: ``list_id`` is the save frame name (with or without the
``nef_chemical_shift_list_`` prefix), ``entity_id`` the chain code (the ``--entity`` option);
by default the largest list and the chain with most shifts, with a warning naming the others.
Residue numbers are the NEF ``sequence_code`` (when every code of the chain is an integer; else
the position in the chain's sequence, with a warning). NEF has no sample-conditions frame, so
temperature and pH stay unknown (a warning says so).
"""
from __future__ import annotations

import re
from collections import OrderedDict
from functools import lru_cache

from ..errors import InputError, ShiftcheckError
from ..shifts import SampleConditions
from ..structure.names import NH2_GROUPS, expand_pseudo_atom, normalise_comp_id

__all__ = ["read_nef", "nef_atom_names", "residue_atom_names", "LIST_PREFIX"]

LIST_PREFIX = "nef_chemical_shift_list_"
_RING = {"PHE": ("HD", "HE", "CD", "CE"), "TYR": ("HD", "HE", "CD", "CE")}
_COLS = {"chain": "chain_code", "seq": "sequence_code", "comp": "residue_name",
         "atom": "atom_name", "value": "value", "error": "value_uncertainty"}


@lru_cache(maxsize=64)
def residue_atom_names(comp_id: str) -> tuple[str, ...]:
    """IUPAC atom names of a standard residue from the project's topology tables (() if unknown)."""
    from ..structure.builder import sidechain_atoms
    from ..structure.hydrogens import HYDROGEN_SITES

    comp = normalise_comp_id(comp_id)
    try:
        heavy = sidechain_atoms(comp)
    except ShiftcheckError:
        return ()
    names = ["N", "CA", "C", "O", "H"] + (["HA2", "HA3"] if comp == "GLY" else ["HA", "CB"])
    names += heavy + list(HYDROGEN_SITES.get(comp, ()))
    for g in NH2_GROUPS.get(comp, ()):
        names += [g + d for d in ("123" if comp == "LYS" else "12")]
    return tuple(dict.fromkeys(names))


def _pattern(name: str) -> re.Pattern:
    out = []
    for ch in name:
        if ch == "%":
            out.append(r"\d+")
        elif ch == "*":
            out.append(r"\S+")
        elif ch in "xy":
            out.append(r"(\d)")
        else:
            out.append(re.escape(ch.upper()))
    return re.compile("^" + "".join(out) + "$")


def nef_atom_names(comp_id: str, name: str) -> tuple[tuple[str, ...], int]:
    """IUPAC atoms a NEF atom name stands for, and the NMR-STAR ambiguity code to give them.

    >>> nef_atom_names("SER", "HBy"), nef_atom_names("ALA", "HB%")
    ((('HB3',), 2), (('HB1', 'HB2', 'HB3'), 1))
    >>> nef_atom_names("VAL", "HGx%"), nef_atom_names("VAL", "CGy")
    ((('HG11', 'HG12', 'HG13'), 2), (('CG2',), 2))
    >>> nef_atom_names("ILE", "HG1x"), nef_atom_names("ASN", "HD2y"), nef_atom_names("TYR", "HDx")
    ((('HG12',), 2), (('HD22',), 2), (('HD1',), 3))
    """
    raw = str(name).strip()
    comp = normalise_comp_id(comp_id)
    if not any(c in raw for c in "%*xy"):
        return (raw.upper(),), 1
    atoms = residue_atom_names(comp)
    pat = _pattern(raw)
    hits = [(a, m) for a in atoms for m in [pat.match(a)] if m]
    stereo = any(c in raw for c in "xy")
    if stereo:
        labels = sorted({m.group(1) for _, m in hits})
        if len(labels) >= 2:
            want = labels[0] if ("x" in raw) else labels[1]
            grp = next((p for p in _RING.get(comp, ()) if raw.upper().startswith(p)), None)
            return tuple(a for a, m in hits if m.group(1) == want), (3 if grp else 2)
        return (raw,), 2
    if hits:
        grp = next((p for p in _RING.get(comp, ()) if raw.upper().startswith(p)), None)
        return tuple(a for a, _ in hits), (3 if grp and len(hits) == 2 else 1)
    return tuple(expand_pseudo_atom(comp, raw.upper())), 1


def _col(loop, tag: str) -> list[str] | None:
    low = [t.lower() for t in loop.tags]
    return [str(r[low.index(tag)]) for r in loop.data] if tag in low else None


def _row_lines(text: str, path: str, frame_name: str, n_rows: int) -> list[int]:
    """File line of each shift row (0 where the second pass cannot tell)."""
    from .star21 import parse_star_syntax

    try:
        frames = [f for b in parse_star_syntax(text, path) for f in b.frames if f.name == frame_name]
    except ShiftcheckError:
        return [0] * n_rows
    for f in frames:
        lp = f.loop_with("_nef_chemical_shift.value")
        if lp is not None and len(lp.rows) == n_rows:
            return list(lp.row_lines)
    return [0] * n_rows


def _sequences(entry) -> dict[str, list[tuple[str, str]]]:
    """chain_code -> [(sequence_code, residue_name)] from nef_molecular_system."""
    out: dict[str, list[tuple[str, str]]] = OrderedDict()
    for f in entry.frame_list:
        if str(f.category).lower() != "nef_molecular_system":
            continue
        for lp in f.loops:
            if str(lp.category).lower() != "_nef_sequence":
                continue
            ch, sc, rn = (_col(lp, t) for t in ("chain_code", "sequence_code", "residue_name"))
            if sc and rn:
                for c, s, r in zip(ch or ["A"] * len(sc), sc, rn):
                    out.setdefault(c, []).append((s.strip(), r.strip()))
    return out


def _is_int(s: str) -> bool:
    return bool(re.fullmatch(r"[+-]?\d+", str(s).strip()))


def read_nef(text: str, path: str, list_id: str | None = None, entity_id: str | None = None):
    """Read one NEF chemical shift list (one chain) into a ShiftList.

    Parameters
    ----------
    text, path : str
        File contents; path for messages and ``ShiftList.source``.
    list_id : str, optional
        Save frame name of the ``nef_chemical_shift_list`` (the ``nef_chemical_shift_list_``
        prefix may be left out). Default: the largest list, with a warning naming the others.
    entity_id : str, optional
        NEF chain code. Default: the chain with most shifts, with a warning naming the others.
    """
    from .shifts import build_shift_list, choose
    from .star import _parse

    warnings: list[str] = []
    entry = _parse(text, path, warnings)
    found = [(f, lp) for f in entry.frame_list for lp in f.loops
             if str(lp.category).lower() == "_nef_chemical_shift"]
    if not found:
        raise InputError("no assigned chemical shift loop found (no _nef_chemical_shift loop)", path=path)
    descr = [(f"list '{f.name}' ({len(lp.data)} shifts)", len(lp.data),
              [f.name, f.name[len(LIST_PREFIX):] if f.name.startswith(LIST_PREFIX) else f.name])
             for f, lp in found]
    i, others = choose(descr, list_id, "chemical shift list", path, warnings)
    frame, loop = found[i]
    cols = {k: _col(loop, t) for k, t in _COLS.items()}
    for need in ("seq", "comp", "atom", "value"):
        if cols[need] is None:
            raise InputError(f"shift loop in save frame {frame.name} lacks _nef_chemical_shift."
                             f"{_COLS[need]}", path=path)
    n = len(loop.data)
    lines = _row_lines(text, path, frame.name, n)
    chains = cols["chain"] or ["A"] * n
    groups: "OrderedDict[str, list[int]]" = OrderedDict()
    for r, c in enumerate(chains):
        groups.setdefault(c, []).append(r)
    keys = list(groups)
    chain = keys[0] if keys else "A"
    if len(groups) > 1 or entity_id is not None:
        gd = [(f"chain {c} ({len(groups[c])} shifts)", len(groups[c]), [c]) for c in keys]
        j, ch_others = choose(gd, entity_id, "chain", path, warnings)
        others, chain = others + ch_others, keys[j]
    rows = groups.get(chain, [])
    seq = _sequences(entry).get(chain)
    codes = [cols["seq"][r].strip() for r in rows]
    numeric = all(_is_int(s) for s in codes) and (seq is None or all(_is_int(s) for s, _ in seq))
    if not numeric:
        pos = {s: k + 1 for k, (s, _) in enumerate(seq or [])}
        if any(s not in pos for s in codes):
            bad = next(s for s in codes if s not in pos)
            raise InputError(f"sequence_code {bad[:20]!r} of chain {chain} is neither an integer nor "
                             "in the chain's nef_sequence", path=path, line=lines[rows[codes.index(bad)]])
        warnings.append(f"chain {chain}: non-integer sequence codes; residues numbered by their "
                        "position in nef_sequence")
        codes = [str(pos[s]) for s in codes]
        seq = [(str(k + 1), r) for k, (_, r) in enumerate(seq)]
    out = {k: [] for k in ("seq_id", "comp_id", "atom_id", "value", "error", "ambiguity")}
    out_lines = []
    for r, code in zip(rows, codes):
        comp = cols["comp"][r]
        names, amb = nef_atom_names(comp, cols["atom"][r])
        for a in names:
            out["seq_id"].append(code)
            out["comp_id"].append(comp)
            out["atom_id"].append(a)
            out["value"].append(cols["value"][r])
            out["error"].append(cols["error"][r] if cols["error"] else ".")
            out["ambiguity"].append(str(amb))
            out_lines.append(lines[r])
    out.update(auth_seq_id=None, atom_type=None)
    warnings.append("NEF carries no sample conditions: temperature and pH corrections are not "
                    "applied (give them with --temperature/--ph)")
    return build_shift_list(path, out, out_lines, list_id=frame.name, list_name=frame.name,
                            entity_id=chain, sequence=seq, conditions=SampleConditions(),
                            other_lists=others, warnings=warnings)
