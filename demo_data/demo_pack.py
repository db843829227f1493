"""Side-chain packing and clash pairs for the INVENTED demo models (used only by make_demo.py).

Rotamers come from a small library typed in from memory (demo_data/rotamers.json, after Lovell
et al. 2000, Proteins 40:389), each also tried ±15° off its modal χ1/χ2. Residues are packed
greedily: every candidate rotamer of one residue is built at once (NeRF, vectorised over the
candidates), its side-chain atoms are matched with the rest of the model by a k-d tree
(scipy cKDTree.sparse_distance_matrix), and the candidate with the least clash penalty (plus a
small penalty for rare rotamers) is kept. The first pass sees only the backbone, Cβ atoms and
side chains already placed; later passes see everything.

The clash criterion is that of shiftcheck.structure.quality (Bondi radii, overlap 0.4 Å, atoms
more than three bonds apart, N/O pairs below 2.5 Å), penalised already ``margin`` Å before it
is reached so that the models end up clear of it, not on its edge.
"""
from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path

import numpy as np
from scipy.spatial import cKDTree

from shiftcheck.structure.builder import build_protein, default_chis, geometry_table, place_atom
from shiftcheck.structure.quality import bonded_within, constants

__all__ = ["pack_sidechains", "ClashModel"]

HERE = Path(__file__).resolve().parent
BACKBONE = ("N", "CA", "C", "O", "CB", "OXT")
MARGIN = 0.3          # Å kept clear of the clash limit (design choice for the demo, no source)
RARE_WEIGHT = 0.05    # penalty per unit of -ln(relative rotamer frequency) (design choice)
OFF_WEIGHT = 0.02     # penalty of an expanded (±15°) rotamer (design choice)


@lru_cache(maxsize=1)
def _library() -> dict:
    return json.loads((HERE / "rotamers.json").read_text())


def _candidates(res: str) -> tuple[np.ndarray, np.ndarray]:
    """Candidate χ (k, 4) and their prior penalties (k,) for one residue type."""
    lib = _library()
    rots = lib["rotamers"].get(res)
    if not rots:
        return np.zeros((0, 4)), np.zeros(0)
    top = max(p for _, p in rots)
    steps = lib["expansion_deg"]["value"] if res != "PRO" else [0.0]
    chis, pen = [], []
    for chi, p in rots:
        for d1 in steps:
            for d2 in (steps if len(chi) > 1 else [0.0]):
                c = np.full(4, 180.0)
                c[:len(chi)] = chi
                c[0] += d1
                if len(chi) > 1:
                    c[1] += d2
                chis.append(c)
                pen.append(RARE_WEIGHT * np.log(top / p) + OFF_WEIGHT * ((d1 != 0) + (d2 != 0)))
    return np.array(chis), np.array(pen)


class ClashModel:
    """Clash limits of one sequence's atoms (topology from a built model; same for all models)."""

    def __init__(self, ens) -> None:
        c = constants()
        el = np.char.upper(ens.element.astype(str))
        radii = c["vdw_radius"]
        default = float(c["vdw_radius_default"]["value"])
        self.rad = np.array([float(radii.get(e.capitalize(), radii.get(e, default))) for e in el])
        self.polar = np.isin(el, ["N", "O"])
        self.overlap = float(c["clash_overlap"]["value"])
        self.polar_min = float(c["polar_contact_min"]["value"])
        self.excl = bonded_within(ens).toarray() > 0
        self.rmax = 2 * float(self.rad.max()) - self.overlap + MARGIN

    def limit(self, i: np.ndarray, j: np.ndarray) -> np.ndarray:
        """Clash limit (Å) of atom pairs i, j (the quality criterion)."""
        lim = self.rad[i] + self.rad[j] - self.overlap
        return np.where(self.polar[i] & self.polar[j], np.minimum(lim, self.polar_min), lim)

    def pairs(self, x: np.ndarray, cutoff: float = 6.0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Non-excluded pairs within ``cutoff`` in coordinates x (n, 3): i, j, target distance."""
        p = cKDTree(x).query_pairs(cutoff, output_type="ndarray")
        p = p[~self.excl[p[:, 0], p[:, 1]]]
        return p[:, 0], p[:, 1], self.limit(p[:, 0], p[:, 1]) + MARGIN


def _sidechain_stack(rn: str, x: np.ndarray, idx: dict, chis: np.ndarray) -> np.ndarray:
    """Side-chain atoms beyond CB for k candidate χ sets: (k, m, 3), builder order."""
    k = chis.shape[0]
    atoms = {a: np.broadcast_to(x[idx[a]], (k, 3)) for a in ("N", "CA", "C", "CB")}
    out = []
    for atom, ra, rb, rc, bond, angle, src, off in geometry_table()["sidechain"][rn]:
        tor = off if not src else chis[:, int(src[3:]) - 1] + off
        atoms[atom] = place_atom(atoms[ra], atoms[rb], atoms[rc], bond, angle, tor)
        out.append(atoms[atom])
    return np.stack(out, axis=1)


def pack_sidechains(seq: list[str], phi: np.ndarray, psi: np.ndarray, rng: np.random.Generator,
                    start: np.ndarray | None = None, passes: int = 4) -> np.ndarray:
    """Greedy rotamer packing against the backbone and the other side chains; returns χ (n_res, 4).

    With ``start`` the first pass already sees every side chain (a repacking); without it the
    first pass places side chains one by one in a random (seeded) order.
    """
    chi = default_chis(seq) if start is None else np.array(start, dtype=float)
    ens = build_protein(seq, phi, psi, chi=chi)
    cm = ClashModel(ens)
    x = ens.coords[0].copy()
    names = ens.atom_name.astype(str)
    is_sc = ~np.isin(names, BACKBONE)
    order = [i for i, r in enumerate(seq) if _candidates(r)[0].shape[0] > 1]
    placed = np.ones(len(seq), bool) if start is not None else np.zeros(len(seq), bool)
    placed[[i for i in range(len(seq)) if i not in order]] = True
    for it in range(passes):
        changed = False
        for i in rng.permutation(order):
            own = (ens.atom_res == i)
            sc = np.flatnonzero(own & is_sc)
            idx = {a: int(np.flatnonzero(own & (names == a))[0]) for a in ("N", "CA", "C", "CB")}
            cands, prior = _candidates(seq[i])
            P = _sidechain_stack(seq[i], x, idx, cands)                 # (k, m, 3)
            k, m = P.shape[:2]
            env = np.flatnonzero(~(is_sc & ~placed[ens.atom_res]) & ~(own & is_sc))
            a, b, d = _sdm(P.reshape(-1, 3), x[env], cm.rmax)
            g, e = sc[a % m], env[b]
            keep = ~cm.excl[g, e]
            viol = np.clip(cm.limit(g, e) + MARGIN - d, 0.0, None) ** 2 * keep
            score = np.bincount(a // m, weights=viol, minlength=k) + prior
            # pairs inside the side chain (e.g. Lys NZ to CB are four bonds apart)
            ii, jj = np.triu_indices(m, 1)
            inner = ~cm.excl[sc[ii], sc[jj]]
            if inner.any():
                ii, jj = ii[inner], jj[inner]
                dd = np.linalg.norm(P[:, ii] - P[:, jj], axis=-1)
                score += np.sum(np.clip(cm.limit(sc[ii], sc[jj]) + MARGIN - dd, 0.0, None) ** 2, axis=1)
            best = int(np.argmin(score))
            new = cands[best]
            changed |= bool(placed[i] and not np.allclose(new, chi[i]))
            chi[i] = new
            x[sc] = P[best]
            placed[i] = True
        if not changed and it > 0:
            break
    return chi


def _sdm(a: np.ndarray, b: np.ndarray, r: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """All pairs (index into a, index into b, distance) closer than r (k-d trees)."""
    s = cKDTree(a).sparse_distance_matrix(cKDTree(b), r, output_type="coo_matrix")
    return s.row, s.col, s.data
