"""Side-chain torsion features: χ1 and χ2 Fourier terms per side-chain class.

The backbone carbons and the amide N of a residue feel its side-chain rotamer through the
γ-gauche effect (a carbon or nitrogen γ to a gauche substituent is shielded; Grant & Cheney
1967, J. Am. Chem. Soc. 89:5315, from memory), so the rotamer's effect depends on which atom
sits γ — it differs between β-branched, aromatic and other side chains. Here χ1 (N–CA–CB–Xγ)
and χ2 (CA–CB–Xγ–Xδ) of residue i enter as first/second-order Fourier terms, one block per
side-chain class, linear in their coefficients like every other term. Undefined torsions (Gly,
Ala, missing atoms) give 0. Which classes and orders a nucleus class uses is the ``sidechain``
calibration setting (``data/calibration.json``), kept only where leave-one-protein-out
validation showed a gain.
"""
from __future__ import annotations

import numpy as np

from ..structure.geometry import dihedral
from .conformation import fourier_1d

__all__ = ["SIDECHAIN_CLASSES", "chi2", "sidechain_class", "sidechain_features"]

#: Atom names of χ2 (CA–CB–G–D) per residue type; residues not listed have no χ2.
_CHI2 = {"ARG": ("CG", "CD"), "ASN": ("CG", "OD1"), "ASP": ("CG", "OD1"), "GLN": ("CG", "CD"),
         "GLU": ("CG", "CD"), "HIS": ("CG", "ND1"), "ILE": ("CG1", "CD1"), "LEU": ("CG", "CD1"),
         "LYS": ("CG", "CD"), "MET": ("CG", "SD"), "PHE": ("CG", "CD1"), "PRO": ("CG", "CD"),
         "TRP": ("CG", "CD1"), "TYR": ("CG", "CD1")}
SIDECHAIN_CLASSES = {"beta": ("VAL", "ILE", "THR"), "arom": ("PHE", "TYR", "TRP", "HIS"),
                     "polar": ("SER", "CYS", "ASN", "ASP"),
                     "long": ("ARG", "GLN", "GLU", "LYS", "LEU", "MET", "PRO")}


def chi2(ens) -> np.ndarray:
    """χ2 = CA–CB–Xγ–Xδ per residue, (n_models, n_res) degrees, NaN where undefined."""
    r = np.arange(ens.n_residues)
    names = [_CHI2.get(str(n), ("CG", "CD")) for n in ens.res_name]
    g = np.array([a for a, _ in names], dtype=object)
    d = np.array([b for _, b in names], dtype=object)
    out = dihedral(ens.xyz(r, "CA"), ens.xyz(r, "CB"), ens.xyz(r, g), ens.xyz(r, d))
    has = np.array([str(n) in _CHI2 for n in ens.res_name])
    return np.where(has[None, :], out, np.nan)


def sidechain_class(res_name) -> np.ndarray:
    """Side-chain class name per residue ('' for Gly, Ala and unknown types)."""
    rn = np.asarray(res_name).astype(str)
    out = np.full(rn.shape, "", dtype=object)
    for c, members in SIDECHAIN_CLASSES.items():
        out[np.isin(rn, members)] = c
    return out


def sidechain_features(torsions: dict, res_name, spec: dict | None) -> tuple[list[str], np.ndarray]:
    """Per-residue features (n_models, n_res, k) for one nucleus class.

    ``torsions`` holds 'chi1' and 'chi2' (n_models, n_res); ``spec`` maps 'chi1' / 'chi2' to a
    Fourier order (0 or absent: not used). Names: ``sc:beta_chi1_cos1`` ...
    """
    spec = spec or {}
    cls = sidechain_class(res_name)
    names, cols = [], []
    for tor in ("chi1", "chi2"):
        k = int(spec.get(tor, 0) or 0)
        if k <= 0 or tor not in torsions:
            continue
        for c in SIDECHAIN_CLASSES:
            mask = (cls == c)[None, :, None]
            if tor == "chi2" and c == "beta":
                mask = mask & (np.asarray(res_name).astype(str) == "ILE")[None, :, None]
            n, f = fourier_1d(torsions[tor], k, f"{c}_{tor}_")
            names += n
            cols.append(f * mask)
    if not cols:
        m, n_res = torsions["chi1"].shape
        return [], np.zeros((m, n_res, 0))
    return names, np.concatenate(cols, axis=-1)
