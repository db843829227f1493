"""The (shift file, model file, chain) pairs of the public realdata folder and how to load them.

The pairs are listed in ``tools/realdata_pairs.tsv`` (the same file ``shiftcheck calibrate``
reads). :func:`load` reads them with the project's readers (``shiftcheck.io.shift_formats``,
``shiftcheck.io.coords``, ``shiftcheck.structure.mapping``); while the shift reader is not yet
available it falls back to pynmrstar for NMR-STAR 3.x files (2.1 files are then skipped).
"""
from __future__ import annotations

import os
import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
PAIRS_FILE = HERE / "realdata_pairs.tsv"
EXTERNAL = [("gb3/bmr15283.str", "gb3/2OED.pdb"), ("gb3/bmr2575.str", "gb3/2OED.pdb")]

__all__ = ["realdata_dir", "pairs", "read_shifts_any", "load", "PAIRS_FILE", "EXTERNAL"]


def realdata_dir() -> Path:
    d = os.environ.get("SHIFTCHECK_REALDATA") or str(HERE.parent.parent / "shared" / "realdata")
    if not Path(d).is_dir():
        sys.exit("set SHIFTCHECK_REALDATA to the folder of public BMRB/PDB files")
    return Path(d)


def pairs(data_dir: Path | None = None):
    from shiftcheck.predict.calibrate import read_pairs_file

    return read_pairs_file(str(PAIRS_FILE), str(data_dir or realdata_dir()))


def _interim_read(path: str):  # pragma: no cover - only until shiftcheck.io.shift_formats lands
    import pynmrstar

    from shiftcheck.shiftlist import SampleConditions, ShiftList

    entry = pynmrstar.Entry.from_file(path)
    loops = entry.get_loops_by_category("_Atom_chem_shift")
    loop = max(loops, key=len)
    tags = loop.get_tag(["Seq_ID", "Comp_ID", "Atom_ID", "Atom_type", "Val"])
    rows = [r for r in tags if r[4] not in (".", "?")]
    seq = []
    for lp in entry.get_loops_by_category("_Entity_comp_index"):
        seq = [r for r in lp.get_tag(["ID", "Comp_ID"])]
        break
    cond = SampleConditions()
    for lp in entry.get_loops_by_category("_Sample_condition_variable"):
        for t, v, u in lp.get_tag(["Type", "Val", "Val_units"]):
            try:
                if t.lower().startswith("temp"):
                    cond.temperature_K = float(v) + (273.15 if u.strip().upper() in ("C", "°C") else 0)
                elif t.lower() == "ph":
                    cond.pH = float(v)
            except ValueError:
                pass
        break
    n = len(rows)
    a = np.array
    return ShiftList(source=path, list_id="1", list_name="", entity_id="1",
                     sequence=tuple(c for _, c in seq), sequence_seq_ids=a([int(i) for i, _ in seq], dtype=int),
                     seq_id=a([int(r[0]) for r in rows]), auth_seq_id=a([int(r[0]) for r in rows]),
                     comp_id=a([r[1] for r in rows], dtype=object), atom_id=a([r[2] for r in rows], dtype=object),
                     atom_type=a([r[3] for r in rows], dtype=object), value=a([float(r[4]) for r in rows]),
                     error=np.full(n, np.nan), ambiguity=np.zeros(n, int), line=np.zeros(n, int),
                     conditions=cond)


def read_shifts_any(path: str):
    """The project's reader; the interim pynmrstar reader while the project's is incomplete."""
    try:
        from shiftcheck.io.shift_formats import read_shifts

        return read_shifts(path)
    except ImportError:
        return _interim_read(path)


def load(pair_list=None):
    """Datasets (shiftcheck.predict.calibrate.Dataset) for the pairs; skips unreadable 2.1 files
    only while the project's shift reader is missing."""
    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.calibrate import build_dataset
    from shiftcheck.structure.mapping import map_sequence

    pair_list = pair_list if pair_list is not None else pairs()
    n_per: dict[str, int] = {}
    for p in pair_list:
        n_per[p.shifts] = n_per.get(p.shifts, 0) + 1
    out, cache = [], {}
    for p in pair_list:
        if p.shifts not in cache:
            try:
                cache[p.shifts] = read_shifts_any(p.shifts)
            except Exception as exc:  # interim reader only
                print(f"skipping {p.shifts}: {exc}", file=sys.stderr)
                cache[p.shifts] = None
        sl = cache[p.shifts]
        if sl is None:
            continue
        for ens in read_models([p.models], chain=p.chain):
            mp = map_sequence(sl, ens)
            out.append(build_dataset(sl, ens, mp.seq_to_res, p.label, p.shifts, 1.0 / n_per[p.shifts]))
    return out
