"""`shiftcheck predict`: predicted shifts of every model, one column per term."""
from __future__ import annotations

import argparse
import csv
import io
import sys
from typing import TYPE_CHECKING

from ..defaults import RING_MODELS
from ._options import add_partner_option

if TYPE_CHECKING:
    from ..predict.prediction import Prediction

__all__ = ["add_parser", "run", "prediction_rows"]



def add_parser(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "predict", help="predict chemical shifts from structures",
        description="Predict backbone, methyl and aromatic-proton shifts of every model: random coil + "
                    "sequence offsets + backbone conformation + ring currents + hydrogen bonds.")
    p.add_argument("models", nargs="+", metavar="MODEL", help="PDB or mmCIF files (optionally .gz)")
    p.add_argument("-o", "--output", metavar="FILE.csv", help="write a CSV table (default: print a table)")
    p.add_argument("--chain", metavar="C", help="chain ID (default: the first protein chain)")
    add_partner_option(p)
    p.add_argument("--params", metavar="FILE", help="parameter file (default: the shipped one)")
    p.add_argument("--ring-model", choices=RING_MODELS, help="ring-current model (default: the parameter file's)")
    p.add_argument("--temperature", type=float, metavar="K", help="sample temperature in K (random-coil correction)")
    p.add_argument("--ph", type=float, metavar="PH", help="sample pH (His ring-proton correction)")
    return p


def prediction_rows(pred: Prediction, icode=None):
    """(header, rows) for one Prediction: one row per (model, atom).

    ``icode`` gives each atom's insertion code (e.g. ``ens.res_icode[pred.res_index]``), written
    in the ``ins_code`` column so that residues 52 and 52A stay apart.
    """
    from ..predict.model import TERMS

    header = ["model", "chain", "res_seq", "ins_code", "comp_id", "atom_id", "nucleus", "predicted", *TERMS]
    icode = [""] * len(pred) if icode is None else [str(c).strip() for c in icode]
    rows = []
    for m, name in enumerate(pred.model_names):
        for k in range(len(pred)):
            v = pred.values[m, k]
            rows.append([name, pred.chain_id, int(pred.res_seq[k]), icode[k], pred.comp_id[k], pred.atom_id[k],
                         pred.nucleus[k], "" if v != v else f"{v:.3f}",
                         *[f"{pred.terms[t][m, k]:.3f}" for t in TERMS]])
    return header, rows


def run(args) -> int:
    from ..io.coords import read_models
    from ..predict.model import Predictor
    from ..shiftlist import SampleConditions

    from ..report.atomic import atomic_write_text, check_output_file

    from ._options import check_predict_options

    check_predict_options(args)
    if args.output:                 # before any work: not a directory, not an input, writable
        check_output_file(args.output, [*args.models, args.params], "output CSV")
    predictor = Predictor(args.params, args.ring_model).load()
    cond = SampleConditions(temperature_K=args.temperature, pH=args.ph)
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    first = True
    for ens in read_models(args.models, chain=args.chain, partners=args.partner_chains):
        pred = predictor.predict(ens, cond)
        header, rows = prediction_rows(pred, ens.res_icode[pred.res_index])
        if first:
            writer.writerow(header)
            first = False
        writer.writerows(rows)
        if not args.output:
            print(f"# {ens.name}: chain {ens.chain_id}, {ens.n_models} model(s), {len(pred)} atoms, "
                  f"ring model {predictor.ring_model_}")
    if args.output:
        atomic_write_text(args.output, buf.getvalue())
        print(f"wrote {args.output}")
        return 0
    buf.seek(0)
    rd = list(csv.reader(buf))
    widths = [max(len(r[i]) for r in rd) for i in range(len(rd[0]))]
    out = sys.stdout
    for r in rd:
        out.write("  ".join(c.rjust(w) if i >= 7 or i == 2 else c.ljust(w)
                            for i, (c, w) in enumerate(zip(r, widths))).rstrip() + "\n")
    return 0
