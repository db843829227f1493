"""Physically plausible decoys for fold-selection validation: minimised torsion decoys and threaded
wrong folds, each checked with shiftcheck's geometry summary (shiftcheck.structure.quality).

Development-only: needs OpenMM (Eastman et al. 2017, PLoS Comput. Biol. 13:e1005659) and PDBFixer
(``pip install -e '.[decoys]'``); the package itself never imports them.

Per training protein (TRAINING: the 23 proteins of tools/realdata_pairs.tsv; the native is
the X-ray structure where the pairs file has one, else the fitted structure's first model, chain A
of the homodimers):
* ``native_min``: the native's heavy atoms, hydrogens added by PDBFixer, energy-minimised by the
  same protocol as the decoys, so native and decoys carry the same force-field polish.
* ``torsion``: loop residues (secondary structure 'C') set to random backbone basins (alpha-R,
  beta, polyproline II; Gly also alpha-L, each +- 10 deg), or one segment rewritten to helix or
  strand (tools/make_decoys.py's rotation machinery); candidates are ranked by heavy-atom clashes
  before minimisation, spread over CA-RMSD bins, minimised, and kept only if the minimised model
  passes the geometry rule (not 'bad' by shiftcheck/data/geometry_quality.json), else the next
  candidate of the bin is tried.
* ``ladder``: a perturbation ladder spanning the TM-score range: Gaussian noise on every
  residue's phi and psi (sigma log-uniform 0.3-12 deg times sqrt(76 / residues); own random
  stream); one model per TM-score bin (LADDER_TM_EDGES, TM before minimisation), the candidate
  with the fewest heavy-atom clashes first, up to 3 tries per bin, minimised and geometry-checked.
* ``thread``: the native sequence on another training protein's backbone (N, CA, C, O of a window
  of the donor's chain) with the native's side chains moved rigidly with each residue's N-CA-C
  frame (with_native_side_chains), minimised, geometry-checked. Per donor the window (every
  second start) with the fewest Ramachandran outliers of the native sequence on the donor's
  phi/psi is used; donors at least as long as the native first, then (when too few) donors of at
  least 60 % of the native's length, with the native's residues offset..offset+M-1 on the donor's
  whole chain and the other residues left out of the model (sensory rhodopsin, 218 residues, has
  no longer donor). One decoy per donor.
Minimisation: Amber ff14SB (amber14-all.xml, Maier et al. 2015 J. Chem. Theory Comput. 11:3696),
no solvent, non-periodic cutoff 1.0 nm with OpenMM's reaction-field treatment (dielectric 78.3),
L-BFGS local minimisation (at most 1000 steps, tolerance 10 kJ/mol/nm) with harmonic restraints
(10^5 kJ/mol/nm^2) on the backbone N, CA, C of the input, so side chains and carbonyls relax
while the fold and the backbone torsions stay those built (unrestrained minimisation in vacuum
moved the native 0.8 A CA-RMSD and pushed threaded backbones into Ramachandran outliers). Protocol choice:
common practice, no source; chosen for speed (about 2-5 s per model of 70 residues on 2 cores).
Proteins run in parallel (``--jobs``, default 2, one OpenMM thread each), largest first.

Output (never committed): ``.cache/decoys/<folder>/`` with one PDB per model and manifest.json
(kind, seed, donor, CA-RMSD and TM-score to the native, geometry record, minimised energy);
``summary.json`` the wall time of each run.
Reproducible: fixed seeds per protein (``--seed``, default 11), deterministic donor choice.

Usage:  SHIFTCHECK_REALDATA=../shared/realdata python tools/plausible_decoys.py [--only FOLDER ...]
        [--n-torsion 4] [--n-thread 3] [--no-ladder] [--jobs 2] [--skip-done] [--out .cache/decoys]
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

__all__ = ["TRAINING", "heavy_only", "load_native", "minimise", "thread_backbone", "torsion_candidates",
           "ladder_candidates", "LADDER_TM_EDGES", "make_protein_decoys", "main"]

# folder -> (shift file, native structure, chain): the 23 training proteins of
# tools/realdata_pairs.tsv. Native: the X-ray structure where the pairs file has one, otherwise the
# structure the predictor is fitted on (its first model; chain A of the homodimers 2jr2, 2kko, 2ko1).
# A '*' in a path must match exactly one file (as in the pairs file).
TRAINING = {
    "ubiquitin": ("bmr17769.str", "1ubq.pdb", None), "engrailed_hd": ("bmr15536.str", "1ENH.pdb", None),
    "ci2": ("bmrb4974.str", "1YPA.pdb", None), "yppr": ("16570_v3.str", "3lyw.pdb", None),
    "hr3102a": ("2krk_shifts.str", "3KW6.pdb", None), "hr4435b": ("2l1p_shifts.str", "3NZL.pdb", None),
    "hr4527e": ("2l33_shifts.str", "3P1X.pdb", None), "so_2176": ("2juw_shifts.str", "2QTI.pdb", None),
    "this": ("2k5p_shifts.str", "3CWI.pdb", None), "tm1442": ("1sbo_shifts.str", "1VC1.pdb", None),
    "xcr50": ("1xpv_shifts.str", "1TTZ.pdb", None),
    "sensory_rhodopsin": ("2ksy_shifts.str", "1H68.pdb", None),
    "hsr50": ("2lok_shifts.str", "2LOK_0006.pdb", None),
    "nef_set/2jr2": ("bmr15317.str", "2jr2.pdb.gz", "A"), "nef_set/2k2e": ("bmr15702.str", "2k2e.pdb.gz", None),
    "nef_set/2kcu": ("bmr16097.str", "2kcu.pdb.gz", None), "nef_set/2png": ("bmr15449.str", "2png.pdb.gz", None),
    "nef_set/2k07": ("bmr6546.str", "*.cif.gz", None), "nef_set/2kko": ("bmr16368.str", "*.cif.gz", "A"),
    "nef_set/2ko1": ("bmr16486.str", "*.cif.gz", "A"), "nef_set/2loy": ("bmr16833.str", "*.cif.gz", None),
    "nef_set/2luz": ("bmr18547.str", "*.cif.gz", None), "nef_set/6nbn": ("bmr30550.str", "6nbn.ambpdb.pdb", None),
}
BASINS = {"aR": (-63.0, -42.0), "b": (-120.0, 130.0), "PII": (-75.0, 145.0), "aL": (80.0, 10.0)}
HELIX, STRAND = (-63.0, -42.0), (-120.0, 130.0)
# perturbation ladder: TM-score bins (to the native, before minimisation) one rung each is drawn from
LADDER_TM_EDGES = (0.25, 0.40, 0.55, 0.70, 0.85, 0.97)


def heavy_only(ens):
    """The ensemble without hydrogens (topology and coordinates)."""
    el = np.char.upper(ens.element.astype(str))
    keep = (el != "H") & (el != "D")
    return dataclasses.replace(ens, atom_res=ens.atom_res[keep], atom_name=ens.atom_name[keep],
                               element=ens.element[keep], coords=ens.coords[:, keep],
                               built=ens.built[keep], _index=None)


def native_path(root: Path, folder: str) -> Path:
    """The native's file (a '*' pattern must match exactly one file)."""
    rel = TRAINING[folder][1]
    if "*" not in rel:
        return root / folder / rel
    hits = sorted((root / folder).glob(rel))
    if len(hits) != 1:
        raise FileNotFoundError(f"{root / folder / rel}: {len(hits)} files match, need exactly one")
    return hits[0]


def load_native(root: Path, folder: str):
    """The native: heavy atoms of the first model of the TRAINING structure (its chain)."""
    from shiftcheck.io.coords import read_models

    ens = read_models([native_path(root, folder)], chain=TRAINING[folder][2], build_hydrogens=False)[0]
    return heavy_only(ens.select_models([0]))


def _pdb_text(ens) -> str:
    """PDB text of the ensemble for PDBFixer, without OXT (PDBFixer rebuilds it; one NMR
    re-calculation has OXT on top of O, which makes the minimiser's forces infinite)."""
    import tempfile

    keep = ens.atom_name.astype(str) != "OXT"
    if not keep.all():
        ens = dataclasses.replace(ens, atom_res=ens.atom_res[keep], atom_name=ens.atom_name[keep],
                                  element=ens.element[keep], coords=ens.coords[:, keep],
                                  built=ens.built[keep], _index=None)
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


def thread_backbone(target, donor, start: int, offset: int | None = None):
    """Backbone-only ensemble: ``target``'s residues on donor residues start.. (N, CA, C, O).

    Where the donor is shorter than the target: with ``offset`` None the donor's whole chain is
    used and the function returns the residue names left for the N- and C-terminal extensions;
    with ``offset`` the target's residues offset..offset+M-1 sit on the donor's whole chain and
    the target's other residues are left out of the model (nothing to build).
    """
    L, M = target.n_residues, donor.n_residues
    names = ["N", "CA", "C", "O"]
    if M >= L:
        idx, lead, tail = np.arange(start, start + L), 0, 0
    elif offset is not None:
        if not 0 <= offset <= L - M:
            raise ValueError(f"offset {offset} outside 0..{L - M}")
        lead, tail = int(offset), L - M - int(offset)
        idx = np.arange(M)
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
    if offset is not None and M < L:
        return ens, ([], [])
    rn = [str(x) for x in target.res_name]
    return ens, (rn[:lead], rn[L - tail:] if tail else [])


def with_native_side_chains(target, bb, first: int = 0):
    """Full heavy-atom threaded model: the backbone ``bb`` (thread_backbone's output, residues
    first.. of ``target``) plus ``target``'s side-chain atoms moved rigidly with each residue's
    N, CA, C frame (least-squares superposition of the three atoms, Kabsch 1976), so every
    residue keeps the native's side-chain torsions; the minimiser then relieves the clashes.
    (Building all side chains with PDBFixer took minutes per model for the 150-220-residue
    proteins.) Residues lacking N, CA or C keep the backbone only."""
    n = bb.n_residues
    ri = np.arange(n)
    frame_t = np.stack([target.xyz(ri + first, a)[0] for a in ("N", "CA", "C")], axis=1)   # (n, 3, 3)
    frame_b = np.stack([bb.xyz(ri, a)[0] for a in ("N", "CA", "C")], axis=1)
    ok = np.isfinite(frame_t).all(axis=(1, 2)) & np.isfinite(frame_b).all(axis=(1, 2))
    ct, cb = frame_t.mean(axis=1), frame_b.mean(axis=1)
    H = np.einsum("rai,raj->rij", np.nan_to_num(frame_t - ct[:, None]), np.nan_to_num(frame_b - cb[:, None]))
    U, _, Vt = np.linalg.svd(H)
    dets = np.sign(np.linalg.det(np.einsum("rji,rkj->rik", Vt, U)))
    dets[dets == 0] = 1.0
    D = np.tile(np.eye(3), (n, 1, 1))
    D[:, 2, 2] = dets
    R = np.einsum("rji,rjk,rlk->ril", Vt, D, U)          # rotation taking target frame to bb
    names = target.atom_name.astype(str)
    sel = ((target.atom_res >= first) & (target.atom_res < first + n)
           & ~np.isin(names, ["N", "CA", "C", "O", "OXT"]))
    sel &= ok[np.clip(target.atom_res - first, 0, n - 1)]
    sidx = np.flatnonzero(sel)
    r = target.atom_res[sidx] - first
    moved = np.einsum("aij,aj->ai", R[r], target.coords[0, sidx] - ct[r]) + cb[r]
    atom_res = np.concatenate([bb.atom_res, r])
    order = np.lexsort((np.arange(atom_res.size), atom_res))
    return dataclasses.replace(
        bb, atom_res=atom_res[order],
        atom_name=np.concatenate([bb.atom_name.astype(object), target.atom_name[sidx].astype(object)])[order],
        element=np.concatenate([bb.element.astype(object), target.element[sidx].astype(object)])[order],
        coords=np.concatenate([bb.coords, moved[None]], axis=1)[:, order],
        built=np.zeros(order.size, bool), _index=None)


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


def ladder_candidates(nat, n_pool: int, rng, sigma_range: tuple[float, float] = (0.3, 12.0)):
    """Perturbation-ladder candidates: Gaussian noise on every residue's phi and psi.

    Candidate k gets phi/psi changes drawn from N(0, sigma_k^2), sigma_k log-uniform in
    ``sigma_range`` (degrees) times sqrt(76 / n_residues) (a longer chain amplifies the same
    noise into a larger change of the fold). Returns ((n_pool, n_atoms, 3) coordinates,
    (n_pool,) sigma in degrees, (n_pool, n_res) dphi, (n_pool, n_res) dpsi as applied;
    proline phi is not changed).
    """
    nres = nat.n_residues
    lo, hi = np.log(sigma_range[0]), np.log(sigma_range[1])
    sig = np.exp(rng.uniform(lo, hi, n_pool)) * np.sqrt(76.0 / max(nres, 1))
    dphi = rng.normal(0.0, 1.0, (n_pool, nres)) * sig[:, None]
    dpsi = rng.normal(0.0, 1.0, (n_pool, nres)) * sig[:, None]
    dphi[:, nat.res_name.astype(str) == "PRO"] = 0.0      # proline phi stays (its ring closes on N)
    xyz = rotate_torsions(nat, np.repeat(nat.coords, n_pool, axis=0), dphi, dpsi)
    return xyz, sig, dphi, dpsi


def _read(path: Path, native, first: int = 0):
    """Read a minimised model back with the native's residue numbering (a model of a part of
    the chain starts at native residue index ``first``)."""
    from shiftcheck.io.coords import read_models

    ens = read_models([path])[0]
    n = ens.n_residues
    if first + n <= native.n_residues:
        ens = dataclasses.replace(ens, res_seq=native.res_seq[first:first + n].copy(),
                                  res_icode=native.res_icode[first:first + n].copy(),
                                  chain_id=native.chain_id, _index=None)
    return ens


def _ca(ens):
    return ens.xyz(np.arange(ens.n_residues), "CA")[0]


def _record(path: Path, native, kind: str, energy: float, extra: dict) -> tuple[dict, object]:
    from shiftcheck.structure.quality import geometry_summary

    first = int(extra.get("first_residue", 0))
    ens = _read(path, native, first)
    geo = geometry_summary(ens)[0]
    ca, ca0 = _ca(ens), _ca(native)
    full = int(np.isfinite(ca0).all(1).sum())        # TM normalised by the native's length
    ca0 = ca0[first:first + ens.n_residues]
    ok = np.isfinite(ca).all(1) & np.isfinite(ca0).all(1)
    rec = {"file": path.name, "kind": kind, "energy_kj_mol": round(energy, 1),
           "ca_rmsd": round(float(kabsch_rmsd(ca[None, ok], ca0[ok])[0]), 3),
           "tm_score": round(float(tm_score(ca[ok], ca0[ok], length=full)), 4),
           "residues": int(ens.n_residues), "geometry": geo, **extra}
    return rec, ens


_NATIVES: dict = {}


def _donors(root: Path, folder: str) -> list[tuple[str, object]]:
    """Backbone donors: the other training proteins' natives, closest in length first."""
    out = []
    for f in TRAINING:
        if f == folder:
            continue
        if (root, f) not in _NATIVES:
            _NATIVES[(root, f)] = load_native(root, f)
        out.append((f"{f}/{native_path(root, f).name}", _NATIVES[(root, f)]))
    L = load_native(root, folder).n_residues
    out.sort(key=lambda x: (abs(x[1].n_residues - L), x[0]))
    return out


def _minimise_checked(model, d: Path, name: str, native, kind: str, extra: dict, man: dict,
                      threads: int, terminal=([], [])):
    """Minimise, record, keep if the geometry rule does not flag it; returns the record or None."""
    e = minimise(_pdb_text(model), d / name, terminal=terminal, threads=threads)
    rec, _ = _record(d / name, native, kind, e, extra)
    if rec["geometry"]["bad"]:
        man["rejected"].append(rec)
        (d / name).unlink(missing_ok=True)
        return None
    man["models"].append(rec)
    return rec


def make_protein_decoys(root: Path, folder: str, out: Path, n_torsion: int = 4, n_thread: int = 3,
                        seed: int = 11, pool: int = 64, max_rmsd: float = 12.0, max_thread_tries: int = 6,
                        ladder: bool = True, ladder_pool: int = 40, min_donor_fraction: float = 0.6,
                        threads: int = 2, log=print) -> dict:
    """All decoys of one protein into ``out / folder``; returns the manifest."""
    from shiftcheck.structure.quality import chain_breaks, clash_pairs, rama_outliers

    t0 = time.time()
    d = out / folder
    d.mkdir(parents=True, exist_ok=True)
    for old in d.glob("*.pdb"):
        old.unlink()
    native = load_native(root, folder)
    rng = np.random.default_rng([seed, sum(map(ord, folder))])
    man = {"folder": folder, "native": native_path(root, folder).name, "chain": TRAINING[folder][2],
           "native_model": 1, "seed": seed, "models": [], "rejected": []}
    e = minimise(_pdb_text(native), d / "native_min.pdb", threads=threads)
    rec, _ = _record(d / "native_min.pdb", native, "native_min", e, {})
    man["models"].append(rec)
    ca_idx = native.indices(np.arange(native.n_residues), "CA")
    ca_idx = ca_idx[ca_idx >= 0]
    # torsion decoys: pre-rank by clashes, spread over RMSD bins
    xyz, kinds = torsion_candidates(native, pool, rng)
    cand = dataclasses.replace(native, coords=xyz, model_names=[f"c{k}" for k in range(pool)], _index=None)
    rmsd = kabsch_rmsd(xyz[:, ca_idx], native.coords[0, ca_idx])
    cl = np.bincount(clash_pairs(cand)["model"], minlength=pool)
    usable = np.flatnonzero((rmsd >= 1.0) & (rmsd <= max_rmsd))
    bins = np.array_split(usable[np.argsort(rmsd[usable])], n_torsion)
    for b, members in enumerate(bins):
        for c in sorted(members, key=lambda c: cl[c])[:3]:
            ens = dataclasses.replace(native, coords=xyz[[c]], model_names=["t"], _index=None)
            if _minimise_checked(ens, d, f"torsion_{b + 1:02d}.pdb", native, "torsion",
                                 {"subkind": kinds[c], "candidate": int(c),
                                  "ca_rmsd_before": round(float(rmsd[c]), 3),
                                  "clashes_before": int(cl[c])}, man, threads):
                break
    # perturbation ladder: noise on every phi/psi; one rung per TM bin (TM before minimisation),
    # fewest heavy-atom clashes first, up to 3 tries per rung (own random stream)
    n_ladder = 0
    if ladder:
        lrng = np.random.default_rng([seed, sum(map(ord, folder)), 2])
        xyz, sig, _, _ = ladder_candidates(native, ladder_pool, lrng)
        cand = dataclasses.replace(native, coords=xyz, model_names=[f"l{k}" for k in range(ladder_pool)],
                                   _index=None)
        cl = np.bincount(clash_pairs(cand)["model"], minlength=ladder_pool)
        ca0 = native.coords[0, ca_idx]
        tm0 = np.array([tm_score(xyz[k, ca_idx], ca0, n_iter=4) for k in range(ladder_pool)])
        edges = LADDER_TM_EDGES
        for b in range(len(edges) - 1, 0, -1):
            members = np.flatnonzero((tm0 >= edges[b - 1]) & (tm0 < edges[b]))
            for c in sorted(members, key=lambda c: cl[c])[:3]:
                ens = dataclasses.replace(native, coords=xyz[[c]], model_names=["l"], _index=None)
                if _minimise_checked(ens, d, f"ladder_{len(edges) - b:02d}.pdb", native, "ladder",
                                     {"sigma_deg": round(float(sig[c]), 3), "candidate": int(c),
                                      "tm_before": round(float(tm0[c]), 4),
                                      "clashes_before": int(cl[c])}, man, threads):
                    n_ladder += 1
                    break
    # threaded wrong folds: windows ranked by Ramachandran outliers of the native sequence on
    # the donor's phi/psi (before any building), one window per donor, fewest outliers first.
    # Donors at least as long as the native first; shorter donors (>= min_donor_fraction of the
    # native) fill up when there are too few: the native's residues offset..offset+M-1 on the
    # donor's whole chain, the native's other residues left out of the model.
    L = native.n_residues
    windows = []
    for rel, donor in _donors(root, folder):
        M = donor.n_residues
        if M < min_donor_fraction * L:
            continue
        best = None
        if M >= L:
            tries = [(int(s), None) for s in range(0, M - L + 1, 2)]
        else:
            tries = [(0, int(o)) for o in range(0, L - M + 1, 2)]
        for s, o in tries:
            bb, term = thread_backbone(native, donor, s, offset=o)
            if chain_breaks(bb).any():
                continue
            n_out = int(rama_outliers(bb)[0].sum())
            if best is None or n_out < best[0]:
                best = (n_out, s, o, rel, bb, term, M >= L)
        if best:
            windows.append(best)
    windows.sort(key=lambda w: (not w[6], w[0] / w[4].n_residues, w[3]))
    made = 0
    for n_out, s, o, rel, bb, term, full in windows[:max_thread_tries]:
        if made >= n_thread:
            break
        extra = {"donor": rel, "start": s, "rama_outliers_before": n_out, "built_terminal": 0,
                 "side_chains": "native, moved with the residue frame"}
        if o is not None:
            extra["first_residue"] = o
        bb = with_native_side_chains(native, bb, o or 0)
        if _minimise_checked(bb, d, f"thread_{made + 1:02d}.pdb", native, "thread", extra, man, threads):
            made += 1
    man["seconds"] = round(time.time() - t0, 1)
    (d / "manifest.json").write_text(json.dumps(man, indent=1) + "\n")
    log(f"{folder}: {len(man['models'])} models ({sum(m['kind'] == 'torsion' for m in man['models'])} "
        f"torsion, {n_ladder} ladder, {made} threaded), {len(man['rejected'])} rejected, {man['seconds']} s")
    return man


def _one(job):
    root, folder, out, kw = job
    try:
        make_protein_decoys(Path(root), folder, Path(out), log=lambda s: print(s, flush=True), **kw)
    except Exception as exc:  # one protein failing must not lose the others
        print(f"{folder}: FAILED {type(exc).__name__}: {exc}", flush=True)
        return folder, False
    return folder, True


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--realdata", default=os.environ.get("SHIFTCHECK_REALDATA", "../shared/realdata"))
    ap.add_argument("--out", default=str(Path(__file__).resolve().parents[1] / ".cache" / "decoys"))
    ap.add_argument("--only", nargs="*", default=None)
    ap.add_argument("--n-torsion", type=int, default=4)
    ap.add_argument("--n-thread", type=int, default=3)
    ap.add_argument("--no-ladder", action="store_true")
    ap.add_argument("--seed", type=int, default=11)
    ap.add_argument("--jobs", type=int, default=2, help="proteins minimised in parallel (1 thread each)")
    ap.add_argument("--skip-done", action="store_true",
                    help="leave out proteins whose manifest.json already exists (resume a run)")
    a = ap.parse_args(argv)
    t0 = time.time()
    folders = a.only or list(TRAINING)
    if a.skip_done:
        folders = [f for f in folders if not (Path(a.out) / f / "manifest.json").exists()]
    jobs = max(1, a.jobs)
    kw = {"n_torsion": a.n_torsion, "n_thread": a.n_thread, "seed": a.seed, "ladder": not a.no_ladder,
          "threads": 1 if jobs > 1 else 2}
    todo = [(a.realdata, f, a.out, kw) for f in folders]
    if jobs > 1:
        import multiprocessing as mp

        # largest first, so the two workers finish together
        size = {f: load_native(Path(a.realdata), f).n_residues for f in folders}
        todo.sort(key=lambda j: -size[j[1]])
        with mp.get_context("fork").Pool(jobs) as pool:
            done = pool.map(_one, todo, chunksize=1)
    else:
        done = [_one(j) for j in todo]
    wall = round(time.time() - t0, 1)
    summary = Path(a.out) / "summary.json"
    prev = json.loads(summary.read_text()) if summary.exists() else {}
    runs = prev.get("runs", [])
    runs.append({"folders": folders, "jobs": jobs, "wall_seconds": wall,
                 "failed": [f for f, ok in done if not ok]})
    summary.write_text(json.dumps({"runs": runs}, indent=1) + "\n")
    print(f"wall time {wall / 60:.1f} min ({jobs} jobs)", flush=True)
    return 0 if all(ok for _, ok in done) else 1


if __name__ == "__main__":
    sys.exit(main())
