"""The column-wise writers of shiftcheck/report/tables.py (and _csv_bytes.py) against the reference they replace:
Python's own ``repr(round(x, nd))`` (the row-wise writer's number format) and the standard
library's csv module writing residue_rows() row by row (docs/outputs.md: residues.csv)."""
from pathlib import Path

import numpy as np
import pytest

from shiftcheck.pipeline import score_files
from shiftcheck.report import tables
from shiftcheck.report._csv_bytes import _text

DEMO = Path(tables.__file__).resolve().parents[1] / "demo"


def _python(values, nd):
    return ["" if not np.isfinite(v) else repr(round(v, nd)) for v in np.asarray(values, float).tolist()]


@pytest.mark.parametrize("nd", [3, 4])
def test_fixed_format_equals_python_round_repr(nd):
    rng = np.random.default_rng(7)
    edge = [0.0, -0.0, np.nan, np.inf, -np.inf, 1e-4, -1e-4, 5e-5, -5e-5, 4.9999e-4, 0.99995, -9.99995,
            99999.99995, 1e5, -1e5, 3e7, 1e20, -1e-300, 123456789.123456, 2.5e-4, 0.00015, 0.00025, 0.0005]
    cases = [rng.normal(0, 30, 20000), rng.normal(0, 1e-3, 5000), rng.uniform(-2e5, 2e5, 5000),
             np.round(rng.normal(0, 5, 5000), nd) + 0.5 * 10.0 ** -nd,   # values next to a half
             np.round(rng.normal(0, 5, 5000), nd), np.array(edge), np.zeros(0)]
    for values in cases:
        assert _text(values, nd) == _python(values, nd)


def test_residues_csv_equals_rowwise_csv_module():
    shifts = DEMO / "kfpa_shifts.str"
    models = sorted(str(p) for p in DEMO.glob("kfpa_model*"))
    res = score_files(str(shifts), models, n_boot=20, seed=1, jobs=1)
    fast = b"".join(tables._residues_bytes(res, block=2)).decode("utf-8")
    assert fast == tables._csv(tables.residue_rows(res), tables.RESIDUE_COLUMNS)
    assert fast.count("\n") == 1 + len(res.comparison.entries) * len(res.comparison)
