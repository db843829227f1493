"""Tolerant reading of PDB columns that carry no geometry.

Files written by structure-prediction servers and older programs fill the PDB columns after
the coordinates in their own ways: a two-digit number in the charge columns 79-80 (``01``),
the 73-80 layout of prediction-contest files (``1SG 102``: segment, model and line counters),
letters or digits in the element columns 77-78 that are not an element, text in the occupancy
(55-60) or B-factor (61-66) columns. None of these carries geometry, but one such line makes
gemmi refuse the whole file.

:func:`repair_pdb_columns` finds the ATOM/HETATM lines whose columns 55-80 do not follow the
PDB format (wwPDB, "Protein Data Bank Contents Guide: Atomic Coordinate Entry Format
Description", version 3.3, section ATOM) with one regular-expression pass (no Python loop
over good lines; each distinct tail is checked once), and rewrites only those columns:

* charge (79-80) not ``  ``, ``1+``, ``2-`` ... -> blank;
* element (77-78) not an element symbol -> blank (gemmi then takes it from the atom name);
* occupancy (55-60) not a number -> 1.00; B-factor (61-66) not a number -> 0.00 (neither is
  used by the predictor; the occupancy only picks among alternate locations).

Columns 1-54 (names, residue numbers, coordinates) are never changed. Each kind of repair is
reported once per file, with the first line and the count.
"""
from __future__ import annotations

import re

__all__ = ["repair_pdb_columns", "ELEMENTS"]

#: Element symbols (IUPAC periodic table, common practice), upper case.
ELEMENTS = frozenset("""H HE LI BE B C N O F NE NA MG AL SI P S CL AR K CA SC TI V CR MN FE CO NI CU
ZN GA GE AS SE BR KR RB SR Y ZR NB MO TC RU RH PD AG CD IN SN SB TE I XE CS BA LA CE PR ND PM SM EU
GD TB DY HO ER TM YB LU HF TA W RE OS IR PT AU HG TL PB BI PO AT RN FR RA AC TH PA U NP PU AM CM BK
CF ES FM MD NO LR D""".split())

_EL = "|".join(sorted({e.rjust(2) for e in ELEMENTS} | {e.ljust(2) for e in ELEMENTS} | {"  "},
                      key=lambda s: (-len(s.strip()), s)))
_CH = r"  |[0-9][-+]|[-+][0-9]| [0-9]| [-+]"
_N6 = r"[ 0-9.+-]"
# what may follow the coordinates (col 55 on): occupancy, B, anything in 67-76, an element
# symbol, a charge - or the line ends earlier. Lines that do not match are repaired.
_GOOD_TAIL = (rf"(?:{_N6}{{0,6}}[ \t]*$|{_N6}{{6}}(?:{_N6}{{0,6}}[ \t]*$|{_N6}{{6}}"
              rf"(?:.{{0,10}}$|.{{10}}(?:[ \t]*$|(?:{_EL})(?:[ \t]*$|(?:{_CH})[ \t]*$)|[A-Za-z][ \t]*$))))")
_BAD_LINE = re.compile(rf"^(?:ATOM  |HETATM)(?=.{{48}})(?!.{{48}}{_GOOD_TAIL}).*$", re.M | re.I)
# the same test in two cheap steps: collect the tails (col 55 on) with a simple pattern, then
# check each distinct tail once (an NMR ensemble repeats a few thousand tails over all models)
_TAIL = re.compile(r"^(?:ATOM  |HETATM).{48}(.*)", re.M | re.I)
_GOOD = re.compile(_GOOD_TAIL, re.I)
_SEEN_GOOD: set[str] = set()       # good tails met before (the files of a decoy set repeat them)
_FLOAT = re.compile(r"^ *[-+]?(?:\d+\.?\d*|\.\d+) *$| *$")
_CHARGE = re.compile(rf"^(?:{_CH})$")

_KINDS = {
    "charge": "charge column (79-80) is not a charge: ignored",
    "element": "element column (77-78) is not an element symbol: element taken from the atom name",
    "occupancy": "occupancy column (55-60) is not a number: read as 1.00",
    "bfactor": "B-factor column (61-66) is not a number: read as 0.00 (B-factors are not used)",
}


def _fix_line(line: str, found: dict, lineno: int) -> str:
    s = line.ljust(80) if len(line) < 80 else line
    occ, b, el, ch = s[54:60], s[60:66], s[76:78], s[78:80]

    def note(kind: str, what: str) -> None:
        k = found.setdefault(kind, [0, lineno, what])
        k[0] += 1

    if not _FLOAT.match(occ):
        note("occupancy", occ.strip())
        occ = "  1.00"
    if not _FLOAT.match(b):
        note("bfactor", b.strip())
        b = "  0.00"
    if el.strip() and (el.strip().upper() not in ELEMENTS or " " in el.strip()):
        note("element", el.strip())
        el = "  "
    if not _CHARGE.match(ch):
        note("charge", ch.strip())
        ch = "  "
    out = s[:54] + occ + b + s[66:76] + el + ch + s[80:]
    return out.rstrip() if len(line) < 80 else out


def repair_pdb_columns(text: str) -> tuple[str, list[str]]:
    """Rewrite malformed non-geometry columns of ATOM/HETATM lines.

    Parameters
    ----------
    text : str
        PDB-format text with Unix line ends.

    Returns
    -------
    (text, notes)
        The text with only the malformed lines' columns 55-80 rewritten (unchanged, same
        object, when nothing needed repair) and one note per kind of repair, e.g.
        ``"line 3: charge column (79-80) is not a charge: ignored ('01', 2 lines)"``.
    """
    tails = set(_TAIL.findall(text)) - _SEEN_GOOD      # tails checked in earlier files are good
    if all(_GOOD.match(t) for t in tails):
        if len(_SEEN_GOOD) + len(tails) > 200_000:
            _SEEN_GOOD.clear()
        _SEEN_GOOD.update(tails)
        return text, []
    found: dict[str, list] = {}
    # line numbers: count newlines incrementally between bad lines
    state = {"pos": 0, "line": 1}

    def sub(m: re.Match) -> str:
        state["line"] += text.count("\n", state["pos"], m.start())
        state["pos"] = m.start()
        return _fix_line(m.group(0), found, state["line"])

    new = _BAD_LINE.sub(sub, text)
    notes = []
    for kind in ("charge", "element", "occupancy", "bfactor"):
        if kind in found:
            n, ln, what = found[kind]
            notes.append(f"line {ln}: {_KINDS[kind]} ({what!r}, {n} line{'s' if n > 1 else ''})")
    return new, notes
