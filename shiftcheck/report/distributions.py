"""The "Distributions over all models" page of a summarised report (many models).

When a run has more models than the report draws one by one (:mod:`.summarise`), this page
shows the whole run from ranking.csv alone: a histogram of the combined score and one of the
RMSD of each nucleus class, with the best model and the last model drawn per model marked.
Artists carry gids ``"score_hist"``, ``"rmsd_hist:CA"``, ``"best"`` and ``"drawn_limit"``.
"""
from __future__ import annotations

import numpy as np

from . import style as st
from ._layout import panel_grid
from .load import ReportData
from .sequence_page import _caption, _new

__all__ = ["distributions_figure"]


def _bins(values: np.ndarray) -> np.ndarray:
    """Histogram edges: about 2 sqrt(n) bins, 10 to 60 (common practice, no source)."""
    n = int(np.clip(2 * np.sqrt(values.size), 10, 60))
    lo, hi = (float(values.min()), float(values.max())) if values.size else (0.0, 1.0)
    if hi <= lo:
        lo, hi = lo - 0.5, hi + 0.5
    return np.linspace(lo, hi, n + 1)


def _panel(ax, values, best_value, limit_value, colour, gid, xlabel, title):
    ok = values[np.isfinite(values)]
    ax.hist(ok, bins=_bins(ok), color=colour, alpha=0.8, gid=gid)
    if np.isfinite(best_value):
        ax.axvline(best_value, color=st.BEST_GROUP, lw=1.2, gid="best")
    if limit_value is not None and np.isfinite(limit_value):
        ax.axvline(limit_value, color="black", lw=0.8, ls="--", gid="drawn_limit")
    ax.set_title(f"{title} (n {ok.size})", loc="left", fontsize=8.5)
    ax.set_xlabel(xlabel)
    ax.set_ylabel("models")
    ax.tick_params(labelsize=7)


def distributions_figure(data: ReportData):
    """Histograms over every model of ranking.csv: combined score and per-nucleus RMSD."""
    with st.report_style():
        rk = data.ranking
        fig = _new(st.A4_LANDSCAPE)
        n_all = len(rk.model)
        fig.suptitle(f"Distributions over all {n_all} models (ranking.csv)", x=0.04, ha="left",
                     fontsize=st.TITLE, y=0.96)
        nuc = [x for x in rk.nuclei if np.isfinite(rk.metrics["rmsd"][x]).any()]
        nr, nc = panel_grid(1 + len(nuc))
        gs = fig.add_gridspec(nr, nc, left=0.07, right=0.98, top=0.86, bottom=0.14,
                              wspace=0.3, hspace=0.5)
        best = rk.model.index(data.best_model)
        drawn = data.drawn or []
        last = rk.model.index(drawn[min(len(drawn), data.max_models) - 1]) if drawn else None
        ax = fig.add_subplot(gs[0, 0])
        _panel(ax, rk.score, rk.score[best], rk.score[last] if last is not None else None,
               st.NEUTRAL, "score_hist", "combined score (lower = closer)", "Combined score")
        for k, x in enumerate(nuc, start=1):
            ax = fig.add_subplot(gs[k // nc, k % nc])
            v = rk.metrics["rmsd"][x]
            _panel(ax, v, v[best], None, st.nucleus_colour(x), f"rmsd_hist:{x}", "RMSD (ppm)",
                   f"{x} RMSD")
        k = len(drawn)
        _caption(fig, f"Every model counted once. Solid line: the best model ({data.best_model}); "
                      f"dashed (score panel): the score of the last of the best {min(k, data.max_models)} "
                      f"models drawn one by one. The other pages use the residues.csv rows of the "
                      f"{k} drawn models only (the best by score, the best group and --show).")
    return fig
