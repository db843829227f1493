"""The optional compiled kernels (numba, ``shiftcheck[fast]``) against the numpy path, and what loading numba costs.

    SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_kernels.py [--repeat 3]

On the 200-model ensemble of bench_pipeline.py (2k5p written ten times over) times, best of
``--repeat``: contact density (``burial.contact_density``, CB, C and N targets, radii 6/8/10 A)
and the peptide-group anisotropy sums (``anisotropy.anisotropy_features``, H, HA and N
targets), each with ``SHIFTCHECK_NUMBA=0`` and ``=1``, and the largest difference between the
two; then, in a fresh process, ``import numba`` and the first call of each cached kernel (the
fixed price a process pays).
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
from pathlib import Path

from _timing import best_of, realdata_root
from bench_pipeline import ROOT, build_repeated

_LOAD = """
import time; t0 = time.perf_counter(); import numba; t1 = time.perf_counter()
import numpy as np
from shiftcheck.predict import _fast_numba as F
z = np.zeros((1, 2, 3)); i = np.zeros(2, np.int64)
F.contact_density(z, i, z, i, np.ones(3), 1.0, 1, 11.0)
F.axial_dipole(z, i, z, np.zeros((2, 1, 2, 3)), i, 10.0); t2 = time.perf_counter()
print(f"{t1 - t0:.3f} {t2 - t1:.3f}")
"""


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeat", type=int, default=3)
    a = ap.parse_args(argv)
    import numpy as np

    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.anisotropy import anisotropy_features
    from shiftcheck.predict.burial import contact_density
    from shiftcheck.predict.features import find_targets

    with tempfile.TemporaryDirectory(prefix="shiftcheck-bench-") as tmp:
        pdb = Path(tmp) / "ens200.pdb"
        build_repeated(realdata_root() / "this" / "2k5p.pdb", pdb, 10)
        ens = read_models([pdb])[0]
    tg = find_targets(ens)
    cases = {"contact density (CB, C, N)": (contact_density, tg.atom_index[np.isin(tg.nucleus, ["CB", "C", "N"])]),
             "anisotropy (H, HA, N)": (anisotropy_features, tg.atom_index[np.isin(tg.nucleus, ["H", "HA", "N"])])}
    print(f"{ens.n_models} models x {ens.n_atoms} atoms")
    for label, (fn, t) in cases.items():
        res, times = {}, {}
        for flag in ("0", "1"):
            os.environ["SHIFTCHECK_NUMBA"] = flag
            res[flag] = fn(ens, t)
            times[flag] = best_of(lambda: fn(ens, t), a.repeat)
        diff = max(float(np.max(np.abs(res["0"][k] - res["1"][k]))) for k in res["0"])
        print(f"  {label:<28} numpy {times['0']:.3f} s  numba {times['1']:.3f} s  "
              f"= {times['0'] / times['1']:.1f} x   max |diff| {diff:.1e}")
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    loads = [subprocess.run([sys.executable, "-c", _LOAD], env=env, check=True, capture_output=True,
                            text=True).stdout.split() for _ in range(a.repeat)]
    imp = min(float(x[0]) for x in loads)
    first = min(float(x[1]) for x in loads)
    print(f"  fresh process: import numba {imp:.3f} s, first call of the cached kernels {first:.3f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
