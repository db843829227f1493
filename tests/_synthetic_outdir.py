"""SYNTHETIC score output directories for the report tests (invented numbers, tests only).

Builds summary.json, ranking.csv and residues.csv with the columns and keys the scoring stage
writes (issue 4's contract), for an invented 36-residue protein and invented model files. The
per-nucleus metrics in ranking.csv are computed from the residues written, so the files agree
with each other the way real output does.
"""
from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np

from shiftcheck.chem.nuclei import nucleus_class

SEQ = "MKVLAEGSFTPEAIRKWLDGHYVNQTAPFGEKLSDE"   # invented
THREE = {"A": "ALA", "C": "CYS", "D": "ASP", "E": "GLU", "F": "PHE", "G": "GLY", "H": "HIS",
         "I": "ILE", "K": "LYS", "L": "LEU", "M": "MET", "N": "ASN", "P": "PRO", "Q": "GLN",
         "R": "ARG", "S": "SER", "T": "THR", "V": "VAL", "W": "TRP", "Y": "TYR"}
BASE = {"H": 8.2, "HA": 4.3, "CA": 56.0, "CB": 35.0, "C": 175.5, "N": 120.0, "HMe": 1.0, "Haro": 7.1}
SIGMA = {"H": 0.45, "HA": 0.25, "CA": 1.0, "CB": 1.1, "C": 1.0, "N": 2.4, "HMe": 0.3, "Haro": 0.3}
NUCLEI = ("H", "HA", "CA", "CB", "C", "N")
OFFSETS = {"H": {"value": 0.031, "low": 0.012, "high": 0.05, "n": 180, "applied": False, "per_atom": {}},
           "C": {"value": 1.234, "low": 1.1, "high": 1.37, "n": 400, "applied": True,
                 "per_atom": {"CA": 1.2, "CB": 1.3, "C": 1.2}},
           "N": {"value": -0.412, "low": -0.9, "high": 0.1, "n": 70, "applied": False, "per_atom": {}}}


def _atoms(comp):
    names = ["H", "HA", "CA", "CB", "C", "N"]
    if comp == "PRO":
        names.remove("H")
    if comp == "GLY":
        names = [n for n in names if n not in ("HA", "CB")] + ["HA2", "HA3"]
    if comp == "ALA":
        names.append("HB1")
    if comp in ("PHE", "TYR"):
        names += ["HD1", "HE1"]
    return names


def make_outdir(path: Path, n_models: int = 4, drop_keys=(), skip_nucleus: str | None = None,
                n_flag_atoms: int = 3, seed: int = 7) -> Path:
    """Write a synthetic OUTDIR; returns its path. Model names: alpha.pdb, beta.cif#1..., beta.cif#mean."""
    rng = np.random.default_rng(seed)
    path.mkdir(parents=True, exist_ok=True)
    models = ["alpha.pdb"] + [f"beta.cif#{i}" for i in range(1, n_models - 1)] + ["beta.cif#mean"]
    quality = np.linspace(0.8, 1.6, len(models))
    rows = []
    atoms = [(i + 1, THREE[a], n) for i, a in enumerate(SEQ) for n in _atoms(THREE[a])]
    atoms = [a for a in atoms if nucleus_class(a[1], a[2]) != skip_nucleus]
    klass = [nucleus_class(c, n) for _, c, n in atoms]
    measured = np.array([BASE[k] + rng.normal(0, 2 * SIGMA[k]) for k in klass]).round(3)
    bad_every = list(range(0, len(atoms), max(1, len(atoms) // max(n_flag_atoms, 1))))[:n_flag_atoms]
    flags = []
    for m, q in zip(models, quality):
        resid = np.array([rng.normal(0, SIGMA[k] * q) for k in klass])
        for j in bad_every:
            resid[j] = 5.0 * SIGMA[klass[j]]
        if m == models[-2]:
            resid[5] = -4.5 * SIGMA[klass[5]]
        z = resid / np.array([SIGMA[k] for k in klass])
        for j, (seq, comp, atom) in enumerate(atoms):
            flag = ""
            if j in bad_every:
                flag = "in every model"
            elif abs(z[j]) > 3:
                flag = "in some models"
            pred = round(measured[j] - resid[j], 3)
            rows.append([m, "A", seq, comp, atom, measured[j], pred, round(measured[j] - pred, 3),
                         round(float(z[j]), 3), flag])
            if flag:
                flags.append({"model": m, "chain": "A", "seq_id": seq, "comp_id": comp, "atom_id": atom,
                              "measured": float(measured[j]), "predicted": pred,
                              "residual": round(measured[j] - pred, 3), "z": round(float(z[j]), 3),
                              "class": flag, "rule": "|residual| > 3 x expected error"})
    with open(path / "residues.csv", "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["model", "chain", "seq_id", "comp_id", "atom_id", "measured", "predicted",
                    "residual", "z", "flag"])
        w.writerows(rows)
    # ranking from the residues written
    arr_m = np.array([r[0] for r in rows])
    arr_k = np.array([nucleus_class(r[3], r[4]) for r in rows])
    res = np.array([r[7] for r in rows], float)
    mea = np.array([r[5] for r in rows], float)
    pre = np.array([r[6] for r in rows], float)
    metrics, scores = {}, []
    for m in models:
        metrics[m] = {}
        tot, wsum = 0.0, 0
        for k in NUCLEI:
            s = (arr_m == m) & (arr_k == k)
            if s.sum() == 0:
                continue
            rmsd = float(np.sqrt(np.mean(res[s] ** 2)))
            metrics[m][k] = {"rmsd": rmsd, "mad": float(np.mean(np.abs(res[s]))),
                             "r": float(np.corrcoef(mea[s], pre[s])[0, 1]), "n": int(s.sum())}
            tot += rmsd / SIGMA[k] * s.sum()
            wsum += s.sum()
        scores.append(tot / wsum)
    scores = np.array(scores)
    order = np.argsort(scores)
    p_best = np.exp(-(scores - scores.min()) * 8)
    p_best /= p_best.sum()
    ranking = []
    for rank, i in enumerate(order, start=1):
        ranking.append({"rank": rank, "model": models[i], "score": round(float(scores[i]), 4),
                        "score_low": round(float(scores[i]) - 0.08, 4),
                        "score_high": round(float(scores[i]) + 0.08, 4),
                        "p_best": round(float(p_best[i]), 3),
                        "best_group": bool(scores[i] - scores.min() < 0.1)})
    with open(path / "ranking.csv", "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["rank", "model", "score", "score_low", "score_high", "p_best"]
                   + [f"{s}_{k}" for k in NUCLEI for s in ("rmsd", "mad", "r", "n")])
        for r in ranking:
            mt = metrics[r["model"]]
            w.writerow([r["rank"], r["model"], r["score"], r["score_low"], r["score_high"], r["p_best"]]
                       + [(round(mt[k][s], 4) if k in mt else "") for k in NUCLEI
                          for s in ("rmsd", "mad", "r", "n")])
    ss = "C" + "HHHHHHHHHH" + "CCC" + "EEEEE" + "CC" + "EEEEE" + "CCCC" + "HHHHH" + "C"
    summary = {
        "shiftcheck_version": "0.1.0", "created": "2024-01-01T00:00:00Z",
        "inputs": {"shifts": {"path": "/data/invented_protein.str", "sha256": "ab" * 32, "list_id": 1,
                              "list_name": "assigned_chem_shift_list_1", "entity_id": 1},
                   "models": [{"path": "/data/alpha.pdb", "sha256": "cd" * 32, "chain": "A",
                               "model_names": ["alpha.pdb"]},
                              {"path": "/data/beta.cif", "sha256": "ef" * 32, "chain": "A",
                               "model_names": models[1:]}]},
        "mapping": [{"ensemble": "alpha.pdb", "chain": "A", "identity": 1.0, "coverage": 0.97,
                     "offsets": [0], "mismatches": []}],
        "reref_mode": "auto", "offsets": OFFSETS,
        "metrics": metrics, "ranking": ranking, "best_model": models[int(order[0])],
        "expected_error": {k: SIGMA[k] for k in NUCLEI},
        "flags": flags, "residue_summary": [],
        "data_checks": [{"seq_id": 11, "comp_id": "PRO", "atom_id": "CB", "rule": "cis-Pro CB-CG",
                         "message": "CB-CG difference suggests a cis peptide bond", "source": "from memory"}],
        "secondary_structure": {m: {"seq_id": list(range(1, len(SEQ) + 1)), "ss": ss[:len(SEQ)],
                                    "method": "phi/psi windows (synthetic)"} for m in models},
        "left_out": [], "warnings": ["synthetic test data"], "parameters": {"k": 3.0, "bootstrap": 200},
    }
    for k in drop_keys:
        summary.pop(k, None)
    (path / "summary.json").write_text(json.dumps(summary, indent=1))
    return path
