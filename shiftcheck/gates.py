"""``score --fail-on CONDITIONS``: conditions a script can gate on (exit code 3).

CONDITIONS is a comma-separated list of:

``offset``
    a referencing offset was applied to any isotope (``summary.json`` → ``offsets.*.applied``);
``flags>N``
    more than N atoms are flagged in every model (distinct atoms of ``flags`` with class
    ``every``), i.e. disagreements that point at the data rather than at one model;
``score>X``
    the best model's score (``ranking[0].score``) is above X;
``skipped``
    at least one model file was skipped (``summary.json`` → ``skipped``; no key means none).

The conditions are parsed before any work (a bad one is a one-line error, exit 2) and checked on
the ``summary.json`` that was written, after all outputs are in place.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from .errors import InputError

__all__ = ["Condition", "parse_conditions", "evaluate", "VOCABULARY", "EXIT_CODE"]

EXIT_CODE = 3
VOCABULARY = ("offset", "flags>N", "score>X", "skipped")
_RE = re.compile(r"^(offset|skipped)$|^(flags|score)\s*>\s*([0-9]+(?:\.[0-9]*)?)$")


@dataclass(frozen=True)
class Condition:
    """One parsed condition: ``kind`` in offset/flags/score/skipped, ``limit`` for flags/score."""

    kind: str
    limit: float | None = None

    def __str__(self) -> str:
        return self.kind if self.limit is None else f"{self.kind}>{self.limit:g}"


def parse_conditions(text: str | None) -> list[Condition]:
    """Parse a --fail-on value; raises InputError (one line) on anything outside the vocabulary.

    >>> [str(c) for c in parse_conditions("offset, flags>3,score>1.5")]
    ['offset', 'flags>3', 'score>1.5']
    """
    if text is None:
        return []
    out = []
    for part in str(text).split(","):
        p = part.strip().lower()
        m = _RE.match(p)
        if not m:
            raise InputError(f"--fail-on: unknown condition '{part.strip()}' (choose from "
                             f"{', '.join(VOCABULARY)}, comma-separated)")
        if m.group(1):
            out.append(Condition(m.group(1)))
        else:
            kind, limit = m.group(2), float(m.group(3))
            if kind == "flags" and limit != int(limit):
                raise InputError(f"--fail-on: flags>N needs a whole number, got '{part.strip()}'")
            out.append(Condition(kind, limit))
    return out


def evaluate(conditions: list[Condition], summary: dict) -> list[str]:
    """The conditions met by a summary.json dict, each as a one-line reason (empty: none met)."""
    met = []
    for c in conditions:
        if c.kind == "offset":
            applied = [f"{k} {v['value']:+.2f} ppm" for k, v in (summary.get("offsets") or {}).items()
                       if v.get("applied")]
            if applied:
                met.append(f"offset: referencing offset applied ({', '.join(applied)})")
        elif c.kind == "flags":
            atoms = {(f.get("seq_id"), f.get("atom_id")) for f in summary.get("flags") or []
                     if f.get("class") == "every"}
            if len(atoms) > c.limit:
                met.append(f"{c}: {len(atoms)} atoms flagged in every model")
        elif c.kind == "score":
            ranking = summary.get("ranking") or []
            best = ranking[0].get("score") if ranking else None
            if best is not None and best > c.limit:
                met.append(f"{c}: best score {best:.3f} ({ranking[0].get('model')})")
        elif c.kind == "skipped":
            skipped = summary.get("skipped") or []
            if skipped:
                met.append(f"skipped: {len(skipped)} model file(s) skipped")
    return met


def finish(outdir, conditions: list[Condition], as_json: bool = False) -> int:
    """After the outputs are written: print the --json view, report conditions met, exit code.

    With ``as_json`` stdout gets exactly one JSON object: ``ranking`` and ``offsets`` of
    summary.json, plus ``best_model``, ``outdir`` and ``fail_on`` (the reasons of the
    conditions met). Reasons also go to stderr, one line each. Returns 3 when a condition is
    met, else 0.
    """
    import json
    import sys
    from pathlib import Path

    summary = json.loads((Path(outdir) / "summary.json").read_text(encoding="utf-8"))
    met = evaluate(conditions, summary)
    if as_json:
        view = {"ranking": summary.get("ranking"), "offsets": summary.get("offsets"),
                "best_model": summary.get("best_model"), "outdir": str(outdir), "fail_on": met}
        sys.stdout.write(json.dumps(view, indent=1) + "\n")
        sys.stdout.flush()
    for reason in met:
        print(f"shiftcheck: fail-on: {reason}", file=sys.stderr)
    return EXIT_CODE if met else 0
