"""Score predicted shifts against measured shifts (the orchestration is :mod:`shiftcheck.pipeline`).

Steps, given the mappings and predictions of every ensemble: common atom set
(:mod:`.comparison`) -> stereo pairs resolved -> referencing offsets (:mod:`.referencing`) ->
residuals, normalised residuals z = r / sigma, robust loss -> per-nucleus metrics
(:mod:`.metrics`) -> paired-bootstrap ranking (:mod:`.ranking`) -> outlier atoms
(:mod:`.outliers`) -> data checks (:mod:`.datacheck`) and secondary structure (:mod:`.secondary`).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from ..chem.nuclei import ALL_CLASSES
from ..errors import InputError
from ..records import ScoreTables
from ._constants import scoring_constants
from .comparison import Comparison, build_comparison, resolve_stereo
from .datacheck import Finding, check_against_models, check_shifts
from .metrics import combined_score, huber_q, per_nucleus_metrics
from .outliers import Outliers, residue_classes, residue_limit, residue_summary
from .ranking import Ranking, per_residue_sums, rank_models
from .referencing import Offset, estimate_offsets, residue_weights

if TYPE_CHECKING:
    from ..predict.prediction import Prediction
    from ..shiftlist import ShiftList
    from ..structure.ensemble import Ensemble
    from ..structure.mapping import Mapping

__all__ = ["ScoreResult", "score", "score_comparison", "secondary_structure", "expected_errors",
           "residue_error_factors", "atom_sigma", "residue_rule",
           "ENTRY_BLOCK"]

#: Entries scored together (fixed, so results do not depend on batching or --jobs).
ENTRY_BLOCK = 256


@dataclass
class ScoreResult(ScoreTables):
    """Everything ``shiftcheck score`` computes (written out by :mod:`shiftcheck.report.tables`).

    ``to_records(table)`` / ``to_frame(table)`` give ``ranking``, ``residues`` or ``offsets`` as
    plain dicts or a pandas DataFrame (:mod:`shiftcheck.records`).

    Arrays over entries (models and ``name#mean`` entries) follow ``comparison.entries``.
    """

    shifts: object
    ensembles: list
    mappings: list
    comparison: Comparison
    offsets: dict[str, Offset]
    sigma: np.ndarray             # (n,) expected error of each compared atom (class σ × residue-type factor)
    score: np.ndarray
    metrics: dict[str, dict]
    ranking: Ranking
    outliers: Outliers
    residue_summary: list[dict]
    findings: list[Finding]
    secondary: dict[str, dict]
    expected_error: dict[str, float]
    expected_error_source: str
    parameters: dict
    n_stereo_swaps: int = 0
    warnings: list[str] = field(default_factory=list)
    expected_error_by_residue: dict[str, dict[str, float]] = field(default_factory=dict)
    residue_flags: np.ndarray | None = None     # bool (n_entries, n_res): residue rule, or None
    residue_rule: dict | None = None            # {'scale', 'tail', 'huber_h', 'source'} or None
    skipped: list = field(default_factory=list)   # isolation.Skipped: model files left out

    @property
    def best_model(self) -> str:
        return self.comparison.entries[int(self.ranking.order[0])].name

    def residual_rows(self, start: int = 0, stop: int | None = None) -> np.ndarray:
        """Residuals (measured - correction - predicted) of entries ``start:stop`` (computed on
        demand, so a run of many models holds only the predictions)."""
        return (self.comparison.measured - self.correction)[None, :] - self.comparison.predicted[start:stop]

    def z_rows(self, start: int = 0, stop: int | None = None) -> np.ndarray:
        """Normalised residuals residual / sigma of entries ``start:stop``."""
        return self.residual_rows(start, stop) / self.sigma[None, :]

    @property
    def residual(self) -> np.ndarray:
        """(n_entries, n): measured - correction - predicted."""
        return self.residual_rows()

    @property
    def z(self) -> np.ndarray:
        """(n_entries, n): residual / sigma."""
        return self.z_rows()

    @property
    def correction(self) -> np.ndarray:
        """Offset subtracted from each measured shift (n,)."""
        iso = self.comparison.isotope
        got = self.__dict__.get("_isotope_index")
        if got is None or got[0] is not iso:           # isotope kinds and each atom's kind, once
            kinds: dict = {}
            which = np.array([kinds.setdefault(i, len(kinds)) for i in iso], dtype=np.int64)
            got = (iso, list(kinds), which)
            self.__dict__["_isotope_index"] = got
        return np.array([self.offsets[i].correction for i in got[1]], dtype=float)[got[2]]


def expected_errors(params: dict | None) -> tuple[dict[str, float], str]:
    """Expected error per nucleus class from the parameter file, else the documented fallback."""
    fb = scoring_constants()["expected_error_fallback"]
    out = {c: float(fb[c]) for c in ALL_CLASSES}
    src = "fallback: " + fb["source"]
    ee = (params or {}).get("expected_error") if isinstance(params, dict) else None
    if isinstance(ee, dict):
        vals = ee.get("values", ee)
        got = {}
        for c in ALL_CLASSES:
            v = vals.get(c)
            v = v.get("value") if isinstance(v, dict) else v
            if isinstance(v, (int, float)) and v > 0:
                got[c] = float(v)
        if got:
            out.update(got)
            src = "parameter file: " + str(ee.get("source", "expected_error"))
            missing = [c for c in ALL_CLASSES if c not in got]
            if missing:
                src += f" (fallback for {', '.join(missing)})"
    return out, src


def residue_error_factors(params: dict | None) -> dict[str, dict[str, float]]:
    """Residue-type factors of the expected error, {class: {residue name: factor}} from the
    parameter file's ``expected_error.by_residue`` (empty without it: one σ per class)."""
    ee = (params or {}).get("expected_error") if isinstance(params, dict) else None
    br = ee.get("by_residue") if isinstance(ee, dict) else None
    vals = br.get("values") if isinstance(br, dict) else None
    if not isinstance(vals, dict):
        return {}
    return {c: {str(t).upper(): float(v) for t, v in per.items()
                if isinstance(v, (int, float)) and not isinstance(v, bool) and v > 0}
            for c, per in vals.items() if isinstance(per, dict)}


def atom_sigma(nucleus: np.ndarray, comp_id: np.ndarray, sigma_map: dict[str, float],
               factors: dict[str, dict[str, float]]) -> np.ndarray:
    """Expected error (ppm) of each compared atom: its class's σ times its residue type's factor
    (1 for a type without one, e.g. a non-standard residue)."""
    return np.array([sigma_map[c] * factors.get(c, {}).get(str(t).upper(), 1.0)
                     for c, t in zip(nucleus, comp_id)], dtype=float)


def residue_rule(params: dict | None) -> dict | None:
    """The residue rule of the parameter file (``expected_error.residue_rule``: scale c, tail,
    huber_h, source; see :mod:`shiftcheck.score.outliers`), or None (rule not applied)."""
    ee = (params or {}).get("expected_error") if isinstance(params, dict) else None
    rr = ee.get("residue_rule") if isinstance(ee, dict) else None
    if not isinstance(rr, dict):
        return None
    try:
        out = {"scale": float(rr["scale"]), "tail": float(rr["tail"]), "huber_h": float(rr["huber_h"]),
               "source": str(rr.get("source", ""))}
    except (KeyError, TypeError, ValueError):
        return None
    return out if out["scale"] > 0 and 0 < out["tail"] < 1 else None


def score(shifts: ShiftList, ensembles: list[Ensemble], mappings: list[Mapping],
          predictions: list[Prediction], *, params=None, ring_model: str | None = None,
          params_source: str | None = None, reref: str = "auto", k_sigma: float | None = None,
          n_boot: int | None = None, seed: int | None = None, include_mean: bool = True) -> ScoreResult:
    """Score predicted shifts of every model of every ensemble against a shift list.

    Mapping and prediction happen before (:mod:`shiftcheck.pipeline` does read -> map -> predict
    -> score); this function only compares.

    Parameters
    ----------
    shifts : ShiftList
    ensembles : list of Ensemble
    mappings : list of Mapping
        One per ensemble (:func:`shiftcheck.structure.mapping.map_sequence`).
    predictions : list of Prediction
        One per ensemble (:meth:`shiftcheck.predict.model.Predictor.predict`).
    params, ring_model, params_source
        The predictor's parameter dict (for the expected errors; None: the documented fallback),
        its ring model and a description of the parameter source (default: the predictions').
    reref : {'auto', 'off', 'force'}
        Referencing correction (see :mod:`shiftcheck.score.referencing`).
    k_sigma : float
        Outlier threshold in units of the expected error (default 3).
    n_boot, seed : int
        Bootstrap replicates (default 1000) and seed (default in scoring.json).
    include_mean : bool
        Also score each multi-model ensemble's mean prediction as ``name#mean``.

    Returns
    -------
    ScoreResult

    Raises
    ------
    InputError
        No model, or no atom is common to the shift list and every model.
    """
    if not ensembles:
        raise InputError("no models given")
    if len(mappings) != len(ensembles) or len(predictions) != len(ensembles):
        raise ValueError("score() needs one mapping and one prediction per ensemble")
    if params_source is None:
        params_source = predictions[0].params_source if predictions else ""
    comp = build_comparison(shifts, ensembles, mappings, predictions, include_mean=include_mean)
    from ..predict.plausibility import implausible_predictions

    model_warnings = [f"{ens.name}: {w}" for ens in ensembles for w in ens.warnings]
    model_warnings += [w for pred in predictions for w in implausible_predictions(pred)]
    findings = check_against_models(check_shifts(shifts), ensembles, mappings)
    return score_comparison(shifts, comp, ensembles, mappings, findings=findings,
                            secondary=secondary_structure(ensembles, mappings),
                            model_warnings=model_warnings, params=params, ring_model=ring_model,
                            params_source=params_source, reref=reref, k_sigma=k_sigma, n_boot=n_boot,
                            seed=seed, include_mean=include_mean)


def score_comparison(shifts: ShiftList, comp: Comparison, ensembles, mappings, *, findings: list,
                     secondary: dict, model_warnings: list[str], params=None, ring_model=None,
                     params_source: str = "", reref: str = "auto", k_sigma: float | None = None,
                     n_boot: int | None = None, seed: int | None = None,
                     include_mean: bool = True) -> ScoreResult:
    """Score an assembled :class:`Comparison` (the step shared by :func:`score` and the streamed
    engine :mod:`shiftcheck.stream`, whose ``ensembles`` carry no coordinates).

    Per-atom quantities are computed over fixed blocks of :data:`ENTRY_BLOCK` entries, so the
    numbers do not depend on how the models were batched, and only the predictions and the
    flags (bool) are held for every entry.
    """
    const = scoring_constants()
    k_sigma = const["k_sigma"]["value"] if k_sigma is None else float(k_sigma)
    n_boot = const["n_boot"]["value"] if n_boot is None else int(n_boot)
    seed = const["seed"]["value"] if seed is None else int(seed)
    pdict = params if isinstance(params, dict) else None
    sigma_map, sigma_src = expected_errors(pdict)
    if len(comp) == 0:
        why = ", ".join(f"{k} {v}" for k, v in sorted(comp.left_out.items())) or "no shifts"
        raise InputError(f"no atom is common to the shift list and every model ({why})",
                         path=shifts.source)
    swaps = resolve_stereo(comp)
    rng = np.random.default_rng(seed)
    W = residue_weights(comp.n_residues, n_boot, rng)
    offsets = estimate_offsets(comp, mode=reref, n_boot=n_boot, seed=seed, weights=W)
    corr = np.array([offsets[i].correction for i in comp.isotope], dtype=float)
    meas_ref = comp.measured - corr
    res_factors = residue_error_factors(pdict)
    sigma = atom_sigma(comp.nucleus, comp.comp_id, sigma_map, res_factors)
    h = float(const["huber_h"]["value"])
    n_e, n = comp.predicted.shape
    is_mean = comp.is_mean
    indiv = ~is_mean if (~is_mean).any() else np.ones(n_e, dtype=bool)
    S = np.zeros((n_e, comp.n_residues))
    counts = np.zeros((n_e, comp.n_residues))
    combined = np.zeros(n_e)
    flagged = np.zeros((n_e, n), dtype=bool)
    n_flag, n_have = np.zeros(n, dtype=np.int64), np.zeros(n, dtype=np.int64)
    parts = []
    for a in range(0, n_e, ENTRY_BLOCK):
        b = min(a + ENTRY_BLOCK, n_e)
        pred = comp.predicted[a:b]
        z = (meas_ref[None, :] - pred) / sigma[None, :]
        valid = np.isfinite(z)             # NaN: the model lacks that atom (scored on the rest)
        q = np.where(valid, huber_q(np.where(valid, z, 0.0), h), np.nan)
        S[a:b], _ = per_residue_sums(np.where(valid, q, 0.0), comp.residue, comp.n_residues)
        counts[a:b], _ = per_residue_sums(valid.astype(float), comp.residue, comp.n_residues)
        combined[a:b] = combined_score(q)
        parts.append(per_nucleus_metrics(meas_ref, pred, comp.nucleus))
        with np.errstate(invalid="ignore"):
            flagged[a:b] = np.abs(z) > k_sigma      # NaN (atom absent from a model): not flagged
        n_flag += flagged[a:b][indiv[a:b]].sum(axis=0)
        n_have += valid[indiv[a:b]].sum(axis=0)
    metrics = {c: {k: (np.concatenate([p[c][k] for p in parts]) if k != "n" else parts[0][c]["n"])
                   for k in parts[0][c]} for c in parts[0]}
    klass = np.where((n_flag == n_have) & (n_have > 0), "every", np.where(n_flag > 0, "some", "")).astype(object)
    out = Outliers(flagged, klass, n_flag, k_sigma)
    ranking = rank_models(S, counts, W, p_group=float(const["p_group"]["value"]))
    best = int(ranking.order[0])
    z_best = ((meas_ref - comp.predicted[best]) / sigma)[None, :]
    rule = residue_rule(pdict)
    res_flags = None
    if rule is not None:
        limit = residue_limit(counts, rule["scale"], rule["tail"])
        with np.errstate(invalid="ignore"):
            res_flags = (counts > 0) & (S > limit)
        rkl = residue_classes(res_flags, counts, is_mean)
        rsum = residue_summary(comp, z_best, out, 0, {"q_best": np.where(counts[best] > 0, S[best], np.nan),
                                                      "limit_best": limit[best], "klass": rkl})
    else:
        rsum = residue_summary(comp, z_best, out, 0)
    warnings = list(shifts.warnings) + list(model_warnings)
    for name, a in comp.absent.items():
        why = ", ".join(f"{k} {v}" for k, v in sorted(a["reasons"].items()))
        warnings.append(f"{name}: lacks {a['n_absent']} of the {len(comp)} compared atoms ({why}); "
                        f"scored on the other {a['n_compared']}, the other models keep theirs")
    for iso, off in offsets.items():
        if off.n and np.isfinite(off.low) and (off.low > 0 or off.high < 0) and not off.applied \
                and reref == "auto":
            warnings.append(f"{iso} offset {off.value:+.2f} ppm is significant but below the "
                            f"{off.threshold} ppm threshold: not corrected")
    if rule is not None and rule["huber_h"] != h:
        warnings.append(f"the residue rule was calibrated with huber_h {rule['huber_h']:g}, the scorer uses {h:g}")
    parameters = {"params_source": params_source, "ring_model": ring_model, "k_sigma": k_sigma,
                  "n_boot": n_boot, "seed": seed, "reref": reref, "include_mean": include_mean,
                  "huber_h": h, "p_group": float(const["p_group"]["value"])}
    return ScoreResult(shifts=shifts, ensembles=list(ensembles), mappings=list(mappings), comparison=comp,
                       offsets=offsets, sigma=sigma, score=combined, metrics=metrics,
                       ranking=ranking, outliers=out, residue_summary=rsum, findings=findings,
                       secondary=secondary, expected_error=sigma_map, expected_error_source=sigma_src,
                       expected_error_by_residue=res_factors, residue_flags=res_flags,
                       residue_rule=rule,
                       parameters=parameters, n_stereo_swaps=swaps, warnings=warnings)


def secondary_structure(ensembles, mappings) -> dict[str, dict]:
    """Secondary structure of every model; residues in the shift list's numbering (Seq_ID)."""
    from .secondary import METHOD, assign_secondary

    out = {}
    for ens, mp in zip(ensembles, mappings):
        ss = assign_secondary(ens)
        seq = [mp.res_to_seq.get(r) for r in range(ens.n_residues)]
        keep = [r for r, s in enumerate(seq) if s is not None]
        for m, name in enumerate(ens.model_names):
            out[name] = {"seq_id": [int(seq[r]) for r in keep], "ss": "".join(ss[m][r] for r in keep),
                         "method": METHOD}
    return out

