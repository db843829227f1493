"""shiftcheck: check candidate protein structures against assigned NMR chemical shifts.

Stages (each usable alone): read -> map -> predict -> score -> report.

    >>> import shiftcheck as sc                                   # doctest: +SKIP
    >>> shifts = sc.read_shifts("entry.str")                      # doctest: +SKIP
    >>> models = sc.read_models(["model1.pdb", "model2.cif"])     # doctest: +SKIP

Agreement with chemical shifts supports a structure but does not prove it.
"""
from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "read_shifts", "read_models", "map_sequence", "predict", "score",
           "write_report"]

_LAZY = {
    "read_shifts": ("shiftcheck.io.shifts", "read_shifts"),
    "read_models": ("shiftcheck.io.coords", "read_models"),
    "map_sequence": ("shiftcheck.structure.mapping", "map_sequence"),
    "predict": ("shiftcheck.predict.model", "predict"),
    "score": ("shiftcheck.score.scoring", "score"),
    "write_report": ("shiftcheck.report.pdf", "write_report"),
}


def __getattr__(name):  # lazy public API keeps `import shiftcheck` and `--help` fast
    if name in _LAZY:
        import importlib

        mod, attr = _LAZY[name]
        return getattr(importlib.import_module(mod), attr)
    raise AttributeError(name)
