"""Write the report of a score output directory: OUTDIR/report.pdf and OUTDIR/plots/*.

Everything is drawn from summary.json, ranking.csv and residues.csv (see :mod:`.load`), so a
report can be redrawn without rescoring. Files are written under temporary names in their
final directory and renamed into place, so a reader never sees half a file.
"""
from __future__ import annotations

import os
import re
import tempfile
from pathlib import Path

from matplotlib.backends.backend_pdf import PdfPages

from .. import __version__
from ..errors import InputError, OutputError
from . import figures as fg
from . import pages
from . import style as st
from .atomic import umask
from .distributions import distributions_figure
from .load import ReportData, load_outdir
from .summarise import MAX_DRAWN_MODELS

__all__ = ["write_report", "report_figures", "PLOT_FORMATS"]

PLOT_FORMATS = ("png", "svg")
_OWN_PLOT = re.compile(r"^(ranking|distributions|correlation_.+|sequence|referencing|flags_\d+)\.(png|svg)$")


def _safe(name: str) -> str:
    return re.sub(r"[^A-Za-z0-9._-]+", "_", name).strip("_") or "model"


def report_figures(data: ReportData, show=()) -> list[tuple[str, object]]:
    """All report pages in order, as (plot file stem, Figure); the title page has stem None.

    Parameters
    ----------
    data : ReportData
    show : sequence of str
        Further models to draw correlation pages for (the best model is always drawn).

    Raises
    ------
    InputError
        If a model in ``show`` is not in ranking.csv.
    """
    known = data.ranking.model
    for m in show:
        if m not in known:
            listed = ", ".join(known[:6]) + (", ..." if len(known) > 6 else "")
            raise InputError(f"--show {m}: no such model in ranking.csv (models: {listed})",
                             path=data.outdir / "ranking.csv")
    corr = [data.best_model] + [m for m in dict.fromkeys(show) if m != data.best_model]
    out: list[tuple[str | None, object]] = [(None, pages.title_page(data)),
                                            ("ranking", fg.ranking_figure(data))]
    if data.drawn is not None:    # many models: the whole run as distributions
        out.append(("distributions", distributions_figure(data)))
    used = set()
    for m in corr:
        stem = f"correlation_{_safe(m)}"
        while stem in used:
            stem += "_"
        used.add(stem)
        out.append((stem, fg.correlation_figure(data, m)))
    out.append(("sequence", fg.sequence_figure(data)))
    out.append(("referencing", fg.referencing_figure(data)))
    for p in range(pages.flag_page_count(data)):
        out.append((f"flags_{p + 1}", pages.flags_figure(data, p)))
    return out


def _tmp(directory: Path, suffix: str) -> Path:
    fd, name = tempfile.mkstemp(prefix=".tmp-report-", suffix=suffix, dir=directory)
    os.close(fd)
    os.chmod(name, 0o666 & ~umask())   # mkstemp makes 0600; give the usual permissions
    return Path(name)


def write_report(outdir, formats=("png",), show=(), max_models: int = MAX_DRAWN_MODELS,
                 data: ReportData | None = None) -> list[Path]:
    """Draw the report of a score output directory.

    Parameters
    ----------
    outdir : str or Path
        Directory written by ``shiftcheck score ... -o OUTDIR``.
    formats : sequence of str
        Plot formats for OUTDIR/plots: any of 'png' (150 dpi) and 'svg'. The PDF is always written.
    show : sequence of str
        Models (as named in ranking.csv) to draw correlation pages for besides the best model.
    max_models : int
        With more models than this, the pages draw the best ``max_models``, the best group and
        ``show`` (only their residues.csv rows are read) and add a page of distributions over
        all models; the opening page says so.
    data : ReportData, optional
        ``load_outdir(outdir, show, max_models)`` already read (e.g. shared with report.html).

    Returns
    -------
    list of Path
        Files written: report.pdf first, then the plots.

    Raises
    ------
    InputError
        Missing or malformed input files, unknown format or model.
    OutputError
        The directory cannot be written.
    """
    formats = tuple(dict.fromkeys(f.strip().lower() for f in formats if f.strip()))
    bad = [f for f in formats if f not in PLOT_FORMATS]
    if bad:
        raise InputError(f"unknown plot format {bad[0]!r} (choose from {', '.join(PLOT_FORMATS)})")
    data = load_outdir(outdir, show, max_models) if data is None else data
    outdir = Path(outdir)
    figs = report_figures(data, show)
    plots = outdir / "plots"
    temps: list[tuple[Path, Path]] = []
    try:
        plots.mkdir(exist_ok=True)
        pdf_tmp = _tmp(outdir, ".pdf")
        temps.append((pdf_tmp, outdir / "report.pdf"))
        meta = {"Title": f"shiftcheck report: {outdir.name}", "Creator": f"shiftcheck {__version__}"}
        with st.report_style(), PdfPages(pdf_tmp, metadata=meta) as pdf:
            for _, fig in figs:
                pdf.savefig(fig)
        for stem, fig in figs:
            if stem is None:
                continue
            for ext in formats:
                t = _tmp(plots, f".{ext}")
                temps.append((t, plots / f"{stem}.{ext}"))
                with st.report_style():
                    fig.savefig(t, format=ext, dpi=st.DPI)
        written = []
        for t, final in temps:
            os.replace(t, final)
            written.append(final)
    except OSError as exc:
        for t, _ in temps:
            t.unlink(missing_ok=True)
        raise OutputError(f"cannot write the report: {exc.strerror or exc}", path=outdir) from None
    keep = {p.name for p in written}
    for old in plots.iterdir():   # remove our own plots left over from an earlier drawing
        if old.name not in keep and _OWN_PLOT.match(old.name):
            old.unlink(missing_ok=True)
    return written
