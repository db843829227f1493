"""Backbone-conformation features: a low-order 2-D Fourier basis in φ/ψ, plus neighbour torsions.

The secondary-shift surface δ(φ, ψ) − δ_rc is smooth and periodic (Spera & Bax 1991, JACS
113:5490 showed helix/strand shifts follow φ/ψ); a truncated Fourier series is the natural
linear basis on the torus. Coefficients are fitted by :mod:`shiftcheck.predict.calibrate`.
Residue classes (Gly, Pro, β-branched Val/Ile/Thr, others) get their own low-order blocks on top
of the shared basis, because their φ/ψ surfaces differ. Per nucleus class, Fourier blocks of
the neighbours' torsions (e.g. ψ(i−1) for N and H, ψ(i+1) for C and CA) and of χ1 of residue i
can be added; which ones is a calibration setting (``conformation`` in ``data/calibration.json``),
chosen by leave-one-protein-out validation. Undefined torsions (chain termini, breaks) give
feature value 0, i.e. the random-coil value.
"""
from __future__ import annotations

import numpy as np

__all__ = ["LEGACY_NEIGHBOURS", "LEGACY_CHI1", "residue_class", "fourier_1d", "fourier_2d",
           "neighbour_block", "conformation_features"]


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


#: Neighbour torsion blocks used when a parameter file names none (files written before the
#: blocks became a setting): ψ(i−1) order 2 for H and N, φ(i+1) order 1 for C and CA.
LEGACY_NEIGHBOURS = {"H": [["psi", -1, 2]], "N": [["psi", -1, 2]], "C": [["phi", 1, 1]], "CA": [["phi", 1, 1]]}
#: χ1 orders used when a parameter file names none.
LEGACY_CHI1 = {"CB": 1}
_TORSIONS = ("phi", "psi", "phi_psi", "chi1")
#: residue types with their own φ/ψ block when ``type_order`` names the nucleus class (Gly and Pro
#: have their class blocks)
_TYPES = ("ALA", "ARG", "ASN", "ASP", "CYS", "GLN", "GLU", "HIS", "ILE", "LEU", "LYS", "MET",
          "PHE", "SER", "THR", "TRP", "TYR", "VAL")


def _shifted(a: np.ndarray, shift: int) -> np.ndarray:
    """Value of residue i + shift at position i (NaN outside the chain), (n_models, n_res)."""
    out = np.full_like(a, np.nan)
    if shift > 0:
        out[:, :-shift] = a[:, shift:]
    elif shift < 0:
        out[:, -shift:] = a[:, :shift]
    else:
        out[:] = a
    return out


def _shifted_class(cls: np.ndarray, shift: int) -> np.ndarray:
    """Residue class of residue i + shift at position i ('' outside the chain)."""
    out = np.full(cls.shape, "", dtype=object)
    if shift > 0:
        out[:-shift] = cls[shift:]
    elif shift < 0:
        out[-shift:] = cls[:shift]
    else:
        out[:] = cls
    return out


def _tag(shift: int) -> str:
    return {-1: "prev", 1: "next"}.get(shift, f"i{shift:+d}")


def neighbour_block(torsions: dict[str, np.ndarray], kind: str, shift: int, order: int
                    ) -> tuple[list[str], np.ndarray]:
    """Fourier terms of a neighbour's torsion(s): ``kind`` 'phi', 'psi', 'chi1' (1-D) or 'phi_psi' (2-D).

    Names: ``psi_prev_cos1`` (1-D, residue i−1), ``prev:phi_cos1*psi_sin2`` (2-D, residue i−1),
    ``phi_next_sin1`` (residue i+1); other offsets are written ``i+2``, ``i-2``.
    """
    if kind not in _TORSIONS:
        raise ValueError(f"unknown torsion block '{kind}' (expected one of {', '.join(_TORSIONS)})")
    tag = _tag(int(shift))
    if kind == "phi_psi":
        return fourier_2d(_shifted(torsions["phi"], shift), _shifted(torsions["psi"], shift),
                          int(order), prefix=f"{tag}:")
    if kind not in torsions:
        raise ValueError(f"torsion block '{kind}' needs the '{kind}' torsions")
    return fourier_1d(_shifted(torsions[kind], shift), int(order), f"{kind}_{tag}_")


def class_order_for(class_order: int | dict, nucleus: str) -> int:
    """Order of the residue-class blocks for ``nucleus``: an int applies to every class; a dict
    maps nucleus class -> order with ``"default"`` (else 1) for the classes it does not name."""
    if isinstance(class_order, dict):
        return int(class_order.get(nucleus, class_order.get("default", 1)))
    return int(class_order)


def conformation_features(torsions: dict[str, np.ndarray], res_name: np.ndarray, nucleus: str,
                          order: int = 2, class_order: int | dict = 1, neighbours: dict | None = None,
                          chi1: dict | None = None, type_order: dict | None = None) -> tuple[list[str], np.ndarray]:
    """Per-residue conformation features for one nucleus class, (n_models, n_res, n_features).

    Parameters
    ----------
    torsions : dict
        'phi', 'psi' (and 'chi1') arrays (n_models, n_res) in degrees.
    res_name : array (n_res,)
    nucleus : str
        Nucleus class.
    order : int
        Fourier order of the shared block.
    class_order : int or dict
        Fourier order of the residue-class-specific (Gly, Pro, β-branched) blocks: one order for
        every nucleus class, or ``{nucleus: order, "default": order}`` (:func:`class_order_for`).
    neighbours : dict, optional
        Nucleus class -> list of ``[kind, shift, order]`` neighbour blocks (see
        :func:`neighbour_block`); default :data:`LEGACY_NEIGHBOURS`.
    chi1 : dict, optional
        Nucleus class -> Fourier order of χ1 of residue i; default :data:`LEGACY_CHI1`.
    type_order : dict, optional
        Nucleus class -> Fourier order of a φ/ψ block of its own for each residue type of
        :data:`_TYPES` (zero at residues of other types); default none. Tried for the backbone
        classes and not kept (docs/validation.md, ablation table).
    """
    phi, psi = torsions["phi"], torsions["psi"]
    names, shared = fourier_2d(phi, psi, order)
    blocks, feats = [names], [shared]
    cls = residue_class(res_name)
    cn, cf = fourier_2d(phi, psi, class_order_for(class_order, nucleus))
    for c in ("GLY", "PRO", "BETA"):
        mask = (cls == c)[None, :, None]
        blocks.append([f"{c}:{n}" for n in cn])
        feats.append(cf * mask)
    for spec in (LEGACY_NEIGHBOURS if neighbours is None else neighbours).get(nucleus, []):
        kind, shift, k = spec[:3]
        n, f = neighbour_block(torsions, kind, int(shift), int(k))
        if len(spec) > 3:       # only where residue i + shift is of that class (GLY, PRO, BETA, OTHER)
            mask = _shifted_class(cls, int(shift)) == str(spec[3])
            n, f = [f"{spec[3]}@{x}" for x in n], f * mask[None, :, None]
        blocks.append(n)
        feats.append(f)
    k_type = (type_order or {}).get(nucleus)
    if k_type:
        tn, tf = fourier_2d(phi, psi, int(k_type))
        rn = np.asarray(res_name).astype(str)
        for aa in _TYPES:
            blocks.append([f"TYPE:{aa}:{n}" for n in tn])
            feats.append(tf * (rn == aa)[None, :, None])
    k_chi = (LEGACY_CHI1 if chi1 is None else chi1).get(nucleus)
    if k_chi and "chi1" in torsions:
        n, f = fourier_1d(torsions["chi1"], int(k_chi), "chi1_")
        blocks.append(n)
        feats.append(f)
    return [x for b in blocks for x in b], np.concatenate(feats, axis=-1)
