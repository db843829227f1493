#!/usr/bin/env python3
"""Make the INVENTED demo scenario of shiftcheck (seeded, reproducible).

Protein: "Kestrel-fold protein KfpA", 76 residues, an invented α/β domain (β1-β2 hairpin, α1,
β3, α2; sheet order β2-β1-β3 with both helices on one face). Lab: the invented "Harbourside
Protein NMR Group". Nothing here describes a real protein, a real laboratory or real people.

Steps: fold five candidate models in torsion space (demo_fold.py), pack side chains, write them
as PDB (and model 5 also as mmCIF); predict the shifts of the true model with shiftcheck's own
predictor, add Gaussian noise per nucleus and plant four problems; write NMR-STAR 3.1,
planted.json into shiftcheck/demo/ (package data; the only copy of the demo files).

Usage: python demo_data/make_demo.py [--seed N] [--out DIR]
"""
from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
PKG_DEMO = HERE.parent / "shiftcheck" / "demo"
sys.path.insert(0, str(HERE))

from demo_fold import Design, fold, kabsch_rmsd, refine  # noqa: E402
from demo_pack import pack_sidechains  # noqa: E402
from demo_write import atomic_write, write_mmcif, write_pdb, write_star  # noqa: E402

from shiftcheck.chem.residues import ONE_TO_THREE  # noqa: E402
from shiftcheck.structure.builder import build_backbone, build_protein  # noqa: E402

SEED = 20240611
NAME = "Kestrel-fold protein KfpA"
LAB = "Harbourside Protein NMR Group (invented)"
SEQ1 = "MSKITFKVENGKVTWEVRGDPSPLEEALKEIAKYLKEAGNPDTVRYEITDGSSPLEEFLKKAVELMKKLGSPEVKE"
SS = "--EEEEEEETTEEEEEEE----HHHHHHHHHHHHHHHH----EEEEEEE----HHHHHHHHHHHHHHHH-------"
SEQ = [ONE_TO_THREE[c] for c in SEQ1]
N_RES = len(SEQ)
TURN = {9: (60.0, 30.0), 10: (90.0, 0.0)}          # type I' hairpin turn N10-G11 (0-based keys)
CORE = [4, 6, 8, 13, 15, 17, 44, 46, 48, 24, 27, 28, 31, 34, 35, 55, 58, 59, 62, 65, 66]
# elements, 0-based half-open
B1, B2, A1, B3, A2 = (2, 9), (11, 18), (22, 38), (42, 49), (53, 69)

# (kind, description) in the order of KINDS
MODELS = [
    ("true", "true fold"),
    ("near", "near-native (loop and torsion perturbations)"),
    ("wrong", "wrong topology (beta3 pairs with beta2; alpha2 on the other face)"),
    ("shifted", "beta3 register shifted by two residues"),
    ("coil", "helix alpha2 predicted as coil"),
]
# shipped models are listed in shuffled order so that the true fold is not simply "model 1"
SHIPPED_ORDER = [3, 1, 4, 0, 2]
REFINE_CYCLES = 2           # rounds of backbone de-clashing + side-chain repacking per model


def _z(i: int) -> int:
    return i - 1


def _pairs(spec: list[tuple[int, int]], k: int = 7, dmax: float = 5.6) -> list[tuple[int, int, float]]:
    """Antiparallel CA-CA pair restraints: (first residue of one strand, last of the other)."""
    out = []
    for a, b in spec:
        out += [(_z(a + t), _z(b - t), dmax) for t in range(k)]
    return out


def designs() -> dict[str, Design]:
    core = [_z(i) for i in CORE]
    sheet = (2, 9)
    common = dict(sequence=SEQ, turn_torsions=TURN, core=core)
    true = Design(ss=SS, pairs=_pairs([(3, 18), (3, 49)]),
                  centroid_bounds=[(A1, sheet, 8.5, 11.0), (A2, sheet, 8.5, 11.0), (A1, A2, 8.5, 11.0)],
                  **common)
    wrong = Design(ss=SS, pairs=_pairs([(3, 18), (12, 49)]),
                   centroid_bounds=[(A1, (11, 18), 8.5, 11.0), (A2, (2, 9), 8.5, 11.0), (A1, A2, 17.0, 24.0)],
                   sequence=SEQ, turn_torsions=TURN, core=[])
    # beta3 moved two residues towards the C terminus: residues 45-51 pair with beta1
    shift_ss = SS[:B3[0]] + "--" + "E" * (B3[1] - B3[0]) + SS[B3[1] + 2:]
    shifted = Design(ss=shift_ss, pairs=_pairs([(3, 18), (3, 51)]),
                     centroid_bounds=[(A1, sheet, 8.5, 11.0), (A2, sheet, 8.5, 11.0), (A1, A2, 8.5, 11.0)],
                     **common)
    coil_ss = SS[:A2[0]] + "-" * (A2[1] - A2[0]) + SS[A2[1]:]
    coil = Design(ss=coil_ss, pairs=_pairs([(3, 18), (3, 49)]),
                  centroid_bounds=[(A1, sheet, 8.5, 11.0)], rg_max=13.0,
                  **{**common, "core": [c for c in core if not A2[0] <= c < A2[1]]})
    return {"true": true, "wrong": wrong, "shifted": shifted, "coil": coil}


def _ca(phi: np.ndarray, psi: np.ndarray) -> np.ndarray:
    return build_backbone(phi, psi)["CA"]


def near_native(rng: np.random.Generator, design: Design, phi: np.ndarray, psi: np.ndarray,
                target=(1.3, 2.0)) -> tuple[np.ndarray, np.ndarray, float]:
    """Perturb loop (and, slightly, all) torsions; keep a candidate 1-2 Å CA-RMSD from the truth."""
    ss = np.array(list(design.ss))
    loop = (ss == "-") | (ss == "T")
    k = 96
    scale = np.linspace(2.0, 14.0, k)[:, None]
    sd = np.where(loop, 1.0, 0.25)[None, :] * scale
    P = phi[None] + rng.normal(0, 1, (k, N_RES)) * sd
    S = psi[None] + rng.normal(0, 1, (k, N_RES)) * sd
    P[:, [i for i, r in enumerate(SEQ) if r == "PRO"]] = -65.0
    ref = _ca(phi, psi)[0]
    cas = _ca(P, S)
    rms = np.array([kabsch_rmsd(ref, c) for c in cas])
    from demo_fold import _energy
    e = _energy(design, P, S, np.array([r == "GLY" for r in SEQ]))
    ok = (rms >= target[0]) & (rms <= target[1])
    if not ok.any():
        raise RuntimeError("no near-native candidate in the target RMSD range")
    w = np.flatnonzero(ok)[np.argmin(e[ok])]
    return P[w], S[w], float(rms[w])


KINDS = ["true", "near", "wrong", "shifted", "coil"]


def make_models(seed: int = SEED, kinds: tuple[str, ...] = tuple(KINDS), log=print) -> dict:
    """Fold, pack and refine candidate models; returns kind -> (Ensemble, CA-RMSD to the truth).

    The true fold is made first; the near-native, register-shifted and helix-as-coil models
    start from it, the wrong topology is folded independently. Each kind draws from its own
    random stream (seed, 1, k), so any subset can be regenerated on its own.
    """
    d = designs()
    t0 = time.time()
    built: dict[str, tuple] = {}

    def rng_for(kind: str) -> np.random.Generator:
        return np.random.default_rng([seed, 1, KINDS.index(kind)])

    def finish(key: str, rng, phi, psi, e0: float, max_iter: int = 30, window: float = 25.0):
        # the near-native model is only de-clashed (no pull back towards the designed pairing)
        design = Design(ss=SS, pairs=[], sequence=SEQ, turn_torsions=TURN, rg_max=13.0) \
            if key == "near" else d[key]
        chi = pack_sidechains(SEQ, phi, psi, rng)
        energies = []
        for _ in range(REFINE_CYCLES):        # backbone de-clashing, then repacking on the new backbone
            phi, psi, before, after = refine(design, phi, psi, chi, max_iter=max_iter, window=window)
            chi = pack_sidechains(SEQ, phi, psi, rng, start=chi)
            energies.append(f"{before:.1f} -> {after:.1f}")
        built[key] = (phi, psi, chi)
        log(f"  {key:8s} restraint energy {e0:7.2f}, clash energy {', '.join(energies)} "
            f"({time.time() - t0:5.1f} s)")

    rng = rng_for("true")
    phi, psi, e0 = fold(d["true"], rng, n_chains=16, n_steps=1000)
    finish("true", rng, phi, psi, e0)
    tphi, tpsi = built["true"][:2]
    if "near" in kinds:
        rng = rng_for("near")
        phi, psi, _ = near_native(rng, d["true"], tphi, tpsi)
        finish("near", rng, phi, psi, 0.0, max_iter=20, window=5.0)
    if "wrong" in kinds:
        rng = rng_for("wrong")
        phi, psi, e0 = fold(d["wrong"], rng, n_chains=16, n_steps=500)
        finish("wrong", rng, phi, psi, e0)
    if "shifted" in kinds:
        rng = rng_for("shifted")
        phi, psi = tphi.copy(), tpsi.copy()
        seg = slice(B3[0] - 2, B3[1] + 2)            # torsions of loop-strand-loop slide by two
        phi[B3[0]:B3[1] + 2], psi[B3[0]:B3[1] + 2] = tphi[seg][:-2].copy(), tpsi[seg][:-2].copy()
        phi, psi, e0 = fold(d["shifted"], rng, n_chains=16, n_steps=400, start=(phi, psi), t_hot=5.0)
        finish("shifted", rng, phi, psi, e0)
    if "coil" in kinds:
        rng = rng_for("coil")
        phi, psi = tphi.copy(), tpsi.copy()
        phi[A2[0]:A2[1]], psi[A2[0]:A2[1]] = -75.0, 140.0
        phi, psi, e0 = fold(d["coil"], rng, n_chains=16, n_steps=300, start=(phi, psi), t_hot=3.0)
        finish("coil", rng, phi, psi, e0)
    ref = _ca(tphi, tpsi)[0]
    out = {}
    for k in KINDS:
        if k in kinds:
            phi, psi, chi = built[k]
            out[k] = (build_protein(SEQ, phi, psi, chi=chi, name=k),
                      round(kabsch_rmsd(ref, _ca(phi, psi)[0]), 2))
    log("  CA-RMSD to the true fold (Å): " + ", ".join(f"{k} {v[1]:.2f}" for k, v in out.items()))
    return out


def model_file(kind: str) -> tuple[str, int]:
    """File name and slot (1-based) of a model kind; the true fold is not simply 'model 1'."""
    slot = SHIPPED_ORDER.index(KINDS.index(kind)) + 1
    return f"kfpa_model{slot}" + (".cif" if slot == len(KINDS) else ".pdb"), slot


def write_model(ens, kind: str, out: Path) -> Path:
    """Write one model with its invented-data header; returns the path."""
    fname, slot = model_file(kind)
    remarks = [f"INVENTED DEMO DATA: {NAME}, {LAB}.", "Built by demo_data/make_demo.py of shiftcheck",
               "from torsion angles with ideal geometry; not an experimental structure."]
    title = f"{NAME}, candidate model {slot} (invented demo data)"
    path = Path(out) / fname
    (write_mmcif if fname.endswith(".cif") else write_pdb)(ens, path, title, remarks)
    return path


# ----------------------------------------------------------------------------- shifts
# Fallback noise widths (ppm) per nucleus class, used only when the parameter file carries neither
# "loo_rmsd" nor "expected_error": the accuracy goals of the predictor issue (from memory, see docs/validation.md)
FALLBACK_SIGMA = {"H": 0.45, "HA": 0.25, "CA": 0.95, "CB": 1.05, "C": 1.0, "N": 2.4, "HMe": 0.2,
                  "Haro": 0.3}
OFFSET_13C = 1.8
TEMPERATURE_K = 298.0
PH = 6.5
MISASSIGNED = (4, 31)       # Ile 4 (strand beta1) and Ile 31 (helix alpha1): spin systems exchanged;
                            # both elements are kept by every candidate model, so the exchange
                            # contradicts all of them
CACB_SWAP = 43              # Thr 43: CA and CB values exchanged
MISSING = (50, 55)          # residues 50-55 carry no assignments
RING_PAIRS = {"PHE": [("HD1", "HD2"), ("HE1", "HE2")], "TYR": [("HD1", "HD2"), ("HE1", "HE2")]}
STEREO_AMBIGUOUS = {("VAL", "HG1"), ("VAL", "HG2"), ("LEU", "HD1"), ("LEU", "HD2"), ("GLY", "HA")}


def predicted_true_shifts(model_path: Path) -> tuple[list[tuple], dict, str]:
    """Shifts predicted by shiftcheck's predictor from the true model, one row per atom.

    Returns rows (seq_id, comp_id, atom_id, nucleus_class, value), the noise σ per class and a
    description of the source. Hydrogens are built by the coordinate reader.
    """
    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.model import Predictor

    from shiftcheck.shiftlist import SampleConditions

    ens = read_models([str(model_path)])[0]
    pred = Predictor()
    p = pred.predict(ens, SampleConditions(temperature_K=TEMPERATURE_K, pH=PH))
    sigma = dict(FALLBACK_SIGMA)
    src = "fallback (predictor accuracy goals, from memory)"
    # the typical held-out error (leave-one-protein-out RMSD) is the width of the Gaussian noise;
    # older parameter files carry only expected_error (which was that RMSD)
    key = "loo_rmsd" if isinstance(pred.params_.get("loo_rmsd"), dict) else "expected_error"
    exp = pred.params_.get(key)
    values = exp.get("values", {}) if isinstance(exp, dict) else {}
    if values:
        for k, v in values.items():
            if k in sigma:
                sigma[k] = float(v)
        src = f"{key} of the shipped parameter file (" + str(exp.get("source", ""))[:120] + ")"
    rows = []
    for j in range(len(p)):
        v = float(p.values[0, j])
        if np.isfinite(v):
            rows.append((int(p.res_seq[j]), str(p.comp_id[j]), str(p.atom_id[j]), str(p.nucleus[j]), v))
    return rows, sigma, src


def measured_shifts(rows: list[tuple], sigma: dict, rng: np.random.Generator) -> tuple[list[tuple], dict]:
    """Add noise, average symmetric/methyl groups, plant the problems. Returns STAR rows, planted."""
    val = {(s, a): v for s, c, a, k, v in rows}
    comp = {s: c for s, c, a, k, v in rows}
    cls = {(s, a): k for s, c, a, k, v in rows}
    keys = sorted(val, key=lambda x: (x[0], x[1]))
    noise = {key: rng.normal(0.0, sigma[cls[key]]) for key in keys}
    # centre the noise per nucleus class (median zero), so that the only systematic error in the
    # data is the planted referencing offset and "planted +1.8 ppm" is exactly what is in the file
    for k in set(cls.values()):
        members = [key for key in keys if cls[key] == k]
        med = float(np.median([noise[key] for key in members]))
        for key in members:
            noise[key] -= med
    meas = {key: val[key] + noise[key] for key in keys}
    # equivalent protons share one value: methyl groups, flipping Phe/Tyr ring pairs
    groups: dict[tuple, list] = {}
    for s, a in keys:
        c = comp[s]
        g = (s, a[:-1]) if cls[(s, a)] == "HMe" else None
        for x, y in RING_PAIRS.get(c, []):
            if a in (x, y):
                g = (s, x + y)
        if g:
            groups.setdefault(g, []).append((s, a))
    for members in groups.values():
        m = float(np.mean([val[k] for k in members])) + noise[members[0]]
        for k in members:
            meas[k] = m
    planted: dict = {}
    # misassignment: the spin systems of two residues of the same type are exchanged
    a, b = MISASSIGNED
    assert comp[a] == comp[b]
    atoms_a = {k[1] for k in keys if k[0] == a}
    atoms_b = {k[1] for k in keys if k[0] == b}
    for at in sorted(atoms_a & atoms_b):
        meas[(a, at)], meas[(b, at)] = meas[(b, at)], meas[(a, at)]
    name = comp[a].capitalize()
    planted["misassigned"] = {"residues": [a, b], "comp_id": comp[a],
                              "description": f"spin systems of {name} {a} and {name} {b} exchanged"}
    # CA/CB swap
    s = CACB_SWAP
    meas[(s, "CA")], meas[(s, "CB")] = meas[(s, "CB")], meas[(s, "CA")]
    planted["ca_cb_swap"] = {"residue": s, "comp_id": comp[s]}
    # referencing offset on every 13C shift
    for k in keys:
        if k[1].startswith("C"):
            meas[k] += OFFSET_13C
    planted["offset"] = {"nucleus": "13C", "ppm": OFFSET_13C}
    # missing stretch
    lo, hi = MISSING
    keys = [k for k in keys if not lo <= k[0] <= hi]
    planted["missing"] = {"residues": list(range(lo, hi + 1))}
    planted["noise_sigma_ppm"] = {k: round(v, 4) for k, v in sigma.items()}
    out = []
    for k in keys:
        c = comp[k[0]]
        amb = 1
        if k[1][:-1] in ("HD", "HE") and c in RING_PAIRS:
            amb = 3
        elif (c, k[1][:3]) in STEREO_AMBIGUOUS or (c, k[1][:2]) in STEREO_AMBIGUOUS:
            amb = 2
        err = {"H": 0.02, "C": 0.2, "N": 0.2}[k[1][0]]
        out.append((k[0], c, k[1], round(meas[k], 3), err, amb))
    return out, planted


# ----------------------------------------------------------------------------- main
def make_shift_file(true_model: Path, out: Path, seed: int = SEED) -> tuple[Path, dict]:
    """Predict, add noise, plant problems and write the NMR-STAR 3.1 file; returns path, planted."""
    rng = np.random.default_rng([seed, 2])
    rows, sigma, sigma_src = predicted_true_shifts(true_model)
    star_rows, planted = measured_shifts(rows, sigma, rng)
    star = Path(out) / "kfpa_shifts.str"
    write_star(star, "kfpa_demo", f"{NAME}: backbone and side-chain assignments (invented demo data)",
               LAB, SEQ, star_rows, temperature_K=TEMPERATURE_K, pH=PH)
    planted["noise_sigma_source"] = sigma_src
    planted["shift_file"] = star.name
    planted["n_shifts"] = len(star_rows)
    return star, planted


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seed", type=int, default=SEED)
    ap.add_argument("--out", type=Path, default=PKG_DEMO, help="output folder (default: shiftcheck/demo/)")
    args = ap.parse_args(argv)
    out: Path = args.out
    out.mkdir(parents=True, exist_ok=True)
    t0 = time.time()
    print(f"making the invented demo '{NAME}' (seed {args.seed}) in {out}")
    models = make_models(args.seed)
    files = []
    for slot_kind in SHIPPED_ORDER:
        kind = KINDS[slot_kind]
        ens, rmsd = models[kind]
        path = write_model(ens, kind, out)
        files.append({"file": path.name, "kind": kind, "description": MODELS[slot_kind][1],
                      "ca_rmsd_to_true": rmsd})
    star, planted = make_shift_file(out / model_file("true")[0], out, args.seed)
    planted["models"] = files
    planted["true_model"] = model_file("true")[0]
    planted["seed"] = args.seed
    atomic_write(out / "planted.json", json.dumps(planted, indent=1) + "\n")
    print(f"  wrote {star.name} ({planted['n_shifts']} shifts), {len(files)} models, planted.json "
          f"({time.time() - t0:.1f} s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
