"""Through-space feature speed: ring currents (3 models), hydrogen bonds, anisotropy (best of 3).

Usage::

    SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_physics.py

Targets are every proton plus N, CA, CB, C of the chain, in all models of the file at once
(models read with hydrogens built). Prints seconds per call and targets x models per second.
"""
from __future__ import annotations

import numpy as np
from _timing import best_of, realdata_root

FILES = [("ubiquitin", "1D3Z.pdb"), ("hr3102a", "2KRK.pdb"), ("ci2", "3CI2.pdb")]


def main() -> int:
    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.anisotropy import anisotropy_features
    from shiftcheck.predict.hbond import hbond_features
    from shiftcheck.predict.ringcurrent import RING_MODELS, ring_current_factors

    root = realdata_root()
    print(f"{'file':10s} {'models':>6s} {'atoms':>6s} {'targets':>7s} {'term':>14s} {'s/call':>8s} {'targets*models/s':>17s}")
    for folder, name in FILES:
        ens = read_models(root / folder / name)[0]
        names = ens.atom_name.astype(str)
        t = np.flatnonzero(np.char.startswith(names, "H") | np.isin(names, ["N", "CA", "CB", "C"]))
        jobs = [(m, lambda m=m: ring_current_factors(ens, t, model=m)) for m in RING_MODELS]
        jobs += [("hbond", lambda: hbond_features(ens, t)), ("anisotropy", lambda: anisotropy_features(ens, t))]
        total = 0.0
        for label, fn in jobs:
            s = best_of(fn)
            total += s
            print(f"{name:10s} {ens.n_models:6d} {ens.n_atoms:6d} {t.size:7d} {label:>14s} {s:8.3f} {t.size * ens.n_models / s:17.3g}")
        print(f"{name:10s} {'':6s} {'':6s} {'':7s} {'all five':>14s} {total:8.3f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
