"""Validate the scorer on public data; writes the scoring section of docs/validation.md.

Usage (one command, about 5-10 minutes on 2 cores):
    SHIFTCHECK_REALDATA=/work/shared/realdata python tools/validate_scoring.py [--quick]

Three parts, each a table between the ``<!-- BEGIN scoring -->`` / ``<!-- END scoring -->``
markers of docs/validation.md (the rest of the file is left alone):
1. (only with --raw-decoys) native + unminimised torsion decoys (tools/make_decoys.py); fold
   selection proper is tools/validate_folds.py on minimised, geometry-checked decoys.
2. X-ray and NMR models of the same protein scored together.
3. Injected errors into real lists: +2.0 ppm 13C, +0.3 ppm 1H, CA/CB swap in one residue, one
   residue's shifts moved onto another; offset recovery, recall of the injected atoms
   (flagged "every"), false flags (new "every" flags elsewhere).
Caution: the shipped predictor parameters were fitted on these same proteins, so the numbers
are in-sample for the predictor.
"""
from __future__ import annotations

import argparse
import dataclasses
import os
import sys
from pathlib import Path

import numpy as np
from scipy.stats import spearmanr

sys.path.insert(0, str(Path(__file__).resolve().parent))

__all__ = ["PROTEINS", "inject_errors", "injected_error_run", "decoy_run", "xray_nmr_run", "main"]

# folder, shift file, X-ray (or single) model, NMR ensemble (or None)
PROTEINS = [
    ("ubiquitin", "bmr17769.str", "1ubq.pdb", "1D3Z.pdb"),
    ("ci2", "bmrb4974.str", "1YPA.pdb", "3CI2.pdb"),
    ("engrailed_hd", "bmr15536.str", "1ENH.pdb", "2JWT.pdb"),
    ("yppr", "16570_v3.str", "3lyw.pdb", "2kpu.pdb"),
    ("hr3102a", "2krk_shifts.str", "3KW6.pdb", "2KRK.pdb"),
    ("hr4435b", "2l1p_shifts.str", "3NZL.pdb", "2L1P.pdb"),
    ("hr4527e", "2l33_shifts.str", "3P1X.pdb", "2L33.pdb"),
    ("so_2176", "2juw_shifts.str", "2QTI.pdb", "2JUW.pdb"),
    ("this", "2k5p_shifts.str", "3CWI.pdb", "2k5p.pdb"),
    ("tm1442", "1sbo_shifts.str", "1VC1.pdb", "1sbo.pdb"),
    ("xcr50", "1xpv_shifts.str", "1TTZ.pdb", "1xpv.pdb"),
    ("gb3", "bmr15283.str", "2OED.pdb", None),
    ("sensory_rhodopsin", "2ksy_shifts.str", "1H68.pdb", None),
]


def _load(root: Path, folder: str, shifts: str, model: str):
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts

    return read_shifts(root / folder / shifts), read_models([root / folder / model])[0]


def inject_errors(shifts, swap_seq: int, move_from: int, move_to: int, dc: float = 2.0, dh: float = 0.3):
    """A copy of ``shifts`` with the four injected errors.

    +dc on every 13C, +dh on every 1H; CA and CB of ``swap_seq`` exchanged; every shift of
    ``move_to`` replaced by the value of the same atom of ``move_from`` (a misassignment).
    Returns (new ShiftList, list of (seq_id, atom_id) injected point errors).
    """
    v = shifts.value.copy()
    iso = np.array([str(a)[:1] for a in shifts.atom_id])
    v[iso == "C"] += dc
    v[iso == "H"] += dh
    sid = np.asarray(shifts.seq_id)
    atom = shifts.atom_id.astype(str)
    ca = np.flatnonzero((sid == swap_seq) & (atom == "CA"))[0]
    cb = np.flatnonzero((sid == swap_seq) & (atom == "CB"))[0]
    v[ca], v[cb] = v[cb], v[ca]
    injected = [(swap_seq, "CA"), (swap_seq, "CB")]
    src = {a: val for a, val, s in zip(atom, v, sid) if s == move_from}
    for j in np.flatnonzero(sid == move_to):
        if atom[j] in src and atom[j] in ("H", "N", "CA", "CB", "C", "HA"):
            v[j] = src[atom[j]]
            injected.append((move_to, atom[j]))
    return dataclasses.replace(shifts, value=v), injected


def nudge_residue(shifts, base, avoid: set, seed: int, size: float = 2.5):
    """A copy of ``shifts`` with every backbone shift (H, N, CA, CB, C, HA) of one residue moved by
    ``size`` times its expected error, random signs: a misassignment below the atom threshold.
    Returns (new ShiftList, Seq_ID, atoms moved)."""
    rng = np.random.default_rng(seed + 1)
    comp = base.comparison
    bb = np.isin(comp.atom_id.astype(str), ["H", "N", "CA", "CB", "C", "HA"])
    sids = [int(x) for x in np.unique(comp.seq_id[bb]) if int(x) not in avoid
            and (bb & (comp.seq_id == x)).sum() >= 4]
    nres = int(rng.choice(sids))
    v = shifts.value.copy()
    sid, atom = np.asarray(shifts.seq_id), shifts.atom_id.astype(str)
    moved = 0
    for j in np.flatnonzero(bb & (comp.seq_id == nres)):
        k = np.flatnonzero((sid == nres) & (atom == str(comp.atom_id[j])))
        v[k] += size * float(base.sigma[j]) * rng.choice([-1.0, 1.0])
        moved += 1
    return dataclasses.replace(shifts, value=v), nres, moved


def _pick(shifts, comp, seed: int):
    """Deterministic choice of the swap residue and the move pair from the compared residues.

    Swap: a residue with CA and CB compared, not Gly/Ser/Thr (where CA and CB are close or
    reversed). Move: a Gly's shifts onto a non-Gly, non-Pro residue with CA compared.
    """
    rng = np.random.default_rng(seed)
    sid = comp.seq_id
    has = lambda s, a: np.any((sid == s) & (comp.atom_id == a))
    cand = [s for s in np.unique(sid) if has(s, "CA") and has(s, "CB")
            and str(comp.comp_id[sid == s][0]) not in ("GLY", "SER", "THR", "CYS")]
    gly = [s for s in np.unique(sid) if str(comp.comp_id[sid == s][0]) == "GLY" and has(s, "CA")]
    other = [s for s in np.unique(sid) if str(comp.comp_id[sid == s][0]) not in ("GLY", "PRO")
             and has(s, "CA") and has(s, "N")]
    swap = int(rng.choice(cand))
    move_from = int(rng.choice(gly))
    move_to = int(rng.choice([s for s in other if s != swap and abs(s - move_from) > 2]))
    return swap, move_from, move_to


def injected_error_run(root: Path, folder: str, shifts_file: str, model_files: list[str],
                       n_boot: int = 200, seed: int = 7) -> dict:
    """Score the real list and the list with injected errors against the folder's models."""
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.pipeline import score_models as score

    shifts = read_shifts(root / folder / shifts_file)
    ens = read_models([root / folder / m for m in model_files])
    base = score(shifts, ens, n_boot=n_boot, reref="auto")
    swap, mfrom, mto = _pick(shifts, base.comparison, seed)
    bad, injected = inject_errors(shifts, swap, mfrom, mto)
    res = score(bad, ens, n_boot=n_boot, reref="auto")
    comp = res.comparison
    every = {(int(s), str(a)) for s, a, k in zip(comp.seq_id, comp.atom_id, res.outliers.klass) if k == "every"}
    base_every = {(int(s), str(a)) for s, a, k in zip(base.comparison.seq_id, base.comparison.atom_id,
                                                       base.outliers.klass) if k == "every"}
    compared = {(int(s), str(a)) for s, a in zip(comp.seq_id, comp.atom_id)}
    inj = [x for x in injected if x in compared]
    hit = [x for x in inj if x in every]
    false = sorted(every - set(inj) - base_every)
    swap_res = any(x in every for x in inj if x[0] == swap)
    move_res = any(x in every for x in inj if x[0] == mto)
    rflag = {r["seq_id"]: r.get("residue_flag", "") for r in res.residue_summary}
    base_rflag = {r["seq_id"] for r in base.residue_summary if r.get("residue_flag") == "every"}
    res_move = rflag.get(mto) == "every"
    res_swap = rflag.get(swap) == "every"
    res_false = sorted(s for s, k in rflag.items() if k == "every" and s not in (mto, swap) and s not in base_rflag)
    nudged, nres, n_nudged = nudge_residue(shifts, base, {swap, mfrom, mto}, seed)
    nr = score(nudged, ens, n_boot=n_boot, reref="auto")
    nrow = next(r for r in nr.residue_summary if r["seq_id"] == nres)
    d = lambda iso: res.offsets[iso].value - base.offsets[iso].value
    return {"protein": folder, "models": ", ".join(model_files), "swap": swap, "move": f"{mfrom}->{mto}",
            "dC": d("C"), "dH": d("H"), "C_applied": res.offsets["C"].applied,
            "H_applied": res.offsets["H"].applied, "recall": len(hit) / max(1, len(inj)),
            "n_injected": len(inj), "swap_flagged": swap_res, "move_flagged": move_res,
            "false_flags": len(false), "base_flags": len(base_every),
            "res_swap": res_swap, "res_move": res_move, "res_false": len(res_false), "res_base": len(base_rflag),
            "nudge": f"{nres} ({n_nudged})", "nudge_atoms": len(nrow["flagged_every"]),
            "nudge_res": nrow.get("residue_flag") == "every"}


def decoy_run(root: Path, folder: str, shifts_file: str, native_file: str, n: int = 24,
              n_boot: int = 100, seed: int = 1) -> dict:
    """Native + decoys of one protein: native rank and Spearman rho(score, CA-RMSD)."""
    from make_decoys import make_decoys

    from shiftcheck.pipeline import score_models as score

    shifts, nat = _load(root, folder, shifts_file, native_file)
    nat = nat.select_models([0])
    dec, rmsd, kinds = make_decoys(nat, n=n, seed=seed)
    native = dataclasses.replace(nat, model_names=["native"], name="native")
    res = score(shifts, [native, dec], n_boot=n_boot, include_mean=False)
    names = res.comparison.names
    sc = dict(zip(names, res.ranking.score))
    rk = dict(zip(names, res.ranking.rank))
    dec_scores = np.array([sc[m] for m in dec.model_names])
    all_rmsd = np.concatenate([[0.0], rmsd])
    all_sc = np.concatenate([[sc["native"]], dec_scores])
    rho = spearmanr(all_sc, all_rmsd).statistic
    ter = np.array([k == "tertiary" for k in kinds])
    rho_t = spearmanr(dec_scores[ter], rmsd[ter]).statistic
    rho_s = spearmanr(dec_scores[~ter], rmsd[~ter]).statistic
    return {"protein": folder, "native": native_file, "n_decoys": len(rmsd), "rmsd_min": rmsd.min(),
            "rmsd_max": rmsd.max(), "native_rank": int(rk["native"]), "native_score": sc["native"],
            "best_decoy_score": dec_scores.min(), "rho": rho, "rho_tertiary": rho_t,
            "rho_secondary": rho_s, "n_atoms": len(res.comparison)}


def xray_nmr_run(root: Path, folder: str, shifts_file: str, xray: str, nmr: str, n_boot: int = 200) -> dict:
    """Score the X-ray structure (hydrogens built) beside the NMR ensemble (hydrogens read)."""
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.pipeline import score_models as score

    shifts = read_shifts(root / folder / shifts_file)
    ens = read_models([root / folder / xray, root / folder / nmr])
    res = score(shifts, ens, n_boot=n_boot)
    names = res.comparison.names
    sc = dict(zip(names, res.ranking.score))
    nmr_models = [n for n in names if n.startswith(nmr + "#") and not n.endswith("#mean")]
    nmr_sc = np.array([sc[n] for n in nmr_models])
    grp = {n for n, g in zip(names, res.ranking.best_group) if g}
    return {"protein": folder, "xray": xray, "nmr": nmr, "n_nmr": len(nmr_models),
            "xray_score": sc[xray], "xray_rank": int(dict(zip(names, res.ranking.rank))[xray]),
            "nmr_best": nmr_sc.min(), "nmr_median": float(np.median(nmr_sc)),
            "nmr_mean_entry": sc.get(nmr + "#mean", np.nan), "n_entries": len(names),
            "xray_in_best_group": xray in grp, "built_h_xray": int(np.sum(ens[0].built))}


def _table(rows: list[dict], cols: list[tuple[str, str, str]]) -> list[str]:
    out = ["| " + " | ".join(c[1] for c in cols) + " |", "|" + "---|" * len(cols)]
    for r in rows:
        out.append("| " + " | ".join(format(r[c[0]], c[2]) if c[2] else str(r[c[0]]) for c in cols) + " |")
    return out


def render(dec: list[dict], xn: list[dict], inj: list[dict], command: str) -> str:
    L = ["## Scoring: X-ray vs NMR, injected errors", "",
         f"Regenerate with `{command}` (tools/validate_scoring.py). The predictor's shipped "
         "parameters were fitted on these same proteins, so these are in-sample numbers for the "
         "predictor; the injected errors are new to it. Fold selection: see the section "
         "'Fold selection on plausible decoys' (tools/validate_folds.py).", ""]
    if dec:
        rho = np.array([d["rho"] for d in dec])
        first = sum(d["native_rank"] == 1 for d in dec)
        L += ["### Fold selection (native + torsion decoys)", "",
              "Decoys: tools/make_decoys.py (half 'tertiary': loop phi/psi only; half 'secondary': one "
              "segment rewritten to helix or strand; chain self-crossings rejected). Score: combined "
              "score of docs/outputs.md; rho: Spearman correlation of score with CA-RMSD to the "
              "native over native + decoys.", ""]
        L += _table(dec, [("protein", "protein", ""), ("native", "native", ""), ("n_decoys", "decoys", ""),
                          ("rmsd_min", "CA-RMSD min", ".1f"), ("rmsd_max", "max (Å)", ".1f"),
                          ("native_rank", "native rank", ""), ("native_score", "native score", ".2f"),
                          ("best_decoy_score", "best decoy", ".2f"), ("rho", "rho", ".2f"),
                          ("rho_tertiary", "rho tertiary", ".2f"), ("rho_secondary", "rho secondary", ".2f")])
        L += ["", f"Native ranked first for {first} of {len(dec)} proteins (goal: all); mean rho "
              f"{np.nanmean(rho):.2f} (goal >= 0.8).", ""]
    if xn:
        L += ["### X-ray and NMR models of the same protein", "",
              "Both scored in one run (X-ray: hydrogens built by shiftcheck; NMR: hydrogens as deposited). "
              "Lower is better; 'best group': cannot be told apart from the best entry.", ""]
        L += _table(xn, [("protein", "protein", ""), ("xray", "X-ray", ""), ("xray_score", "X-ray score", ".2f"),
                         ("xray_rank", "X-ray rank", ""), ("n_entries", "of", ""), ("nmr", "NMR", ""),
                         ("nmr_best", "NMR best", ".2f"), ("nmr_median", "NMR median", ".2f"),
                         ("nmr_mean_entry", "NMR #mean", ".2f"), ("xray_in_best_group", "X-ray in best group", "")])
        L += [""]
    if inj:
        L += ["### Injected errors", "",
              "Into the real list: +2.0 ppm on every 13C, +0.3 ppm on every 1H, CA/CB exchanged in one "
              "residue, one Gly's shifts copied onto another residue (H, N, CA, CB, C, HA). dC, dH: "
              "offset found minus offset of the untouched list (goal 2.0 +- 0.2, 0.3 +- 0.03). Recall: "
              "injected atoms flagged 'in every model'; false flags: new 'every' flags elsewhere. Residue rule "
              "(docs/outputs.md, residue flag): swapped / moved residue flagged as a whole in every model, new "
              "residue flags elsewhere, residue flags of the untouched list. Nudged residue (a separate run on the "
              "untouched list): every backbone shift of one residue moved by 2.5 times its expected error with "
              "random signs, a misassignment no single atom's 3σ flag should catch; atoms of it flagged in every "
              "model, and whether the residue rule flags it in every model.", ""]
        L += _table(inj, [("protein", "protein", ""), ("models", "models", ""), ("dC", "dC", ".3f"),
                          ("dH", "dH", ".3f"), ("swap", "swap res", ""), ("swap_flagged", "swap flagged", ""),
                          ("move", "moved", ""), ("move_flagged", "move flagged", ""),
                          ("recall", "recall", ".2f"), ("n_injected", "n injected", ""),
                          ("false_flags", "false flags", ""), ("base_flags", "flags before", ""),
                          ("res_swap", "residue rule: swap", ""), ("res_move", "move", ""),
                          ("res_false", "new elsewhere", ""), ("res_base", "before", ""),
                          ("nudge", "nudged res (atoms)", ""), ("nudge_atoms", "its atoms flagged", ""),
                          ("nudge_res", "residue rule", "")])
        n = len(inj)
        L += ["", f"Moved residue flagged: {sum(bool(r['move_flagged']) for r in inj)} of {n} by its atoms, "
                  f"{sum(bool(r['res_move']) for r in inj)} of {n} by the residue rule, "
                  f"{sum(bool(r['move_flagged']) or bool(r['res_move']) for r in inj)} of {n} by either. "
                  f"Mean recall of injected atoms {np.mean([r['recall'] for r in inj]):.2f}. Residues flagged in "
                  f"every model by the residue rule in the {n} untouched lists together: "
                  f"{sum(r['res_base'] for r in inj)}; new ones elsewhere after the injection: "
                  f"{sum(r['res_false'] for r in inj)}. Nudged residue flagged by the residue rule: "
                  f"{sum(bool(r['nudge_res']) for r in inj)} of {n}; by at least one of its atoms: "
                  f"{sum(r['nudge_atoms'] > 0 for r in inj)} of {n} (a 2.5σ move plus the residue's own "
                  f"residual can pass 3σ); by either: "
                  f"{sum(bool(r['nudge_res']) or r['nudge_atoms'] > 0 for r in inj)} of {n}."]
        L += [""]
    return "\n".join(L)


def write_section(doc: Path, text: str, name: str = "scoring") -> None:
    """Replace the text between the ``name`` markers (append the block if absent); atomic."""
    begin, end = f"<!-- BEGIN {name} -->", f"<!-- END {name} -->"
    old = doc.read_text() if doc.exists() else "# Validation\n"
    block = f"{begin}\n{text}\n{end}"
    if begin in old and end in old:
        new = old[:old.index(begin)] + block + old[old.index(end) + len(end):]
    else:
        new = old.rstrip("\n") + "\n\n" + block + "\n"
    tmp = doc.with_name(f".{doc.name}.tmp")
    tmp.write_text(new)
    os.replace(tmp, doc)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="Validate the scorer; update docs/validation.md")
    ap.add_argument("--realdata", default=os.environ.get("SHIFTCHECK_REALDATA", "../shared/realdata"))
    ap.add_argument("--doc", default=str(Path(__file__).resolve().parents[1] / "docs" / "validation.md"))
    ap.add_argument("--quick", action="store_true", help="three proteins only")
    ap.add_argument("--raw-decoys", action="store_true",
                    help="also the old table on unminimised torsion decoys (fold selection proper: "
                         "tools/validate_folds.py)")
    a = ap.parse_args(argv)
    root = Path(a.realdata)
    prots = PROTEINS[:3] if a.quick else PROTEINS
    dec, xn, inj = [], [], []
    for folder, sfile, xray, nmr in prots:
        print(f"{folder} ...", file=sys.stderr, flush=True)
        if a.raw_decoys:                 # the old unminimised torsion decoys (tools/make_decoys.py)
            dec.append(decoy_run(root, folder, sfile, xray))
        if nmr:
            xn.append(xray_nmr_run(root, folder, sfile, xray, nmr))
        inj.append(injected_error_run(root, folder, sfile, [xray] + ([nmr] if nmr else [])))
        print("  ", inj[-1], file=sys.stderr, flush=True)
    cmd = "SHIFTCHECK_REALDATA=../shared/realdata python tools/validate_scoring.py" + (" --quick" if a.quick else "")
    text = render(dec, xn, inj, cmd)
    write_section(Path(a.doc), text)
    print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
