"""Reading speed: atoms per second for PDB 1D3Z and 2KRK (best of 3 runs).

Usage::

    SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_read.py

Reports three figures per file: gemmi's parse alone (for reference), shiftcheck's
``read_models(..., build_hydrogens=False)`` (parse + chain/altloc/name handling + the
(models, atoms, 3) stack) and ``read_models(...)`` with hydrogen building. Atoms counted are the
atom sites in the file (all models), so the figures compare with other readers' atoms/s.
"""
from __future__ import annotations

import sys

from _timing import best_of, realdata_root

FILES = [("ubiquitin", "1D3Z.pdb"), ("hr3102a", "2KRK.pdb")]


def main() -> int:
    import gemmi

    from shiftcheck.io.coords import read_models

    root = realdata_root()
    print(f"{'file':10s} {'models':>6s} {'atoms':>8s} {'gemmi parse':>14s} {'read_models':>14s} {'+ hydrogens':>14s}")
    for folder, name in FILES:
        path = root / folder / name
        st = gemmi.read_structure(str(path))
        n_atoms = sum(m.count_atom_sites() for m in st)
        t_parse = best_of(lambda: gemmi.read_structure(str(path)))
        t_read = best_of(lambda: read_models(path, build_hydrogens=False))
        t_h = best_of(lambda: read_models(path))
        print(f"{name:10s} {len(st):6d} {n_atoms:8d} " + " ".join(
            f"{n_atoms / t / 1e3:9.0f} k/s" for t in (t_parse, t_read, t_h)))
    return 0


if __name__ == "__main__":
    sys.exit(main())
