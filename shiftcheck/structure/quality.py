"""Per-model geometry summary: steric clashes, chain breaks, Ramachandran outliers.

Shifts predicted from a model with interpenetrating atoms, a broken chain or impossible backbone
torsions mean little, so every scored model gets a geometry record (ranking is not changed).

* **Clashes** (Word et al. 1999, J. Mol. Biol. 285:1735): heavy-atom pairs whose van der Waals
  spheres (Bondi 1964, J. Phys. Chem. 68:441) overlap by at least 0.4 Å, i.e.
  ``d < r_i + r_j - 0.4``; pairs of N/O atoms (possible hydrogen bonds) only below 2.5 Å. Atoms
  separated by three or fewer covalent bonds are not tested. Reported per 1000 heavy atoms
  (the scale of all-atom clash scores, but without hydrogens, so the numbers are smaller), plus the
  count of pairs closer than 2.0 Å ("severe"). Clashes with the partner chains of a complex
  (:attr:`~shiftcheck.structure.ensemble.Ensemble.partners`) count with the chain's own, per 1000
  heavy atoms of the scored chain, and are also given apart (``partner_clashes``).
* **Chain breaks**: consecutive residues whose C(i)–N(i+1) distance exceeds 2.0 Å or where
  either atom is missing.
* **Ramachandran outliers**: (φ, ψ) outside the outer-limit allowed regions of the hard-sphere
  map (Ramachandran, Ramakrishnan & Sasisekharan 1963, J. Mol. Biol. 7:95; Ramakrishnan &
  Ramachandran 1965, Biophys. J. 5:909), approximated by rectangles typed in from memory
  (``shiftcheck/data/geometry_quality.json``); Gly and Pro have their own regions.

All models of an ensemble are searched at once: the models are laid side by side in space
(model k shifted by k x 10^4 Å along x), one k-d tree (scipy cKDTree) finds every close pair of
every model in one query, and pair ids map back to (model, atom, atom). Covalent separation
comes from the residue topology (the builder's parent-atom table plus ring closures, peptide
bonds and disulfides) as a sparse adjacency matrix raised to the third power.
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy import sparse
from scipy.spatial import cKDTree

from ..datafiles import load_data
from .geometry import backbone_torsions

__all__ = ["constants", "geometry_summary", "clash_pairs", "partner_clashes", "chain_breaks", "rama_outliers",
           "bonded_within", "is_bad", "describe", "result_geometry"]

_SPACING = 1.0e4


@lru_cache(maxsize=1)
def _constants() -> dict:
    return load_data("geometry_quality.json")


def constants() -> dict:
    """The geometry_quality.json table."""
    return _constants()


def _topology_value(ens, key: tuple, compute):
    """``compute()`` once per topology (residue and atom names, elements): kept with the
    ensemble's shared name lookups (:meth:`Ensemble._cache`), so the files and the model runs
    of one decoy set reuse it."""
    c = ens._cache().setdefault("quality", {})
    names, el = np.asarray(ens.res_name).astype(str), np.asarray(ens.element).astype(str)
    full = key + (names.dtype.str, names.tobytes(), el.dtype.str, el.tobytes())
    if full not in c:
        if len(c) >= 64:
            c.clear()
        c[full] = compute()
    return c[full]


def _heavy(ens) -> np.ndarray:
    el = np.char.upper(ens.element.astype(str))
    return (el != "H") & (el != "D")


def _topology_bonds(ens) -> tuple[np.ndarray, np.ndarray]:
    """Covalent bonds (i, j) between heavy atoms from residue templates, not from distances."""
    from .builder import geometry_table

    side = geometry_table()["sidechain"]
    rings = constants()["ring_closures"]
    pairs = []
    starts = set(getattr(ens, "chain_starts", (0,)))          # a chain junction is no bond
    bb = [("N", "CA"), ("CA", "C"), ("C", "O"), ("CA", "CB"), ("C", "OXT")]
    for r in range(ens.n_residues):
        rn = str(ens.res_name[r])
        bonds = bb + [(row[0], row[3]) for row in side.get(rn, [])] + [tuple(x) for x in rings.get(rn, [])]
        for a, b in bonds:
            i, j = ens.index(r, a), ens.index(r, b)
            if i >= 0 and j >= 0:
                pairs.append((i, j))
        if r + 1 < ens.n_residues and r + 1 not in starts:     # peptide bond to the next residue
            i, j = ens.index(r, "C"), ens.index(r + 1, "N")
            if i >= 0 and j >= 0:
                pairs.append((i, j))
    p = np.array(pairs, dtype=np.int64).reshape(-1, 2)
    return p[:, 0], p[:, 1]


def _stack_pairs(xyz: np.ndarray, ok: np.ndarray, r: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """All pairs closer than ``r`` in every model: (model, i, j) arrays, i < j (atom indices)."""
    n_models, n_atoms = xyz.shape[:2]
    flat = xyz.reshape(-1, 3).copy()
    flat[:, 0] += np.repeat(np.arange(n_models) * _SPACING, n_atoms)
    keep = np.flatnonzero(ok.reshape(-1))
    if keep.size < 2:
        e = np.zeros(0, dtype=np.int64)
        return e, e, e
    pr = cKDTree(flat[keep]).query_pairs(r, output_type="ndarray")
    a, b = keep[pr[:, 0]], keep[pr[:, 1]]
    m, i, j = a // n_atoms, a % n_atoms, b % n_atoms
    return m, np.minimum(i, j), np.maximum(i, j)


def bonded_within(ens, n_bonds: int | None = None) -> sparse.csr_matrix:
    """Boolean sparse (n_atoms, n_atoms): atoms separated by <= n_bonds covalent bonds.

    Bonds: residue templates, peptide bonds, and SG-SG disulfides closer than
    ``disulfide_max`` in any model.
    """
    c = constants()
    n_bonds = int(c["bond_exclusion"]["value"]) if n_bonds is None else n_bonds
    sg = (ens.atom_name.astype(str) == "SG")
    si = sj = np.zeros(0, np.int64)
    if sg.sum() > 1:
        ok = np.isfinite(ens.coords).all(axis=-1) & sg[None, :]
        _, si, sj = _stack_pairs(ens.coords, ok, float(c["disulfide_max"]["value"]))
        if si.size:                                  # each bonded pair once (found in every model)
            si, sj = np.unique(np.stack([si, sj], axis=1), axis=0).T
    # the same topology and disulfides give the same matrix (kept per topology)
    key = ("bonded", n_bonds, np.asarray(si, np.int64).tobytes(), np.asarray(sj, np.int64).tobytes())
    return _topology_value(ens, key, lambda: _bonded_matrix(ens, si, sj, n_bonds)).copy()


def _bonded_matrix(ens, si, sj, n_bonds: int) -> sparse.csr_matrix:
    i, j = _topology_bonds(ens)
    i, j = np.concatenate([i, si]), np.concatenate([j, sj])
    n = ens.n_atoms
    A = sparse.coo_matrix((np.ones(i.size), (i, j)), shape=(n, n)).tocsr()
    A = ((A + A.T + sparse.identity(n, format="csr")) > 0).astype(np.float64)
    R = A.copy()
    for _ in range(n_bonds - 1):
        R = ((R @ A) > 0).astype(np.float64)
    return R.tocsr()


def clash_pairs(ens) -> dict[str, np.ndarray]:
    """Clashing heavy-atom pairs of every model.

    Returns dict with arrays ``model``, ``i``, ``j``, ``distance``, ``limit`` (one entry per
    clashing pair) and ``severe`` (bool: distance < severe_distance).
    """
    c = constants()
    heavy = _heavy(ens)
    ok = np.isfinite(ens.coords).all(axis=-1) & heavy[None, :]
    radii = c["vdw_radius"]
    default = float(c["vdw_radius_default"]["value"])
    el = np.char.upper(ens.element.astype(str))
    rad = _topology_value(ens, ("radii",), lambda: np.array(
        [float(radii.get(e.capitalize(), radii.get(e, default))) for e in el]))
    overlap = float(c["clash_overlap"]["value"])
    rmax = 2 * float(rad[heavy].max() if heavy.any() else default) - overlap
    m, i, j = _stack_pairs(ens.coords, ok, rmax)
    excl = np.asarray(bonded_within(ens)[i, j]).ravel() > 0 if i.size else np.zeros(0, bool)
    m, i, j = m[~excl], i[~excl], j[~excl]
    d = np.linalg.norm(ens.coords[m, i] - ens.coords[m, j], axis=-1)
    limit = rad[i] + rad[j] - overlap
    polar = np.isin(el[i], ["N", "O"]) & np.isin(el[j], ["N", "O"])
    limit = np.where(polar, np.minimum(limit, float(c["polar_contact_min"]["value"])), limit)
    hit = d < limit
    return {"model": m[hit], "i": i[hit], "j": j[hit], "distance": d[hit], "limit": limit[hit],
            "severe": d[hit] < float(c["severe_distance"]["value"])}


def partner_clashes(ens) -> tuple[np.ndarray, np.ndarray]:
    """Clashing heavy-atom pairs between the chain and its partner chains
    (:attr:`~shiftcheck.structure.ensemble.Ensemble.partners`), per model: (all, severe),
    two int arrays (n_models,); zeros without partners. Same rule as :func:`clash_pairs`."""
    from .ensemble import with_partners

    zero = np.zeros(ens.n_models, dtype=np.int64)
    if not ens.partners:
        return zero, zero.copy()
    cl = clash_pairs(with_partners(ens))
    inter = (cl["i"] < ens.n_atoms) & (cl["j"] >= ens.n_atoms)     # i < j: i in the chain
    m = cl["model"][inter]
    return (np.bincount(m, minlength=ens.n_models),
            np.bincount(m[cl["severe"][inter]], minlength=ens.n_models))


def chain_breaks(ens) -> np.ndarray:
    """Bool (n_models, n_res - 1): True where C(i)–N(i+1) is longer than the limit or missing."""
    r = np.arange(ens.n_residues)
    C, N = ens.xyz(r, "C"), ens.xyz(r, "N")
    d = np.linalg.norm(N[:, 1:] - C[:, :-1], axis=-1)
    with np.errstate(invalid="ignore"):
        return ~(d <= float(constants()["chain_break_cn"]["value"]))


def _inside(phi: np.ndarray, psi: np.ndarray, boxes) -> np.ndarray:
    b = np.asarray(boxes, dtype=float)                      # (k, 4)
    ph, ps = phi[..., None], psi[..., None]
    return np.any((ph >= b[:, 0]) & (ph <= b[:, 1]) & (ps >= b[:, 2]) & (ps <= b[:, 3]), axis=-1)


def rama_outliers(ens, phi: np.ndarray | None = None, psi: np.ndarray | None = None):
    """(outlier bool (n_models, n_res), defined bool (n_models, n_res)) by the documented regions."""
    if phi is None or psi is None:
        t = backbone_torsions(ens)
        phi, psi = t["phi"], t["psi"]
    reg = constants()["ramachandran"]
    defined = np.isfinite(phi) & np.isfinite(psi)
    ph, ps = np.nan_to_num(phi), np.nan_to_num(psi)
    allowed = _inside(ph, ps, reg["general"])
    names = ens.res_name.astype(str)
    for cls in ("GLY", "PRO"):
        sel = names == cls
        if sel.any():
            allowed[:, sel] = _inside(ph[:, sel], ps[:, sel], reg[cls])
    return defined & ~allowed, defined


def geometry_summary(ens) -> list[dict]:
    """One record per model: counts, rates and the first few offending residues."""
    heavy = _heavy(ens)
    n_heavy = (np.isfinite(ens.coords).all(axis=-1) & heavy[None, :]).sum(axis=1)
    cl = clash_pairs(ens)
    br = chain_breaks(ens)
    out_r, defined = rama_outliers(ens)
    p_cl, p_sev = partner_clashes(ens)           # with partner chains: counted with the chain's own
    n_cl = np.bincount(cl["model"], minlength=ens.n_models) + p_cl
    n_sev = np.bincount(cl["model"][cl["severe"]], minlength=ens.n_models) + p_sev
    recs = []
    for k in range(ens.n_models):
        nd = int(defined[k].sum())
        per = 1000.0 / max(1, int(n_heavy[k]))
        recs.append({
            "model": ens.model_names[k], "heavy_atoms": int(n_heavy[k]),
            "clashes": int(n_cl[k]), "clashes_per_1000": round(float(n_cl[k]) * per, 2),
            "severe_pairs": int(n_sev[k]), "severe_per_1000": round(float(n_sev[k]) * per, 2),
            "partner_clashes": int(p_cl[k]),
            "chain_breaks": int(br[k].sum()),
            "break_after": [ens.residue_label(int(i)) for i in np.flatnonzero(br[k])[:5]],
            "rama_outliers": int(out_r[k].sum()), "rama_residues": nd,
            "rama_outliers_pct": round(100.0 * float(out_r[k].sum()) / nd, 2) if nd else None,
            "rama_outlier_residues": [ens.residue_label(int(i)) for i in np.flatnonzero(out_r[k])[:5]],
        })
        recs[-1]["bad"], recs[-1]["reasons"] = is_bad(recs[-1])
    return recs


def is_bad(rec: dict) -> tuple[bool, list[str]]:
    """The warning rule of geometry_quality.json: (bad?, reasons)."""
    w = constants()["warning"]
    why = []
    if rec["clashes_per_1000"] > w["clashes_per_1000"]:
        why.append(f"{rec['clashes_per_1000']:g} clashes per 1000 atoms (> {w['clashes_per_1000']:g})")
    if rec["severe_per_1000"] > w["severe_per_1000"]:
        why.append(f"{rec['severe_pairs']} atom pairs closer than "
                   f"{constants()['severe_distance']['value']:g} A")
    if rec["chain_breaks"] > w["chain_breaks"]:
        why.append(f"{rec['chain_breaks']} chain break(s)")
    pct = rec["rama_outliers_pct"]
    if pct is not None and pct > w["rama_outliers_pct"]:
        why.append(f"{pct:g} % Ramachandran outliers (> {w['rama_outliers_pct']:g} %)")
    return bool(why), why


def describe(rec: dict) -> str:
    """One line for the console/report, e.g. 'clashes 1.2/1000 (0 < 2 A), 0 breaks, Rama 0.0 %'."""
    pct = "-" if rec["rama_outliers_pct"] is None else f"{rec['rama_outliers_pct']:.1f} %"
    inter = f", {rec['partner_clashes']} with partner chains" if rec.get("partner_clashes") else ""
    return (f"clashes {rec['clashes_per_1000']:.1f}/1000 atoms ({rec['severe_pairs']} < "
            f"{constants()['severe_distance']['value']:g} A{inter}), {rec['chain_breaks']} chain breaks, "
            f"Ramachandran outliers {pct}")


def result_geometry(res) -> dict[str, dict]:
    """Geometry record per scored model of a ScoreResult (``name#mean`` entries have none).

    Computed once and kept on the result object (attribute ``_geometry``).
    """
    got = getattr(res, "_geometry", None)
    if got is None:
        got = {}
        for ens in res.ensembles:
            for rec in geometry_summary(ens):
                got[rec["model"]] = rec
        try:
            res._geometry = got
        except AttributeError:          # a frozen/slotted result: just recompute next time
            pass
    return got


def summary_lines(records: list[dict], limit: int = 30) -> list[str]:
    """Text lines for the console and the report: one per model, then one per bad model."""
    if not records:
        return []
    lines = [f"  {str(r['model'])[:28]:<28} {describe(r)}" + ("  WARNING" if r.get("bad") else "")
             for r in records[:limit]]
    if len(records) > limit:
        lines.append(f"  ... {len(records) - limit} more in ranking.csv")
    bad = [r for r in records if r.get("bad")]
    if bad:
        lines.append(f"  Warning: {len(bad)} of {len(records)} models have geometry that cannot be "
                     "trusted (their predicted shifts mean little; ranked all the same):")
        for r in bad[:8]:
            lines.append(f"    {r['model']}: " + "; ".join(r.get("reasons") or []))
        if len(bad) > 8:
            lines.append(f"    ... {len(bad) - 8} more (summary.json geometry)")
    return lines
