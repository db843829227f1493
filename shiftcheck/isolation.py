"""Per-model isolation: one unusable model file never costs the run the other models.

:func:`read_models_tolerant` reads every coordinate file on its own and sets aside the ones
that cannot be read or hold no protein chain; :func:`map_models_tolerant` sets aside the ones
whose sequence does not match the shift list. Both return what they kept and a list of
:class:`Skipped` (file and a one-line reason), which ``score`` prints, writes to summary.json
(``skipped``) and shows on the report's first page. With ``strict=True`` the first skipped
model raises its error instead (``score --strict``). When no model is left, an
:class:`~shiftcheck.errors.InputError` names every file and its reason.

Models from files with the same name get distinct labels: the shortest tail of their paths
that tells them apart (:func:`distinct_labels`).
"""
from __future__ import annotations

import os
import re
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path

from .errors import InputError, ShiftcheckError

__all__ = ["Skipped", "read_models_tolerant", "map_models_tolerant", "distinct_labels",
           "no_model_left"]


@dataclass
class Skipped:
    """A model file left out of the run, and why (one line)."""

    file: str
    reason: str
    error: ShiftcheckError | None = field(default=None, repr=False, compare=False)

    def as_dict(self) -> dict:
        return {"file": self.file, "reason": self.reason}


def distinct_labels(paths) -> list[str]:
    """A label per path: the file name, or the shortest path tail that tells equal names apart.

    The same file given twice gets ``name (2)``, ``name (3)`` ... for its repeats.

    >>> distinct_labels(["a/x/m.pdb", "b/x/m.pdb", "c/n.pdb"])
    ['a/x/m.pdb', 'b/x/m.pdb', 'n.pdb']
    """
    parts = [Path(os.path.abspath(str(p))).parts for p in paths]
    distinct = list(dict.fromkeys(parts))
    depth: dict[tuple, int] = {}
    pending, k = set(distinct), 1
    while pending:                         # counting tails: linear in the number of files
        count = Counter(pi[-k:] for pi in distinct)
        for pi in [pi for pi in pending if count[pi[-k:]] == 1 or k >= len(pi)]:
            depth[pi] = k
            pending.discard(pi)
        k += 1
    labels = ["/".join(pi[-depth[pi]:]) for pi in parts]
    seen: dict[str, int] = {}
    out = []
    for lab in labels:
        seen[lab] = seen.get(lab, 0) + 1
        out.append(lab if seen[lab] == 1 else f"{lab} ({seen[lab]})")
    return out


def _relabel(ens, label: str):
    if label == ens.name:
        return ens
    ens.model_names = [label + n[len(ens.name):] if n.startswith(ens.name) else n
                       for n in ens.model_names]
    ens.name = label
    return ens


def _fail(exc: ShiftcheckError, path: str, strict: bool) -> Skipped:
    if strict:
        raise exc
    reason = exc.message if exc.path in (None, str(path)) else str(exc)
    if exc.line and exc.path == str(path):
        reason = f"line {exc.line}: {reason}"
    return Skipped(str(path), " ".join(str(reason).split()), exc)


def read_models_tolerant(paths, chain: str | None = None, build_hydrogens: bool = True,
                         strict: bool = False, partners: str = "auto"):
    """Read each coordinate file on its own; returns ``(ensembles, skipped)``.

    Parameters
    ----------
    paths : sequence of path
    chain : str, optional
        Author chain ID (see :func:`shiftcheck.io.coords.read_models`).
    build_hydrogens : bool
    strict : bool
        Raise the first file's error instead of skipping it.
    partners : str
        The other protein chains as surroundings (see :func:`shiftcheck.io.coords.read_models`).

    Returns
    -------
    (list of Ensemble, list of Skipped)
        Ensembles carry distinct labels when files share a name.
    """
    from .io.coords import read_models

    paths = [str(p) for p in paths]
    labels = distinct_labels(paths)
    ensembles, skipped = [], []
    for p, lab in zip(paths, labels):
        try:
            ens = read_models(p, chain=chain, build_hydrogens=False, partners=partners)[0]
        except ShiftcheckError as exc:
            skipped.append(_fail(exc, p, strict))
            continue
        ensembles.append(_relabel(ens, lab))
    if build_hydrogens:     # after reading: files of one topology get their protons as one stack
        from .structure.hydrogens import add_hydrogens_many

        ensembles = add_hydrogens_many(ensembles)
    return ensembles, skipped


_OTHER_CHAINS = re.compile(r"other protein chains: (.*) \(choose with --chain\)")


def _chain_hint(shifts, ens, min_identity: float) -> str:
    """' ; the shifts match chain B: use --chain B' when another protein chain of the file fits."""
    from .io.coords import read_models
    from .structure.mapping import map_sequence

    chains = []
    for w in ens.warnings:
        m = _OTHER_CHAINS.search(w)
        if m:
            chains = [c.split(" (")[0].strip() for c in m.group(1).split(", ")]
    for c in chains:
        try:
            other = read_models(ens.sources[0], chain=c, build_hydrogens=False, partners="ignore")[0]
            map_sequence(shifts, other, min_identity=min_identity)
        except ShiftcheckError:
            continue
        return f"; the shifts match chain {c} of this file: use --chain {c}"
    if chains:
        return f"; other protein chains in the file: {', '.join(chains)} (choose with --chain)"
    return ""


def map_models_tolerant(shifts, ensembles, min_identity: float | None = None, strict: bool = False):
    """Map the shift list onto each ensemble; returns ``(ensembles, mappings, skipped)``.

    An ensemble whose sequence does not match (another protein, too little overlap) is skipped
    with the mapping's reason; when another protein chain of the same file matches, the reason
    says so and suggests ``--chain``.
    """
    from .errors import MappingError
    from .structure.mapping import DEFAULT_MIN_IDENTITY, map_sequence

    thr = DEFAULT_MIN_IDENTITY if min_identity is None else min_identity
    kept, maps, skipped = [], [], []
    for ens in ensembles:
        try:
            maps.append(map_sequence(shifts, ens, min_identity=thr))
        except MappingError as exc:
            hint = _chain_hint(shifts, ens, thr)
            if hint:
                exc = MappingError(exc.message + hint, path=exc.path, line=exc.line)
            skipped.append(_fail(exc, ens.sources[0] if ens.sources else ens.name, strict))
            continue
        kept.append(ens)
    return kept, maps, skipped


def no_model_left(skipped: list[Skipped]) -> ShiftcheckError:
    """The error raised when every model was skipped: each file with its reason."""
    parts = [f"{Path(s.file).name}: {s.reason}" for s in skipped[:6]]
    more = f"; ... {len(skipped) - 6} more" if len(skipped) > 6 else ""
    if len(skipped) == 1:
        return skipped[0].error or InputError(skipped[0].reason, path=skipped[0].file)
    return InputError(f"no model left to score ({len(skipped)} skipped): " + "; ".join(parts) + more)
