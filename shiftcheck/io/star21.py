"""NMR-STAR 2.1 assigned chemical shifts (tags ``_Chem_shift_value``, ``_Saveframe_category``).

The file is parsed by the generic STAR reader :func:`shiftcheck.io.star_syntax.parse_star_syntax`
(pynmrstar refuses 2.1); this module picks the shift list and entity and gathers the sequence
and sample conditions. Rows become a ShiftList through :func:`shiftcheck.io.shift_rows.build_shift_list`.
"""
from __future__ import annotations

from ..errors import InputError
from ..shiftlist import SampleConditions
from .shift_rows import build_shift_list, choose, conditions_from_rows, one_letter_sequence
from .star_syntax import StarFrame, parse_star_syntax

__all__ = ["read_star21"]

# ----------------------------------------------------------------------------- NMR-STAR 2.1 mapping

_COLS21 = {
    "seq_id": "_Residue_seq_code", "auth_seq_id": "_Residue_author_seq_code",
    "comp_id": "_Residue_label", "atom_id": "_Atom_name", "atom_type": "_Atom_type",
    "value": "_Chem_shift_value", "error": "_Chem_shift_value_error",
    "ambiguity": "_Chem_shift_ambiguity_code",
}


def _conditions21(frames: list[StarFrame], label: str | None) -> SampleConditions:
    cand = [f for f in frames if (f.tag("_Saveframe_category") or "").lower() == "sample_conditions"]
    if label:
        named = [f for f in cand if f.name == label.lstrip("$")]
        cand = named + [f for f in cand if f not in named]
    for f in cand:
        lp = f.loop_with("_Variable_type")
        if lp is None:
            continue
        units = lp.column("_Variable_value_units") or [""] * len(lp.rows)
        rows = list(zip(lp.column("_Variable_type"), lp.column("_Variable_value") or [], units))
        cond = conditions_from_rows(rows)
        if cond.temperature_K is not None or cond.pH is not None:
            return cond
    return SampleConditions()


def _sequence21(frames: list[StarFrame], component: str | None) -> list[tuple[int, str]] | None:
    """Residue sequence of the entity the shift list names (else the first polymer)."""
    label = None
    for f in frames:
        lp = f.loop_with("_Mol_system_component_name")
        if lp is not None and component:
            names = lp.column("_Mol_system_component_name")
            labels = lp.column("_Mol_label")
            if labels and component in names:
                label = labels[names.index(component)].lstrip("$")
    polymers = [f for f in frames if (f.tag("_Saveframe_category") or "").lower() == "monomeric_polymer"]
    if label:
        polymers = [f for f in polymers if f.name == label] + [f for f in polymers if f.name != label]
    for f in polymers:
        lp = f.loop_with("_Residue_seq_code")
        if lp is not None and lp.column("_Residue_label"):
            return list(zip(lp.column("_Residue_seq_code"), lp.column("_Residue_label")))
        seq = one_letter_sequence(f.tag("_Mol_residue_sequence"))
        if seq:
            return seq
    return None


def read_star21(text: str, path: str, list_id: str | None = None, entity_id: str | None = None):
    """Read an NMR-STAR 2.1 entry's assigned chemical shifts into a ShiftList.

    Parameters
    ----------
    text : str
        File contents.
    path : str
        For messages and ``ShiftList.source``.
    list_id : str, optional
        Save frame name of the assigned-shift list (``assigned_chem_shift_list_1``) or its
        1-based position among the lists. Default: the only list, else the largest.
    entity_id : str, optional
        ``_Mol_system_component_name`` (or entity save frame name) to pick lists by.
    """
    blocks = parse_star_syntax(text, path)
    frames = [f for b in blocks for f in b.frames]
    lists = []
    for f in frames:
        lp = f.loop_with("_Chem_shift_value")
        if lp is not None and lp.column("_Atom_name") is not None:
            lists.append((f, lp))
    if not lists:
        raise InputError("no assigned chemical shift loop found (no _Chem_shift_value loop)", path=path)
    if entity_id is not None:
        sel = [x for x in lists if entity_id in (x[0].tag("_Mol_system_component_name"), )]
        if not sel:
            names = sorted({str(x[0].tag("_Mol_system_component_name")) for x in lists})
            raise InputError(f"no shift list for entity {entity_id!r}; present: {', '.join(names)}",
                             path=path)
        lists = sel
    warnings: list[str] = []
    descr = [(f"{f.name} ({len(lp.rows)} shifts, {f.tag('_Mol_system_component_name') or '?'})",
              len(lp.rows), [str(k + 1), f.name]) for k, (f, lp) in enumerate(lists)]
    k, others = choose(descr, list_id, "shift list", path, warnings)
    frame, lp = lists[k]
    cols = {key: lp.column(tag) for key, tag in _COLS21.items()}
    for need in ("seq_id", "comp_id", "atom_id", "value"):
        if cols[need] is None:
            raise InputError(f"shift loop at line {lp.line} lacks {_COLS21[need]}", path=path, line=lp.line)
    component = frame.tag("_Mol_system_component_name")
    seq = _sequence21(frames, component)
    cond = _conditions21(frames, frame.tag("_Sample_conditions_label"))
    return build_shift_list(path, cols, lp.row_lines, list_id=str(k + 1), list_name=frame.name,
                            entity_id=component or "1", sequence=seq, conditions=cond,
                            other_lists=others, warnings=warnings)
