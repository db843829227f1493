"""Random-coil shifts with the published corrections: preceding Pro, cis-Pro, disulfides, T, pH.

The table is Wishart et al. 1995 (J. Biomol. NMR 5:67; Ac-GGXGG-NH2 peptides, DSS referencing),
typed from memory and stored with its sources in ``shiftcheck/data/random_coil.json``.
Corrections applied here:

* residue followed by proline (Wishart et al. 1995, nearest-neighbour effects);
* cis Xaa-Pro bond (|ω| < 90°): CB offset (Schubert et al. 2002, J. Biomol. NMR 24:149);
* disulfide-bonded cysteine (SG-SG below the table's distance) uses the oxidised entry
  (Sharma & Rajarathnam 2000, J. Biomol. NMR 18:165, CB near 41 vs 28 ppm);
* temperature: linear, δ(T) = δ(T0) + c·(T − T0), in the form of Kjaergaard, Brander & Poulsen 2011
  (J. Biomol. NMR 49:139; citation from memory);
* pH: His ring protons by a Henderson-Hasselbalch titration relative to the table's pH.
"""
from __future__ import annotations

import json
from functools import lru_cache
from typing import TYPE_CHECKING

import numpy as np

from ..datafiles import load_data

if TYPE_CHECKING:
    from ..structure.ensemble import Ensemble

__all__ = ["load_table", "table_value", "random_coil", "temperature_correction", "ph_correction",
           "disulfide_mask", "cis_mask"]


@lru_cache(maxsize=4)
def _load(path: str | None) -> dict:
    if path is None:
        return load_data("random_coil.json")
    with open(path, encoding="utf-8") as fh:
        return json.loads(fh.read())


def load_table(path: str | None = None) -> dict:
    """The random-coil table (dict as stored in the JSON file)."""
    return _load(path)


def _methyl_key(atom_id: str) -> str:
    # HB1 -> HB, HG21 -> HG2, HD13 -> HD1, HE2 -> HE (Met)
    if len(atom_id) == 4:
        return atom_id[:3]
    return atom_id[:2]


def table_value(table: dict, comp_id: str, atom_id: str) -> float:
    """Random-coil shift of one atom from the table (NaN if the table has none).

    ``comp_id`` may be 'CYSS' for a disulfide-bonded cysteine.
    """
    bb = table["backbone"]
    if atom_id in ("HA2", "HA3") and comp_id == "GLY":
        return float(table["glycine_alpha"]["values"][atom_id])
    if atom_id in bb["atoms"]:
        row = bb["values"].get(comp_id)
        sup = table.get("backbone_supplement", {}).get("values", {}).get(comp_id, {})
        if atom_id in sup:
            return float(sup[atom_id])
        if row is None:
            return float("nan")
        v = row[bb["atoms"].index(atom_id)]
        return float("nan") if v is None else float(v)
    res = "CYS" if comp_id == "CYSS" else comp_id
    met = table["methyl"]["values"].get(res, {})
    if atom_id[:1] == "H" and _methyl_key(atom_id) in met and atom_id[-1:] in "123":
        return float(met[_methyl_key(atom_id)])
    aro = table["aromatic"]["values"].get(res, {})
    if atom_id in aro:
        return float(aro[atom_id])
    if atom_id[:2] in aro and len(atom_id) == 3:  # HD1/HD2 -> HD, HE1/HE2 -> HE (Phe, Tyr)
        return float(aro[atom_id[:2]])
    return float("nan")


def temperature_correction(table: dict, nucleus: np.ndarray, temperature_K: float | None) -> np.ndarray:
    """Linear temperature correction c·(T − T0) per atom (zeros when T is unknown)."""
    nucleus = np.asarray(nucleus)
    if temperature_K is None or not np.isfinite(temperature_K):
        return np.zeros(nucleus.shape)
    t = table["temperature"]
    coeff = np.array([t["coeff_ppm_per_K"].get(str(n), 0.0) for n in nucleus])
    return coeff * (float(temperature_K) - float(t["T0_K"]))


def _his_fraction(pH: float, pKa: float) -> float:
    return 1.0 / (1.0 + 10.0 ** (pH - pKa))


def ph_correction(table: dict, comp_id: np.ndarray, atom_id: np.ndarray, pH: float | None) -> np.ndarray:
    """His ring-proton shift change between the table's pH and ``pH`` (zeros when unknown)."""
    comp_id = np.asarray(comp_id)
    out = np.zeros(comp_id.shape)
    if pH is None or not np.isfinite(pH):
        return out
    p = table["ph"]
    f, f0 = _his_fraction(pH, p["pKa"]), _his_fraction(p["pH0"], p["pKa"])
    for res, atoms in p["values"].items():
        for atom, lim in atoms.items():
            sel = (comp_id == res) & (np.asarray(atom_id) == atom)
            out[sel] = (f - f0) * (lim["protonated"] - lim["neutral"])
    return out


def disulfide_mask(ens: Ensemble, table: dict) -> np.ndarray:
    """(n_models, n_res) bool: Cys whose SG lies within the table's distance of another SG."""
    out = np.zeros((ens.n_models, ens.n_residues), bool)
    cys = np.flatnonzero(ens.res_name == "CYS")
    if cys.size < 2:
        return out
    sg = ens.xyz(cys, "SG")  # (m, k, 3)
    d = np.linalg.norm(sg[:, :, None, :] - sg[:, None, :, :], axis=-1)
    d[:, np.arange(cys.size), np.arange(cys.size)] = np.inf
    with np.errstate(invalid="ignore"):
        out[:, cys] = np.nanmin(np.where(np.isnan(d), np.inf, d), axis=2) < table["disulfide"]["max_sg_sg_A"]
    return out


def cis_mask(omega: np.ndarray) -> np.ndarray:
    """cis peptide bond where |ω| < 90° (NaN -> trans)."""
    with np.errstate(invalid="ignore"):
        return np.abs(omega) < 90.0


def random_coil(ens: Ensemble, res_index: np.ndarray, atom_id: np.ndarray, nucleus: np.ndarray,
                omega: np.ndarray, conditions=None, table: dict | None = None) -> np.ndarray:
    """Random-coil shift of each target atom in each model, (n_models, n) ppm.

    Parameters
    ----------
    ens : Ensemble
    res_index, atom_id, nucleus : arrays (n,)
        Targets (residue index, IUPAC atom name, nucleus class).
    omega : np.ndarray (n_models, n_res)
        ω of the peptide bond preceding each residue (for cis-Pro).
    conditions : SampleConditions, optional
        Temperature (K) and pH; corrections are skipped where None.
    """
    table = table or load_table()
    res_index = np.asarray(res_index)
    atom_id = np.asarray(atom_id)
    comp = ens.res_name[res_index].astype(str)
    seen: dict = {}                       # one table lookup per distinct (residue, atom)

    def value(c, a):
        k = (c, a)
        if k not in seen:
            seen[k] = table_value(table, c, a)
        return seen[k]

    pairs = list(zip(comp.tolist(), [str(a) for a in atom_id.tolist()]))
    base = np.array([value(c, a) for c, a in pairs]) if pairs else np.zeros(0)
    base_ox = (np.array([value("CYSS", a) if c == "CYS" else np.nan for c, a in pairs]) if pairs
               else np.zeros(0))
    out = np.broadcast_to(base, (ens.n_models, base.size)).copy()
    ss = disulfide_mask(ens, table)[:, res_index]
    out = np.where(ss & np.isfinite(base_ox), base_ox, out)
    # residue followed by proline
    nxt = np.minimum(res_index + 1, ens.n_residues - 1)
    pre_pro = (res_index + 1 < ens.n_residues) & (ens.res_name[nxt] == "PRO")
    pp = table["preceding_proline"]["values"]
    out += (pre_pro * np.array([pp.get(str(a), 0.0) for a in atom_id]))[None, :]
    # cis proline
    cp = table["cis_proline"]["values"]
    cis_off = np.array([cp.get(str(a), 0.0) if c == "PRO" else 0.0 for c, a in zip(comp, atom_id)])
    out += cis_mask(omega[:, res_index]) * cis_off[None, :]
    t = getattr(conditions, "temperature_K", None) if conditions is not None else None
    ph = getattr(conditions, "pH", None) if conditions is not None else None
    out += temperature_correction(table, nucleus, t)[None, :]
    out += ph_correction(table, comp, atom_id, ph)[None, :]
    return out
