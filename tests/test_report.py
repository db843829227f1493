"""report.pdf, plots/ and `shiftcheck report`: page count, text, pixel sizes, error paths.

Inputs are SYNTHETIC output directories (tests/_synthetic_outdir.py) except the real-data test
at the end, which runs `shiftcheck score` + `shiftcheck report` on public BMRB/PDB files.
A4 = 210 x 297 mm (ISO 216); 150 dpi is the issue's minimum resolution.
"""
from __future__ import annotations

import json
import shutil
import subprocess
import sys

import pytest
from PIL import Image
from pypdf import PdfReader

from _synthetic_outdir import OFFSETS, make_outdir
from shiftcheck.cli import main
from shiftcheck.report.pdf import write_report

A4_LANDSCAPE_PX = (int(11.69 * 150), int(8.27 * 150))   # ISO 216 A4 at 150 dpi
A4_PORTRAIT_PX = A4_LANDSCAPE_PX[::-1]


@pytest.fixture(scope="module")
def rendered(tmp_path_factory):
    d = make_outdir(tmp_path_factory.mktemp("rep") / "out")
    written = write_report(d, formats=("png", "svg"), show=("beta.cif#2",))
    return d, written


def _pdf_text(path):
    reader = PdfReader(str(path))
    return reader, "\n".join(p.extract_text() or "" for p in reader.pages)


def test_pdf_pages_and_text(rendered):
    d, written = rendered
    assert written[0] == d / "report.pdf"
    reader, text = _pdf_text(d / "report.pdf")
    # title, ranking, 2 correlation pages (best + --show), sequence, referencing, 1 flags page
    assert len(reader.pages) == 7
    for m in ("alpha.pdb", "beta.cif#1", "beta.cif#2", "beta.cif#mean"):
        assert m in text
    for kind in ("H", "C", "N"):
        assert f"{OFFSETS[kind]['value']:+.2f} ppm" in text
    assert "supports a structure but does not prove it" in text
    assert "abababababab" in text          # shortened sha256 of the shift file
    # A4 pages (points: 595 x 842)
    for p in reader.pages:
        w, h = sorted((float(p.mediabox.width), float(p.mediabox.height)))
        assert abs(w - 595.4) < 2 and abs(h - 841.7) < 2


def test_png_and_svg_files(rendered):
    d, written = rendered
    plots = d / "plots"
    expected = {"ranking", "correlation_alpha.pdb", "correlation_beta.cif_2", "sequence",
                "referencing", "flags_1"}
    assert {p.stem for p in plots.glob("*.png")} == expected
    assert {p.stem for p in plots.glob("*.svg")} == expected
    for p in plots.glob("*.png"):
        size = Image.open(p).size
        assert size == (A4_PORTRAIT_PX if p.stem.startswith("flags") else A4_LANDSCAPE_PX), p.name
    assert not list(d.rglob(".tmp-report-*"))          # temporaries renamed away


def test_redraw_removes_stale_own_plots_only(tmp_path):
    d = make_outdir(tmp_path / "out")
    write_report(d, show=("beta.cif#2",))
    (d / "plots" / "mine.png").write_bytes(b"x")
    write_report(d)
    names = {p.name for p in (d / "plots").iterdir()}
    assert "correlation_beta.cif_2.png" not in names and "mine.png" in names


def test_tolerates_missing_optional_keys(tmp_path):
    d = make_outdir(tmp_path / "out", drop_keys=("secondary_structure", "offsets", "flags", "inputs",
                                                 "mapping", "expected_error", "data_checks",
                                                 "best_model", "ranking", "parameters"))
    written = write_report(d)
    reader, text = _pdf_text(written[0])
    assert len(reader.pages) == 6          # one correlation page
    assert "secondary structure not in summary.json" in text
    assert "summary.json has no 'offsets'" in text


def test_cli_report(tmp_path, capsys):
    d = make_outdir(tmp_path / "out")
    assert main(["report", str(d), "--plots", "svg", "--show", "beta.cif#1"]) == 0
    assert "report.pdf" in capsys.readouterr().out
    assert (d / "plots" / "correlation_beta.cif_1.svg").is_file()


def _one_line_error(capsys):
    err = capsys.readouterr().err.strip()
    assert err.startswith("shiftcheck: error:") and "\n" not in err
    return err


@pytest.mark.parametrize("case", ["missing_dir", "no_summary", "bad_json", "bad_column",
                                  "bad_number", "unknown_show", "bad_format"])
def test_cli_errors_exit_2_one_line(tmp_path, capsys, case):
    d = make_outdir(tmp_path / "out")
    args = ["report", str(d)]
    want = None
    if case == "missing_dir":
        args = ["report", str(tmp_path / "nowhere")]
        want = "nowhere"
    elif case == "no_summary":
        (d / "summary.json").unlink()
        want = "summary.json"
    elif case == "bad_json":
        (d / "summary.json").write_text("{ not json")
        want = "summary.json:1"
    elif case == "bad_column":
        text = (d / "ranking.csv").read_text().replace("score_low", "lowscore", 1)
        (d / "ranking.csv").write_text(text)
        want = "ranking.csv:1"
    elif case == "bad_number":
        lines = (d / "residues.csv").read_text().splitlines()
        parts = lines[3].split(",")
        parts[5] = "abc"
        lines[3] = ",".join(parts)
        (d / "residues.csv").write_text("\n".join(lines) + "\n")
        want = "residues.csv:4"
    elif case == "unknown_show":
        args += ["--show", "gamma.pdb"]
        want = "gamma.pdb"
    elif case == "bad_format":
        args += ["--plots", "png,jpg"]
        want = "jpg"
    assert main(args) == 2
    assert want in _one_line_error(capsys)
    assert not (d / "report.pdf").exists()


# ---------------------------------------------------------------------------- real data
# Representative subset (time): ubiquitin (BMRB 17769 against NMR ensemble 1D3Z and X-ray 1UBQ)
# and hr3102a (BMRB table of PDB 2KRK against NMR ensemble 2KRK and X-ray 3KW6).
REAL_SUBSET = {"ubiquitin": ("bmr17769.str", ("1D3Z.pdb", "1ubq.pdb")),
               "hr3102a": ("2krk_shifts.str", ("2KRK.pdb", "3KW6.pdb"))}


@pytest.mark.realdata
@pytest.mark.parametrize("folder", sorted(REAL_SUBSET))
def test_realdata_score_then_report(realdata, tmp_path, folder):
    shifts, models = REAL_SUBSET[folder]
    out = tmp_path / folder
    cmd = [sys.executable, "-m", "shiftcheck", "score", str(realdata / folder / shifts),
           *[str(realdata / folder / m) for m in models], "-o", str(out), "--quiet"]
    proc = subprocess.run(cmd, capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    if not (out / "report.pdf").exists():        # score may be run with the report disabled
        assert main(["report", str(out)]) == 0
    else:
        shutil.rmtree(out / "plots")
        (out / "report.pdf").unlink()
        assert main(["report", str(out)]) == 0
    reader, text = _pdf_text(out / "report.pdf")
    assert len(reader.pages) >= 6
    summary = json.loads((out / "summary.json").read_text())
    assert str(summary.get("best_model", "")) in text
    for stem in ("ranking", "sequence", "referencing", "flags_1"):
        assert (out / "plots" / f"{stem}.png").is_file()
    assert list((out / "plots").glob("correlation_*.png"))
