"""The worker of a streamed run (:mod:`shiftcheck.stream`): read, map and predict a task group.

:func:`run_group` is pure and picklable: it takes tasks (paths and byte ranges, not coordinates)
and the run's :class:`Context` and returns one :class:`TaskResult` per task - the predictions on
the comparison rows, the secondary structure, the geometry records, the model states the data
checks need and the warnings, no coordinates. The files of a group share their per-topology
work (hydrogens, prediction, geometry and the projection plan); every number equals the one
file by file (tests/test_streaming.py).
"""
from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass, field

import numpy as np

from .errors import ShiftcheckError

__all__ = ["Task", "ModelInfo", "Context", "TaskResult", "run_task", "run_group"]


@dataclass(frozen=True)
class Task:
    """Models to read: the whole file, or the MODEL records in bytes ``body`` (with the file's
    header, bytes ``[0, head)`` before its first MODEL record)."""

    file: int
    path: str
    label: str
    part: int = 0
    body: tuple[int, int] | None = None
    head: int = 0
    n_models: int = 1                 # MODEL records found by the scan (1: none found, or not scanned)


@dataclass
class ModelInfo:
    """What the tables need of an ensemble once its models are scored (no coordinates)."""

    name: str
    sources: list
    model_names: list
    chain_id: str
    res_seq: np.ndarray
    res_icode: np.ndarray
    res_name: np.ndarray
    method: str
    warnings: list
    n_built: int

    @property
    def n_models(self) -> int:
        return len(self.model_names)

    @property
    def n_residues(self) -> int:
        return int(self.res_name.shape[0])


@dataclass
class Context:
    """The run's fixed inputs, sent once to each worker."""

    shifts: object
    params: object
    ring_model: str | None
    min_identity: float
    chain: str | None
    rows: object                      # comparison.Keys: superset comparison rows
    findings: list                    # structure-free data checks (for the model states)
    partners: str = "auto"            # other chains as surroundings (io.coords.read_models)
    _predictor: object = field(default=None, repr=False, compare=False)

    def predictor(self):
        if self._predictor is None:
            from .predict.model import Predictor

            self._predictor = Predictor(self.params, self.ring_model)
        return self._predictor

    def __getstate__(self):
        d = dict(self.__dict__)
        d["_predictor"] = None
        return d


@dataclass
class TaskResult:
    task: Task
    skipped: object = None            # isolation.Skipped (read or mapping failure)
    stage: str = ""                   # 'read' or 'map' for a skip
    info: ModelInfo | None = None
    mapping: object = None
    projected: object = None          # comparison.Projected
    secondary: dict = field(default_factory=dict)
    states: dict = field(default_factory=dict)
    pred_warnings: list = field(default_factory=list)
    geometry: list = field(default_factory=list)      # structure.quality records, one per model


def _read(task: Task, chain, hydrogens: bool = True, partners: str = "auto"):
    """The task's models as one Ensemble (hydrogens built unless ``hydrogens`` is false), named
    as a whole-file read names them."""
    from .io.coords import read_models
    from .isolation import _relabel

    if task.body is None:
        return _relabel(read_models(task.path, chain=chain, build_hydrogens=hydrogens,
                                    partners=partners)[0], task.label)
    with open(task.path, "rb") as fh:
        head = fh.read(task.head)
        fh.seek(task.body[0])
        body = fh.read(task.body[1] - task.body[0])
    base = os.path.basename(task.path)
    with tempfile.TemporaryDirectory(prefix="shiftcheck-") as tmp:
        part = os.path.join(tmp, base)
        with open(part, "wb") as out:
            out.write(head + body + b"END\n")
        try:
            ens = read_models(part, chain=chain, build_hydrogens=hydrogens, partners=partners)[0]
        except ShiftcheckError as exc:
            exc.path = task.path if exc.path in (None, part) else exc.path
            raise
    if ens.model_names == [base]:        # a one-model run of a larger file? (no line scan otherwise)
        serials = [ln.split()[1] if len(ln.split()) > 1 else "" for ln in body.splitlines()
                   if ln.startswith(b"MODEL ")]
        if len(serials) == 1:
            ens.model_names = [f"{base}#{serials[0].decode()}"]
    ens.sources = [task.path]
    return _relabel(ens, task.label)


def run_task(task: Task, ctx: Context) -> TaskResult:
    """Read, map and predict the models of one task (pure)."""
    return run_group((task,), ctx)[0]


def run_group(tasks, ctx: Context) -> list[TaskResult]:
    """Read, map and predict the models of a unit of :func:`group_tasks` (pure; the worker of
    every engine): one :class:`TaskResult` per task, in order. The files' ensembles are predicted
    together (:meth:`~shiftcheck.predict.model.Predictor.predict_many`: stack-compatible files
    share the per-topology work; the numbers equal one prediction per file exactly)."""
    from .isolation import _fail, map_models_tolerant
    from .predict.plausibility import implausible_predictions
    from .score.datacheck import model_states
    from .score.scoring import secondary_structure

    out: list[TaskResult | None] = [None] * len(tasks)
    read = []
    for k, task in enumerate(tasks):
        try:
            read.append((k, _read(task, ctx.chain, hydrogens=False, partners=ctx.partners)))
        except ShiftcheckError as exc:
            out[k] = TaskResult(task, _fail(exc, task.path, False), "read")
    todo = []
    for k, ens in _with_hydrogens(read):
        if isinstance(ens, ShiftcheckError):
            out[k] = TaskResult(tasks[k], _fail(ens, tasks[k].path, False), "read")
            continue
        kept, maps, skipped = map_models_tolerant(ctx.shifts, [ens], ctx.min_identity)
        if skipped:
            out[k] = TaskResult(task, skipped[0], "map")
            continue
        todo.append((k, ens, maps[0]))
    ensembles = [ens for _, ens, _ in todo]
    preds = ctx.predictor().predict_many(ensembles, ctx.shifts.conditions) if todo else []
    geometry = _geometry_many(ensembles)
    plans: dict = {}
    for (k, ens, mp), pred, geo in zip(todo, preds, geometry):
        info = ModelInfo(ens.name, list(ens.sources), list(ens.model_names), ens.chain_id, ens.res_seq,
                         ens.res_icode, ens.res_name, ens.method, list(ens.warnings), int(np.sum(ens.built)))
        out[k] = TaskResult(tasks[k], info=info, mapping=mp, projected=_project(ctx.rows, ens, mp, pred, plans),
                            secondary=secondary_structure([ens], [mp]),
                            states=model_states(ctx.findings, [ens], [mp]),
                            pred_warnings=implausible_predictions(pred), geometry=geo)
    return out


def _with_hydrogens(read: list) -> list:
    """``(k, ensemble)`` pairs with hydrogens built: files of one topology as one model stack
    (:func:`~shiftcheck.structure.hydrogens.add_hydrogens_many`, the same atoms and coordinates
    as one file at a time); should that fail, file by file, a failing file's error in place of
    its ensemble."""
    from .structure.hydrogens import add_hydrogens, add_hydrogens_many

    try:
        return list(zip([k for k, _ in read], add_hydrogens_many([e for _, e in read])))
    except ShiftcheckError:
        out = []
        for k, e in read:
            try:
                out.append((k, add_hydrogens(e)))
            except ShiftcheckError as exc:
                out.append((k, exc))
        return out


def _project(ck, ens, mp, pred, plans: dict):
    """:func:`shiftcheck.score.comparison.project` with its per-row means done per member count
    at once (the same numbers: each row's mean is over the same members, summed in the same
    order); the plan (which prediction columns feed which row) is shared by files of one
    topology and mapping."""
    from .score.comparison import Projected

    key = (mp.identity, tuple(sorted(mp.seq_to_res.items())), ens.res_name.tobytes(),
           pred.res_index.tobytes(), tuple(pred.atom_id.tolist()))
    plan = plans.get(key)
    if plan is None:
        col = {(int(r), str(a)): j for j, (r, a) in enumerate(zip(pred.res_index, pred.atom_id))}
        why = np.zeros(len(ck.keys), dtype=np.uint8)
        by_size: dict[int, tuple[list, list]] = {}
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
            rows, cols = by_size.setdefault(len(js), ([], []))
            rows.append(i)
            cols.append(js)
        plan = plans[key] = (why, [(np.array(r), np.array(c)) for _, (r, c) in sorted(by_size.items())])
    why, groups = plan
    vals = np.full((pred.n_models, len(ck.keys)), np.nan)
    with np.errstate(invalid="ignore"):
        for rows, cols in groups:
            vals[:, rows] = pred.values[:, cols].mean(axis=2)
    names = list(pred.model_names) or [f"{ens.name}#{k + 1}" for k in range(pred.n_models)]
    return Projected([vals], why.copy(), names, ens.chain_id, ens.name)


def _geometry_many(ensembles) -> list[list[dict]]:
    """:func:`shiftcheck.structure.quality.geometry_summary` of each ensemble. Runs of
    stack-compatible ensembles without two SG atoms are summarised as one stack (every record is
    computed from its own model and the topology alone; with two SG atoms a disulfide seen in
    any model joins the bond graph, so those files are summarised one by one)."""
    from .structure.ensemble import stack_compatible, stack_ensembles
    from .structure.quality import geometry_summary

    out: list[list[dict]] = []
    k = 0
    while k < len(ensembles):
        group = [ensembles[k]]
        if int(np.sum(ensembles[k].atom_name.astype(str) == "SG")) < 2:
            while k + len(group) < len(ensembles) and stack_compatible(group[0], ensembles[k + len(group)]):
                group.append(ensembles[k + len(group)])
        k += len(group)
        if len(group) == 1:
            out.append(geometry_summary(group[0]))
            continue
        recs = geometry_summary(stack_ensembles(group))
        a = 0
        for e in group:
            out.append(recs[a:a + e.n_models])
            a += e.n_models
    return out
