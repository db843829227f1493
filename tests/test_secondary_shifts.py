"""Measured secondary chemical shifts ΔδCA − ΔδCB on the sequence page.

Sources of the checks:
* formula: secondary shift = measured − random coil (Spera & Bax 1991, J. Am. Chem. Soc.
  113:5490; Wishart & Sykes 1994, J. Biomol. NMR 4:171); the combination ΔδCA − ΔδCB is common
  practice (from memory). Random-coil values are read here directly from the shipped table file
  shiftcheck/data/random_coil.json ("backbone" block: Wishart et al. 1995, J. Biomol. NMR 5:67),
  with json, independent of shiftcheck.predict.randomcoil.
* figure: bar heights read back from the artists (gid "secshift") against residues.csv re-read
  with the csv module (common practice, no source).
* real data: ubiquitin, BMRB 17769 against X-ray 1UBQ; ubiquitin's α-helix spans residues 23-34
  and its first β-strand residues 1-7 (well known; from memory). Sign convention: helix
  positive, strand negative (Spera & Bax 1991).
"""
from __future__ import annotations

import csv
import json
import math
import subprocess
import sys
from collections import defaultdict
from pathlib import Path

import numpy as np
import pytest

import shiftcheck
from shiftcheck.cli import main
from shiftcheck.report import figures as fg
from shiftcheck.report.load import load_outdir
from shiftcheck.report.secondary_shifts import secondary_shift_difference
from shiftcheck.report.sequence_page import HELIX_LIKE, STRAND_LIKE

TABLE = Path(shiftcheck.__file__).parent / "data" / "random_coil.json"


def _rc():
    """{(comp, atom): value} for CA and CB from the table file's backbone block."""
    bb = json.loads(TABLE.read_text())["backbone"]
    out = {}
    for comp, row in bb["values"].items():
        for atom in ("CA", "CB"):
            v = row[bb["atoms"].index(atom)]
            out[(comp, atom)] = math.nan if v is None else float(v)
    return out


def test_formula_by_hand():
    rc = _rc()
    # hand-made rows: Ala 1 (CA, CB), Gly 2 (CA only), Val 3 (CA only: no bar), Ser 4 (CB only:
    # no bar), Leu 5 (CA, CB, offsets given), Ala 6 CA twice (two models, same value), CB once
    rows = [(1, "ALA", "CA", 54.0, 0.0), (1, "ALA", "CB", 18.0, 0.0),
            (2, "GLY", "CA", 44.1, 0.0),
            (3, "VAL", "CA", 60.0, 0.0),
            (4, "SER", "CB", 64.0, 0.0),
            (5, "LEU", "CA", 55.5, 0.5), (5, "LEU", "CB", 43.0, float("nan")),
            (6, "ALA", "CA", 50.0, 0.0), (6, "ALA", "CA", 50.0, 0.0), (6, "ALA", "CB", 21.0, 0.0),
            (6, "ALA", "HA", 4.0, 0.0)]
    s, c, a, m, o = map(list, zip(*rows))
    seq, val = secondary_shift_difference(s, c, a, m, o)
    assert list(seq) == [1, 2, 3, 4, 5, 6]
    expect = [
        (54.0 - rc["ALA", "CA"]) - (18.0 - rc["ALA", "CB"]),
        44.1 - rc["GLY", "CA"],                                  # Gly: ΔδCA alone
        math.nan, math.nan,
        (55.5 - 0.5 - rc["LEU", "CA"]) - (43.0 - rc["LEU", "CB"]),   # NaN offset counts as 0
        (50.0 - rc["ALA", "CA"]) - (21.0 - rc["ALA", "CB"]),
    ]
    np.testing.assert_allclose(val, expect, rtol=0, atol=1e-12, equal_nan=True)
    # Ala 1 is helix-like (+), Ala 6 strand-like (−) with the table's Ala CA 52.5 / CB 19.1
    assert val[0] > 0 > val[5]


def _csv(path):
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


@pytest.fixture(scope="module")
def demo_out(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo") / "out"
    assert main(["demo", "-o", str(out), "--force"]) == 0
    return out


def _bars(fig):
    patches = [p for ax in fig.axes for p in ax.patches if p.get_gid() == "secshift"]
    return {round(p.get_x() + p.get_width() / 2): p for p in patches}


def test_bars_equal_residues_csv(demo_out):
    data = load_outdir(demo_out)
    rc = _rc()
    acc = defaultdict(dict)
    comp = {}
    for r in _csv(demo_out / "residues.csv"):
        if r["model"] != data.best_model or r["atom_id"] not in ("CA", "CB") or not r["measured"]:
            continue
        off = float(r["offset"]) if r.get("offset") else 0.0
        acc[int(r["seq_id"])][r["atom_id"]] = float(r["measured"]) - off - rc[r["comp_id"], r["atom_id"]]
        comp[int(r["seq_id"])] = r["comp_id"]
    expect = {}
    for s, d in acc.items():
        if "CA" in d and comp[s] == "GLY":
            expect[s] = d["CA"]
        elif "CA" in d and "CB" in d:
            expect[s] = d["CA"] - d["CB"]
    assert any(r.get("offset") not in ("", "0", None) for r in _csv(demo_out / "residues.csv"))
    bars = _bars(fg.sequence_figure(data))
    assert len(expect) > 20 and set(bars) == set(expect)
    for s, v in expect.items():
        assert math.isclose(bars[s].get_height(), v, abs_tol=1e-9)
        want = HELIX_LIKE if v >= 0 else STRAND_LIKE
        assert np.allclose(bars[s].get_facecolor()[:3], _rgb(want))
    ax = next(iter(bars.values())).axes
    assert "ppm" in ax.get_ylabel()


def _rgb(hexcol):
    return [int(hexcol[i:i + 2], 16) / 255 for i in (1, 3, 5)]


@pytest.mark.realdata
def test_ubiquitin_helix_positive_strand_negative(realdata, tmp_path):
    out = tmp_path / "ubq"
    cmd = [sys.executable, "-m", "shiftcheck", "score", str(realdata / "ubiquitin" / "bmr17769.str"),
           str(realdata / "ubiquitin" / "1ubq.pdb"), "-o", str(out), "--quiet", "--no-report",
           "--bootstrap", "50"]
    proc = subprocess.run(cmd, capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    bars = _bars(fg.sequence_figure(load_outdir(out)))
    helix = [bars[s].get_height() for s in range(23, 35) if s in bars]
    strand = [bars[s].get_height() for s in range(2, 8) if s in bars]
    assert len(helix) >= 10 and len(strand) >= 5
    assert np.mean(helix) > 0 > np.mean(strand)
