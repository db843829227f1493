"""The "Agreement along the sequence" page, and the small figure helpers the report shares.

Panels, top to bottom, on one residue axis: the best model's RMS z per residue; the measured
secondary chemical shift ΔδCA − ΔδCB per residue (:mod:`.secondary_shifts`; Spera & Bax 1991,
J. Am. Chem. Soc. 113:5490; Wishart & Sykes 1994, J. Biomol. NMR 4:171); the best model's
secondary structure; and a models x residues strip of RMS |z|. Drawn from OUTDIR alone.
Artists carry gids ``"rmsz"``, ``"secshift"``, ``"helix"``, ``"strand"``, ``"strip"``.
"""
from __future__ import annotations

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.patches import FancyArrow, Rectangle

from . import style as st
from ._layout import model_order, rms_by_residue
from .load import ReportData
from .secondary_shifts import secondary_shift_difference

__all__ = ["sequence_figure", "MAX_MODELS", "Z_MAX", "HELIX_LIKE", "STRAND_LIKE"]

MAX_MODELS = 30      # rows shown in the ranking and the models x residues strip
Z_MAX = 3.0          # top of the |z| colour scale
# Secondary-shift bars: Paul Tol "muted" indigo (positive, helix-like) and sand (negative,
# strand-like), SRON/EPS/TN/09-002 -- a blue/yellow pair, safe for red-green colour blindness
# and far apart in lightness, so it also survives greyscale print.
HELIX_LIKE = "#332288"
STRAND_LIKE = "#DDCC77"


def _new(size) -> Figure:
    fig = Figure(figsize=size, dpi=st.DPI)
    FigureCanvasAgg(fig)
    return fig


def _caption(fig, text, y=0.015):
    """Grey caption at the foot of the page, wrapped to the page width (about 17 characters
    per inch at the small font size)."""
    import textwrap

    text = textwrap.fill(text, width=int(fig.get_figwidth() * 17))
    fig.text(0.04, y, text, fontsize=st.SMALL, color=st.NEUTRAL, va="top" if y > 0.05 else "bottom",
             ha="left")


def sequence_figure(data: ReportData, max_models: int = MAX_MODELS) -> Figure:
    """Per-residue RMS z of the best model, measured secondary shifts, secondary structure, and
    a models x residues strip."""
    with st.report_style():
        res = data.residues
        best = data.best_model
        seq_ids = np.unique(res.seq_id)
        order = model_order(data.ranking)
        have = set(res.model)
        models = [data.ranking.model[i] for i in order if data.ranking.model[i] in have]
        shown = models[:max_models]
        grid = rms_by_residue(res.model, res.seq_id, res.z, shown, seq_ids)
        fig = _new(st.A4_LANDSCAPE)
        strip_h = max(1.5, 0.11 * len(shown))
        gs = fig.add_gridspec(4, 2, height_ratios=[2.0, 1.6, 0.45, strip_h], width_ratios=[1, 0.015],
                              left=0.13, right=0.95, top=0.9, bottom=0.1, hspace=0.3, wspace=0.02)
        ax = fig.add_subplot(gs[0, 0])
        bi = shown.index(best) if best in shown else None
        bars = grid[bi] if bi is not None else rms_by_residue(res.model, res.seq_id, res.z, [best], seq_ids)[0]
        bsel = res.model == best
        flagged_res = set(res.seq_id[bsel & (res.flag != "")])
        colours = ["black" if s in flagged_res else "#9A9A9A" for s in seq_ids]
        ok = np.isfinite(bars)
        ax.bar(seq_ids[ok], bars[ok], width=0.85, color=[c for c, o in zip(colours, ok) if o],
               gid="rmsz")
        ax.axhline(1.0, color=st.NEUTRAL, lw=0.6, ls=":")
        ax.set_ylabel("RMS z over the\nresidue's atoms (unitless)")
        ax.set_title(f"Best model {best}: deviation per residue (black: residue has a flagged atom;"
                     " dotted: z = 1, the expected size)", loc="left", fontsize=9)
        ax.tick_params(labelbottom=False)
        xlim = (seq_ids.min() - 0.5, seq_ids.max() + 0.5) if seq_ids.size else (0, 1)
        ax.set_xlim(*xlim)
        sx = fig.add_subplot(gs[1, 0], sharex=ax)
        _secondary_panel(sx, res.select(bsel))
        ss_ax = fig.add_subplot(gs[2, 0], sharex=ax)
        method = _ss_track(ss_ax, data, best)
        hx = fig.add_subplot(gs[3, 0], sharex=ax)
        edges = np.concatenate([seq_ids - 0.5, [seq_ids.max() + 0.5]]) if seq_ids.size else [0, 1]
        mesh = hx.pcolormesh(edges, np.arange(len(shown) + 1) - 0.5, np.ma.masked_invalid(grid),
                             cmap=st.sequential_cmap(), vmin=0, vmax=Z_MAX, gid="strip")
        hx.patch.set_facecolor("white")
        hx.patch.set_hatch(st.NO_DATA_HATCH)
        hx.patch.set_edgecolor(st.NO_DATA_EDGE)
        hx.set_yticks(range(len(shown)), shown, fontsize=6 if len(shown) > 12 else 7.5)
        hx.set_ylim(len(shown) - 0.5, -0.5)
        hx.set_xlabel("residue number (shift-list Seq_ID)")
        cax = fig.add_subplot(gs[3, 1])
        cb = fig.colorbar(mesh, cax=cax, extend="max")
        cb.set_label("RMS |z| (unitless)", fontsize=st.SMALL)
        cb.ax.tick_params(labelsize=7)
        more = f" (the best {len(shown)} of {len(models)} shown)" if len(shown) < len(models) else ""
        hx.set_title(f"All models, best first{more}: where each disagrees with the data "
                     "(hatched: no data)", loc="left", fontsize=9)
        fig.suptitle("Agreement along the sequence", x=0.04, ha="left", fontsize=st.TITLE, y=0.96)
        _caption(fig, "z = residual / expected error of the nucleus class. Secondary shift = measured "
                      "- offset - random coil (base values of the shipped table; Gly: CA only). "
                      "Secondary structure "
                      + (f"of {best}: {method}." if method else "not available in summary.json."))
    return fig


def _secondary_panel(ax, res) -> None:
    """Bars of ΔδCA − ΔδCB (ppm) from the measured CA/CB rows of one model."""
    seq, val = secondary_shift_difference(res.seq_id, res.comp_id, res.atom_id, res.measured,
                                          res.offset)
    ok = np.isfinite(val)
    colours = [HELIX_LIKE if v >= 0 else STRAND_LIKE for v in val[ok]]
    ax.bar(seq[ok], val[ok], width=0.85, color=colours, edgecolor=st.NEUTRAL, linewidth=0.3,
           gid="secshift")
    ax.axhline(0.0, color="black", lw=0.6)
    ax.set_ylabel("ΔδCA - ΔδCB\n(ppm)")
    ax.tick_params(labelbottom=False)
    if ok.any():
        lim = max(2.0, float(np.max(np.abs(val[ok]))) * 1.1)
        ax.set_ylim(-lim, lim)
    else:
        ax.text(0.5, 0.5, "no measured CA/CB shifts in residues.csv", transform=ax.transAxes,
                ha="center", va="center", fontsize=st.SMALL, color=st.NEUTRAL)
    ax.set_title("Measured secondary shift (data, not model): up (indigo) helix-like, "
                 "down (sand) strand-like", loc="left", fontsize=9)


def _ss_track(ax, data, model) -> str | None:
    ax.set_yticks([])
    for s in ax.spines.values():
        s.set_visible(False)
    ax.tick_params(labelbottom=False, bottom=False)
    ss_all = data.summary.get("secondary_structure")
    ss_all = ss_all if isinstance(ss_all, dict) else {}
    entry, used = ss_all.get(model), model
    if entry is None:   # e.g. name#mean has no coordinates: use the ensemble's first model
        stem = model.split("#")[0]
        used = next((k for k in ss_all if k.split("#")[0] == stem), None)
        entry = ss_all.get(used) if used else None
    if not isinstance(entry, dict) or not entry.get("ss") or not entry.get("seq_id"):
        ax.text(0.5, 0.5, "secondary structure not in summary.json", transform=ax.transAxes,
                ha="center", va="center", fontsize=st.SMALL, color=st.NEUTRAL)
        ax.set_ylim(0, 1)
        return None
    seq, ss = list(entry["seq_id"]), str(entry["ss"])
    ax.set_ylim(0, 1)
    ax.axhline(0.5, color=st.NEUTRAL_LIGHT, lw=0.8, zorder=0)
    runs, start = [], 0
    for i in range(1, len(ss) + 1):
        if i == len(ss) or ss[i] != ss[start] or seq[i] != seq[i - 1] + 1:
            runs.append((ss[start], seq[start], seq[i - 1]))
            start = i
    for kind, a, b in runs:
        if kind == "H":
            ax.add_patch(Rectangle((a - 0.5, 0.15), b - a + 1, 0.7, color=st.NEUTRAL, lw=0, gid="helix"))
        elif kind == "E":
            ax.add_patch(FancyArrow(a - 0.5, 0.5, b - a + 1, 0, width=0.35, head_width=0.75,
                                    head_length=min(1.5, b - a + 1), length_includes_head=True,
                                    color="#8C8C8C", lw=0, gid="strand"))
    ax.set_ylabel("SS", rotation=0, ha="right", va="center", fontsize=st.SMALL)
    ax.text(1.0, 1.0, "box: helix   arrow: strand   line: other", transform=ax.transAxes,
            ha="right", va="bottom", fontsize=6.5, color=st.NEUTRAL)
    method = str(entry.get("method") or "method not stated")
    return method if used == model else f"{method}; drawn for {used}, as {model} has no coordinates"
