"""Data checks that need no structure (``shiftcheck check SHIFTS``; also run by ``score``).

Rules (tables and sources in shiftcheck/data/shift_ranges.json):

* ``range`` - value outside the usual range of its nucleus class (or isotope, for other atoms).
* ``placeholder`` - a value used to mean "not measured" (0, 999, -999, ...) or not a number.
* ``duplicate`` - the same atom of the same residue listed more than once.
* ``ca_cb_swap`` - the measured CA-CB difference d fits the random-coil difference d_rc better
  with CA and CB exchanged: |d - d_rc| - |-d - d_rc| > margin (4 ppm, the largest usual
  secondary-shift change of CA-CB). Random-coil CA/CB from Wishart et al. 1995 (from memory).
  This handles Ser and Thr, whose CB lies above CA, without special cases.
* ``cis_pro`` - Pro CB-CG > 7 ppm suggests a cis Xaa-Pro bond (Schubert et al. 2002).
  With models: compared with the model's omega.
* ``duplicate`` (from the reader's repeats), ``unknown_atom``, ``residue_conflict`` - see
  :mod:`shiftcheck.score.datacheck_rows`.
* ``cys_redox`` - Cys CB < 32 ppm suggests reduced, > 35 ppm oxidised (Sharma & Rajarathnam
  2000). With models: compared with the model's disulfides (SG-SG < 2.5 A); a finding only when
  they disagree (without models, a note on the state read from the shifts).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from ..chem.nuclei import entity_ends, nucleus_class
from ._constants import shift_ranges
from .findings import Finding

if TYPE_CHECKING:
    from collections.abc import Sequence
    from ..shiftlist import ShiftList
    from ..structure.ensemble import Ensemble
    from ..structure.mapping import Mapping

__all__ = ["Finding", "check_shifts", "check_against_models", "model_states", "apply_model_states"]


def _srcs() -> dict:
    t = shift_ranges()
    return {"range": t["ranges"]["source"], "placeholder": t["placeholders"]["source"],
            "duplicate": "common practice, no source", "ca_cb_swap": t["random_coil_ca_cb"]["source"]
            + "; " + t["ca_cb_swap_margin"]["source"], "cis_pro": t["pro_cb_cg"]["source"],
            "cys_redox": t["cys_cb"]["source"]}


def check_shifts(shifts: ShiftList) -> list[Finding]:
    """Run the structure-free checks on a ShiftList; findings ordered by Seq_ID."""
    t = shift_ranges()
    src = _srcs()
    ranges = t["ranges"]
    placeholders = set(float(x) for x in t["placeholders"]["values"])
    out: list[Finding] = []
    seen: dict[tuple[int, str], float] = {}
    per_res: dict[int, dict[str, float]] = {}
    comp_of: dict[int, str] = {}
    first_seq = entity_ends(shifts)[0]   # its N is a free amine (about 30-40 ppm), not an amide
    from .datacheck_rows import check_rows

    out += check_rows(shifts)                          # repeats, unknown atoms, residue conflicts
    for p in getattr(shifts, "placeholders", ()):     # set aside by the reader
        out.append(Finding(int(p["seq_id"]), str(p["comp_id"]), str(p["atom_id"]), "placeholder",
                           f"line {p['line']}: {p['atom_id']} = {p['value']:g} ppm looks like a "
                           "placeholder, not a measurement; left out of the comparison",
                           src["placeholder"]))
    for sid, comp, atom, iso, val in zip(shifts.seq_id, shifts.comp_id, shifts.atom_id,
                                         shifts.atom_type, shifts.value):
        sid, comp, atom, val = int(sid), str(comp), str(atom), float(val)
        comp_of[sid] = comp
        if (sid, atom) in seen:
            out.append(Finding(sid, comp, atom, "duplicate",
                               f"{atom} listed more than once ({seen[(sid, atom)]:.3f} and {val:.3f} ppm)",
                               src["duplicate"]))
            continue
        seen[(sid, atom)] = val
        if not np.isfinite(val) or val in placeholders:
            out.append(Finding(sid, comp, atom, "placeholder",
                               f"{atom} = {val:g} ppm looks like a placeholder, not a measurement",
                               src["placeholder"]))
            continue
        per_res.setdefault(sid, {})[atom] = val
        cls = nucleus_class(comp, atom)
        rng = ranges.get(cls) if cls else ranges.get(f"isotope_{str(iso)[:1].upper()}")
        if cls == "N" and sid == first_seq and not (rng["low"] <= val <= rng["high"]):
            cls, rng = "N-terminal amine N", ranges["N_terminal_amine"]
        if rng and not (rng["low"] <= val <= rng["high"]):
            what = cls or f"{str(iso)[:1].upper()} atoms"
            out.append(Finding(sid, comp, atom, "range",
                               f"{atom} = {val:.3f} ppm outside the usual range of {what} "
                               f"({rng['low']:g} to {rng['high']:g} ppm)", rng["source"]))
    rc = t["random_coil_ca_cb"]
    margin = float(t["ca_cb_swap_margin"]["value"])
    pro, cys = t["pro_cb_cg"], t["cys_cb"]
    for sid in sorted(per_res):
        a, comp = per_res[sid], comp_of[sid]
        if "CA" in a and "CB" in a and comp in rc:
            d = a["CA"] - a["CB"]
            d_rc = rc[comp][0] - rc[comp][1]
            if comp == "CYS":   # either redox state may apply: use the closer one
                d_rc = min((rc["CYS"][0] - rc["CYS"][1], rc["CYX"][0] - rc["CYX"][1]),
                           key=lambda x: abs(d - x))
            if abs(d - d_rc) - abs(-d - d_rc) > margin:
                out.append(Finding(sid, comp, "CA/CB", "ca_cb_swap",
                                   f"CA {a['CA']:.2f} and CB {a['CB']:.2f} ppm fit the random-coil "
                                   f"CA-CB difference ({d_rc:+.1f} ppm) better when exchanged",
                                   src["ca_cb_swap"]))
        if comp == "PRO" and "CB" in a and "CG" in a:
            dd = a["CB"] - a["CG"]
            state = "cis" if dd > pro["threshold"] else "trans"
            out.append(Finding(sid, comp, "CB/CG", "cis_pro",
                               f"CB-CG = {dd:.2f} ppm suggests a {state} peptide bond before this Pro "
                               f"(about {pro['trans']} trans, {pro['cis']} cis)", src["cis_pro"],
                               severity="note" if state == "trans" else "warning", state=state))
        if comp == "CYS" and "CB" in a:
            cb = a["CB"]
            state = ("reduced" if cb < cys["reduced_below"] else
                     "oxidised" if cb > cys["oxidised_above"] else "uncertain")
            out.append(Finding(sid, comp, "CB", "cys_redox",
                               f"CB = {cb:.2f} ppm suggests {state} (about {cys['reduced']} reduced, "
                               f"{cys['oxidised']} oxidised)", src["cys_redox"], severity="note",
                               state=state))
    return out


def check_against_models(findings: list[Finding], ensembles: Sequence[Ensemble], mappings: Sequence[Mapping]) -> list[Finding]:
    """Compare cis-Pro and Cys-redox notes with the models; returns the updated list.

    A cis/trans note becomes a warning when the models' omega (the peptide bond before the Pro:
    |omega| < 30 deg cis) disagrees in every model; a Cys note becomes a warning when the shift
    state disagrees with the disulfides of every model (SG-SG < 2.5 A, disulfide = oxidised).
    """
    return apply_model_states(findings, model_states(findings, ensembles, mappings))


def model_states(findings: list[Finding], ensembles: Sequence[Ensemble],
                 mappings: Sequence[Mapping]) -> dict[int, set]:
    """States the models show for each cis-Pro / Cys-redox finding: index -> set of
    'cis'/'trans' or 'oxidised'/'reduced'. Sets from batches of models merge by union."""
    from ..structure.geometry import backbone_torsions

    thr = float(shift_ranges()["disulfide_sg_sg"]["value"])
    states: dict[int, set] = {}
    cache = {}
    for fi, f in enumerate(findings):
        if f.rule not in ("cis_pro", "cys_redox") or not ensembles:
            continue
        verdicts = []
        for i, (ens, mp) in enumerate(zip(ensembles, mappings)):
            res = mp.seq_to_res.get(f.seq_id)
            if res is None:
                continue
            if f.rule == "cis_pro":
                if ("omega", i) not in cache:
                    cache[("omega", i)] = backbone_torsions(ens)["omega"]
                om = cache[("omega", i)][:, res]
                verdicts.append(np.where(np.abs(om) < 30, "cis", "trans"))
            else:
                if ("sg", i) not in cache:
                    sg_idx = np.flatnonzero(ens.res_name == "CYS")
                    cache[("sg", i)] = (sg_idx, ens.xyz(sg_idx, "SG"))
                sg_idx, sg = cache[("sg", i)]
                hit = np.flatnonzero(sg_idx == res)
                if not hit.size:          # the model has another residue type here
                    continue
                k = int(hit[0])
                has_sg = np.isfinite(sg[:, k, 0])     # models without this SG give no verdict
                if not has_sg.any():
                    continue
                d = np.linalg.norm(sg - sg[:, [k]], axis=-1)
                d[:, k] = np.inf
                with np.errstate(invalid="ignore"):
                    bonded = np.nanmin(np.where(np.isnan(d), np.inf, d), axis=1) < thr
                verdicts.append(np.where(bonded, "oxidised", "reduced")[has_sg])
        if verdicts:
            states[fi] = set(np.concatenate(verdicts).tolist())
    return states


def apply_model_states(findings: list[Finding], states: dict[int, set]) -> list[Finding]:
    """Findings with the notes the models contradict turned into warnings (see
    :func:`check_against_models`)."""
    out = []
    for fi, f in enumerate(findings):
        model_states = states.get(fi)
        if not model_states:
            out.append(f)
            continue
        if f.state in ("cis", "trans", "oxidised", "reduced") and f.state not in model_states:
            what = "/".join(sorted(model_states))
            out.append(Finding(f.seq_id, f.comp_id, f.atom_id, f.rule,
                               f.message + f"; the models say {what}", f.source, "warning", f.state))
        else:
            out.append(f)
    return out
