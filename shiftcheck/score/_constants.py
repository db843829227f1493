"""Loads the scorer's constants from shiftcheck/data (each with its source there)."""
from __future__ import annotations

import json
from functools import lru_cache
from importlib import resources

__all__ = ["scoring_constants", "shift_ranges"]


@lru_cache(maxsize=None)
def scoring_constants() -> dict:
    """shiftcheck/data/scoring.json."""
    return json.loads(resources.files("shiftcheck.data").joinpath("scoring.json").read_text())


@lru_cache(maxsize=None)
def shift_ranges() -> dict:
    """shiftcheck/data/shift_ranges.json."""
    return json.loads(resources.files("shiftcheck.data").joinpath("shift_ranges.json").read_text())
