"""``shiftcheck score SHIFTS MODEL [MODEL ...] -o OUTDIR``: rank candidate models by agreement with
measured shifts, estimate referencing offsets, flag residues, write tables (and the report).

Everything is computed before OUTDIR is touched; the files are then written into a temporary
directory renamed into place, so a failure leaves no output behind.
"""
from __future__ import annotations

import argparse
import sys
from typing import TYPE_CHECKING

from ..defaults import DEFAULT_MIN_IDENTITY, RING_MODELS, scoring_default
from ..errors import InputError
from ._options import add_partner_option

if TYPE_CHECKING:
    from ..score.scoring import ScoreResult

__all__ = ["add_parser", "run", "add_common_options"]


def add_common_options(p: argparse.ArgumentParser) -> None:
    """Shift-list selection options shared with ``check``."""
    p.add_argument("--list-id", metavar="ID", help="assigned shift list ID or saveframe name (NEF: "
                   "save frame name of the nef_chemical_shift_list) "
                   "(default: the only list, or the largest protein list)")
    p.add_argument("--entity", metavar="ID", help="entity or entity-assembly ID of the shifts "
                   "(NEF: chain code)")


def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "score", help="rank models by agreement with measured shifts; write tables and report",
        description="Predict shifts from every model, estimate referencing offsets, score and rank "
                    "the models with bootstrap confidence, flag disagreeing residues and run the "
                    "data checks. Writes ranking.csv, residues.csv, summary.json (and the report) "
                    "into OUTDIR.")
    p.add_argument("shifts", metavar="SHIFTS", help="assigned chemical shifts (NMR-STAR, NEF or table)")
    p.add_argument("models", metavar="MODEL", nargs="+", help="coordinate files (PDB or mmCIF, .gz allowed)")
    p.add_argument("-o", "--outdir", metavar="OUTDIR", required=True,
                   help="output directory (created; must be empty unless --force)")
    p.add_argument("--chain", metavar="C", help="author chain ID in the models (default: first protein chain)")
    add_partner_option(p)
    add_common_options(p)
    p.add_argument("--temperature", metavar="K", type=float, default=None,
                   help="sample temperature in kelvin, for the random-coil corrections (default: "
                        "the shift file's sample conditions; NEF files carry none)")
    p.add_argument("--ph", metavar="PH", type=float, default=None,
                   help="sample pH (default: the shift file's sample conditions; NEF files carry none)")
    p.add_argument("--params", metavar="FILE", help="predictor parameter file (default: shipped)")
    p.add_argument("--min-identity", metavar="F", type=float, default=None,
                   help="lowest sequence identity accepted between the shift list and a model "
                        f"(default {DEFAULT_MIN_IDENTITY:g}; lower it for mutants, knowing the mutated residues are compared too)")
    p.add_argument("--ring-model", metavar="NAME",
                   choices=list(RING_MODELS),
                   help="ring-current model (default: the parameter file's)")
    p.add_argument("--reref", choices=["auto", "off", "force"], default="auto",
                   help="referencing correction: auto (when significant and above threshold), "
                        "off, force (default: auto)")
    k_sigma, n_boot = scoring_default("k_sigma"), scoring_default("n_boot")
    p.add_argument("--k-sigma", metavar="K", type=float, default=k_sigma,
                   help=f"flag atoms with |residual| > K x expected error (default: {k_sigma:g})")
    p.add_argument("--bootstrap", metavar="N", type=int, default=n_boot,
                   help=f"bootstrap replicates (default: {n_boot})")
    p.add_argument("--seed", metavar="S", type=int, default=None,
                   help=f"random seed of the bootstrap (default: {scoring_default('seed')})")
    p.add_argument("--no-mean", action="store_true",
                   help="do not score the ensemble-mean prediction (name#mean)")
    p.add_argument("--jobs", metavar="N", type=int, default=None,
                   help="worker processes reading and predicting the models (default: all cores); "
                        "the results are the same for any N")
    p.add_argument("--scheduler", metavar="ADDRESS", default=None,
                   help="send the models to the Dask cluster whose scheduler listens at ADDRESS "
                        "(e.g. tcp://10.0.0.5:8786; needs pip install 'shiftcheck[cluster]'; see "
                        "docs/scaling.md)")
    p.add_argument("--force", action="store_true", help="write into a non-empty OUTDIR")
    p.add_argument("--strict", action="store_true",
                   help="stop with an error at the first model that would be skipped "
                        "(unreadable, no protein chain, another sequence) instead of going on")
    p.add_argument("--quiet", action="store_true", help="no console summary, no progress bar")
    p.add_argument("--json", action="store_true",
                   help="print summary.json's ranking and offsets as one JSON object on stdout "
                        "(instead of the console summary)")
    p.add_argument("--fail-on", metavar="CONDITIONS", default=None,
                   help="exit with code 3, after writing the outputs, when any of these "
                        "comma-separated conditions holds: offset (an offset was applied), "
                        "flags>N (more than N atoms flagged in every model), score>X (best "
                        "score above X), skipped (a model file was skipped)")
    p.add_argument("--no-report", action="store_true", help="skip the report (PDF/PNG and report.html)")
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


def run(args) -> int:
    from ..pipeline import score_files
    from ..report.console import console_summary
    from ..report.outdir import check_outdir
    from ._options import check_score_options, check_show

    from ..gates import finish, parse_conditions

    inputs = [args.shifts, *args.models] + ([args.params] if args.params else [])
    gates = parse_conditions(getattr(args, "fail_on", None))   # before any work
    if not args.no_report:                               # fail early on a bad format too
        from ..report.pdf import PLOT_FORMATS
        bad = [f for f in args.plots.split(",") if f.strip() and f.strip().lower() not in PLOT_FORMATS]
        if bad:
            raise InputError(f"--plots: unknown plot format '{bad[0]}' (choose from {', '.join(PLOT_FORMATS)})")
    check_score_options(args)
    if args.jobs is not None and args.jobs < 1:
        raise InputError(f"--jobs must be at least 1, got {args.jobs}")
    if args.temperature is not None and not 200.0 <= args.temperature <= 400.0:
        raise InputError(f"--temperature is in kelvin and must lie in 200..400, got {args.temperature:g}")
    if args.ph is not None and not 0.0 <= args.ph <= 14.0:
        raise InputError(f"--ph must lie in 0..14, got {args.ph:g}")
    check_outdir(args.outdir, args.force, inputs)        # fail early, before the work

    def on_models(ensembles, skipped):
        check_show(args.show if not args.no_report else [], ensembles)
        for s in skipped:
            print(f"shiftcheck: warning: {s.file}: skipped: {s.reason}", file=sys.stderr)

    res = score_files(args.shifts, args.models, list_id=args.list_id, entity_id=args.entity,
                      chain=args.chain, partners=args.partner_chains, temperature=args.temperature,
                      ph=args.ph, strict=args.strict,
                      on_models=on_models, params=args.params, ring_model=args.ring_model,
                      reref=args.reref, k_sigma=args.k_sigma, n_boot=args.bootstrap, seed=args.seed,
                      include_mean=not args.no_mean, min_identity=args.min_identity,
                      jobs=args.jobs, scheduler=args.scheduler, progress=_Progress(args.quiet))
    as_json = getattr(args, "json", False)
    text = None if args.quiet or as_json else console_summary(res, outdir=args.outdir)
    held = [res]
    del res                                              # write_outputs frees it before the report
    write_outputs(held.pop(), args.outdir, force=args.force, inputs=inputs, report=not args.no_report,
                  plots=args.plots, show=tuple(args.show), release=True)
    if text is not None:
        print(text)
    if not gates and not as_json:                        # nothing to read back from summary.json
        return 0
    return finish(args.outdir, gates, as_json=as_json)


def write_outputs(res: ScoreResult, outdir: str, *, force: bool, inputs: list, report: bool = True,
                  plots: str = "png", show: tuple = (), release: bool = False) -> None:
    """Write the tables, the corrected shift list (when an offset was applied) and the report
    (PDF/PNG and report.html) of ``res`` into ``outdir`` through a staged directory.

    ``release``: the caller holds no other reference to ``res``; it is dropped once the tables
    are written, before the report (drawn from the written files) is, so the two are not held
    at once (a run of 10,000 models: see docs/scaling.md)."""
    from ..report.corrected_star import write_corrected_star
    from ..report.outdir import staged_outdir
    from ..report.tables import write_tables

    with staged_outdir(outdir, force, inputs) as tmp:
        write_tables(res, tmp)
        write_corrected_star(res, tmp)                   # only when an offset was applied
        if release:
            del res
            import gc

            gc.collect()
        if report:
            from ..report.html import write_html
            from ..report.load import load_outdir
            from ..report.pdf import write_report

            formats = tuple(f.strip().lower() for f in plots.split(",") if f.strip())
            data = load_outdir(tmp, show)                # read once for the PDF and the page
            write_report(tmp, formats=formats, show=show, data=data)
            write_html(tmp, show=show, data=data)
