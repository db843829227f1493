"""``shiftcheck score SHIFTS MODEL [MODEL ...] -o OUTDIR``: rank candidate models by agreement with
measured shifts, estimate referencing offsets, flag residues, write tables (and the report).

Everything is computed before OUTDIR is touched; the files are then written into a temporary
directory renamed into place, so a failure leaves no output behind.
"""
from __future__ import annotations

import argparse
import sys

import numpy as np

from ..errors import InputError

__all__ = ["add_parser", "run", "console_summary", "add_common_options"]


def add_common_options(p: argparse.ArgumentParser) -> None:
    """Shift-list selection options shared with ``check``."""
    p.add_argument("--list-id", metavar="ID", help="assigned shift list ID or saveframe name "
                   "(default: the only list, or the largest protein list)")
    p.add_argument("--entity", metavar="ID", help="entity or entity-assembly ID of the shifts")


def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "score", help="rank models by agreement with measured shifts; write tables and report",
        description="Predict shifts from every model, estimate referencing offsets, score and rank "
                    "the models with bootstrap confidence, flag disagreeing residues and run the "
                    "data checks. Writes ranking.csv, residues.csv, summary.json (and the report) "
                    "into OUTDIR.")
    p.add_argument("shifts", metavar="SHIFTS", help="assigned chemical shifts (NMR-STAR or table)")
    p.add_argument("models", metavar="MODEL", nargs="+", help="coordinate files (PDB or mmCIF, .gz allowed)")
    p.add_argument("-o", "--outdir", metavar="OUTDIR", required=True,
                   help="output directory (created; must be empty unless --force)")
    p.add_argument("--chain", metavar="C", help="author chain ID in the models (default: first protein chain)")
    add_common_options(p)
    p.add_argument("--params", metavar="FILE", help="predictor parameter file (default: shipped)")
    p.add_argument("--min-identity", metavar="F", type=float, default=None,
                   help="lowest sequence identity accepted between the shift list and a model "
                        "(default 0.9; lower it for mutants, knowing the mutated residues are compared too)")
    p.add_argument("--ring-model", metavar="NAME",
                   choices=["haigh-mallion", "johnson-bovey", "point-dipole"],
                   help="ring-current model (default: the parameter file's)")
    p.add_argument("--reref", choices=["auto", "off", "force"], default="auto",
                   help="referencing correction: auto (when significant and above threshold), "
                        "off, force (default: auto)")
    p.add_argument("--k-sigma", metavar="K", type=float, default=3.0,
                   help="flag atoms with |residual| > K x expected error (default: 3)")
    p.add_argument("--bootstrap", metavar="N", type=int, default=1000,
                   help="bootstrap replicates (default: 1000)")
    p.add_argument("--seed", metavar="S", type=int, default=None,
                   help="random seed of the bootstrap (default: 20240611)")
    p.add_argument("--no-mean", action="store_true",
                   help="do not score the ensemble-mean prediction (name#mean)")
    p.add_argument("--force", action="store_true", help="write into a non-empty OUTDIR")
    p.add_argument("--quiet", action="store_true", help="no console summary, no progress bar")
    p.add_argument("--no-report", action="store_true", help="skip the PDF/PNG report")
    p.add_argument("--plots", metavar="FORMATS", default="png",
                   help="comma-separated figure formats written to OUTDIR/plots: png, svg (default: png)")
    p.add_argument("--show", metavar="MODEL", action="append", default=[],
                   help="also draw the correlation page for this model (repeatable)")
    return p


class _Progress:
    """A one-line progress bar on stderr, only when stderr is a terminal."""

    def __init__(self, quiet: bool):
        self.on = (not quiet) and sys.stderr.isatty()

    def __call__(self, done: int, total: int) -> None:
        if not self.on or total < 2:
            return
        width = 30
        k = int(width * done / total)
        sys.stderr.write(f"\rpredicting [{'#' * k}{'.' * (width - k)}] {done}/{total}")
        if done == total:
            sys.stderr.write("\n")
        sys.stderr.flush()


def console_summary(res, outdir: str | None = None, top: int = 10) -> str:
    """Readable text summary of a ScoreResult."""
    from ..nuclei import BACKBONE

    comp, rk = res.comparison, res.ranking
    lines = [f"Shifts: {res.shifts.source} ({len(comp)} atoms on {comp.n_residues} residues compared)"]
    for ens, m in zip(res.ensembles, res.mappings):
        lines.append(f"  {ens.name}: chain {ens.chain_id}, {ens.n_models} model(s), identity "
                     f"{m.identity:.2f}, coverage {m.coverage:.2f}")
    lines.append("")
    lines.append(f"Referencing offsets (measured - predicted, ppm; --reref {res.parameters['reref']}):")
    for iso, name in (("C", "13C"), ("N", "15N"), ("H", "1H")):
        o = res.offsets[iso]
        if not o.n:
            lines.append(f"  {name:4s} no atoms")
            continue
        extra = ""
        if o.per_atom:
            extra = "  [" + ", ".join(f"{k} {v['value']:+.2f}" for k, v in o.per_atom.items()
                                      if v["value"] is not None) + "]"
        lines.append(f"  {name:4s} {o.value:+.2f} (95% {o.low:+.2f} to {o.high:+.2f}, n={o.n}) "
                     f"{'APPLIED' if o.applied else 'not applied'}{extra}")
    lines.append("")
    lines.append("Ranking (score: robust RMS of residual/expected error; lower is better):")
    head = f"  {'rank':>4} {'model':<24} {'score':>6} {'95% interval':>15} {'p_best':>6}  " + \
        " ".join(f"{x:>5}" for x in BACKBONE)
    lines.append(head)
    for n, i in enumerate(rk.order):
        if n >= 30:
            lines.append(f"  ... {len(rk.order) - 30} more in ranking.csv")
            break
        rms = " ".join(f"{res.metrics[x]['rmsd'][i]:5.2f}" if res.metrics[x]["n"] else "    -"
                       for x in BACKBONE)
        mark = "*" if rk.best_group[i] else " "
        lines.append(f"  {rk.rank[i]:>4}{mark}{comp.entries[i].name[:24]:<24} {rk.score[i]:6.2f} "
                     f"{rk.low[i]:6.2f} - {rk.high[i]:6.2f} {rk.p_best[i]:6.2f}  {rms}")
    lines.append("  * = cannot be told apart from the best (beats it in >= 5 % of bootstrap replicates)")
    lines += _geometry_lines(res)
    lines.append("")
    every = [(j, k) for j, k in enumerate(res.outliers.klass) if k == "every"]
    best = int(rk.order[0])
    fl = np.flatnonzero(res.outliers.flagged[best])
    lines.append(f"Flags (|residual| > {res.outliers.k:g} x expected error): "
                 f"{len(every)} atoms in every model, "
                 f"{int(np.sum(res.outliers.klass == 'some'))} in some models; "
                 f"{len(fl)} in the best model, largest |z| first"
                 + (" (measured minus the applied offset)" if any(o.applied for o in res.offsets.values()) else ""))
    order = sorted(fl, key=lambda j: -abs(res.z[best, j]))[:top]
    for j in order:
        meas = comp.predicted[best, j] + res.residual[best, j]   # measured - applied offset
        lines.append(f"  {comp.seq_id[j]:>5} {comp.comp_id[j]} {comp.atom_id[j]:<5} "
                     f"measured {meas:8.3f} predicted {comp.predicted[best, j]:8.3f} "
                     f"z {res.z[best, j]:+6.1f}  ({res.outliers.klass[j]})")
    warn = [f for f in res.findings if f.severity == "warning"]
    lines.append("")
    lines.append(f"Data checks: {len(warn)} warnings, {len(res.findings) - len(warn)} notes")
    for f in warn[:top]:
        lines.append(f"  {f.seq_id:>5} {f.comp_id} {f.atom_id}: [{f.rule}] {f.message}")
    if res.warnings:
        lines.append(f"Warnings: {len(res.warnings)} (see summary.json)")
    left = sum(comp.left_out.values())
    if left:
        lines.append(f"Left out of the comparison: {left} shifts (see summary.json left_out)")
    if outdir:
        lines.append(f"Output: {outdir}")
    return "\n".join(lines)


def _geometry_lines(res) -> list[str]:
    from ..structure.quality import result_geometry, summary_lines

    geo = result_geometry(res)
    recs = [geo[res.comparison.entries[i].name] for i in res.ranking.order
            if res.comparison.entries[i].name in geo]
    return ["", "Geometry (heavy atoms; rank order; see docs/outputs.md):"] + summary_lines(recs) if recs else []


def run(args) -> int:
    from ..io.coords import read_models
    from ..io.shifts import read_shifts
    from ..report.outdir import check_outdir, staged_outdir
    from ..report.tables import write_tables
    from ..score.scoring import score

    inputs = [args.shifts, *args.models] + ([args.params] if args.params else [])
    if not args.no_report:                               # fail early on a bad format too
        from ..report.pdf import PLOT_FORMATS
        bad = [f for f in args.plots.split(",") if f.strip() and f.strip().lower() not in PLOT_FORMATS]
        if bad:
            raise InputError(f"--plots: unknown plot format '{bad[0]}' (choose from {', '.join(PLOT_FORMATS)})")
    if args.min_identity is not None and not 0.0 < args.min_identity <= 1.0:
        raise InputError(f"--min-identity must lie in (0, 1], got {args.min_identity:g}")
    check_outdir(args.outdir, args.force, inputs)        # fail early, before the work
    shifts = read_shifts(args.shifts, list_id=args.list_id, entity_id=args.entity)
    ensembles = read_models(args.models, chain=args.chain)
    res = score(shifts, ensembles, params=args.params, ring_model=args.ring_model, reref=args.reref,
                k_sigma=args.k_sigma, n_boot=args.bootstrap, seed=args.seed,
                include_mean=not args.no_mean, min_identity=args.min_identity,
                progress=_Progress(args.quiet))
    with staged_outdir(args.outdir, args.force, inputs) as tmp:
        write_tables(res, tmp)
        if not args.no_report:
            try:
                from ..report.pdf import write_report
            except ModuleNotFoundError as exc:
                if exc.name != "shiftcheck.report.pdf":
                    raise
            else:
                formats = tuple(f.strip().lower() for f in args.plots.split(",") if f.strip())
                write_report(tmp, formats=formats, show=tuple(args.show))
    if not args.quiet:
        print(console_summary(res, outdir=args.outdir))
    return 0
