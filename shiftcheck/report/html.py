"""Write OUTDIR/report.html: one self-contained interactive page beside report.pdf.

The page is the template ``assets/report.html`` with the stylesheet ``assets/report.css``, the
script ``assets/report.js`` (plain JavaScript written for this project, drawing inline SVG; no
third-party code) and the data of :func:`.html_data.page_data` inlined, the data as a
``<script type="application/json">`` block. It opens from disk and makes no network request.
Like the PDF it is drawn from the CSV/JSON files of OUTDIR alone, and written under a temporary
name and renamed into place, so a reader never sees half a file.
"""
from __future__ import annotations

import json
from importlib import resources
from pathlib import Path

from ..errors import OutputError
from .html_data import MAX_POINT_MODELS, page_data
from .load import ReportData, load_outdir

__all__ = ["write_html", "render_html", "DATA_ID"]

DATA_ID = "shiftcheck-data"     # id of the embedded JSON block


def _asset(name: str) -> str:
    return resources.files("shiftcheck.report").joinpath("assets", name).read_text(encoding="utf-8")


def _json_for_script(obj) -> str:
    """JSON that cannot end its <script> block early: '<', '>' and '&' become \\u escapes."""
    text = json.dumps(obj, allow_nan=False, separators=(",", ":"), ensure_ascii=False)
    return text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")


def render_html(data: ReportData, show=(), max_point_models: int = MAX_POINT_MODELS) -> str:
    """The whole page as a string."""
    page = _asset("report.html")
    parts = {"{{CSS}}": _asset("report.css"), "{{JS}}": _asset("report.js"),
             "{{DATA_ID}}": DATA_ID,
             "{{DATA}}": _json_for_script(page_data(data, show, max_point_models)),
             "{{TITLE}}": f"shiftcheck report: {_escape(data.best_model)} best"}
    for key in ("{{CSS}}", "{{JS}}", "{{DATA_ID}}", "{{TITLE}}", "{{DATA}}"):   # data last
        page = page.replace(key, parts[key])
    return page


def _escape(text: str) -> str:
    return (str(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
            .replace('"', "&quot;"))


def write_html(outdir, show=(), max_point_models: int = MAX_POINT_MODELS,
               data: ReportData | None = None) -> Path:
    """Write OUTDIR/report.html from the files of a score output directory.

    Parameters
    ----------
    outdir : str or Path
        Directory written by ``shiftcheck score ... -o OUTDIR``.
    show : sequence of str
        Models whose points are embedded whatever their rank.
    max_point_models : int
        How many of the best models get their residues.csv points embedded.
    data : ReportData, optional
        ``load_outdir(outdir, show, max_point_models)`` already read (e.g. shared with the PDF).

    Returns
    -------
    Path
        The page written.

    Raises
    ------
    InputError
        Missing or malformed input files.
    OutputError
        The directory cannot be written.
    """
    outdir = Path(outdir)
    if data is None:
        data = load_outdir(outdir, show, max_point_models)
    text = render_html(data, show, max_point_models)
    final = outdir / "report.html"
    from .atomic import atomic_write_text

    try:
        atomic_write_text(final, text)
    except OSError as exc:
        raise OutputError(f"cannot write the report page: {exc.strerror or exc}", path=outdir) from None
    return final
