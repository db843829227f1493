"""report.html: the embedded data equal the CSV files, nothing is fetched from the network, the
page stays small for 100 models and summarises many, and it works in a real browser.

Sources: the contract is the CSV/JSON files of OUTDIR themselves (ranking.csv and residues.csv
are read here with the standard csv module, independently of shiftcheck's reader); "no network
request" is checked by Chromium's DevTools protocol (Network.requestWillBeSent events), the
page's own file:// load being the only request allowed. Size limit (10 MB for 100 models) from
issue 12; the rest common practice, no source.
"""
from __future__ import annotations

import csv
import json
import math
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from _synthetic_outdir import make_outdir
from shiftcheck.cli import main
from shiftcheck.errors import InputError
from shiftcheck.report.html import DATA_ID, write_html

REPO = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory) -> Path:
    """The demo's output: `make demo`'s (SHIFTCHECK_QUICKSTART_DEMO) or a fresh run of the demo."""
    p = os.environ.get("SHIFTCHECK_QUICKSTART_DEMO")
    if p:
        out = Path(p) if Path(p).is_absolute() else REPO / p
        if out.is_dir():
            return out
    out = tmp_path_factory.mktemp("demo") / "out"
    env = dict(os.environ, MPLBACKEND="Agg", PYTHONPATH=str(REPO))
    subprocess.run([sys.executable, "-m", "shiftcheck", "demo", "-o", str(out), "--quiet"],
                   check=True, env=env, cwd=REPO, stdout=subprocess.DEVNULL)
    return out


def _embedded(page: Path) -> dict:
    text = page.read_text(encoding="utf-8")
    m = re.search(rf'<script type="application/json" id="{DATA_ID}">(.*?)</script>', text, re.S)
    assert m, "no embedded JSON block"
    return json.loads(m.group(1))


def _csv(path: Path) -> list[dict]:
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def _num(text: str):
    return None if text.strip() == "" else float(text)


def _same(a, b) -> bool:
    if a is None or b is None:
        return a is None and b is None
    return math.isclose(a, b, rel_tol=0, abs_tol=1e-12)


def _decoded_points(data: dict) -> list[dict]:
    r = data["residues"]
    out = []
    for i in range(r["n"]):
        out.append({c: (r["codes"][c][r[c][i]] if c in r["codes"] else r[c][i]) for c in
                    ("model", "chain", "seq_id", "comp_id", "atom_id", "nucleus", "measured",
                     "predicted", "residual", "z", "flag", "offset")})
    return out


def test_demo_page_written_by_score(demo_dir):
    """`shiftcheck demo` runs `score`, whose hook writes report.html beside report.pdf."""
    assert (demo_dir / "report.pdf").is_file()
    assert (demo_dir / "report.html").is_file()
    print(f"demo report.html: {(demo_dir / 'report.html').stat().st_size} bytes")


def test_embedded_json_equals_csv(demo_dir):
    data = _embedded(demo_dir / "report.html")
    ranking = _csv(demo_dir / "ranking.csv")
    rk = data["ranking"]
    assert rk["model"] == [r["model"] for r in ranking]
    for key in ("rank", "score", "score_low", "score_high", "p_best"):
        assert all(_same(a, _num(r[key])) for a, r in zip(rk[key], ranking)), key
    for x in rk["nuclei"]:
        for stat in ("rmsd", "mad", "r", "n"):
            col = f"{stat}_{x}"
            assert all(_same(a, _num(r[col])) for a, r in zip(rk["metrics"][stat][x], ranking)), col
    assert sum(rk["best_group"]) >= 1
    # residues flagged as a whole: one line each, in the same order as the PDF's flags pages
    whole = [r for r in json.loads((demo_dir / "summary.json").read_text())["residue_summary"]
             if r.get("residue_flag")]
    assert [x.split(":")[0] for x in data["flags"]["residues"]] == \
        [f"{r['comp_id'].capitalize()} {r['seq_id']}" for r in sorted(
            whole, key=lambda r: (r["residue_flag"] != "every", int(r["seq_id"])))]
    assert not any(x in data["flags"]["notes"] for x in data["flags"]["residues"])
    residues = _csv(demo_dir / "residues.csv")
    assert sorted(data["points_models"]) == sorted({r["model"] for r in residues})  # 5 models: all
    points = _decoded_points(data)
    assert len(points) == len(residues)
    for p, r in zip(points, residues):       # same rows, same order
        for c in ("model", "chain", "comp_id", "atom_id", "nucleus"):
            assert p[c] == r[c].strip(), (c, r)
        assert p["flag"] == r["flag"].strip()
        assert p["seq_id"] == int(r["seq_id"])
        for c in ("measured", "predicted", "residual", "z", "offset"):
            assert _same(p[c], _num(r[c])), (c, r)


def test_page_fetches_nothing(demo_dir, tmp_path):
    d = make_outdir(tmp_path / "o")
    summary = json.loads((d / "summary.json").read_text())
    summary["warnings"].append("</script><script>document.title='x'</script> & https://example.invalid/x.js")
    (d / "summary.json").write_text(json.dumps(summary))
    for page in (write_html(d), demo_dir / "report.html"):
        text = page.read_text(encoding="utf-8")
        assert text.count("</script>") == 2          # data cannot close its block early
        code = re.sub(rf'(<script type="application/json" id="{DATA_ID}">).*?(</script>)', r"\1\2",
                      text, flags=re.S)
        assert not re.search(r"https?://", code), "a URL in the page's code"
        for m in re.finditer(r"""\b(?:src|href|action|srcset)\s*=\s*["']?([^"'\s>]*)""", code, re.I):
            assert m.group(1).startswith("#"), m.group(0)
        assert "@import" not in code and not re.search(r"url\((?!#)", code)
        assert not re.search(r"\b(fetch|XMLHttpRequest|WebSocket|EventSource|sendBeacon|importScripts)\b", code)
        assert "default-src 'none'" in code          # Content-Security-Policy forbids loads too
    assert "example.invalid" in json.dumps(_embedded(d / "report.html")["meta"]["warnings"])


def test_size_for_100_models(tmp_path):
    d = make_outdir(tmp_path / "o100", n_models=100)
    page = write_html(d)
    size = page.stat().st_size
    print(f"report.html for 100 synthetic models: {size} bytes")
    assert size < 10 * 1024 * 1024
    data = _embedded(page)
    assert len(data["points_models"]) == 100 and data["summarised"] == []
    assert data["residues"]["n"] == len(_csv(d / "residues.csv"))


def test_many_models_are_summarised(tmp_path):
    d = make_outdir(tmp_path / "o150", n_models=150)
    ranking = _csv(d / "ranking.csv")
    low = ranking[-1]["model"]                       # the worst model, asked for with --show
    data = _embedded(write_html(d, show=(low,), max_point_models=20))
    assert data["ranking"]["model"] == [r["model"] for r in ranking]     # every model ranked
    best20 = [r["model"] for r in sorted(ranking, key=lambda r: float(r["score"]))][:20]
    group = [r["model"] for r, g in zip(ranking, data["ranking"]["best_group"]) if g]
    expected = list(dict.fromkeys(best20 + [m for m in (r["model"] for r in sorted(
        ranking, key=lambda r: float(r["score"]))) if m in group or m == low]))
    assert data["points_models"] == expected
    assert {p["model"] for p in _decoded_points(data)} == set(expected)
    assert len(data["sequence"]["rms_z"]) == len(expected)
    assert data["summarised"] and "of 150 models" in data["summarised"][0]


def test_report_command_redraws_page(tmp_path, capsys):
    d = make_outdir(tmp_path / "o")
    assert main(["report", str(d)]) == 0
    assert "report.html" in capsys.readouterr().out
    page = d / "report.html"
    first = _embedded(page)
    page.unlink()                                     # redrawn from the files alone
    assert _embedded(write_html(d))["ranking"] == first["ranking"]
    assert not list(d.glob(".tmp-report-*"))
    with pytest.raises(InputError, match="residues.csv"):
        (d / "residues.csv").unlink()
        write_html(d)


# ------------------------------------------------------------------------- in a real browser
def _browser():
    sys.path.insert(0, str(Path(__file__).parent))
    from _chromium import Browser, find_chromium

    exe = find_chromium()
    if not exe:
        pytest.skip("browser test skipped: no Chromium (.ci/run installs the Debian package 'chromium')")
    try:
        import websocket  # noqa: F401
    except ImportError:
        pytest.skip("browser test skipped: websocket-client not installed (pip install -e '.[test]')")
    return Browser(exe)


def test_page_in_chromium(demo_dir, tmp_path):
    residues = _csv(demo_dir / "residues.csv")
    models = [r["model"] for r in _csv(demo_dir / "ranking.csv")]
    drawn = {m: sum(1 for r in residues if r["model"] == m and r["measured"].strip() and r["predicted"].strip())
             for m in models}
    with _browser() as b:
        b.open(demo_dir / "report.html")
        assert b.eval("document.body.getAttribute('data-ready')") == "1"
        assert b.errors() == []
        page_uri = (demo_dir / "report.html").resolve().as_uri()
        assert b.requests() == [page_uri], "the page made a network request"
        rows = b.eval("[...document.querySelectorAll('#ranking-table tbody tr')].map(r => r.dataset.model)")
        assert sorted(rows) == sorted(models)
        picked = b.eval("document.getElementById('model-pick').value")
        assert picked == json.loads((demo_dir / "summary.json").read_text())["best_model"]
        count = "document.querySelectorAll('#corr-panels svg.corr .pt').length"
        assert b.eval(count) == drawn[picked]
        other = models[-1]
        b.eval(f"(s => {{ s.value = {json.dumps(other)}; s.dispatchEvent(new Event('change')); }})"
               "(document.getElementById('model-pick'))")
        assert b.eval("document.getElementById('corr-panels').dataset.model") == other
        assert b.eval(count) == drawn[other]
        # hover a flagged point: the tip names residue, atom and the numbers
        tip = b.eval("""(() => { const p = document.querySelector('#corr-panels .pt.flagged');
            const r = p.getBoundingClientRect();
            p.dispatchEvent(new MouseEvent('mousemove', {bubbles: true, clientX: r.x + 2, clientY: r.y + 2}));
            return document.getElementById('tip').textContent; })()""")
        for word in ("measured", "predicted", "residual", "z ", "flagged in"):
            assert word in tip, tip
        # strip rows = models with points; flags table filter narrows the rows
        assert b.eval("document.querySelectorAll('#seq-svg g.strip-row').length") == len(models)
        n_all = b.eval("document.querySelectorAll('#flag-table tbody tr').length")
        n_every = b.eval("""(() => { const s = document.getElementById('flag-class');
            s.value = 'in every model'; s.dispatchEvent(new Event('change'));
            return document.querySelectorAll('#flag-table tbody tr').length; })()""")
        assert 0 < n_every < n_all
        # residues flagged as a whole (summary.json residue_summary): one list item each
        summary = json.loads((demo_dir / "summary.json").read_text())
        whole = [r for r in summary["residue_summary"] if r.get("residue_flag")]
        assert b.eval("document.querySelectorAll('#residue-flags li').length") == len(whole)
        b.eval("(s => { s.value = ''; s.dispatchEvent(new Event('change')); })(document.getElementById('flag-class'))")
        b.eval(f"(s => {{ s.value = {json.dumps(models[0])}; s.dispatchEvent(new Event('change')); }})"
               "(document.getElementById('model-pick'))")
        assert b.errors() == []
        shot = b.screenshot(tmp_path / "report_html.png")
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and shot.stat().st_size > 50_000
    keep = os.environ.get("SHIFTCHECK_SCREENSHOT_DIR")
    if keep:
        shutil.copy(shot, Path(keep) / shot.name)


def test_skipped_models_listed_on_page(tmp_path):
    """Skipped model files (summary.json 'skipped', issue 13) appear in the page data with reason."""
    d = make_outdir(tmp_path / "osk", n_models=3)
    s = json.loads((d / "summary.json").read_text())
    s["skipped"] = [{"file": "/x/broken_model.pdb", "reason": "unreadable coordinates: line 3"}]
    (d / "summary.json").write_text(json.dumps(s))
    data = _embedded(write_html(d))
    assert data["meta"]["skipped"] == [{"file": "broken_model.pdb", "reason": "unreadable coordinates: line 3"}]
