"""Physically plausible decoys for fold-selection validation: minimised torsion decoys and threaded
wrong folds, each checked with shiftcheck's geometry summary (shiftcheck.structure.quality).

Development-only: needs OpenMM (Eastman et al. 2017, PLoS Comput. Biol. 13:e1005659) and PDBFixer
(``pip install -e '.[decoys]'``); the package itself never imports them.

Per training protein (the native: its X-ray structure where the pairs file has one):
* ``native_min``: the native's heavy atoms, hydrogens added by PDBFixer, energy-minimised by the
  same protocol as the decoys, so native and decoys carry the same force-field polish.
* ``torsion``: loop residues (secondary structure 'C') set to random backbone basins (alpha-R,
  beta, polyproline II; Gly also alpha-L, each +- 10 deg), or one segment rewritten to helix or
  strand (tools/make_decoys.py's rotation machinery); candidates are ranked by heavy-atom clashes
  before minimisation, spread over CA-RMSD bins, minimised, and kept only if the minimised model
  passes the geometry rule (not 'bad' by shiftcheck/data/geometry_quality.json), else the next
  candidate of the bin is tried.
* ``thread``: the native sequence on another protein's backbone (N, CA, C, O of a window of the
  donor's chain; only donors at least as long as the native by default, so the largest protein,
  sensory rhodopsin, 218 residues, gets no threaded decoys; ``thread_backbone`` can leave
  terminal residues for PDBFixer to build, but that was slow and mostly rejected), side chains and
  hydrogens rebuilt by PDBFixer, minimised, geometry-checked.
  Per donor the window (every second start) with the fewest Ramachandran outliers of the native
  sequence on the donor's phi/psi is used; donors are tried in that order, one decoy per donor.
Minimisation: Amber ff14SB (amber14-all.xml, Maier et al. 2015 J. Chem. Theory Comput. 11:3696),
no solvent, non-periodic cutoff 1.0 nm with OpenMM's reaction-field treatment (dielectric 78.3),
L-BFGS local minimisation (at most 1000 steps, tolerance 10 kJ/mol/nm) with harmonic restraints
(10^5 kJ/mol/nm^2) on the backbone N, CA, C of the input, so side chains and carbonyls relax
while the fold and the backbone torsions stay those built (unrestrained minimisation in vacuum
moved the native 0.8 A CA-RMSD and pushed threaded backbones into Ramachandran outliers). Protocol choice:
common practice, no source; chosen for speed (about 2-5 s per model on 2 cores).

Output (never committed): ``.cache/decoys/<folder>/`` with one PDB per model and manifest.json
(kind, seed, donor, CA-RMSD and TM-score to the native, geometry record, minimised energy).
Reproducible: fixed seeds per protein (``--seed``, default 11), deterministic donor choice.

Usage:  SHIFTCHECK_REALDATA=../shared/realdata python tools/plausible_decoys.py [--only FOLDER ...]
        [--n-torsion 6] [--n-thread 3] [--out .cache/decoys]
"""
from __future__ import annotations

import argparse
import dataclasses
import io
import json
import os
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from make_decoys import kabsch_rmsd, rotate_torsions, write_pdb  # noqa: E402
from tmscore import tm_score  # noqa: E402

__all__ = ["TRAINING", "DONORS", "heavy_only", "minimise", "thread_backbone", "torsion_candidates",
           "make_protein_decoys", "main"]

# folder -> (shift file, native structure): the 13 training folders of tools/realdata_pairs.tsv
TRAINING = {
    "ubiquitin": ("bmr17769.str", "1ubq.pdb"), "engrailed_hd": ("bmr15536.str", "1ENH.pdb"),
    "ci2": ("bmrb4974.str", "1YPA.pdb"), "yppr": ("16570_v3.str", "3lyw.pdb"),
    "hr3102a": ("2krk_shifts.str", "3KW6.pdb"), "hr4435b": ("2l1p_shifts.str", "3NZL.pdb"),
    "hr4527e": ("2l33_shifts.str", "3P1X.pdb"), "so_2176": ("2juw_shifts.str", "2QTI.pdb"),
    "this": ("2k5p_shifts.str", "3CWI.pdb"), "tm1442": ("1sbo_shifts.str", "1VC1.pdb"),
    "xcr50": ("1xpv_shifts.str", "1TTZ.pdb"), "sensory_rhodopsin": ("2ksy_shifts.str", "1H68.pdb"),
    "hsr50": ("2lok_shifts.str", "2LOK_0006.pdb"),
}
# extra backbone donors (single-chain lowest-energy models of the nef_set), with the PDB id
# of the training protein they are (so a protein is never threaded onto itself)
DONORS = {f"nef_set/{p}/*_lowest.cif": p for p in
          ("2jr2", "2juw", "2k07", "2k2e", "2kcu", "2kko", "2ko1", "2kpu", "2loy", "2luz", "2png", "6nbn")}
SAME = {"so_2176": {"2juw"}, "yppr": {"2kpu"}}
BASINS = {"aR": (-63.0, -42.0), "b": (-120.0, 130.0), "PII": (-75.0, 145.0), "aL": (80.0, 10.0)}
HELIX, STRAND = (-63.0, -42.0), (-120.0, 130.0)


def heavy_only(ens):
    """The ensemble without hydrogens (topology and coordinates)."""
    el = np.char.upper(ens.element.astype(str))
    keep = (el != "H") & (el != "D")
    return dataclasses.replace(ens, atom_res=ens.atom_res[keep], atom_name=ens.atom_name[keep],
                               element=ens.element[keep], coords=ens.coords[:, keep],
                               built=ens.built[keep], _index=None)


def _pdb_text(ens) -> str:
    import tempfile

    with tempfile.TemporaryDirectory() as d:
        p = os.path.join(d, "m.pdb")
        write_pdb(ens, p)
        return Path(p).read_text()


def minimise(pdb_text: str, out_path: Path, terminal: tuple[list, list] = ([], []),
             max_steps: int = 1000, threads: int = 2, restraint: float = 100000.0) -> float:
    """PDBFixer (missing atoms, optional missing terminal residues, hydrogens at pH 7) then
    OpenMM local minimisation; writes ``out_path``; returns the final energy in kJ/mol."""
    import openmm as mm
    import openmm.app as app
    import openmm.unit as u
    from pdbfixer import PDBFixer

    fx = PDBFixer(pdbfile=io.StringIO(pdb_text))
    fx.findMissingResidues()
    chain = list(fx.topology.chains())[0]
    n_res = len(list(chain.residues()))
    fx.missingResidues = {}
    if terminal[0]:
        fx.missingResidues[(0, 0)] = list(terminal[0])
    if terminal[1]:
        fx.missingResidues[(0, n_res)] = list(terminal[1])
    fx.findNonstandardResidues()
    fx.replaceNonstandardResidues()
    fx.findMissingAtoms()
    fx.addMissingAtoms()
    fx.addMissingHydrogens(7.0)
    ff = app.ForceField("amber14-all.xml")
    system = ff.createSystem(fx.topology, nonbondedMethod=app.CutoffNonPeriodic,
                             nonbondedCutoff=1.0 * u.nanometer, constraints=None)
    # harmonic restraints on the backbone N, CA, C taken from the input (not on built residues),
    # so minimisation relieves clashes without moving the fold or the phi/psi it was given
    rest = mm.CustomExternalForce("0.5*k*((x-x0)^2+(y-y0)^2+(z-z0)^2)")
    rest.addGlobalParameter("k", restraint * u.kilojoule_per_mole / u.nanometer ** 2)
    for name in ("x0", "y0", "z0"):
        rest.addPerParticleParameter(name)
    residues = list(fx.topology.residues())
    lead, tail = len(terminal[0]), len(terminal[1])
    for ri, res in enumerate(residues):
        if ri < lead or ri >= len(residues) - tail:
            continue
        for atom in res.atoms():
            if atom.name in ("N", "CA", "C"):
                rest.addParticle(atom.index, fx.positions[atom.index].value_in_unit(u.nanometer))
    if restraint > 0:
        system.addForce(rest)
    sim = app.Simulation(fx.topology, system, mm.VerletIntegrator(0.001 * u.picoseconds),
                         mm.Platform.getPlatformByName("CPU"), {"Threads": str(threads)})
    sim.context.setPositions(fx.positions)
    sim.minimizeEnergy(tolerance=10 * u.kilojoule_per_mole / u.nanometer, maxIterations=max_steps)
    state = sim.context.getState(getEnergy=True, getPositions=True)
    with open(out_path, "w") as fh:
        app.PDBFile.writeFile(fx.topology, state.getPositions(), fh)
    return float(state.getPotentialEnergy().value_in_unit(u.kilojoule_per_mole))


def thread_backbone(target, donor, start: int):
    """Backbone-only ensemble: ``target``'s residues on donor residues start.. (N, CA, C, O).

    Where the donor is shorter than the target the donor's whole chain is used and the
    function returns the residue names left for the N- and C-terminal extensions.
    """
    L, M = target.n_residues, donor.n_residues
    names = ["N", "CA", "C", "O"]
    if M >= L:
        idx, lead, tail = np.arange(start, start + L), 0, 0
    else:
        lead = (L - M) // 2
        tail = L - M - lead
        idx = np.arange(M)
    xyz = np.stack([donor.xyz(idx, n)[0] for n in names], axis=1).reshape(1, -1, 3)
    res = np.repeat(np.arange(lead, lead + idx.size), 4)
    keep = slice(lead, lead + idx.size)
    ens = dataclasses.replace(target, res_seq=target.res_seq[keep], res_icode=target.res_icode[keep],
                              res_name=target.res_name[keep], atom_res=res - lead,
                              atom_name=np.array(names * idx.size, dtype=object),
                              element=np.array(["N", "C", "C", "O"] * idx.size, dtype=object),
                              coords=xyz, built=np.zeros(xyz.shape[1], bool), model_names=["thread"],
                              _index=None, warnings=[])
    rn = [str(x) for x in target.res_name]
    return ens, (rn[:lead], rn[L - tail:] if tail else [])


def torsion_candidates(nat, n_pool: int, rng) -> tuple[np.ndarray, list[str]]:
    """(n_pool, n_atoms, 3) coordinate candidates and their kinds ('tertiary'/'secondary')."""
    from shiftcheck.score.secondary import assign_secondary
    from shiftcheck.structure.geometry import backbone_torsions

    ss = np.array(list(assign_secondary(nat)[0]))
    tor = backbone_torsions(nat)
    phi0, psi0 = np.nan_to_num(tor["phi"][0]), np.nan_to_num(tor["psi"][0])
    nres = nat.n_residues
    loops = np.flatnonzero(ss == "C")
    gly = nat.res_name.astype(str) == "GLY"
    dphi, dpsi = np.zeros((n_pool, nres)), np.zeros((n_pool, nres))
    kinds = []
    wrap = lambda a: (a + 180.0) % 360.0 - 180.0
    for k in range(n_pool):
        if k % 2 == 0 and loops.size:
            kinds.append("tertiary")
            pick = rng.choice(loops, size=max(1, int(rng.uniform(0.1, 0.5) * loops.size)), replace=False)
            for r in pick:
                keys = ["aR", "b", "PII"] + (["aL"] if gly[r] else [])
                t = BASINS[keys[int(rng.integers(len(keys)))]]
                dphi[k, r] = wrap(t[0] + rng.normal(0, 10) - phi0[r])
                dpsi[k, r] = wrap(t[1] + rng.normal(0, 10) - psi0[r])
        else:
            kinds.append("secondary")
            length = int(rng.integers(5, max(6, min(25, nres // 3))))
            s0 = int(rng.integers(1, max(2, nres - length - 1)))
            t = HELIX if rng.random() < 0.5 else STRAND
            seg = slice(s0, s0 + length)
            dphi[k, seg] = wrap(t[0] - phi0[seg])
            dpsi[k, seg] = wrap(t[1] - psi0[seg])
    xyz = rotate_torsions(nat, np.repeat(nat.coords, n_pool, axis=0), dphi, dpsi)
    return xyz, kinds


def _read(path: Path, native):
    """Read a minimised model back with the native's residue numbering."""
    from shiftcheck.io.coords import read_models

    ens = read_models([path])[0]
    if ens.n_residues == native.n_residues:
        ens = dataclasses.replace(ens, res_seq=native.res_seq.copy(), res_icode=native.res_icode.copy(),
                                  chain_id=native.chain_id, _index=None)
    return ens


def _ca(ens):
    return ens.xyz(np.arange(ens.n_residues), "CA")[0]


def _record(path: Path, native, kind: str, energy: float, extra: dict) -> tuple[dict, object]:
    from shiftcheck.structure.quality import geometry_summary

    ens = _read(path, native)
    geo = geometry_summary(ens)[0]
    ca, ca0 = _ca(ens), _ca(native)
    ok = np.isfinite(ca).all(1) & np.isfinite(ca0).all(1)
    rec = {"file": path.name, "kind": kind, "energy_kj_mol": round(energy, 1),
           "ca_rmsd": round(float(kabsch_rmsd(ca[None, ok], ca0[ok])[0]), 3),
           "tm_score": round(float(tm_score(ca[ok], ca0[ok])), 4), "geometry": geo, **extra}
    return rec, ens


def _donors(root: Path, folder: str, L: int, min_fraction: float = 1.0) -> list[tuple[str, object]]:
    """Donor ensembles (other proteins) of length >= min_fraction * L: those at least as long as
    the native first (no residues to build), each group closest in length first. The default
    1.0 uses only donors at least as long as the native: building 10-40 missing terminal
    residues with PDBFixer took minutes per try and its models were mostly rejected."""
    from shiftcheck.io.coords import read_models

    cands = [f"{f}/{m}" for f, (_, m) in TRAINING.items() if f != folder]
    cands += [p for p, pid in DONORS.items() if pid not in SAME.get(folder, set())]
    out = []
    for rel in cands:
        hits = sorted(root.glob(rel)) if "*" in rel else [root / rel]   # donors: the folder's *_lowest.cif
        if not hits:
            continue
        d = heavy_only(read_models([hits[0]], build_hydrogens=False)[0].select_models([0]))
        if d.n_residues >= min_fraction * L:
            out.append((rel, d))
    out.sort(key=lambda x: (x[1].n_residues < L, abs(x[1].n_residues - L), x[0]))
    return out


def make_protein_decoys(root: Path, folder: str, out: Path, n_torsion: int = 8, n_thread: int = 4,
                        seed: int = 11, pool: int = 64, max_rmsd: float = 12.0, max_thread_tries: int = 6,
                        log=print) -> dict:
    """All decoys of one protein into ``out / folder``; returns the manifest."""
    from shiftcheck.io.coords import read_models
    from shiftcheck.structure.quality import clash_pairs

    t0 = time.time()
    d = out / folder
    d.mkdir(parents=True, exist_ok=True)
    native = heavy_only(read_models([root / folder / TRAINING[folder][1]], build_hydrogens=False)[0]
                        .select_models([0]))
    rng = np.random.default_rng([seed, sum(map(ord, folder))])
    man = {"folder": folder, "native": TRAINING[folder][1], "seed": seed, "models": [], "rejected": []}
    e = minimise(_pdb_text(native), d / "native_min.pdb")
    rec, _ = _record(d / "native_min.pdb", native, "native_min", e, {})
    man["models"].append(rec)
    # torsion decoys: pre-rank by clashes, spread over RMSD bins
    xyz, kinds = torsion_candidates(native, pool, rng)
    cand = dataclasses.replace(native, coords=xyz, model_names=[f"c{k}" for k in range(pool)], _index=None)
    ca_idx = native.indices(np.arange(native.n_residues), "CA")
    ca_idx = ca_idx[ca_idx >= 0]
    rmsd = kabsch_rmsd(xyz[:, ca_idx], native.coords[0, ca_idx])
    cl = np.bincount(clash_pairs(cand)["model"], minlength=pool)
    usable = np.flatnonzero((rmsd >= 1.0) & (rmsd <= max_rmsd))
    bins = np.array_split(usable[np.argsort(rmsd[usable])], n_torsion)
    for b, members in enumerate(bins):
        for c in sorted(members, key=lambda c: cl[c])[:3]:
            name = f"torsion_{b + 1:02d}.pdb"
            ens = dataclasses.replace(native, coords=xyz[[c]], model_names=[name], _index=None)
            e = minimise(_pdb_text(ens), d / name)
            rec, _ = _record(d / name, native, "torsion", e, {"subkind": kinds[c], "candidate": int(c),
                                                              "ca_rmsd_before": round(float(rmsd[c]), 3),
                                                              "clashes_before": int(cl[c])})
            if rec["geometry"]["bad"]:
                man["rejected"].append(rec)
                (d / name).unlink(missing_ok=True)
                continue
            man["models"].append(rec)
            break
    # threaded wrong folds: windows ranked by Ramachandran outliers of the native sequence on
    # the donor's phi/psi (before any building), one window per donor, fewest outliers first
    from shiftcheck.structure.quality import chain_breaks, rama_outliers

    L = native.n_residues
    windows = []
    for rel, donor in _donors(root, folder, L):
        M = donor.n_residues
        best = None
        for s in (range(0, M - L + 1, 2) if M > L else [0]):
            bb, term = thread_backbone(native, donor, int(s))
            if chain_breaks(bb).any():
                continue
            n_out = int(rama_outliers(bb)[0].sum())
            if best is None or n_out < best[0]:
                best = (n_out, int(s), rel, bb, term)
        if best:
            windows.append(best)
    windows.sort(key=lambda w: (bool(w[4][0] or w[4][1]), w[0], w[2]))
    made = 0
    for n_out, s, rel, bb, term in windows[:max_thread_tries]:
        if made >= n_thread:
            break
        name = f"thread_{made + 1:02d}.pdb"
        e = minimise(_pdb_text(bb), d / name, terminal=term)
        rec, _ = _record(d / name, native, "thread", e, {"donor": rel, "start": s,
                                                         "rama_outliers_before": n_out,
                                                         "built_terminal": len(term[0]) + len(term[1])})
        if rec["geometry"]["bad"]:
            man["rejected"].append(rec)
            (d / name).unlink(missing_ok=True)
            continue
        man["models"].append(rec)
        made += 1
    man["seconds"] = round(time.time() - t0, 1)
    (d / "manifest.json").write_text(json.dumps(man, indent=1) + "\n")
    log(f"{folder}: {len(man['models'])} models ({sum(m['kind'] == 'torsion' for m in man['models'])} "
        f"torsion, {made} threaded), {len(man['rejected'])} rejected, {man['seconds']} s")
    return man


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--realdata", default=os.environ.get("SHIFTCHECK_REALDATA", "../shared/realdata"))
    ap.add_argument("--out", default=str(Path(__file__).resolve().parents[1] / ".cache" / "decoys"))
    ap.add_argument("--only", nargs="*", default=None)
    ap.add_argument("--n-torsion", type=int, default=6)
    ap.add_argument("--n-thread", type=int, default=3)
    ap.add_argument("--seed", type=int, default=11)
    a = ap.parse_args(argv)
    for folder in a.only or list(TRAINING):
        make_protein_decoys(Path(a.realdata), folder, Path(a.out), a.n_torsion, a.n_thread, a.seed,
                            log=lambda s: print(s, flush=True))
    return 0


if __name__ == "__main__":
    sys.exit(main())
