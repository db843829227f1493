"""NMR-STAR text as it circulates: exported fragments and preambles, made readable.

Shift lists are often passed around as pieces of an archive entry:

* a bare save frame (``save_assigned_chem_shift_list_1`` ... ``save_``) with no ``data_``
  line, as the archive exports single lists;
* an NMR-STAR 2.1 fragment: tags and loops (``_Mol_residue_sequence``, the shift loop) with no
  ``data_`` block and no save frame;
* a line of text before ``data_`` (a time stamp written by a correction script, ``.str.corr``).

:func:`normalise_star_text` turns these into a well-formed STAR text for the readers without
moving any line: the missing ``data_`` (and, for a frameless fragment, ``save_``) header is
put on the first content line, a closing ``save_`` is appended, and preamble lines become
comments. It returns a note for each change, which ends up in ``ShiftList.warnings``. The
STAR syntax follows Hall & Spadaccini 1994 (J. Chem. Inf. Comput. Sci. 34:505) and the
NMR-STAR dictionary (Ulrich et al. 2019, J. Biomol. NMR 73:5).
"""
from __future__ import annotations

import re

__all__ = ["normalise_star_text"]

_FRAGMENT = "shiftcheck_fragment"
_STARTS = ("data_", "save_", "loop_", "_", "global_")
_DATA = re.compile(r"^\s*data_\S*", re.M | re.I)


def _content_lines(lines: list[str]):
    """(index, stripped) of lines that are neither blank nor comments, outside text blocks."""
    in_text = False
    for i, ln in enumerate(lines):
        if ln.startswith(";"):
            in_text = not in_text
            continue
        if in_text:
            continue
        s = ln.strip()
        if s and not s.startswith("#"):
            yield i, s


def _shift_loop(content) -> int | None:
    """Position in ``content`` of the 2.1 ``loop_`` whose tags include _Chem_shift_value."""
    for k, (_, s) in enumerate(content):
        if s.lower() != "loop_":
            continue
        for _, t in content[k + 1:]:
            if not t.startswith("_"):
                break
            if t.split()[0].lower() == "_chem_shift_value":
                return k
    return None


def normalise_star_text(text: str, fmt: str) -> tuple[str, list[str]]:
    """Make fragments and preambles readable; returns ``(text, notes)``.

    Parameters
    ----------
    text : str
        File contents (Unix line ends).
    fmt : str
        'star3' or 'star21' (from the format table, :data:`shiftcheck.io.shift_formats.FORMATS`); other formats
        are returned unchanged.

    Returns
    -------
    (str, list of str)
        Text with the same line numbering and notes such as ``"no data_ block found: read as
        a fragment (save frame at line 40)"``.
    """
    if fmt not in ("star3", "star21"):
        return text, []
    lines = text.split("\n")
    content = list(_content_lines(lines))
    if not content:
        return text, []
    notes: list[str] = []
    first_data = next((i for i, s in content if s.lower().startswith("data_")), None)
    if first_data is not None:
        pre = [i for i, s in content if i < first_data]
        if pre:
            for i in pre:
                lines[i] = "# " + lines[i]
            shown = content[0][1][:40]
            notes.append(f"line {pre[0] + 1}: {len(pre)} line(s) before data_ ignored ({shown!r})")
        return "\n".join(lines), notes
    # no data_ block at all
    i0, s0 = content[0]
    low = s0.lower()
    if not low.startswith(_STARTS):       # a preamble before a bare save frame / fragment
        k = next((j for j, (i, s) in enumerate(content) if s.lower().startswith(_STARTS)), None)
        if k is None:
            return text, []
        for i, _ in content[:k]:
            lines[i] = "# " + lines[i]
        notes.append(f"line {i0 + 1}: {k} line(s) before the STAR content ignored ({s0[:40]!r})")
        i0, s0 = content[k]
        low = s0.lower()
    if low.startswith("save_"):
        lines[i0] = f"data_{_FRAGMENT} " + lines[i0]
        notes.append(f"no data_ block found: read as a fragment (save frame at line {i0 + 1})")
    else:
        head = f"data_{_FRAGMENT} save_{_FRAGMENT} "
        if fmt == "star21":   # the 2.1 readers find the sequence in a monomeric_polymer frame
            head += "_Saveframe_category monomeric_polymer "
            k = _shift_loop(content)
            if k is not None and content[k][0] != i0:    # the shift loop in a frame of its own
                lines[content[k][0]] = f"save_ save_{_FRAGMENT}_shifts " + lines[content[k][0]]
        else:
            head += "_Assigned_chem_shift_list.Sf_category assigned_chemical_shifts "
        lines[i0] = head + lines[i0]
        lines.append("save_")
        notes.append(f"no data_ block or save frame found: read the tags and loops from line "
                     f"{i0 + 1} as a fragment")
    return "\n".join(lines), notes
