"""Small helpers shared by the report figures: per-residue aggregation, label placement, grids."""
from __future__ import annotations

import math

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg

__all__ = ["rms_by_residue", "model_order", "place_labels", "panel_grid", "residue_label",
           "short_hash", "fmt"]


def rms_by_residue(rows_model, rows_seq, z, models, seq_ids) -> np.ndarray:
    """Root-mean-square of z over each residue's atoms, per model.

    Parameters
    ----------
    rows_model, rows_seq, z : arrays of shape (n_rows,)
        Model name, residue number and z of every compared atom.
    models, seq_ids : sequences
        Row and column labels of the result.

    Returns
    -------
    np.ndarray, shape (len(models), len(seq_ids))
        NaN where a model has no finite z at that residue.
    """
    m_index = {m: i for i, m in enumerate(models)}
    s_index = {int(s): j for j, s in enumerate(seq_ids)}
    mi = np.array([m_index.get(m, -1) for m in rows_model], dtype=int)
    sj = np.array([s_index.get(int(s), -1) for s in rows_seq], dtype=int)
    ok = (mi >= 0) & (sj >= 0) & np.isfinite(z)
    sq = np.zeros((len(models), len(seq_ids)))
    cnt = np.zeros_like(sq)
    np.add.at(sq, (mi[ok], sj[ok]), np.asarray(z, float)[ok] ** 2)
    np.add.at(cnt, (mi[ok], sj[ok]), 1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(cnt > 0, np.sqrt(sq / np.maximum(cnt, 1)), np.nan)


def model_order(ranking) -> np.ndarray:
    """Indices of ranking rows, best first: by score (NaN last), ties by rank."""
    score = np.where(np.isfinite(ranking.score), ranking.score, np.inf)
    rank = np.where(np.isfinite(ranking.rank), ranking.rank, np.inf)
    return np.lexsort((rank, score))


def residue_label(seq_id, comp_id, atom_id, nucleus) -> str:
    """'Lys48', or 'Leu50 HD11' when the atom name says more than the panel's class."""
    base = f"{str(comp_id).capitalize()}{int(seq_id)}"
    return base if atom_id == nucleus else f"{base} {atom_id}"


def short_hash(h) -> str:
    """First 12 characters of a checksum, or '-'."""
    return (str(h)[:12] + "...") if h else "-"


def fmt(x, spec="+.2f", missing="-") -> str:
    """Format a number; '-' for None/NaN/non-numbers."""
    try:
        x = float(x)
    except (TypeError, ValueError):
        return missing
    return missing if math.isnan(x) else format(x, spec)


def panel_grid(n: int) -> tuple[int, int]:
    """Rows and columns for n small panels on a landscape page."""
    if n <= 4:
        return 1, max(n, 1)
    return 2, math.ceil(n / 2)


_OFFSETS_PT = [(6, 6), (6, -12), (-6, 6), (-6, -12), (14, 0), (-14, 0), (0, 16), (0, -18),
               (20, 18), (20, -24), (-20, 18), (-20, -24), (34, 6), (-34, 6), (34, -14), (-34, -14)]


def place_labels(ax, xs, ys, texts, fontsize=6.5, max_labels=6):
    """Annotate points with text labels that do not overlap each other or leave the axes.

    Greedy: each label tries a fixed list of offsets (in points) and takes the first whose
    box overlaps no earlier label and stays inside the axes; labels that fit nowhere are
    dropped. At most ``max_labels`` are attempted.

    Returns
    -------
    int
        Number of labels placed.
    """
    fig = ax.figure
    if fig.canvas is None or not isinstance(fig.canvas, FigureCanvasAgg):
        FigureCanvasAgg(fig)
    renderer = fig.canvas.get_renderer()
    axbox = ax.get_window_extent(renderer)
    placed = []
    n = 0
    for x, y, t in list(zip(xs, ys, texts))[:max_labels]:
        for dx, dy in _OFFSETS_PT:
            ha = "left" if dx >= 0 else "right"
            va = "bottom" if dy >= 0 else "top"
            ann = ax.annotate(t, (x, y), xytext=(dx, dy), textcoords="offset points", ha=ha,
                              va=va, fontsize=fontsize, color="black",
                              arrowprops=dict(arrowstyle="-", lw=0.4, color="#555555",
                                              shrinkA=0, shrinkB=2))
            bb = ann.get_window_extent(renderer)
            inside = (bb.x0 >= axbox.x0 and bb.x1 <= axbox.x1 and bb.y0 >= axbox.y0
                      and bb.y1 <= axbox.y1)
            if inside and not any(bb.overlaps(p) for p in placed):
                placed.append(bb)
                n += 1
                break
            ann.remove()
    return n
