"""All atoms of a gemmi Structure as flat numpy arrays (one C++ pass instead of per-atom Python).

:mod:`shiftcheck.io.coords` builds the topology of a file from gemmi's objects for the first
model; for every further model it only checks that the topology is the same and copies the
coordinates. :class:`FlatModels` does both from ``gemmi.FlatStructure`` (gemmi >= 0.7), which
hands over positions, atom/residue/chain names, numbers, insertion codes and alternate
locations of every atom of every model as arrays, in gemmi's own order (model, chain, residue,
atom — the order of iterating over the objects):

* :meth:`FlatModels.signature` of a model is the bytes of those fields (and the elements) of
  the chosen chain's atoms plus the residue sizes — the content of the object-based signature
  (residue name, number, insertion code, atom names and altlocs per residue) and everything
  else the topology is built from, so equal signatures mean equal topology, also between
  files (shiftcheck.io.coords remembers the topologies of files read before);
* :meth:`FlatModels.positions` is the chain's slice of the position array.

:func:`flat_models` returns None (the caller then walks gemmi's objects) when gemmi has no
FlatStructure or a name does not fit its fixed-width fields; the caller also walks the objects
when the first model's positions do not equal those read from the objects.

Set ``USE_FLAT = False`` (module attribute) to walk the objects always (tests compare both).
"""
from __future__ import annotations

import numpy as np

__all__ = ["FlatModels", "flat_models"]

#: False: always walk gemmi's objects (the reference path).
USE_FLAT = True


class FlatModels:
    """Flat per-atom arrays of one chain in every model of a Structure."""

    def __init__(self, st, chain_id: str):
        import gemmi

        fs = gemmi.FlatStructure(st)
        names = np.asarray(fs.atom_names, dtype=np.int8)
        resn = np.asarray(fs.residue_names, dtype=np.int8)
        chains = np.asarray(fs.chain_ids, dtype=np.int8)
        code = chain_id.encode()
        if len(code) >= chains.shape[1] or (names[:, -1] != 0).any() or (resn[:, -1] != 0).any():
            raise ValueError("name wider than gemmi's flat fields")
        self.pos = np.asarray(fs.pos, dtype=np.float64)
        key = np.zeros(chains.shape[1], np.int8)
        key[:len(code)] = np.frombuffer(code, np.int8)
        self._mine = (chains == key).all(axis=1)
        fields = np.concatenate([names, resn, np.asarray(fs.altlocs, np.int8)[:, None],
                                 np.asarray(fs.icodes, np.int8)[:, None],
                                 np.asarray(fs.elements, np.uint8).view(np.int8)[:, None],
                                 np.ascontiguousarray(np.asarray(fs.resnums, np.int32)).view(np.int8).reshape(-1, 4)],
                                axis=1)
        self._fields = np.ascontiguousarray(fields)
        counts = [m.count_atom_sites() for m in st]
        self._bounds = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
        if self._bounds[-1] != self.pos.shape[0]:
            raise ValueError("atom counts differ")
        self._chain_id = chain_id

    def _rows(self, k: int) -> np.ndarray:
        a, b = self._bounds[k], self._bounds[k + 1]
        return a + np.flatnonzero(self._mine[a:b])

    def signature(self, k: int, model) -> tuple:
        sizes = tuple(len(r) for ch in model if ch.name == self._chain_id for r in ch)
        return sizes, self._fields[self._rows(k)].tobytes()

    def positions(self, k: int) -> np.ndarray:
        return self.pos[self._rows(k)]


def flat_models(st, chain_id: str) -> FlatModels | None:
    """:class:`FlatModels` of ``st``, or None where unavailable. The caller checks one model's
    positions against the object walk before trusting the order (shiftcheck.io.coords)."""
    if not USE_FLAT:
        return None
    try:
        return FlatModels(st, chain_id)
    except (ImportError, AttributeError, ValueError, TypeError):
        return None
