"""``shifts_corrected.str``: the measured shift list with the applied referencing correction, as an
NMR-STAR 3.1 entry written with pynmrstar, for the user to check and deposit.

Written only when ``score`` applied a correction to at least one isotope. Every shift of the list
that was read is written (all atoms, not only the compared ones); each shift of a corrected
isotope (by ``Atom_type``: H, C, N) becomes ``original - offset``, rounded to 0.001 ppm, with the
offset itself rounded to 0.001 ppm first so the written numbers add up exactly.

Tags (NMR-STAR 3.1 dictionary as shipped with pynmrstar; documented in docs/outputs.md):

* ``save_assigned_chem_shift_list_1`` - ``_Assigned_chem_shift_list.Details`` says what was done
  and ``Chem_shift_reference_label`` points at the referencing frame; loop ``_Atom_chem_shift``
  with the standard columns. ``_Atom_chem_shift.Details`` of each corrected row holds the
  original value: ``original Val 58.300 ppm; 13C correction -2.000 ppm``.
* ``save_chem_shift_reference_1`` - loop ``_Chem_shift_ref`` with one row per corrected isotope:
  ``Atom_type``, ``Atom_isotope_number``, ``Ref_correction_type`` ("structure-based offset
  (shiftcheck)"), ``Correction_val`` (ppm ADDED to the reported values, i.e. minus the offset).
  The offsets with their 95 % bootstrap intervals and atom counts are in
  ``_Chem_shift_reference.Details`` as ``13C offset +2.003 ppm (95% +1.910 to +2.100, n=250)``.
* ``save_entity_1`` (sequence, ``_Entity_comp_index``; Seq_ID = position 1..n, Auth_seq_ID =
  the residue number as read) and ``save_sample_conditions_1``
  (temperature, pH where known), so that reading the file back gives the same list.
"""
from __future__ import annotations

import os
from pathlib import Path

import numpy as np

from .. import __version__

__all__ = ["write_corrected_star", "corrected_entry", "FILE_NAME", "CORRECTION_TYPE"]

FILE_NAME = "shifts_corrected.str"
CORRECTION_TYPE = "structure-based offset (shiftcheck)"
_ISOTOPE = {"H": ("1H", 1), "C": ("13C", 13), "N": ("15N", 15)}
_SHIFT_TAGS = ["ID", "Entity_assembly_ID", "Entity_ID", "Comp_index_ID", "Seq_ID", "Comp_ID",
               "Atom_ID", "Atom_type", "Atom_isotope_number", "Val", "Val_err", "Ambiguity_code",
               "Auth_seq_ID", "Auth_comp_ID", "Auth_atom_ID", "Details", "Entry_ID",
               "Assigned_chem_shift_list_ID"]


def _fmt(x: float, nd: int = 3) -> str:
    return "." if x is None or not np.isfinite(x) else f"{x:.{nd}f}"


def _frame(pynmrstar, name: str, prefix: str, tags: list[tuple[str, str]], entry_id: str,
           category: str | None = None):
    sf = pynmrstar.Saveframe.from_scratch(name, tag_prefix=f"_{prefix}")
    sf.add_tag("Sf_category", category or prefix.lower())
    sf.add_tag("Sf_framecode", name)
    for k, v in tags:
        sf.add_tag(k, v)
    sf.add_tag("Entry_ID", entry_id)
    return sf


def _loop(pynmrstar, category: str, tags: list[str], rows: list[list[str]]):
    lp = pynmrstar.Loop.from_scratch(category=f"_{category}")
    lp.add_tag(tags)
    for r in rows:
        lp.add_data(r)
    return lp


def corrected_entry(res, entry_id: str = "shiftcheck"):
    """The pynmrstar Entry of the corrected list (see the module docstring for its tags)."""
    import pynmrstar

    sh = res.shifts
    applied = {iso: o for iso, o in res.offsets.items() if o.applied}
    corr = {iso: round(float(o.value), 3) for iso, o in applied.items()}
    entry = pynmrstar.Entry.from_scratch(entry_id)

    details = []
    for iso, o in applied.items():
        details.append(f"{_ISOTOPE[iso][0]} offset {o.value:+.3f} ppm (95% {o.low:+.3f} to "
                       f"{o.high:+.3f}, n={o.n}) subtracted")
    text = ("Referencing offsets (measured - predicted) estimated by shiftcheck "
            f"{__version__} from the candidate models and subtracted from every shift of that "
            "isotope: " + "; ".join(details) + ". The offsets come from predicted shifts; check "
            "them against the spectrometer referencing before depositing.")
    ref = _frame(pynmrstar, "chem_shift_reference_1", "Chem_shift_reference",
                 [("ID", "1"), ("Name", "shiftcheck re-referencing"), ("Details", text)], entry_id)
    ref.add_loop(_loop(pynmrstar, "Chem_shift_ref",
                       ["Atom_type", "Atom_isotope_number", "Ref_correction_type", "Correction_val",
                        "Entry_ID", "Chem_shift_reference_ID"],
                       [[iso, str(_ISOTOPE[iso][1]), CORRECTION_TYPE, _fmt(-corr[iso]), entry_id, "1"]
                        for iso in applied]))

    # Seq_ID: position in the entity sequence (1..n); Auth_seq_ID: the residue number as read
    pos = {int(s): k + 1 for k, s in enumerate(sh.sequence_seq_ids)}
    seq_rows = [[str(k + 1), str(int(s)), c, entry_id, "1"]
                for k, (s, c) in enumerate(zip(sh.sequence_seq_ids, sh.sequence))]
    ent = _frame(pynmrstar, "entity_1", "Entity", [("ID", "1"), ("Name", f"entity {sh.entity_id}"),
                                                   ("Type", "polymer")], entry_id)
    ent.add_loop(_loop(pynmrstar, "Entity_comp_index", ["ID", "Auth_seq_ID", "Comp_ID", "Entry_ID",
                                                         "Entity_ID"], seq_rows))
    cond_rows = []
    if sh.conditions.temperature_K is not None:
        cond_rows.append(["temperature", _fmt(sh.conditions.temperature_K, 2), "K", entry_id, "1"])
    if sh.conditions.pH is not None:
        cond_rows.append(["pH", _fmt(sh.conditions.pH, 2), "pH", entry_id, "1"])
    frames = [ent]
    link = []
    if cond_rows:
        cond = _frame(pynmrstar, "sample_conditions_1", "Sample_condition_list", [("ID", "1")],
                      entry_id, category="sample_conditions")
        cond.add_loop(_loop(pynmrstar, "Sample_condition_variable",
                            ["Type", "Val", "Val_units", "Entry_ID", "Sample_condition_list_ID"],
                            cond_rows))
        frames.append(cond)
        link = [("Sample_condition_list_ID", "1"), ("Sample_condition_list_label", "$sample_conditions_1")]

    rows = []
    for k in range(len(sh)):
        typ = str(sh.atom_type[k])
        v = float(sh.value[k])
        note = "."
        if typ in corr:
            note = f"original Val {v:.3f} ppm; {_ISOTOPE[typ][0]} correction {-corr[typ]:+.3f} ppm"
            v = v - corr[typ]
        iso_n = str(_ISOTOPE[typ][1]) if typ in _ISOTOPE else "."
        amb = int(sh.ambiguity[k])
        p = str(pos.get(int(sh.seq_id[k]), int(sh.seq_id[k])))
        rows.append([str(k + 1), "1", "1", p, p,
                     str(sh.comp_id[k]), str(sh.atom_id[k]), typ or ".", iso_n, _fmt(v),
                     _fmt(float(sh.error[k])), str(amb) if amb else ".", str(int(sh.auth_seq_id[k])),
                     str(sh.comp_id[k]), str(sh.atom_id[k]), note, entry_id, "1"])
    lst = _frame(pynmrstar, "assigned_chem_shift_list_1", "Assigned_chem_shift_list",
                 [("ID", "1"), *link, ("Chem_shift_reference_ID", "1"),
                  ("Chem_shift_reference_label", "$chem_shift_reference_1"),
                  ("Details", f"Shifts of {Path(sh.source).name} (list '{sh.list_name or sh.list_id}', "
                              f"entity {sh.entity_id}) with the referencing correction of "
                              "save_chem_shift_reference_1 applied; original values in "
                              "_Atom_chem_shift.Details.")], entry_id,
                 category="assigned_chemical_shifts")
    lst.add_loop(_loop(pynmrstar, "Atom_chem_shift", _SHIFT_TAGS, rows))
    for sf in frames + [ref, lst]:
        entry.add_saveframe(sf)
    return entry


def write_corrected_star(res, outdir: str | os.PathLike) -> Path | None:
    """Write ``outdir/shifts_corrected.str`` when an offset was applied; else write nothing.

    Returns the path written, or None.
    """
    if not any(o.applied for o in res.offsets.values()):
        return None
    path = Path(outdir) / FILE_NAME
    head = (f"# shiftcheck {__version__}: shift list re-referenced by the applied offsets\n"
            "# (original values in _Atom_chem_shift.Details; offsets and 95% intervals in\n"
            "# save_chem_shift_reference_1). Agreement with predicted shifts supports a\n"
            "# referencing correction but does not prove it: check the spectrometer referencing.\n")
    from .atomic import atomic_write_text

    return atomic_write_text(path, head + str(corrected_entry(res)))
