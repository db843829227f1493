"""Option checks run before any work, so a bad value costs a one-line error, not a run.

Each function raises :class:`~shiftcheck.errors.InputError` naming the option and the value.
"""
from __future__ import annotations

import math

from ..errors import InputError

__all__ = ["check_score_options", "check_show", "check_predict_options", "add_partner_option"]


def _finite(name: str, v: float | None) -> None:
    if v is not None and not math.isfinite(v):
        raise InputError(f"{name} must be a finite number, got {v}")


def check_score_options(args) -> None:
    """--bootstrap >= 1, 0 <= --seed < 2**63, --k-sigma finite and > 0, --min-identity in (0, 1]."""
    if args.bootstrap is not None and args.bootstrap < 1:
        raise InputError(f"--bootstrap must be at least 1 replicate, got {args.bootstrap}")
    if args.seed is not None and not 0 <= args.seed < 2 ** 63:
        raise InputError(f"--seed must be a non-negative integer below 2**63, got {args.seed}")
    _finite("--k-sigma", args.k_sigma)
    if args.k_sigma is not None and args.k_sigma <= 0:
        raise InputError(f"--k-sigma must be positive (flag |residual| > K x expected error), "
                         f"got {args.k_sigma:g}")
    if args.min_identity is not None and not 0.0 < args.min_identity <= 1.0:
        raise InputError(f"--min-identity must lie in (0, 1], got {args.min_identity:g}")


def check_show(show, ensembles) -> None:
    """Every --show NAME is a model (or ``name#mean``) of the ensembles read."""
    if not show:
        return
    names = set()
    for ens in ensembles:
        names.update(ens.model_names)
        if ens.n_models > 1:
            names.add(f"{ens.name}#mean")
    for s in show:
        if s not in names:
            some = ", ".join(sorted(names)[:5]) + (" ..." if len(names) > 5 else "")
            raise InputError(f"--show: no model named {s!r} (models: {some})")


def check_predict_options(args) -> None:
    """--temperature finite and > 0 K, --ph within 0..14."""
    _finite("--temperature", args.temperature)
    _finite("--ph", args.ph)
    if args.temperature is not None and args.temperature <= 0:
        raise InputError(f"--temperature is in kelvin and must be positive, got {args.temperature:g}")
    if args.ph is not None and not 0 <= args.ph <= 14:
        raise InputError(f"--ph must lie within 0..14, got {args.ph:g}")


def add_partner_option(p) -> None:
    """``--partner-chains``: the files' other protein chains as surroundings of the scored chain."""
    p.add_argument("--partner-chains", choices=("auto", "use", "ignore"), default="auto",
                   help="other protein chains of a model file (a homodimer's partner, a complex's "
                        "subunits) as surroundings of the chosen chain for ring currents, hydrogen "
                        "bonds, burial and electric field; auto (default): used unless the file is a "
                        "crystal structure, whose other chains may be copies in the asymmetric unit")
