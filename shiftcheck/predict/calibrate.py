"""Fit the predictor's coefficients to (shift list, model) pairs: ridge least squares per nucleus.

Every fitted term is linear in its coefficients (see :mod:`shiftcheck.predict.features`), so the
fit is one weighted ridge solve per nucleus class and ring-current model (Hoerl & Kennard 1970,
Technometrics 12:55): exact, fast and reproducible.

Procedure
---------
1. For each pair, map the shift list onto the model by sequence alignment, build the features of
   every model and average them over the models (NMR ensembles), and take measured − random coil
   as the target. Chain-terminus atoms are left out (:func:`shiftcheck.chem.nuclei.at_chain_terminus`).
2. Rows of a shift list share a weight of 1 (a list paired with two structures gives each pair
   weight 1/2), so every protein counts once.
3. Solve (λ per nucleus class chosen from the ``ridge_lambda`` grid of the settings by
   leave-one-protein-out cross-validation, :mod:`shiftcheck.predict.crossval`); estimate one referencing offset per shift list and nucleus class as the median residual,
   centre the offsets on their median across lists, subtract them and solve again
   (``referencing_iterations`` times), so badly referenced entries do not bias the fit.
4. Leave one shift list out: fit on the others, predict it, subtract its median residual, and
   pool the errors: their RMSD is ``loo_rmsd``; the ``expected_error`` stored in the file is the
   tail-matched scale of the same residuals (:func:`tail_scale`), so that the 3σ flag fires on
   held-out proteins as often as it would for normal errors. From the same residuals
   :mod:`shiftcheck.predict.expected_error` fits the residue-type factors of the expected error
   (``expected_error.by_residue``) and the scale of the residue rule
   (``expected_error.residue_rule``). The default ring
   model is the one with the lowest pooled leave-one-out error over the proton classes.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from ..chem.nuclei import at_chain_terminus, entity_ends
from ..datafiles import load_data
from ..defaults import RING_MODELS
from ..errors import InputError
from .crossval import tail_scale
from .features import StructureFeatures
from .params import FORMAT
from .randomcoil import load_table
from .terms import column_rank, default_groups, term_of_column

if TYPE_CHECKING:
    from ..shiftlist import ShiftList
    from ..structure.ensemble import Ensemble

__all__ = ["Pair", "Dataset", "read_pairs_file", "load_settings", "build_dataset", "load_datasets",
           "collect", "ridge_lambda", "lambda_grid", "ridge_solve", "tail_scale", "fit_rows", "loo_rows", "calibrate", "RING_MODELS", "PROTON_CLASSES"]

PROTON_CLASSES = ("H", "HA", "HMe", "Haro")


@dataclass
class Pair:
    """One (shift file, coordinate file[, chain]) pair; ``label`` is how it is named in outputs."""

    shifts: str
    models: str
    chain: str | None = None
    label: str = ""


@dataclass
class Dataset:
    """Features and measured shifts of one pair."""

    label: str
    group: str          # the shift file: offsets, weights and leave-one-out use it
    weight: float
    features: StructureFeatures
    measured: np.ndarray  # (n_targets,), NaN where not measured


def load_settings() -> dict:
    """Calibration settings from ``shiftcheck/data/calibration.json``; the term names per nucleus
    class (``groups``) come from the registry (:func:`shiftcheck.predict.terms.default_groups`)
    unless the settings list them (experiments: tools/ablation.py)."""
    settings = load_data("calibration.json")
    settings.setdefault("groups", default_groups())
    return settings


def read_pairs_file(path: str, data_dir: str | None = None) -> list[Pair]:
    """Read a pairs file: one pair per line, ``SHIFTS<TAB>MODELS[<TAB>CHAIN]``.

    Blank lines and lines starting with '#' are skipped; fields may also be separated by runs of
    spaces. Relative paths are taken relative to ``data_dir`` (default: the pairs file's folder);
    a path may be a ``*`` pattern that matches exactly one file there.
    CHAIN '-' or absent means the first protein chain.
    """
    base = Path(data_dir) if data_dir else Path(path).parent
    try:
        lines = Path(path).read_text(encoding="utf-8").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read pairs file ({exc.__class__.__name__})", path=path) from None
    pairs = []
    for k, line in enumerate(lines, 1):
        if not line.strip() or line.lstrip().startswith("#"):
            continue
        f = line.split("\t") if "\t" in line else line.split()
        f = [x.strip() for x in f if x.strip()]
        if len(f) not in (2, 3):
            raise InputError("expected SHIFTS<TAB>MODELS[<TAB>CHAIN]", path=path, line=k)
        chain = f[2] if len(f) == 3 and f[2] != "-" else None
        shifts, models = (_one_match(base, x, path, k) for x in f[:2])
        pairs.append(Pair(shifts, models, chain, label=f"{f[0]} + {f[1]}"))
    if not pairs:
        raise InputError("no pairs in file", path=path)
    return pairs


def _one_match(base: Path, rel: str, path: str, line: int) -> str:
    """``base / rel``; a ``*`` pattern must match exactly one file (the label keeps the pattern)."""
    if "*" not in rel:
        return str(base / rel)
    hits = sorted(base.glob(rel))
    if len(hits) != 1:
        raise InputError(f"pattern {rel!r} matches {len(hits)} files (expected one)", path=path, line=line)
    return str(hits[0])


def build_dataset(shifts: ShiftList, ens: Ensemble, seq_to_res: dict, label: str, group: str, weight: float = 1.0,
                  table: dict | None = None) -> Dataset:
    """Match measured shifts to the predictor's target atoms of ``ens``."""
    sf = StructureFeatures.from_ensemble(ens, shifts.conditions, table)
    t = sf.targets
    lookup = {(int(r), str(a)): k for k, (r, a) in enumerate(zip(t.res_index, t.atom_id))}
    meas = np.full(len(t), np.nan)
    ends = entity_ends(shifts, [ens], [seq_to_res])
    for sid, comp, atom, val in zip(shifts.seq_id, shifts.comp_id, shifts.atom_id, shifts.value):
        r = seq_to_res.get(int(sid))
        if r is None or str(ens.res_name[r]) != str(comp) or at_chain_terminus(int(sid), str(atom), ends):
            continue
        k = lookup.get((r, str(atom)))
        if k is not None and np.isfinite(val):
            meas[k] = float(val)
    return Dataset(label=label, group=group, weight=weight, features=sf, measured=meas)


def load_datasets(pairs: list[Pair]) -> list[Dataset]:
    """Read, map and featurise every pair with the project's readers."""
    from ..io.coords import read_models
    from ..io.shift_formats import read_shifts
    from ..structure.mapping import map_sequence

    table = load_table()
    n_per = {}
    for p in pairs:
        n_per[p.shifts] = n_per.get(p.shifts, 0) + 1
    out, cache = [], {}
    for p in pairs:
        if p.shifts not in cache:
            cache[p.shifts] = read_shifts(p.shifts)
        sl = cache[p.shifts]
        for ens in read_models([p.models], chain=p.chain):
            mp = map_sequence(sl, ens)
            out.append(build_dataset(sl, ens, mp.seq_to_res, p.label or p.models, p.shifts,
                                     1.0 / n_per[p.shifts], table))
    return out


def _canonical(seen: dict[str, int]) -> list[str]:
    """Deterministic column order: by column prefix in registry order
    (:func:`shiftcheck.predict.terms.column_rank`; residue indicators alphabetical), then first seen."""
    return sorted(seen, key=lambda n: (*column_rank(n), seen[n]))


def ridge_lambda(settings: dict, nucleus: str) -> float:
    """Ridge λ of one nucleus class: ``ridge_lambda.by_nucleus[nucleus]`` or ``ridge_lambda.value``."""
    rl = settings["ridge_lambda"]
    return float(rl.get("by_nucleus", {}).get(nucleus, rl["value"]))


def _reordered(built, names: list[str]) -> np.ndarray | None:
    """A matrix already built with its own column order, put in the order ``names`` (columns it
    lacks are indicator columns, i.e. 0); None when a lacking column is not an indicator, so that
    the caller builds it again (and gets the error that case deserves)."""
    nm, X, _ = built
    pos = {n: k for k, n in enumerate(nm)}
    missing = [n for n in names if n not in pos]
    if any(term_of_column(n) is None or not term_of_column(n).indicators for n in missing):
        return None
    out = np.zeros(X.shape[:2] + (len(names),))
    have = [k for k, n in enumerate(names) if n in pos]
    out[:, :, have] = X[:, :, [pos[names[k]] for k in have]]
    return out


def collect(datasets: list[Dataset], nucleus: str, groups, ring_model: str, orders=(2, 1),
            names: list[str] | None = None, burial: dict | None = None, screen: dict | None = None,
            models: str = "mean"):
    """Rows of one nucleus class: (names, X (N, k), y = measured − random coil, dataset index, weight).

    ``orders`` is the ``conformation`` setting (dict) or the two Fourier orders. Features of NMR
    ensembles are averaged over the models (``models="first"``: model 1 only, for comparison).
    ``burial`` is the ``burial`` setting. ``screen`` is the ``target_screen`` setting: rows with
    |measured − random coil| above ``max_abs_secondary[nucleus]`` are left out.
    """
    bound = float((screen or {}).get("max_abs_secondary", {}).get(nucleus, np.inf))
    groups = tuple(groups)
    first: list = []
    if names is None:
        seen: dict[str, int] = {}
        for d in datasets:
            nm, _, X, sel = d.features.matrix(nucleus, None, groups, ring_model, orders, burial)
            first.append((nm, X, sel))
            for n in nm:
                seen.setdefault(n, len(seen))
        names = _canonical(seen)
    Xs, ys, ds, ws = [], [], [], []
    for i, d in enumerate(datasets):
        X = _reordered(first[i], names) if first else None
        if X is None:
            _, _, X, sel = d.features.matrix(nucleus, names, groups, ring_model, orders, burial)
        else:
            sel = first[i][2]
        y = d.measured[sel] - d.features.rc[:, sel].mean(axis=0)
        ok = np.isfinite(y) & (np.abs(y) <= bound)
        Xs.append((X[0] if models == "first" else X.mean(axis=0))[ok]), ys.append(y[ok])
        ds.append(np.full(ok.sum(), i)), ws.append(np.full(ok.sum(), d.weight))
    return (list(names), np.concatenate(Xs) if Xs else np.zeros((0, len(names))),
            np.concatenate(ys), np.concatenate(ds), np.concatenate(ws))


def ridge_solve(X: np.ndarray, y: np.ndarray, w: np.ndarray, lam: float, free: np.ndarray) -> np.ndarray:
    """Weighted ridge least squares on standardised columns; ``free`` columns are not penalised."""
    sw = np.sqrt(w)[:, None]
    mu = np.average(X, axis=0, weights=w)
    sd = np.sqrt(np.average((X - mu) ** 2, axis=0, weights=w))
    sd = np.where(sd > 1e-12, sd, 1.0)
    Z = X / sd
    A = (Z * sw).T @ (Z * sw)
    pen = np.where(free, 0.0, lam)
    A[np.diag_indices_from(A)] += pen + 1e-10
    b = (Z * sw).T @ (np.sqrt(w) * y)
    return np.linalg.solve(A, b) / sd


def fit_rows(names, X, y, d, w, lam: float, iterations: int = 1):
    """Fit with per-dataset-group referencing offsets; returns (coefficients, offsets by index)."""
    free = np.array([n == "const" for n in names])
    beta = ridge_solve(X, y, w, lam, free)
    offsets = {}
    for _ in range(iterations):
        r = y - X @ beta
        ids = np.unique(d)
        off = np.array([np.median(r[d == k]) for k in ids])
        off -= np.median(off)
        offsets = dict(zip(ids.tolist(), off.tolist()))
        beta = ridge_solve(X, y - np.array([offsets[k] for k in d]), w, lam, free)
    return beta, offsets


def loo_rows(names, X, y, d, w, group_of: np.ndarray, lam: float, iterations: int = 1) -> np.ndarray:
    """Leave-one-group-out predictions (of y) for every row; ``group_of`` maps row -> group id."""
    pred = np.full(y.shape, np.nan)
    for g in np.unique(group_of):
        test = group_of == g
        if test.all():
            continue
        beta, _ = fit_rows(names, X[~test], y[~test], d[~test], w[~test], lam, iterations)
        pred[test] = X[test] @ beta
    return pred


def lambda_grid(settings: dict, nucleus: str) -> list[float]:
    """Candidate ridge strengths of one class: ``ridge_lambda.grid`` (or the fixed value)."""
    rl = settings["ridge_lambda"]
    return [float(v) for v in rl["grid"]] if "grid" in rl else [ridge_lambda(settings, nucleus)]


def calibrate(datasets: list[Dataset], settings: dict | None = None, description: str = "",
              ring_models=RING_MODELS) -> dict:
    """Fit all coefficients and return a parameter dict (see :mod:`shiftcheck.predict.params`)."""
    from .crossval import GroupedRows, block_factors_for, choose_lambda, huber_for, pooled_error
    from .expected_error import residue_error_block, residue_rule_block

    settings = settings or load_settings()
    it = int(settings["referencing_iterations"]["value"])
    orders = settings["conformation"]
    src = f"fitted by `shiftcheck calibrate` on {description or f'{len(datasets)} pairs'}"
    groups_all = sorted({d.group for d in datasets})
    gid = {g: i for i, g in enumerate(groups_all)}
    coeffs, errors, proton_sse, lams, scales, heldout = {}, {}, {}, {}, {}, {}
    for rm in ring_models:
        coeffs[rm], errors[rm], proton_sse[rm], lams[rm], scales[rm], heldout[rm] = {}, {}, [0.0, 0.0], {}, {}, {}
        for nuc, groups in settings["groups"].items():
            names, X, y, d, w = collect(datasets, nuc, groups, rm, orders, burial=settings.get("burial"),
                                        screen=settings.get("target_screen"))
            if y.size < len(names) // 4 + 2:
                continue
            group_of = np.array([gid[datasets[k].group] for k in d])
            rows = GroupedRows(names, X, y, d, w, group_of, block_factors_for(settings, nuc), huber_for(settings, nuc))
            grid = lambda_grid(settings, nuc)
            if len(groups_all) > 2 and len(grid) > 1:     # λ by the squared-loss CV (also for a Huber fit)
                lam, _ = choose_lambda(rows.with_huber(None), grid, it)
            else:
                lam = ridge_lambda(settings, nuc) if "value" in settings["ridge_lambda"] else grid[0]
            lams[rm][nuc] = lam
            beta, _ = rows.fit(lam, it)
            coeffs[rm][nuc] = {"source": src, "names": names, "values": [float(v) for v in beta]}
            pred = rows.loo(lam, it) if len(groups_all) > 1 else X @ beta
            err = pooled_error(y, pred, w, group_of)
            errors[rm][nuc] = err
            scales[rm][nuc] = tail_scale(y, pred, group_of, float(settings["expected_error"]["tail"]))
            heldout[rm][nuc] = (y, pred, group_of, d)
            if nuc in PROTON_CLASSES and np.isfinite(err):
                proton_sse[rm][0] += err ** 2 * w.sum()
                proton_sse[rm][1] += w.sum()
    best = min(ring_models, key=lambda m: proton_sse[m][0] / max(proton_sse[m][1], 1e-12))
    loo = "leave-one-protein-out" if len(groups_all) > 1 else "in-sample (only one shift list)"
    by_res = residue_error_block(datasets, settings, heldout[best], loo, description)
    res_rule = residue_rule_block(datasets, settings, heldout[best], scales[best], by_res, loo, description)
    table = load_table()
    rl = {k: v for k, v in settings["ridge_lambda"].items() if k != "source"}
    rl.update({"by_nucleus": lams[best], "by_ring_model": lams,
               "source": f"{src}: per nucleus class the grid value with the lowest {loo} RMSD "
                         f"(grouped cross-validation, {settings['ridge_lambda'].get('source', '')})"})
    return {
        "format": FORMAT, "version": "1",
        "description": "Parameters of the shiftcheck shift predictor. " + src + ".",
        "random_coil": table,
        "default_ring_model": {"value": best, "source": f"{src}: lowest {loo} RMSD pooled over the proton classes"},
        "ridge_lambda": rl,
        "referencing_iterations": settings["referencing_iterations"],
        "conformation": settings["conformation"],
        **({"burial": settings["burial"]} if "burial" in settings else {}),
        **({"robust": settings["robust"]} if "robust" in settings else {}),
        "groups": settings["groups"],
        **({"target_screen": settings["target_screen"]} if "target_screen" in settings else {}),
        "coefficients": coeffs,
        "expected_error": {"source": f"tail-matched scale of the {loo} residuals (ppm, each protein's "
                                     f"referencing offset removed): the {settings['expected_error']['tail']:g} "
                                     f"quantile of |residual| divided by 3, so that |z| > 3 occurs as often as for a "
                                     f"normal distribution; computed by `shiftcheck calibrate` with the default ring "
                                     f"model on {description or 'its input'} ({settings['expected_error']['source']})",
                           "values": {k: round(v, 4) for k, v in scales[best].items() if np.isfinite(v)},
                           "by_ring_model": {m: {k: round(v, 4) for k, v in e.items() if np.isfinite(v)}
                                             for m, e in scales.items()},
                           **({"by_residue": by_res} if by_res else {}),
                           **({"residue_rule": res_rule} if res_rule else {})},
        "loo_rmsd": {"source": f"{loo} RMSD (ppm, referencing offset removed) computed by "
                               f"`shiftcheck calibrate` on {description or 'its input'}",
                     "values": {k: round(v, 4) for k, v in errors[best].items() if np.isfinite(v)},
                     "by_ring_model": {m: {k: round(v, 4) for k, v in e.items() if np.isfinite(v)}
                                       for m, e in errors.items()}},
        "training": {"source": src, "pairs": [d.label for d in datasets],
                     "n_shift_lists": len(groups_all)},
    }
