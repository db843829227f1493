"""Build protein heavy-atom coordinates from internal coordinates (torsion angles, ideal geometry).

Atoms are placed one after another by the Natural Extension Reference Frame method (NeRF;
Parsons, Holmes, Rojas, Tsai & Strauss 2005, J. Comput. Chem. 26:1063): each new atom is put at a
given bond length, bond angle and torsion angle relative to three atoms already placed. Bond
lengths and angles are the Engh & Huber ideal values (Engh & Huber 1991, Acta Cryst. A47:392),
typed in from memory and kept with their source in ``shiftcheck/data/builder_geometry.json``.

Everything is vectorised over models: torsions of shape ``(n_models, n_res)`` give a coordinate
stack ``(n_models, n_atoms, 3)``, so a whole batch of conformations is built by one pass along
the chain. The builder makes heavy atoms only; protons are added by
:func:`shiftcheck.structure.hydrogens.add_hydrogens` (or by the coordinate reader).
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..datafiles import load_data
from ..errors import InputError
from .ensemble import Ensemble

__all__ = ["geometry_table", "place_atom", "build_backbone", "sidechain_atoms", "n_chi",
           "build_protein", "BACKBONE_ATOMS"]

BACKBONE_ATOMS = ("N", "CA", "C", "O")


@lru_cache(maxsize=1)
def geometry_table() -> dict:
    """The ideal-geometry table (bond lengths, angles, side-chain internal coordinates, rotamers)."""
    return load_data("builder_geometry.json")


def place_atom(a: np.ndarray, b: np.ndarray, c: np.ndarray, bond: float | np.ndarray,
               angle: float | np.ndarray, torsion: float | np.ndarray) -> np.ndarray:
    """Position of atom d with |cd| = bond, angle b-c-d = angle, dihedral a-b-c-d = torsion.

    NeRF construction (Parsons et al. 2005, J. Comput. Chem. 26:1063). Angles in degrees; any
    leading shape (broadcast), last axis xyz.

    Examples
    --------
    >>> import numpy as np
    >>> d = place_atom(np.array([1., 1, 0]), np.array([0., 1, 0]), np.zeros(3), 1.5, 90.0, 90.0)
    >>> np.round(d, 6).tolist()
    [0.0, 0.0, 1.5]
    """
    ang = np.radians(np.asarray(angle, dtype=float))[..., None]
    tor = np.radians(np.asarray(torsion, dtype=float))[..., None]
    bond = np.asarray(bond, dtype=float)[..., None]
    bc = c - b
    bc = bc / np.linalg.norm(bc, axis=-1, keepdims=True)
    n = np.cross(b - a, bc)
    n = n / np.linalg.norm(n, axis=-1, keepdims=True)
    m = np.cross(n, bc)
    d_bc = -np.cos(ang)
    d_m = np.sin(ang) * np.cos(tor)
    d_n = np.sin(ang) * np.sin(tor)
    return c + bond * (d_bc * bc + d_m * m + d_n * n)


def _extend_chain(a: np.ndarray, b: np.ndarray, c: np.ndarray, bond: np.ndarray, angle: np.ndarray,
                  torsion: np.ndarray) -> np.ndarray:
    """Place atoms d_1..d_m after a, b, c, each by one NeRF step from the three atoms before it.

    Instead of m sequential calls to :func:`place_atom`, each step is written as a rigid
    transform of the local frame (x along the last bond, z normal to the last bond plane), and
    the frames are the prefix products of these transforms, computed with a log-depth scan
    (Hillis & Steele 1986) of batched 4x4 matrix products. Shapes: a, b, c (K, 3); bond, angle
    (m,); torsion (K, m). Returns (K, m, 3).
    """
    K, m = torsion.shape
    th = np.radians(angle)[None, :]
    tau = np.radians(torsion)
    ct, st, cs, ss = np.cos(th), np.sin(th), np.cos(tau), np.sin(tau)
    T = np.zeros((K, m, 4, 4))
    # columns: new x, y, z axes in the old frame; translation = bond * new x
    T[..., 0, 0], T[..., 1, 0], T[..., 2, 0] = -ct, st * cs, st * ss
    T[..., 0, 1], T[..., 1, 1], T[..., 2, 1] = -st, -ct * cs, -ct * ss
    T[..., 1, 2], T[..., 2, 2] = -ss, cs
    T[..., :3, 3] = bond[None, :, None] * T[..., :3, 0]
    T[..., 3, 3] = 1.0
    d = 1
    while d < m:
        T[:, d:] = T[:, :-d] @ T[:, d:]
        d *= 2
    x = c - b
    x = x / np.linalg.norm(x, axis=-1, keepdims=True)
    z = np.cross(b - a, x)
    z = z / np.linalg.norm(z, axis=-1, keepdims=True)
    y = np.cross(z, x)
    R = np.stack([x, y, z], axis=-1)                       # (K, 3, 3), columns = axes
    return np.einsum("kij,kmj->kmi", R, T[..., :3, 3]) + c[:, None, :]


def _as_stack(x: np.ndarray | None, n_res: int, fill: float) -> np.ndarray:
    if x is None:
        return np.full((1, n_res), fill)
    x = np.asarray(x, dtype=float)
    return x[None, :] if x.ndim == 1 else x


def build_backbone(phi: np.ndarray, psi: np.ndarray, omega: np.ndarray | None = None,
                   oxt: bool = True) -> dict[str, np.ndarray]:
    """Backbone N, CA, C, O (and the terminal OXT) from φ, ψ, ω.

    Parameters
    ----------
    phi, psi : array (n_res,) or (n_models, n_res), degrees
        φ(i) = C(i-1)-N(i)-CA(i)-C(i), ψ(i) = N(i)-CA(i)-C(i)-N(i+1). φ of the first residue is
        not used; ψ of the last residue places its O and OXT.
    omega : array like phi, optional
        ω(i) = CA(i-1)-C(i-1)-N(i)-CA(i), the peptide bond before residue i (default 180°,
        trans; ω of the first residue is not used).
    oxt : bool
        Also build the C-terminal OXT.

    Returns
    -------
    dict name -> array (n_models, n_res, 3); 'OXT' has shape (n_models, 3).
    """
    phi = _as_stack(phi, np.shape(phi)[-1], 0.0)
    n_models, n_res = phi.shape
    psi = np.broadcast_to(_as_stack(psi, n_res, 0.0), phi.shape)
    omega = np.broadcast_to(_as_stack(omega, n_res, 180.0), phi.shape)
    if n_res < 1:
        raise InputError("cannot build a chain with no residues")
    g = geometry_table()["backbone"]
    bd, an = g["bond"], g["angle"]
    # main-chain atoms N0 CA0 C0 N1 CA1 C1 ...: the first three fixed, the rest by NeRF steps
    N0 = np.zeros((n_models, 3))
    CA0 = np.broadcast_to(np.array([bd["N-CA"], 0.0, 0.0]), (n_models, 3))
    t = np.radians(180.0 - an["N-CA-C"])
    C0 = CA0 + bd["CA-C"] * np.array([np.cos(t), np.sin(t), 0.0])
    if n_res > 1:
        m = n_res - 1
        bond = np.tile([bd["C-N"], bd["N-CA"], bd["CA-C"]], m)
        angle = np.tile([an["CA-C-N"], an["C-N-CA"], an["N-CA-C"]], m)
        tors = np.stack([psi[:, :-1], omega[:, 1:], phi[:, 1:]], axis=2).reshape(n_models, 3 * m)
        rest = _extend_chain(N0, CA0, C0, bond, angle, tors).reshape(n_models, m, 3, 3)
    else:
        rest = np.empty((n_models, 0, 3, 3))
    N = np.concatenate([N0[:, None], rest[:, :, 0]], axis=1)
    CA = np.concatenate([CA0[:, None], rest[:, :, 1]], axis=1)
    C = np.concatenate([C0[:, None], rest[:, :, 2]], axis=1)
    O = np.empty_like(N)
    # carbonyl O in the peptide plane, trans to N(i+1) across CA-C
    if n_res > 1:
        O[:, :-1] = place_atom(N[:, 1:], CA[:, :-1], C[:, :-1], bd["C-O"], an["CA-C-O"], 180.0)
    O[:, -1] = place_atom(N[:, -1], CA[:, -1], C[:, -1], bd["C-O"], an["CA-C-O"], psi[:, -1] + 180.0)
    out = {"N": N, "CA": CA, "C": C, "O": O}
    if oxt:
        out["OXT"] = place_atom(N[:, -1], CA[:, -1], C[:, -1], bd["C-OXT"], an["CA-C-OXT"], psi[:, -1])
    return out


def sidechain_atoms(res_name: str) -> list[str]:
    """Heavy side-chain atoms beyond CB, in build order (empty for Gly and Ala)."""
    return [row[0] for row in _sidechain_rows(res_name)]


def _sidechain_rows(res_name: str) -> list:
    table = geometry_table()["sidechain"]
    if res_name not in table:
        raise InputError(f"builder: unknown residue type {res_name!r}")
    return table[res_name]


def n_chi(res_name: str) -> int:
    """Number of side-chain χ angles the builder uses for a residue type."""
    k = 0
    for row in _sidechain_rows(res_name):
        if row[6]:
            k = max(k, int(row[6][3:]))
    return k


def _residue_atoms(res_name: str, last: bool) -> list[str]:
    names = list(BACKBONE_ATOMS)
    if res_name != "GLY":
        names.append("CB")
    names += sidechain_atoms(res_name)
    if last:
        names.append("OXT")
    return names


def build_protein(sequence: list[str] | tuple[str, ...], phi: np.ndarray, psi: np.ndarray,
                  omega: np.ndarray | None = None, chi: np.ndarray | None = None, *,
                  name: str = "built", chain_id: str = "A", first_seq: int = 1,
                  model_names: list[str] | None = None) -> Ensemble:
    """Heavy-atom models of a protein chain from backbone and side-chain torsions.

    Parameters
    ----------
    sequence : sequence of str
        Three-letter residue names.
    phi, psi, omega : arrays (n_res,) or (n_models, n_res), degrees
        See :func:`build_backbone`.
    chi : array (n_res, 4) or (n_models, n_res, 4), degrees, optional
        Side-chain χ1..χ4 (unused entries ignored). Default: χ1 = -65°, χ2 = 180° (90° for
        aromatic rings), χ3 = χ4 = 180°; proline ring χ1 = 30°, χ2 = -35°.
    name, chain_id, first_seq, model_names
        Annotations of the returned :class:`Ensemble`.

    Returns
    -------
    Ensemble
        One model per row of the torsion arrays; ``built`` is False for every atom.
    """
    seq = [str(s).upper() for s in sequence]
    n_res = len(seq)
    bb = build_backbone(phi, psi, omega)
    n_models = bb["N"].shape[0]
    if bb["N"].shape[1] != n_res:
        raise InputError(f"builder: {n_res} residues but {bb['N'].shape[1]} torsion values")
    if chi is None:
        chi = default_chis(seq)
    chi = np.asarray(chi, dtype=float)
    if chi.ndim == 2:
        chi = np.broadcast_to(chi[None], (n_models,) + chi.shape)
    g = geometry_table()["backbone"]
    names: list[str] = []
    res_of: list[int] = []
    blocks: list[np.ndarray] = []
    for i, rn in enumerate(seq):
        last = i == n_res - 1
        atoms = {k: bb[k][:, i] for k in BACKBONE_ATOMS}
        if rn != "GLY":
            atoms["CB"] = place_atom(atoms["C"], atoms["N"], atoms["CA"], g["bond"]["CA-CB"],
                                     g["angle"]["N-CA-CB"], g["torsion"]["C-N-CA-CB"])
        for atom, ra, rb, rc, bond, angle, src, off in _sidechain_rows(rn):
            tor = off if not src else chi[:, i, int(src[3:]) - 1] + off
            atoms[atom] = place_atom(atoms[ra], atoms[rb], atoms[rc], bond, angle, tor)
        if last:
            atoms["OXT"] = bb["OXT"]
        for atom in _residue_atoms(rn, last):
            names.append(atom)
            res_of.append(i)
            blocks.append(atoms[atom])
    coords = np.stack(blocks, axis=1)
    n_atoms = len(names)
    return Ensemble(
        name=name, sources=[], chain_id=chain_id,
        model_names=model_names or ([name] if n_models == 1 else [f"{name}#{k + 1}" for k in range(n_models)]),
        res_seq=np.arange(first_seq, first_seq + n_res), res_icode=np.array([""] * n_res, dtype=object),
        res_name=np.array(seq, dtype=object), atom_res=np.array(res_of, dtype=np.int64),
        atom_name=np.array(names, dtype=object), element=np.array([a[0] for a in names], dtype=object),
        coords=coords, built=np.zeros(n_atoms, dtype=bool), method="THEORETICAL MODEL")


def default_chis(sequence: list[str]) -> np.ndarray:
    """Default χ angles (n_res, 4): a common rotamer per residue type (see :func:`build_protein`)."""
    out = np.full((len(sequence), 4), 180.0)
    out[:, 0] = -65.0
    for i, rn in enumerate(sequence):
        if rn in ("PHE", "TYR", "TRP", "HIS"):
            out[i, 1] = 90.0
        elif rn in ("ASP", "ASN"):
            out[i, 1] = 0.0
        elif rn == "PRO":
            out[i, :2] = (30.0, -35.0)
    return out
