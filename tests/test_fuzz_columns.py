"""Property-based robustness of the tolerant readers (issue 13, item 5).

* Single PDB columns corrupted (charge 79-80, element 77-78, occupancy 55-60: no geometry;
  chain 22 and residue number 23-26: identity): the model still reads with the same
  coordinates when only geometry-free columns are hit, and in every case a clean model given
  alongside is still scored - nothing but a one-line ShiftcheckError / skip escapes.
* STAR headers corrupted (data_ line removed or replaced, preamble text, BOM, save_ line
  removed): the list reads with all its shifts, or a one-line ShiftcheckError.

Bases: ../shared/realdata/ubiquitin/1ubq.pdb (PDB 1UBQ) and bmr17769.str (BMRB 17769)."""
from __future__ import annotations

import numpy as np
import pytest
from conftest import realdata_dir
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from shiftcheck.errors import ShiftcheckError

RD = realdata_dir()
pytestmark = pytest.mark.skipif(RD is None, reason="needs SHIFTCHECK_REALDATA")

COLUMNS = {"charge": (78, 80), "element": (76, 78), "occupancy": (54, 60), "chain": (21, 22),
           "resnum": (22, 26)}
GEOMETRY_FREE = ("charge", "element", "occupancy")
JUNK = st.text(alphabet="0123456789ABCXYZxyz+-.*# ", min_size=1, max_size=6)


def _atoms():
    return [ln.ljust(80) for ln in (RD / "ubiquitin" / "1ubq.pdb").read_text().splitlines()
            if ln.startswith(("ATOM", "HETATM"))]


@pytest.fixture(scope="module")
def shifts():
    from shiftcheck.io.shift_formats import read_shifts

    return read_shifts(RD / "ubiquitin" / "bmr17769.str")


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(column=st.sampled_from(sorted(COLUMNS)), junk=JUNK, frac=st.floats(0.01, 1.0),
       seed=st.integers(0, 2 ** 16))
def test_corrupted_column(tmp_path_factory, shifts, column, junk, frac, seed):
    from shiftcheck.isolation import map_models_tolerant, read_models_tolerant
    from shiftcheck.pipeline import score_models

    rng = np.random.default_rng(seed)
    lines = _atoms()
    a, b = COLUMNS[column]
    hit = rng.random(len(lines)) < frac
    field = junk[: b - a].rjust(b - a)
    bad = [ln[:a] + field + ln[b:] if h else ln for ln, h in zip(lines, hit)]
    d = tmp_path_factory.mktemp("col")
    (d / "bad.pdb").write_text("\n".join(bad) + "\nEND\n")
    try:
        ens, skipped = read_models_tolerant([d / "bad.pdb", RD / "ubiquitin" / "1ubq.pdb"],
                                            build_hydrogens=False)
    except ShiftcheckError as exc:       # not expected: the tolerant reader skips instead
        pytest.fail(f"escaped: {exc}")
    assert all("\n" not in s.reason for s in skipped)
    names = [e.name for e in ens]
    assert "1ubq.pdb" in names
    if column in GEOMETRY_FREE:           # repaired, never skipped, coordinates unchanged
        assert "bad.pdb" in names
        e = ens[names.index("bad.pdb")]
        raw = np.array([[float(ln[30:38]), float(ln[38:46]), float(ln[46:54])] for ln in lines
                        if ln.startswith("ATOM")])
        got = e.coords[0]
        assert got.shape[0] <= raw.shape[0]
        assert np.isin(np.round(got[:, 0], 3), np.round(raw[:, 0], 3)).all()
    ens, maps, more = map_models_tolerant(shifts, ens)
    res = score_models(shifts, ens, mappings=maps, n_boot=5, include_mean=False)
    assert "1ubq.pdb" in [x.name for x in res.comparison.entries]
    assert np.isfinite(res.ranking.score).all()


def _star():
    return (RD / "ubiquitin" / "bmr17769.str").read_text()


HEADER_OPS = ["drop_data", "preamble", "bom", "junk_data", "drop_first_save"]


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(ops=st.lists(st.sampled_from(HEADER_OPS), min_size=1, max_size=3, unique=True),
       text=st.text(alphabet="abcXYZ019 :;_-#'\"", min_size=1, max_size=30))
def test_corrupted_star_header(tmp_path_factory, ops, text):
    from shiftcheck.io.shift_formats import read_shifts

    src = _star()
    n_ref = len(read_shifts(RD / "ubiquitin" / "bmr17769.str"))
    lines = src.split("\n")
    i_data = next(i for i, ln in enumerate(lines) if ln.startswith("data_"))
    if "junk_data" in ops:
        lines[i_data] = "data_" + "".join(c for c in text if not c.isspace()) or "data_x"
    if "drop_data" in ops:
        lines[i_data] = ""
    if "drop_first_save" in ops:
        k = next(i for i, ln in enumerate(lines) if ln.strip().startswith("save_"))
        lines[k] = ""
    if "preamble" in ops:
        lines.insert(0, text.replace("\n", " "))
    data = "\n".join(lines).encode()
    if "bom" in ops:
        data = b"\xef\xbb\xbf" + data
    p = tmp_path_factory.mktemp("star") / "s.str"
    p.write_bytes(data)
    try:
        sl = read_shifts(p)
    except ShiftcheckError as exc:
        assert "\n" not in str(exc)
        assert "drop_first_save" in ops or "junk_data" in ops or "preamble" in ops
        return
    assert len(sl) == n_ref
