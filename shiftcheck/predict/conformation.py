"""Backbone-conformation features: a low-order 2-D Fourier basis in φ/ψ, plus neighbour torsions.

The secondary-shift surface δ(φ, ψ) − δ_rc is smooth and periodic (Spera & Bax 1991, JACS
113:5490 showed helix/strand shifts follow φ/ψ); a truncated Fourier series is the natural
linear basis on the torus. Coefficients are fitted by :mod:`shiftcheck.predict.calibrate`.
Residue classes (Gly, Pro, β-branched Val/Ile/Thr, others) get their own low-order blocks on top
of the shared basis, because their φ/ψ surfaces differ. Undefined torsions (chain termini,
breaks) give feature value 0, i.e. the random-coil value.
"""
from __future__ import annotations

import numpy as np

__all__ = ["RESIDUE_CLASSES", "residue_class", "fourier_1d", "fourier_2d", "conformation_features"]

RESIDUE_CLASSES = ("GLY", "PRO", "BETA", "OTHER")


def residue_class(res_name: np.ndarray) -> np.ndarray:
    """'GLY', 'PRO', 'BETA' (Val, Ile, Thr) or 'OTHER' per residue."""
    res_name = np.asarray(res_name).astype(str)
    out = np.full(res_name.shape, "OTHER", dtype=object)
    out[res_name == "GLY"] = "GLY"
    out[res_name == "PRO"] = "PRO"
    out[np.isin(res_name, ("VAL", "ILE", "THR"))] = "BETA"
    return out


def fourier_1d(angle_deg: np.ndarray, order: int, prefix: str) -> tuple[list[str], np.ndarray]:
    """cos(kx), sin(kx) for k = 1..order; NaN angle -> 0. Returns (names, array (..., 2·order))."""
    x = np.radians(np.asarray(angle_deg, float))
    ok = np.isfinite(x)
    x = np.where(ok, x, 0.0)
    names, cols = [], []
    for k in range(1, order + 1):
        names += [f"{prefix}cos{k}", f"{prefix}sin{k}"]
        cols += [np.cos(k * x) * ok, np.sin(k * x) * ok]
    return names, np.stack(cols, axis=-1)


def fourier_2d(phi: np.ndarray, psi: np.ndarray, order: int, prefix: str = "") -> tuple[list[str], np.ndarray]:
    """Full tensor Fourier basis up to ``order`` in φ and ψ without the constant term.

    Terms: the 1-D terms of φ and of ψ, and all products of a φ term and a ψ term.
    A residue where either angle is undefined gets zeros for every term containing it.
    """
    n1, f1 = fourier_1d(phi, order, prefix + "phi_")
    n2, f2 = fourier_1d(psi, order, prefix + "psi_")
    names = n1 + n2
    cols = [f1, f2]
    prod = f1[..., :, None] * f2[..., None, :]
    names += [f"{prefix}{a[len(prefix):]}*{b[len(prefix):]}" for a in n1 for b in n2]
    cols.append(prod.reshape(prod.shape[:-2] + (-1,)))
    return names, np.concatenate(cols, axis=-1)


def conformation_features(torsions: dict[str, np.ndarray], res_name: np.ndarray, nucleus: str,
                          order: int = 2, class_order: int = 1) -> tuple[list[str], np.ndarray]:
    """Per-residue conformation features for one nucleus class, (n_models, n_res, n_features).

    Parameters
    ----------
    torsions : dict
        'phi', 'psi' (and 'chi1') arrays (n_models, n_res) in degrees.
    res_name : array (n_res,)
    nucleus : str
        Nucleus class; adds ψ(i−1) terms for 'H' and 'N', φ(i+1) for 'C', χ1 for 'CB'.
    order, class_order : int
        Fourier orders of the shared and the residue-class-specific blocks.
    """
    phi, psi = torsions["phi"], torsions["psi"]
    names, shared = fourier_2d(phi, psi, order)
    blocks, feats = [names], [shared]
    cls = residue_class(res_name)
    cn, cf = fourier_2d(phi, psi, class_order)
    for c in ("GLY", "PRO", "BETA"):
        mask = (cls == c)[None, :, None]
        blocks.append([f"{c}:{n}" for n in cn])
        feats.append(cf * mask)
    if nucleus in ("H", "N"):
        prev = np.full_like(psi, np.nan)
        prev[:, 1:] = psi[:, :-1]
        n, f = fourier_1d(prev, 2, "psi_prev_")
        blocks.append(n)
        feats.append(f)
    if nucleus in ("C", "CA"):
        nxt = np.full_like(phi, np.nan)
        nxt[:, :-1] = phi[:, 1:]
        n, f = fourier_1d(nxt, 1, "phi_next_")
        blocks.append(n)
        feats.append(f)
    if nucleus == "CB" and "chi1" in torsions:
        n, f = fourier_1d(torsions["chi1"], 1, "chi1_")
        blocks.append(n)
        feats.append(f)
    return [x for b in blocks for x in b], np.concatenate(feats, axis=-1)
