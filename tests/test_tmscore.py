"""TM-score (Zhang & Skolnick 2004, Proteins 57:702) in tools/tmscore.py against independent checks:
the published d0 formula evaluated by hand, invariance under rigid motion, and a brute-force
maximisation over all rigid superpositions (scipy.optimize from many starts) on a small case."""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import minimize
from scipy.spatial.transform import Rotation

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tools"))
from tmscore import d0, tm_of_superposition, tm_score  # noqa: E402


def _chain(n, seed=0):
    """A random-walk CA trace with 3.8 A steps (virtual CA-CA bond)."""
    rng = np.random.default_rng(seed)
    steps = rng.normal(size=(n, 3))
    steps *= 3.8 / np.linalg.norm(steps, axis=1, keepdims=True)
    return np.cumsum(steps, axis=0)


def test_d0_formula_by_hand():
    # d0 = 1.24 (L - 15)^(1/3) - 1.8 (Zhang & Skolnick 2004); L = 100: 85^(1/3) = 4.39683
    assert d0(100) == pytest.approx(1.24 * 4.39683 - 1.8, abs=1e-4)
    assert d0(15) == 0.5 and d0(10) == 0.5      # floor of 0.5 A for short chains


def test_identical_and_rigidly_moved_copy_score_one():
    x = _chain(60, 1)
    assert tm_score(x, x) == pytest.approx(1.0, abs=1e-12)
    R = Rotation.random(random_state=3)
    moved = R.apply(x) + np.array([12.0, -40.0, 7.5])
    assert tm_score(moved, x) == pytest.approx(1.0, abs=1e-9)


def test_unrelated_chains_score_low_and_partial_match_in_between():
    x = _chain(80, 2)
    assert tm_score(_chain(80, 9), x) < 0.3
    y = x.copy()
    y[40:] = _chain(40, 5) + y[39]                # second half replaced
    assert 0.35 < tm_score(y, x) < 0.7


def _brute_force(P, Q, n_starts=40, seed=0):
    """Max TM over rotations and shifts: Nelder-Mead from random rotations, translations
    matching the centroids of random residue subsets (independent of the seed-fragment search)."""
    rng = np.random.default_rng(seed)

    def neg(v):
        R = Rotation.from_rotvec(v[:3]).as_matrix()
        return -float(tm_of_superposition(P, Q, R, v[3:]))

    best = 0.0
    for k in range(n_starts):
        R = Rotation.random(random_state=int(rng.integers(1 << 30)))
        sub = rng.choice(len(P), size=int(rng.integers(3, len(P) + 1)), replace=False)
        t = Q[sub].mean(0) - R.apply(P[sub]).mean(0)
        r = minimize(neg, np.concatenate([R.as_rotvec(), t]), method="Nelder-Mead",
                     options={"xatol": 1e-5, "fatol": 1e-7, "maxiter": 1500})
        best = max(best, -r.fun)
    return best


def test_against_brute_force_optimal_superposition():
    rng = np.random.default_rng(4)
    Q = _chain(24, 7)
    P = Q.copy()
    P[12:] = Rotation.from_euler("z", 50, degrees=True).apply(P[12:] - P[12]) + P[12]   # hinge
    P = Rotation.random(random_state=8).apply(P + rng.normal(scale=0.4, size=P.shape)) + 5.0
    ours = tm_score(P, Q)
    ref = _brute_force(P, Q)
    assert ours == pytest.approx(ref, abs=0.01)


def test_partial_model_normalised_by_native_length():
    # Zhang & Skolnick 2004: TM = (1/L_native) sum_i 1/(1+(d_i/d0(L_native))^2); residues the
    # model lacks count zero. An exact copy of 60 of 80 residues: 60/80, with d0 of 80 (any d0
    # gives 1 per residue at distance 0).
    x = _chain(80, 4)
    assert tm_score(x[:60], x[:60], length=80) == pytest.approx(60 / 80, abs=1e-12)
    # a perturbed partial copy: the value equals the full-length sum formula at the same pose
    rng = np.random.default_rng(5)
    y = x[:60] + rng.normal(0, 1.0, (60, 3))
    dist = np.linalg.norm(y - x[:60], axis=1)
    at_identity = np.sum(1 / (1 + (dist / d0(80)) ** 2)) / 80
    assert tm_score(y, x[:60], length=80) >= at_identity - 1e-12
    assert tm_score(y, x[:60], length=80) < 60 / 80
    with pytest.raises(ValueError):
        tm_score(y, x[:60], length=50)


def test_lddt_ca_by_hand():
    """CA lDDT (Mariani et al. 2013): identical = 1, rigid motion = 1 (superposition-free); a
    4-point case counted by hand; a missing residue counts as not preserved."""
    from tmscore import lddt_ca

    x = _chain(30, 7)
    R = Rotation.random(random_state=2)
    assert lddt_ca(x, x) == 1.0 and lddt_ca(R.apply(x) + 5.0, x) == pytest.approx(1.0)
    nat = np.array([[0.0, 0, 0], [3.8, 0, 0], [7.6, 0, 0], [30.0, 0, 0]])   # residue 4 far away
    mod = nat.copy()
    mod[2, 0] += 1.5                      # pair (1,3) 7.6 -> 9.1, pair (2,3) 3.8 -> 5.3
    # ordered pairs within 15 A: (1,2),(1,3),(2,3) both ways = 6; pairs (1,3),(2,3) differ by 1.5:
    # preserved at 2 and 4 A, not at 0.5 and 1 A -> fractions 2/6, 2/6, 6/6, 6/6 -> mean 2/3
    assert lddt_ca(mod, nat) == pytest.approx((2 / 6 + 2 / 6 + 1 + 1) / 4)
    gone = nat.copy()
    gone[0] = np.nan                      # 4 of the 6 ordered pairs lose their partner
    assert lddt_ca(gone, nat) == pytest.approx(2 / 6)


def test_gdt_ts_rigid_copy_and_two_rigid_halves():
    """GDT_TS (Zemla 2003, Nucleic Acids Res. 31:3370): (P1 + P2 + P4 + P8) / 4. A rigidly moved
    copy gives 1; a model whose second half is shifted 300 A from the first (each half rigid)
    superposes one half at any cutoff, so every Pd is 1/2 (by the definition)."""
    from tmscore import gdt_ts

    x = _chain(40, 3)
    R = Rotation.random(random_state=5)
    assert gdt_ts(R.apply(x) - 7.0, x) == pytest.approx(1.0)
    y = x.copy()
    y[20:] += np.array([300.0, 0.0, 0.0])   # far beyond any pair distance + 2 x 8 A
    assert gdt_ts(R.apply(y), x) == pytest.approx(0.5)
    assert gdt_ts(x[:30], x[:30], length=40) == pytest.approx(30 / 40)     # missing residues count 0


def test_gdt_ts_against_exhaustive_subset_superposition():
    """On 11 residues, every subset of at least 3 residues is superposed by Kabsch (scipy's
    Rotation.align_vectors, independent of tools/tmscore.py) and the most residues within each
    cutoff are counted. Every superposition the seed search tries is the Kabsch fit of some such
    subset, so its GDT_TS can never exceed the exhaustive value; being a heuristic (as every GDT
    search is), it may fall short: allowed here, at most 2 of the 44 counts (4 cutoffs x 11 residues,
    i.e. 0.045 GDT_TS) and 1.5 on average over 12 hinged, noisy models (tolerance: common practice,
    no source; the shortfall falls with chain length, as one count is a smaller fraction)."""
    from itertools import combinations

    from tmscore import gdt_ts

    short = []
    for seed in range(12):
        rng = np.random.default_rng(seed)
        Q = _chain(11, seed + 100)
        P = Q + rng.normal(scale=rng.uniform(0.5, 2.0), size=Q.shape)
        P[6:] = Rotation.from_euler("x", rng.uniform(10, 60), degrees=True).apply(P[6:] - P[6]) + P[6]
        best = {c: 0 for c in (1.0, 2.0, 4.0, 8.0)}
        for k in range(3, 12):
            for sub in combinations(range(11), k):
                s = list(sub)
                pc, qc = P[s].mean(0), Q[s].mean(0)
                rot, _ = Rotation.align_vectors(Q[s] - qc, P[s] - pc)
                d = np.linalg.norm(rot.apply(P - pc) + qc - Q, axis=1)
                for c in best:
                    best[c] = max(best[c], int((d < c).sum()))
        short.append(sum(best.values()) - gdt_ts(P, Q) * 44)
    short = np.array(short)
    assert short.min() > -1e-9 and short.max() < 2 + 1e-9
    assert short.mean() <= 1.5
