"""Expected errors from held-out residuals: residue-type factors and the residue rule's scale.

Called by :func:`shiftcheck.predict.calibrate.calibrate` with the leave-one-protein-out
residuals of the default ring model; writes the ``expected_error.by_residue`` and
``expected_error.residue_rule`` blocks of a parameter file (docs/method.md, Calibration). The
factors are read by the scorer (:func:`shiftcheck.score.scoring.atom_sigma`), the scale by the
residue rule (:mod:`shiftcheck.score.outliers`).
"""
from __future__ import annotations

import numpy as np

from ..score._constants import scoring_constants
from ..score.metrics import huber_q
from ..score.outliers import residue_limit, residue_rule_scale
from .crossval import centred_residuals, choose_residue_shrinkage, heldout_sigma, residue_factors

__all__ = ["row_residues", "row_residue_types", "residue_error_block", "residue_rule_block"]


def row_residues(datasets: list, nucleus: str, screen: dict | None = None) -> tuple[np.ndarray, np.ndarray]:
    """(residue name, residue index in its structure) of every row :func:`collect` returns for
    ``nucleus`` (same order and screen)."""
    bound = float((screen or {}).get("max_abs_secondary", {}).get(nucleus, np.inf))
    names, index = [], []
    for d in datasets:
        sf = d.features
        sel = np.flatnonzero(sf.targets.nucleus == nucleus)
        y = d.measured[sel] - sf.rc[:, sel].mean(axis=0)
        ok = np.isfinite(y) & (np.abs(y) <= bound)
        ri = sf.targets.res_index[sel][ok]
        names.append(np.asarray(sf.ens.res_name, dtype=object)[ri].astype(str)), index.append(ri)
    if not names:
        return np.zeros(0, dtype=str), np.zeros(0, dtype=np.int64)
    return np.concatenate(names), np.concatenate(index).astype(np.int64)


def row_residue_types(datasets: list, nucleus: str, screen: dict | None = None) -> np.ndarray:
    """Residue name of every row :func:`collect` returns for ``nucleus`` (same order and screen)."""
    return row_residues(datasets, nucleus, screen)[0]


def residue_error_block(datasets, settings, heldout, loo: str, description: str) -> dict | None:
    """The ``expected_error.by_residue`` block: per nucleus class the residue-type factors of the
    expected error, their shrinkage chosen by held-out likelihood (see
    :func:`shiftcheck.predict.crossval.residue_factors`); None when the settings ask for none or
    there are fewer than three proteins."""
    ee = settings["expected_error"]
    grid = ee.get("residue_shrinkage_grid")
    if not grid or len({d.group for d in datasets}) < 3:
        return None
    tail = float(ee["tail"])
    values, shrink, nll, cv_scale = {}, {}, {}, {}
    for nuc, (y, pred, group_of, _) in heldout.items():
        r, ok = centred_residuals(y, pred, group_of)
        types = row_residue_types(datasets, nuc, settings.get("target_screen"))[ok]
        r, g = r[ok], group_of[ok]
        n0, cv = choose_residue_shrinkage(r, types, g, grid, tail)
        shrink[nuc] = n0 if np.isfinite(n0) else "inf"
        nll[nuc] = {"by_residue": round(cv[n0], 4), "one_sigma": round(cv[float("inf")], 4)}
        if np.isfinite(n0):
            # the in-sample tail match is optimistic once each type has its own factor: scale the
            # factors so that |z| > 3 is at the normal rate for σ predicted without each protein
            ho = heldout_sigma(r, types, g, n0, tail)
            m = float(np.quantile(np.abs(r / ho), tail) / 3.0)
            cv_scale[nuc] = round(m, 4)
            values[nuc] = {t: round(v * m, 4) for t, v in sorted(residue_factors(r, types, n0, tail).items())}
    return {"source": f"residue-type factors of the expected error (σ of an atom = values[class] × "
                      f"by_residue.values[class][residue name], 1 for a type not listed), from the same "
                      f"{loo} residuals on {description or 'its input'}: each type's RMS over the class's, "
                      f"shrunk towards 1 with weight k / (k + n0) for k residuals, rescaled so that the class "
                      f"stays tail-matched; n0 per class chosen from the grid (inf: one σ for the class) by "
                      f"the lowest leave-one-protein-out Gaussian negative log-likelihood per residual "
                      f"(heldout_nll; {ee.get('residue_shrinkage_source', '')}); then multiplied by heldout_tail_scale, "
                      f"the {tail:g} quantile of |r| / σ over 3 with each protein's σ fitted without it, so that "
                      f"the rule's |z| > 3 rate holds on proteins the factors have not seen",
            "values": values, "shrinkage": shrink, "heldout_nll": nll, "heldout_tail_scale": cv_scale}


def residue_rule_block(datasets, settings, heldout, scales, by_res, loo: str, description: str) -> dict | None:
    """The ``expected_error.residue_rule`` block (see :mod:`shiftcheck.score.outliers`): the scale
    c at which Q = Σ q(z) over a residue's atoms exceeds c · χ²_k(tail) for a fraction 1 − tail
    of the held-out residues, z = held-out residual / (class σ × residue factor). None with fewer
    than three proteins."""
    if len({d.group for d in datasets}) < 3 or not heldout:
        return None
    tail = float(settings["expected_error"]["tail"])
    h = float(scoring_constants()["huber_h"]["value"])
    fac = (by_res or {}).get("values", {})
    q_of: dict[tuple[int, int], list[float]] = {}
    for nuc, (y, pred, group_of, d) in heldout.items():
        if not np.isfinite(scales.get(nuc, np.nan)):
            continue
        r, ok = centred_residuals(y, pred, group_of)
        types, rix = row_residues(datasets, nuc, settings.get("target_screen"))
        sig = scales[nuc] * np.array([fac.get(nuc, {}).get(t, 1.0) for t in types])
        q = huber_q(np.where(ok, r / sig, 0.0), h)
        for key, v in zip(zip(d[ok].tolist(), rix[ok].tolist()), q[ok].tolist()):
            q_of.setdefault(key, []).append(v)
    Q = np.array([sum(v) for v in q_of.values()])
    k = np.array([len(v) for v in q_of.values()])
    c = residue_rule_scale(Q, k, tail)
    fired = Q > residue_limit(k, c, tail)
    by_k = {str(int(x)): {"n": int((k == x).sum()), "rate": round(float(fired[k == x].mean()), 4)}
            for x in np.unique(k)}
    return {"source": f"scale c of the residue rule (a residue is flagged when Σ q(z) over its compared "
                      f"atoms exceeds c · χ²_k({tail:g}) for k atoms; shiftcheck/score/outliers.py), the "
                      f"{tail:g} quantile of Σ q / χ²_k({tail:g}) over the {loo} residues of {description or 'its input'} "
                      f"(z: held-out residual / expected error with residue factors, q: the score's loss with "
                      f"huber_h {h:g}); by_atoms: residues and fraction flagged per number of atoms",
            "scale": round(c, 4), "tail": tail, "huber_h": h, "n_residues": int(Q.size), "by_atoms": by_k}
