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


def ranking_rows(res: ScoreResult) -> list[dict]:
    """One dict per entry, best first, with the ranking.csv columns."""
    from ..structure.quality import result_geometry

    rk, comp = res.ranking, res.comparison
    geo = result_geometry(res)
    rows = []
    for i in rk.order:
        row = {"rank": int(rk.rank[i]), "model": comp.entries[i].name, "score": _num(rk.score[i]),
               "score_low": _num(rk.low[i]), "score_high": _num(rk.high[i]),
               "p_best": _num(rk.p_best[i]), "best_group": bool(rk.best_group[i])}
        for x in ALL_CLASSES:
            m = res.metrics[x]
            row.update({f"rmsd_{x}": _num(m["rmsd"][i]), f"mad_{x}": _num(m["mad"][i]),
                        f"r_{x}": _num(m["r"][i]), f"n_{x}": int(m["n"])})
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


def _text(values, nd: int | None = None) -> list[str]:
    """Column of CSV fields: ``str(round(x, nd))`` of finite numbers, '' otherwise (as :func:`_num`).

    Python's ``round`` (correctly rounded, unlike numpy's) and ``repr`` keep the bytes identical
    to the row-wise writer; both run as C-level ``map`` loops over the whole column.
    """
    a = np.asarray(values, dtype=float)
    ok = np.isfinite(a)
    vals = a.tolist()
    out = list(map(repr, map(round, vals, itertools.repeat(nd)))) if nd is not None else list(map(repr, vals))
    if not ok.all():
        for i in np.flatnonzero(~ok).tolist():
            out[i] = ""
    return out


def _quote(field: str) -> str:
    """csv.QUOTE_MINIMAL for one field (delimiter, quote character or line break inside)."""
    if any(c in field for c in ',"\r\n'):
        return '"' + field.replace('"', '""') + '"'
    return field


def _residues_blocks(res, block: int = 256):
    """residues.csv text in blocks of ``block`` entries (same bytes as ``_csv(residue_rows(res),
    ...)``, built column by column), so a run of many models is written without holding it all."""
    comp = res.comparison
    n, n_e = len(comp), len(comp.entries)
    corr = res.correction
    klass = np.asarray(res.outliers.klass, dtype=object)
    per_atom = {
        "seq_id": [str(int(x)) for x in comp.seq_id], "comp_id": [str(x) for x in comp.comp_id],
        "atom_id": [str(x) for x in comp.atom_id], "nucleus": [str(x) for x in comp.nucleus],
        "measured": _text(comp.measured, 4), "offset": _text(corr, 4)}
    some = np.array([(k or "some") for k in klass], dtype=object) if n else np.zeros(0, object)
    own: dict[int, list[str]] = {}
    shared: dict[tuple, list[str]] = {}           # decoy files share their residue labels
    for ei, (ens, mp) in enumerate(zip(res.ensembles, res.mappings)):
        lab = {int(sid): f"{ens.res_seq[r]}{ens.res_icode[r]}" for sid, r in mp.seq_to_res.items()}
        key = tuple(lab.get(int(sid), "") for sid in comp.seq_id)
        own[ei] = shared.setdefault(key, list(key))
    yield ",".join(RESIDUE_COLUMNS) + "\n"
    if not n:
        return
    for a in range(0, n_e, block):
        ents = comp.entries[a:a + block]
        k = len(ents)
        cols: dict[str, list[str]] = {c: v * k for c, v in per_atom.items()}
        cols["model"] = [x for e in ents for x in [e.name] * n]
        cols["chain"] = [x for e in ents for x in [e.chain] * n]
        cols["predicted"] = _text(np.asarray(comp.predicted[a:a + k]).reshape(-1), 4)
        cols["residual"] = _text(res.residual_rows(a, a + k).reshape(-1), 4)
        cols["z"] = _text(res.z_rows(a, a + k).reshape(-1), 3)
        flagged = np.asarray(res.outliers.flagged[a:a + k], dtype=bool)
        cols["flag"] = np.where(flagged, some[None, :], "").reshape(-1).tolist()
        cols["model_res"] = [x for e in ents for x in own.get(e.ensemble, [""] * n)]
        for c in ("model", "chain", "comp_id", "atom_id", "nucleus", "flag", "model_res"):
            if any(ch in "".join(set(cols[c])) for ch in ',"\r\n'):
                cols[c] = [_quote(x) for x in cols[c]]
        yield "\n".join(map(",".join, zip(*(cols[c] for c in RESIDUE_COLUMNS)))) + "\n"


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


def summary_dict(res: ScoreResult, created: str | None = None) -> dict:
    """The summary.json content (keys documented in docs/outputs.md)."""
    from .summary_json import materialise

    return materialise(summary_document(res, created))


def summary_document(res: ScoreResult, created: str | None = None) -> dict:
    """:func:`summary_dict` with its per-model and per-file parts as
    :class:`~shiftcheck.report.summary_json.Lazy` values, made item by item as they are written
    (:func:`~shiftcheck.report.summary_json.write_json`)."""
    from .summary_json import Lazy

    comp, rk = res.comparison, res.ranking
    shifts = res.shifts
    inputs = {"shifts": {"path": str(Path(shifts.source).absolute()), "sha256": sha256(shifts.source),
                         "list_id": shifts.list_id, "list_name": shifts.list_name,
                         "entity_id": shifts.entity_id},
              "models": Lazy("list", lambda: (
                  {"path": [str(Path(s).absolute()) for s in ens.sources][0] if ens.sources else "",
                   "paths": [str(Path(s).absolute()) for s in ens.sources],
                   "sha256": [sha256(s) for s in ens.sources][0] if ens.sources else None,
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
    ranking = Lazy("list", lambda: ({k: r[k] for k in ("rank", "model", "score", "score_low", "score_high",
                                                       "p_best", "best_group")} for r in ranking_rows(res)))
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
                          "rule": f"|residual| > {res.outliers.k:g} x {res.expected_error[nuc]:g} ppm "
                                  f"(expected error of {nuc})"})
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
    _atomic_write(paths[0], _csv(ranking_rows(res), RANKING_COLUMNS))
    from .atomic import atomic_target

    with atomic_target(paths[1]) as tmp, open(tmp, "w", encoding="utf-8", newline="") as fh:
        for text in _residues_blocks(res):
            fh.write(text)
    from .summary_json import write_json

    with atomic_target(paths[2]) as tmp, open(tmp, "w", encoding="utf-8", newline="") as fh:
        write_json(fh, summary_document(res), default=_json_default)
    return paths
