"""Block-wise ridge strengths (calibration.json, ``ridge_lambda.block_factors``): selection on the
training proteins of the fixed split, and its check.

    SHIFTCHECK_REALDATA=../shared/realdata python tools/penalty_search.py search [-o factors.json] [N C ...]
    SHIFTCHECK_REALDATA=../shared/realdata python tools/penalty_search.py check factors.json [N C ...]

Every column of a class's design matrix belongs to a block (shiftcheck.predict.crossval.column_blocks:
residue i's own φ/ψ basis, the residue-class blocks, the neighbour torsions, the residue-type offsets,
the through-space terms ...). The ridge strength of a column is λ times its block's factor.
``search``: coordinate descent per nucleus class; each step tries, for every block of the class,
its factor times 1/10, 1/3, 3 and 10 (within 0.01-100), with λ re-chosen from the grid each time,
and keeps the change that lowers the leave-one-protein-out RMSD over the 17 training proteins of
the fixed split (tools/realdata_split.json) most; it stops below a 0.002 ppm gain (at most 8 steps).
The 6 held-out proteins are not used. ``check``: fixed-split held-out RMSD (fit on 17, λ by CV on
them) and 23-protein leave-one-out RMSD (λ by CV) with the shipped factors and with the selection;
a class's factors are kept only where both improve (common practice, no source).
"""
from __future__ import annotations

import argparse
import copy
import json
import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import ablation as ab  # noqa: E402
import realdata_pairs as rp  # noqa: E402
import validate_predictor as vp  # noqa: E402
from shiftcheck.predict.calibrate import collect, lambda_grid, load_settings  # noqa: E402
from shiftcheck.predict.crossval import GroupedRows, block_factors_for, column_blocks  # noqa: E402

NUCLEI = ["N", "C", "CA", "CB", "H", "HA"]
STEPS = (0.1, 1 / 3, 3.0, 10.0)


def _context():
    p = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())
    ds, settings = rp.load(), load_settings()
    split = json.loads((HERE / "realdata_split.json").read_text())
    base = Path(str(rp.realdata_dir()))
    held = {str(base / h) for h in split["held_out"]}
    return p, ds, settings, held


def search(nuclei, out):
    p, ds, settings, held = _context()
    rm = p["default_ring_model"]["value"]
    groups = sorted({d.group for d in ds})
    gid = {g: i for i, g in enumerate(groups)}
    train_ids = [gid[g] for g in groups if g not in held]
    it = int(settings["referencing_iterations"]["value"])
    chosen = copy.deepcopy((settings["ridge_lambda"].get("block_factors") or {}))
    for nuc in nuclei:
        names, X, y, d, w = collect(ds, nuc, settings["groups"][nuc], rm, settings["conformation"],
                                    burial=settings.get("burial"), screen=settings.get("target_screen"), models="mean")
        rows = GroupedRows(names, X, y, d, w, np.array([gid[ds[k].group] for k in d]))
        rows = rows.subset(np.isin(rows.group_of, train_ids))
        grid = lambda_grid(settings, nuc)
        blocks = sorted(set(column_blocks(names)) - {"const"})

        def err(f):
            r = rows.with_block_factors(f)
            return min(r.loo_error(lam, it) for lam in grid)

        cur = dict(chosen.get(nuc, {}))
        best = start = err(cur)
        for step in range(8):
            cands = []
            for b in blocks:
                for m in STEPS:
                    v = float(np.clip(cur.get(b, 1.0) * m, 0.01, 100.0))
                    if np.isclose(v, cur.get(b, 1.0)):
                        continue
                    cands.append((err({**cur, b: v}), b, v))
            e, b, v = min(cands)
            print(f"{nuc} step {step}: {b} x{v:.3g} {e:.4f} ({e - best:+.4f})", flush=True)
            if best - e < 0.002:
                break
            cur[b], best = round(v, 4), e
        chosen[nuc] = cur
        print(f"{nuc}: {start:.4f} -> {best:.4f} factors {cur}", flush=True)
    Path(out).write_text(json.dumps(chosen, indent=1) + "\n")


def check(path, nuclei):
    p, ds, settings, held = _context()
    rm = p["default_ring_model"]["value"]
    sel = json.loads(Path(path).read_text())
    cand = copy.deepcopy(settings)
    cand["ridge_lambda"]["block_factors"] = sel
    train = {d.group for d in ds} - held
    for nuc in nuclei:
        row = []
        for s in (settings, cand):
            fixed = vp.stats(vp.loo(ds, nuc, s["groups"][nuc], rm, s, train=train), ds, None)["rmsd"]
            row.append((fixed, ab.loo_rmsd(ds, s, nuc, rm, "mean", None)[0]))
        (f0, l0), (f1, l1) = row
        print(f"{nuc:3s} {block_factors_for(cand, nuc)}\n    fixed split {f0:.4f} -> {f1:.4f} ({f1 - f0:+.4f})   "
              f"LOO-23 {l0:.4f} -> {l1:.4f} ({l1 - l0:+.4f})", flush=True)


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("mode", choices=("search", "check"))
    ap.add_argument("args", nargs="*", help="check: the selection file, then nucleus classes; search: nucleus classes")
    ap.add_argument("-o", "--output", default="block_factors.json")
    a = ap.parse_intermixed_args()
    if a.mode == "search":
        search(a.args or NUCLEI, a.output)
    else:
        check(a.args[0], a.args[1:] or NUCLEI)
