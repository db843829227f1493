"""The report figures, each a :class:`matplotlib.figure.Figure` drawn from a :class:`ReportData`.

No pyplot: figures are built with ``matplotlib.figure.Figure`` and rendered by the Agg/PDF
backends, so nothing needs a display and no global state is touched. Key artists carry a
``gid`` (``"score"``, ``"interval"``, ``"scatter:CA"``, ``"rmsz"``, ...) so tests can read
the plotted numbers back.
"""
from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Rectangle
from matplotlib.transforms import ScaledTranslation

from . import style as st
from ._layout import model_order, panel_grid, place_labels, residue_label
from .load import ReportData
# the sequence page lives in its own module; re-exported here (shared helpers come from there)
from .sequence_page import MAX_MODELS, Z_MAX, _caption, _new, sequence_figure  # noqa: F401

__all__ = ["ranking_figure", "correlation_figure", "sequence_figure", "referencing_figure",
           "MAX_MODELS", "MAX_LABELS", "nuclei_with_data"]

MAX_LABELS = 6       # flagged-point labels per correlation panel


def nuclei_with_data(data: ReportData, model: str | None = None) -> list[str]:
    """Nucleus classes (in report order) that have at least one finite residual."""
    res = data.residues
    ok = np.isfinite(res.residual) & np.isfinite(res.predicted) & np.isfinite(res.measured)
    if model is not None:
        ok &= res.model == model
    present = set(res.nucleus[ok])
    return [n for n in st.NUCLEUS_ORDER if n in present]


# ----------------------------------------------------------------------------- 1. ranking
def ranking_figure(data: ReportData, max_models: int = MAX_MODELS) -> Figure:
    """Combined score with bootstrap interval per model, and a models x nuclei RMSD table."""
    with st.report_style():
        rk = data.ranking
        order = model_order(rk)[:max_models]
        n_all, n = len(rk.model), len(order)
        names = [rk.model[i] for i in order]
        best = data.best_group
        fig = _new(st.A4_LANDSCAPE)
        nuc = [x for x in rk.nuclei if np.isfinite(rk.metrics["rmsd"][x]).any()]
        bottom = max(0.14, 0.86 - 0.05 - 0.03 * n)    # rows about 0.25 in high when few models
        gs = fig.add_gridspec(1, 2, width_ratios=[1.15, max(0.35, 0.13 * len(nuc))], left=0.2,
                              right=0.97, top=0.86, bottom=bottom, wspace=0.08)
        ax = fig.add_subplot(gs[0, 0])
        y = np.arange(n)
        low, high, score = rk.score_low[order], rk.score_high[order], rk.score[order]
        ax.hlines(y, low, high, color=st.NEUTRAL, lw=1.2, gid="interval")
        in_best = np.array([m in best for m in names])
        face = np.where(in_best, st.BEST_GROUP, "white")
        ax.scatter(score, y, s=34, c=list(face), edgecolors=st.BEST_GROUP, linewidths=1.0,
                   zorder=3, gid="score")
        ax.set_yticks(y, names, fontsize=st.SMALL if n > 15 else 8)
        ax.set_ylim(n - 0.5, -0.5)
        ax.set_xlabel("combined score (dimensionless, lower = closer to the data)")
        ax.spines["left"].set_visible(False)
        ax.tick_params(axis="y", length=0)
        for yi, p in zip(y, rk.p_best[order]):
            if np.isfinite(p):
                ax.annotate(f"P(best) {p:.2f}", (1.0, yi), xycoords=("axes fraction", "data"),
                            xytext=(-2, 0), textcoords="offset points", ha="right", va="center",
                            fontsize=6.5, color=st.NEUTRAL)
        finite = np.concatenate([low, high, score])
        finite = finite[np.isfinite(finite)]
        if finite.size:
            span = max(finite.max() - finite.min(), 1e-6)
            ax.set_xlim(finite.min() - 0.05 * span, finite.max() + 0.35 * span)
        n_best = int(in_best.sum())
        ax.set_title(f"Score with 95 % bootstrap interval; filled: best group ({n_best})",
                     loc="left", fontsize=9)
        # RMSD table
        tx = fig.add_subplot(gs[0, 1])
        _rmsd_table(tx, data, order, nuc)
        title = f"Ranking of {n_all} model{'s' if n_all != 1 else ''}"
        if n < n_all:
            title += f" (the best {n} shown; all in ranking.csv)"
        fig.suptitle(title, x=0.04, ha="left", fontsize=st.TITLE, y=0.96)
        _caption(fig, y=bottom - 0.1, text="Score: per-nucleus RMSD divided by the predictor's expected error, "
                      "combined over nuclei (see summary.json 'parameters'). Interval: paired "
                      "bootstrap over residues; the filled best group are the models the bootstrap "
                      "cannot tell apart from the best. Table: RMSD in ppm per nucleus class; shading "
                      + ("relative to the expected error of each nucleus." if data.summary.get(
                          "expected_error") else "within each column (darker = larger)."))
    return fig


def _rmsd_table(ax, data, order, nuc):
    rk = data.ranking
    n = len(order)
    if not nuc:
        ax.axis("off")
        ax.text(0.5, 0.5, "no per-nucleus RMSD\nin ranking.csv", ha="center", va="center",
                transform=ax.transAxes, fontsize=st.SMALL)
        return
    vals = np.array([[rk.metrics["rmsd"][x][i] for x in nuc] for i in order], dtype=float)
    expected = data.summary.get("expected_error") or {}
    shade = np.full_like(vals, np.nan)
    for j, x in enumerate(nuc):
        col = vals[:, j]
        e = expected.get(x) if isinstance(expected, dict) else None
        if isinstance(e, (int, float)) and e > 0:
            shade[:, j] = np.clip(col / e / 3.0, 0, 1)       # 3x expected error = darkest
        elif np.isfinite(col).any():
            lo, hi = np.nanmin(col), np.nanmax(col)
            shade[:, j] = (col - lo) / (hi - lo) if hi > lo else 0.0
    ax.imshow(np.ma.masked_invalid(shade * 0.85), cmap=st.sequential_cmap(), vmin=0, vmax=1,
              aspect="auto", interpolation="nearest", gid="rmsd_table")
    for (i, j), v in np.ndenumerate(vals):
        if np.isfinite(v):
            dark = np.isfinite(shade[i, j]) and shade[i, j] > 0.5
            ax.text(j, i, f"{v:.2f}", ha="center", va="center", fontsize=6.5 if n > 15 else 7.5,
                    color="white" if dark else "black")
    ax.set_xticks(range(len(nuc)), nuc)
    ax.xaxis.tick_top()
    lift = ScaledTranslation(0, 3 / 72, ax.figure.dpi_scale_trans)
    for j, x in enumerate(nuc):   # a swatch of the nucleus colour above each column
        ax.add_line(Line2D([j - 0.3, j + 0.3], [1.0, 1.0], lw=4, color=st.nucleus_colour(x),
                           solid_capstyle="butt", clip_on=False,
                           transform=ax.get_xaxis_transform() + lift))
    ax.tick_params(axis="x", pad=10)
    ax.set_yticks([])
    ax.set_xlabel("RMSD (ppm) per nucleus class")
    for s in ax.spines.values():
        s.set_visible(False)
    ax.tick_params(axis="x", length=0)


# ----------------------------------------------------------------------------- 2. correlation
def correlation_figure(data: ReportData, model: str | None = None) -> Figure:
    """Measured against predicted shifts for one model, one panel per nucleus class with data."""
    model = model or data.best_model
    with st.report_style():
        fig = _new(st.A4_LANDSCAPE)
        res = data.residues.select(data.residues.model == model)
        classes = nuclei_with_data(data, model)
        tag = " (best model)" if model == data.best_model else ""
        fig.suptitle(f"Measured against predicted shifts: {model}{tag}", x=0.04, ha="left",
                     fontsize=st.TITLE, y=0.96)
        if not classes:
            fig.text(0.5, 0.5, f"no compared atoms for {model} in residues.csv", ha="center")
            return fig
        nr, nc = panel_grid(len(classes))
        gs = fig.add_gridspec(nr, nc, left=0.07, right=0.98, top=0.86, bottom=0.13,
                              wspace=0.35, hspace=0.42)
        hidden = 0
        for k, x in enumerate(classes):
            ax = fig.add_subplot(gs[k // nc, k % nc])
            hidden += _correlation_panel(ax, data, res, model, x)
        handles = [Line2D([], [], ls="", marker="o", ms=4, mfc=st.NEUTRAL_LIGHT, mec="none",
                          label="compared atom"),
                   Line2D([], [], ls="", marker="s", ms=5, mfc=st.NEUTRAL_LIGHT, mec="black",
                          label="flagged in every model (data or predictor?)"),
                   Line2D([], [], ls="", marker="^", ms=5, mfc=st.NEUTRAL_LIGHT, mec="black",
                          label="flagged in some models (these models?)"),
                   Line2D([], [], color="black", lw=0.7, label="measured = predicted")]
        fig.legend(handles=handles, loc="upper right", ncol=4, bbox_to_anchor=(0.98, 0.925))
        note = (f"Labels: up to {MAX_LABELS} flagged atoms per panel, largest |z| first"
                + (f"; {hidden} more flagged atoms are in the flags table." if hidden else "."))
        _caption(fig, "Each point is one atom of the common atom set (residues.csv). RMSD and r "
                      "from ranking.csv (from residues.csv for classes it has no column for). " + note)
    return fig


def _panel_stats(data, res, model, x):
    rk = data.ranking
    if model in rk.model and x in rk.nuclei:
        i = rk.model.index(model)
        rmsd, r, n = (rk.metrics[s][x][i] for s in ("rmsd", "r", "n"))
        if np.isfinite(rmsd):
            return rmsd, r, n
    sel = res.nucleus == x
    d = res.residual[sel][np.isfinite(res.residual[sel])]
    m, p = res.measured[sel], res.predicted[sel]
    ok = np.isfinite(m) & np.isfinite(p)
    r = np.corrcoef(m[ok], p[ok])[0, 1] if ok.sum() > 2 else np.nan
    return float(np.sqrt(np.mean(d ** 2))) if d.size else np.nan, r, d.size


def _correlation_panel(ax, data, res, model, x) -> int:
    sel = (res.nucleus == x) & np.isfinite(res.measured) & np.isfinite(res.predicted)
    sub = res.select(sel)
    col = st.nucleus_colour(x)
    # plot the measured shifts as compared: minus the referencing correction of the row
    off = np.where(np.isfinite(sub.offset), sub.offset, 0.0)
    meas = sub.measured - off
    rereferenced = bool(np.any(off != 0.0))
    flagged = sub.flag != ""
    every = np.array(["every" in f for f in sub.flag])
    ax.scatter(sub.predicted[~flagged], meas[~flagged], s=9, c=col, edgecolors="none",
               alpha=0.8, gid=f"scatter:{x}")
    for mask, marker in ((flagged & every, "s"), (flagged & ~every, "^")):
        if mask.any():
            ax.scatter(sub.predicted[mask], meas[mask], s=26, c=col, marker=marker,
                       edgecolors="black", linewidths=0.9, zorder=3, gid=f"flagged:{x}")
    lo = float(min(meas.min(), sub.predicted.min()))
    hi = float(max(meas.max(), sub.predicted.max()))
    pad = 0.06 * max(hi - lo, 0.5)
    ax.plot([lo - pad, hi + pad], [lo - pad, hi + pad], color="black", lw=0.7, zorder=1)
    ax.set_xlim(lo - pad, hi + pad)
    ax.set_ylim(lo - pad, hi + pad)
    ax.set_aspect("equal", adjustable="box")
    iso = st.ISOTOPE_LABEL[st.OFFSET_TYPE[x]]
    ax.set_title(f"{x} ({iso})", color="black", loc="left")
    ax.set_xlabel("predicted (ppm)")
    ax.set_ylabel("measured - offset (ppm)" if rereferenced else "measured (ppm)")
    rmsd, r, n = _panel_stats(data, sub, model, x)
    ax.text(0.03, 0.97, f"RMSD {rmsd:.2f} ppm\nr {r:.3f}\nN {int(n) if np.isfinite(n) else '-'}",
            transform=ax.transAxes, va="top", ha="left", fontsize=st.SMALL)
    ax.tick_params(labelsize=7)
    if not flagged.any():
        return 0
    zs = np.abs(np.where(np.isfinite(sub.z), sub.z, 0.0))
    idx = np.flatnonzero(flagged)
    idx = idx[np.argsort(-zs[idx], kind="stable")]
    labels = [residue_label(sub.seq_id[i], sub.comp_id[i], sub.atom_id[i], x) for i in idx]
    placed = place_labels(ax, sub.predicted[idx], meas[idx], labels, max_labels=MAX_LABELS)
    return len(idx) - placed


# ----------------------------------------------------------------------------- 4. referencing
def before_after(residual: np.ndarray, offset: float, applied: bool,
                 per_row: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Residuals (measured - predicted) without and with the referencing offset subtracted.

    residues.csv holds residuals as scored: after the correction when it was applied, before it
    otherwise. When applied, the row's own correction (residues.csv ``offset`` column, if
    present) is added back; otherwise the estimated ``offset`` is subtracted to show what the
    correction would do.
    """
    if applied:
        add = per_row if per_row is not None and np.isfinite(per_row).all() else offset
        return residual + add, residual
    return residual, residual - offset


def referencing_figure(data: ReportData) -> Figure:
    """Residual distributions per nucleus class before and after the referencing offset."""
    with st.report_style():
        fig = _new(st.A4_LANDSCAPE)
        res = data.residues
        classes = nuclei_with_data(data)
        pooled = "all models" if data.drawn is None else f"the {len(data.drawn)} models drawn"
        fig.suptitle(f"Referencing: measured - predicted, {pooled} pooled", x=0.04, ha="left",
                     fontsize=st.TITLE, y=0.96)
        if not classes:
            fig.text(0.5, 0.5, "no residuals in residues.csv", ha="center")
            return fig
        nr, nc = panel_grid(len(classes))
        gs = fig.add_gridspec(nr, nc, left=0.07, right=0.98, top=0.84, bottom=0.13,
                              wspace=0.3, hspace=0.45)
        for k, x in enumerate(classes):
            ax = fig.add_subplot(gs[k // nc, k % nc])
            kind = st.OFFSET_TYPE[x]
            off = data.offset(kind)
            sel = (res.nucleus == x) & np.isfinite(res.residual)
            d = res.residual[sel]
            value = float(off.get("value") or 0.0) if off else 0.0
            applied = bool(off.get("applied")) if off else False
            before, after = before_after(d, value, applied, res.offset[sel])
            both = np.concatenate([before, after])
            lo, hi = np.percentile(both, [0.5, 99.5]) if both.size else (-1, 1)
            lo, hi = min(lo, -0.1), max(hi, 0.1)
            n_atoms = d.size / max(len(set(res.model[sel])), 1)     # atoms per model
            bins = np.linspace(lo, hi, int(np.clip(2 * np.sqrt(n_atoms), 8, 40)) + 1)
            ax.hist(np.clip(after, lo, hi), bins=bins, color=st.nucleus_colour(x), alpha=0.75,
                    gid=f"after:{x}")
            ax.hist(np.clip(before, lo, hi), bins=bins, histtype="step", color="black", lw=0.9,
                    gid=f"before:{x}")
            ax.axvline(0, color=st.NEUTRAL, lw=0.6, ls=":")
            iso = st.ISOTOPE_LABEL[kind]
            if off:
                state = "applied" if applied else "not applied"
                ax.set_title(f"{x}: {iso} offset {value:+.2f} ppm\n{state}", loc="left", fontsize=8.5)
            else:
                ax.set_title(f"{x}: no {iso} offset\nin summary.json", loc="left", fontsize=8.5)
            ax.set_xlabel("measured - predicted (ppm)")
            ax.set_ylabel(f"atoms ({'all' if data.drawn is None else 'drawn'} models)")
            ax.tick_params(labelsize=7)
        handles = [Rectangle((0, 0), 1, 1, fc="none", ec="black", label="before the offset"),
                   Rectangle((0, 0), 1, 1, fc=st.NEUTRAL_LIGHT, label="after the offset (class colour)")]
        fig.legend(handles=handles, loc="upper right", ncol=2, bbox_to_anchor=(0.98, 0.925))
        _caption(fig, "One offset per isotope (1H, 13C, 15N), subtracted from the measured shifts. "
                      "'Not applied' means the offset was estimated but judged too small or "
                      "uncertain to correct (--reref); the 'after' histogram then shows what the "
                      "correction would do. Values outside the 0.5-99.5 percentile range are "
                      "piled into the end bins.")
    return fig
