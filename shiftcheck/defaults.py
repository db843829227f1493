"""Names and default settings shared by the library and the command line (defined once here).

The numbers come from the data files (``shiftcheck/data/scoring.json``, with their sources), so
the command-line defaults and their help texts cannot drift from what the library uses.
"""
from __future__ import annotations

from functools import lru_cache

from .datafiles import load_data

__all__ = ["RING_MODELS", "DEFAULT_MIN_IDENTITY", "scoring_default"]

#: The ring-current models the predictor knows (see shiftcheck.predict.ringcurrent).
RING_MODELS: tuple[str, ...] = ("haigh-mallion", "johnson-bovey", "point-dipole")

#: Default identity threshold of the sequence mapping (see shiftcheck.structure.mapping: a
#: judgement, no source; the reasons are given there).
DEFAULT_MIN_IDENTITY = 0.9


@lru_cache(maxsize=None)
def _scoring() -> dict:
    return load_data("scoring.json")


def scoring_default(name: str):
    """Default value of a scorer setting in scoring.json ('k_sigma', 'n_boot', 'seed', ...)."""
    return _scoring()[name]["value"]
