"""Decoys of a native structure by backbone-torsion perturbation (for fold-selection validation).

These raw torsion decoys are NOT minimised and can interpenetrate (many heavy atoms closer than
2 A; see shiftcheck.structure.quality). docs/validation.md's fold-selection tables use the
minimised, geometry-checked decoys of tools/plausible_decoys.py, which reuses the rotation and
superposition code here.

A change of phi(i) rotates every atom downstream of the N(i)-CA(i) bond about that bond; a change
of psi(i) rotates every atom downstream of CA(i)-C(i). Changes are applied from the C-terminus
to the N-terminus so each rotation carries the later ones rigidly. Vectorised over decoys: one
(n_decoys, 3, 3) rotation stack per torsion.

Two kinds (ideas as in /work/shared/science.md "How to test fold selection"):
* ``tertiary``: only loop residues (secondary structure 'C' by shiftcheck.score.secondary) get
  random phi/psi changes; helices and strands keep their native conformation.
* ``secondary``: one segment is rewritten to helix (-63, -42) or strand (-120, 130) values.
Candidates with CA-CA contacts < 3.0 A between residues >= 3 apart (chain crossing itself) are
rejected (common practice, no source). Among the rest, decoys are picked to spread evenly over
1-15 A CA-RMSD (Kabsch superposition).

Usage: python tools/make_decoys.py NATIVE.pdb -o DECOYS.pdb [--n 24] [--seed 1]
"""
from __future__ import annotations

import argparse
import dataclasses
import sys

import numpy as np
from scipy.spatial.distance import pdist

__all__ = ["rotate_torsions", "kabsch_rmsd", "make_decoys", "write_pdb"]

HELIX = (-63.0, -42.0)
STRAND = (-120.0, 130.0)


def _rotation(axis: np.ndarray, angle: np.ndarray) -> np.ndarray:
    """Rodrigues rotation matrices (k, 3, 3) about unit axes (k, 3) by angles (k,) in radians."""
    x, y, z = axis[:, 0], axis[:, 1], axis[:, 2]
    c, s = np.cos(angle), np.sin(angle)
    t = 1 - c
    return np.stack([np.stack([t * x * x + c, t * x * y - s * z, t * x * z + s * y], -1),
                     np.stack([t * x * y + s * z, t * y * y + c, t * y * z - s * x], -1),
                     np.stack([t * x * z - s * y, t * y * z + s * x, t * z * z + c], -1)], 1)


def rotate_torsions(ens, coords: np.ndarray, dphi: np.ndarray, dpsi: np.ndarray) -> np.ndarray:
    """Apply torsion changes (degrees, (n_decoys, n_res)) to coordinates (n_decoys, n_atoms, 3).

    Proline phi is never changed (its ring closes on N). Returns a new array.
    """
    xyz = np.array(coords, dtype=float, copy=True)
    res, name = ens.atom_res, ens.atom_name.astype(str)
    dphi = np.where((ens.res_name == "PRO")[None, :], 0.0, dphi)
    on_n = np.isin(name, ["N", "H", "CA", "H1", "H2", "H3"])
    for i in range(ens.n_residues - 1, -1, -1):
        for kind, delta in (("psi", dpsi[:, i]), ("phi", dphi[:, i])):
            if not np.any(delta):
                continue
            a, b = (("CA", "C") if kind == "psi" else ("N", "CA"))
            ia, ib = ens.index(i, a), ens.index(i, b)
            if ia < 0 or ib < 0:
                continue
            if kind == "psi":
                move = (res > i) | ((res == i) & np.isin(name, ["O", "OXT"]))
            else:
                move = (res > i) | ((res == i) & ~on_n)
            pa, pb = xyz[:, ia], xyz[:, ib]
            axis = pb - pa
            axis /= np.linalg.norm(axis, axis=1, keepdims=True)
            R = _rotation(axis, np.radians(delta))
            sub = xyz[:, move] - pb[:, None, :]
            xyz[:, move] = np.einsum("kij,knj->kni", R, sub) + pb[:, None, :]
    return xyz


def kabsch_rmsd(P: np.ndarray, Q: np.ndarray) -> np.ndarray:
    """RMSD after optimal superposition (Kabsch 1976, Acta Cryst. A32:922) of each P[k] onto Q.

    P : (k, n, 3), Q : (n, 3); NaN rows are ignored (same mask for all).
    """
    ok = np.all(np.isfinite(Q), axis=1) & np.all(np.isfinite(P), axis=(0, 2))
    P, Q = P[:, ok], Q[ok]
    Pc = P - P.mean(axis=1, keepdims=True)
    Qc = Q - Q.mean(axis=0)
    H = np.einsum("kni,nj->kij", Pc, Qc)
    U, S, Vt = np.linalg.svd(H)
    d = np.sign(np.linalg.det(np.einsum("kij,kjl->kil", U, Vt)))
    S[:, -1] *= d
    e = (Pc ** 2).sum(axis=(1, 2)) + (Qc ** 2).sum() - 2 * S.sum(axis=1)
    return np.sqrt(np.maximum(e, 0) / ok.sum())


def _wrap(a):
    return (a + 180.0) % 360.0 - 180.0


def make_decoys(native, n: int = 24, seed: int = 1, pool: int = 12, max_rmsd: float = 15.0,
                min_rmsd: float = 1.0):
    """Decoys of model 0 of ``native``: returns (Ensemble of decoys, CA-RMSD (n,), kinds list).

    Half ``tertiary``, half ``secondary``; picked from a pool of ``pool * n`` candidates to cover
    ``min_rmsd``-``max_rmsd`` A evenly (nearest candidate to each target value, without repeats).
    Candidates closer than ``min_rmsd`` to the native are not decoys (they are the native fold
    within the precision of a structure) and are never picked.
    """
    from shiftcheck.score.secondary import assign_secondary
    from shiftcheck.structure.geometry import backbone_torsions

    rng = np.random.default_rng(seed)
    nat = native.select_models([0])
    ss = assign_secondary(nat)[0]
    tor = backbone_torsions(nat)
    phi0, psi0 = np.nan_to_num(tor["phi"][0]), np.nan_to_num(tor["psi"][0])
    nres = nat.n_residues
    loops = np.flatnonzero(np.array(list(ss)) == "C")
    m = pool * n
    kinds = np.array(["tertiary"] * (m // 2) + ["secondary"] * (m - m // 2))
    dphi = np.zeros((m, nres))
    dpsi = np.zeros((m, nres))
    for k in range(m):
        if kinds[k] == "tertiary":
            amp = rng.uniform(5, 120)
            pick = rng.choice(loops, size=max(1, int(rng.uniform(0.1, 0.6) * len(loops))), replace=False)
            dphi[k, pick] = rng.uniform(-amp, amp, pick.size)
            dpsi[k, pick] = rng.uniform(-amp, amp, pick.size)
        else:
            length = int(rng.integers(5, max(6, min(30, nres // 2))))
            start = int(rng.integers(1, max(2, nres - length - 1)))
            target = HELIX if rng.random() < 0.5 else STRAND
            seg = slice(start, start + length)
            dphi[k, seg] = _wrap(target[0] - phi0[seg])
            dpsi[k, seg] = _wrap(target[1] - psi0[seg])
    ca = nat.indices(np.arange(nres), "CA")
    xyz = rotate_torsions(nat, np.repeat(nat.coords, m, axis=0), dphi, dpsi)
    cas = xyz[:, ca[ca >= 0]]
    rmsd = kabsch_rmsd(cas, nat.coords[0, ca[ca >= 0]])
    sep = np.abs(np.subtract.outer(np.arange(cas.shape[1]), np.arange(cas.shape[1])))
    far = sep[np.triu_indices(cas.shape[1], 1)] >= 3
    clash = np.array([np.nanmin(np.where(far, pdist(c), np.inf)) < 3.0 for c in cas])
    chosen = []
    for half in ("tertiary", "secondary"):
        cand = np.flatnonzero((kinds == half) & ~clash & (rmsd >= min_rmsd))
        targets = np.linspace(min_rmsd, max_rmsd, n // 2 if half == "tertiary" else n - n // 2)
        for t in targets:
            free = [c for c in cand if c not in chosen]
            if not free:
                break
            chosen.append(min(free, key=lambda c: abs(rmsd[c] - t)))
    spare = [c for c in np.flatnonzero(~clash & (rmsd >= min_rmsd)) if c not in chosen]
    while len(chosen) < n and spare:      # one kind short of candidates: fill from the other
        t = np.linspace(min_rmsd, max_rmsd, n)[len(chosen)]
        c = min(spare, key=lambda c: abs(rmsd[c] - t))
        chosen.append(c)
        spare.remove(c)
    chosen = np.array(chosen, dtype=int)
    names = [f"decoy{j + 1:02d}_{kinds[c][:3]}" for j, c in enumerate(chosen)]
    dec = dataclasses.replace(nat, coords=xyz[chosen], model_names=names, name="decoys",
                              warnings=[], _index=None)
    return dec, rmsd[chosen], [str(kinds[c]) for c in chosen]


def write_pdb(ens, path: str) -> None:
    """Minimal multi-model PDB writer (ATOM records; heavy atoms and hydrogens)."""
    lines = []
    for m in range(ens.n_models):
        lines.append(f"MODEL     {m + 1:4d}")
        for a in range(ens.n_atoms):
            x, y, z = ens.coords[m, a]
            if not np.all(np.isfinite((x, y, z))):
                continue
            r = ens.atom_res[a]
            nm = str(ens.atom_name[a])
            nm = nm if len(nm) == 4 else " " + nm
            lines.append(f"ATOM  {a + 1:5d} {nm:<4s} {ens.res_name[r]:>3s} {ens.chain_id[:1] or 'A'}"
                         f"{int(ens.res_seq[r]):4d}    {x:8.3f}{y:8.3f}{z:8.3f}  1.00  0.00"
                         f"          {str(ens.element[a]):>2s}")
        lines.append("ENDMDL")
    lines.append("END")
    with open(path, "w") as fh:
        fh.write("\n".join(lines) + "\n")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("native")
    ap.add_argument("-o", "--output", required=True)
    ap.add_argument("--n", type=int, default=24)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--chain")
    a = ap.parse_args(argv)
    from shiftcheck.io.coords import read_models

    nat = read_models([a.native], chain=a.chain)[0]
    dec, rmsd, kinds = make_decoys(nat, a.n, a.seed)
    write_pdb(dec, a.output)
    for name, r, k in zip(dec.model_names, rmsd, kinds):
        print(f"{name}\t{k}\t{r:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
