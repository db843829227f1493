"""Leave-one-protein-out validation of the predictor; writes the predictor section of docs/validation.md.

Usage (from the repository root; about a minute on 2 cores)::

    SHIFTCHECK_REALDATA=../shared/realdata python tools/validate_predictor.py

For every shift list in tools/realdata_pairs.tsv: fit the coefficients with the calibrate code on
all other shift lists, predict the structures paired with the left-out list, subtract the
per-nucleus referencing offset (median of measured − predicted, reported) and pool the errors.
Also writes tools/validation_margins.json (random coil − full model RMSD per backbone nucleus),
which tests/test_calibrate_realdata.py uses as the regression margin.
"""
from __future__ import annotations

import json
import os
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import realdata_pairs as rp  # noqa: E402

from shiftcheck.predict.calibrate import collect, fit_rows, load_settings, ridge_lambda  # noqa: E402

NUCLEI = ("H", "HA", "CA", "CB", "C", "N", "HMe", "Haro")
BACKBONE = ("H", "HA", "CA", "CB", "C", "N")
GOALS = {"H": 0.45, "HA": 0.25, "CA": 0.95, "CB": 1.05, "C": 1.0, "N": 2.4}
STEPS = [("random coil (table + corrections)", ()),
         ("+ residue-type offsets", ("offset",)),
         ("+ backbone conformation", ("offset", "conformation")),
         ("+ neighbour residue types (N only)", ("offset", "conformation", "neighbour")),
         ("+ ring currents", ("offset", "conformation", "neighbour", "ring_current")),
         ("+ hydrogen bonds", ("offset", "conformation", "neighbour", "ring_current", "hbond")),
         ("+ peptide anisotropy",
          ("offset", "conformation", "neighbour", "ring_current", "hbond", "anisotropy")),
         ("+ burial (CB, C, N; full model)",
          ("offset", "conformation", "neighbour", "ring_current", "hbond", "anisotropy", "burial"))]
BEGIN, END = "<!-- BEGIN predictor -->", "<!-- END predictor -->"


def loo(ds, nuc, groups, rm, settings):
    """{dataset index: (measured, pred model 1, pred ensemble mean)} from leave-one-list-out fits."""
    lam = ridge_lambda(settings, nuc)
    it = int(settings["referencing_iterations"]["value"])
    orders = settings["conformation"]
    out = {}
    if groups:
        names, X, y, d, w = collect(ds, nuc, groups, rm, orders, burial=settings.get("burial"))
        lists = np.array([ds[k].group for k in d])
    for i, dset in enumerate(ds):
        sf = dset.features
        sel = np.flatnonzero(sf.targets.nucleus == nuc)
        meas = dset.measured[sel]
        ok = np.isfinite(meas)
        rc = sf.rc[:, sel]
        p1, pm = rc[0].copy(), rc.mean(axis=0)
        if groups:
            train = lists != dset.group
            beta, _ = fit_rows(names, X[train], y[train], d[train], w[train], lam, it)
            _, _, Xi, _ = sf.matrix(nuc, names, tuple(groups), rm, orders, settings.get("burial"))
            p1 += Xi[0] @ beta
            pm += Xi.mean(axis=0) @ beta
        out[i] = (meas[ok], p1[ok], pm[ok])
    return out


def stats(res, ds, kind=None):
    """Pooled RMSD, MAD, r, N, median |offset| over datasets of a kind (None: all, weighted)."""
    rr, ww, mm, pp, offs = [], [], [], [], []
    for i, (m, p1, pm) in res.items():
        nmr = ds[i].features.ens.n_models > 1
        if kind == "xray" and nmr or kind in ("nmr1", "nmrmean") and not nmr:
            continue
        p = p1 if (kind == "nmr1") else pm
        if m.size == 0:
            continue
        off = np.median(m - p)
        offs.append(off)
        rr.append(m - p - off), mm.append(m), pp.append(p + off)
        ww.append(np.full(m.size, ds[i].weight if kind is None else 1.0))
    if not rr:
        return dict(rmsd=np.nan, mad=np.nan, r=np.nan, n=0, off=np.nan)
    r, w = np.concatenate(rr), np.concatenate(ww)
    m, p = np.concatenate(mm), np.concatenate(pp)
    return dict(rmsd=float(np.sqrt(np.average(r ** 2, weights=w))), mad=float(np.average(np.abs(r), weights=w)),
                r=float(np.corrcoef(m, p)[0, 1]), n=int(r.size), off=float(np.median(np.abs(offs))))


def groups_for(nuc, step, settings):
    return tuple(g for g in settings["groups"][nuc] if g in step)


def main() -> int:
    t0 = time.time()
    settings = load_settings()
    ds = rp.load()
    lines = [BEGIN, "## Predictor: leave-one-protein-out validation", "",
             "Regenerate: `SHIFTCHECK_REALDATA=../shared/realdata python tools/validate_predictor.py` "
             "(rewrites only this section).", "",
             f"Data: {len({d.group for d in ds})} shift lists, {len(ds)} (shift list, structure) pairs "
             "from tools/realdata_pairs.tsv (gb3 kept aside, see below). For each shift list the "
             "coefficients are fitted by the calibrate code on all other lists, then the left-out "
             "protein's structures are predicted. Before each RMSD the per-protein, per-nucleus "
             "referencing offset (median of measured − predicted) is subtracted; `|off|` is the "
             "median over proteins of its magnitude. Pooled over proteins; each protein counts once "
             "(a list paired with an NMR ensemble and an X-ray structure gives each weight 1/2; "
             "the NMR ensemble by its ensemble-mean prediction).", "",
             "### (a, b) Random coil, then each term added in turn: RMSD in ppm (default ring model)", ""]
    default_rm = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())[
        "default_ring_model"]["value"]
    hdr = "| model | " + " | ".join(NUCLEI) + " |"
    lines += [hdr, "|---" * (len(NUCLEI) + 1) + "|"]
    results = {}
    for label, step in STEPS:
        row = []
        for nuc in NUCLEI:
            res = loo(ds, nuc, groups_for(nuc, step, settings), default_rm, settings)
            s = stats(res, ds, None)
            results[(label, nuc)] = (res, s)
            row.append(f"{s['rmsd']:.3f}")
        lines.append(f"| {label} | " + " | ".join(row) + " |")
    lines.append("| goal (from memory) | " + " | ".join(f"{GOALS.get(n, '')}" for n in NUCLEI) + " |")
    full = STEPS[-1][0]
    lines += ["", "### Full model, default ring model: all statistics", "",
              "| nucleus | RMSD | MAD | r | N | \\|off\\| | random-coil RMSD |", "|---|---|---|---|---|---|---|"]
    margins = {}
    for nuc in NUCLEI:
        s = results[(full, nuc)][1]
        rc = results[(STEPS[0][0], nuc)][1]
        lines.append(f"| {nuc} | {s['rmsd']:.3f} | {s['mad']:.3f} | {s['r']:.3f} | {s['n']} | {s['off']:.3f} | {rc['rmsd']:.3f} |")
        margins[nuc] = round(rc["rmsd"] - s["rmsd"], 4)
    lines += ["", "### (c) Full model with each ring-current model: RMSD in ppm", "",
              hdr, "|---" * (len(NUCLEI) + 1) + "|"]
    for rm in ("haigh-mallion", "johnson-bovey", "point-dipole"):
        row = []
        for nuc in NUCLEI:
            res = loo(ds, nuc, settings["groups"][nuc], rm, settings) if rm != default_rm else results[(full, nuc)][0]
            row.append(f"{stats(res, ds, None)['rmsd']:.3f}")
        lines.append(f"| {rm}{' (default)' if rm == default_rm else ''} | " + " | ".join(row) + " |")
    lines += ["", "### Full model by structure kind: RMSD in ppm (N)", "",
              "NMR ensembles scored by model 1 and by the ensemble-mean prediction; X-ray structures "
              "with hydrogens built by shiftcheck, beside the NMR models of the same proteins.", "",
              "| structures | " + " | ".join(NUCLEI) + " |", "|---" * (len(NUCLEI) + 1) + "|"]
    for kind, lab in (("nmr1", "NMR, model 1"), ("nmrmean", "NMR, ensemble mean"), ("xray", "single models: X-ray (H built), hsr50")):
        row = []
        for nuc in NUCLEI:
            s = stats(results[(full, nuc)][0], ds, kind)
            row.append(f"{s['rmsd']:.3f} ({s['n']})")
        lines.append(f"| {lab} | " + " | ".join(row) + " |")
    lines += ["", "### Per protein (full model, ensemble mean / X-ray): RMSD in ppm and offset", "",
              "| pair | " + " | ".join(BACKBONE) + " |", "|---" * (len(BACKBONE) + 1) + "|"]
    for i, d in enumerate(ds):
        cells = []
        for nuc in BACKBONE:
            m, _, pm = results[(full, nuc)][0][i]
            if m.size:
                off = np.median(m - pm)
                cells.append(f"{np.sqrt(np.mean((m - pm - off) ** 2)):.2f} ({off:+.2f})")
            else:
                cells.append("–")
        lines.append(f"| {d.label} | " + " | ".join(cells) + " |")
    lines += _external(settings) + ["", f"Generated in {time.time() - t0:.0f} s.", END]
    _write_section(HERE.parent / "docs/validation.md", "\n".join(lines) + "\n")
    (HERE / "validation_margins.json").write_text(json.dumps(
        {"source": "random-coil RMSD minus full-model RMSD, leave-one-protein-out, tools/validate_predictor.py",
         "margins_ppm": margins}, indent=1) + "\n")
    print("\n".join(lines))
    return 0


def _external(settings):
    """gb3 lists (not used in training) predicted with the shipped default parameters."""
    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.model import Predictor
    from shiftcheck.structure.mapping import map_sequence
    from shiftcheck.predict.calibrate import build_dataset

    out = ["", "### Held out entirely: gb3 (shipped default parameters)", "",
           "BMRB 15283 is a solid-state (MAS) list of GB3; BMRB 2575 is the protein G B2 domain "
           "(1H only), a few positions differ from the GB3 model 2OED. Neither is in the training set.", "",
           "| list | " + " | ".join(NUCLEI) + " |", "|---" * (len(NUCLEI) + 1) + "|"]
    pred = Predictor()
    base = rp.realdata_dir()
    for sh, mo in rp.EXTERNAL:
        sl = rp.read_shifts_any(str(base / sh))
        ens = read_models([str(base / mo)])[0]
        d = build_dataset(sl, ens, map_sequence(sl, ens).seq_to_res, sh, sh)
        p = pred.predict(ens, sl.conditions, features=d.features)
        cells = []
        for nuc in NUCLEI:
            s = np.flatnonzero((p.nucleus == nuc) & np.isfinite(d.measured))
            if s.size < 3:
                cells.append("–")
                continue
            r = d.measured[s] - p.values[0, s]
            r = r - np.median(r)
            cells.append(f"{np.sqrt(np.mean(r ** 2)):.3f} ({s.size})")
        out.append(f"| {sh} + {mo} | " + " | ".join(cells) + " |")
    return out


def _write_section(path: Path, section: str) -> None:
    text = path.read_text() if path.exists() else "# Validation\n\n"
    if BEGIN in text and END in text:
        a, b = text.index(BEGIN), text.index(END) + len(END)
        text = text[:a] + section.rstrip("\n") + text[b:]
    else:
        text = text.rstrip("\n") + "\n\n" + section
    tmp = path.with_suffix(".md.tmp")
    tmp.write_text(text)
    os.replace(tmp, path)


if __name__ == "__main__":
    sys.exit(main())
