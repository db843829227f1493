"""The figures show what was computed: plotted numbers read back from the matplotlib artists
are compared with residues.csv and ranking.csv, re-read here with the csv module (independent
of shiftcheck.report.load). Input: SYNTHETIC output directories (tests/_synthetic_outdir.py).
Source of the check: the files themselves (common practice, no source)."""
from __future__ import annotations

import csv
import math
from collections import defaultdict

import numpy as np
import pytest

from _synthetic_outdir import OFFSETS, make_outdir
from shiftcheck.chem.nuclei import nucleus_class
from shiftcheck.report import figures as fg
from shiftcheck.report import pages
from shiftcheck.report.load import load_outdir


@pytest.fixture(scope="module")
def outdir(tmp_path_factory):
    return make_outdir(tmp_path_factory.mktemp("syn") / "out")


@pytest.fixture(scope="module")
def data(outdir):
    return load_outdir(outdir)


def _csv(path):
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


def _by_gid(fig, gid):
    return [a for ax in fig.axes for a in ax.get_children() if a.get_gid() == gid]


def test_ranking_scores_intervals_and_rmsd_table(outdir, data):
    rows = sorted(_csv(outdir / "ranking.csv"), key=lambda r: float(r["score"]))
    fig = fg.ranking_figure(data)
    (pts,) = _by_gid(fig, "score")
    xy = pts.get_offsets()
    assert np.allclose(xy[:, 0], [float(r["score"]) for r in rows])
    ax = pts.axes
    assert [t.get_text() for t in ax.get_yticklabels()] == [r["model"] for r in rows]
    (iv,) = _by_gid(fig, "interval")
    segs = iv.get_segments()
    assert np.allclose([s[0][0] for s in segs], [float(r["score_low"]) for r in rows])
    assert np.allclose([s[1][0] for s in segs], [float(r["score_high"]) for r in rows])
    # the best group (summary.json) is drawn filled, the others open (white)
    face = pts.get_facecolors()
    best = data.best_group
    for r, fc in zip(rows, face):
        assert (tuple(fc[:3]) != (1.0, 1.0, 1.0)) == (r["model"] in best)
    # RMSD table cells show ranking.csv's rmsd_X
    (img,) = _by_gid(fig, "rmsd_table")
    texts = {(round(t.get_position()[1]), round(t.get_position()[0])): t.get_text() for t in img.axes.texts}
    nuclei = [t.get_text() for t in img.axes.get_xticklabels()]
    for i, r in enumerate(rows):
        for j, x in enumerate(nuclei):
            assert texts[(i, j)] == f"{float(r['rmsd_' + x]):.2f}"


def test_ranking_many_models_shows_top_n(tmp_path):
    d = load_outdir(make_outdir(tmp_path / "many", n_models=50, n_flag_atoms=1))
    fig = fg.ranking_figure(d)
    (pts,) = _by_gid(fig, "score")
    assert len(pts.get_offsets()) == fg.MAX_MODELS
    assert "best 30 shown" in fig._suptitle.get_text()


def test_correlation_points_are_the_residue_rows(outdir, data):
    rows = [r for r in _csv(outdir / "residues.csv") if r["model"] == data.best_model]
    want = defaultdict(set)
    for r in rows:
        # the panels show the measured shift minus the row's referencing correction
        off = float(r["offset"]) if r.get("offset") not in (None, "", "nan") else 0.0
        want[nucleus_class(r["comp_id"], r["atom_id"])].add((float(r["predicted"]), float(r["measured"]) - off))
    fig = fg.correlation_figure(data)
    got = defaultdict(set)
    for ax in fig.axes:
        for c in ax.collections:
            gid = c.get_gid() or ""
            if gid.startswith(("scatter:", "flagged:")):
                got[gid.split(":")[1]] |= {tuple(p) for p in np.round(c.get_offsets(), 6)}
    assert set(got) == set(want)
    for k in want:
        assert got[k] == {(round(a, 6), round(b, 6)) for a, b in want[k]}
    # one panel per nucleus class, RMSD and r as in ranking.csv
    rk = {r["model"]: r for r in _csv(outdir / "ranking.csv")}[data.best_model]
    titles = {ax.get_title(loc="left").split()[0]: ax for ax in fig.axes if ax.get_title(loc="left")}
    assert set(titles) == set(want)
    for x in ("H", "CA", "N"):
        txt = titles[x].texts[0].get_text()
        assert f"RMSD {float(rk['rmsd_' + x]):.2f} ppm" in txt
        assert f"r {float(rk['r_' + x]):.3f}" in txt


def test_correlation_has_no_empty_panel(tmp_path):
    d = load_outdir(make_outdir(tmp_path / "noN", skip_nucleus="N"))
    fig = fg.correlation_figure(d)
    titles = [ax.get_title(loc="left") for ax in fig.axes]
    assert not any(t.startswith("N ") for t in titles)
    assert all(len(ax.collections) > 0 for ax in fig.axes)


def test_flagged_points_labelled(outdir, data):
    flagged = [r for r in _csv(outdir / "residues.csv") if r["model"] == data.best_model and r["flag"]]
    fig = fg.correlation_figure(data)
    labels = {t.get_text() for ax in fig.axes for t in ax.texts if not t.get_text().startswith("RMSD")}
    assert flagged and labels
    names = {f"{r['comp_id'].capitalize()}{r['seq_id']}" for r in flagged}
    assert {lab.split()[0] for lab in labels} <= names


def test_sequence_bars_are_rms_z_of_best_model(outdir, data):
    acc = defaultdict(list)
    for r in _csv(outdir / "residues.csv"):
        if r["model"] == data.best_model and r["z"]:
            acc[int(r["seq_id"])].append(float(r["z"]))
    fig = fg.sequence_figure(data)
    bars = [a for a in _by_gid(fig, "rmsz")]
    assert bars, "bar container not found"
    got = {round(p.get_x() + p.get_width() / 2): p.get_height() for p in bars[0].patches} \
        if hasattr(bars[0], "patches") else {round(p.get_x() + p.get_width() / 2): p.get_height() for p in bars}
    assert set(got) == set(acc)
    for s, zs in acc.items():
        assert math.isclose(got[s], math.sqrt(sum(z * z for z in zs) / len(zs)), rel_tol=1e-9)
    # the strip's first row (best model) carries the same numbers
    (mesh,) = _by_gid(fig, "strip")
    arr = np.asarray(mesh.get_array()).reshape(len(data.ranking.model), -1)
    assert np.allclose(arr[0], [got[s] for s in sorted(got)])


def test_secondary_structure_track_and_method(data):
    fig = fg.sequence_figure(data)
    helices = _by_gid(fig, "helix")
    strands = _by_gid(fig, "strand")
    assert len(helices) == 2 and len(strands) == 2      # C HHHHHHHHHH CCC EEEEE CC EEEEE CCCC HHHHH C
    assert "phi/psi windows (synthetic)" in " ".join(fig.texts[-1].get_text().split())  # caption is wrapped


def test_referencing_histograms(outdir, data):
    rows = _csv(outdir / "residues.csv")
    fig = fg.referencing_figure(data)
    # offsets as planted in the synthetic summary.json (test inputs, _synthetic_outdir.OFFSETS)
    for x, kind in (("CA", "C"), ("N", "N")):
        offset, applied = OFFSETS[kind]["value"], OFFSETS[kind]["applied"]
        res = np.array([float(r["residual"]) for r in rows if nucleus_class(r["comp_id"], r["atom_id"]) == x])
        ax = next(a for a in fig.axes if a.get_title(loc="left").startswith(f"{x}:"))
        assert f"{offset:+.2f} ppm" in ax.get_title(loc="left")
        assert ("not applied" in ax.get_title(loc="left")) is (not applied)
        after = [p for p in ax.patches if p.get_gid() == f"after:{x}"]
        heights = np.array([p.get_height() for p in after])
        edges = np.array([p.get_x() for p in after] + [after[-1].get_x() + after[-1].get_width()])
        assert heights.sum() == len(res)
        expect_after = res if applied else res - offset
        h, _ = np.histogram(np.clip(expect_after, edges[0], edges[-1]), bins=edges)
        assert np.array_equal(h, heights)


def test_flags_table_lists_every_flagged_atom(data):
    flagged = {(f["seq_id"], f["atom_id"]) for f in data.summary["flags"]}
    rows = [r for k, r in pages.flag_rows(data) if k == "row"]
    assert {(int(r[0].split()[1]), r[1]) for r in rows} == flagged


def test_flags_table_paginates(tmp_path):
    d = load_outdir(make_outdir(tmp_path / "manyflags", n_flag_atoms=120))
    n = pages.flag_page_count(d)
    assert n >= 3
    last = pages.flags_figure(d, n - 1)
    assert f"page {n} of {n}" in last.texts[0].get_text()


def test_flags_pages_list_residues_flagged_as_a_whole(data):
    # residue rule entries of summary.json (docs/outputs.md, residue flag) get their own section,
    # one line per flagged residue, every-model flags first; unflagged residues are not listed
    import copy

    d = copy.copy(data)
    d.summary = dict(data.summary)
    rs = [{"seq_id": i + 1, "comp_id": c, "n_atoms": 6, "residue_flag": "", "residue_q_best": 1.0,
           "residue_limit_best": 27.0} for i, c in enumerate(["MET", "GLN", "ILE", "PHE", "VAL"])]
    rs[3].update(residue_flag="some", residue_q_best=30.5)
    rs[1].update(residue_flag="every", residue_q_best=41.25)
    d.summary["residue_summary"] = rs
    rows = pages.flag_rows(d)
    i = rows.index(("section", ["Residues disagreeing as a whole (2)"]))
    notes = [r[0] for k, r in rows[i + 1:i + 3]]
    assert notes[0].startswith(f"{rs[1]['comp_id'].capitalize()} {rs[1]['seq_id']}:") and "41.2" in notes[0] \
        and notes[0].endswith("in every model")
    assert notes[1].startswith(f"{rs[3]['comp_id'].capitalize()} {rs[3]['seq_id']}:") and "in some models" in notes[1]
    assert rows[i + 3][0] == "section"          # data checks follow; no other residue listed
    # an older summary without the rule has no such section
    assert not any(k == "section" and r[0].startswith("Residues disagreeing") for k, r in pages.flag_rows(data))
