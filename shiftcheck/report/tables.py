"""Write a :class:`~shiftcheck.score.scoring.ScoreResult` as ranking.csv, residues.csv and
summary.json (columns and keys documented in docs/outputs.md). Each file is written to a
temporary name in the target folder and renamed into place (os.replace).
"""
from __future__ import annotations

import csv
import datetime as _dt
import hashlib
import io
import itertools
import math
import os
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from .. import __version__
from ..chem.nuclei import ALL_CLASSES, BACKBONE
from ._csv_bytes import _fixed_bytes, _join_fields, _string_bytes

if TYPE_CHECKING:
    from ..score.scoring import ScoreResult

__all__ = ["write_tables", "summary_dict", "ranking_rows", "residue_rows", "RANKING_COLUMNS",
           "RESIDUE_COLUMNS", "sha256"]

_STATS = ("rmsd", "mad", "r", "n")
#: summary.json lists the flagged atoms of the best this many entries (all of them in residues.csv).
FLAG_ENTRIES = 100
RANKING_COLUMNS = (["rank", "model", "score", "score_low", "score_high", "p_best"]
                   + [f"{s}_{x}" for x in ALL_CLASSES for s in _STATS] + ["best_group"]
                   + ["clashes_per_1000", "severe_pairs", "chain_breaks", "rama_outliers_pct",
                      "geometry_warning"])
_GEOMETRY = ("clashes_per_1000", "severe_pairs", "chain_breaks", "rama_outliers_pct")
RESIDUE_COLUMNS = ["model", "chain", "seq_id", "comp_id", "atom_id", "measured", "predicted",
                   "residual", "z", "flag", "nucleus", "offset", "model_res"]


def sha256(path: str | os.PathLike) -> str | None:
    """Hex SHA-256 of a file (None when it cannot be read)."""
    try:
        h = hashlib.sha256()
        with open(path, "rb") as fh:
            for block in iter(lambda: fh.read(1 << 20), b""):
                h.update(block)
        return h.hexdigest()
    except OSError:
        return None


def _num(x, nd: int = 4):
    if x is None:
        return None
    x = float(x)
    return None if not math.isfinite(x) else round(x, nd)


def _n_built(ens) -> int:
    n = getattr(ens, "n_built", None)
    return int(np.sum(ens.built)) if n is None else int(n)


def _atomic_write(path: Path, text: str) -> None:
    from .atomic import atomic_write_text

    atomic_write_text(path, text)


def _nums(values, nd: int = 4) -> list:
    """:func:`_num` of every element (one C-level pass: ``round`` of Python floats)."""
    a = np.asarray(values, dtype=float).reshape(-1)
    out = list(map(round, a.tolist(), itertools.repeat(nd)))
    if not np.isfinite(a).all():
        for i in np.flatnonzero(~np.isfinite(a)).tolist():
            out[i] = None
    return out


def ranking_rows(res: ScoreResult) -> list[dict]:
    """One dict per entry, best first, with the ranking.csv columns."""
    from ..structure.quality import result_geometry

    rk, comp = res.ranking, res.comparison
    geo = result_geometry(res)
    order = [int(i) for i in rk.order]
    rank = [int(x) for x in np.asarray(rk.rank)[order]]
    score, low, high, p_best = (_nums(np.asarray(v)[order]) for v in (rk.score, rk.low, rk.high, rk.p_best))
    best = [bool(x) for x in np.asarray(rk.best_group)[order]]
    per_class = []
    for x in ALL_CLASSES:
        m = res.metrics[x]
        per_class.append((x, _nums(np.asarray(m["rmsd"])[order]), _nums(np.asarray(m["mad"])[order]),
                          _nums(np.asarray(m["r"])[order]), int(m["n"])))
    rows = []
    for k, i in enumerate(order):
        row = {"rank": rank[k], "model": comp.entries[i].name, "score": score[k],
               "score_low": low[k], "score_high": high[k], "p_best": p_best[k], "best_group": best[k]}
        for x, rmsd, mad, r, n in per_class:
            row[f"rmsd_{x}"] = rmsd[k]
            row[f"mad_{x}"] = mad[k]
            row[f"r_{x}"] = r[k]
            row[f"n_{x}"] = n
        g = geo.get(comp.entries[i].name)          # name#mean entries have no geometry
        row.update({k: (g[k] if g else None) for k in _GEOMETRY})
        row["geometry_warning"] = bool(g["bad"]) if g else None
        rows.append(row)
    return rows


def residue_rows(res: ScoreResult):
    """Yield one dict per (entry, compared atom) with the residues.csv columns."""
    comp = res.comparison
    corr = res.correction
    klass = res.outliers.klass
    model_res = {}   # (ensemble, Seq_ID) -> the model's own residue number (with insertion code)
    for ei, (ens, mp) in enumerate(zip(res.ensembles, res.mappings)):
        for sid, r in mp.seq_to_res.items():
            model_res[(ei, int(sid))] = f"{ens.res_seq[r]}{ens.res_icode[r]}"
    for e, entry in enumerate(comp.entries):
        resid, z = res.residual_rows(e, e + 1)[0], res.z_rows(e, e + 1)[0]
        for j in range(len(comp)):
            flagged = bool(res.outliers.flagged[e, j])
            yield {"model": entry.name, "chain": entry.chain, "seq_id": int(comp.seq_id[j]),
                   "comp_id": str(comp.comp_id[j]), "atom_id": str(comp.atom_id[j]),
                   "nucleus": str(comp.nucleus[j]), "measured": _num(comp.measured[j]),
                   "offset": _num(corr[j]), "predicted": _num(comp.predicted[e, j]),
                   "residual": _num(resid[j]), "z": _num(z[j], 3),
                   "flag": (klass[j] or "some") if flagged else "",
                   "model_res": model_res.get((entry.ensemble, int(comp.seq_id[j])), "")}


def _quote(field: str) -> str:
    """csv.QUOTE_MINIMAL for one field (delimiter, quote character or line break inside)."""
    if any(c in field for c in ',"\r\n'):
        return '"' + field.replace('"', '""') + '"'
    return field


def _quoted(col: list[str]) -> list[str]:
    if any(ch in "".join(set(col)) for ch in ',"\r\n'):
        return [_quote(x) for x in col]
    return col


def _residues_blocks(res, block: int = 256):
    """residues.csv text in blocks of ``block`` entries (same text as ``_csv(residue_rows(res),
    ...)``); see :func:`_residues_bytes`."""
    for b in _residues_bytes(res, block):
        yield b.decode("utf-8")


def _residues_bytes(res, block: int = 256):
    """residues.csv as UTF-8 bytes in blocks of ``block`` entries (same bytes as
    ``_csv(residue_rows(res), ...)``), built column by column as byte matrices
    (:func:`_fixed_bytes`), so a run of many models is written without holding it all."""
    comp = res.comparison
    n, n_e = len(comp), len(comp.entries)
    corr = res.correction
    klass = np.asarray(res.outliers.klass, dtype=object)
    per_atom = {
        "seq_id": _string_bytes([str(int(x)) for x in comp.seq_id]),
        "comp_id": _string_bytes(_quoted([str(x) for x in comp.comp_id])),
        "atom_id": _string_bytes(_quoted([str(x) for x in comp.atom_id])),
        "nucleus": _string_bytes(_quoted([str(x) for x in comp.nucleus])),
        "measured": _fixed_bytes(comp.measured, 4), "offset": _fixed_bytes(corr, 4)}
    some = _quoted([(k or "some") for k in klass]) if n else []
    flag_on = _string_bytes(some)
    own: dict[int, int] = {}                      # ensemble -> its row of residue labels
    shared: dict[tuple, int] = {}                 # decoy files share their residue labels
    for ei, (ens, mp) in enumerate(zip(res.ensembles, res.mappings)):
        lab = {int(sid): f"{ens.res_seq[r]}{ens.res_icode[r]}" for sid, r in mp.seq_to_res.items()}
        key = tuple(lab.get(int(sid), "") for sid in comp.seq_id)
        own[ei] = shared.setdefault(key, len(shared))
    labels = [_string_bytes(_quoted(list(key))) for key in shared] + [np.zeros((n, 0), np.uint8)]
    w = max(x.shape[1] for x in labels)
    labels = np.stack([np.pad(x, ((0, 0), (0, w - x.shape[1]))) for x in labels])   # (labels, n, w)
    yield (",".join(RESIDUE_COLUMNS) + "\n").encode("utf-8")
    if not n:
        return
    for a in range(0, n_e, block):
        ents = comp.entries[a:a + block]
        k = len(ents)
        cols: dict[str, np.ndarray] = {c: np.tile(v, (k, 1)) for c, v in per_atom.items()}
        cols["model"] = np.repeat(_string_bytes(_quoted([e.name for e in ents])), n, axis=0)
        cols["chain"] = np.repeat(_string_bytes(_quoted([e.chain for e in ents])), n, axis=0)
        cols["predicted"] = _fixed_bytes(comp.predicted[a:a + k], 4)
        cols["residual"] = _fixed_bytes(res.residual_rows(a, a + k), 4)
        cols["z"] = _fixed_bytes(res.z_rows(a, a + k), 3)
        flagged = np.asarray(res.outliers.flagged[a:a + k], dtype=bool).reshape(-1)
        cols["flag"] = np.tile(flag_on, (k, 1)) * flagged[:, None].astype(np.uint8)
        which = [own.get(e.ensemble, len(labels) - 1) for e in ents]
        cols["model_res"] = labels[which].reshape(k * n, -1)
        yield _join_fields([cols[c] for c in RESIDUE_COLUMNS])


def _residues_csv(res) -> str:
    """residues.csv as one string (small runs; :func:`write_tables` writes it block by block)."""
    return "".join(_residues_blocks(res))


def _csv(rows, columns) -> str:
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=columns, lineterminator="\n", extrasaction="ignore")
    w.writeheader()
    for r in rows:
        w.writerow({k: ("" if v is None else v) for k, v in r.items()})
    return buf.getvalue()


def summary_dict(res: ScoreResult, created: str | None = None, *, rows: list[dict] | None = None,
                 hashes: dict | None = None) -> dict:
    """The summary.json content (keys documented in docs/outputs.md). ``rows``: the result's
    :func:`ranking_rows` and ``hashes``: {path: :func:`sha256`} of input files, when already made."""
    from .summary_json import materialise

    return materialise(summary_document(res, created, rows=rows, hashes=hashes))


def summary_document(res: ScoreResult, created: str | None = None, *, rows: list[dict] | None = None,
                     hashes: dict | None = None) -> dict:
    """:func:`summary_dict` with its per-model and per-file parts as
    :class:`~shiftcheck.report.summary_json.Lazy` values, made item by item as they are written
    (:func:`~shiftcheck.report.summary_json.write_json`)."""
    from .summary_json import Lazy

    comp, rk = res.comparison, res.ranking
    shifts = res.shifts
    digest = sha256 if hashes is None else (lambda p: hashes[p] if p in hashes else sha256(p))
    inputs = {"shifts": {"path": str(Path(shifts.source).absolute()), "sha256": digest(shifts.source),
                         "list_id": shifts.list_id, "list_name": shifts.list_name,
                         "entity_id": shifts.entity_id},
              "models": Lazy("list", lambda: (
                  {"path": [str(Path(s).absolute()) for s in ens.sources][0] if ens.sources else "",
                   "paths": [str(Path(s).absolute()) for s in ens.sources],
                   "sha256": digest(ens.sources[0]) if ens.sources else None,
                   "name": ens.name, "chain": ens.chain_id, "n_models": ens.n_models,
                   "model_names": list(ens.model_names), "method": ens.method,
                   "hydrogens_built": _n_built(ens)}
                  for ens in res.ensembles))}
    mapping = Lazy("list", lambda: (
        {"ensemble": ens.name, "chain": ens.chain_id, "identity": _num(m.identity),
         "coverage": _num(m.coverage), "offsets": "; ".join(m.offsets),
         "mismatches": [list(x) for x in m.mismatches], "numbering": m.numbering}
        for ens, m in zip(res.ensembles, res.mappings)))
    metrics = Lazy("dict", lambda: (
        (entry.name, {x: {"rmsd": _num(res.metrics[x]["rmsd"][i]), "mad": _num(res.metrics[x]["mad"][i]),
                          "r": _num(res.metrics[x]["r"][i]), "n": int(res.metrics[x]["n"])}
                      for x in ALL_CLASSES})
        for i, entry in enumerate(comp.entries)))
    keys = ("rank", "model", "score", "score_low", "score_high", "p_best", "best_group")
    ranking = Lazy("list", lambda: ({k: r[k] for k in keys}
                                    for r in (ranking_rows(res) if rows is None else rows)))
    corr = res.correction
    flags = []
    listed = rk.order[:FLAG_ENTRIES]
    for e in listed:
        z_e = res.z_rows(e, e + 1)[0]
        r_e = res.residual_rows(e, e + 1)[0]
        for j in np.flatnonzero(res.outliers.flagged[e]):
            nuc = str(comp.nucleus[j])
            flags.append({"model": comp.entries[e].name, "chain": comp.entries[e].chain,
                          "seq_id": int(comp.seq_id[j]), "comp_id": str(comp.comp_id[j]),
                          "atom_id": str(comp.atom_id[j]), "nucleus": nuc,
                          "measured": _num(comp.measured[j]), "offset": _num(corr[j]),
                          "predicted": _num(comp.predicted[e, j]), "residual": _num(r_e[j]),
                          "z": _num(z_e[j], 3), "class": str(res.outliers.klass[j]),
                          "rule": f"|residual| > {res.outliers.k:g} x {float(res.sigma[j]):.4g} ppm "
                                  f"(expected error of {nuc}"
                                  + (f" in {comp.comp_id[j]})" if str(comp.comp_id[j]).upper()
                                     in res.expected_error_by_residue.get(nuc, {}) else ")")})
    left = {"counts": dict(sorted(comp.left_out.items())), "examples": comp.left_out_examples,
            "n_compared": len(comp), "n_residues": comp.n_residues,
            "n_stereo_swaps": res.n_stereo_swaps}
    return {
        "shiftcheck_version": __version__,
        "created": created or _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "inputs": inputs,
        "mapping": mapping,
        "reref_mode": res.parameters["reref"],
        "offsets": {k: v.as_dict() for k, v in res.offsets.items()},
        "metrics": metrics,
        "ranking": ranking,
        "best_model": res.best_model,
        "best_group": [comp.entries[i].name for i in rk.order if rk.best_group[i]],
        "expected_error": {k: _num(v) for k, v in res.expected_error.items()},
        "expected_error_source": res.expected_error_source,
        "expected_error_by_residue": {c: {t: _num(v) for t, v in per.items()}
                                      for c, per in res.expected_error_by_residue.items()},
        "nuclei": list(BACKBONE) + [x for x in ALL_CLASSES if x not in BACKBONE],
        "flags": flags,
        "flags_listed": {"entries": len(listed), "of": len(comp.entries),
                         "note": "" if len(listed) == len(comp.entries) else
                         f"flags of the best {len(listed)} of {len(comp.entries)} entries; residues.csv "
                         "has every entry's flag column"},
        "residue_summary": res.residue_summary,
        "data_checks": [f.as_dict() for f in res.findings],
        "secondary_structure": Lazy("dict", lambda: iter(res.secondary.items())),
        "geometry": Lazy("list", lambda: _geometry_records(res)),
        "left_out": left,
        "warnings": list(res.warnings),
        "skipped": [{"file": str(x.file), "reason": str(x.reason)} for x in getattr(res, "skipped", [])],
        "parameters": dict(res.parameters),
    }


def _geometry_records(res):
    """Per-model geometry records (shiftcheck.structure.quality), in rank order."""
    from ..structure.quality import result_geometry

    geo = result_geometry(res)
    entries = res.comparison.entries
    return (geo[entries[i].name] for i in res.ranking.order if entries[i].name in geo)


def _json_default(o):
    """numpy scalars/arrays in the summary (e.g. Seq_IDs from the mapping) as plain JSON."""
    if isinstance(o, np.integer):
        return int(o)
    if isinstance(o, np.floating):
        return _num(o)
    if isinstance(o, np.bool_):
        return bool(o)
    if isinstance(o, np.ndarray):
        return o.tolist()
    raise TypeError(f"not JSON serialisable: {type(o).__name__}")


def write_tables(res: ScoreResult, outdir: str | os.PathLike) -> list[Path]:
    """Write ranking.csv, residues.csv and summary.json into ``outdir`` (atomic per file).

    ``outdir`` is created if needed. The command line writes into a staging directory that is
    renamed into place (:mod:`shiftcheck.report.outdir`); library callers get per-file atomicity.
    """
    out = Path(outdir)
    out.mkdir(parents=True, exist_ok=True)
    paths = [out / "ranking.csv", out / "residues.csv", out / "summary.json"]
    from concurrent.futures import ThreadPoolExecutor

    from .atomic import atomic_target

    from .summary_json import write_json

    # the input files' checksums (summary.json) are computed while the tables are formatted
    # (hashlib releases the GIL on large buffers)
    sources = list(dict.fromkeys([res.shifts.source] + [e.sources[0] for e in res.ensembles if e.sources]))
    with ThreadPoolExecutor(max_workers=1) as pool:
        digests = pool.map(sha256, sources)
        rows = ranking_rows(res)
        _atomic_write(paths[0], _csv(rows, RANKING_COLUMNS))
        with atomic_target(paths[1]) as tmp, open(tmp, "wb") as fh:
            for data in _residues_bytes(res):
                fh.write(data)
        hashes = dict(zip(sources, digests))
    with atomic_target(paths[2]) as tmp, open(tmp, "w", encoding="utf-8", newline="") as fh:
        write_json(fh, summary_document(res, rows=rows, hashes=hashes), default=_json_default)
    return paths
