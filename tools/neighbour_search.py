"""Greedy forward selection of the neighbour-conformation blocks (calibration.json,
``conformation.neighbours``) and the check of a selection on the fixed split.

    SHIFTCHECK_REALDATA=../shared/realdata python tools/neighbour_search.py search [-o chosen.json] [N C ...]
    SHIFTCHECK_REALDATA=../shared/realdata python tools/neighbour_search.py check chosen.json [N C ...]

``search``: for each nucleus class, every step tries each single change (a block at offset −2..+2
for φ, ψ (order 1–2) or the full φ/ψ basis (order 1–4), a χ1 block of residue i±1 (order 1–2),
a ψ or φ/ψ block (order 2) of residue i±1 counted only where that residue is Gly, Pro or
β-branched,
removing a block, the order (1–3) of residue i's own φ/ψ basis, toggling the neighbour residue
types and burial groups) and keeps the one that lowers the leave-one-protein-out RMSD over
the 17 training proteins of the fixed split (tools/realdata_split.json) most, at the ridge strengths
of the shipped parameter file; it stops when the best gain is < 0.005 ppm. The 6 held-out proteins
are not used. ``check``: the fixed-split held-out RMSD (fit on 17, test on 6) and the 23-protein
leave-one-out RMSD (CV ridge strength) of the shipped settings and of the selection; a change is
kept only where both improve (the selection shipped in calibration.json was made this way, with
the parameter file in place before it). Common practice (forward selection), no source.
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
from shiftcheck.predict.calibrate import collect, load_settings  # noqa: E402
from shiftcheck.predict.conformation import class_order_for  # noqa: E402
from shiftcheck.predict.crossval import GroupedRows, block_factors_for  # noqa: E402

NUCLEI = ["N", "C", "CA", "H", "HA", "CB"]


def _context():
    p = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())
    ds, settings = rp.load(), load_settings()
    split = json.loads((HERE / "realdata_split.json").read_text())
    base = Path(str(rp.realdata_dir()))
    held = {str(base / h) for h in split["held_out"]}
    return p, ds, settings, held


def _moves(s, nuc):
    cur = {int(b[1]): b for b in s["conformation"]["neighbours"].get(nuc, []) if b[0] != "chi1" and len(b) == 3}
    opts = [None] + [[k, 0, o] for k in ("phi", "psi") for o in (1, 2)] + [["phi_psi", 0, o] for o in (1, 2, 3, 4)]
    for off in (-2, -1, 1, 2):
        for o in opts:
            opt = None if o is None else [o[0], off, o[2]]
            if cur.get(off) == opt:
                continue

            def f(t, off=off, opt=opt):
                blocks = [b for b in t["conformation"]["neighbours"].get(nuc, [])
                          if int(b[1]) != off or b[0] == "chi1" or len(b) > 3]
                t["conformation"]["neighbours"][nuc] = sorted(blocks + ([opt] if opt else []), key=lambda b: b[1])
            yield f"offset {off:+d} -> {opt}", f
    chi = {int(b[1]): b for b in s["conformation"]["neighbours"].get(nuc, []) if b[0] == "chi1"}
    for off in (-1, 1):
        for opt in (None, ["chi1", off, 1], ["chi1", off, 2]):
            if chi.get(off) == opt:
                continue

            def f(t, off=off, opt=opt):
                blocks = [b for b in t["conformation"]["neighbours"].get(nuc, [])
                          if not (b[0] == "chi1" and int(b[1]) == off)]
                t["conformation"]["neighbours"][nuc] = sorted(blocks + ([opt] if opt else []), key=lambda b: b[1])
            yield f"chi1 {off:+d} -> {opt}", f
    have = [b for b in s["conformation"]["neighbours"].get(nuc, []) if len(b) > 3]
    for off in (-1, 1):
        for cls in ("GLY", "PRO", "BETA"):
            for opt in (["psi", off, 2, cls], ["phi_psi", off, 2, cls]):
                if opt in have:
                    continue

                def f(t, opt=opt):
                    nb = t["conformation"]["neighbours"]
                    nb[nuc] = sorted(nb.get(nuc, []) + [opt], key=lambda b: b[1])
                yield f"class block {opt}", f
    for b in have:
        def f(t, b=b):
            t["conformation"]["neighbours"][nuc] = [x for x in t["conformation"]["neighbours"][nuc] if x != b]
        yield f"drop class block {b}", f
    own = class_order_for(s["conformation"].get("order", 2), nuc)
    for o in (1, 2, 3):
        if o != own:
            def f(t, o=o):
                cur_o = t["conformation"].get("order", 2)
                t["conformation"]["order"] = dict(cur_o) if isinstance(cur_o, dict) else {"default": int(cur_o)}
                t["conformation"]["order"][nuc] = o
            yield f"own phi/psi order {own} -> {o}", f
    for g in ("neighbour", "burial"):
        yield (f"- {g}", ab._drop_group_of(g, (nuc,))) if g in s["groups"][nuc] else (f"+ {g}", ab._add_group(g, (nuc,)))


def search(nuclei, out):
    p, ds, settings, held = _context()
    rm, lams = p["default_ring_model"]["value"], p["ridge_lambda"]["by_nucleus"]
    groups = sorted({d.group for d in ds})
    gid = {g: i for i, g in enumerate(groups)}
    train_ids = [gid[g] for g in groups if g not in held]
    it = int(settings["referencing_iterations"]["value"])

    def loo17(s, nuc):
        names, X, y, d, w = collect(ds, nuc, s["groups"][nuc], rm, s["conformation"], burial=s.get("burial"),
                                    screen=s.get("target_screen"), models="mean")
        rows = GroupedRows(names, X, y, d, w, np.array([gid[ds[k].group] for k in d]), block_factors_for(s, nuc))
        return rows.subset(np.isin(rows.group_of, train_ids)).loo_error(float(lams[nuc]), it)

    chosen = copy.deepcopy(settings)
    for nuc in nuclei:
        best = start = loo17(chosen, nuc)
        for rnd in range(6):
            cands = []
            for label, f in _moves(chosen, nuc):
                t = copy.deepcopy(chosen)
                f(t)
                cands.append((loo17(t, nuc), label, f))
            e, label, f = min(cands, key=lambda c: c[0])
            print(f"{nuc} step {rnd}: {label} {e:.4f} ({e - best:+.4f})", flush=True)
            if best - e < 0.005:
                break
            f(chosen)
            best = e
        print(f"{nuc}: {start:.4f} -> {best:.4f} blocks {chosen['conformation']['neighbours'].get(nuc)} "
              f"groups {chosen['groups'][nuc]}", flush=True)
    Path(out).write_text(json.dumps({"neighbours": chosen["conformation"]["neighbours"],
                                     "order": chosen["conformation"].get("order", 2),
                                     "groups": chosen["groups"]}, indent=1) + "\n")


def check(path, nuclei):
    p, ds, settings, held = _context()
    rm = p["default_ring_model"]["value"]
    sel = json.loads(Path(path).read_text())
    cand = copy.deepcopy(settings)
    cand["conformation"]["neighbours"], cand["groups"] = sel["neighbours"], sel["groups"]
    cand["conformation"]["order"] = sel.get("order", cand["conformation"].get("order", 2))
    train = {d.group for d in ds} - held
    for nuc in nuclei:
        row = []
        for s in (settings, cand):
            fixed = vp.stats(vp.loo(ds, nuc, s["groups"][nuc], rm, s, train=train), ds, None)["rmsd"]
            row.append((fixed, ab.loo_rmsd(ds, s, nuc, rm, "mean", None)[0]))
        (f0, l0), (f1, l1) = row
        print(f"{nuc:3s} fixed split {f0:.4f} -> {f1:.4f} ({f1 - f0:+.4f})   "
              f"LOO-23 {l0:.4f} -> {l1:.4f} ({l1 - l0:+.4f})", flush=True)


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("mode", choices=("search", "check"))
    ap.add_argument("args", nargs="*", help="check: the selection file, then nucleus classes; search: nucleus classes")
    ap.add_argument("-o", "--output", default="neighbour_selection.json")
    a = ap.parse_intermixed_args()
    if a.mode == "search":
        search(a.args or NUCLEI, a.output)
    else:
        check(a.args[0], a.args[1:] or NUCLEI)
