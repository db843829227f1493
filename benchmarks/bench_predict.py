"""Predictions per second for 1D3Z (10 models) and 2KRK (20 models).

Usage: SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_predict.py
Counts one prediction per (model, atom); the time covers feature building (torsions, ring
currents, hydrogen bonds, anisotropy, packing density) and the linear model, not file reading.
"""
from __future__ import annotations

from pathlib import Path

from _timing import best_of, realdata_root

from shiftcheck.io.coords import read_models
from shiftcheck.predict.model import Predictor


def main() -> int:
    d = realdata_root()
    for rm in ("haigh-mallion", "johnson-bovey", "point-dipole"):
        pr = Predictor(ring_model=rm)
        for f in ("ubiquitin/1D3Z.pdb", "hr3102a/2KRK.pdb"):
            ens = read_models([str(d / f)])[0]
            p = pr.predict(ens)  # warm up
            best = best_of(lambda: pr.predict(ens), n=5)
            n = p.values.size
            print(f"{rm:14s} {Path(f).name:10s} models {ens.n_models:3d} atoms {len(p):5d} "
                  f"predictions {n:7d}  {best * 1e3:7.1f} ms  {n / best:,.0f} predictions/s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
