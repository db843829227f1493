"""Shared fixtures. Real-data tests need SHIFTCHECK_REALDATA (public BMRB/PDB files)."""
from __future__ import annotations

import os
from pathlib import Path

import matplotlib
import pytest

matplotlib.use("Agg")

REALDATA_ENV = "SHIFTCHECK_REALDATA"


def realdata_dir() -> Path | None:
    p = os.environ.get(REALDATA_ENV)
    if p and Path(p).is_dir():
        return Path(p)
    return None


@pytest.fixture(scope="session")
def realdata() -> Path:
    """Folder of public BMRB/PDB files; skips the test with a message when absent."""
    d = realdata_dir()
    if d is None:
        pytest.skip(f"real-data test skipped: set {REALDATA_ENV} to the folder of public BMRB/PDB files")
    return d
