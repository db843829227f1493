"""``shiftcheck demo [-o DIR] [--force]``: run the whole job on the bundled, invented example.

The example (package data in :mod:`shiftcheck.demo`, made by ``demo_data/make_demo.py``) is an
INVENTED protein, "Kestrel-fold protein KfpA", from an invented lab: five candidate models and
an NMR-STAR 3.1 shift list with problems planted on purpose. The command scores the models with
the same code as ``shiftcheck score``, writes the tables and the report, and prints what was found
beside what was planted, so a newcomer can see what the tool reports and check it is right.
"""
from __future__ import annotations

import argparse
import contextlib
import json
from importlib import resources
from pathlib import Path

from ..errors import InputError

__all__ = ["add_parser", "run", "demo_inputs", "DEFAULT_OUTDIR"]

DEFAULT_OUTDIR = "shiftcheck_demo"


def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "demo", help="run the whole job on a bundled, invented example",
        description="Score the five candidate models of a bundled, invented example protein "
                    "against its NMR-STAR shift list (with planted problems), write the tables "
                    "and the report into DIR, and print what was found.")
    p.add_argument("-o", "--outdir", metavar="DIR", default=DEFAULT_OUTDIR,
                   help=f"output directory (default: ./{DEFAULT_OUTDIR}; must be empty unless --force)")
    p.add_argument("--force", action="store_true", help="write into a non-empty DIR")
    p.add_argument("--no-report", action="store_true", help="skip the report (PDF/PNG and report.html)")
    p.add_argument("--quiet", action="store_true", help="print only the short summary")
    return p


@contextlib.contextmanager
def demo_inputs():
    """Paths of the bundled demo files: yields (shift file, [model files], planted dict)."""
    root = resources.files("shiftcheck.demo")
    with resources.as_file(root) as folder:
        folder = Path(folder)
        planted_path = folder / "planted.json"
        if not planted_path.is_file():
            raise InputError("the demo data are missing from the installed package", path=str(folder))
        planted = json.loads(planted_path.read_text())
        shifts = folder / planted["shift_file"]
        models = [folder / m["file"] for m in planted["models"]]
        for f in [shifts, *models]:
            if not f.is_file():
                raise InputError("demo file missing from the installed package", path=str(f))
        yield shifts, models, planted


def _score_args(shifts: Path, models: list[Path], outdir: str, force: bool, no_report: bool,
                quiet: bool) -> argparse.Namespace:
    from . import score as score_cmd

    parser = argparse.ArgumentParser(prog="shiftcheck")
    score_cmd.add_parser(parser.add_subparsers())
    argv = ["score", str(shifts), *map(str, models), "-o", outdir]
    argv += ["--force"] * force + ["--no-report"] * no_report + ["--quiet"] * quiet
    return parser.parse_args(argv)


def findings(outdir: Path) -> dict:
    """What the scoring found, read back from summary.json and the flags in it."""
    s = json.loads((Path(outdir) / "summary.json").read_text())
    every: dict[tuple, set] = {}
    for f in s["flags"]:
        if f["class"] == "every":
            every.setdefault((f["seq_id"], f["comp_id"]), set()).add(f["atom_id"])
    ranking = sorted(s["ranking"], key=lambda r: r["rank"])
    return {"best_model": s["best_model"], "best_group": s["best_group"],
            "ranking": [(r["rank"], r["model"], r["score"]) for r in ranking],
            "offsets": {k: v for k, v in s["offsets"].items()},
            "flagged_every": {k: sorted(v) for k, v in sorted(every.items())},
            "data_checks": [d for d in s["data_checks"] if d.get("severity") == "warning"]}


def _report_lines(found: dict, planted: dict, outdir: Path) -> list[str]:
    truth = planted["true_model"]
    lines = ["", "=== shiftcheck demo: the invented protein 'Kestrel-fold protein KfpA' ==="]
    report = outdir / "report.pdf"
    lines.append(f"Output folder: {outdir}" + (f"   report: {report}" if report.exists() else ""))
    lines.append("Ranking (lower score = better agreement):")
    kinds = {m["file"]: m["description"] for m in planted["models"]}
    for rank, model, score in found["ranking"]:
        base = model.split("#")[0]
        lines.append(f"  {rank}. {model:<22} score {score:6.2f}   [{kinds.get(base, 'ensemble mean')}]")
    ok = found["best_model"].split("#")[0] == truth
    verdict = "the true fold, as planted" if ok else "NOT the true fold " + truth
    lines.append(f"Best model: {found['best_model']}  ({verdict})")
    c = found["offsets"].get("C", {})
    if c.get("value") is not None:
        lines.append(f"13C referencing offset: {c['value']:+.2f} ppm (95% {c['low']:+.2f} to {c['high']:+.2f}; "
                     f"planted {planted['offset']['ppm']:+.2f}) {'applied' if c.get('applied') else 'not applied'}")
    lines.append("Residues flagged in every model (point at the data, not at a model):")
    for (seq, comp), atoms in found["flagged_every"].items():
        note = ""
        if seq in planted["misassigned"]["residues"]:
            note = "  <- planted misassignment"
        elif seq == planted["ca_cb_swap"]["residue"]:
            note = "  <- planted CA/CB swap"
        lines.append(f"  {comp} {seq}: {', '.join(atoms)}{note}")
    lo, hi = planted["missing"]["residues"][0], planted["missing"]["residues"][-1]
    lines.append(f"Planted gap: residues {lo}-{hi} have no assignments (left out of the comparison).")
    lines.append("This protein, its lab and its data are invented "
                 "(see demo_data/README.md in the shiftcheck source).")
    return lines


def run(args) -> int:
    from . import score as score_cmd

    with demo_inputs() as (shifts, models, planted):
        sargs = _score_args(shifts, models, args.outdir, args.force, args.no_report, args.quiet)
        code = score_cmd.run(sargs)
        if code:
            return code
    outdir = Path(args.outdir).absolute()
    found = findings(outdir)
    print("\n".join(_report_lines(found, planted, outdir)))
    return 0
