"""Load, validate and save predictor parameter files (JSON).

A parameter file holds everything the predictor uses: the random-coil table with its
corrections, the terms used per nucleus class (``groups``: names registered in
:mod:`shiftcheck.predict.terms`), the fitted coefficients for each ring-current
model, the default ring model and the expected error per nucleus class. Every number carries a
source: the ``"source"`` string of the nearest enclosing JSON object
(see :func:`numeric_sources`). The random-coil table is stored once, in
``shiftcheck/data/random_coil.json``: a parameter file refers to it by name
(``{"table": "random_coil.json"}``), which :func:`load_params` replaces by the table, or carries a
table of its own inline. :func:`save_params` writes the reference whenever the table is the shipped one.

Layout::

    {"format": "shiftcheck-params", "version": "1",
     "random_coil": {"table": "random_coil.json", "source": "..."},   # or an inline table
     "default_ring_model": {"value": "haigh-mallion", "source": "..."},
     "ridge_lambda": {"value": 1.0, "source": "..."},
     "groups": {"H": ["offset", ...], ...},
     "coefficients": {RING_MODEL: {NUCLEUS: {"source": "...", "names": [...], "values": [...]}}},
     "expected_error": {"source": "...", "values": {NUCLEUS: ppm}},
     "training": {"source": "...", ...}}
"""
from __future__ import annotations

import copy
import json
import os
from pathlib import Path

from ..datafiles import data_path
from ..errors import ParameterError

__all__ = ["FORMAT", "load_params", "save_params", "validate_params", "numeric_sources",
           "default_params_path", "SHIPPED_RANDOM_COIL"]

FORMAT = "shiftcheck-params"
_REQUIRED = ("random_coil", "default_ring_model", "groups", "coefficients", "expected_error")
#: The shipped random-coil table, referred to by this name from parameter files.
SHIPPED_RANDOM_COIL = "random_coil.json"
_RC_REFERENCE = {"table": SHIPPED_RANDOM_COIL,
                 "source": "the shipped random-coil table, shiftcheck/data/random_coil.json (sources there)"}


def _resolve_random_coil(params: dict, path: str | None) -> dict:
    """Replace a reference to the shipped random-coil table by the table itself (a copy)."""
    rc = params.get("random_coil") if isinstance(params, dict) else None
    if isinstance(rc, dict) and "table" in rc and "backbone" not in rc:
        if rc["table"] != SHIPPED_RANDOM_COIL:
            raise ParameterError(f"malformed parameter file: random_coil refers to unknown table "
                                 f"{rc['table']!r} (only {SHIPPED_RANDOM_COIL!r} is shipped)", path=path)
        from .randomcoil import load_table

        params = dict(params)
        params["random_coil"] = copy.deepcopy(load_table())
    return params


def default_params_path() -> str:
    """Path of the shipped parameter file."""
    return str(data_path("params_default.json"))


def numeric_sources(obj, source: str = "", path: str = "") -> list[tuple[str, float, str]]:
    """Every numeric leaf as (JSON path, value, source of the nearest enclosing object)."""
    out = []
    if isinstance(obj, dict):
        src = obj.get("source", source) if isinstance(obj.get("source", source), str) else source
        for k, v in obj.items():
            out += numeric_sources(v, src, f"{path}/{k}")
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            out += numeric_sources(v, source, f"{path}/{i}")
    elif isinstance(obj, (int, float)) and not isinstance(obj, bool):
        out.append((path, float(obj), source))
    return out


def validate_params(params: dict, path: str | None = None) -> dict:
    """Check the structure of a parameter dict; raise :class:`ParameterError` naming ``path``."""
    def bad(msg):
        raise ParameterError(f"malformed parameter file: {msg}", path=path)

    if not isinstance(params, dict) or params.get("format") != FORMAT:
        bad(f"not a shiftcheck parameter file (expected \"format\": \"{FORMAT}\")")
    for key in _REQUIRED:
        if key not in params:
            bad(f"missing key '{key}'")
    rc = params["random_coil"]
    if not isinstance(rc, dict) or "backbone" not in rc or "values" not in rc["backbone"]:
        bad("random_coil has no backbone table")
    drm = params["default_ring_model"]
    if not isinstance(drm, dict) or drm.get("value") not in params["coefficients"]:
        bad("default_ring_model must name one of the fitted ring models in 'coefficients'")
    from .terms import REGISTRY, term_of_column

    registered = {t.name for t in REGISTRY}
    if not isinstance(params["groups"], dict):
        bad("groups must map nucleus classes to lists of term names")
    for nuc, names in params["groups"].items():
        unknown = [g for g in names if g not in registered] if isinstance(names, list) else [names]
        if unknown:
            bad(f"groups/{nuc}: unknown term {unknown[0]!r} (registered: {', '.join(sorted(registered))})")
    for rm, per in params["coefficients"].items():
        if not isinstance(per, dict):
            bad(f"coefficients/{rm} must be an object")
        for nuc, block in per.items():
            if nuc not in params["groups"]:
                bad(f"coefficients/{rm}/{nuc}: nucleus class has no entry in 'groups'")
            names, values = block.get("names"), block.get("values")
            if not isinstance(names, list) or not isinstance(values, list) or len(names) != len(values):
                bad(f"coefficients/{rm}/{nuc}: 'names' and 'values' must be lists of equal length")
            if not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in values):
                bad(f"coefficients/{rm}/{nuc}: non-numeric coefficient")
            stray = [n for n in names if not isinstance(n, str) or term_of_column(n) is None
                     or term_of_column(n).name not in params["groups"][nuc]]
            if stray:
                bad(f"coefficients/{rm}/{nuc}: column {stray[0]!r} belongs to no term listed in groups/{nuc}")
    ee = params["expected_error"].get("values", {}) if isinstance(params["expected_error"], dict) else None
    if not isinstance(ee, dict) or not all(isinstance(v, (int, float)) and v > 0 for v in ee.values()):
        bad("expected_error/values must map nucleus classes to positive numbers")
    missing = [p for p, _, s in numeric_sources(params) if not s.strip()]
    if missing:
        bad(f"number without a source at {missing[0]}")
    return params


def load_params(params=None) -> dict:
    """Parameters from None (shipped defaults), a path, or a dict; validated."""
    if isinstance(params, dict):
        return validate_params(_resolve_random_coil(params, "<dict>"), "<dict>")
    path = default_params_path() if params is None else os.fspath(params)
    try:
        with open(path, encoding="utf-8") as fh:
            data = json.load(fh)
    except FileNotFoundError:
        raise ParameterError("parameter file not found", path=path) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise ParameterError(f"cannot read parameter file ({exc.__class__.__name__})", path=path) from None
    except json.JSONDecodeError as exc:
        raise ParameterError(f"not valid JSON: {exc.msg}", path=path, line=exc.lineno) from None
    data = validate_params(_resolve_random_coil(data, path), path)
    data.setdefault("_path", path)
    return data


def save_params(params: dict, path: str | os.PathLike) -> None:
    """Write a parameter file atomically (temporary file in the target folder, then rename)."""
    validate_params(params, str(path))
    path = Path(path)
    from .randomcoil import load_table

    clean = {k: v for k, v in params.items() if not k.startswith("_")}
    if clean["random_coil"] == load_table():            # stored once: refer to the shipped table
        clean["random_coil"] = dict(_RC_REFERENCE)
    from ..report.atomic import atomic_write_text

    atomic_write_text(path, json.dumps(clean, indent=1, sort_keys=False) + "\n")
