"""Build the protons the shift predictor needs onto heavy-atom models, vectorised over models.

Crystal structures and many predicted models carry no hydrogens. :func:`add_hydrogens` places
backbone amide H, HA (Gly HA2/HA3), methylene pairs with IUPAC 1998 stereo labels (Markley et
al. 1998, Pure Appl. Chem. 70:117), methyl groups (staggered), aromatic ring protons, Trp HE1
and the Asn/Gln NH2 protons from ideal geometry. Bond lengths and angles, with their sources,
are in ``shiftcheck/data/hydrogen_geometry.json``. Not built: hydroxyl, thiol, Lys NH3+, Arg
guanidinium and His ring N-H protons (exchangeable or of unknown position/protonation) and the
N-terminal NH3+.

Every construction works on arrays of shape (n_models, n_sites, 3): all models and all residues
at once. Hydrogens already present in the model are kept as they are.
"""
from __future__ import annotations

import dataclasses
from functools import lru_cache

import numpy as np

from ..datafiles import load_data
from .ensemble import Ensemble

__all__ = ["add_hydrogens", "add_hydrogens_many", "geometry_parameters", "HYDROGEN_SITES"]

# --- site table (topology, IUPAC 1998 names) -------------------------------------------------
# methine: (H, X, a, b, c); methylene: (H2, H3, X, a, b) with a the neighbour nearer the
# backbone; methyl: (H1, H2, H3, X, Y, Z); aromatic: (H, X, a, b, bond kind);
# amide2: (H21, H22, X, Y, O): H21 trans (E) to the carbonyl O, H22 cis to it, as the
# deposited names of PDB 1D3Z, 2KRK, 3CI2 and 2KPU have it.
_METHINE = {
    "VAL": [("HB", "CB", "CA", "CG1", "CG2")], "ILE": [("HB", "CB", "CA", "CG1", "CG2")],
    "THR": [("HB", "CB", "CA", "OG1", "CG2")], "LEU": [("HG", "CG", "CB", "CD1", "CD2")],
}
_CH2_B = ("HB2", "HB3", "CB", "CA", "CG")
_METHYLENE = {
    "GLY": [("HA2", "HA3", "CA", "N", "C")],
    "SER": [("HB2", "HB3", "CB", "CA", "OG")], "CYS": [("HB2", "HB3", "CB", "CA", "SG")],
    "ASP": [_CH2_B], "ASN": [_CH2_B], "LEU": [_CH2_B], "PHE": [_CH2_B], "TYR": [_CH2_B],
    "TRP": [_CH2_B], "HIS": [_CH2_B],
    "GLU": [_CH2_B, ("HG2", "HG3", "CG", "CB", "CD")], "GLN": [_CH2_B, ("HG2", "HG3", "CG", "CB", "CD")],
    "MET": [_CH2_B, ("HG2", "HG3", "CG", "CB", "SD")],
    "LYS": [_CH2_B, ("HG2", "HG3", "CG", "CB", "CD"), ("HD2", "HD3", "CD", "CG", "CE"),
            ("HE2", "HE3", "CE", "CD", "NZ")],
    "ARG": [_CH2_B, ("HG2", "HG3", "CG", "CB", "CD"), ("HD2", "HD3", "CD", "CG", "NE")],
    "PRO": [_CH2_B, ("HG2", "HG3", "CG", "CB", "CD"), ("HD2", "HD3", "CD", "CG", "N")],
    "ILE": [("HG12", "HG13", "CG1", "CB", "CD1")],
}
_METHYL = {
    "ALA": [("HB1", "HB2", "HB3", "CB", "CA", "N")],
    "VAL": [("HG11", "HG12", "HG13", "CG1", "CB", "CA"), ("HG21", "HG22", "HG23", "CG2", "CB", "CA")],
    "LEU": [("HD11", "HD12", "HD13", "CD1", "CG", "CB"), ("HD21", "HD22", "HD23", "CD2", "CG", "CB")],
    "ILE": [("HG21", "HG22", "HG23", "CG2", "CB", "CA"), ("HD11", "HD12", "HD13", "CD1", "CG1", "CB")],
    "THR": [("HG21", "HG22", "HG23", "CG2", "CB", "CA")],
    "MET": [("HE1", "HE2", "HE3", "CE", "SD", "CG")],
}
_RING6 = [("HD1", "CD1", "CG", "CE1", "CH_aromatic"), ("HD2", "CD2", "CG", "CE2", "CH_aromatic"),
          ("HE1", "CE1", "CD1", "CZ", "CH_aromatic"), ("HE2", "CE2", "CD2", "CZ", "CH_aromatic")]
_AROMATIC = {
    "PHE": _RING6 + [("HZ", "CZ", "CE1", "CE2", "CH_aromatic")],
    "TYR": _RING6,
    "TRP": [("HD1", "CD1", "CG", "NE1", "CH_aromatic"), ("HE1", "NE1", "CD1", "CE2", "NH_sidechain_amide"),
            ("HE3", "CE3", "CD2", "CZ3", "CH_aromatic"), ("HZ2", "CZ2", "CE2", "CH2", "CH_aromatic"),
            ("HZ3", "CZ3", "CE3", "CH2", "CH_aromatic"), ("HH2", "CH2", "CZ2", "CZ3", "CH_aromatic")],
    "HIS": [("HD2", "CD2", "CG", "NE2", "CH_aromatic"), ("HE1", "CE1", "ND1", "NE2", "CH_aromatic")],
}
_AMIDE2 = {"ASN": [("HD21", "HD22", "ND2", "CG", "OD1")], "GLN": [("HE21", "HE22", "NE2", "CD", "OE1")]}

#: Names of all protons :func:`add_hydrogens` can build, per residue (besides H and HA).
HYDROGEN_SITES: dict[str, tuple[str, ...]] = {}
for _tab, _nh in ((_METHINE, 1), (_METHYLENE, 2), (_METHYL, 3), (_AROMATIC, 1), (_AMIDE2, 2)):
    for _res, _sites in _tab.items():
        HYDROGEN_SITES[_res] = HYDROGEN_SITES.get(_res, ()) + tuple(n for s in _sites for n in s[:_nh])


@lru_cache(maxsize=1)
def geometry_parameters() -> dict:
    """Bond lengths (Å) and angles (degrees) from ``data/hydrogen_geometry.json``."""
    raw = load_data("hydrogen_geometry.json")
    out = {k: float(v["value"]) for k, v in raw["bond_lengths"].items()}
    out.update({k: float(v["value"]) for k, v in raw["angles"].items()})
    return out


def _unit(v: np.ndarray) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        return v / np.linalg.norm(v, axis=-1, keepdims=True)


def _bisector(x, a, b, d):
    """Point at distance d from x on the exterior bisector of angle a-x-b (sp2 / amide H)."""
    return x + d * _unit(-(_unit(a - x) + _unit(b - x)))


def _methine(x, a, b, c, d):
    return x + d * _unit(-(_unit(a - x) + _unit(b - x) + _unit(c - x)))


def _methylene(x, a, b, d, hch):
    """Two H of X(H2) bonded to a and b; returns (H2, H3) by the IUPAC 1998 labels."""
    bis = _unit(-(_unit(a - x) + _unit(b - x)))
    n = _unit(np.cross(a - x, b - x))
    half = np.radians(hch) / 2.0
    h_plus = x + d * (np.cos(half) * bis + np.sin(half) * n)
    h_minus = x + d * (np.cos(half) * bis - np.sin(half) * n)
    return h_minus, h_plus


def _place(z, y, x, d, angle, torsion):
    """Natural-extension placement: |xH| = d, angle y-x-H, dihedral z-y-x-H (degrees)."""
    bc = _unit(x - y)
    n = _unit(np.cross(y - z, bc))
    m = np.cross(n, bc)
    th, ph = np.radians(angle), np.radians(torsion)
    return x + d * (-np.cos(th) * bc + np.sin(th) * np.cos(ph) * m + np.sin(th) * np.sin(ph) * n)


def _gather(coords: np.ndarray, idx: np.ndarray) -> np.ndarray:
    out = np.full((coords.shape[0], idx.size, 3), np.nan)
    ok = idx >= 0
    out[:, ok] = coords[:, idx[ok]]
    return out


def add_hydrogens(ens: Ensemble) -> Ensemble:
    """Return a copy of ``ens`` with missing protons built from ideal geometry (its partner
    chains, :attr:`Ensemble.partners`, get theirs too).

    Parameters
    ----------
    ens : Ensemble

    Returns
    -------
    Ensemble
        Same residues and models; new atoms are flagged ``built = True`` and sorted into their
        residues. Sites whose heavy atoms are missing in every model are not added; where they
        are missing in some models only, the built atom is NaN there.

    Examples
    --------
    >>> ens = add_hydrogens(read_models("1ubq.pdb", build_hydrogens=False)[0])  # doctest: +SKIP
    """
    out = _add_hydrogens_chain(ens)
    if ens.partners:
        out.partners = [_add_hydrogens_chain(p) for p in ens.partners]
    return out


def _add_hydrogens_chain(ens: Ensemble) -> Ensemble:
    g = geometry_parameters()
    xyz = ens.coords
    new_res, new_name, new_xyz = [], [], []

    fills = []          # (atom index, positions): protons of the file absent from some models

    def emit(res, hname, pos):
        idx = ens.indices(res, hname)
        have = idx >= 0
        if have.any():
            gap = np.isnan(xyz[:, idx[have], 0]) & ~np.isnan(pos[:, have, 0])
            if gap.any():
                fills.append((idx[have], pos[:, have], gap))
        keep = ~have & ~np.all(np.isnan(pos[..., 0]), axis=0)
        if keep.any():
            new_res.append(res[keep])
            new_name.append(np.broadcast_to(np.asarray(hname, dtype=object), res.shape)[keep])
            new_xyz.append(pos[:, keep])

    n_res = ens.n_residues
    r = np.arange(n_res)
    # backbone amide H: not Pro, not the first residue, not after a chain break
    nonpro = np.flatnonzero((ens.res_name != "PRO") & (r > 0))
    if nonpro.size:
        N = ens.xyz(nonpro, "N")
        CA = ens.xyz(nonpro, "CA")
        Cp = ens.xyz(nonpro - 1, "C")
        with np.errstate(invalid="ignore"):
            broken = ~(np.linalg.norm(N - Cp, axis=-1) < 2.0)
        H = _bisector(N, Cp, CA, g["NH_backbone"])
        H[broken] = np.nan
        emit(nonpro, "H", H)
    # HA of non-Gly residues
    nongly = np.flatnonzero(ens.res_name != "GLY")
    if nongly.size:
        CA, N, C = ens.xyz(nongly, "CA"), ens.xyz(nongly, "N"), ens.xyz(nongly, "C")
        ha = _methine(CA, N, C, ens.xyz(nongly, "CB"), g["CH_methine"])
        # CB missing (truncated side chain): L-chirality puts HA where Gly has HA2
        # (checked on PDB 1D3Z: median 0.02 A from the deposited HA)
        ha_noCB = _methylene(CA, N, C, g["CH_methine"], g["tetrahedral"])[0]
        emit(nongly, "HA", np.where(np.isnan(ha), ha_noCB, ha))

    for table, kind in ((_METHINE, "methine"), (_METHYLENE, "methylene"), (_METHYL, "methyl"),
                        (_AROMATIC, "aromatic"), (_AMIDE2, "amide2")):
        sites = [(i, s) for i, rn in enumerate(ens.res_name.tolist()) for s in table.get(rn, ())]
        if not sites:
            continue
        res = np.array([i for i, _ in sites], dtype=np.int64)
        cols = list(zip(*(s for _, s in sites)))

        def P(k):
            return _gather(xyz, ens.indices(res, np.array(cols[k], dtype=object)))

        if kind == "methine":
            emit(res, np.array(cols[0], dtype=object), _methine(P(1), P(2), P(3), P(4), g["CH_methine"]))
        elif kind == "methylene":
            h2, h3 = _methylene(P(2), P(3), P(4), g["CH_methylene"], g["tetrahedral"])
            emit(res, np.array(cols[0], dtype=object), h2)
            emit(res, np.array(cols[1], dtype=object), h3)
        elif kind == "methyl":
            X, Y, Z = P(3), P(4), P(5)
            for k, tors in enumerate((180.0, 60.0, -60.0)):
                emit(res, np.array(cols[k], dtype=object),
                     _place(Z, Y, X, g["CH_methyl"], g["tetrahedral"], tors))
        elif kind == "aromatic":
            d = np.array([g[b] for b in cols[4]])[None, :, None]
            emit(res, np.array(cols[0], dtype=object), _bisector(P(1), P(2), P(3), d))
        else:
            X, Y, O = P(2), P(3), P(4)
            for k, tors in enumerate((180.0, 0.0)):
                emit(res, np.array(cols[k], dtype=object),
                     _place(O, Y, X, g["NH_sidechain_amide"], g["sp2"], tors))
    if fills:           # hydrogens built per model: a model without them gets its own
        coords = ens.coords.copy()
        n = 0
        for idx, pos, gap in fills:
            sub = coords[:, idx]
            sub[gap] = pos[gap]
            coords[:, idx] = sub
            n += int(gap.sum())
        models = sorted({int(m) for idx, pos, gap in fills for m in np.flatnonzero(gap.any(axis=1))})
        ens = dataclasses.replace(ens, coords=coords, _index=None, warnings=list(ens.warnings) + [
            f"built {n} hydrogen positions in {len(models)} model(s) whose file records lack "
            f"protons the other models have (models {', '.join(str(m + 1) for m in models[:8])})"])
    return _merge(ens, new_res, new_name, new_xyz)


def _merge(ens: Ensemble, new_res, new_name, new_xyz) -> Ensemble:
    if not new_res:
        return dataclasses.replace(ens, warnings=list(ens.warnings), _index=None)
    add_res = np.concatenate(new_res)
    add_name = np.concatenate(new_name).astype(ens.atom_name.dtype if ens.atom_name.dtype.kind == "U"
                                               and ens.atom_name.dtype.itemsize >= 16 else "U4")
    atom_res = np.concatenate([ens.atom_res, add_res])
    order = np.argsort(atom_res, kind="stable")
    atom_name = np.concatenate([ens.atom_name.astype("U4"), add_name])[order]
    element = np.concatenate([ens.element.astype("U2"), np.full(add_res.size, "H", dtype="U2")])[order]
    built = np.concatenate([ens.built, np.ones(add_res.size, dtype=bool)])[order]
    coords = np.concatenate([ens.coords, np.concatenate(new_xyz, axis=1)], axis=1)[:, order]
    warnings = list(ens.warnings)
    warnings.append(f"built {add_res.size} hydrogen atoms from ideal geometry")
    return dataclasses.replace(ens, atom_res=atom_res[order], atom_name=atom_name, element=element,
                               built=built, coords=coords, warnings=warnings, _index=None)


def add_hydrogens_many(ensembles: list[Ensemble]) -> list[Ensemble]:
    """``[add_hydrogens(e) for e in ensembles]``, with runs of consecutive ensembles of one
    topology and no missing coordinates (the files of a decoy set) built as one model stack.

    A run is split back into its ensembles (own names, sources, warnings) only when every
    built atom has coordinates in every model; otherwise (a chain break in one model, so a
    proton one file would not get) its ensembles are built one by one, as alone.
    """
    from .ensemble import stack_compatible, stack_ensembles

    out: list[Ensemble] = []
    k = 0
    while k < len(ensembles):
        e = ensembles[k]
        run = [e]
        if np.isfinite(e.coords).all():
            while (k + len(run) < len(ensembles) and len(run) < 256
                   and np.isfinite(ensembles[k + len(run)].coords).all()
                   and stack_compatible(e, ensembles[k + len(run)])):
                run.append(ensembles[k + len(run)])
        k += len(run)
        if len(run) == 1:
            out.append(add_hydrogens(e))
            continue
        big = add_hydrogens(stack_ensembles(run))
        if not np.isfinite(big.coords[:, big.built & ~_was_built(big, e)]).all():
            out.extend(add_hydrogens(x) for x in run)
            continue
        added = big.warnings[len(e.warnings):]
        a = 0
        for x in run:
            b = a + x.n_models
            out.append(dataclasses.replace(big, name=x.name, sources=list(x.sources),
                                           model_names=list(x.model_names), coords=big.coords[a:b].copy(),
                                           warnings=list(x.warnings) + added, method=x.method, _index=None))
            a = b
    return out


def _was_built(big: Ensemble, before: Ensemble) -> np.ndarray:
    """Atoms of ``big`` flagged built already in ``before`` (same atoms in the same order)."""
    old = np.zeros(big.n_atoms, dtype=bool)
    if before.built.any():
        keys = {(int(r), str(n)) for r, n, b in zip(before.atom_res, before.atom_name, before.built) if b}
        old = np.array([(int(r), str(n)) in keys for r, n in zip(big.atom_res, big.atom_name)])
    return old
