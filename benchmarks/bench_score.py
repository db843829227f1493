"""Speed of the whole scoring job on many models: read, predict, score (no report).

    SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_score.py [--decoys 500]

Makes N torsion-perturbed decoys of ubiquitin 1UBQ (tools/make_decoys.py, one (N, atoms, 3)
stack), then times prediction and scoring of all of them against BMRB 17769 with 200 bootstrap
replicates, and a 1000-replicate run on the 10-model NMR ensemble 1D3Z. Prints models per second.
"""
from __future__ import annotations

import argparse
import importlib.util
import sys
import time
from pathlib import Path

from _timing import realdata_root

ROOT = Path(__file__).resolve().parents[1]


def _tool(name):
    spec = importlib.util.spec_from_file_location(name, ROOT / "tools" / f"{name}.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--decoys", type=int, default=500)
    a = ap.parse_args(argv)
    data = realdata_root()
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.predict.model import Predictor
    from shiftcheck.pipeline import score_models
    from shiftcheck.score.scoring import score
    from shiftcheck.structure.mapping import map_sequence

    shifts = read_shifts(data / "ubiquitin" / "bmr17769.str")
    native = read_models([data / "ubiquitin" / "1ubq.pdb"])[0]
    decoys, _, _ = _tool("make_decoys").make_decoys(native, n=a.decoys, seed=1, pool=4)
    print(f"{decoys.n_models} decoys x {decoys.n_atoms} atoms")
    pred = Predictor()
    t0 = time.perf_counter()
    p = pred.predict(decoys)
    t1 = time.perf_counter()
    score(shifts, [decoys], [map_sequence(shifts, decoys)], [p], n_boot=200, seed=1)
    t2 = time.perf_counter()
    print(f"predict: {t1 - t0:.2f} s ({decoys.n_models / (t1 - t0):.0f} models/s); "
          f"score (200 bootstrap): {t2 - t1:.2f} s ({decoys.n_models / (t2 - t1):.0f} models/s)")
    t0 = time.perf_counter()
    ens = read_models([data / "ubiquitin" / "1D3Z.pdb"])
    res = score_models(shifts, ens, n_boot=1000, seed=1)
    t1 = time.perf_counter()
    print(f"1D3Z (10 models) read + predict + score (1000 bootstrap): {t1 - t0:.2f} s; best {res.best_model}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
