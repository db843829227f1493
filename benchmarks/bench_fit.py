"""Calibration and shift-file reading speed.

Usage::

    SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_fit.py [--repeat 3]

Two figures: ``calibrate`` (shiftcheck.predict.calibrate: every nucleus class and ring model,
ridge strength by leave-one-protein-out CV, expected errors) on the featurised realdata pairs of
tools/realdata_pairs.tsv (features loaded from the cache that tools/realdata_pairs.py keeps, so
only the fit is timed; the first run fills the cache), and ``read_shifts`` (best of n) on the
largest NMR-STAR 3.1 and 2.1 files of the set, in rows per second.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

from _timing import best_of, realdata_root

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tools"))


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    a = ap.parse_args()
    root = realdata_root()

    import realdata_pairs as rp

    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.predict.calibrate import calibrate

    t = time.perf_counter()
    ds = rp.load(rp.pairs(root))
    print(f"features of {len(ds)} pairs loaded in {time.perf_counter() - t:.1f} s")
    t_fit = best_of(lambda: calibrate(ds, description="benchmark"), a.repeat)
    print(f"calibrate: {t_fit:.2f} s (best of {a.repeat})")
    files = sorted((p for p in root.rglob("*.str") if p.is_file()), key=lambda p: p.stat().st_size)[-3:]
    for p in files + [root / "yppr" / "16570_v2.str"]:
        if not p.is_file():
            continue
        n = len(read_shifts(p))
        dt = best_of(lambda: read_shifts(p), a.repeat)
        print(f"read_shifts {p.relative_to(root)} ({p.stat().st_size / 1e6:.1f} MB): {n} rows in "
              f"{dt * 1e3:.0f} ms, {n / dt / 1e3:.0f} k rows/s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
