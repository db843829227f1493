"""Fold selection on plausible decoys; writes the fold-selection section of docs/validation.md.

Usage (after ``make decoys`` / tools/plausible_decoys.py has filled .cache/decoys/):
    SHIFTCHECK_REALDATA=../shared/realdata python tools/validate_folds.py [--decoys .cache/decoys]

Per training protein: the minimised native and its minimised, geometry-checked decoys (torsion
decoys and threaded wrong folds) are scored together against the protein's shift list
(shiftcheck.score.scoring.score, 200 bootstrap replicates, no ensemble means). Reported: the
minimised native's rank, and Spearman's rho between the score (lower = better) and 1 - TM-score
to the deposited native (Zhang & Skolnick 2004; tools/tmscore.py), so a positive rho means that
models further from the native fold score worse. The text goes between the
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
from plausible_decoys import TRAINING, _read, heavy_only  # noqa: E402
from validate_scoring import _table, write_section  # noqa: E402

__all__ = ["fold_run", "render", "main"]


def fold_run(root: Path, decoys: Path, folder: str, n_boot: int = 200) -> dict | None:
    """Score native_min + decoys of one protein; None when the cache has no manifest."""
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.pipeline import score_models as score
    from shiftcheck.structure.quality import result_geometry

    man_path = decoys / folder / "manifest.json"
    if not man_path.exists():
        return None
    man = json.loads(man_path.read_text())
    shift_file, native_file = TRAINING[folder]
    native = heavy_only(read_models([root / folder / native_file], build_hydrogens=False)[0]
                        .select_models([0]))
    recs = man["models"]
    ens = [_read(decoys / folder / r["file"], native) for r in recs]
    res = score(read_shifts(root / folder / shift_file), ens, n_boot=n_boot, include_mean=False)
    sc = dict(zip(res.comparison.names, res.ranking.score))
    rk = dict(zip(res.comparison.names, res.ranking.rank))
    scores = np.array([sc[r["file"]] for r in recs])
    tm = np.array([r["tm_score"] for r in recs])
    kinds = [r["kind"] for r in recs]
    rho = float(spearmanr(scores, 1.0 - tm).statistic)
    geo = result_geometry(res)
    dec = [r for r in recs if r["kind"] != "native_min"]
    thr = [i for i, k in enumerate(kinds) if k == "thread"]
    tor = [i for i, k in enumerate(kinds) if k == "torsion"]
    return {"protein": folder, "native": native_file, "n_torsion": len(tor), "n_thread": len(thr),
            "tm_native_min": recs[0]["tm_score"],
            "tm_range": f"{min(r['tm_score'] for r in dec):.2f}-{max(r['tm_score'] for r in dec):.2f}",
            "native_rank": int(rk["native_min.pdb"]), "n_models": len(recs),
            "native_score": sc["native_min.pdb"], "best_decoy": float(np.min(scores[1:])),
            "best_thread": float(np.min(scores[thr])) if thr else float("nan"),
            "rho": rho,
            "max_clash": max(g["clashes_per_1000"] for g in geo.values()),
            "max_severe": max(g["severe_pairs"] for g in geo.values()),
            "n_warned": sum(bool(g["bad"]) for g in geo.values()),
            "rejected": len(man.get("rejected", [])), "seconds": man.get("seconds", 0.0)}


def render(rows: list[dict], missing: list[str], command: str) -> str:
    rho = np.array([r["rho"] for r in rows])
    first = sum(r["native_rank"] == 1 for r in rows)
    total = sum(r["seconds"] for r in rows)
    L = ["## Fold selection on plausible decoys", "",
         f"Regenerate with `make decoys` (tools/plausible_decoys.py, fixed seeds; {total / 60:.0f} min "
         f"of generation here) then `{command}` (tools/validate_folds.py).", "",
         "Models per protein: the deposited native's heavy atoms minimised by the decoy protocol "
         "(`native_min`), torsion decoys (loop residues moved to other backbone basins, or one "
         "segment rewritten to helix or strand) and wrong folds made by threading the sequence onto "
         "other proteins' backbones (side chains rebuilt by PDBFixer); all energy-minimised with "
         "OpenMM (Amber ff14SB, backbone-restrained) and kept only when shiftcheck's geometry rule "
         "(docs/outputs.md, Model geometry) does not flag them. TM: TM-score to the deposited native "
         "(Zhang & Skolnick 2004). rho: Spearman correlation of score with 1 - TM over all models "
         "of the protein (positive = models further from the native score worse). Geometry columns: "
         "the worst model's clashes per 1000 heavy atoms and pairs below 2 Å, models warned.", ""]
    L += _table(rows, [("protein", "protein", ""), ("native", "native", ""), ("n_torsion", "torsion", ""),
                       ("n_thread", "threaded", ""), ("tm_native_min", "TM native_min", ".3f"),
                       ("tm_range", "TM decoys", ""), ("native_rank", "native rank", ""),
                       ("n_models", "of", ""), ("native_score", "native score", ".3f"),
                       ("best_decoy", "best decoy", ".3f"), ("best_thread", "best threaded", ".3f"),
                       ("rho", "rho(score, 1-TM)", ".2f"), ("max_clash", "max clashes/1000", ".1f"),
                       ("max_severe", "max < 2 Å", ""), ("n_warned", "warned", ""),
                       ("rejected", "rejected", "")])
    L += ["", f"Native (minimised) ranked first for {first} of {len(rows)} proteins (goal: all); "
          f"mean rho(score, 1-TM) {np.nanmean(rho):.2f} (goal >= 0.9), median {np.nanmedian(rho):.2f}."]
    if missing:
        L += ["", "No decoys generated for: " + ", ".join(missing) + "."]
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
    a = ap.parse_args(argv)
    rows, missing = [], []
    for folder in a.only or list(TRAINING):
        r = fold_run(Path(a.realdata), Path(a.decoys), folder)
        if r is None:
            missing.append(folder)
            continue
        rows.append(r)
        print(f"{folder}: rank {r['native_rank']}/{r['n_models']} rho {r['rho']:.2f}", file=sys.stderr, flush=True)
    if not rows:
        print("no decoys found: run `make decoys` first", file=sys.stderr)
        return 2
    text = render(rows, missing, "SHIFTCHECK_REALDATA=../shared/realdata python tools/validate_folds.py")
    write_section(Path(a.doc), text, name="folds")
    print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
