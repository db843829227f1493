"""The one loader of the JSON data files in ``shiftcheck/data`` and their metadata convention.

Every file spells its metadata the same way: a top-level ``"description"`` string and, in each
object that holds numbers (or in one enclosing it), a ``"source"`` string naming where they come
from (tests/test_data_provenance.py checks both). :func:`values` strips the metadata keys from a
table whose other keys are data names (nucleus classes, residue names, ...).
"""
from __future__ import annotations

import json
from importlib import resources

__all__ = ["META_KEYS", "load_data", "data_path", "values"]

#: The metadata keys of every data file (one spelling each).
META_KEYS = ("description", "source")


def data_path(name: str):
    """The packaged data file ``name`` (a Traversable; ``str()`` gives a path where installed as files)."""
    return resources.files("shiftcheck.data").joinpath(name)


def load_data(name: str) -> dict:
    """The parsed JSON data file ``name`` (a fresh object on every call; callers cache)."""
    return json.loads(data_path(name).read_text(encoding="utf-8"))


def values(table: dict) -> dict:
    """``table`` without its metadata keys."""
    return {k: v for k, v in table.items() if k not in META_KEYS}
