"""``shifts_corrected.str``: written when an offset is applied, valid NMR-STAR, and round-trips.

Sources: the NMR-STAR 3.1 dictionary as shipped with pynmrstar (``Entry.validate``, the BMRB's
schema); the demo's planted 13C offset (invented data, demo only: shiftcheck/demo/planted.json);
the round-trip property itself (re-scoring the corrected list must find no offset to apply).
"""
from __future__ import annotations

import json
import re

import pynmrstar
import pytest

from shiftcheck.cli import main
from shiftcheck.commands.demo import demo_inputs
from shiftcheck.io.shift_formats import read_shifts
from shiftcheck.report.corrected_star import CORRECTION_TYPE, FILE_NAME


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo") / "out"
    assert main(["demo", "-o", str(out), "--no-report", "--quiet"]) == 0
    return out


def test_written_and_valid_nmr_star(demo_run):
    path = demo_run / FILE_NAME
    assert path.is_file()
    entry = pynmrstar.Entry.from_file(str(path))
    assert entry.validate() == []                         # every tag is in the NMR-STAR dictionary
    summary = json.loads((demo_run / "summary.json").read_text())
    c = summary["offsets"]["C"]
    assert c["applied"] and not summary["offsets"]["N"]["applied"]
    ref = entry.get_loops_by_category("_Chem_shift_ref")[0]
    rows = ref.get_tag(["Atom_type", "Ref_correction_type", "Correction_val"])
    # the file holds the correction (minus the offset) to 3 decimals; summary.json rounds the offset
    # itself to 4, so the two can differ by one in the last place of the file's value
    assert [r[:2] for r in rows] == [["C", CORRECTION_TYPE]]
    assert len(rows[0][2].split(".")[1]) == 3
    assert abs(float(rows[0][2]) + c["value"]) <= 0.0005 + 1e-4
    details = entry.get_tag("_Chem_shift_reference.Details")[0]
    # the details state the offset and its interval to 3 decimals (summary.json: 4, so compare
    # numbers, not strings, allowing for the two roundings)
    m = re.search(r"13C offset ([+-][\d.]+) ppm \(95% ([+-][\d.]+) to ([+-][\d.]+), n=(\d+)\)", details)
    assert m, details
    for got, key in zip(m.groups()[:3], ("value", "low", "high")):
        assert abs(float(got) - c[key]) <= 0.0005 + 1e-4
    assert int(m.group(4)) == c["n"]


def test_corrected_values_and_originals(demo_run):
    with demo_inputs() as (shift_file, _, planted):
        original = read_shifts(shift_file)
    summary = json.loads((demo_run / "summary.json").read_text())
    # the offset the file subtracted: its own Correction_val (3 decimals, = −offset), which
    # agrees with summary.json's 4-decimal offset to the rounding
    ref = pynmrstar.Entry.from_file(str(demo_run / FILE_NAME)).get_loops_by_category("_Chem_shift_ref")[0]
    offset = -float(ref.get_tag("Correction_val")[0])
    assert abs(offset - summary["offsets"]["C"]["value"]) <= 0.0005 + 1e-4
    # the recovered offset is the planted one (within its own interval)
    assert summary["offsets"]["C"]["low"] <= planted["offset"]["ppm"] <= summary["offsets"]["C"]["high"]
    back = read_shifts(demo_run / FILE_NAME)
    assert len(back) == len(original)
    orig = {(int(s), str(a)): (float(v), str(t)) for s, a, v, t in
            zip(original.auth_seq_id, original.atom_id, original.value, original.atom_type)}
    got = {(int(s), str(a)): float(v) for s, a, v in zip(back.auth_seq_id, back.atom_id, back.value)}
    assert got.keys() == orig.keys()
    for k, (v, typ) in orig.items():
        want = v - offset if typ == "C" else v
        assert abs(got[k] - want) < 6e-4, k
    assert back.conditions == original.conditions
    assert back.one_letter == original.one_letter
    # the original value of each corrected row is kept in _Atom_chem_shift.Details
    entry = pynmrstar.Entry.from_file(str(demo_run / FILE_NAME))
    loop = entry.get_loops_by_category("_Atom_chem_shift")[0]
    n_c = 0
    for auth, atom, typ, val, det in loop.get_tag(["Auth_seq_ID", "Atom_ID", "Atom_type", "Val", "Details"]):
        if typ != "C":
            assert det == "."
            continue
        n_c += 1
        m = re.fullmatch(r"original Val (-?[\d.]+) ppm; 13C correction ([+-][\d.]+) ppm", det)
        assert m, det
        assert abs(float(m.group(1)) - orig[(int(auth), atom)][0]) < 6e-4
        assert abs(float(val) - float(m.group(1)) - float(m.group(2))) < 1e-9
    assert n_c == sum(1 for _, t in orig.values() if t == "C") > 100


def test_rescoring_the_corrected_list_finds_no_offset(demo_run, tmp_path):
    with demo_inputs() as (_, models, _):
        out = tmp_path / "again"
        assert main(["score", str(demo_run / FILE_NAME), *map(str, models), "-o", str(out),
                     "--no-report", "--quiet"]) == 0
    again = json.loads((out / "summary.json").read_text())
    first = json.loads((demo_run / "summary.json").read_text())
    assert not any(o["applied"] for o in again["offsets"].values())
    c = again["offsets"]["C"]
    assert abs(c["value"]) < 0.01 and c["low"] <= 0 <= c["high"]
    assert not (out / FILE_NAME).exists()                 # nothing applied, nothing written
    assert [r["model"] for r in again["ranking"]] == [r["model"] for r in first["ranking"]]
    for a, b in zip(again["ranking"], first["ranking"]):
        assert abs(a["score"] - b["score"]) < 2e-3
