"""Text pages of the report: the opening page and the paginated table of flagged atoms."""
from __future__ import annotations

import textwrap

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from . import style as st
from ._layout import fmt, short_hash
from .load import ReportData

__all__ = ["title_page", "flags_figure", "flag_page_count", "flag_rows", "ROWS_PER_PAGE",
           "CAUTION"]

ROWS_PER_PAGE = 44
CAUTION = ("Agreement with chemical shifts supports a structure but does not prove it. Shifts "
           "are local probes: a model can match them and still be wrong elsewhere. Use this "
           "report beside expert validation (geometry, restraints, density or NOEs) and the "
           "archive's own deposition rules.")
_GUIDE = [
    "Ranking: lower combined score = closer to the measured shifts. Models in the filled best",
    "  group cannot be told apart by a bootstrap over residues; do not over-read their order.",
    "Correlation: points near the diagonal agree; boxed/triangle points are flagged atoms.",
    "  'in every model' points at the data (assignment, typo, referencing) or at physics the",
    "  predictor lacks; 'in some models' points at those models.",
    "Sequence: tall bars and dark strip cells mark residues that disagree; compare models.",
    "Referencing: residuals should centre on 0 after the offset; a shifted peak before it",
    "  suggests a referencing error in the list.",
]


def _new(size) -> Figure:
    fig = Figure(figsize=size, dpi=st.DPI)
    FigureCanvasAgg(fig)
    return fig


def _lines(data: ReportData) -> list[tuple[str, str]]:
    """(style, text) lines of the opening page; style in {'h', 't', 'm'}."""
    s = data.summary
    out: list[tuple[str, str]] = []
    out.append(("t", f"shiftcheck {s.get('shiftcheck_version', '?')}   created {s.get('created', '?')}"))
    out.append(("t", f"Output directory: {data.outdir.name}    best model: {data.best_model}"))
    out.append(("h", "Inputs"))
    inputs = s.get("inputs") if isinstance(s.get("inputs"), dict) else {}
    sh = inputs.get("shifts") if isinstance(inputs.get("shifts"), dict) else None
    if sh:
        out.append(("m", f"shifts  {_base(sh.get('path'))}  sha256 {short_hash(sh.get('sha256'))}  "
                         f"list {sh.get('list_id', '-')} {sh.get('list_name') or ''}  "
                         f"entity {sh.get('entity_id', '-')}"))
    models = inputs.get("models") if isinstance(inputs.get("models"), list) else []
    for m in models[:12]:
        if isinstance(m, dict):
            names = m.get("model_names") or []
            out.append(("m", f"models  {_base(m.get('path'))}  sha256 {short_hash(m.get('sha256'))}  "
                             f"chain {m.get('chain', '-')}  {len(names)} model(s)"))
    if len(models) > 12:
        out.append(("m", f"        ... and {len(models) - 12} more files (summary.json)"))
    if not sh and not models:
        out.append(("t", "(summary.json lists no inputs)"))
    out.append(("h", "Mapping of shift list to models"))
    for m in (s.get("mapping") or [])[:8]:
        if isinstance(m, dict):
            out.append(("m", f"{_base(m.get('ensemble'))} chain {m.get('chain', '-')}: identity "
                             f"{fmt(m.get('identity'), '.2f')}, coverage {fmt(m.get('coverage'), '.2f')}, "
                             f"numbering offsets {_short(m.get('offsets'))}, mismatches "
                             f"{_short(m.get('mismatches'))}"))
    out.append(("h", f"Referencing offsets (measured - predicted; mode {s.get('reref_mode', '-')})"))
    for kind in ("H", "C", "N"):
        o = data.offset(kind)
        if o:
            state = "applied" if o.get("applied") else "not applied"
            out.append(("m", f"{st.ISOTOPE_LABEL[kind]:>4}: {fmt(o.get('value'))} ppm  "
                             f"(95% interval {fmt(o.get('low'))} to {fmt(o.get('high'))}, "
                             f"n {o.get('n', '-')}), {state}"))
    out.append(("h", "Ranking (best first)"))
    for row in (s.get("ranking") or [])[:6]:
        if isinstance(row, dict):
            grp = "  best group" if row.get("best_group") else ""
            out.append(("m", f"{row.get('rank', '-'):>3}  {str(row.get('model')):<28} score "
                             f"{fmt(row.get('score'), '.3f')} ({fmt(row.get('score_low'), '.3f')}-"
                             f"{fmt(row.get('score_high'), '.3f')})  P(best) "
                             f"{fmt(row.get('p_best'), '.2f')}{grp}"))
    params = s.get("parameters")
    if isinstance(params, dict) and params:
        out.append(("h", "Parameters"))
        flat = "  ".join(f"{k}={_short(v)}" for k, v in params.items())
        out += [("m", ln) for ln in textwrap.wrap(flat, 100)[:5]]
    n_flags = len(s.get("flags") or [])
    out.append(("h", "Counts and warnings"))
    out.append(("t", f"{len(data.ranking.model)} models, {len(np.unique(data.residues.seq_id))} "
                     f"residues compared, {n_flags} flags, {len(s.get('data_checks') or [])} "
                     f"data-check findings, {len(s.get('left_out') or [])} atoms left out"))
    for w in list(s.get("warnings") or [])[:5] + data.notes[:4]:
        out += [("t", ln) for ln in textwrap.wrap(f"- {w}", 110)[:2]]
    out.append(("h", "Reading this report"))
    out += [("t", g) for g in _GUIDE]
    out.append(("h", "Caution"))
    out += [("t", ln) for ln in textwrap.wrap(CAUTION, 105)]
    return out


def _base(p) -> str:
    return str(p).replace("\\", "/").rsplit("/", 1)[-1] if p else "-"


def _short(v, n=40) -> str:
    t = v if isinstance(v, str) else str(v)
    return t if len(t) <= n else t[: n - 3] + "..."


def title_page(data: ReportData) -> Figure:
    """The opening text page: inputs, versions, mapping, offsets, guide and caution."""
    with st.report_style():
        fig = _new(st.A4_PORTRAIT)
        fig.text(0.07, 0.955, "shiftcheck report: structures against chemical shifts",
                 fontsize=14, weight="bold")
        y = 0.925
        for kind, text in _lines(data):
            if y < 0.03:
                break
            if kind == "h":
                y -= 0.008
                fig.text(0.07, y, text, fontsize=10, weight="bold")
                y -= 0.021
            else:
                fig.text(0.07, y, text, fontsize=7.2 if kind == "m" else 8,
                         family=st.MONO if kind == "m" else None)
                y -= 0.0155
    return fig


# ------------------------------------------------------------------ flags table (figure 5)
_FLAG_COLS = [("residue", 0.0), ("atom", 0.09), ("measured", 0.17), ("predicted", 0.27),
              ("max |z|", 0.44), ("class", 0.52), ("rule", 0.67), ("models", 0.95)]
_CHECK_COLS = [("residue", 0.0), ("atom", 0.1), ("rule", 0.18), ("finding", 0.40), ("source", 0.80)]


def flag_rows(data: ReportData) -> list[tuple[str, list[str]]]:
    """Rows of the flags pages: ('section', [title]), ('header', cols) or ('row'|'check', cells).

    Flags are grouped per atom (one row however many models flag it); predicted is the value
    or the range over the flagging models.
    """
    s = data.summary
    flags = [f for f in (s.get("flags") or []) if isinstance(f, dict)]
    n_models = len(data.ranking.model)
    groups: dict[tuple, list[dict]] = {}
    for f in flags:
        key = (str(f.get("chain", "")), f.get("seq_id"), str(f.get("comp_id", "")), str(f.get("atom_id", "")))
        groups.setdefault(key, []).append(f)
    rows: list[tuple[str, list[str]]] = [("section", [f"Flagged atoms ({len(groups)})"])]
    if "flags" not in s:
        rows.append(("note", ["summary.json has no 'flags'; nothing to list."]))
    elif not groups:
        rows.append(("note", ["No atom was flagged."]))
    else:
        rows.append(("header", [c for c, _ in _FLAG_COLS]))

        def seq_key(item):
            try:
                return (0, int(item[0][1]))
            except (TypeError, ValueError):
                return (1, 0)
        for (chain, seq, comp, atom), fs in sorted(groups.items(), key=seq_key):
            pred = [float(f["predicted"]) for f in fs if _isnum(f.get("predicted"))]
            zs = [abs(float(f["z"])) for f in fs if _isnum(f.get("z"))]
            p = fmt(pred[0], ".2f") if len(set(pred)) == 1 else (
                f"{min(pred):.2f}-{max(pred):.2f}" if pred else "-")
            rows.append(("row", [f"{comp.capitalize()} {seq}", atom, fmt(fs[0].get("measured"), ".2f"),
                                 p, fmt(max(zs), ".1f") if zs else "-", _short(fs[0].get("class") or "", 22),
                                 _short(fs[0].get("rule") or "", 40), f"{len(fs)}/{n_models}"]))
    checks = [c for c in (s.get("data_checks") or []) if isinstance(c, dict)]
    rows.append(("section", [f"Data checks without a structure ({len(checks)} findings)"]))
    if checks:
        rows.append(("header", [c for c, _ in _CHECK_COLS]))
        for c in checks:
            rows.append(("check", [f"{str(c.get('comp_id', '')).capitalize()} {c.get('seq_id', '')}",
                                   str(c.get("atom_id", "") or ""), _short(c.get("rule") or "", 34),
                                   _short(c.get("message") or "", 62), _short(c.get("source") or "", 30)]))
    else:
        rows.append(("note", ["No findings." if "data_checks" in s else "summary.json has no 'data_checks'."]))
    return rows


def _isnum(v) -> bool:
    try:
        float(v)
        return v is not None
    except (TypeError, ValueError):
        return False


def flag_page_count(data: ReportData) -> int:
    """Number of pages the flags table takes."""
    return max(1, -(-len(flag_rows(data)) // ROWS_PER_PAGE))


def flags_figure(data: ReportData, page: int = 0) -> Figure:
    """One page of the table of flagged atoms and data-check findings."""
    rows = flag_rows(data)
    n_pages = max(1, -(-len(rows) // ROWS_PER_PAGE))
    chunk = rows[page * ROWS_PER_PAGE:(page + 1) * ROWS_PER_PAGE]
    if chunk and chunk[0][0] in ("row", "check"):   # repeat the column header on a new page
        header = [r for r in rows[:page * ROWS_PER_PAGE] if r[0] == "header"][-1]
        chunk = [header] + chunk
    with st.report_style():
        fig = _new(st.A4_PORTRAIT)
        fig.text(0.06, 0.955, "Flagged atoms and data checks" + (f" (page {page + 1} of {n_pages})"
                 if n_pages > 1 else ""), fontsize=st.TITLE)
        fig.text(0.06, 0.937, "Shifts in ppm. class: 'in every model' points at the data or the "
                 "predictor, 'in some models' at those models. models: flagging / scored.",
                 fontsize=st.SMALL, color=st.NEUTRAL)
        y, left, width = 0.905, 0.06, 0.9
        cols = _FLAG_COLS
        for kind, cells in chunk:
            if kind == "section":
                y -= 0.006
                fig.text(left, y, cells[0], fontsize=10, weight="bold")
            elif kind == "note":
                fig.text(left, y, cells[0], fontsize=8)
            else:
                if kind == "header":
                    cols = _FLAG_COLS if "measured" in cells else _CHECK_COLS
                for (_, x), c in zip(cols, cells):
                    fig.text(left + x * width, y, c, fontsize=7.5,
                             weight="bold" if kind == "header" else "normal",
                             family=None if kind == "header" else st.MONO)
                if kind == "header":
                    fig.add_artist(_rule(left, left + width, y - 0.005))
            y -= 0.0195
    return fig


def _rule(x0, x1, y):
    return Line2D([x0, x1], [y, y], lw=0.5, color=st.NEUTRAL)
