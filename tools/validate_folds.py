"""Fold selection on plausible decoys; writes the fold-selection section of docs/validation.md.

Usage (after ``make decoys`` / tools/plausible_decoys.py has filled .cache/decoys/):
    SHIFTCHECK_REALDATA=../shared/realdata python tools/validate_folds.py [--decoys .cache/decoys]

Per training protein: the minimised native and its minimised, geometry-checked decoys (torsion
decoys, the perturbation ladder and threaded wrong folds) are scored together against the
protein's shift list (shiftcheck.pipeline.score_models, 200 bootstrap replicates, no ensemble
means). Reported: the minimised native's rank, and Spearman's rho between the score (lower =
better) and 1 - TM-score to the native (Zhang & Skolnick 2004; tools/tmscore.py), so a positive
rho means that models further from the native fold score worse: over all models, and per decoy
family (the native plus that family's models), so that no family alone carries the figure; and
whether every threaded wrong fold scores worse than every other model. Per nucleus class, the
contribution to the combined score (mean robust loss of the class's atoms over all compared atoms)
is written to ``<decoys>/fold_details.json`` for diagnosis. The text goes between the
``<!-- BEGIN folds -->`` / ``<!-- END folds -->`` markers (appended if absent).
Caution: the predictor's parameters were fitted on these proteins' deposited structures.
"""
from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

import numpy as np
from scipy.stats import spearmanr

sys.path.insert(0, str(Path(__file__).resolve().parent))
from plausible_decoys import TRAINING, _ca, _read, load_native  # noqa: E402
from ordered_core import ensemble_spread, ordered_residues  # noqa: E402
from tmscore import gdt_ts, lddt_ca, tm_score  # noqa: E402
from validate_scoring import _table, write_section  # noqa: E402

__all__ = ["fold_run", "render", "main"]


FAMILIES = ("ladder", "torsion", "thread")


def _rho(scores, tm, sel) -> float:
    sel = np.asarray(sel)
    if sel.sum() < 3:
        return float("nan")
    return float(spearmanr(scores[sel], 1.0 - tm[sel]).statistic)


def fold_run(root: Path, decoys: Path, folder: str, n_boot: int = 200) -> dict | None:
    """Score native_min + decoys of one protein; None when the cache has no manifest."""
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.pipeline import score_models as score
    from shiftcheck.score._constants import scoring_constants
    from shiftcheck.score.metrics import huber_q
    from shiftcheck.structure.quality import result_geometry

    man_path = decoys / folder / "manifest.json"
    if not man_path.exists():
        return None
    man = json.loads(man_path.read_text())
    shift_file = TRAINING[folder][0]
    native = load_native(root, folder)
    recs = man["models"]
    ens = [_read(decoys / folder / r["file"], native, int(r.get("first_residue", 0))) for r in recs]
    res = score(read_shifts(root / folder / shift_file), ens, n_boot=n_boot, include_mean=False)
    names = list(res.comparison.names)
    sc = dict(zip(names, res.ranking.score))
    rk = dict(zip(names, res.ranking.rank))
    scores = np.array([sc[r["file"]] for r in recs])
    tm = np.array([r["tm_score"] for r in recs])
    kinds = np.array([r["kind"] for r in recs])
    ca0 = _ca(native)
    lddt, gdt = [], []
    n_nat = int(np.isfinite(ca0).all(1).sum())
    for r, e in zip(recs, ens):
        full = np.full_like(ca0, np.nan)
        f0 = int(r.get("first_residue", 0))
        full[f0:f0 + e.n_residues] = _ca(e)
        lddt.append(lddt_ca(full, ca0))
        both = np.isfinite(full).all(1) & np.isfinite(ca0).all(1)
        gdt.append(gdt_ts(full[both], ca0[both], length=n_nat))
    lddt, gdt = np.array(lddt), np.array(gdt)
    spread, n_spread = ensemble_spread(root, folder, shift_file, native)
    core, _ = ordered_residues(root, folder, shift_file, native)
    core &= np.isfinite(ca0).all(1)
    tm_core = []
    for r, e in zip(recs, ens):
        full = np.full_like(ca0, np.nan)
        f0 = int(r.get("first_residue", 0))
        full[f0:f0 + e.n_residues] = _ca(e)
        sel = core & np.isfinite(full).all(1)
        tm_core.append(tm_score(full[sel], ca0[sel], length=int(core.sum())))
    tm_core = np.array(tm_core)
    # per-nucleus contributions: sum of the class's robust losses / number of compared atoms
    z = res.z
    q = np.where(np.isfinite(z), huber_q(np.nan_to_num(z), float(scoring_constants()["huber_h"]["value"])), np.nan)
    nuc = np.asarray(res.comparison.nucleus).astype(str)
    n_valid = np.isfinite(q).sum(axis=1)
    contrib = {c: (np.nansum(q[:, nuc == c], axis=1) / n_valid) for c in sorted(set(nuc))}
    row_of = {n: i for i, n in enumerate(names)}
    details = [{"file": r["file"], "kind": r["kind"], "tm": r["tm_score"], "lddt": round(float(lddt[i]), 4),
                "gdt": round(float(gdt[i]), 4),
                "score": sc[r["file"]],
                "contrib": {c: round(float(v[row_of[r["file"]]]), 5) for c, v in contrib.items()},
                "n_atoms": {c: int(np.isfinite(q[row_of[r["file"]], nuc == c]).sum()) for c in contrib}}
               for i, r in enumerate(recs)]
    geo = result_geometry(res)
    nat = kinds == "native_min"
    dec = [r for r in recs if r["kind"] != "native_min"]
    thr = kinds == "thread"
    best = int(np.argmin(np.where(nat, np.inf, scores)))
    out = {"protein": folder.split("/")[-1], "folder": folder, "native": native_label(folder),
           "n_torsion": int((kinds == "torsion").sum()), "n_ladder": int((kinds == "ladder").sum()),
           "n_thread": int(thr.sum()), "tm_native_min": recs[0]["tm_score"],
           "tm_range": f"{min(r['tm_score'] for r in dec):.2f}-{max(r['tm_score'] for r in dec):.2f}",
           "native_rank": int(rk["native_min.pdb"]), "n_models": len(recs),
           "native_in_group": "yes" if dict(zip(names, res.ranking.best_group))["native_min.pdb"] else "no",
           "group_size": int(np.sum(res.ranking.best_group)),
           "group_min_tm": float(min(tm[i] for i, r in enumerate(recs)
                                     if dict(zip(names, res.ranking.best_group))[r["file"]])),
           "native_score": sc["native_min.pdb"], "best_decoy": float(scores[best]),
           "best_decoy_name": recs[best]["file"], "best_decoy_tm": float(tm[best]),
           "best_thread": float(np.min(scores[thr])) if thr.any() else float("nan"),
           "thread_worst": ("yes" if thr.any() and scores[thr].min() > scores[~thr].max() else
                            ("no" if thr.any() else "-")),
           "rho": _rho(scores, tm, np.ones(len(recs), bool)),
           "rho_near": _rho(scores, tm, ~thr),
           "rho_lddt": _rho(scores, lddt, np.ones(len(recs), bool)),
           "rho_lddt_near": _rho(scores, lddt, ~thr),
           "rho_gdt": _rho(scores, gdt, np.ones(len(recs), bool)), "rho_gdt_near": _rho(scores, gdt, ~thr),
           "ens_tm": spread, "ens_models": n_spread,
           "n_within": int(np.sum(~nat & (tm >= spread))) if np.isfinite(spread) else 0,
           "rank_outside": (int(1 + np.sum((scores < sc["native_min.pdb"]) & ~nat & (tm < spread)))
                            if np.isfinite(spread) else int(rk["native_min.pdb"])),
           "rho_core": _rho(scores, tm_core, np.ones(len(recs), bool)),
           "rho_core_near": _rho(scores, tm_core, ~thr), "core_fraction": float(core.mean()),
           "max_clash": max(g["clashes_per_1000"] for g in geo.values()),
           "max_severe": max(g["severe_pairs"] for g in geo.values()),
           "n_warned": sum(bool(g["bad"]) for g in geo.values()),
           "rejected": len(man.get("rejected", [])), "seconds": man.get("seconds", 0.0),
           "details": details}
    for fam in FAMILIES:
        out[f"rho_{fam}"] = _rho(scores, tm, nat | (kinds == fam))
    return out


def native_label(folder: str) -> str:
    """The native as the pairs file names it (a pattern for the archive's re-calculations)."""
    _, rel, chain = TRAINING[folder]
    return f"`{rel}`" + (f" ({chain})" if chain else "")


def _mean(rows, key) -> str:
    v = np.array([r[key] for r in rows], float)
    v = v[np.isfinite(v)]
    return f"{v.mean():.2f} (median {np.median(v):.2f}, min {v.min():.2f}, {v.size} proteins)" if v.size else "n/a"


def _core(rows) -> str:
    return f"{100 * np.mean([r['core_fraction'] for r in rows]):.0f} %"


def _spread_line(rows) -> str:
    """Summary of the NMR ensembles' own spread about the native and the native's rank against
    the decoys outside it."""
    have = [r for r in rows if r.get("ens_models", 0) > 0]
    if not have:
        return "* no NMR ensemble to measure the native's precision"
    ens = np.array([r["ens_tm"] for r in have])
    first = sum(r["rank_outside"] == 1 for r in rows)
    return (f"* diagnostic, the deposited NMR ensembles' spread about the native ({len(have)} proteins): "
            f"median TM of their models to the native {np.median(ens):.2f} (range {ens.min():.2f}-"
            f"{ens.max():.2f}); {sum(r['n_within'] for r in have)} decoys are at least that close to "
            f"their native, i.e. as close as the deposited models are. Counting only the decoys "
            f"further from the native than that (every decoy where there is no ensemble), the native "
            f"ranks first for {first} of {len(rows)} proteins (not the acceptance figure, which counts "
            "every decoy)")


def diagnose(rows: list[dict]) -> list[str]:
    """Generated diagnosis: which decoys beat the native and through which nuclei, and how well
    each nucleus class's contribution alone follows 1 - TM (per family, mean over proteins)."""
    L = ["### Diagnosis (generated)", ""]
    lost = [r for r in rows if r["native_rank"] != 1]
    if lost:
        L += ["Decoys scoring better than the minimised native, with the change of each nucleus "
              "class's contribution to score^2 (decoy - native; negative = the decoy agrees better "
              "with that class):", ""]
        for r in lost:
            det = {d["file"]: d for d in r["details"]}
            nat = det["native_min.pdb"]
            for d in sorted(r["details"], key=lambda d: d["score"]):
                if d["file"] == "native_min.pdb":
                    break
                dl = {c: d["contrib"][c] - nat["contrib"][c] for c in nat["contrib"]}
                parts = ", ".join(f"{c} {v:+.4f}" for c, v in sorted(dl.items(), key=lambda x: x[1]))
                L.append(f"* {r['protein']}: {d['file']} (TM {d['tm']:.2f}) {d['score']:.4f} vs native "
                         f"{nat['score']:.4f}; {parts}")
        L.append("")
    classes = sorted({c for r in rows for d in r["details"] for c in d["contrib"]})
    fams = [("ladder", ("native_min", "ladder")), ("torsion", ("native_min", "torsion")),
            ("no-thread", ("native_min", "ladder", "torsion")),
            ("all", ("native_min", "ladder", "torsion", "thread"))]
    L += ["Spearman rho of each nucleus class's contribution alone with 1 - TM (mean over proteins; "
          "the combined score's rho in the last column):", "",
          "| models | " + " | ".join(classes) + " | combined |", "|" + "---|" * (len(classes) + 2)]
    for name, kinds in fams:
        cells = []
        for c in classes + ["combined"]:
            vals = []
            for r in rows:
                ds = [d for d in r["details"] if d["kind"] in kinds and (c == "combined" or c in d["contrib"])]
                if len(ds) < 3:
                    continue
                x = np.array([d["score"] if c == "combined" else d["contrib"][c] for d in ds])
                t = np.array([1.0 - d["tm"] for d in ds])
                v = spearmanr(x, t).statistic
                if np.isfinite(v):
                    vals.append(v)
            cells.append(f"{np.mean(vals):.2f}" if vals else "n/a")
        L.append(f"| {name} | " + " | ".join(cells) + " |")
    return L


def render(rows: list[dict], missing: list[str], command: str, wall: float | None = None,
           diagnosis: list[str] | None = None, note: str = "") -> str:
    first = sum(r["native_rank"] == 1 for r in rows)
    total = sum(r["seconds"] for r in rows)
    gen = f"{total / 60:.0f} min of generation summed over proteins"
    if wall:
        gen += f", {wall / 60:.0f} min wall time" + (f" ({note})" if note else "")
    L = ["## Fold selection on plausible decoys", "",
         "Regenerate with `make decoys` (tools/plausible_decoys.py, fixed seeds; "
         f"{gen}) then `{command}` (tools/validate_folds.py).", "",
         "Proteins: the 23 training proteins. Native: the X-ray structure where the pairs file has one, "
         "otherwise the structure the predictor is fitted on (tools/realdata_pairs.tsv), its first "
         "model (chain A of the homodimers 2jr2, 2kko, 2ko1; 6nbn: the AMBER re-calculation, the "
         "only structure with its disulfides formed). Models per protein, all energy-minimised "
         "with OpenMM (Amber ff14SB, backbone-restrained) and kept only when shiftcheck's geometry "
         "rule (docs/outputs.md, Model geometry) does not flag them:", "",
         "* `native_min`: the native's heavy atoms minimised by the same protocol;",
         "* torsion decoys: loop residues moved to other backbone basins, or one segment rewritten "
         "to helix or strand;",
         "* perturbation ladder: Gaussian noise on every residue's phi and psi (sigma log-uniform "
         "0.3-12 degrees times sqrt(76 / residues)), one model per TM-score bin "
         "0.85-0.97, 0.70-0.85, 0.55-0.70, 0.40-0.55, 0.25-0.40 (fewest clashes first, up to 3 "
         "tries per bin), so the decoys span the TM range instead of two clusters;",
         "* threaded wrong folds: the sequence on another training protein's backbone (the native's "
         "side chains moved rigidly with each residue's N-CA-C frame, then minimised); donors at least as long as the native first, then donors of at "
         "least 60 % of its length with the native's unmatched terminal residues left out of the "
         "model (the largest proteins, e.g. sensory rhodopsin, have no longer donor). A partial "
         "model is scored on the atoms it has; its TM-score is normalised by the native's length, "
         "so the missing residues count zero.", "",
         "TM: TM-score to the native (Zhang & Skolnick 2004). rho: Spearman correlation of score "
         "with 1 - TM (positive = models further from the native score worse) over all models, "
         "over native + torsion + ladder (no threaded models), and per family (native + that "
         "family's models). lDDT (summary only): CA-only local distance difference test to the native (Mariani et "
         "al. 2013; tools/tmscore.py), superposition-free, so it measures local rather than global "
         "agreement; shown as a diagnostic, the goal is stated with TM; GDT_TS (summary only; Zemla 2003; "
         "tools/tmscore.py) likewise. Ensemble TM: median TM-score of the protein's deposited NMR "
         "models to the native (tools/ordered_core.py; the native itself left out; nan without an "
         "ensemble), the precision of the structure the shifts were assigned on; decoys within: "
         "decoys (any family) at least that close to the native. Best group: the models the paired bootstrap over residues cannot separate "
         "from the best one (docs/outputs.md). Thread worst: every threaded model scores worse than every other model. "
         "Geometry columns: the worst model's clashes per 1000 heavy atoms and pairs below 2 Å, "
         "models warned, candidates rejected by the geometry rule.", ""]
    L += _table(rows, [("protein", "protein", ""), ("native", "native", ""), ("n_torsion", "torsion", ""),
                       ("n_ladder", "ladder", ""), ("n_thread", "threaded", ""),
                       ("tm_range", "TM decoys", ""), ("native_rank", "native rank", ""),
                       ("n_models", "of", ""), ("native_in_group", "native in best group", ""),
                       ("group_size", "best group size", ""), ("group_min_tm", "lowest TM in group", ".2f"),
                       ("native_score", "native score", ".3f"),
                       ("best_decoy", "best decoy", ".3f"), ("best_decoy_tm", "its TM", ".2f"),
                       ("best_thread", "best threaded", ".3f"),
                       ("ens_tm", "ensemble TM", ".2f"), ("n_within", "decoys within", ""),
                       ("rho", "rho all", ".2f"), ("rho_near", "rho no-thread", ".2f"),
                       ("rho_ladder", "rho ladder", ".2f"), ("rho_torsion", "rho torsion", ".2f"),
                       ("thread_worst", "thread worst", ""),
                       ("max_clash", "max clashes/1000", ".1f"),
                       ("max_severe", "max < 2 Å", ""), ("n_warned", "warned", ""),
                       ("rejected", "rejected", "")])
    tw = sum(r["thread_worst"] == "yes" for r in rows)
    nt = sum(r["thread_worst"] != "-" for r in rows)
    ing = sum(r["native_in_group"] == "yes" for r in rows)
    L += ["", f"Native (minimised) ranked first for {first} of {len(rows)} proteins (goal: all); "
          f"in the best group for {ing} of {len(rows)}.", "",
          f"* mean rho over all models: {_mean(rows, 'rho')} (goal >= 0.9)",
          f"* mean rho without the threaded models: {_mean(rows, 'rho_near')}",
          f"* mean rho, ladder family: {_mean(rows, 'rho_ladder')}",
          f"* mean rho, torsion family: {_mean(rows, 'rho_torsion')}",
          f"* threaded wrong folds all worse than every other model: {tw} of {nt} proteins",
          f"* diagnostic, against a local similarity instead (CA lDDT, Mariani et al. 2013): mean rho "
          f"{_mean(rows, 'rho_lddt')} over all models, {_mean(rows, 'rho_lddt_near')} without the "
          "threaded ones",
          f"* diagnostic, TM-score over the ordered core only (residues with angular order parameters "
          f"S(phi), S(psi) >= 0.9 in the protein's NMR ensemble, Hyberts et al. 1992; tools/ordered_core.py; "
          f"every residue where there is no ensemble; on average {_core(rows)} of the chain), so that "
          f"disordered termini and loops do not set the TM-score: mean rho {_mean(rows, 'rho_core')} over "
          f"all models, {_mean(rows, 'rho_core_near')} without the threaded ones",
          f"* diagnostic, against GDT_TS instead (Zemla 2003, global distance test; tools/tmscore.py): "
          f"mean rho {_mean(rows, 'rho_gdt')} over all models, {_mean(rows, 'rho_gdt_near')} without "
          "the threaded ones",
          _spread_line(rows)]
    if missing:
        L += ["", "No decoys generated for: " + ", ".join(missing) + "."]
    L += [""] + diagnose(rows)
    if diagnosis:
        L += [""] + diagnosis
    L += ["", "Caution: the predictor's parameters were fitted on these proteins' deposited structures, "
          "so the native's agreement is in-sample; agreement with shifts supports a fold but does "
          "not prove it.", ""]
    return "\n".join(L)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="Fold selection on plausible decoys; update docs/validation.md")
    ap.add_argument("--realdata", default=os.environ.get("SHIFTCHECK_REALDATA", "../shared/realdata"))
    ap.add_argument("--decoys", default=str(Path(__file__).resolve().parents[1] / ".cache" / "decoys"))
    ap.add_argument("--doc", default=str(Path(__file__).resolve().parents[1] / "docs" / "validation.md"))
    ap.add_argument("--only", nargs="*", default=None)
    ap.add_argument("--reuse", action="store_true",
                    help="reuse a protein's stored result (<decoys>/<folder>/fold_result.json) when it is "
                         "newer than its manifest and than this script and the package (for runs that "
                         "add proteins one at a time)")
    ap.add_argument("--diagnosis", default=str(Path(__file__).resolve().parent / "fold_diagnosis.md"),
                    help="hand-written diagnosis paragraph appended to the section (if the file exists)")
    a = ap.parse_args(argv)
    rows, missing = [], []
    newest_code = max(f.stat().st_mtime for f in [Path(__file__), Path(__file__).parent / "tmscore.py",
                                                    *(Path(__file__).parents[1] / "shiftcheck").rglob("*.*")]
                      if f.suffix in (".py", ".json"))
    for folder in a.only or list(TRAINING):
        stored = Path(a.decoys) / folder / "fold_result.json"
        man = Path(a.decoys) / folder / "manifest.json"
        if a.reuse and stored.exists() and man.exists() and \
                stored.stat().st_mtime > max(man.stat().st_mtime, newest_code):
            r = json.loads(stored.read_text())
        else:
            r = fold_run(Path(a.realdata), Path(a.decoys), folder)
            if r is not None:
                stored.write_text(json.dumps(r, default=float) + "\n")
        if r is None:
            missing.append(folder)
            continue
        r["native"] = native_label(folder)
        rows.append(r)
        print(f"{folder}: rank {r['native_rank']}/{r['n_models']} rho {r['rho']:.2f} "
              f"(no-thread {r['rho_near']:.2f}, ladder {r['rho_ladder']:.2f}, torsion {r['rho_torsion']:.2f}, "
              f"thread worst {r['thread_worst']})", file=sys.stderr, flush=True)
    if not rows:
        print("no decoys found: run `make decoys` first", file=sys.stderr)
        return 2
    (Path(a.decoys) / "fold_details.json").write_text(json.dumps(rows, indent=1, default=float) + "\n")
    wall, note = None, ""
    summ = Path(a.decoys) / "summary.json"
    if summ.exists():
        runs = json.loads(summ.read_text()).get("runs", [])
        wall = sum(r["wall_seconds"] for r in runs) or None
        note = "; ".join(r["note"] for r in runs if r.get("note"))
    diag = Path(a.diagnosis)
    text = render(rows, missing, "SHIFTCHECK_REALDATA=../shared/realdata python tools/validate_folds.py",
                  wall, diag.read_text().strip().splitlines() if diag.exists() else None, note)
    write_section(Path(a.doc), text, name="folds")
    print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
