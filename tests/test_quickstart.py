"""The README quick start: exactly two commands, both defined in the Makefile, and the output
of the first one (`make demo`, run by .ci/run in a fresh virtual environment of a clean clone)
shows what the demo planted (common practice, no source; the "truth" is shiftcheck/demo/planted.json).

.ci/run exports SHIFTCHECK_QUICKSTART_DEMO=demo_output after running `make demo`; without it
the output checks skip with a message (tests/test_demo.py runs the demo in-process anyway).
"""
from __future__ import annotations

import json
import os
import re
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]


def _quickstart_commands() -> list[str]:
    text = (REPO / "README.md").read_text()
    section = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    return [ln.strip().split("#", 1)[0].strip() for ln in section.splitlines()
            if ln.startswith("    ") and ln.strip()]


def test_readme_quick_start_has_exactly_two_make_commands():
    cmds = _quickstart_commands()
    assert cmds == ["make demo", "make test"], cmds
    makefile = (REPO / "Makefile").read_text()
    for target in ("demo", "test"):
        assert re.search(rf"^{target}:", makefile, re.M), f"Makefile lacks target {target}"
    # the test target runs pytest in the virtual environment it creates
    assert re.search(r"^test:.*\n\t.*pytest", makefile, re.M)
    ci = (REPO / ".ci" / "run").read_text()
    assert "make test" in ci and "SHIFTCHECK_REALDATA" in ci


@pytest.fixture(scope="module")
def demo_out() -> Path:
    p = os.environ.get("SHIFTCHECK_QUICKSTART_DEMO")
    if not p:
        pytest.skip("quick-start output check skipped: .ci/run sets SHIFTCHECK_QUICKSTART_DEMO after `make demo`")
    out = Path(p)
    if not out.is_absolute():
        out = REPO / out
    assert out.is_dir(), f"`make demo` left no output in {out}"
    return out


def _planted() -> dict:
    return json.loads((REPO / "shiftcheck" / "demo" / "planted.json").read_text())


def test_make_demo_output(demo_out):
    planted = _planted()
    summary = json.loads((demo_out / "summary.json").read_text())
    for f in ("ranking.csv", "residues.csv", "summary.json", "report.pdf"):
        assert (demo_out / f).is_file(), f
    # the true fold ranked first
    assert summary["best_model"] == planted["true_model"]
    # the planted misassignment and CA/CB swap flagged in every model
    every: dict[int, set] = {}
    for f in summary["flags"]:
        if f["class"] == "every":
            every.setdefault(int(f["seq_id"]), set()).add(f["atom_id"])
    for seq in planted["misassigned"]["residues"]:
        assert seq in every, f"misassigned residue {seq} not flagged in every model"
    assert {"CA", "CB"} & every.get(planted["ca_cb_swap"]["residue"], set())
    # the 13C referencing offset recovered within 0.3 ppm
    assert abs(summary["offsets"]["C"]["value"] - planted["offset"]["ppm"]) < 0.3
