"""The (shift file, model file, chain) pairs of the public realdata folder and how to load them.

The pairs are listed in ``tools/realdata_pairs.tsv`` (the same file ``shiftcheck calibrate``
reads). :func:`load` reads them with the project's readers (``shiftcheck.io.shift_formats``,
``shiftcheck.io.coords``, ``shiftcheck.structure.mapping``) and caches the features per pair.
"""
from __future__ import annotations

import os
import sys
from pathlib import Path

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


def read_shifts_any(path: str):
    """The project's shift reader (it reads the bare-saveframe BMRB exports of nef_set too)."""
    from shiftcheck.io.shift_formats import read_shifts

    return read_shifts(path)


def _cache_key(p, partners: str = "auto") -> str:
    """Key of one pair's cached features: the input files (path, size, mtime) and the code and
    data files that features depend on (predictor, structure, readers, data files)."""
    import hashlib

    h = hashlib.sha1()
    for f in (p.shifts, p.models):
        st = os.stat(f)
        h.update(f"{f}|{st.st_size}|{st.st_mtime_ns}|{p.chain}".encode())
    if partners != "auto":            # the shipped reading keeps its earlier keys
        h.update(f"partners={partners}".encode())
    root = HERE.parent / "shiftcheck"
    for sub in ("predict", "structure", "io", "data"):
        for f in sorted((root / sub).glob("*")):
            if f.suffix in (".py", ".json"):
                h.update(f.read_bytes())
    return h.hexdigest()[:20]


def _warm(ds, settings) -> None:
    """Build every registered term's columns for every nucleus class and ring model with the
    calibration settings, so that the lazily cached parts are stored in the cache."""
    from shiftcheck.predict.calibrate import RING_MODELS

    sf = ds.features
    for rm in RING_MODELS:
        for nuc, groups in settings["groups"].items():
            sf.matrix(nuc, None, tuple(groups), rm, settings["conformation"], settings.get("burial"))


def load(pair_list=None, cache: bool = True, partners: str = "auto"):
    """Datasets (shiftcheck.predict.calibrate.Dataset) for the pairs.

    ``partners`` is passed to :func:`shiftcheck.io.coords.read_models` (``"ignore"``: each model
    file's other chains are left out; tools/validate_predictor.py compares the two).

    With ``cache`` (default) each pair's featurised dataset is pickled under
    ``<repo>/.cache/features/`` (outside git; ``SHIFTCHECK_CACHE`` overrides the folder) and
    reused while its input files and the predictor/reader code and data files are unchanged.
    """
    import pickle

    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.calibrate import build_dataset, load_settings
    from shiftcheck.structure.mapping import map_sequence

    pair_list = pair_list if pair_list is not None else pairs()
    settings = load_settings()
    cdir = Path(os.environ.get("SHIFTCHECK_CACHE") or HERE.parent / ".cache" / "features")
    n_per: dict[str, int] = {}
    for p in pair_list:
        n_per[p.shifts] = n_per.get(p.shifts, 0) + 1
    out, lists = [], {}
    for p in pair_list:
        f = cdir / f"{_cache_key(p, partners)}.pkl" if cache else None
        if f is not None and f.exists():
            out += pickle.loads(f.read_bytes())
            continue
        if p.shifts not in lists:
            lists[p.shifts] = read_shifts_any(p.shifts)
        sl = lists[p.shifts]
        got = []
        for ens in read_models([p.models], chain=p.chain, partners=partners):
            mp = map_sequence(sl, ens)
            got.append(build_dataset(sl, ens, mp.seq_to_res, p.label, p.shifts, 1.0 / n_per[p.shifts]))
            _warm(got[-1], settings)
        if f is not None:
            cdir.mkdir(parents=True, exist_ok=True)
            tmp = f.with_suffix(f".{os.getpid()}.tmp")  # test workers may build the same pair at once
            tmp.write_bytes(pickle.dumps(got))
            os.replace(tmp, f)
        out += got
    return out
