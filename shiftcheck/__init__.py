"""shiftcheck: check candidate protein structures against assigned NMR chemical shifts.

Stages (each usable alone): read -> map -> predict -> score -> report.

    >>> import shiftcheck as sc                                   # doctest: +SKIP
    >>> shifts = sc.read_shifts("entry.str")                      # doctest: +SKIP
    >>> models = sc.read_models(["model1.pdb", "model2.cif"])     # doctest: +SKIP
    >>> result = sc.score_models(shifts, models)                  # doctest: +SKIP
    >>> sc.write_tables(result, "out"); sc.write_report("out")    # doctest: +SKIP

The stage packages are ``shiftcheck.io``, ``.structure``, ``.predict``, ``.score`` and
``.report``; the functions above are re-exported under names that do not collide with them.

Agreement with chemical shifts supports a structure but does not prove it.
"""
from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "read_shifts", "read_models", "map_sequence", "Predictor", "predict_shifts",
           "score_models", "write_tables", "write_report"]

_LAZY = {
    "read_shifts": ("shiftcheck.io.shift_formats", "read_shifts"),
    "read_models": ("shiftcheck.io.coords", "read_models"),
    "map_sequence": ("shiftcheck.structure.mapping", "map_sequence"),
    "Predictor": ("shiftcheck.predict.model", "Predictor"),
    "predict_shifts": ("shiftcheck.predict.model", "predict"),
    "score_models": ("shiftcheck.pipeline", "score_models"),
    "write_tables": ("shiftcheck.report.tables", "write_tables"),
    "write_report": ("shiftcheck.report.pdf", "write_report"),
}


def __getattr__(name):  # lazy public API keeps `import shiftcheck` and `--help` fast
    if name in _LAZY:
        import importlib

        mod, attr = _LAZY[name]
        return getattr(importlib.import_module(mod), attr)
    raise AttributeError(name)
