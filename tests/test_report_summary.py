"""Reports of many models summarise: only the drawn models' residues.csv rows are read, the
whole run is shown as distributions of ranking.csv, and the report says what was summarised.

Synthetic score output directory of 240 models (tests/_synthetic_outdir.py, invented numbers)
with a small threshold; the expected choice (best N by score, best group, --show) is worked out
here from ranking.csv and summary.json directly (common practice, no source).
"""
from __future__ import annotations

import csv
import json
import re

import numpy as np
import pytest

from _synthetic_outdir import make_outdir
from shiftcheck.errors import InputError
from shiftcheck.report import distributions as dist
from shiftcheck.report.html import DATA_ID, write_html
from shiftcheck.report.load import load_outdir
from shiftcheck.report.pages import _lines
from shiftcheck.report.pdf import report_figures

N_MODELS, N = 240, 8


@pytest.fixture(scope="module")
def outdir(tmp_path_factory):
    return make_outdir(tmp_path_factory.mktemp("many") / "o", n_models=N_MODELS, n_flag_atoms=1)


def _csv(path):
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


def _expected(outdir, show=()):
    ranking = sorted(_csv(outdir / "ranking.csv"), key=lambda r: (float(r["score"]), int(r["rank"])))
    group = {r["model"] for r in json.loads((outdir / "summary.json").read_text())["ranking"]
             if r["best_group"]}
    names = [r["model"] for r in ranking]
    group = set([m for m in names if m in group][:N])    # a large best group: its best N
    return list(dict.fromkeys(names[:N] + [m for m in names if m in group or m in show]))


def test_load_reads_only_the_drawn_models_rows(outdir):
    worst = _csv(outdir / "ranking.csv")[-1]["model"]
    data = load_outdir(outdir, show=(worst,), max_models=N)
    want = _expected(outdir, show=(worst,))
    assert data.drawn == want and worst in want and len(want) < N_MODELS
    assert data.n_models_with_rows == N_MODELS
    rows = [r for r in _csv(outdir / "residues.csv") if r["model"] in set(want)]
    assert len(data.residues) == len(rows)
    assert list(data.residues.model) == [r["model"] for r in rows]
    assert np.allclose(data.residues.predicted, [float(r["predicted"]) for r in rows])
    assert len(data.ranking.model) == N_MODELS          # the ranking stays whole


def test_rows_of_other_models_are_not_parsed(tmp_path):
    d = make_outdir(tmp_path / "o", n_models=40, n_flag_atoms=1)
    lines = (d / "residues.csv").read_text().splitlines(keepends=True)
    drawn = set(load_outdir(d, max_models=N).drawn)
    j = next(i for i, ln in enumerate(lines[1:], start=1) if ln.split(",")[0] not in drawn)
    parts = lines[j].split(",")
    parts[6] = "not-a-number"                           # predicted of a model not drawn
    lines[j] = ",".join(parts)
    (d / "residues.csv").write_text("".join(lines))
    assert len(load_outdir(d, max_models=N).residues) > 0   # that row is skipped unparsed
    with pytest.raises(InputError, match=rf"residues.csv:{j + 1}:"):
        load_outdir(d, max_models=100)                  # read whole: the bad row is found


def test_small_runs_are_drawn_whole(tmp_path):
    d = make_outdir(tmp_path / "few", n_models=5)
    data = load_outdir(d)
    assert data.drawn is None and len(data.residues) == len(_csv(d / "residues.csv"))
    assert "distributions" not in [s for s, _ in report_figures(data)]
    assert not any("Summarised" in t for _, t in _lines(data))


def test_pdf_pages_summarise_and_say_so(outdir):
    data = load_outdir(outdir, max_models=N)
    figs = dict(report_figures(data))
    text = " ".join(t for _, t in _lines(data))
    assert "Summarised (many models)" in text
    assert f"rows of {len(data.drawn)} of the {N_MODELS} models" in text
    n_group = len(data.best_group)
    assert n_group > N and f"the best {N} of the {n_group} models of the best group" in text
    assert f"cover all {N_MODELS} models" in text
    assert f"the {len(data.drawn)} models drawn pooled" in figs["referencing"]._suptitle.get_text()
    # the distributions page counts every model of ranking.csv
    fig = figs["distributions"]
    ranking = _csv(outdir / "ranking.csv")
    scores = np.array([float(r["score"]) for r in ranking])
    (ax,) = [a for a in fig.axes if any(p.get_gid() == "score_hist" for p in a.patches)]
    heights = [p.get_height() for p in ax.patches if p.get_gid() == "score_hist"]
    assert sum(heights) == N_MODELS
    assert np.array_equal(heights, np.histogram(scores, bins=dist._bins(scores))[0])
    for x in ("CA", "H"):
        bars = [p.get_height() for a in fig.axes for p in a.patches if p.get_gid() == f"rmsd_hist:{x}"]
        assert sum(bars) == sum(1 for r in ranking if r[f"rmsd_{x}"])


def test_html_says_what_was_summarised(outdir, tmp_path):
    page = write_html(outdir, max_point_models=N).read_text()
    data = json.loads(re.search(rf'<script type="application/json" id="{DATA_ID}">(.*?)</script>',
                                page, re.S).group(1))
    want = _expected(outdir)
    assert data["points_models"] == want
    assert len(data["ranking"]["model"]) == N_MODELS
    text = " ".join(data["summarised"])
    assert f"embedded for {len(want)} of {N_MODELS} models" in text
    assert f"cover all {N_MODELS} models" in text


def test_report_keeps_only_the_drawn_models_summary_parts(outdir):
    """The summary parts left out while drawing (metrics, other models' secondary structure)
    change nothing on the page or the opening page: the same data from the whole summary.json."""
    import dataclasses

    from shiftcheck.report.html_data import page_data

    data = load_outdir(outdir, max_models=N)
    whole = dataclasses.replace(data, summary=json.loads((outdir / "summary.json").read_text()))
    assert "metrics" not in data.summary and "metrics" in whole.summary
    kept = set(data.summary["secondary_structure"])
    assert kept < set(whole.summary["secondary_structure"])
    assert {m.split("#")[0] for m in data.drawn} <= {m.split("#")[0] for m in kept}
    assert page_data(data, max_point_models=N) == page_data(whole, max_point_models=N)
    assert _lines(data) == _lines(whole)
