"""`shiftcheck calibrate`: fit the predictor's coefficients to your own (shifts, model) pairs."""
from __future__ import annotations

import argparse
import sys

__all__ = ["add_parser", "run"]


def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "calibrate", help="fit predictor coefficients to (shift list, structure) pairs",
        description="Fit the predictor's coefficients (ridge least squares per nucleus class, one "
                    "referencing offset per shift list removed) to pairs of assigned shift lists and "
                    "structures, and write a parameter file that --params accepts.")
    p.add_argument("pairs_file", nargs="*", metavar="PAIRS",
                   help="pairs file: one line per pair, SHIFTS<TAB>MODELS[<TAB>CHAIN] ('#' comments)")
    p.add_argument("--pair", nargs=2, action="append", default=[], metavar=("SHIFTS", "MODEL"),
                   help="one pair given directly (repeatable)")
    p.add_argument("--data-dir", metavar="DIR",
                   help="folder that relative paths in the pairs files refer to (default: the pairs file's folder)")
    p.add_argument("-o", "--output", required=True, metavar="PARAMS.json", help="parameter file to write")
    return p


def run(args) -> int:
    from ..errors import InputError
    from ..predict.calibrate import Pair, calibrate, load_datasets, read_pairs_file
    from ..predict.params import save_params

    from ..report.atomic import check_output_file

    check_output_file(args.output, [*args.pairs_file, *(x for pr in args.pair for x in pr)],
                      "parameter file")
    pairs = []
    for f in args.pairs_file:
        pairs += read_pairs_file(f, args.data_dir)
    pairs += [Pair(s, m, None, label=f"{s} + {m}") for s, m in args.pair]
    if not pairs:
        raise InputError("no pairs given (a pairs file or --pair SHIFTS MODEL)")
    names = " ".join(args.pairs_file) or f"{len(pairs)} --pair options"
    desc = f"{names} ({len(pairs)} pairs)"
    datasets = load_datasets(pairs)
    params = calibrate(datasets, description=desc)
    save_params(params, args.output)
    ee = params["expected_error"]["values"]
    print(f"wrote {args.output}: {len(datasets)} structures, default ring model "
          f"{params['default_ring_model']['value']}")
    print("expected error (ppm): " + ", ".join(f"{k} {v:.3f}" for k, v in ee.items()))
    sys.stdout.flush()
    return 0
