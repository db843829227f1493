"""Predictions per second for 1D3Z (10 models) and 2KRK (20 models).

Usage: SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_predict.py
Counts one prediction per (model, atom); the time covers feature building (torsions, ring
currents, hydrogen bonds) and the linear model, not file reading.
"""
import os
import sys
import time
from pathlib import Path

from shiftcheck.io.coords import read_models
from shiftcheck.predict.model import Predictor

d = Path(os.environ.get("SHIFTCHECK_REALDATA", "../shared/realdata"))
if not d.is_dir():
    sys.exit("set SHIFTCHECK_REALDATA")
for rm in ("haigh-mallion", "johnson-bovey", "point-dipole"):
    pr = Predictor(ring_model=rm)
    for f in ("ubiquitin/1D3Z.pdb", "hr3102a/2KRK.pdb"):
        ens = read_models([str(d / f)])[0]
        pr.predict(ens)  # warm up
        best = float("inf")
        for _ in range(5):
            t = time.perf_counter()
            p = pr.predict(ens)
            best = min(best, time.perf_counter() - t)
        n = p.values.size
        print(f"{rm:14s} {Path(f).name:10s} models {ens.n_models:3d} atoms {len(p):5d} "
              f"predictions {n:7d}  {best * 1e3:7.1f} ms  {n / best:,.0f} predictions/s")
