"""``shiftcheck check SHIFTS [MODEL ...]``: data checks that need no structure.

Values outside the usual range, placeholders, duplicated atoms, CA/CB swaps, cis-Pro evidence and
Cys redox state (:mod:`shiftcheck.score.datacheck`). With models, the cis-Pro and Cys findings are
compared with the models' peptide bonds and disulfides. Prints one line per finding; exit 0
(findings are advice, not errors), 2 on an unreadable shift list or when no model is usable (a
model file that cannot be read, or of another protein, is named on stderr and left out).
"""
from __future__ import annotations

import argparse
import json
import sys

from .score import add_common_options

__all__ = ["add_parser", "run"]


def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "check", help="check a shift list for implausible values, swaps and placeholders",
        description="Structure-free checks of an assigned shift list: values outside the usual "
                    "range, placeholders, duplicates, CA/CB swaps, cis-Pro evidence (Pro CB-CG) and "
                    "Cys redox state (CB), each with its rule and source. Models, when given, are "
                    "used to compare cis-Pro and disulfide evidence.")
    p.add_argument("shifts", metavar="SHIFTS", help="assigned chemical shifts (NMR-STAR, NEF or table)")
    p.add_argument("models", metavar="MODEL", nargs="*", help="optional coordinate files")
    p.add_argument("--chain", metavar="C", help="author chain ID in the models")
    add_common_options(p)
    p.add_argument("--json", action="store_true", help="print the findings as JSON")
    p.add_argument("--notes", action="store_true", help="also print notes (not only warnings)")
    return p


def run(args) -> int:
    from ..io.shift_formats import read_shifts
    from ..score.datacheck import check_against_models, check_shifts

    shifts = read_shifts(args.shifts, list_id=args.list_id, entity_id=args.entity)
    findings = check_shifts(shifts)
    skipped = []
    if args.models:     # models are advisory here: an unusable one is named and left out
        from ..isolation import map_models_tolerant, no_model_left, read_models_tolerant

        ens, skipped = read_models_tolerant(args.models, chain=args.chain, build_hydrogens=False,
                                           partners="ignore")
        ens, maps, more = map_models_tolerant(shifts, ens)
        skipped += more
        if not ens:
            raise no_model_left(skipped)
        findings = check_against_models(findings, ens, maps)
    for s in skipped:
        print(f"shiftcheck: warning: {s.file}: skipped: {s.reason}", file=sys.stderr)
    if args.json:
        print(json.dumps([f.as_dict() for f in findings], indent=1))
        return 0
    warn = [f for f in findings if f.severity == "warning"]
    print(f"{shifts.source}: {len(shifts)} shifts; {len(warn)} warnings, "
          f"{len(findings) - len(warn)} notes")
    for f in findings:
        if f.severity == "warning" or args.notes:
            print(f"  {f.severity:7s} {f.seq_id:>5} {f.comp_id} {f.atom_id:<5} [{f.rule}] {f.message}"
                  f"  (source: {f.source})")
    return 0
