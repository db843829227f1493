"""Read an assigned chemical-shift list from any supported file: :func:`read_shifts`.

Formats are told apart by content (not by file name), trying the entries of :data:`FORMATS`
in order; the first whose ``detect`` accepts the text reads it:

* ``star3``: NMR-STAR 3.x (tags ``_Atom_chem_shift.*``) - :mod:`shiftcheck.io.star3` (pynmrstar);
* ``star21``: NMR-STAR 2.1 (``_Chem_shift_value``) - :mod:`shiftcheck.io.star21`;
* ``nef``: NEF (``_nef_chemical_shift.*``) - :mod:`shiftcheck.io.nef` (pynmrstar);
* ``star-noshifts``: a STAR file without shift tags - refused with a clear message;
* ``table``: plain tables (seq_id, residue, atom, shift [, error]) - :mod:`shiftcheck.io.shift_table`.

Plain or gzip-compressed. Every reader has the signature
``read(text, path, list_id=None, entity_id=None) -> ShiftList`` and builds its rows through
:func:`shiftcheck.io.shift_rows.build_shift_list`. A new format is one reader module plus one
:class:`ShiftFormat` entry here (placed before ``table``, which accepts anything).
"""
from __future__ import annotations

import importlib
import os
from collections.abc import Callable
from dataclasses import dataclass

from ..errors import InputError
from ..shiftlist import ShiftList
from .textfile import read_text_file

__all__ = ["ShiftFormat", "FORMATS", "read_shifts", "read_text"]


def _is_star3(text: str, low: str) -> bool:
    return "_atom_chem_shift." in low


def _is_star21(text: str, low: str) -> bool:
    return "_chem_shift_value" in low


def _is_nef(text: str, low: str) -> bool:
    return "_nef_chemical_shift." in low


def _is_star(text: str, low: str) -> bool:
    stripped = [ln.strip().lower() for ln in text.splitlines()[:2000] if ln.strip()
                and not ln.lstrip().startswith("#")]
    return any(s.startswith(("data_", "save_", "loop_", "_")) for s in stripped[:50]) or \
        "_saveframe_category" in low


def _anything(text: str, low: str) -> bool:
    return True


def refuse_star_without_shifts(text: str, path: str, list_id=None, entity_id=None) -> ShiftList:
    """The reader of STAR files that hold no shift loop: refuses them."""
    raise InputError("no assigned chemical shift loop found (STAR file without "
                     "_Atom_chem_shift or _Chem_shift_value tags)", path=path)


@dataclass(frozen=True)
class ShiftFormat:
    """One supported shift-file format.

    ``detect(text, text.lower())`` says whether the content is of this format; ``reader`` is
    ``"module:function"`` (imported only when used), called as
    ``function(text, path, list_id=..., entity_id=...)``.
    """

    name: str
    detect: Callable[[str, str], bool]
    reader: str
    description: str

    def read(self, text: str, path: str, list_id: str | None = None,
             entity_id: str | None = None) -> ShiftList:
        mod, func = self.reader.split(":")
        return getattr(importlib.import_module(mod), func)(text, path, list_id=list_id,
                                                            entity_id=entity_id)


#: The dispatch table, tried in order (the last entry accepts any text).
FORMATS: tuple[ShiftFormat, ...] = (
    ShiftFormat("star3", _is_star3, "shiftcheck.io.star3:read_star3", "NMR-STAR 3.x"),
    ShiftFormat("star21", _is_star21, "shiftcheck.io.star21:read_star21", "NMR-STAR 2.1"),
    ShiftFormat("nef", _is_nef, "shiftcheck.io.nef:read_nef", "NEF (NMR Exchange Format)"),
    ShiftFormat("star-noshifts", _is_star, "shiftcheck.io.shift_formats:refuse_star_without_shifts",
                "STAR file without shifts (refused)"),
    ShiftFormat("table", _anything, "shiftcheck.io.shift_table:read_table", "plain table"),
)


def read_shifts(path: str | os.PathLike, list_id: str | None = None,
                entity_id: str | None = None) -> ShiftList:
    """Read one assigned chemical-shift list.

    Parameters
    ----------
    path : path-like
        NMR-STAR 3.x, NMR-STAR 2.1 (also bare save frames, fragments without ``data_`` and
        preambles before it), NEF or plain table; ``.gz`` (or gzip content) accepted.
    list_id : str, optional
        Which assigned shift list (ID or save frame name; NEF: save frame name). Default:
        the only one, else the largest, with a warning naming the others.
    entity_id : str, optional
        Which entity (Entity_ID, Entity_assembly_ID, 2.1 component name, or NEF chain
        code). Default: the entity with most shifts, with a warning.

    Returns
    -------
    ShiftList

    Raises
    ------
    InputError
        Missing, unreadable, binary or empty file; no shift loop; bad values (one line, with
        path and line where known).
    """
    p = str(path)
    text = read_text(p)
    fmt = _format_of(text)
    from .star_fragments import normalise_star_text

    text, notes = normalise_star_text(text, fmt.name)     # bare save frames, fragments, preambles
    try:
        shifts = fmt.read(text, p, list_id=list_id, entity_id=entity_id)
        shifts.warnings[:0] = notes
        return shifts
    except RecursionError:  # pragma: no cover - pathological nesting
        raise InputError("file structure too deeply nested to read", path=p) from None


def read_text(path: str) -> str:
    """File contents as text; gzip is unpacked; refuses missing, empty and binary files."""
    return read_text_file(path, "shift file (NMR-STAR or table)")


def _format_of(text: str) -> ShiftFormat:
    low = text.lower()
    return next(f for f in FORMATS if f.detect(text, low))

