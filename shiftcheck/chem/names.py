"""Residue and atom names normalised to the IUPAC 1998 convention used by NMR-STAR.

Reference: Markley JL, Bax A, Arata Y, Hilbers CW, Kaptein R, Sykes BD, Wright PE,
Wüthrich K (1998) Recommendations for the presentation of NMR structures of proteins and
nucleic acids. Pure Appl. Chem. 70:117-142 (the BMRB and the remediated PDB v3 use it).

What the normalisation does (one atom at a time, :func:`normalise_atom_name`):

* amide proton ``HN`` -> ``H``; N-terminal ``HT1/HT2/HT3``, ``HN1/HN2/HN3`` and PDB v2
  ``1H/2H/3H`` -> ``H1/H2/H3``; C-terminal ``OT1/OT2`` -> ``O/OXT``, ``O''`` -> ``OXT``.
* PDB v2 digit-first names: ``1HB``/``2HB`` -> ``HB2``/``HB3`` on methylene (CH2) groups,
  ``1HB/2HB/3HB`` -> ``HB1/HB2/HB3`` on methyls, ``1HG1/2HG1/3HG1`` -> ``HG11/HG12/HG13``,
  ``1HD2/2HD2`` -> ``HD21/HD22`` (Asn NH2) and so on: the leading digit moves to the end,
  plus one for a CH2 group (1/2 -> 2/3, the convention of the PDB v3 remediation).
* Old geminal numbering 1/2 on a CH2 group: a name ending in "1" on a CH2 group (``HB1`` of
  Ser, ``HA1`` of Gly, ``HG11`` of Ile) cannot be an IUPAC 1998 name, so it is read as old
  naming -> ``HB2`` / ``HA2`` / ``HG12``. One atom alone cannot tell an old ``HB2`` (meaning
  the new ``HB3``) from a new ``HB2``; :func:`normalise_residue_atom_names` looks at all names
  of one residue and shifts the whole pair (1, 2 -> 2, 3) when it sees old naming. Methyl
  protons (Ala ``HB1/HB2/HB3``, Val ``HG11..``, Met ``HE1..``) are never shifted.
* Ile ``CD`` -> ``CD1`` and Ile ``HD1/HD2/HD3`` -> ``HD11/HD12/HD13`` (old single-CD names).
* Selenomethionine: residue ``MSE`` -> ``MET`` and its ``SE`` -> ``SD``.

Pseudo atoms (:func:`is_pseudo_atom`, :func:`expand_pseudo_atom`): NMR-STAR 2.1 files and
structure-calculation programs write a group of equivalent protons as one name - wildcard forms
``HB%``, ``HB*``, ``HB#``, ``HG1%``, the bare group name (``HB`` of Ala, ``HG1`` of Val),
or ``M``/``Q`` pseudo-atom names (``MB`` methyl, ``QB`` methylene pair, ``QG`` ...). Each is
expanded to the IUPAC protons it stands for (a methyl pseudo atom to its three protons, a
methylene pseudo atom to the 2/3 pair, ``QD``/``QE`` of Phe/Tyr to the ring pair); a reader
then gives every proton the same shift.
"""
from __future__ import annotations

import re

__all__ = ["normalise_comp_id", "normalise_atom_name", "normalise_residue_atom_names",
           "expand_residue_atom_names", "is_pseudo_atom", "expand_pseudo_atom", "METHYLENE", "METHYL", "NH2_GROUPS"]

# Residue-name aliases of force fields and PDB ligands that are chemically a standard residue.
_COMP_ALIASES = {
    "MSE": "MET",                      # selenomethionine, read as Met
    "HIE": "HIS", "HID": "HIS", "HIP": "HIS", "HSD": "HIS", "HSE": "HIS", "HSP": "HIS",
    "HIS1": "HIS", "HISA": "HIS", "HISB": "HIS", "HISH": "HIS", "HISD": "HIS", "HISE": "HIS",
    "HISP": "HIS",
    "CYX": "CYS", "CYM": "CYS", "CYS2": "CYS", "CSS": "CYS",
    "ASH": "ASP", "GLH": "GLU", "LYN": "LYS", "ARN": "ARG",
    "NME": "NME", "ACE": "ACE",
}

#: Methylene (CH2) proton groups per residue: group prefix -> IUPAC labels 2/3
#: (Markley et al. 1998, Table 1 of the recommendations).
METHYLENE: dict[str, tuple[str, ...]] = {
    "GLY": ("HA",),
    "SER": ("HB",), "CYS": ("HB",), "ASP": ("HB",), "ASN": ("HB",), "HIS": ("HB",),
    "PHE": ("HB",), "TYR": ("HB",), "TRP": ("HB",), "LEU": ("HB",),
    "MET": ("HB", "HG"), "GLU": ("HB", "HG"), "GLN": ("HB", "HG"),
    "LYS": ("HB", "HG", "HD", "HE"), "ARG": ("HB", "HG", "HD"), "PRO": ("HB", "HG", "HD"),
    "ILE": ("HG1",),
}
#: Methyl proton groups per residue (labels 1/2/3).
METHYL: dict[str, tuple[str, ...]] = {
    "ALA": ("HB",), "VAL": ("HG1", "HG2"), "LEU": ("HD1", "HD2"), "ILE": ("HG2", "HD1"),
    "THR": ("HG2",), "MET": ("HE",),
}
#: NH2 / NH3 proton groups (labels 1/2, or 1/2/3 for Lys NZ).
NH2_GROUPS: dict[str, tuple[str, ...]] = {
    "ASN": ("HD2",), "GLN": ("HE2",), "ARG": ("HH1", "HH2"), "LYS": ("HZ",),
}
# Aromatic ring pairs addressed by Q pseudo atoms (QD = HD1+HD2, QE = HE1+HE2).
_RING_PAIRS = {"PHE": ("HD", "HE"), "TYR": ("HD", "HE")}

_TERMINAL = {"HN": "H", "HT1": "H1", "HT2": "H2", "HT3": "H3", "HN1": "H1", "HN2": "H2",
             "HN3": "H3", "1H": "H1", "2H": "H2", "3H": "H3", "H1": "H1", "H2": "H2", "H3": "H3",
             "OT1": "O", "OT2": "OXT", "O''": "OXT", "OXT": "OXT", "O'": "O"}
_DIGIT_FIRST = re.compile(r"^([1-3])(H[A-Z]*)([0-9]?)$")
_PSEUDO_WILD = re.compile(r"^(H[A-Z]*[0-9]?)[%*#]$")
_PSEUDO_MQ = re.compile(r"^([MQ])([A-Z])([0-9]?)$")


def normalise_comp_id(name: str) -> str:
    """Upper-case residue name with force-field and selenomethionine aliases resolved.

    >>> normalise_comp_id("mse"), normalise_comp_id("HSD"), normalise_comp_id("Cyx")
    ('MET', 'HIS', 'CYS')
    """
    n = str(name).strip().upper()
    return _COMP_ALIASES.get(n, n)


def _methylene(comp: str, group: str) -> bool:
    return group in METHYLENE.get(comp, ())


def _methyl(comp: str, group: str) -> bool:
    return group in METHYL.get(comp, ())


def normalise_atom_name(comp_id: str, name: str) -> str:
    """IUPAC 1998 / NMR-STAR name of one atom (Markley et al. 1998, Pure Appl. Chem. 70:117).

    Parameters
    ----------
    comp_id : str
        Residue name (any alias accepted by :func:`normalise_comp_id`).
    name : str
        Atom name as written in the file (PDB v2 or v3, NMR-STAR, X-PLOR/CHARMM style).

    Returns
    -------
    str
        The IUPAC name; names this function does not know are returned upper-cased.
        Pseudo atoms are returned unchanged (see :func:`expand_pseudo_atom`).

    Notes
    -----
    Per-atom rule for CH2 groups: a label 1 (``HB1`` of Ser, ``HA1`` of Gly) is old naming and
    becomes 2; a label 2 is left alone, because it is also a valid new name. Use
    :func:`normalise_residue_atom_names` on all names of a residue to shift old 1/2 pairs fully.

    Examples
    --------
    >>> [normalise_atom_name("SER", n) for n in ("HN", "1HB", "2HB", "HB1")]
    ['H', 'HB2', 'HB3', 'HB2']
    >>> [normalise_atom_name("ALA", n) for n in ("HB1", "2HB")]
    ['HB1', 'HB2']
    >>> normalise_atom_name("ILE", "CD"), normalise_atom_name("MSE", "SE")
    ('CD1', 'SD')
    """
    comp = normalise_comp_id(comp_id)
    raw_comp = str(comp_id).strip().upper()
    n = str(name).strip().upper()
    if not n:
        return n
    if raw_comp == "MSE" and n == "SE":
        return "SD"
    if n in _TERMINAL:
        return _TERMINAL[n]
    if comp == "ILE":
        if n == "CD":
            return "CD1"
        if n in ("HD1", "HD2", "HD3"):
            return "HD1" + n[-1]
    m = _DIGIT_FIRST.match(n)
    if m:
        digit, group, tail = m.groups()
        full_group = group + tail  # e.g. 'HG1' from '1HG1'
        if _methylene(comp, full_group):
            return full_group + str(int(digit) + 1)
        return full_group + digit
    # old geminal label 1 on a CH2 group (e.g. Gly HA1, Ser HB1, Ile HG11)
    if n.endswith("1") and _methylene(comp, n[:-1]):
        return n[:-1] + "2"
    return n


def normalise_residue_atom_names(comp_id: str, names: list[str]) -> list[str]:
    """Normalise all atom names of one residue together (geminal 1/2 -> 2/3 where old).

    A CH2 group is read as old naming when its label 1 is present and its label 3 is absent
    (Markley et al. 1998 label CH2 protons 2 and 3 only); then 1 -> 2 and 2 -> 3. Other names
    go through :func:`normalise_atom_name`.

    >>> normalise_residue_atom_names("GLY", ["N", "HA1", "HA2"])
    ['N', 'HA2', 'HA3']
    >>> normalise_residue_atom_names("GLY", ["HA2", "HA3"])
    ['HA2', 'HA3']
    >>> normalise_residue_atom_names("ILE", ["HG11", "HG12", "HG21"])
    ['HG12', 'HG13', 'HG21']
    """
    comp = normalise_comp_id(comp_id)
    raw = [str(x).strip().upper() for x in names]
    present = set(raw)
    old_groups = {g for g in METHYLENE.get(comp, ())
                  if g + "1" in present and g + "3" not in present}
    out = []
    for n in raw:
        if len(n) > 1 and n[:-1] in old_groups and n[-1] in "12":
            out.append(n[:-1] + str(int(n[-1]) + 1))
        else:
            out.append(normalise_atom_name(comp_id, n))
    return out


def is_pseudo_atom(name: str, comp_id: str | None = None) -> bool:
    """True for a name that stands for several protons.

    Wildcards (``HB%``, ``HG*``, ``HD1#``) and M/Q pseudo atoms (``MB``, ``QB``, ``QG1``)
    always count. With ``comp_id`` given, bare group names of methyls, methylenes and NH2/NH3
    groups (Ala ``HB``, Val ``HG1``, Lys ``HZ``, Gly ``HA``) are recognised too.

    >>> is_pseudo_atom("HB%"), is_pseudo_atom("MB"), is_pseudo_atom("HB2")
    (True, True, False)
    >>> is_pseudo_atom("HB", "ALA"), is_pseudo_atom("HB", "THR")
    (True, False)
    """
    n = str(name).strip().upper()
    if _PSEUDO_WILD.match(n) or _PSEUDO_MQ.match(n):
        return True
    if comp_id is None:
        return False
    comp = normalise_comp_id(comp_id)
    if comp == "ILE" and n == "HD":
        return True
    return (n in METHYL.get(comp, ()) or n in METHYLENE.get(comp, ())
            or n in NH2_GROUPS.get(comp, ()))


def expand_pseudo_atom(comp_id: str, name: str) -> tuple[str, ...]:
    """IUPAC protons a pseudo atom stands for; ``(name,)`` normalised if it is a plain atom.

    Methyl (``MB``, ``HB%``, ``HB`` of Ala) -> the three protons; methylene (``QB``, ``HB%``
    of Ser) -> the 2/3 pair; NH2 (``QD2``/``HD2%`` of Asn) -> HD21/HD22; ``QD``/``QE`` of
    Phe/Tyr -> the ring pair; ``QG`` of Val / ``QD`` of Leu -> both methyls (six protons).

    >>> expand_pseudo_atom("ALA", "MB"), expand_pseudo_atom("SER", "HB%")
    (('HB1', 'HB2', 'HB3'), ('HB2', 'HB3'))
    >>> expand_pseudo_atom("VAL", "HG1"), expand_pseudo_atom("LYS", "CA")
    (('HG11', 'HG12', 'HG13'), ('CA',))
    """
    comp = normalise_comp_id(comp_id)
    n = str(name).strip().upper()
    group = None
    m = _PSEUDO_WILD.match(n)
    if m:
        group = m.group(1)
    else:
        m = _PSEUDO_MQ.match(n)
        if m and (m.group(3) or m.group(2) != "X"):
            group = "H" + m.group(2) + m.group(3)
        elif is_pseudo_atom(n, comp):
            group = n
    if group is None:
        return (normalise_atom_name(comp_id, n),)
    if comp == "ILE" and group == "HD":
        group = "HD1"
    if _methyl(comp, group):
        return tuple(group + d for d in "123")
    if _methylene(comp, group):
        return (group + "2", group + "3")
    if group in NH2_GROUPS.get(comp, ()):
        return tuple(group + d for d in ("123" if comp == "LYS" else "12"))
    if group in _RING_PAIRS.get(comp, ()):
        return (group + "1", group + "2")
    if comp == "ILE" and group == "HG":  # HG12/HG13 + HG21..23
        return ("HG12", "HG13", "HG21", "HG22", "HG23")
    # a group holding two methyls (Val QG / HG%, Leu QD / HD%) or two NH2 (Arg HH%)
    sub = [g for g in METHYL.get(comp, ()) + NH2_GROUPS.get(comp, ()) if g[:-1] == group]
    if sub:
        return tuple(x for g in sub for x in expand_pseudo_atom(comp, g + "%"))
    return (n,)


def expand_residue_atom_names(comp_id: str, names: list[str]) -> list[tuple[str, ...]]:
    """For each name of one residue, the IUPAC atoms it stands for (pseudo atoms expanded).

    Combines :func:`normalise_residue_atom_names` (old geminal 1/2 pairs, PDB v2 names) with
    :func:`expand_pseudo_atom`. A bare methyl name that is also an old per-proton name (Ile
    ``HD1`` next to ``HD2``/``HD3``) is read as a proton, not as a group.

    >>> expand_residue_atom_names("ALA", ["HN", "HB"])
    [('H',), ('HB1', 'HB2', 'HB3')]
    >>> expand_residue_atom_names("ILE", ["HD1", "HD2", "HD3"])
    [('HD11',), ('HD12',), ('HD13',)]
    >>> expand_residue_atom_names("ILE", ["HD1", "CD"])
    [('HD11', 'HD12', 'HD13'), ('CD1',)]
    """
    comp = normalise_comp_id(comp_id)
    raw = [str(x).strip().upper() for x in names]
    present = set(raw)
    norm = normalise_residue_atom_names(comp_id, raw)
    out: list[tuple[str, ...]] = []
    for r, n in zip(raw, norm):
        if comp == "ILE" and r == "HD1" and ("HD2" in present or "HD3" in present):
            out.append((n,))
        elif is_pseudo_atom(r, comp):
            out.append(expand_pseudo_atom(comp_id, r))
        else:
            out.append((n,))
    return out
