"""``shiftcheck inspect SHIFTS [MODELS...]``: show what was read and how it maps, change nothing.

Prints the chosen shift list (and the others present), the entity, counts per nucleus class,
sample conditions, each coordinate file (models, chain, residues, atoms, hydrogens built,
method), the sequence mapping of the shifts onto each model chain, and every warning.
"""
from __future__ import annotations

import argparse
from collections import Counter
from typing import TYPE_CHECKING

from ._options import add_partner_option

if TYPE_CHECKING:
    from collections.abc import Sequence
    from ..shiftlist import ShiftList
    from ..structure.ensemble import Ensemble

__all__ = ["add_parser", "run", "describe"]


def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "inspect", help="show what was read from a shift list and models, and how they map",
        description="Read an assigned chemical-shift list (NMR-STAR 3.x / 2.1, NEF or a plain table) and "
                    "optional coordinate files (PDB/mmCIF, .gz allowed) and print what was read: "
                    "shift lists, entities, counts per nucleus, sample conditions, models, chains, "
                    "atoms, hydrogens built, the residue mapping and all warnings.")
    p.add_argument("shifts", metavar="SHIFTS", help="assigned chemical shifts (NMR-STAR, NEF or table)")
    p.add_argument("models", metavar="MODELS", nargs="*", help="coordinate files (PDB or mmCIF)")
    p.add_argument("--chain", metavar="C", help="author chain ID in the models "
                   "(default: the first chain with protein residues)")
    add_partner_option(p)
    p.add_argument("--list-id", metavar="ID", help="assigned shift list ID or saveframe name "
                   "(default: the only list, or the largest protein list)")
    p.add_argument("--entity", metavar="ID", help="entity or entity-assembly ID of the shifts "
                   "(NEF: chain code)")
    p.add_argument("--min-identity", metavar="F", type=float, default=None,
                   help="refuse a mapping below this sequence identity (default 0.9)")
    p.add_argument("--alignment", action="store_true", help="print the full sequence alignments")
    return p


def _shift_block(shifts) -> list[str]:
    import numpy as np

    from ..chem.nuclei import nucleus_class

    out = [f"Shifts: {shifts.source}"]
    name = f" ({shifts.list_name})" if shifts.list_name else ""
    out.append(f"  list {shifts.list_id or '-'}{name}, entity {shifts.entity_id or '-'}: "
               f"{len(shifts)} shifts on {len(set(np.asarray(shifts.seq_id).tolist()))} residues; "
               f"sequence {len(shifts.sequence)} residues")
    for other in shifts.other_lists:
        out.append(f"  also in the file (not used): {other}")
    types = shifts.counts()
    out.append("  per isotope: " + ", ".join(f"{k} {v}" for k, v in sorted(types.items())))
    cls = Counter(nucleus_class(str(c), str(a)) for c, a in zip(shifts.comp_id, shifts.atom_id))
    order = ("H", "HA", "CA", "CB", "C", "N", "HMe", "Haro")
    out.append("  per nucleus class: " + ", ".join(f"{k} {cls.get(k, 0)}" for k in order)
               + f", other {cls.get(None, 0)}")
    c = shifts.conditions
    temp = "not stated" if c.temperature_K is None else f"{c.temperature_K:.1f} K"
    ph = "not stated" if c.pH is None else f"{c.pH:.2f}"
    out.append(f"  sample conditions: temperature {temp}, pH {ph}")
    if shifts.sequence:
        seq = shifts.one_letter
        out.append(f"  sequence: {seq[:70]}{'...' if len(seq) > 70 else ''}")
    return out


def _model_block(ens) -> list[str]:
    import numpy as np

    n_h = int(np.sum(ens.element == "H"))
    n_built = int(np.sum(ens.built))
    out = [f"Models: {ens.name} ({', '.join(ens.sources)})"]
    out.append(f"  {ens.n_models} model(s), chain {ens.chain_id or '(blank)'}, {ens.n_residues} residues "
               f"{ens.res_seq[0]}{ens.res_icode[0]}-{ens.res_seq[-1]}{ens.res_icode[-1]}, {ens.n_atoms} atoms")
    out.append(f"  hydrogens: {n_h} ({n_h - n_built} read, {n_built} built)")
    out.append(f"  method: {ens.method or 'not stated'}")
    if ens.partners:
        out.append("  surroundings: " + ", ".join(f"chain {p.chain_id} ({p.n_residues} residues)"
                                                  for p in ens.partners)
                   + " (through-space terms only; not scored)")
    seq = ens.one_letter
    out.append(f"  sequence: {seq[:70]}{'...' if len(seq) > 70 else ''}")
    return out


def describe(shifts: ShiftList, ensembles: Sequence[Ensemble], min_identity=None, alignment=False) -> tuple[str, list]:
    """Text report of what was read; returns (text, list of MappingError for refused mappings)."""
    from ..errors import MappingError
    from ..structure.mapping import DEFAULT_MIN_IDENTITY, map_sequence

    thr = DEFAULT_MIN_IDENTITY if min_identity is None else min_identity
    lines = _shift_block(shifts)
    warns = [(shifts.source, w) for w in shifts.warnings]
    failed = []
    for ens in ensembles:
        lines.append("")
        lines += _model_block(ens)
        warns += [(ens.name, w) for w in ens.warnings]
        try:
            m = map_sequence(shifts, ens, min_identity=thr)
        except MappingError as exc:
            failed.append(exc)
            lines.append(f"  mapping: REFUSED: {exc.message}")
            continue
        lines.append("  mapping: " + m.table().replace("\n", "\n  "))
        if alignment:
            lines.append("  " + m.alignment.replace("\n", "\n  "))
    lines.append("")
    if warns:
        lines.append(f"Warnings ({len(warns)}):")
        lines += [f"  {src}: {w}" for src, w in warns]
    else:
        lines.append("Warnings: none")
    return "\n".join(lines), failed


def run(args) -> int:
    from ..io.shift_formats import read_shifts
    from ..isolation import read_models_tolerant

    shifts = read_shifts(args.shifts, list_id=args.list_id, entity_id=args.entity)
    # every file is described even when some cannot be read (the unreadable ones are listed)
    ensembles, unreadable = ([], []) if not args.models else read_models_tolerant(
        args.models, chain=args.chain, partners=args.partner_chains)
    text, failed = describe(shifts, ensembles, min_identity=args.min_identity, alignment=args.alignment)
    if unreadable:
        text += f"\nUnreadable model files ({len(unreadable)}):\n" + "\n".join(
            f"  {s.file}: {s.reason}" for s in unreadable)
    print(text, flush=True)
    # an unreadable file, or shifts of another protein: the CLI prints one line and exits 2
    if unreadable:
        raise unreadable[0].error
    if failed:
        raise failed[0]
    return 0
