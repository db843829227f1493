"""An ensemble of models sharing one topology: annotations per atom + (models, atoms, 3) coordinates.

Modelled on the "atom array stack" idea: the per-atom annotations (residue, name, element)
are stored once; coordinates of all models are one numpy array, so every later stage can
work on all models at once by broadcasting.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["Ensemble", "stack_compatible", "stack_ensembles", "with_partners"]

_SHARED: dict = {}     # topology (residue count, atom residues, atom names) -> name lookups


@dataclass
class Ensemble:
    """Models of one protein chain with a shared topology.

    Attributes
    ----------
    name : str
        Display name (file name, or a name given by the caller).
    sources : list of str
        Files the models came from.
    model_names : list of str
        One per model: the file name, or ``name#N`` for model N of a multi-model file.
    chain_id : str
        Author chain ID.
    res_seq, res_icode, res_name : np.ndarray, shape (n_res,)
        Author residue number, insertion code ('' if none), residue name (three-letter,
        MSE already turned into MET).
    atom_res : np.ndarray of int, shape (n_atoms,)
        Index into the residue arrays for each atom.
    atom_name : np.ndarray of str, shape (n_atoms,)
        IUPAC 1998 atom name (NMR-STAR convention).
    element : np.ndarray of str, shape (n_atoms,)
    coords : np.ndarray of float, shape (n_models, n_atoms, 3)
        Coordinates in Å; NaN where an atom is missing from a model.
    built : np.ndarray of bool, shape (n_atoms,)
        True for hydrogens built by shiftcheck rather than read from the file.
    method : str
        Experimental method from the header where present ('' otherwise).
    warnings : list of str
    partners : list of Ensemble
        Other protein chains of the same models (same model count and order), used only as
        surroundings of this chain by the through-space terms (:func:`with_partners`): the
        partner of a homodimer, the other subunits of a complex. Empty for a single chain.
    chain_starts : tuple of int
        Residue indices where a chain begins: ``(0,)`` for one chain; set by
        :func:`with_partners` on the combined ensemble (termini, chain junctions).
    """

    name: str
    sources: list[str]
    model_names: list[str]
    chain_id: str
    res_seq: np.ndarray
    res_icode: np.ndarray
    res_name: np.ndarray
    atom_res: np.ndarray
    atom_name: np.ndarray
    element: np.ndarray
    coords: np.ndarray
    built: np.ndarray
    method: str = ""
    warnings: list[str] = field(default_factory=list)
    partners: list = field(default_factory=list)
    chain_starts: tuple = (0,)
    _index: dict | None = field(default=None, repr=False, compare=False)

    @property
    def n_models(self) -> int:
        return int(self.coords.shape[0])

    @property
    def n_atoms(self) -> int:
        return int(self.coords.shape[1])

    @property
    def n_residues(self) -> int:
        return int(self.res_name.shape[0])

    @property
    def one_letter(self) -> str:
        from ..chem.residues import THREE_TO_ONE

        return "".join(THREE_TO_ONE.get(str(r), "X") for r in self.res_name)

    def _cache(self) -> dict:
        """Name lookups of this topology; shared by all ensembles with the same residues and
        atom names (the files of a decoy set, the copies made while building protons)."""
        if self._index is None:
            names = np.asarray(self.atom_name)
            key = (self.n_residues, np.asarray(self.atom_res, dtype=np.int64).tobytes(),
                   (names if names.dtype.kind == "U" else names.astype(str)).astype("U8").tobytes())
            if key not in _SHARED:
                if len(_SHARED) >= 32:
                    _SHARED.clear()
                _SHARED[key] = {}
            self._index = _SHARED[key]
        return self._index

    def _lookup(self) -> dict:
        c = self._cache()
        if "atoms" not in c:
            c["atoms"] = {(int(r), str(a)): i for i, (r, a) in enumerate(zip(self.atom_res, self.atom_name))}
        return c["atoms"]

    def index(self, res_index: int, atom_name: str) -> int:
        """Atom index of ``atom_name`` in residue ``res_index`` (0-based), or -1."""
        return self._lookup().get((int(res_index), atom_name), -1)

    def indices(self, res_index: np.ndarray, atom_name: str | np.ndarray) -> np.ndarray:
        """Vectorised :meth:`index`: int array, -1 where absent.

        ``atom_name`` may be one name for all residues or an array of names.
        Residue indices outside the chain give -1.
        """
        res_index = np.asarray(res_index)
        if res_index.dtype.kind not in "iu":
            res_index = res_index.astype(np.int64)
        if isinstance(atom_name, str) or np.ndim(atom_name) == 0:
            return self._take(str(atom_name), res_index)
        names = np.broadcast_to(np.asarray(atom_name, dtype=object), res_index.shape)
        out = np.full(res_index.shape, -1, dtype=np.int64)
        for nm in set(names.ravel().tolist()):
            sel = names == nm
            out[sel] = self._take(str(nm), res_index[sel])
        return out

    def _take(self, name: str, res_index: np.ndarray) -> np.ndarray:
        """Atom index of ``name`` in each residue of ``res_index`` via a per-name table
        (n_res,) built once per ensemble (one comparison over the atom names)."""
        tables = self._cache().setdefault("tables", {})
        tab = tables.get(name)
        if tab is None:
            tab = np.full(self.n_residues + 1, -1, dtype=np.int64)     # last entry: out of range
            hit = np.flatnonzero(np.asarray(self.atom_name) == name)
            tab[np.asarray(self.atom_res)[hit]] = hit
            tables[name] = tab
        r = np.where((res_index >= 0) & (res_index < self.n_residues), res_index, self.n_residues)
        return tab[r].reshape(res_index.shape)

    def xyz(self, res_index: np.ndarray, atom_name: str | np.ndarray) -> np.ndarray:
        """Coordinates (n_models, len(res_index), 3) of the named atoms, NaN where absent."""
        idx = self.indices(res_index, atom_name)
        out = np.full((self.n_models, idx.size, 3), np.nan)
        ok = idx >= 0
        out[:, ok] = self.coords[:, idx[ok]]
        return out

    def residue_label(self, res_index: int) -> str:
        """E.g. 'A:45 LYS' or 'A:45A LYS'."""
        return f"{self.chain_id}:{self.res_seq[res_index]}{self.res_icode[res_index]} {self.res_name[res_index]}"

    def select_models(self, which: np.ndarray | list[int]) -> "Ensemble":
        """A new ensemble holding only the given model indices (topology shared)."""
        import dataclasses

        which = list(which)
        return dataclasses.replace(self, coords=self.coords[which],
                                   model_names=[self.model_names[i] for i in which],
                                   warnings=list(self.warnings), _index=None,
                                   partners=[p.select_models(which) for p in self.partners])


def stack_compatible(a: Ensemble, b: Ensemble) -> bool:
    """True when ``b`` has the topology of ``a`` (chain, residues, atom names, elements, built
    flags) and the same atoms present in at least one model, so that stacking their models
    changes nothing an ensemble-wide step derives from the topology."""
    if a is b:
        return True
    if a.partners or b.partners:      # complexes are processed one file at a time
        return False
    if a.chain_id != b.chain_id or a.n_atoms != b.n_atoms or a.n_residues != b.n_residues:
        return False
    for f in ("res_seq", "res_icode", "res_name", "atom_res", "atom_name", "element", "built"):
        if not np.array_equal(getattr(a, f), getattr(b, f)):
            return False
    return bool(np.array_equal(_present(a), _present(b)))


def _present(ens: Ensemble) -> np.ndarray:
    return ~np.all(np.isnan(ens.coords[..., 0]), axis=0)


def stack_ensembles(ensembles: list[Ensemble]) -> Ensemble:
    """One ensemble holding the models of several stack-compatible ones, in order (the first
    one's name and topology; warnings of the first only)."""
    import dataclasses

    first = ensembles[0]
    return dataclasses.replace(first, sources=[s for e in ensembles for s in e.sources],
                               model_names=[m for e in ensembles for m in e.model_names],
                               coords=np.concatenate([e.coords for e in ensembles]),
                               warnings=list(first.warnings), _index=None,
                               partners=[stack_ensembles([e.partners[k] for e in ensembles])
                                         for k in range(len(first.partners))])


def with_partners(ens: Ensemble) -> Ensemble:
    """The chain and its partner chains as one ensemble (the chain's atoms first, so its atom
    and residue indices stay valid), for terms that sum over the surroundings of a target atom.

    ``ens`` itself when it has no partners. The partners' residues follow the chain's, each
    chain's residues numbered on from the one before; ``chain_starts`` marks where each chain
    begins (a chain junction is never a peptide bond: the terms test the C–N distance).
    """
    if not ens.partners:
        return ens
    parts = [ens] + [p for p in ens.partners if p.n_models == ens.n_models]
    starts = np.cumsum([0] + [p.n_residues for p in parts])
    cat = np.concatenate
    return Ensemble(name=ens.name, sources=list(ens.sources), model_names=list(ens.model_names),
                    chain_id="+".join(p.chain_id for p in parts),
                    res_seq=cat([p.res_seq for p in parts]),
                    res_icode=cat([np.asarray(p.res_icode, dtype="U1") for p in parts]),
                    res_name=cat([np.asarray(p.res_name, dtype="U3") for p in parts]),
                    atom_res=cat([np.asarray(p.atom_res, dtype=np.int64) + starts[k]
                                  for k, p in enumerate(parts)]),
                    atom_name=cat([np.asarray(p.atom_name, dtype="U4") for p in parts]),
                    element=cat([np.asarray(p.element, dtype="U2") for p in parts]),
                    coords=cat([p.coords for p in parts], axis=1),
                    built=cat([p.built for p in parts]), method=ens.method,
                    chain_starts=tuple(int(x) for x in starts[:-1]))
