"""NMR-STAR 3.x assigned chemical shifts, read with pynmrstar.

pynmrstar (the BMRB's reference library) parses the file; this module picks the shift list
and entity, and gathers the entity sequence and sample conditions. Tags are those of the
NMR-STAR 3.1 dictionary: ``_Atom_chem_shift.{Seq_ID, Auth_seq_ID, Comp_ID, Atom_ID, Atom_type,
Val, Val_err, Ambiguity_code, Entity_ID, Entity_assembly_ID}``, ``_Entity_comp_index.{ID,
Comp_ID}``, ``_Entity.Polymer_seq_one_letter_code``, ``_Sample_condition_variable.{Type, Val,
Val_units}``. pynmrstar keeps no line numbers, so the file line of each shift row is found by
a second pass with :func:`shiftcheck.io.star_syntax.parse_star_syntax` (0 where that fails).
Loops and save frames are looked up with pynmrstar's accessors (``get_saveframes_by_category``,
``get_loop``, ``get_tag``).
"""
from __future__ import annotations

import logging
import re
from collections import OrderedDict

from ..chem.residues import THREE_TO_ONE
from ..errors import InputError, ShiftcheckError
from ..shiftlist import SampleConditions
from .shift_rows import build_shift_list, choose, conditions_from_rows, one_letter_sequence
from .star_syntax import parse_star_syntax

__all__ = ["read_star3"]

_LINE = re.compile(r"line (\d+)", re.I)
_COLS = {"seq_id": "Seq_ID", "auth_seq_id": "Auth_seq_ID", "comp_id": "Comp_ID",
         "atom_id": "Atom_ID", "atom_type": "Atom_type", "value": "Val", "error": "Val_err",
         "ambiguity": "Ambiguity_code"}


class _Collect(logging.Handler):
    """Keeps pynmrstar's parse warnings so they reach ShiftList.warnings, not the console."""

    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.messages: list[str] = []

    def emit(self, record: logging.LogRecord) -> None:
        self.messages.append(" ".join(record.getMessage().split()))


def _parse(text: str, path: str, warnings: list[str]):
    import pynmrstar

    logger = logging.getLogger("pynmrstar")
    handler, propagate = _Collect(), logger.propagate
    logger.addHandler(handler)
    logger.propagate = False
    try:
        entry = pynmrstar.Entry.from_string(text)
        warnings.extend(f"NMR-STAR: {m}" for m in handler.messages[:5])
        return entry
    except Exception as e:  # pynmrstar raises ParsingError, ValueError, KeyError, ...
        msg = " ".join(str(e).split()) or type(e).__name__
        line = getattr(e, "line_number", None)
        if not line:
            m = _LINE.search(msg)
            line = int(m.group(1)) if m else None
        raise InputError(f"NMR-STAR syntax error: {msg[:300]}", path=path, line=line) from None
    finally:
        logger.removeHandler(handler)
        logger.propagate = propagate


def _col(loop, tag: str) -> list[str] | None:
    """Values of one tag of a pynmrstar loop as strings, or None if the loop lacks the tag."""
    try:
        return [str(v) for v in loop.get_tag(tag)]
    except KeyError:
        return None


def _loop(frame, category: str):
    """The frame's loop of a category, or None."""
    try:
        return frame.get_loop(category)
    except KeyError:
        return None


def _tag(frame, tag: str) -> str | None:
    try:
        v = frame.get_tag(tag)
    except Exception:
        return None
    return str(v[0]) if v else None


def _row_lines(text: str, path: str, frame_name: str, n_rows: int, k_loop: int) -> list[int]:
    """File line of each row of the k-th shift loop of a save frame (best effort). Only that
    save frame's text is parsed when it can be cut out (``save_NAME`` ... ``save_`` lines);
    otherwise, or if that gives another row count, the whole file."""
    m = re.search(rf"^[ \t]*save_{re.escape(frame_name)}[ \t]*$", text, re.M)
    end = re.compile(r"^[ \t]*save_[ \t]*$", re.M).search(text, m.end()) if m else None
    if m and end:
        before = len(text[:m.start()].splitlines())
        lines = _frame_row_lines("data_frame\n" + text[m.start():end.end()], path, frame_name, n_rows, k_loop)
        if lines is not None:
            return [ln - 1 + before for ln in lines]
    return _frame_row_lines(text, path, frame_name, n_rows, k_loop) or [0] * n_rows


def _frame_row_lines(text: str, path: str, frame_name: str, n_rows: int, k_loop: int) -> list[int] | None:
    try:
        blocks = parse_star_syntax(text, path)
    except ShiftcheckError:
        return None
    for b in blocks:
        for f in b.frames:
            if f.name != frame_name:
                continue
            loops = [lp for lp in f.loops if any(t.lower() == "_atom_chem_shift.val" for t in lp.tags)]
            if k_loop < len(loops) and len(loops[k_loop].rows) == n_rows:
                return list(loops[k_loop].row_lines)
    return None


def _conditions(entry, shift_frame) -> SampleConditions:
    frames = entry.get_saveframes_by_category("sample_conditions")
    label = (_tag(shift_frame, "Sample_condition_list_label") or "").lstrip("$")
    sid = _tag(shift_frame, "Sample_condition_list_ID")
    first = [f for f in frames if f.name == label or (sid and _tag(f, "ID") == sid)]
    for f in first + [f for f in frames if f not in first]:
        lp = _loop(f, "_Sample_condition_variable")
        typ = None if lp is None else _col(lp, "Type")
        if typ is None:
            continue
        val = _col(lp, "Val") or [""] * len(typ)
        unit = _col(lp, "Val_units") or [""] * len(typ)
        cond = conditions_from_rows(list(zip(typ, val, unit)))
        if cond.temperature_K is not None or cond.pH is not None:
            return cond
    return SampleConditions()


def _sequence(entry, entity_id: str) -> list[tuple[str, str]] | None:
    ents = entry.get_saveframes_by_category("entity")
    chosen = [f for f in ents if _tag(f, "ID") == entity_id] or ents[:1]
    for f in chosen:
        for category, id_tag, comp_tag in (("_Entity_comp_index", "ID", "Comp_ID"),
                                           ("_Entity_poly_seq", "Num", "Mon_ID")):
            lp = _loop(f, category)
            ids, comps = (None, None) if lp is None else (_col(lp, id_tag), _col(lp, comp_tag))
            if ids and comps:
                return list(zip(ids, comps))
        seq = one_letter_sequence(_tag(f, "Polymer_seq_one_letter_code"))
        if seq:
            return seq
    return None


def read_star3(text: str, path: str, list_id: str | None = None, entity_id: str | None = None):
    """Read the assigned chemical shifts of an NMR-STAR 3.x entry into a ShiftList.

    Parameters
    ----------
    text : str
        File contents.
    path : str
        For messages and ``ShiftList.source``.
    list_id : str, optional
        ``_Assigned_chem_shift_list.ID`` or save frame name. Default: the only list, else the
        list with most protein shifts, with a warning naming the others.
    entity_id : str, optional
        Entity_ID, Entity_assembly_ID or "assembly:entity". Default: the entity with most
        shifts in the chosen list, with a warning naming the others.
    """
    warnings: list[str] = []
    entry = _parse(text, path, warnings)
    # (frame, loop, k-th shift loop of the frame); pynmrstar keeps one loop per category and frame
    found = [(f, lp, 0) for f in entry.frame_list if (lp := _loop(f, "_Atom_chem_shift")) is not None]
    if not found:
        raise InputError("no assigned chemical shift loop found (no _Atom_chem_shift loop)", path=path)

    def n_protein(lp) -> int:
        comps = _col(lp, "Comp_ID") or []
        return sum(1 for c in comps if c.upper() in THREE_TO_ONE)

    descr = []
    for f, lp, k in found:
        fid = _tag(f, "ID") or ""
        descr.append((f"list {fid or '?'} '{f.name}' ({len(lp.data)} shifts)",
                      n_protein(lp) * 10 + 1 if lp.data else 0, [fid, f.name]))
    i, others = choose(descr, list_id, "assigned shift list", path, warnings)
    frame, loop, k_loop = found[i]
    lines = _row_lines(text, path, frame.name, len(loop.data), k_loop)
    cols = {key: _col(loop, tag) for key, tag in _COLS.items()}
    if cols["seq_id"] is None:
        cols["seq_id"] = _col(loop, "Comp_index_ID")
    for need in ("seq_id", "comp_id", "atom_id", "value"):
        if cols[need] is None:
            raise InputError(f"shift loop in save frame {frame.name} lacks _Atom_chem_shift."
                             f"{_COLS.get(need, need)}", path=path)
    # entities inside the list
    ent = _col(loop, "Entity_ID") or ["1"] * len(loop.data)
    asm = _col(loop, "Entity_assembly_ID") or ["1"] * len(loop.data)
    groups: "OrderedDict[tuple[str, str], list[int]]" = OrderedDict()
    for r, key in enumerate(zip(asm, ent)):
        groups.setdefault(key, []).append(r)
    chosen_entity = ent[0] if ent else "1"
    if len(groups) > 1 or entity_id is not None:
        keys = list(groups)
        gd = [(f"entity {e} (assembly {a}, {len(groups[(a, e)])} shifts)", len(groups[(a, e)]),
               [e, a, f"{a}:{e}"]) for a, e in keys]
        j, ent_others = choose(gd, entity_id, "entity", path, warnings)
        others = others + ent_others
        rows = groups[keys[j]]
        chosen_entity = keys[j][1]
        cols = {k: (None if v is None else [v[r] for r in rows]) for k, v in cols.items()}
        lines = [lines[r] for r in rows]
    seq = _sequence(entry, chosen_entity)
    cond = _conditions(entry, frame)
    return build_shift_list(path, cols, lines, list_id=_tag(frame, "ID") or str(i + 1),
                            list_name=frame.name, entity_id=chosen_entity, sequence=seq,
                            conditions=cond, other_lists=others, warnings=warnings)
