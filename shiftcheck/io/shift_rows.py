"""Raw shift rows -> :class:`~shiftcheck.shiftlist.ShiftList`: the part every shift reader shares.

Whatever the format, a reader hands its string columns to :func:`build_shift_list`, which
normalises names (IUPAC 1998, Markley et al. 1998, Pure Appl. Chem. 70:117), expands pseudo
atoms, skips missing values ('.', '?') with a warning, refuses non-numeric values with the file
line, and sets aside placeholder values (999.99, 9999.0, 0.0 ... and anything outside -10..300
ppm; listed with their source in shiftcheck/data/shift_ranges.json ``placeholders``) in
``ShiftList.placeholders``: they are left out of the comparison and reported by the data checks
with their line, never a refusal of the list. :func:`choose` picks one of several lists or
entities and :func:`conditions_from_rows` reads temperature and pH.
"""
from __future__ import annotations

import math
from collections import defaultdict

import numpy as np

from ..chem.names import expand_residue_atom_names, normalise_comp_id
from ..chem.residues import ONE_TO_THREE
from ..errors import InputError
from ..shiftlist import SampleConditions, ShiftList

__all__ = ["build_shift_list", "choose", "conditions_from_rows", "one_letter_sequence", "VALUE_RANGE_PPM"]

def _placeholder_table() -> tuple[tuple[float, float], frozenset]:
    from ..score._constants import shift_ranges

    t = shift_ranges()["placeholders"]
    return ((float(t["outside_ppm"]["low"]), float(t["outside_ppm"]["high"])),
            frozenset(float(v) for v in t["values"]))


#: Plausible numeric window for any protein shift, ppm (shift_ranges.json placeholders.outside_ppm).
VALUE_RANGE_PPM = _placeholder_table()[0]
_MISSING = {"", ".", "?", "-", "na", "n/a", "nan", "none"}


def one_letter_sequence(code: str | None) -> list[tuple[str, str]] | None:
    """[(seq_id, one-letter code)] numbered from 1 from a one-letter sequence string (whitespace
    ignored), or None for a missing value ('.', '?', empty)."""
    if not code or code in (".", "?"):
        return None
    return [(str(i + 1), c) for i, c in enumerate("".join(code.split()))]


def conditions_from_rows(rows) -> SampleConditions:
    """Temperature (K) and pH from (type, value, units) rows of a sample-conditions loop.

    Temperatures in degrees Celsius (units 'C', '°C', 'degC', 'Celsius') are converted to K
    (T/K = t/°C + 273.15). Types are matched exactly ('temperature', 'pH'), so e.g.
    'temperature controller setting' is ignored.
    """
    cond = SampleConditions()
    for typ, val, unit in rows:
        t = str(typ).strip().lower()
        try:
            v = float(val)
        except (TypeError, ValueError):
            continue
        if not math.isfinite(v):
            continue
        u = str(unit).strip().lower().replace("°", "").replace("º", "")
        if t == "temperature" and cond.temperature_K is None:
            celsius = u in ("c", "degc", "celsius", "deg c", "degrees c") or (u in ("", ".", "?")
                                                                            and v < 150)
            cond.temperature_K = v + 273.15 if celsius else v
        elif t == "ph" and cond.pH is None and 0 <= v <= 14:
            cond.pH = v
    return cond


def choose(descr: list[tuple[str, int, list[str]]], wanted: str | None, what: str, path: str,
           warnings: list[str]) -> tuple[int, list[str]]:
    """Pick one of several candidates (description, size, accepted names).

    Returns the index and the descriptions of the others. With ``wanted`` None: the only
    one, else the largest with a warning naming the others.
    """
    if wanted is not None:
        for k, (_, _, names) in enumerate(descr):
            if str(wanted) in names:
                return k, [d for j, (d, _, _) in enumerate(descr) if j != k]
        raise InputError(f"no {what} {wanted!r}; present: " + "; ".join(d for d, _, _ in descr),
                         path=path)
    k = max(range(len(descr)), key=lambda j: descr[j][1])
    others = [d for j, (d, _, _) in enumerate(descr) if j != k]
    if others:
        warnings.append(f"{len(descr)} {what}s in the file; using {descr[k][0]}; "
                        f"not used: {'; '.join(others)}")
    return k, others


def _int(v: str, what: str, path: str, line: int) -> int:
    try:
        f = float(v)
        if not math.isfinite(f) or f != int(f) or abs(f) > 1e9:
            raise ValueError
        return int(f)
    except (TypeError, ValueError):
        raise InputError(f"{what} {str(v)[:20]!r} is not an integer", path=path, line=line) from None


def build_shift_list(path: str, cols: dict[str, list[str] | None], lines: list[int], *,
                     list_id: str, list_name: str, entity_id: str,
                     sequence: list[tuple[object, str]] | None, conditions: SampleConditions,
                     other_lists: list[str], warnings: list[str]) -> ShiftList:
    """Turn raw string columns into a :class:`ShiftList` (shared by all readers).

    ``cols`` maps seq_id, auth_seq_id, comp_id, atom_id, atom_type, value, error, ambiguity to
    string lists (None where the file lacks the column); ``lines`` gives each row's file line.
    ``sequence`` is [(seq_id, comp_id)] of the entity, or None to rebuild it from the rows.
    """
    n = len(cols["value"])
    get = {k: (v if v is not None else [None] * n) for k, v in cols.items()}
    lines = list(lines) + [0] * (n - len(lines))
    rows = []  # (seq, auth, comp, raw_atom, type, value, err, amb, line)
    missing, placeholders = [], []
    (lo, hi), ph_values = _placeholder_table()
    for i in range(n):
        ln = lines[i]
        vs = str(get["value"][i]).strip()
        if vs.lower() in _MISSING:
            missing.append(ln)
            continue
        try:
            val = float(vs)
        except ValueError:
            raise InputError(f"shift value {vs[:20]!r} is not a number", path=path, line=ln) from None
        s_raw = get["seq_id"][i]
        a_raw = get["auth_seq_id"][i]
        if s_raw is None or str(s_raw).strip() in _MISSING:
            s_raw = a_raw
        seq = _int(s_raw, "residue number", path, ln)
        auth = seq if a_raw is None or str(a_raw).strip() in _MISSING else _int(a_raw, "author residue number", path, ln)
        comp = normalise_comp_id(str(get["comp_id"][i]))
        atom = str(get["atom_id"][i]).strip().upper()
        if not comp or comp in _MISSING or not atom or atom.lower() in _MISSING:
            raise InputError("residue or atom name missing", path=path, line=ln)
        es = str(get["error"][i]).strip() if get["error"][i] is not None else "."
        try:
            err = float(es)
        except ValueError:
            err = math.nan
        am = str(get["ambiguity"][i]).strip() if get["ambiguity"][i] is not None else "."
        try:
            amb = int(float(am)) if am not in _MISSING else 0
        except (ValueError, OverflowError):
            amb = 0
        typ = str(get["atom_type"][i]).strip().upper() if get["atom_type"][i] is not None else ""
        if not (lo <= val <= hi) or val in ph_values:
            placeholders.append({"seq_id": seq, "comp_id": comp, "atom_id": atom, "value": val,
                                 "line": ln})
            continue
        rows.append((seq, auth, comp, atom, typ, val, err, amb, ln))
    if not rows:
        if placeholders:
            raise InputError(f"all {len(placeholders)} shift values are placeholders (e.g. "
                             f"{placeholders[0]['value']:g} ppm) or missing", path=path,
                             line=placeholders[0]["line"])
        if missing:
            raise InputError(f"all {len(missing)} shift values are missing ('.' or '?')", path=path)
        raise InputError("the shift list is empty", path=path)
    if missing:
        warnings.append(f"{len(missing)} rows without a shift value ('.' or '?') skipped "
                        f"(first at line {missing[0]})")
    if placeholders:
        p0 = placeholders[0]
        warnings.append(f"{len(placeholders)} placeholder values left out of the comparison (first "
                        f"{p0['comp_id']} {p0['seq_id']} {p0['atom_id']} = {p0['value']:g} ppm at "
                        f"line {p0['line']}; see the data checks)")
    # names per residue (old geminal numbering and pseudo atoms need the residue's whole set)
    by_res: dict[tuple[int, str], list[int]] = defaultdict(list)
    for k, r in enumerate(rows):
        by_res[(r[0], r[2])].append(k)
    expanded: list[tuple] = []
    seen: dict[tuple[int, str], tuple[int, float]] = {}
    dups, dup_rows = [], []
    for (seq, comp), idx in by_res.items():
        names = expand_residue_atom_names(comp, [rows[k][3] for k in idx])
        for k, group in zip(idx, names):
            r = rows[k]
            for atom in group:
                key = (seq, atom)
                if key in seen:
                    dups.append(f"{comp} {seq} {atom} (lines {seen[key][0]}, {r[8]})")
                    dup_rows.append({"seq_id": seq, "comp_id": comp, "atom_id": atom,
                                     "kept": seen[key][1], "dropped": r[5],
                                     "lines": [seen[key][0], r[8]]})
                    continue
                seen[key] = (r[8], r[5])
                typ = r[4] if r[4] and r[4] not in _MISSING and len(group) == 1 else atom[:1]
                expanded.append((seq, r[1], comp, atom, typ, r[5], r[6], r[7], r[8]))
    if dups:
        warnings.append(f"{len(dups)} duplicated atoms, first value kept: " + "; ".join(dups[:5])
                        + (" ..." if len(dups) > 5 else ""))
    expanded.sort(key=lambda r: (r[0], r[8]))
    arr = list(zip(*expanded))
    seq_ids, seq_comps = _sequence(sequence, arr[0], arr[2], path, warnings)
    return ShiftList(
        source=path, list_id=list_id, list_name=list_name, entity_id=entity_id,
        sequence=tuple(seq_comps), sequence_seq_ids=np.asarray(seq_ids, dtype=np.int64),
        seq_id=np.asarray(arr[0], dtype=np.int64), auth_seq_id=np.asarray(arr[1], dtype=np.int64),
        comp_id=np.asarray(arr[2], dtype=str), atom_id=np.asarray(arr[3], dtype=str),
        atom_type=np.asarray(arr[4], dtype=str), value=np.asarray(arr[5], dtype=np.float64),
        error=np.asarray(arr[6], dtype=np.float64), ambiguity=np.asarray(arr[7], dtype=np.int64),
        line=np.asarray(arr[8], dtype=np.int64), conditions=conditions,
        other_lists=list(other_lists), warnings=warnings, placeholders=placeholders,
        duplicates=dup_rows)


def _sequence(sequence, seq_of_rows, comp_of_rows, path, warnings):
    """Entity sequence [(seq_id, comp)] checked against the rows, or rebuilt from them."""
    if sequence:
        out: dict[int, str] = {}
        for s, c in sequence:
            try:
                sid = int(str(s).strip())
            except ValueError:
                continue
            c = str(c).strip().upper()
            c = ONE_TO_THREE.get(c, "UNK") if len(c) == 1 else normalise_comp_id(c)
            out.setdefault(sid, c)
        if out:
            clash = sorted({(s, c) for s, c in zip(seq_of_rows, comp_of_rows)
                            if s in out and out[s] != c and out[s] != "UNK"})
            if clash:
                warnings.append(f"{len(clash)} shift rows name another residue than the entity "
                                f"sequence, e.g. {clash[0][1]} {clash[0][0]} vs {out[clash[0][0]]}")
            for s, c in zip(seq_of_rows, comp_of_rows):
                out.setdefault(int(s), c)
            ids = sorted(out)
            return ids, [out[i] for i in ids]
    res: dict[int, str] = {}
    for s, c in zip(seq_of_rows, comp_of_rows):
        res.setdefault(int(s), c)
    lo, hi = min(res), max(res)
    if hi - lo > 100000:
        raise InputError(f"residue numbers span {lo}..{hi}: not one protein chain", path=path)
    ids = list(range(lo, hi + 1))
    return ids, [res.get(i, "UNK") for i in ids]
