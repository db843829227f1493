"""Loads the scorer's constants from shiftcheck/data (each with its source there)."""
from __future__ import annotations

from functools import lru_cache

from ..datafiles import load_data

__all__ = ["scoring_constants", "shift_ranges"]


@lru_cache(maxsize=None)
def scoring_constants() -> dict:
    """shiftcheck/data/scoring.json."""
    return load_data("scoring.json")


@lru_cache(maxsize=None)
def shift_ranges() -> dict:
    """shiftcheck/data/shift_ranges.json."""
    return load_data("shift_ranges.json")
