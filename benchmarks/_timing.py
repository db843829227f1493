"""Shared pieces of the benchmark scripts: the public-data folder and best-of-n timing."""
from __future__ import annotations

import os
import sys
import time
from pathlib import Path

__all__ = ["best_of", "realdata_root"]


def best_of(fn, n: int = 3) -> float:
    """Shortest wall time of ``n`` calls of ``fn()`` in seconds."""
    times = []
    for _ in range(n):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def realdata_root() -> Path:
    """$SHIFTCHECK_REALDATA (default ../shared/realdata); exits with a message if absent."""
    root = Path(os.environ.get("SHIFTCHECK_REALDATA", "../shared/realdata"))
    if not root.is_dir():
        sys.exit(f"set SHIFTCHECK_REALDATA to the folder of public BMRB/PDB files (tried {root})")
    return root
