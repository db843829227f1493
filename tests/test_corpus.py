"""Corpus test (issue 13, item 5): every shift and coordinate file under ../shared/realdata
(public BMRB/PDB/NEF files and server models, as served), through ``inspect``, ``predict`` and
``score``. Each run either succeeds or is refused with exit code 2 and one line giving one of
the reasons documented in docs/faq.md ("What shiftcheck refuses"). Nothing else may escape.

Speed: in-process calls of the CLI; ``score`` runs each shift file against the models of its
own folder with --no-report and 10 bootstrap replicates; a coordinate file that a successful
``score`` read (listed in its summary.json inputs) has been read and predicted there, the others
go through ``predict``."""
import json
import os
import re
from collections import defaultdict

from shiftcheck.cli import main

SHIFT_SUFFIXES = (".str", ".str21", ".nef", ".str.gz")
COORD_SUFFIXES = (".pdb", ".cif", ".pdb.gz", ".cif.gz", ".ent")

#: Refusal reasons documented in docs/faq.md, "What shiftcheck refuses".
DOCUMENTED = [
    r"no assigned chemical shift loop found",       # e.g. a NEF file (its own reader: nef_chemical_shift)
    r"shifts are of another protein\?",
    r"no model left to score",
    r"no protein residues",
    r"no atom is common to the shift list",
]


def _files(root):
    shifts, coords = [], []
    for p in sorted(root.rglob("*")):
        if not p.is_file():
            continue
        name = p.name.lower()
        if name.endswith(SHIFT_SUFFIXES):
            shifts.append(p)
        elif name.endswith(COORD_SUFFIXES):
            coords.append(p)
    return shifts, coords


def _ok_or_documented(code, err, what):
    assert "Traceback" not in err, what
    if code == 0:
        return True
    lines = [ln for ln in err.strip().splitlines() if not ln.startswith("shiftcheck: warning:")]
    assert code == 2 and len(lines) == 1 and lines[0].startswith("shiftcheck: error:"), (what, err[-500:])
    assert any(re.search(r, lines[0]) for r in DOCUMENTED), (what, lines[0])
    return False


def test_every_file_is_read_predicted_scored_or_refused_with_a_reason(realdata, tmp_path, capsys):
    shifts, coords = _files(realdata)
    assert len(shifts) >= 40 and len(coords) >= 140
    by_dir = defaultdict(list)
    for c in coords:
        by_dir[c.parent].append(str(c))
    outcome = defaultdict(int)
    scored = set()          # coordinate files read and predicted inside a successful ``score``
    for s in shifts:
        code = main(["inspect", str(s)])
        outcome["inspect", _ok_or_documented(code, capsys.readouterr().err, s)] += 1
        models = by_dir.get(s.parent)
        if not models:
            continue
        out = tmp_path / f"score_{s.parent.name}_{s.name}"
        code = main(["score", str(s), *models, "-o", str(out), "--no-report", "--quiet",
                     "--bootstrap", "10"])
        ok = _ok_or_documented(code, capsys.readouterr().err, s)
        outcome["score", ok] += 1
        assert ok == (out / "summary.json").is_file()
        if ok:
            summary = json.loads((out / "summary.json").read_text())
            scored.update(os.path.realpath(p) for m in summary["inputs"]["models"] for p in m["paths"])
    # the rest (files of folders without a usable list, files a score skipped) through ``predict``
    for c in coords:
        if os.path.realpath(c) in scored:
            outcome["predict", True] += 1
            continue
        code = main(["predict", str(c), "-o", str(tmp_path / "pred.csv")])
        outcome["predict", _ok_or_documented(code, capsys.readouterr().err, c)] += 1
    # every coordinate file is predicted, and the STAR shift files (all readable) score
    assert outcome["predict", False] == 0
    n_star = sum(1 for s in shifts if not s.name.endswith(".nef"))
    assert outcome["inspect", True] >= n_star
    n_star_scored = sum(1 for s in shifts if not s.name.endswith(".nef") and by_dir.get(s.parent))
    assert outcome["score", True] >= n_star_scored, dict(outcome)
