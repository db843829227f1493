"""Text pages of the report: the opening page and the paginated table of flagged atoms."""
from __future__ import annotations

import re
import textwrap

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from . import style as st
from ._layout import fmt, short_hash
from .load import ReportData
from .summarise import summarised_lines

__all__ = ["title_page", "flags_figure", "flag_page_count", "flag_rows", "CAUTION"]

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
    name = re.sub(r"^\.(.+)\.tmp-[^/]*$", r"\1", data.outdir.name)   # staged by `score`
    out.append(("t", f"Output directory: {name}    best model: {data.best_model}"))
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
    skipped = [x for x in (s.get("skipped") or []) if isinstance(x, dict)]
    if skipped:
        out.append(("h", f"Skipped models ({len(skipped)}, not scored)"))
        out += [("m", _short(f"{_base(x.get('file'))}: {x.get('reason')}", 110)) for x in skipped[:6]]
        if len(skipped) > 6:
            out.append(("m", f"        ... and {len(skipped) - 6} more (summary.json skipped)"))
    out.append(("h", "Mapping of shift list to models"))
    for m in (s.get("mapping") or [])[:8]:
        if isinstance(m, dict):
            out.append(("m", f"{_base(m.get('ensemble'))} chain {m.get('chain', '-')}: identity "
                             f"{fmt(m.get('identity'), '.2f')}, coverage {fmt(m.get('coverage'), '.2f')}, "
                             f"{_short(m.get('offsets'))}, {_mismatch_text(m.get('mismatches'))}"))
    out.append(("h", f"Referencing offsets (measured - predicted; mode {s.get('reref_mode', '-')})"))
    for kind in ("H", "C", "N"):
        o = data.offset(kind)
        if o:
            state = "applied" if o.get("applied") else "not applied"
            out.append(("m", f"{st.ISOTOPE_LABEL[kind]:>4}: {fmt(o.get('value'))} ppm  "
                             f"(95% interval {fmt(o.get('low'))} to {fmt(o.get('high'))}, "
                             f"n {o.get('n', '-')}), {state}"
                             + (f", threshold {fmt(o['threshold'], '.2f')} ppm" if "threshold" in o else "")))
            per = o.get("per_atom")
            if isinstance(per, dict) and per:
                parts = [f"{k} {fmt(v.get('value') if isinstance(v, dict) else v)}" for k, v in per.items()]
                out.append(("m", "       per atom: " + ", ".join(parts) + " ppm"))
    out.append(("h", "Ranking (best first; geometry: clashes/1000 atoms, breaks, % Rama outliers)"))
    geo = {g.get("model"): g for g in (s.get("geometry") or []) if isinstance(g, dict)}
    for row in (s.get("ranking") or [])[:6]:
        if isinstance(row, dict):
            grp = "  best group" if row.get("best_group") else ""
            g = geo.get(row.get("model"))
            if g:
                grp += (f"  geometry {fmt(g.get('clashes_per_1000'), '.1f')}/{g.get('chain_breaks')}/"
                        f"{fmt(g.get('rama_outliers_pct'), '.1f')}{' !' if g.get('bad') else ''}")
            out.append(("m", f"{row.get('rank', '-'):>3}  {str(row.get('model')):<28} score "
                             f"{fmt(row.get('score'), '.3f')} ({fmt(row.get('score_low'), '.3f')}-"
                             f"{fmt(row.get('score_high'), '.3f')})  P(best) "
                             f"{fmt(row.get('p_best'), '.2f')}{grp}"))
    bad = [m for m, g in geo.items() if g.get("bad")]
    if bad:
        out.append(("t", f"Warning (!): {len(bad)} of {len(geo)} models have geometry that cannot be "
                         "trusted; their shifts mean little (ranked all the same; summary.json geometry)"))
    params = s.get("parameters")
    if isinstance(params, dict) and params:
        out.append(("h", "Parameters"))
        flat = "  ".join(f"{k}={_short(v)}" for k, v in params.items())
        out += [("m", ln) for ln in textwrap.wrap(flat, 100)[:5]]
    flags = [f for f in (s.get("flags") or []) if isinstance(f, dict)]
    n_atoms = len({(f.get("chain"), f.get("seq_id"), f.get("atom_id")) for f in flags})
    left = s.get("left_out")
    if isinstance(left, dict):
        counts = left.get("counts")
        n_left = sum(v for v in counts.values() if isinstance(v, int)) if isinstance(counts, dict) else "?"
    else:
        n_left = len(left or [])
    out.append(("h", "Counts and warnings"))
    out.append(("t", f"{len(data.ranking.model)} models, {len(np.unique(data.residues.seq_id))} "
                     f"residues compared, {n_atoms} flagged atoms ({len(flags)} model-atom flags), "
                     f"{len(s.get('data_checks') or [])} data-check findings, {n_left} shifts left out"))
    for w in list(s.get("warnings") or [])[:5] + data.notes[:4]:
        out += [("t", ln) for ln in textwrap.wrap(f"- {w}", 110)[:2]]
    summarised = summarised_lines(data)
    if summarised:
        out.append(("h", "Summarised (many models)"))
        for w in summarised:
            out += [("t", ln) for ln in textwrap.wrap(w, 110)]
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
_FLAG_COLS = [("residue", 0.0), ("atom", 0.08), ("measured*", 0.15), ("predicted", 0.24),
              ("max |z|", 0.38), ("class", 0.45), ("rule", 0.58), ("models", 0.92)]
_CHECK_COLS = [("residue", 0.0), ("atom", 0.08), ("rule", 0.17), ("finding", 0.31), ("source", 0.68)]
_LEFT, _WIDTH, _TOP, _LINE = 0.06, 0.9, 0.905, 0.0175
_CHAR_IN = 7.0 * 0.602 / 72      # DejaVu Sans Mono advance at 7 pt (0.602 em), inches
_CLASS_TEXT = {"every": "in every model", "some": "in some models"}


def _mismatch_text(mm) -> str:
    """'no mismatches' or 'mismatches: 12 SER/ALA 31, ...' (shift residue / model residue)."""
    if not mm:
        return "no mismatches"
    parts = []
    for item in list(mm)[:4]:
        try:
            seq, comp, model = item
            parts.append(f"{seq} {comp}/{model}")
        except (TypeError, ValueError):
            parts.append(str(item))
    more = f" +{len(mm) - 4} more" if len(mm) > 4 else ""
    return f"{len(mm)} mismatch{'es' if len(mm) > 1 else ''}: " + ", ".join(parts) + more


def _short_rule(rule: str) -> str:
    """'|residual| > 3 x 0.2754 ppm (expected error of HA)' -> '|res| > 3 x 0.28 ppm'."""
    import re

    m = re.match(r"\|residual\| > ([\d.]+) x ([\d.]+) ppm", rule)
    return f"|res| > {float(m.group(1)):g} x {float(m.group(2)):.2f} ppm" if m else rule


def flag_rows(data: ReportData) -> list[tuple[str, list[str]]]:
    """Rows of the flags pages: ('section', [title]), ('note', [text]), ('header', cols),
    ('row', cells) for flagged atoms, ('check', cells) for data-check findings.

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
            klass = str(fs[0].get("class") or "")
            meas = fs[0].get("measured")
            if _isnum(meas) and _isnum(fs[0].get("offset")):
                meas = float(meas) - float(fs[0]["offset"])   # as compared: minus the offset
            rows.append(("row", [f"{comp.capitalize()} {seq}", atom, fmt(meas, ".2f"),
                                 p, fmt(max(zs), ".1f") if zs else "-", _CLASS_TEXT.get(klass, klass),
                                 _short_rule(str(fs[0].get("rule") or "")), f"{len(fs)}/{n_models}"]))
    rsum = [r for r in (s.get("residue_summary") or []) if isinstance(r, dict)]
    if any("residue_flag" in r for r in rsum):
        whole = [r for r in rsum if r.get("residue_flag")]
        rows.append(("section", [f"Residues disagreeing as a whole ({len(whole)})"]))
        if not whole:
            rows.append(("note", ["No residue's atoms together pass the residue limit (docs/outputs.md, "
                                  "residue flag)."]))
        def order(r):
            try:
                return (r.get("residue_flag") != "every", 0, int(r.get("seq_id")))
            except (TypeError, ValueError):
                return (r.get("residue_flag") != "every", 1, 0)
        for r in sorted(whole, key=order):
            q, lim = r.get("residue_q_best"), r.get("residue_limit_best")
            best = (f"sum of losses {float(q):.1f} against the limit {float(lim):.1f} in the best model"
                    if _isnum(q) and _isnum(lim) else "not compared in the best model")
            rows.append(("note", [f"{str(r.get('comp_id', '')).capitalize()} {r.get('seq_id', '')}: "
                                  f"{r.get('n_atoms', '?')} atoms, {best}; flagged "
                                  f"{_CLASS_TEXT.get(str(r.get('residue_flag')), r.get('residue_flag'))}"]))
    checks = [c for c in (s.get("data_checks") or []) if isinstance(c, dict)]
    rows.append(("section", [f"Data checks without a structure ({len(checks)} findings)"]))
    if checks:
        rows.append(("header", [c for c, _ in _CHECK_COLS]))
        for c in checks:
            rule = str(c.get("rule") or "") + (f" ({c['severity']})" if c.get("severity") else "")
            rows.append(("check", [f"{str(c.get('comp_id', '')).capitalize()} {c.get('seq_id', '')}",
                                   str(c.get("atom_id", "") or ""), rule, str(c.get("message") or ""),
                                   str(c.get("source") or "")]))
    else:
        rows.append(("note", ["No findings." if "data_checks" in s else "summary.json has no 'data_checks'."]))
    return rows


def _isnum(v) -> bool:
    try:
        float(v)
        return v is not None
    except (TypeError, ValueError):
        return False


def _wrap_cells(cells, cols, max_lines=3) -> list[list[str]]:
    """Wrap each cell to its column width (monospace); at most ``max_lines`` lines per cell."""
    out = []
    for k, (c, (_, x)) in enumerate(zip(cells, cols)):
        right = cols[k + 1][1] if k + 1 < len(cols) else 1.0
        n = max(4, int((right - x) * _WIDTH * st.A4_PORTRAIT[0] / _CHAR_IN) - 1)
        lines = textwrap.wrap(c, n) or [""]
        if len(lines) > max_lines:
            lines = lines[:max_lines]
            lines[-1] = lines[-1][: n - 3] + "..."
        out.append(lines)
    return out


def _layout_pages(rows) -> list[list[tuple[str, list, list]]]:
    """Split rows into pages by line count; each item is (kind, cells, columns)."""
    per_page = (_TOP - 0.03) / _LINE
    pages_, cur, used, cols, header = [], [], 0, _FLAG_COLS, None
    for kind, cells in rows:
        if kind == "header":
            cols = _FLAG_COLS if "measured*" in cells else _CHECK_COLS
            header = (kind, cells, cols)
        if kind in ("row", "check"):
            n = len(max(_wrap_cells(cells, cols), key=len)) + 0.2
        else:
            n = 2 if kind == "section" else 1
        if used + n > per_page and cur:
            pages_.append(cur)
            cur, used = [], 0
            if kind in ("row", "check") and header:
                cur.append(header)
                used = 1
        cur.append((kind, cells, cols))
        used += n
    pages_.append(cur)
    return pages_


def flag_page_count(data: ReportData) -> int:
    """Number of pages the flags table takes."""
    return len(_layout_pages(flag_rows(data)))


def flags_figure(data: ReportData, page: int = 0) -> Figure:
    """One page of the table of flagged atoms and data-check findings."""
    laid = _layout_pages(flag_rows(data))
    n_pages = len(laid)
    with st.report_style():
        fig = _new(st.A4_PORTRAIT)
        fig.text(_LEFT, 0.955, "Flagged atoms and data checks" + (f" (page {page + 1} of {n_pages})"
                 if n_pages > 1 else ""), fontsize=st.TITLE)
        fig.text(_LEFT, 0.941, "Shifts in ppm; measured* = measured minus the referencing offset where one "
                 "was applied.\nclass: 'in every model' points at the data or the predictor, 'in some "
                 "models' at those models. models: flagging / scored.", va="top", linespacing=1.3,
                 fontsize=st.SMALL, color=st.NEUTRAL)
        y = _TOP
        for kind, cells, cols in laid[page]:
            if kind == "section":
                y -= 0.5 * _LINE
                fig.text(_LEFT, y, cells[0], fontsize=10, weight="bold")
                y -= 1.0 * _LINE
                continue
            if kind == "note":
                fig.text(_LEFT, y, cells[0], fontsize=8)
                y -= _LINE
                continue
            wrapped = _wrap_cells(cells, cols) if kind != "header" else [[c] for c in cells]
            for (_, x), lines in zip(cols, wrapped):
                fig.text(_LEFT + x * _WIDTH, y - (0.75 * _LINE if kind == "header" else 0),
                         "\n".join(lines), fontsize=7 if kind != "header" else 7.5,
                         va="baseline" if kind == "header" else "top", linespacing=1.45,
                         weight="bold" if kind == "header" else "normal",
                         family=None if kind == "header" else st.MONO)
            n = max(len(w) for w in wrapped)
            if kind == "header":
                fig.add_artist(Line2D([_LEFT, _LEFT + _WIDTH], [y - 1.0 * _LINE] * 2, lw=0.5,
                                      color=st.NEUTRAL))
            y -= n * _LINE + (0.2 * _LINE if kind != "header" else 0.3 * _LINE)
    return fig
