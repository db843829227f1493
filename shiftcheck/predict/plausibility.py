"""Warn about predictions no protein shows: usually atoms that clash in the model.

A proton pushed into an aromatic ring or onto another atom by a bad model gets ring-current or
hydrogen-bond terms far outside anything measured (a Trp HH2 at -49 ppm). Such predictions are
kept (the model is what it is) but named in a warning: predictions outside the usual range of
their nucleus class, the same generous screens the data checks use for measured values
(shiftcheck/data/shift_ranges.json ``ranges``).
"""
from __future__ import annotations

import numpy as np

__all__ = ["implausible_predictions"]


def implausible_predictions(pred, max_examples: int = 3) -> list[str]:
    """One warning per model of ``pred`` (a Prediction) with predictions outside the usual range."""
    from ..score._constants import shift_ranges

    ranges = shift_ranges()["ranges"]
    nuc = np.asarray(pred.nucleus).astype(str)
    lo = np.array([ranges[c]["low"] if c in ranges else -np.inf for c in nuc])
    hi = np.array([ranges[c]["high"] if c in ranges else np.inf for c in nuc])
    v = np.asarray(pred.values, dtype=float)
    with np.errstate(invalid="ignore"):
        bad = np.isfinite(v) & ((v < lo) | (v > hi))
    out = []
    for m in np.flatnonzero(bad.any(axis=1)):
        js = np.flatnonzero(bad[m])
        js = js[np.argsort(-np.maximum(lo[js] - v[m, js], v[m, js] - hi[js]))]
        ex = ", ".join(f"{pred.comp_id[j]} {pred.res_seq[j]} {pred.atom_id[j]} {v[m, j]:.1f} ppm"
                       for j in js[:max_examples])
        out.append(f"{pred.model_names[m]}: {js.size} predictions outside the usual range of their "
                   f"nucleus ({ex}): atoms clashing in the model? check its geometry")
    return out
