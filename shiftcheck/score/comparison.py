"""The common atom set: the (residue, atom) pairs every scored model is compared on.

A shift enters the comparison when it is measured, belongs to a scored nucleus class
(:func:`shiftcheck.chem.nuclei.nucleus_class`) and at least one model predicts it. Models are compared
atom by atom on what each has: where a model lacks the residue (not mapped, another residue type)
or the atom (a gap, a CA-only model, no side chains), its prediction is NaN and that model is
scored on the remaining atoms - one poor model no longer shrinks every other model's set
(:attr:`Comparison.absent` says which models lack what). Everything else is counted per reason
in :attr:`Comparison.left_out`.

Groups of equivalent protons (documented in docs/outputs.md):

* Methyl protons are one comparison: measured = mean of the listed values (normally one value
  repeated), predicted = mean of the three protons. The row is named after the first proton
  (e.g. Ala ``HB1``, Val ``HG11``/``HG21``).
* Phe/Tyr ring protons HD1/HD2 and HE1/HE2 are averaged on both sides (fast ring flips make
  them equivalent); named ``HD1`` / ``HE1``.
* Stereo pairs (Gly HA2/HA3, Val HG1*/HG2*, Leu HD1*/HD2*) whose assignment is not marked
  stereospecific (ambiguity code other than 1) are compared under the better of the two
  assignments, chosen per model (:func:`resolve_stereo`). A lone member of such a pair is
  compared with the mean prediction of both members.

Chain termini: the free amine of the first residue of the entity and the carboxylate of the last
change the nearby shifts by several ppm, and the predictor (like the random-coil tables it starts
from, which are measured inside peptides) has no term for them. So N, H and C of the first
residue of the entity sequence and C of the last are left out ("chain terminus"). The entity
sequence, not the model, defines the ends: a model that lacks a disordered tail has no real
terminus where its coordinates stop; but a model that continues past the end of the entity
sequence shows that the listed sequence is only part of the construct, and then there is no
terminus to leave out (:func:`shiftcheck.chem.nuclei.entity_ends`).
"""
from __future__ import annotations

import warnings
from collections import Counter
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from ..chem.nuclei import METHYL_PROTONS, at_chain_terminus, entity_ends, nucleus_class

if TYPE_CHECKING:
    from collections.abc import Sequence
    from ..predict.prediction import Prediction
    from ..shiftlist import ShiftList
    from ..structure.ensemble import Ensemble
    from ..structure.mapping import Mapping

__all__ = ["Comparison", "Entry", "Keys", "Projected", "comparison_keys", "project", "assemble",
           "build_comparison", "resolve_stereo", "group_name", "STEREO_PAIRS"]

# Methyl groups: IUPAC names of the three protons -> group name (first proton)
_METHYL_GROUP: dict[tuple[str, str], str] = {}
for _res, _names in METHYL_PROTONS.items():
    for _k in range(0, len(_names), 3):
        for _n in _names[_k:_k + 3]:
            _METHYL_GROUP[(_res, _n)] = _names[_k]
_RING_PAIR = {("PHE", "HD2"): "HD1", ("PHE", "HE2"): "HE1", ("TYR", "HD2"): "HD1", ("TYR", "HE2"): "HE1",
              ("PHE", "HD1"): "HD1", ("PHE", "HE1"): "HE1", ("TYR", "HD1"): "HD1", ("TYR", "HE1"): "HE1"}
#: Stereo pairs (group names) compared under the better of the two assignments.
STEREO_PAIRS: dict[str, tuple[str, str]] = {"GLY": ("HA2", "HA3"), "VAL": ("HG11", "HG21"),
                                            "LEU": ("HD11", "HD21")}


def group_name(comp_id: str, atom_id: str) -> str:
    """Name of the comparison row an atom belongs to (itself, or its methyl/ring group)."""
    key = (comp_id, atom_id)
    return _METHYL_GROUP.get(key) or _RING_PAIR.get(key) or atom_id


def _members(comp_id: str, gname: str) -> tuple[str, ...]:
    for names in (METHYL_PROTONS.get(comp_id, ()),):
        for k in range(0, len(names), 3):
            if names[k] == gname:
                return names[k:k + 3]
    if (comp_id, gname) in _RING_PAIR and comp_id in ("PHE", "TYR") and gname in ("HD1", "HE1"):
        return (gname, gname[:-1] + "2")
    return (gname,)


@dataclass
class Entry:
    """One scored model: a model of an ensemble, or an ensemble-mean prediction (``name#mean``)."""

    name: str
    ensemble: int
    model: int          # model index in the ensemble; -1 for the ensemble mean
    chain: str

    @property
    def is_mean(self) -> bool:
        return self.model < 0


@dataclass
class Comparison:
    """Measured and predicted shifts on the common atom set.

    Attributes
    ----------
    seq_id, comp_id, atom_id, nucleus, isotope : np.ndarray, shape (n,)
        Shift-list Seq_ID, residue name, row name (see module docstring), scoring class,
        'H'/'C'/'N'.
    measured : np.ndarray (n,)
        As in the file (group mean for methyl/ring groups), no referencing correction.
    ambiguous : np.ndarray of bool (n,)
        Stereo assignment not marked stereospecific.
    residue : np.ndarray of int (n,)
        Index of the residue (0..n_res-1) for resampling.
    predicted : np.ndarray (n_entries, n)
    entries : list of Entry
    left_out : dict reason -> count (shift-list atoms)
    left_out_examples : dict reason -> list of short labels (at most 10 each)
    absent : dict model name -> {'n_absent', 'n_compared', 'reasons'}
        Models that lack some compared atoms (missing residues, no side chains, CA only ...):
        ``predicted`` is NaN there for that model only, and it is scored on the rest.
    """

    seq_id: np.ndarray
    comp_id: np.ndarray
    atom_id: np.ndarray
    nucleus: np.ndarray
    isotope: np.ndarray
    measured: np.ndarray
    ambiguous: np.ndarray
    residue: np.ndarray
    predicted: np.ndarray
    entries: list[Entry]
    left_out: dict[str, int] = field(default_factory=dict)
    left_out_examples: dict[str, list[str]] = field(default_factory=dict)
    absent: dict[str, dict] = field(default_factory=dict)   # model -> atoms it lacks (NaN there)

    def __len__(self) -> int:
        return int(self.measured.shape[0])

    @property
    def n_residues(self) -> int:
        return int(self.residue.max()) + 1 if len(self) else 0

    @property
    def names(self) -> list[str]:
        return [e.name for e in self.entries]

    @property
    def is_mean(self) -> np.ndarray:
        return np.array([e.is_mean for e in self.entries], dtype=bool)


def _is_placeholder(v: np.ndarray, placeholders) -> np.ndarray:
    bad = ~np.isfinite(v)
    for p in placeholders:
        bad |= v == p
    return bad


_WHY = ("coordinates absent from this model", "residue not in the model", "residue type differs",
        "atom not in the model")


@dataclass
class Keys:
    """The measured comparison rows of a shift list (no model needed): see :func:`comparison_keys`."""

    keys: list
    measured: np.ndarray
    ambiguous: np.ndarray
    count: np.ndarray
    comp: np.ndarray
    members: list
    cls: list
    left: Counter
    examples: dict


@dataclass
class Projected:
    """One ensemble's predictions on the rows of a :class:`Keys` (``vals``: chunks of models,
    each (n_models_chunk, n_keys)); ``why`` codes into the reasons an atom is absent."""

    vals: list
    why: np.ndarray
    model_names: list
    chain: str
    name: str


def comparison_keys(shifts: ShiftList, ends, placeholders=(0.0, 999.0, -999.0)) -> Keys:
    """Measured groups of the shift list, in file order; ``ends`` from
    :func:`~shiftcheck.chem.nuclei.entity_ends` ((None, None): no terminus left out, the superset
    that per-batch projections use before every model's mapping is known)."""
    left: Counter = Counter()
    examples: dict[str, list[str]] = {}

    def leave(reason: str, label: str, count: int = 1) -> None:
        left[reason] += count
        ex = examples.setdefault(reason, [])
        if len(ex) < 10:
            ex.append(label)

    groups: dict[tuple[int, str], dict] = {}
    seen: set[tuple[int, str]] = set()
    for p in getattr(shifts, "placeholders", ()):      # set aside by the reader
        leave("placeholder or missing value", f"{p['seq_id']} {p['comp_id']} {p['atom_id']}")
    for sid, comp, atom, val, amb in zip(shifts.seq_id, shifts.comp_id, shifts.atom_id, shifts.value,
                                         shifts.ambiguity):
        sid, comp, atom = int(sid), str(comp), str(atom)
        label = f"{sid} {comp} {atom}"
        cls = nucleus_class(comp, atom)
        if cls is None:
            leave("not a scored nucleus", label)
            continue
        if at_chain_terminus(sid, atom, ends):
            leave("chain terminus", label)
            continue
        if (sid, atom) in seen:
            leave("duplicated atom (first value kept)", label)
            continue
        seen.add((sid, atom))
        if _is_placeholder(np.array([float(val)]), placeholders)[0]:
            leave("placeholder or missing value", label)
            continue
        g = groups.setdefault((sid, group_name(comp, atom)),
                              {"comp": comp, "cls": cls, "values": [], "amb": []})
        g["values"].append(float(val))
        g["amb"].append(int(amb))
    keys = list(groups)
    meas = np.array([np.mean(groups[k]["values"]) for k in keys]) if keys else np.zeros(0)
    amb = np.array([any(a != 1 for a in groups[k]["amb"]) for k in keys], dtype=bool)
    count = np.array([len(groups[k]["values"]) for k in keys], dtype=int)
    comp = np.array([groups[k]["comp"] for k in keys], dtype=object)
    present = {k for k in keys}
    members = []
    for (sid, g), c, a in zip(keys, comp, amb):
        mem = _members(c, g)
        pair = STEREO_PAIRS.get(c)
        if pair and g in pair and a:
            other = pair[1] if g == pair[0] else pair[0]
            if (sid, other) not in present:   # lone member of an ambiguous pair: mean of both
                mem = mem + _members(c, other)
        members.append(mem)
    return Keys(keys, meas, amb, count, comp, members, [groups[k]["cls"] for k in keys], left, examples)


def project(ck: Keys, ens, mp, pred) -> Projected:
    """Predictions of one ensemble on the rows of ``ck``: NaN where the model lacks the atom."""
    col = {(int(r), str(a)): j for j, (r, a) in enumerate(zip(pred.res_index, pred.atom_id))}
    vals = np.full((pred.n_models, len(ck.keys)), np.nan)
    why = np.zeros(len(ck.keys), dtype=np.uint8)
    for i, ((sid, g), c, mem) in enumerate(zip(ck.keys, ck.comp, ck.members)):
        res = mp.seq_to_res.get(sid)
        if res is None:
            why[i] = 1
            continue
        if str(ens.res_name[res]) != c:
            why[i] = 2
            continue
        js = [col[(res, m)] for m in mem if (res, m) in col]
        if not js:
            why[i] = 3
            continue
        with np.errstate(invalid="ignore"):
            vals[:, i] = pred.values[:, js].mean(axis=1)
    names = list(pred.model_names) or [f"{ens.name}#{k + 1}" for k in range(pred.n_models)]
    return Projected([vals], why, names, ens.chain_id, ens.name)


def build_comparison(shifts: ShiftList, ensembles: Sequence[Ensemble], mappings: Sequence[Mapping],
                     predictions: Sequence[Prediction], placeholders=(0.0, 999.0, -999.0),
                     include_mean: bool = True) -> Comparison:
    """Assemble the common atom set of all models of all ensembles.

    Parameters
    ----------
    shifts : ShiftList
    ensembles : list of Ensemble
    mappings : list of Mapping
        ``mappings[i].seq_to_res`` maps Seq_ID -> residue index of ``ensembles[i]``.
    predictions : list of Prediction
        One per ensemble (values of shape (n_models, n)).
    placeholders : sequence of float
        Values meaning "not measured"; such shifts are left out.
    include_mean : bool
        Add a ``name#mean`` entry (mean prediction over models) for multi-model ensembles.

    Returns
    -------
    Comparison
    """
    sup = comparison_keys(shifts, (None, None), placeholders)
    projected = [project(sup, e, m, p) for e, m, p in zip(ensembles, mappings, predictions)]
    return assemble(shifts, sup, ensembles, mappings, projected, placeholders, include_mean)


def assemble(shifts: ShiftList, sup: Keys, ensembles, mappings, projected: list,
             placeholders=(0.0, 999.0, -999.0), include_mean: bool = True) -> Comparison:
    """The :class:`Comparison` from per-ensemble projections on the superset rows ``sup``.

    ``ensembles`` need only ``n_residues`` (for the chain ends); ``projected[i]`` is released
    (set to None) once copied, so a streamed run holds the predictions once.
    """
    ck = comparison_keys(shifts, entity_ends(shifts, ensembles, [mp.seq_to_res for mp in mappings]),
                         placeholders)
    left, examples = ck.left, ck.examples
    where = {k: i for i, k in enumerate(sup.keys)}
    cols = np.array([where[k] for k in ck.keys], dtype=np.int64)
    keys, comp, count = ck.keys, ck.comp, ck.count
    n_rows = sum(sum(v.shape[0] for v in p.vals) + (1 if include_mean and sum(v.shape[0] for v in p.vals) > 1
                                                    else 0) for p in projected)
    allv = np.empty((n_rows, len(keys)))
    entries, absent = [], []
    row = 0
    for ei in range(len(projected)):
        p = projected[ei]
        projected[ei] = None
        start = row
        for v in p.vals:
            allv[row:row + v.shape[0]] = v[:, cols]
            row += v.shape[0]
        p.vals.clear()
        why = np.array(_WHY, dtype=object)[p.why[cols]]
        n_models = row - start
        for m in range(n_models):
            entries.append(Entry(p.model_names[m], ei, m, p.chain))
            absent.append(why)
        if include_mean and n_models > 1:
            entries.append(Entry(f"{p.name}#mean", ei, -1, p.chain))
            with np.errstate(invalid="ignore"), warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)
                allv[row] = np.nanmean(allv[start:row], axis=0)
            absent.append(None)
            row += 1
    keep = np.isfinite(allv).any(axis=0) if n_rows else np.zeros(len(keys), dtype=bool)
    for i in np.flatnonzero(~keep):
        (sid, g), c = keys[i], comp[i]
        left["not predicted in any model"] += count[i]
        ex = examples.setdefault("not predicted in any model", [])
        if len(ex) < 10:
            ex.append(f"{sid} {c} {g}")
    n_kept = int(keep.sum())
    per_entry = {}
    for k, (e, why) in enumerate(zip(entries, absent)):
        gone = keep & ~np.isfinite(allv[k])
        if why is not None and gone.any():
            per_entry[e.name] = {"n_absent": int(gone.sum()), "n_compared": n_kept - int(gone.sum()),
                                 "reasons": dict(Counter(why[gone].tolist()))}
    predicted = allv if keep.all() else allv[:, keep]
    del allv
    sel = [k for k, ok in zip(keys, keep) if ok]
    seq = np.array([k[0] for k in sel], dtype=int)
    _, residue = np.unique(seq, return_inverse=True)
    cls = np.array([c for c, ok in zip(ck.cls, keep) if ok], dtype=object)
    return Comparison(seq_id=seq, comp_id=comp[keep], atom_id=np.array([k[1] for k in sel], dtype=object),
                      nucleus=cls, isotope=np.array([c[0] for c in cls], dtype=object),
                      measured=ck.measured[keep], ambiguous=ck.ambiguous[keep], residue=residue.astype(int),
                      predicted=predicted, entries=entries, left_out=dict(left),
                      left_out_examples=examples, absent=per_entry)


def resolve_stereo(comp: Comparison) -> int:
    """Swap predictions of ambiguous stereo pairs where the swapped assignment fits better.

    Decided per entry (model) by the sum of squared residuals of the pair; a common referencing
    offset cancels from this comparison, so it may be done before referencing. Modifies
    ``comp.predicted`` in place and returns the number of (entry, pair) swaps made.
    """
    key = {(int(s), str(a)): i for i, (s, a) in enumerate(zip(comp.seq_id, comp.atom_id))}
    ia, ib = [], []
    for i, (s, c, a, am) in enumerate(zip(comp.seq_id, comp.comp_id, comp.atom_id, comp.ambiguous)):
        pair = STEREO_PAIRS.get(str(c))
        if pair and str(a) == pair[0]:
            j = key.get((int(s), pair[1]))
            if j is not None and (am or comp.ambiguous[j]):
                ia.append(i)
                ib.append(j)
    if not ia:
        return 0
    ia, ib = np.array(ia), np.array(ib)
    ma, mb = comp.measured[ia], comp.measured[ib]
    pa, pb = comp.predicted[:, ia], comp.predicted[:, ib]
    keep_cost = (ma - pa) ** 2 + (mb - pb) ** 2
    swap_cost = (ma - pb) ** 2 + (mb - pa) ** 2
    swap = swap_cost < keep_cost
    comp.predicted[:, ia] = np.where(swap, pb, pa)
    comp.predicted[:, ib] = np.where(swap, pa, pb)
    return int(swap.sum())
