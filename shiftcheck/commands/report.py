"""`shiftcheck report OUTDIR`: redraw report.pdf, plots/ and report.html from a score output directory."""
from __future__ import annotations

import argparse

__all__ = ["add_parser", "run"]


def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "report", help="redraw the PDF/PNG report of a score output directory",
        description="Redraw OUTDIR/report.pdf, OUTDIR/plots/ and OUTDIR/report.html from the "
                    "summary.json, ranking.csv and residues.csv that 'shiftcheck score' wrote. "
                    "Nothing is rescored.")
    p.add_argument("outdir", metavar="OUTDIR", help="output directory of 'shiftcheck score'")
    p.add_argument("--plots", default="png", metavar="FORMATS",
                   help="comma-separated plot formats for OUTDIR/plots: png, svg (default: png)")
    p.add_argument("--show", nargs="+", action="extend", default=[], metavar="MODEL",
                   help="also draw measured-vs-predicted pages for these models (names as in "
                        "ranking.csv); the best model is always drawn")
    return p


def run(args) -> int:
    from ..report.html import write_html
    from ..report.load import load_outdir
    from ..report.pdf import write_report

    data = load_outdir(args.outdir, tuple(args.show))   # read once for the PDF and the page
    written = write_report(args.outdir, formats=tuple(args.plots.split(",")), show=tuple(args.show),
                           data=data)
    page = write_html(args.outdir, show=tuple(args.show), data=data)
    n_plots = len(written) - 1
    print(f"wrote {written[0]} and {n_plots} plot file{'s' if n_plots != 1 else ''} in "
          f"{written[0].parent / 'plots'}; interactive page {page}")
    return 0
