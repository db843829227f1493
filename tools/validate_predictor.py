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
import predictor_tables as tables  # noqa: E402
import realdata_pairs as rp  # noqa: E402

from shiftcheck.predict.calibrate import collect, lambda_grid, load_settings  # noqa: E402
from shiftcheck.predict.crossval import GroupedRows, block_factors_for, choose_lambda, huber_for, pooled_error  # noqa: E402

NUCLEI = ("H", "HA", "CA", "CB", "C", "N", "HMe", "Haro")
BACKBONE = ("H", "HA", "CA", "CB", "C", "N")
GOALS = {"H": 0.45, "HA": 0.25, "CA": 0.95, "CB": 1.05, "C": 1.0, "N": 2.4}
_BASE = ("offset", "conformation", "neighbour", "ring_current", "hbond", "anisotropy", "burial")
STEPS = [("random coil (table + corrections)", ()),
         ("+ residue-type offsets", ("offset",)),
         ("+ backbone conformation", ("offset", "conformation")),
         ("+ neighbour residue types (CB, N)", ("offset", "conformation", "neighbour")),
         ("+ ring currents", ("offset", "conformation", "neighbour", "ring_current")),
         ("+ hydrogen bonds", ("offset", "conformation", "neighbour", "ring_current", "hbond")),
         ("+ peptide anisotropy",
          ("offset", "conformation", "neighbour", "ring_current", "hbond", "anisotropy")),
         ("+ burial (CB, C, N, HMe, Haro)", _BASE),
         ("+ χ1/χ2 per side-chain class (CA, CB, N)", _BASE + ("sidechain",)),
         ("+ fitted H-bond basis (H)", _BASE + ("sidechain", "hbond_basis")),
         ("+ electric field (CA, CB, C, N; full model)", _BASE + ("sidechain", "hbond_basis", "efield"))]
BEGIN, END = "<!-- BEGIN predictor -->", "<!-- END predictor -->"


def loo(ds, nuc, groups, rm, settings, lam=None, train=None):
    """{dataset index: (measured, pred model 1, pred ensemble mean)}, each protein predicted by a
    fit on all other proteins (``train``: only these shift lists are ever fitted, and every
    dataset outside them is predicted from that one fit, the fixed split)."""
    it = int(settings["referencing_iterations"]["value"])
    orders = settings["conformation"]
    screen = (settings.get("target_screen") or {}).get("max_abs_secondary", {})
    out = {}
    if groups:
        names, X, y, d, w = collect(ds, nuc, groups, rm, orders, burial=settings.get("burial"),
                                    screen=settings.get("target_screen"))
        gl = sorted({x.group for x in ds})
        go = np.array([gl.index(ds[k].group) for k in d])
        rows = GroupedRows(names, X, y, d, w, go, block_factors_for(settings, nuc), huber_for(settings, nuc))
        if train is not None:
            rows = rows.subset(np.isin(go, [gl.index(g) for g in train]))
        if lam is None:     # λ by the squared-loss CV, as shiftcheck calibrate chooses it
            lam, _ = choose_lambda(rows.with_huber(None), lambda_grid(settings, nuc), it)
        fits = {}
    for i, dset in enumerate(ds):
        if train is not None and dset.group in train:
            continue
        sf = dset.features
        sel = np.flatnonzero(sf.targets.nucleus == nuc)
        meas = dset.measured[sel]
        rc = sf.rc[:, sel]
        ok = np.isfinite(meas) & (np.abs(meas - rc.mean(axis=0)) <= float(screen.get(nuc, np.inf)))
        p1, pm = rc[0].copy(), rc.mean(axis=0)
        if groups:
            key = None if train is not None else dset.group
            if key not in fits:
                fits[key] = rows.fit(lam, it, exclude_group=None if key is None else gl.index(key))[0]
            beta = fits[key]
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
             "(rewrites only this section; features are cached per pair in `.cache/`). The shipped "
             "parameters come from `SHIFTCHECK_REALDATA=../shared/realdata python tools/calibrate_realdata.py "
             "-o shiftcheck/data/params_default.json` (tests/test_calibrate_realdata.py checks that it "
             "reproduces the file).", "",
             f"Data: {len({d.group for d in ds})} proteins (shift lists), {len(ds)} (shift list, structure) pairs "
             "from tools/realdata_pairs.tsv (gb3 kept aside, see below). For each protein the "
             "coefficients are fitted by the calibrate code on all other proteins, then the left-out "
             "protein's structures are predicted. Before each RMSD the per-protein, per-nucleus "
             "referencing offset (median of measured − predicted) is subtracted; `|off|` is the "
             "median over proteins of its magnitude. Pooled over proteins; each protein counts once "
             "(a list paired with an NMR ensemble and an X-ray structure gives each weight 1/2; "
             "the NMR ensemble by its ensemble-mean prediction). The ridge strength λ per nucleus class is "
             "the one the shipped fit chose by leave-one-protein-out CV on the grid of calibration.json "
             "(for the fixed split it is chosen again by CV within the 17 training proteins).", "",
             "Structures used for fitting (see the comments in tools/realdata_pairs.tsv): the first 13 "
             "proteins with their NMR ensemble and X-ray structure (hsr50: two single models; why both: "
             "table 'Which structures to fit on'); the "
             "nef_set proteins with the deposited PDB ensemble where the folder has one (2jr2, 2k2e, "
             "2kcu, 2png), else the 5-model re-calculation distributed as the folder's .cif.gz file ( 2k07, 2kko, 2ko1, 2loy, "
             "2luz), except 6nbn, whose AMBER re-calculation is the only model with its disulfides "
             "formed. nef_set/2juw and nef_set/2kpu are the entries of so_2176 and yppr and are not "
             "counted twice. Homodimers (2jr2, 2kko, 2ko1): chain A is scored, and its through-space terms "
             "(ring currents, hydrogen bonds, peptide anisotropy, burial, electric field) also see chain B "
             "(partner chains as surroundings; see the table of that name). The BMRB files of 2k07 and 2ko1 are bare saveframes; the tools read "
             "them by prepending a `data_` line in memory. Measured shifts further from random coil "
             "than the `target_screen` bounds of calibration.json are left out of fits and figures "
             f"as deposition errors ({_screened(ds, settings)}).", "",
             *_headline(ds, settings),
             "### (a, b) Random coil, then each term added in turn: RMSD in ppm (default ring model)", ""]
    default_rm = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())[
        "default_ring_model"]["value"]
    hdr = "| model | " + " | ".join(NUCLEI) + " |"
    lines += [hdr, "|---" * (len(NUCLEI) + 1) + "|"]
    results = {}
    for label, step in STEPS:
        row = []
        for nuc in NUCLEI:
            res = loo(ds, nuc, groups_for(nuc, step, settings), default_rm, settings, lam=LAMS[default_rm].get(nuc))
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
            res = (loo(ds, nuc, settings["groups"][nuc], rm, settings, lam=LAMS[rm].get(nuc))
                   if rm != default_rm else results[(full, nuc)][0])
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
    lines += _fixed_split(ds, settings, default_rm, results, full)
    lines += _ablation(ds, settings, default_rm)
    lines += _partners(ds, settings, default_rm)
    lines += tables.fit_structures(ds, settings, default_rm, BACKBONE)
    lines += tables.tails(ds, settings, default_rm, loo, LAMS, NUCLEI)
    lines += tables.unmet(ds, results, full, GOALS, BACKBONE)
    lines += tables.isotope(ds, results, full, settings)
    lines += _external(settings) + ["", f"Generated in {time.time() - t0:.0f} s.", END]
    _write_section(HERE.parent / "docs/validation.md", "\n".join(lines) + "\n")
    (HERE / "validation_margins.json").write_text(json.dumps(
        {"source": "random-coil RMSD minus full-model RMSD, leave-one-protein-out, tools/validate_predictor.py",
         "margins_ppm": margins}, indent=1) + "\n")
    print("\n".join(lines))
    return 0


LAMS = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())["ridge_lambda"]["by_ring_model"]
BEFORE = {"source": "docs/validation.md before issue 11 (13 proteins, fixed ridge)",
          "H": 0.4825, "HA": 0.2629, "CA": 1.0826, "CB": 1.1964, "C": 1.1264, "N": 2.7563}


def _screened(ds, settings):
    screen = settings.get("target_screen", {}).get("max_abs_secondary", {})
    n = {}
    for d in ds:
        y = d.measured - d.features.rc.mean(axis=0)
        for nuc, b in screen.items():
            m = (d.features.targets.nucleus == nuc) & np.isfinite(y) & (np.abs(y) > b)
            n[nuc] = n.get(nuc, 0) + int(m.sum())
    return "left out: " + ", ".join(f"{k} {v}" for k, v in n.items() if v) if any(n.values()) else "none left out"


def _headline(ds, settings):
    """Before/after leave-one-protein-out RMSD and the goals (from the shipped parameter file)."""
    p = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())
    after = p["loo_rmsd"]["values"]
    lines = ["### Leave-one-protein-out RMSD (ppm): before and after issue 11", "",
             "| | " + " | ".join(BACKBONE) + " |", "|---" * (len(BACKBONE) + 1) + "|",
             "| before: 13 proteins, fixed ridge λ | " + " | ".join(f"{BEFORE[n]:.3f}" for n in BACKBONE) + " |",
             f"| after: {len({d.group for d in ds})} proteins, shipped model | " + " | ".join(f"{after[n]:.3f}" for n in BACKBONE) + " |",
             "| goal | " + " | ".join(f"{GOALS[n]}" for n in BACKBONE) + " |",
             "| gap (after − goal) | " + " | ".join(f"{after[n] - GOALS[n]:+.3f}" for n in BACKBONE) + " |", "",
             "The 'after' row is the `loo_rmsd` block of params_default.json (ridge λ chosen by CV on all 23, "
             "then leave-one-protein-out at that λ). The two rows are not on the same proteins: the ten "
             "nef_set proteins are harder on average (re-calculated rather than deposited structures, "
             "dimers fitted as one chain, larger referencing offsets), so the 13-protein figures cannot be "
             "compared directly; the ablation table below compares terms on the same 23. Gap causes, "
             "per nucleus: see 'Unmet goals' below.", ""]
    return lines


def _fixed_split(ds, settings, rm, results, full):
    """Fit on the 17 non-held-out proteins only, predict the 6 held out (tools/realdata_split.json)."""
    split = json.loads((HERE / "realdata_split.json").read_text())
    held = set(split["held_out"])
    base = str(rp.realdata_dir())
    held_abs = {str(Path(base) / h) for h in held}
    train = sorted({d.group for d in ds} - held_abs)
    lines = ["", "### Fixed split: fitted on 17 proteins, tested on 6 never used for fitting (RMSD, ppm)", "",
             "Held out (tools/realdata_split.json, fixed for all versions): " + ", ".join(sorted(held)) + ". "
             "One fit on the other 17 proteins (λ by leave-one-protein-out CV within them), referencing "
             "offset removed per protein.", "",
             "| | " + " | ".join(NUCLEI) + " |", "|---" * (len(NUCLEI) + 1) + "|"]
    row, rc_row = [], []
    for nuc in NUCLEI:
        res = loo(ds, nuc, settings["groups"][nuc], rm, settings, train=set(train))
        row.append(f"{stats(res, ds, None)['rmsd']:.3f}")
        rc = loo(ds, nuc, (), rm, settings, train=set(train))
        rc_row.append(f"{stats(rc, ds, None)['rmsd']:.3f}")
    lines += ["| random coil | " + " | ".join(rc_row) + " |", "| full model | " + " | ".join(row) + " |"]
    return lines


def _ablation(ds, settings, rm):
    import ablation

    lines = ["", "### Ablation: each term's effect on held-out proteins (leave-one-protein-out, ppm)", "",
             "First row: RMSD of the shipped model; other rows: RMSD of the variant minus that "
             "(negative = the variant is better on held-out proteins). '−' rows remove a term the shipped "
             "model has; '+' rows add a candidate that was tried and not kept (kept only where it lowered "
             "a class's RMSD by ≥ 0.005 ppm when it was tried). Each variant is fitted at the shipped λ of "
             "its class (chosen by CV), except the last row. HMe: methyl H, Haro: aromatic H "
             "(no conformation terms; rows that touch only backbone classes leave them unchanged). "
             "(tools/ablation.py)", ""]
    p = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())
    return lines + ablation.table(ablation.ablation(ds, settings, rm, p["ridge_lambda"]["by_nucleus"], NUCLEI),
                                  NUCLEI)


def _partners(ds, settings, rm):
    """Leave-one-protein-out with and without the partner chains of the homodimer pairs (the
    pairs that name a chain): pooled RMSD per class and each homodimer's own RMSD."""
    dim = [p for p in rp.pairs() if p.chain]
    if not dim:
        return []
    alone = rp.load(dim, partners="ignore")
    labels = {p.label for p in dim}
    variants = {"partners used (shipped)": ds,
                "partners ignored": [d for d in ds if d.label not in labels] + alone}
    it = int(settings["referencing_iterations"]["value"])
    lams = json.loads((HERE.parent / "shiftcheck/data/params_default.json").read_text())["ridge_lambda"]["by_nucleus"]
    short = {p.shifts: p.shifts.split("nef_set/")[-1].split("/")[0] for p in dim}
    pooled, own = {}, {}
    for name, data in variants.items():
        gid = {g: i for i, g in enumerate(sorted({d.group for d in data}))}
        for nuc in BACKBONE:
            names, X, y, d, w = collect(data, nuc, settings["groups"][nuc], rm, settings["conformation"],
                                        burial=settings.get("burial"), screen=settings.get("target_screen"),
                                        models="mean")
            rows = GroupedRows(names, X, y, d, w, np.array([gid[data[k].group] for k in d]),
                               block_factors_for(settings, nuc), huber_for(settings, nuc))
            pred = rows.loo(float(lams[nuc]), it)
            pooled[(name, nuc)] = pooled_error(rows.y, pred, rows.w, rows.group_of)
            for g, lab in short.items():
                m = rows.group_of == gid[g]
                r = y[m] - pred[m]
                own[(name, lab, nuc)] = float(np.sqrt(np.mean((r - np.median(r)) ** 2))) if m.any() else np.nan
    lines = ["", "### Partner chains as surroundings (homodimers, leave-one-protein-out RMSD, ppm)", "",
             "The homodimer pairs (" + ", ".join(sorted(short.values())) + ", chain A scored) read with their "
             "partner chain as surroundings of the through-space terms (ring currents, hydrogen bonds, peptide "
             "anisotropy, burial, electric field; the shipped default for files that are not crystal structures) "
             "and with it ignored; every other pair is the same in both. The fit is redone in each case at the "
             "shipped λ.", "",
             "| variant | scope | " + " | ".join(BACKBONE) + " |", "|---|---|" + "---|" * len(BACKBONE)]
    for name in variants:
        lines.append(f"| {name} | all 23 proteins | " + " | ".join(f"{pooled[(name, n)]:.4f}" for n in BACKBONE) + " |")
    for lab in sorted(short.values()):
        for name in variants:
            lines.append(f"| {name} | {lab} | " + " | ".join(f"{own[(name, lab, n)]:.3f}" for n in BACKBONE) + " |")
    return lines


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
