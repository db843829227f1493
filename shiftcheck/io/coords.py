"""Read protein models from PDB and mmCIF files (plain or gzip) into :class:`Ensemble` stacks.

Parsing is done by gemmi (Wojdyr 2022, J. Open Source Softw. 7:4200), which parses about
5 million atoms per second here (benchmarks/README.md); shiftcheck then picks one protein chain, resolves
alternate locations, renames atoms to the IUPAC 1998 convention and packs all models of a
file into one (n_models, n_atoms, 3) coordinate array.

Rules (see :func:`read_models`): one chain per ensemble (``chain=`` or the first chain with
protein residues); alternate locations: the conformer with the highest mean occupancy in each
residue, the first one on ties; MSE read as MET (SE -> SD); waters, ligands and non-protein
residues dropped with a note; models whose atom sets differ are merged on the union topology
with NaN coordinates where an atom is absent.
"""
from __future__ import annotations

import copy
import os
import re
from typing import Sequence

import numpy as np

from ..chem.names import normalise_comp_id, normalise_residue_atom_names
from ..chem.residues import AA20, HEAVY_ATOMS
from ..errors import InputError, ShiftcheckError
from ..structure.ensemble import Ensemble
from ._coord_notes import note_dropped, note_missing
from ._flat import flat_models
from .chains import PARTNER_MODES, attach_partners, choose_chain
from .pdb_repair import repair_pdb_columns
from .textfile import read_text_file

__all__ = ["read_models", "read_model_file", "PARTNER_MODES"]

_AA20 = frozenset(AA20)
_WATERS = frozenset({"HOH", "WAT", "DOD", "H2O", "TIP", "TIP3", "SOL"})


def read_models(paths: str | os.PathLike | Sequence[str | os.PathLike], chain: str | None = None,
                build_hydrogens: bool = True, partners: str = "auto") -> list[Ensemble]:
    """Read one or more coordinate files; one :class:`Ensemble` per file.

    Parameters
    ----------
    paths : path or sequence of paths
        PDB or mmCIF files, optionally gzip-compressed (``.gz``). A multi-model file gives one
        ensemble with one model per MODEL record (named ``file#N``); a single-model file gives
        one model named after the file.
    chain : str, optional
        Author chain ID. Default: the first chain holding protein residues (other protein
        chains are named in the warnings).
    build_hydrogens : bool
        Add the protons the predictor needs where the file has none
        (:func:`shiftcheck.structure.hydrogens.add_hydrogens`).
    partners : {"auto", "use", "ignore"}
        The file's other protein chains as surroundings of the chosen one
        (:attr:`Ensemble.partners`: the partner of a homodimer, the subunits of a complex, seen by
        the through-space terms). ``auto``: used unless the file is a crystal structure, whose
        other chains may be copies in the asymmetric unit rather than partners in solution.

    Returns
    -------
    list of Ensemble

    Raises
    ------
    InputError
        Missing, empty, binary or unreadable file; no protein residues; unknown chain.

    Examples
    --------
    >>> ens = read_models("1D3Z.pdb")[0]            # doctest: +SKIP
    >>> ens.coords.shape                           # doctest: +SKIP
    (10, 1231, 3)
    """
    if isinstance(paths, (str, os.PathLike)):
        paths = [paths]
    out = [read_model_file(p, chain=chain, partners=partners) for p in paths]
    if build_hydrogens:               # files of one topology built as one stack (same result)
        from ..structure.hydrogens import add_hydrogens_many

        out = add_hydrogens_many(out)
    return out


def read_model_file(path: str | os.PathLike, chain: str | None = None,
                    partners: str = "auto") -> Ensemble:
    """Read one file into an :class:`Ensemble` (no hydrogens added). See :func:`read_models`."""
    if partners not in PARTNER_MODES:
        raise ValueError(f"partners must be one of {', '.join(PARTNER_MODES)}, not {partners!r}")
    path = str(path)
    text = _read_text(path)
    repairs: list[str] = []
    if not _is_cif(text):             # malformed charge/element/occupancy/B columns
        text, repairs = repair_pdb_columns(text)
    st = _parse(text, path)
    try:
        ens = _to_ensemble(st, path, chain)
        ens.warnings[:0] = [f"repaired: {r}" for r in repairs] + (
            ["blank chain ID: read as chain '' (select it with --chain '')"] if ens.chain_id == "" else [])
        if partners != "ignore":
            attach_partners(st, ens, partners, lambda c: _to_ensemble(st, path, c))
        return ens
    except ShiftcheckError:
        raise
    except Exception as exc:  # defensive: gemmi objects from odd input
        raise InputError(f"cannot interpret coordinates ({type(exc).__name__}: {exc})", path=path) from None


# ----------------------------------------------------------------------------- reading text

def _read_text(path: str) -> str:
    return read_text_file(path, "PDB or mmCIF file")


def _is_cif(text: str) -> bool:
    for line in text[:4096].splitlines():
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        return s.lower().startswith("data_")
    return False


def _line_of(exc: Exception) -> int | None:
    m = re.search(r"line (\d+)", str(exc), re.IGNORECASE)
    return int(m.group(1)) if m else None


def _parse(text: str, path: str):
    import gemmi

    try:
        if _is_cif(text):
            doc = gemmi.cif.read_string(text)
            block = doc[0]
            if block.find_value("_atom_site.id") is None and not block.find_mmcif_category("_atom_site."):
                raise InputError("mmCIF file has no _atom_site records (no coordinates)", path=path)
            st = gemmi.make_structure_from_block(block)
        else:
            st = gemmi.read_pdb_string(text)
    except ShiftcheckError:
        raise
    except Exception as exc:
        msg = " ".join(str(exc).split())[:200]
        raise InputError(f"unreadable coordinates: {msg}", path=path, line=_line_of(exc)) from None
    if len(st) == 0 or all(m.count_atom_sites() == 0 for m in st):
        raise InputError("no atoms found (not a PDB or mmCIF coordinate file?)", path=path)
    return st


# ----------------------------------------------------------------------------- building the ensemble

_NAME_CACHE: dict[tuple, list[str]] = {}


def _residue_names(orig_res: str, names: tuple[str, ...]) -> list[str]:
    """IUPAC names of one residue's atoms, normalised together (old geminal 1/2 pairs)."""
    key = (orig_res, names)
    out = _NAME_CACHE.get(key)
    if out is None:
        try:
            out = normalise_residue_atom_names(orig_res, list(names))
        except Exception:
            out = [n.strip().upper() for n in names]
        if len(_NAME_CACHE) > 100_000:
            _NAME_CACHE.clear()
        _NAME_CACHE[key] = out
    return out


def _pick_altloc(atoms: list[tuple]) -> list[tuple]:
    """atoms: (name, altloc, occ, element, raw index); keep blank altloc + the best conformer."""
    occ: dict[str, list[float]] = {}
    for a in atoms:
        if a[1] != "\0":
            occ.setdefault(a[1], []).append(a[2])
    best = max(occ, key=lambda k: (sum(occ[k]) / len(occ[k]), -list(occ).index(k)))
    keep, seen = [], set()
    for a in atoms:
        if a[1] in ("\0", best) and a[0] not in seen:
            keep.append(a)
            seen.add(a[0])
    for a in atoms:  # atoms that exist only in another conformer
        if a[0] not in seen:
            keep.append(a)
            seen.add(a[0])
    return keep


def _signature(model, chain_id: str) -> list:
    """Residue names, numbers and raw atom names/altlocs of the chain: equal signatures mean
    equal topology, so later models can reuse the first model's atom selection."""
    return [(r.name, r.seqid.num, r.seqid.icode, tuple((a.name, a.altloc) for a in r))
            for ch in model if ch.name == chain_id for r in ch]


def _positions(model, chain_id: str) -> np.ndarray:
    return np.array([a.pos.tolist() for ch in model if ch.name == chain_id for r in ch for a in r],
                    dtype=np.float64).reshape(-1, 3)


def _extract(model, chain_id: str, notes: dict) -> tuple[list, list, list]:
    """Residue keys, atom keys and raw atom indices (into :func:`_positions`) of one model."""
    res_keys: list[tuple] = []
    atom_keys: list[tuple] = []
    raw: list[int] = []
    seen_res: set = set()
    k = 0
    for ch in model:
        if ch.name != chain_id:
            continue
        for r in ch:
            orig = r.name
            n_here = len(r)
            name = normalise_comp_id(orig) if orig not in _WATERS else orig
            if name not in _AA20:
                kind = "waters" if orig in _WATERS else "other residues"
                notes.setdefault(kind, {}).setdefault(orig, set()).add(str(r.seqid))
                k += n_here
                continue
            rk = (r.seqid.num, r.seqid.icode.strip(), name)
            if (rk[0], rk[1]) in seen_res:
                notes.setdefault("duplicate residues", set()).add(f"{rk[0]}{rk[1]}")
                k += n_here
                continue
            seen_res.add((rk[0], rk[1]))
            if orig != name:
                notes.setdefault("renamed", {}).setdefault(orig, set()).add(name)
            atoms = [(a.name, a.altloc, a.occ, a.element.name, k + i) for i, a in enumerate(r)]
            k += n_here
            if any(a[1] != "\0" for a in atoms):
                atoms = _pick_altloc(atoms)
                notes["altloc"] = notes.get("altloc", 0) + 1
            ri = len(res_keys)
            res_keys.append(rk)
            names_here = set()
            for a, an in zip(atoms, _residue_names(orig, tuple(a[0] for a in atoms))):
                if an in names_here:
                    notes.setdefault("duplicate atoms", set()).add(f"{name} {rk[0]}{rk[1]} {an}")
                    continue
                names_here.add(an)
                el = "S" if (orig == "MSE" and an == "SD") else (a[3] if a[3] not in ("", "X") else an[:1])
                atom_keys.append((ri, an, el.upper()))
                raw.append(a[4])
    return res_keys, atom_keys, raw


#: Topologies of first models read before, by (chain, flat signature): residue keys, atom keys,
#: raw indices and notes. The files of a decoy set share one, so each later file skips the
#: per-atom walk of :func:`_extract` (filled only after the flat arrays were checked).
_KNOWN: dict = {}


def _to_ensemble(st, path: str, chain: str | None) -> Ensemble:
    warnings: list[str] = []
    chain_id = choose_chain(st[0], chain, path, warnings)
    base = os.path.basename(path)
    notes: dict = {}
    per_model = []
    first_sig = first = flat = None     # flat: all models as arrays (io/_flat.py), once checked
    fm = flat_models(st, chain_id)
    for mi, model in enumerate(st):
        sig = None if first is None else (flat.signature(mi, model) if flat else _signature(model, chain_id))
        if first is not None and sig == first_sig:          # same topology: coordinates only
            rk, ak, raw = first
        else:
            key = (chain_id, fm.signature(mi, model)) if (first is None and fm is not None) else None
            known = _KNOWN.get(key) if key is not None else None
            if known is not None:                           # a file of this topology was read before
                rk, ak, raw = known[:3]
                notes.update(copy.deepcopy(known[3]))
                flat = fm
            else:
                rk, ak, raw = _extract(model, chain_id, notes)
            if first is None and rk:
                first = (rk, ak, raw)
                if (known is None and fm is not None and not notes.get("altloc")
                        and np.array_equal(fm.positions(mi), _positions(model, chain_id))):
                    flat = fm
                    if len(_KNOWN) >= 64:
                        _KNOWN.clear()
                    _KNOWN[key] = (rk, ak, raw, copy.deepcopy(notes))
                first_sig = (None if notes.get("altloc") else
                             flat.signature(mi, model) if flat else _signature(model, chain_id))
        if rk:
            pos = flat.positions(mi) if flat else _positions(model, chain_id)
            xyz = pos[np.asarray(raw, dtype=np.int64)]
            per_model.append((str(model.num), rk, ak, xyz))
    if not per_model:
        raise InputError(f"chain {chain_id!r} has no protein residues", path=path)
    names = [base] if len(st) == 1 else [f"{base}#{m[0]}" for m in per_model]
    if len(per_model) < len(st):
        warnings.append(f"{len(st) - len(per_model)} model(s) without chain {chain_id} protein atoms skipped")

    first_rk, first_ak = per_model[0][1], per_model[0][2]
    if all(m[1] == first_rk and m[2] == first_ak for m in per_model[1:]):
        res_keys, atom_keys = first_rk, first_ak
        coords = np.stack([m[3] for m in per_model]) if first_ak else np.zeros((len(per_model), 0, 3))
    else:
        res_keys, atom_keys, coords = _union(per_model, warnings)
    coords = coords.reshape(len(per_model), len(atom_keys), 3)
    bad = ~np.isfinite(coords)
    if bad.any():
        coords[bad.any(axis=-1)] = np.nan

    res_seq = np.array([k[0] for k in res_keys], dtype=np.int64)
    res_icode = np.array([k[1] for k in res_keys], dtype="U1")
    res_name = np.array([k[2] for k in res_keys], dtype="U3")
    atom_res = np.array([k[0] for k in atom_keys], dtype=np.int64)
    atom_name = np.array([k[1] for k in atom_keys], dtype="U4")
    element = np.array([k[2] for k in atom_keys], dtype="U2")
    note_dropped(notes, chain_id, warnings)
    note_missing(res_name, res_seq, res_icode, atom_res, atom_name, warnings, HEAVY_ATOMS)
    method = str(dict(st.info).get("_exptl.method", "")).strip()
    return Ensemble(name=base, sources=[path], model_names=names, chain_id=chain_id,
                    res_seq=res_seq, res_icode=res_icode, res_name=res_name, atom_res=atom_res,
                    atom_name=atom_name, element=element, coords=coords,
                    built=np.zeros(len(atom_keys), dtype=bool), method=method, warnings=warnings)


def _union(per_model: list, warnings: list[str]):
    """Union topology over models; NaN where a model lacks an atom."""
    res_index: dict[tuple, int] = {}
    res_keys: list[tuple] = []
    atom_index: dict[tuple, int] = {}
    atom_keys: list[tuple] = []
    maps = []
    for _, rk, ak, _ in per_model:
        rmap = []
        for k in rk:
            if (k[0], k[1]) not in res_index:
                res_index[(k[0], k[1])] = len(res_keys)
                res_keys.append(k)
            rmap.append(res_index[(k[0], k[1])])
        amap = []
        for a in ak:
            key = (rmap[a[0]], a[1])
            if key not in atom_index:
                atom_index[key] = len(atom_keys)
                atom_keys.append((rmap[a[0]], a[1], a[2]))
            amap.append(atom_index[key])
        maps.append(np.array(amap, dtype=np.int64))
    coords = np.full((len(per_model), len(atom_keys), 3), np.nan)
    for i, (m, amap) in enumerate(zip(per_model, maps)):
        if len(amap):
            coords[i, amap] = np.asarray(m[3], dtype=np.float64).reshape(-1, 3)
    # residues in chain order (number, insertion code), atoms grouped by residue
    rorder = sorted(range(len(res_keys)), key=lambda i: (res_keys[i][0], res_keys[i][1]))
    rnew = np.empty(len(res_keys), dtype=np.int64)
    rnew[rorder] = np.arange(len(res_keys))
    aorder = np.array(sorted(range(len(atom_keys)), key=lambda i: (rnew[atom_keys[i][0]], i)), dtype=np.int64)
    res_keys = [res_keys[i] for i in rorder]
    atom_keys = [(int(rnew[atom_keys[i][0]]), atom_keys[i][1], atom_keys[i][2]) for i in aorder]
    coords = coords[:, aorder]
    missing = np.isnan(coords[..., 0])
    n_atoms = int(missing.any(axis=0).sum())
    n_models = int(missing.any(axis=1).sum())
    warnings.append(f"models differ in their atoms: {n_atoms} atoms absent from {n_models} model(s); "
                    "using the union of atoms with missing coordinates left empty")
    return res_keys, atom_keys, coords
