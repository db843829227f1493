"""The data of the interactive report page (report.html), built from a score output directory.

Everything comes from :class:`~shiftcheck.report.load.ReportData` (summary.json, ranking.csv,
residues.csv), so ``shiftcheck report OUTDIR`` redraws the page without rescoring. The result is
a plain dict of lists, numbers and strings, ready for ``json.dumps`` (NaN becomes null).

What is summarised for many models (stated on the page under "summarised"):

* the ranking keeps every model of ranking.csv (the page paginates it);
* residues.csv points, the per-residue strip and the secondary structure are embedded only for
  the best ``max_point_models`` models, the best group and the models asked for with ``show``
  (:func:`.summarise.drawn_models`, the same choice that decides which rows
  :func:`.load.load_outdir` reads).
"""
from __future__ import annotations

import math
import re

import numpy as np

from .. import __version__
from . import style as st
from ._layout import rms_by_residue
from .load import ReportData
from .pages import CAUTION, _GUIDE, flag_rows
from .secondary_shifts import secondary_shift_difference
from .sequence_page import HELIX_LIKE, STRAND_LIKE, Z_MAX
from .summarise import MAX_DRAWN_MODELS, drawn_models, summarised_lines

__all__ = ["page_data", "MAX_POINT_MODELS", "RESIDUE_COLUMNS", "clean"]

MAX_POINT_MODELS = MAX_DRAWN_MODELS   # models whose points are embedded (plus best group, --show)
# residues.csv columns embedded per point; string columns are stored as indices into a list
RESIDUE_COLUMNS = ("model", "chain", "seq_id", "comp_id", "atom_id", "nucleus", "measured",
                   "predicted", "residual", "z", "flag", "offset")
_CODED = ("model", "chain", "comp_id", "atom_id", "nucleus", "flag")


def clean(obj):
    """A copy of ``obj`` that ``json.dumps(allow_nan=False)`` accepts: non-finite floats -> None,
    numpy scalars/arrays -> Python numbers/lists, tuples/sets -> lists."""
    if isinstance(obj, dict):
        return {str(k): clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple, set)):
        return [clean(v) for v in obj]
    if isinstance(obj, np.ndarray):
        if obj.ndim == 1 and obj.dtype.kind in "fiub":       # fast path: whole numeric columns
            out = obj.tolist()
            if obj.dtype.kind == "f":
                for i in np.flatnonzero(~np.isfinite(obj)).tolist():
                    out[i] = None
            return out
        return [clean(v) for v in obj.tolist()]
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        return float(obj) if math.isfinite(obj) else None
    if obj is None or isinstance(obj, str):
        return obj
    return str(obj)


def _encode(values) -> tuple[list[str], list[int]]:
    """Dictionary-encode a string column: (distinct values in first-seen order, indices)."""
    index: dict[str, int] = {}
    codes = [index.setdefault(str(v), len(index)) for v in values]
    return list(index), codes


def _style() -> dict:
    cmap = st.sequential_cmap()
    from matplotlib.colors import to_hex
    stops = [to_hex(cmap(x)) for x in np.linspace(0.0, 1.0, 33)]
    return {"nucleus_colours": dict(st.NUCLEUS_COLOURS), "nucleus_order": list(st.NUCLEUS_ORDER),
            "offset_type": dict(st.OFFSET_TYPE), "isotope_label": dict(st.ISOTOPE_LABEL),
            "neutral": st.NEUTRAL, "neutral_light": st.NEUTRAL_LIGHT, "emphasis": st.EMPHASIS,
            "best_group": st.BEST_GROUP, "no_data_edge": st.NO_DATA_EDGE,
            "helix_like": HELIX_LIKE, "strand_like": STRAND_LIKE, "z_max": Z_MAX,
            "sequential": stops, "sequential_name": f"ColorBrewer {st.SEQUENTIAL_CMAP} (15-100 %)"}


def _ranking(data: ReportData) -> dict:
    rk = data.ranking
    group = data.best_group
    out = {"rank": rk.rank, "model": list(rk.model), "score": rk.score, "score_low": rk.score_low,
           "score_high": rk.score_high, "p_best": rk.p_best,
           "best_group": [m in group for m in rk.model], "nuclei": list(rk.nuclei),
           "metrics": {s: {x: v for x, v in per.items()} for s, per in rk.metrics.items()}}
    return out


def _embedded_models(data: ReportData, show, max_models: int) -> list[str]:
    """Best first: the best ``max_models`` with residues, then the best group and ``show``."""
    return drawn_models(data.ranking, data.best_group, show, max_models, have=set(data.residues.model))


def _residues(data: ReportData, models: list[str]) -> dict:
    res = data.residues
    sel = res.select(np.isin(res.model.astype(str), np.array(models, dtype=str)))
    out: dict = {"n": len(sel), "codes": {}}
    for col in RESIDUE_COLUMNS:
        values = getattr(sel, col)
        if col in _CODED:
            out["codes"][col], out[col] = _encode(values)
        else:
            out[col] = values
    return out


def _sequence(data: ReportData, models: list[str]) -> dict:
    res = data.residues
    seq_ids = np.unique(res.seq_id)
    comp = {int(s): str(c) for s, c in zip(res.seq_id, res.comp_id)}
    grid = rms_by_residue(res.model, res.seq_id, res.z, models, seq_ids)
    flagged = {m: set() for m in models}
    hit = res.flag != ""
    for m, s in zip(res.model[hit].tolist(), res.seq_id[hit].tolist()):   # one pass over the rows
        if m in flagged:
            flagged[m].add(int(s))
    flagged = {m: sorted(v) for m, v in flagged.items()}
    best = res.model == data.best_model
    rows = res.select(best if best.any() else np.ones(len(res), bool))
    sseq, sval = secondary_shift_difference(rows.seq_id, rows.comp_id, rows.atom_id, rows.measured,
                                            rows.offset)
    return {"seq_id": seq_ids, "comp_id": [comp[int(s)] for s in seq_ids], "models": models,
            "rms_z": np.round(grid, 3), "flagged_residues": flagged,
            "secondary_shift": {"seq_id": sseq, "value": np.round(sval, 3)},
            "ss": {m: _ss_entry(data, m) for m in models}}


def _ss_entry(data: ReportData, model: str) -> dict | None:
    """Secondary structure of ``model`` from summary.json; an ensemble's first model for name#mean."""
    ss_all = data.summary.get("secondary_structure")
    ss_all = ss_all if isinstance(ss_all, dict) else {}
    entry, used = ss_all.get(model), model
    if entry is None:
        stem = model.split("#")[0]
        used = next((k for k in ss_all if k.split("#")[0] == stem), None)
        entry = ss_all.get(used) if used else None
    if not isinstance(entry, dict) or not entry.get("ss") or not entry.get("seq_id"):
        return None
    return {"seq_id": list(entry["seq_id"]), "ss": str(entry["ss"]),
            "method": str(entry.get("method") or "method not stated"), "drawn_for": used}


def _flags(data: ReportData) -> dict:
    """Flagged atoms (one row per atom), residues flagged as a whole (lines) and data-check
    findings, cells as in the PDF's flags pages."""
    rows = flag_rows(data)
    header_flags, header_checks, flags, checks, notes, residues = None, None, [], [], [], []
    section = ""
    for kind, cells in rows:
        if kind == "section":
            section = cells[0]
        elif kind == "note" and section.startswith("Residues disagreeing as a whole"):
            residues.append(cells[0])
        elif kind == "header":
            if "measured*" in cells:
                header_flags = cells
            else:
                header_checks = cells
        elif kind == "row":
            flags.append(cells)
        elif kind == "check":
            checks.append(cells)
        elif kind == "note":
            notes.append(cells[0])
    return {"flag_columns": header_flags or [], "flags": flags, "check_columns": header_checks or [],
            "checks": checks, "notes": notes, "residues": residues}


def _meta(data: ReportData) -> dict:
    s = data.summary
    name = re.sub(r"^\.(.+)\.tmp-[^/]*$", r"\1", data.outdir.name)   # staged by `score`
    inputs = s.get("inputs") if isinstance(s.get("inputs"), dict) else {}
    files = []
    sh = inputs.get("shifts") if isinstance(inputs.get("shifts"), dict) else None
    if sh:
        files.append({"kind": "shifts", "file": _base(sh.get("path")), "sha256": sh.get("sha256"),
                      "detail": f"list {sh.get('list_id', '-')} {sh.get('list_name') or ''}, "
                                f"entity {sh.get('entity_id', '-')}"})
    for m in inputs.get("models") if isinstance(inputs.get("models"), list) else []:
        if isinstance(m, dict):
            files.append({"kind": "models", "file": _base(m.get("path")), "sha256": m.get("sha256"),
                          "detail": f"chain {m.get('chain', '-')}, "
                                    f"{len(m.get('model_names') or [])} model(s)"})
    return {"title": "shiftcheck report: structures against chemical shifts", "outdir": name,
            "version": s.get("shiftcheck_version", "?"), "page_version": __version__,
            "created": s.get("created", "?"), "best_model": data.best_model,
            "inputs": files, "mapping": [m for m in s.get("mapping") or [] if isinstance(m, dict)],
            "reref_mode": s.get("reref_mode"), "parameters": s.get("parameters") or {},
            "expected_error": s.get("expected_error") or {},
            "warnings": list(s.get("warnings") or []), "notes": list(data.notes),
            "skipped": [{"file": _base(x.get("file")), "reason": str(x.get("reason"))}
                        for x in s.get("skipped") or [] if isinstance(x, dict)],
            "caution": CAUTION, "guide": _guide()}


def _guide() -> list[str]:
    """The PDF's reading guide, its wrapped continuation lines (indented) joined to their item."""
    items: list[str] = []
    for line in _GUIDE:
        if line.startswith(" ") and items:
            items[-1] += " " + line.strip()
        else:
            items.append(line.strip())
    return items


def _base(p) -> str:
    return str(p).replace("\\", "/").rsplit("/", 1)[-1] if p else "-"


def page_data(data: ReportData, show=(), max_point_models: int = MAX_POINT_MODELS) -> dict:
    """Everything report.html shows, JSON-ready (see the module docstring for what is summarised).

    Parameters
    ----------
    data : ReportData
    show : sequence of str
        Models whose points are embedded whatever their rank (``--show``).
    max_point_models : int
        How many of the best models get their residues.csv points embedded.
    """
    models = _embedded_models(data, show, max_point_models)
    n_with = data.n_models_with_rows or len(set(data.residues.model))
    offsets = {k: data.offset(k) for k in ("H", "C", "N") if data.offset(k)}
    summarised = []
    if len(models) < n_with:
        summarised.append(f"Points, residual histograms, per-residue strip and secondary "
                          f"structure are embedded for {len(models)} of {n_with} models (the best "
                          f"{min(max_point_models, n_with)}, the best group and models asked for "
                          f"with --show); all {n_with} are in residues.csv.")
        summarised += summarised_lines(data)
    return clean({"meta": _meta(data), "style": _style(), "ranking": _ranking(data),
                  "points_models": models, "residues": _residues(data, models),
                  "sequence": _sequence(data, models), "offsets": offsets,
                  "flags": _flags(data), "summarised": summarised})
