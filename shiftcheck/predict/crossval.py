"""Grouped ridge fits from per-dataset Gram matrices: fast leave-one-protein-out and λ selection.

The fit of :func:`shiftcheck.predict.calibrate.fit_rows` (weighted ridge on columns scaled by
their weighted standard deviation, one referencing offset per dataset estimated as the median
residual and centred on the median over datasets, then solved again) needs only, per dataset
d, the sums G_d = Xᵀ W X, b_d = Xᵀ W y, s_d = Xᵀ w and Σw; any union of datasets is the sum of
its parts. Leaving a protein out is therefore a k×k solve instead of a pass over all rows, which
makes leave-one-protein-out, and the choice of the ridge strength by grouped cross-validation
(Hastie, Tibshirani & Friedman 2009, The Elements of Statistical Learning §7.10, from memory:
cross-validation must hold out whole independent units, here proteins), cheap enough to run
inside ``shiftcheck calibrate``.
"""
from __future__ import annotations

import copy
import re

import numpy as np

__all__ = ["GroupedRows", "column_blocks", "penalty_factors", "block_factors_for", "huber_for", "choose_lambda",
           "centred_residuals", "pooled_error", "tail_scale", "residue_factors", "choose_residue_shrinkage",
           "heldout_sigma"]


_OWN = re.compile(r"^conf:(phi|psi)_(cos|sin)\d+(\*psi_(cos|sin)\d+)?$")
_PREFIX_BLOCK = {"res": "residue", "prev": "neighbour", "next": "neighbour", "hb": "hbond", "hbx": "hbond",
                 "ring": "ring", "aniso": "anisotropy", "bur": "burial", "sc": "sidechain", "ef": "efield"}


def column_blocks(names) -> np.ndarray:
    """Block of every design-matrix column, for block-wise ridge strengths: 'const'; 'residue'
    (residue-type offsets); 'neighbour' (neighbour residue types); 'phi_psi' (residue i's own φ/ψ
    basis); 'class' (Gly/Pro/β-branched blocks); 'neighbour_torsion' (torsions of other residues);
    'chi1'; 'type' (per-residue-type φ/ψ blocks); 'hbond', 'ring', 'anisotropy', 'burial',
    'sidechain', 'efield'."""
    out = []
    for n in names:
        head = n.split(":", 1)[0]
        if n == "const":
            out.append("const")
        elif head != "conf":
            out.append(_PREFIX_BLOCK.get(head, head))
        elif _OWN.match(n):
            out.append("phi_psi")
        elif n.startswith("conf:TYPE:"):
            out.append("type")
        elif n.startswith("conf:chi1_"):
            out.append("chi1")
        elif n.split(":")[1] in ("GLY", "PRO", "BETA", "OTHER"):
            out.append("class")
        else:
            out.append("neighbour_torsion")
    return np.array(out, dtype=object)


def block_factors_for(settings: dict, nucleus: str) -> dict | None:
    """The ``ridge_lambda.block_factors`` entry of one nucleus class (None: 1 for every block)."""
    return ((settings.get("ridge_lambda") or {}).get("block_factors") or {}).get(nucleus)


def huber_for(settings: dict, nucleus: str) -> tuple[float, int] | None:
    """(Huber tuning constant c, IRLS passes) of one nucleus class from the ``robust`` setting, or
    None for a plain least-squares fit."""
    rb = settings.get("robust") or {}
    c = (rb.get("huber_c") or {}).get(nucleus)
    return None if c is None else (float(c), int(rb.get("passes", 10)))


def penalty_factors(names, block_factors: dict | None) -> np.ndarray:
    """Per-column multiplier of the ridge strength: ``block_factors[block]`` (default 1)."""
    bf = block_factors or {}
    return np.array([float(bf.get(b, 1.0)) for b in column_blocks(names)])


class GroupedRows:
    """Rows of one nucleus class split by dataset, with the sums a ridge fit needs.

    Parameters
    ----------
    names, X, y, d, w : as returned by :func:`shiftcheck.predict.calibrate.collect`
    group_of : np.ndarray (N,)
        Leave-out unit (protein / shift list id) of every row.
    block_factors : dict, optional
        Block -> multiplier of the ridge strength for that block's columns (:func:`column_blocks`;
        the setting ``ridge_lambda.block_factors`` of one nucleus class); default 1 everywhere.
    huber : (c, passes), optional
        Fit with Huber loss instead of squares (:func:`huber_for`; see :meth:`fit`).
    """

    def __init__(self, names, X, y, d, w, group_of, block_factors: dict | None = None,
                 huber: tuple[float, int] | None = None):
        self.names, self.X, self.y, self.d, self.w = list(names), X, y, d, w
        self.group_of = np.asarray(group_of)
        self.huber = huber
        self.free = np.array([n == "const" for n in self.names])
        self.pen = penalty_factors(self.names, block_factors)
        self._index()
        self.G, self.b, self.s, self.W = {}, {}, {}, {}
        for k, r in self.rows.items():
            Xw = X[r] * w[r, None]
            self.G[k], self.b[k], self.s[k] = Xw.T @ X[r], Xw.T @ y[r], Xw.sum(axis=0)
            self.W[k] = float(w[r].sum())

    def _index(self):
        """Rows per dataset id, and the totals over all datasets (filled on first use)."""
        self.ids = np.unique(self.d)
        self.rows = {k: np.flatnonzero(self.d == k) for k in self.ids.tolist()}
        self.group = getattr(self, "group", None) or {k: int(self.group_of[r[0]]) for k, r in self.rows.items()}
        self.group = {k: self.group[k] for k in self.rows}
        n = np.array([self.rows[k].size for k in self.ids.tolist()])
        self._start, self._n = np.concatenate([[0], np.cumsum(n)[:-1]]).astype(int), n
        self._tot = self._grp = None

    def _sums(self, exclude_group=None):
        """(G, b, s, W) summed over every dataset not in ``exclude_group``: the total minus that
        group's part, so a leave-one-out fit costs one k×k subtraction instead of a sum over datasets."""
        if self._tot is None:
            keys = ("G", "b", "s", "W")
            self._tot = [sum(getattr(self, a)[k] for k in self.rows) for a in keys]
            self._grp = {}
            for k in self.rows:
                part = [getattr(self, a)[k] for a in keys]
                g = self.group[k]
                self._grp[g] = part if g not in self._grp else [x + y for x, y in zip(self._grp[g], part)]
        if exclude_group is None or exclude_group not in self._grp:
            return self._tot
        return [t - x for t, x in zip(self._tot, self._grp[exclude_group])]

    def _solve(self, keys, lam, offsets=None, exclude_group=None) -> np.ndarray:
        G, b, s_all, W = self._sums(exclude_group)
        if offsets:
            b = b - sum(offsets[k] * self.s[k] for k in keys)
        mu = s_all / W
        var = np.diag(G) / W - mu ** 2
        sd = np.sqrt(np.clip(var, 0.0, None))
        sd = np.where(sd > 1e-12, sd, 1.0)
        A = G / np.outer(sd, sd)
        A[np.diag_indices_from(A)] += np.where(self.free, 0.0, lam * self.pen) + 1e-10
        return np.linalg.solve(A, b / sd) / sd

    def _medians(self, res: np.ndarray) -> np.ndarray:
        """Median of ``res`` within each dataset id (order of ``self.ids``), from one sort."""
        v = res[np.lexsort((res, self.d))]
        lo, hi = self._start + (self._n - 1) // 2, self._start + self._n // 2
        return 0.5 * (v[lo] + v[hi])

    def fit(self, lam: float, iterations: int = 1, exclude_group=None):
        """(coefficients, offsets by dataset id) fitted on every dataset not in ``exclude_group``.

        With ``huber = (c, passes)`` the squared loss becomes Huber's on the residuals after the
        referencing offsets (Huber 1964, Ann. Math. Stat. 35:73), minimised by iteratively
        reweighted least squares (Holland & Welsch 1977, Commun. Stat. A6:813; both from memory):
        each pass refits with row weights w · min(1, c s / |r|), s = 1.4826 · median |r| of the
        plain fit (held fixed), r the previous pass's residuals; ``passes`` passes."""
        if self.huber is None:
            return self._fit_plain(lam, iterations, exclude_group)
        c, passes = self.huber
        keep = np.ones(self.y.shape, bool) if exclude_group is None else self.group_of != exclude_group
        sub = self.subset(keep) if exclude_group is not None else copy.copy(self)
        sub.huber = None
        beta, off = sub._fit_plain(lam, iterations)
        r = sub.y - sub.X @ beta - np.array([off.get(k, 0.0) for k in sub.d.tolist()])
        s = 1.4826 * float(np.median(np.abs(r)))
        for _ in range(passes):
            u = np.minimum(1.0, c * s / np.maximum(np.abs(r), 1e-12))
            rw = GroupedRows(sub.names, sub.X, sub.y, sub.d, sub.w * u, sub.group_of)
            rw.pen = sub.pen
            beta, off = rw._fit_plain(lam, iterations)
            r = sub.y - sub.X @ beta - np.array([off.get(k, 0.0) for k in sub.d.tolist()])
        return beta, off

    def _fit_plain(self, lam: float, iterations: int = 1, exclude_group=None):
        """Weighted ridge with referencing offsets (squared loss), from the per-dataset sums."""
        keys = [k for k in self.rows if exclude_group is None or self.group[k] != exclude_group]
        beta = self._solve(keys, lam, exclude_group=exclude_group)
        pos = {k: i for i, k in enumerate(self.ids.tolist())}
        idx = np.array([pos[k] for k in keys], dtype=int)
        offsets = {}
        for _ in range(iterations):
            off = self._medians(self.y - self.X @ beta)[idx]
            off -= np.median(off)
            offsets = dict(zip(keys, off.tolist()))
            beta = self._solve(keys, lam, offsets, exclude_group)
        return beta, offsets

    def loo(self, lam: float, iterations: int = 1) -> np.ndarray:
        """Leave-one-group-out predictions of y for every row (NaN if only one group)."""
        pred = np.full(self.y.shape, np.nan)
        groups = np.unique(self.group_of)
        if groups.size < 2:
            return pred
        for g in groups:
            beta, _ = self.fit(lam, iterations, exclude_group=int(g))
            test = self.group_of == g
            pred[test] = self.X[test] @ beta
        return pred

    def loo_error(self, lam: float, iterations: int = 1, exclude_group=None) -> float:
        """Pooled leave-one-group-out RMSD (each group's median residual removed), optionally on
        the data without ``exclude_group`` (for nested selection)."""
        keep = np.ones(self.y.shape, bool) if exclude_group is None else self.group_of != exclude_group
        sub = self if exclude_group is None else self.subset(keep)
        pred = sub.loo(lam, iterations)
        return pooled_error(sub.y, pred, sub.w, sub.group_of)

    def with_huber(self, huber: tuple[float, int] | None) -> "GroupedRows":
        """The same rows with another loss (None: squares; (c, passes): Huber, see :meth:`fit`)."""
        new = copy.copy(self)
        new.huber = huber
        return new

    def with_block_factors(self, block_factors: dict | None) -> "GroupedRows":
        """The same rows and sums with other block-wise ridge strengths (for their selection)."""
        new = copy.copy(self)
        new.pen = penalty_factors(self.names, block_factors)
        return new

    def subset(self, mask: np.ndarray) -> "GroupedRows":
        """The rows of ``mask`` (whole datasets), reusing their sums (for nested selection)."""
        new = object.__new__(GroupedRows)
        new.names, new.free, new.pen, new.huber = self.names, self.free, self.pen, self.huber
        new.X, new.y, new.d, new.w = self.X[mask], self.y[mask], self.d[mask], self.w[mask]
        new.group_of = self.group_of[mask]
        new.group = self.group
        new._index()
        for a in ("G", "b", "s", "W"):
            setattr(new, a, {k: getattr(self, a)[k] for k in new.rows})
        return new


def centred_residuals(y, pred, group_of) -> tuple[np.ndarray, np.ndarray]:
    """(r = y − pred with each group's median residual removed, finite mask)."""
    r = y - pred
    ok = np.isfinite(r)
    for g in np.unique(group_of[ok]):
        s = ok & (group_of == g)
        r[s] -= np.median(r[s])
    return r, ok


def pooled_error(y, pred, w, group_of) -> float:
    """Pooled weighted RMSD of y − pred after removing each group's median residual."""
    r, ok = centred_residuals(y, pred, group_of)
    return float(np.sqrt(np.average(r[ok] ** 2, weights=w[ok]))) if ok.any() else float("nan")


def tail_scale(y, pred, group_of, tail: float) -> float:
    """Scale s with P(|r| > 3 s) = 1 − ``tail`` on residuals r = y − pred (each group's median
    removed): the ``tail`` quantile of |r| divided by 3; NaN without residuals."""
    r, ok = centred_residuals(y, pred, group_of)
    return float(np.quantile(np.abs(r[ok]), tail) / 3.0) if ok.any() else float("nan")


def _shrunk_ratios(r: np.ndarray, res_type: np.ndarray, n0: float) -> dict[str, float]:
    """RMS of each residue type's residuals over the pooled RMS, shrunk towards 1 in log space
    with weight k / (k + n0) for a type with k residuals (n0 = inf: every ratio 1)."""
    rms = float(np.sqrt(np.mean(r ** 2)))
    types, code = np.unique(res_type, return_inverse=True)
    k = np.bincount(code, minlength=types.size)
    ms = np.bincount(code, weights=r ** 2, minlength=types.size) / k
    out = {}
    for t, kt, m in zip(types.tolist(), k.tolist(), ms.tolist()):
        raw = float(np.sqrt(m)) / rms if rms > 0 else 1.0
        out[str(t)] = 1.0 if not np.isfinite(n0) or raw <= 0 else float(np.exp(kt / (kt + n0) * np.log(raw)))
    return out


def residue_factors(r: np.ndarray, res_type: np.ndarray, n0: float, tail: float) -> dict[str, float]:
    """Residue-type factors F_t of the expected error: σ of an atom of type t = σ_class · F_t.

    ``r``: held-out residuals of one nucleus class (each protein's median removed), ``res_type``:
    the residue name of each. The shape of F is the shrunk RMS ratio f_t of
    :func:`_shrunk_ratios`; its scale is set so that σ_class · F_t stays tail-matched over the
    whole class: F_t = f_t · q(|r| / f) / q(|r|), with q the ``tail`` quantile, i.e. the pooled
    fraction of |z| > 3 is that of the class-wide σ (``tail_scale``).
    """
    r, res_type = np.asarray(r, float), np.asarray(res_type).astype(str)
    f = _shrunk_ratios(r, res_type, n0)
    fa = np.array([f[t] for t in res_type])
    k = float(np.quantile(np.abs(r / fa), tail) / np.quantile(np.abs(r), tail))
    return {t: v * k for t, v in f.items()}


def heldout_sigma(r, res_type, group_of, n0: float, tail: float) -> np.ndarray:
    """σ of every residual as predicted without its own group: the other groups' shrunk ratios
    (:func:`_shrunk_ratios`) times their tail-matched scale (the ``tail`` quantile of |r / f| / 3)."""
    r, res_type, group_of = np.asarray(r, float), np.asarray(res_type).astype(str), np.asarray(group_of)
    types, code = np.unique(res_type, return_inverse=True)
    sig = np.empty(r.size)
    for g in np.unique(group_of):
        tr, te = group_of != g, group_of == g
        f = _shrunk_ratios(r[tr], res_type[tr], n0)
        fv = np.array([f.get(str(t), 1.0) for t in types])       # a type absent from the others: 1
        s = float(np.quantile(np.abs(r[tr] / fv[code[tr]]), tail) / 3.0)
        sig[te] = s * fv[code[te]]
    return sig


def choose_residue_shrinkage(r, res_type, group_of, grid, tail: float) -> tuple[float, dict[float, float]]:
    """The shrinkage n0 of ``grid`` (plus inf = one σ for the class) with the lowest held-out
    Gaussian negative log-likelihood per residual, Σ [log σ + z²/2] / N, each protein's σ taken
    from the other proteins (:func:`heldout_sigma`) and all of them scaled by one factor so that
    |z| > 3 occurs at the normal rate over the held-out residuals (as the shipped factors are).
    Returns (n0, {n0: mean NLL}); ties go to the larger n0 (more shrinkage)."""
    r, res_type, group_of = np.asarray(r, float), np.asarray(res_type).astype(str), np.asarray(group_of)
    out = {}
    for n0 in [float(v) for v in grid] + [float("inf")]:
        sig = heldout_sigma(r, res_type, group_of, n0, tail)
        sig = sig * float(np.quantile(np.abs(r / sig), tail) / 3.0)     # tail-matched as shipped
        out[n0] = float(np.mean(np.log(sig) + 0.5 * (r / sig) ** 2))
    best = min(out, key=lambda k: (round(out[k], 9), -k))
    return best, out


def choose_lambda(rows: GroupedRows, grid, iterations: int = 1) -> tuple[float, dict[float, float]]:
    """The λ of ``grid`` with the lowest leave-one-group-out RMSD; returns (λ, {λ: RMSD})."""
    errs = {float(lam): rows.loo_error(float(lam), iterations) for lam in grid}
    best = min(errs, key=lambda k: (round(errs[k], 9), k))
    return best, errs
