"""Fold an invented protein in torsion space: a small restrained Monte Carlo over loop torsions.

Used only by make_demo.py to make the INVENTED demo scenario. Secondary-structure elements keep
ideal torsions (helix φ/ψ = -63/-42, strands near -120/130, small jitter allowed in strands); loop
residues move between Ramachandran basins. The energy rewards the designed strand pairings
(flat-bottom CA-CA restraints), element packing (centroid distances), compactness (radius of
gyration) and inward-pointing core side chains, and penalises CA/CB clashes. Many chains are run
at once (the builder is vectorised over models), with simulated annealing.
All numbers here are design choices for the demo (common practice, no source).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from shiftcheck.structure.builder import build_backbone, geometry_table, place_atom

from demo_pack import ClashModel

__all__ = ["Design", "fold", "polish", "refine", "kabsch_rmsd", "ss_torsions"]

HELIX = (-63.0, -42.0)
STRAND = (-120.0, 130.0)
# loop basins (phi, psi): alpha-R, beta, PPII, alpha-L (Gly/Asn/Asp only)
BASINS = np.array([[-65.0, -40.0], [-120.0, 130.0], [-70.0, 145.0], [75.0, 20.0]])


@dataclass
class Design:
    """What a model should look like: secondary structure, restraints, core residues (0-based)."""

    sequence: list[str]
    ss: str                                   # 'H' helix, 'E' strand, 'T' fixed turn, '-' loop
    pairs: list[tuple[int, int, float]]       # CA-CA upper bounds (i, j, dmax)
    centroid_bounds: list[tuple[tuple[int, int], tuple[int, int], float, float]] = field(default_factory=list)
    core: list[int] = field(default_factory=list)
    turn_torsions: dict[int, tuple[float, float]] = field(default_factory=dict)
    rg_max: float = 11.5


def ss_torsions(design: Design) -> tuple[np.ndarray, np.ndarray]:
    """Starting φ/ψ from the secondary structure string (loops start as PPII)."""
    n = len(design.ss)
    phi = np.full(n, -70.0)
    psi = np.full(n, 145.0)
    for i, s in enumerate(design.ss):
        if s == "H":
            phi[i], psi[i] = HELIX
        elif s == "E":
            phi[i], psi[i] = STRAND
    for i, (f, p) in design.turn_torsions.items():
        phi[i], psi[i] = f, p
    for i, r in enumerate(design.sequence):
        if r == "PRO":
            phi[i] = -65.0
    return phi, psi


def _cb(bb: dict) -> np.ndarray:
    g = geometry_table()["backbone"]
    return place_atom(bb["C"], bb["N"], bb["CA"], g["bond"]["CA-CB"], g["angle"]["N-CA-CB"],
                      g["torsion"]["C-N-CA-CB"])


@lru_cache(maxsize=8)
def _clash_pairs(n: int, gly_bytes: bytes) -> tuple[np.ndarray, ...]:
    """Index pairs into (CA..., CB...), squared contact limits (Å²) and weights."""
    is_gly = np.frombuffer(gly_bytes, dtype=bool)
    i = np.arange(2 * n) % n
    sep = np.abs(i[:, None] - i[None, :])
    is_cb = np.arange(2 * n) >= n
    lim = np.where(is_cb[:, None] | is_cb[None, :], 3.6, 4.0)
    lim = np.where(is_cb[:, None] & is_cb[None, :], 3.8, lim)
    w = np.where(sep >= 3, 10.0, 0.0)
    w = np.where((sep == 2) & (is_cb[:, None] | is_cb[None, :]), 10.0, w)
    gly = np.concatenate([np.zeros(n, bool), is_gly])
    w[gly, :] = 0.0
    w[:, gly] = 0.0
    I, J = np.nonzero(np.triu(w) > 0)
    return I, J, lim[I, J] ** 2, w[I, J]


def _energy(design: Design, phi: np.ndarray, psi: np.ndarray, is_gly: np.ndarray) -> np.ndarray:
    bb = build_backbone(phi, psi, oxt=False)
    ca, cb = bb["CA"], _cb(bb)
    n = ca.shape[1]
    pts = np.concatenate([ca, cb], axis=1)                       # (K, 2n, 3)
    sq = np.sum(pts * pts, -1)
    I, J, lim2, w = _clash_pairs(n, is_gly.tobytes())
    d2 = sq[:, I] + sq[:, J] - 2.0 * np.einsum("kpx,kpx->kp", pts[:, I], pts[:, J])
    close = d2 < lim2
    e = np.zeros(pts.shape[0])
    if close.any():
        k, p = np.nonzero(close)
        viol = (np.sqrt(lim2[p]) - np.sqrt(np.clip(d2[k, p], 0.0, None))) ** 2 * w[p]
        e = np.bincount(k, weights=viol, minlength=pts.shape[0])
    if design.pairs:
        pi, pj, pm = (np.array(x) for x in zip(*design.pairs))
        dp = np.linalg.norm(ca[:, pi] - ca[:, pj], axis=-1)
        e += np.sum(np.clip(dp - pm, 0, None) ** 2, axis=1)
    for (a0, a1), (b0, b1), lo, hi in design.centroid_bounds:
        dc = np.linalg.norm(ca[:, a0:a1].mean(1) - ca[:, b0:b1].mean(1), axis=-1)
        e += np.clip(dc - hi, 0, None) ** 2 + np.clip(lo - dc, 0, None) ** 2
    centre = ca.mean(1, keepdims=True)
    rg = np.sqrt(np.mean(np.sum((ca - centre) ** 2, -1), 1))
    e += 2.0 * np.clip(rg - design.rg_max, 0, None) ** 2
    if design.core:
        c = np.array(design.core)
        out = np.linalg.norm(cb[:, c] - centre, axis=-1) - np.linalg.norm(ca[:, c] - centre, axis=-1)
        e += 2.0 * np.sum(np.clip(out + 0.5, 0, None) ** 2, axis=1)
    return e


def fold(design: Design, rng: np.random.Generator, n_chains: int = 24, n_steps: int = 1500,
         start: tuple[np.ndarray, np.ndarray] | None = None, t_hot: float = 20.0,
         t_cold: float = 0.05, loop_jump: float = 0.3) -> tuple[np.ndarray, np.ndarray, float]:
    """Simulated annealing in torsion space; returns the lowest-energy (phi, psi, energy)."""
    seq = design.sequence
    n = len(seq)
    is_gly = np.array([r == "GLY" for r in seq])
    is_pro = np.array([r == "PRO" for r in seq])
    may_l = np.array([r in ("GLY", "ASN", "ASP") for r in seq])
    ss = np.array(list(design.ss))
    loops = np.flatnonzero(ss == "-")
    strands = np.flatnonzero(ss == "E")
    movable = np.concatenate([loops, strands])
    if start is None:
        phi0, psi0 = ss_torsions(design)
        phi = np.repeat(phi0[None], n_chains, 0)
        psi = np.repeat(psi0[None], n_chains, 0)
        # random loop basins to start
        for i in loops:
            b = rng.integers(0, 4 if may_l[i] else 3, n_chains)
            phi[:, i], psi[:, i] = BASINS[b, 0], BASINS[b, 1]
    else:
        phi = np.repeat(np.asarray(start[0], float)[None], n_chains, 0)
        psi = np.repeat(np.asarray(start[1], float)[None], n_chains, 0)
    phi[:, is_pro] = -65.0
    e = _energy(design, phi, psi, is_gly)
    best_e = e.copy()
    best_phi, best_psi = phi.copy(), psi.copy()
    rows = np.arange(n_chains)
    for step in range(n_steps):
        t = t_hot * (t_cold / t_hot) ** (step / max(n_steps - 1, 1))
        k = movable[rng.integers(0, movable.size, n_chains)]
        nphi, npsi = phi.copy(), psi.copy()
        loop_k = ss[k] == "-"
        jump = loop_k & (rng.random(n_chains) < loop_jump)
        b = rng.integers(0, 4, n_chains)
        b = np.where(may_l[k], b, np.minimum(b, 2))
        f_new = np.where(jump, BASINS[b, 0], phi[rows, k] + rng.normal(0, 12.0, n_chains))
        p_new = np.where(jump, BASINS[b, 1], psi[rows, k] + rng.normal(0, 12.0, n_chains))
        # strands stay in the beta basin
        f_new = np.where(loop_k, f_new, np.clip(f_new, -150.0, -95.0))
        p_new = np.where(loop_k, p_new, np.clip(p_new, 110.0, 160.0))
        f_new = np.where(is_pro[k], -65.0, f_new)
        nphi[rows, k] = (f_new + 180.0) % 360.0 - 180.0
        npsi[rows, k] = (p_new + 180.0) % 360.0 - 180.0
        ne = _energy(design, nphi, npsi, is_gly)
        acc = (ne <= e) | (rng.random(n_chains) < np.exp(-np.clip(ne - e, 0.0, None) / t))
        phi[acc], psi[acc], e[acc] = nphi[acc], npsi[acc], ne[acc]
        better = e < best_e
        best_e[better] = e[better]
        best_phi[better], best_psi[better] = phi[better], psi[better]
    w = int(np.argmin(best_e))
    return best_phi[w], best_psi[w], float(best_e[w])


def kabsch_rmsd(a: np.ndarray, b: np.ndarray) -> float:
    """RMSD (Å) of two (n, 3) point sets after optimal superposition (Kabsch 1976)."""
    a = a - a.mean(0)
    b = b - b.mean(0)
    u, s, vt = np.linalg.svd(a.T @ b)
    d = np.sign(np.linalg.det(u @ vt))
    s[-1] *= d
    return float(np.sqrt(max(np.sum(a * a) + np.sum(b * b) - 2 * np.sum(s), 0.0) / len(a)))


def polish(design: Design, phi: np.ndarray, psi: np.ndarray, max_iter: int = 150,
           window: float = 40.0) -> tuple[np.ndarray, np.ndarray, float]:
    """Local minimisation (L-BFGS-B) of the fold energy over loop and strand torsions.

    The gradient is taken by forward differences, all of them in one batched energy call (the
    builder is vectorised over models). Loop torsions may move ``window`` degrees, strand
    torsions stay in the beta basin.
    """
    from scipy.optimize import minimize

    seq = design.sequence
    is_gly = np.array([r == "GLY" for r in seq])
    ss = np.array(list(design.ss))
    free_phi = np.flatnonzero(((ss == "-") | (ss == "E")) & np.array([r != "PRO" for r in seq]))
    free_psi = np.flatnonzero((ss == "-") | (ss == "E"))
    x0 = np.concatenate([phi[free_phi], psi[free_psi]])
    lo = np.concatenate([np.where(ss[free_phi] == "E", -160.0, phi[free_phi] - window),
                         np.where(ss[free_psi] == "E", 100.0, psi[free_psi] - window)])
    hi = np.concatenate([np.where(ss[free_phi] == "E", -80.0, phi[free_phi] + window),
                         np.where(ss[free_psi] == "E", 170.0, psi[free_psi] + window)])
    x0 = np.clip(x0, lo, hi)
    nf = free_phi.size
    h = 0.25

    def unpack(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        k = x.shape[0]
        P = np.repeat(phi[None], k, 0)
        S = np.repeat(psi[None], k, 0)
        P[:, free_phi] = x[:, :nf]
        S[:, free_psi] = x[:, nf:]
        return P, S

    def fun(x: np.ndarray):
        X = np.vstack([x[None], x[None] + h * np.eye(x.size)])
        e = _energy(design, *unpack(X), is_gly)
        return float(e[0]), (e[1:] - e[0]) / h

    res = minimize(fun, x0, jac=True, method="L-BFGS-B", bounds=list(zip(lo, hi)),
                   options={"maxiter": max_iter})
    P, S = unpack(res.x[None])
    return P[0], S[0], float(res.fun)


def _rama_bounds(seq: list[str], phi: np.ndarray, psi: np.ndarray, inset: float = 5.0
                 ) -> tuple[np.ndarray, np.ndarray]:
    """Per residue (n, 2) lower/upper (φ, ψ) bounds: the first allowed rectangle of the geometry
    check (shiftcheck/data/geometry_quality.json) that holds the start, ``inset`` degrees inside;
    ±inf where the start lies in none, so refinement cannot make a Ramachandran outlier."""
    from shiftcheck.structure.quality import constants

    reg = constants()["ramachandran"]
    lo = np.full((len(seq), 2), -np.inf)
    hi = np.full((len(seq), 2), np.inf)
    for i, r in enumerate(seq):
        for f0, f1, p0, p1 in reg.get(r, reg["general"]):
            if f0 <= phi[i] <= f1 and p0 <= psi[i] <= p1:
                lo[i] = (min(phi[i], f0 + inset), min(psi[i], p0 + inset))
                hi[i] = (max(phi[i], f1 - inset), max(psi[i], p1 - inset))
                break
    return lo, hi


def refine(design: Design, phi: np.ndarray, psi: np.ndarray, chi: np.ndarray, max_iter: int = 60,
           window: float = 25.0, weight: float = 10.0, helix_window: float = 0.0
           ) -> tuple[np.ndarray, np.ndarray, float, float]:
    """Remove heavy-atom clashes: L-BFGS-B over backbone torsions with all heavy atoms built.

    Loop and strand torsions may move ``window`` degrees, helix and turn torsions
    ``helix_window`` degrees. The energy is the fold energy plus ``weight`` × Σ (target − d)²
    over the pairs that the geometry check tests (demo_pack.ClashModel: the clash limit of
    shiftcheck.structure.quality plus a margin). Returns phi, psi, clash energy before and after.
    """
    from scipy.optimize import minimize

    from shiftcheck.structure.builder import build_protein

    seq = design.sequence
    is_gly = np.array([r == "GLY" for r in seq])
    ss = np.array(list(design.ss))
    loose = (ss == "-") | (ss == "E")
    movable = loose | (helix_window > 0)
    free_phi = np.flatnonzero(movable & np.array([r != "PRO" for r in seq]))
    free_psi = np.flatnonzero(movable)
    x0 = np.concatenate([phi[free_phi], psi[free_psi]])
    w = np.where(np.concatenate([loose[free_phi], loose[free_psi]]), window, helix_window)
    lo, hi = x0 - w, x0 + w
    blo, bhi = _rama_bounds(seq, phi, psi)           # stay inside the allowed region of the start
    lo = np.maximum(lo, np.concatenate([blo[free_phi, 0], blo[free_psi, 1]]))
    hi = np.minimum(hi, np.concatenate([bhi[free_phi, 0], bhi[free_psi, 1]]))
    nf = free_phi.size
    ens0 = build_protein(seq, phi, psi, chi=chi)
    I, J, lim = ClashModel(ens0).pairs(ens0.coords[0])
    h = 0.25

    def unpack(x):
        k = x.shape[0]
        P = np.repeat(phi[None], k, 0)
        S = np.repeat(psi[None], k, 0)
        P[:, free_phi] = x[:, :nf]
        S[:, free_psi] = x[:, nf:]
        return P, S

    def clash(P, S):
        c = build_protein(seq, P, S, chi=chi).coords
        d = np.linalg.norm(c[:, I] - c[:, J], axis=-1)
        return weight * np.sum(np.clip(lim - d, 0.0, None) ** 2, axis=1)

    def fun(x):
        X = np.vstack([x[None], x[None] + h * np.eye(x.size)])
        P, S = unpack(X)
        e = _energy(design, P, S, is_gly) + clash(P, S)
        return float(e[0]), (e[1:] - e[0]) / h

    before = float(clash(*unpack(x0[None]))[0])
    res = minimize(fun, x0, jac=True, method="L-BFGS-B", bounds=list(zip(lo, hi)),
                   options={"maxiter": max_iter})
    P, S = unpack(res.x[None])
    return P[0], S[0], before, float(clash(P, S)[0])
