"""Streamed scoring: models read, mapped and predicted task by task; only compact results kept.

A :class:`Task` is one coordinate file, or a run of consecutive MODEL records of a large
multi-model PDB file (split as text at its MODEL/ENDMDL records, so the file is never parsed
whole). The unit sent to a worker is a group of tasks (:func:`group_tasks`): consecutive small
files up to :data:`DEFAULT_MODELS_PER_TASK` models together, so a decoy set of single-model
files is predicted as model stacks and shares the per-topology work, or one run of MODEL
records. The worker :func:`run_group` (in :mod:`shiftcheck.stream_worker`, with the task and
result types) is pure and picklable: it takes the tasks (paths and byte
ranges, not coordinates) and the run's :class:`Context`, reads those models, maps the shift
list, predicts, and returns one :class:`TaskResult` per task: the predictions on the shift
list's comparison rows (n_models x n_rows floats), the secondary structure, the geometry
records, the model states the data checks need and the warnings - no coordinates.
:func:`score_stream` collects the results in input order and hands them to
:func:`shiftcheck.score.scoring.score_comparison`, the step the in-memory path uses too, so
the numbers are the same whatever the task size, the number of processes or the cluster
(tests/test_streaming.py).

Memory: what stays per model is its row of predictions (8 bytes x compared atoms, ~3.5 KB for
a 78-residue protein) plus its flags (1 byte x atoms), its name and its secondary-structure and
geometry records (:class:`Records`: tuples with shared keys and values); per file, its name and
mapping (equal mappings and residue tables are shared). See docs/scaling.md for the measured
figures.
"""
from __future__ import annotations

import os
from collections.abc import Callable, Iterable, Mapping

import numpy as np

from .stream_worker import Context, ModelInfo, Task, TaskResult, run_group, run_task

__all__ = ["Task", "Context", "TaskResult", "ModelInfo", "plan_tasks", "group_tasks", "run_task",
           "run_group", "score_stream", "DEFAULT_MODELS_PER_TASK", "describe_params"]

#: Models read together by one task (their coordinates are held at once): a run of MODEL records
#: of a large file, or several consecutive small files (up to this many models and files).
DEFAULT_MODELS_PER_TASK = 50


_SCAN_CHUNK = 1 << 22     # bytes read at a time when a file is scanned for MODEL records


def _find_all(fh, needle: bytes, start: int = 0, first_only: bool = False,
              chunk: int = _SCAN_CHUNK) -> list[int]:
    """Offsets of ``needle`` in the file from ``start`` on, read in chunks (plain reads, not a
    memory map: the scan of a 1 GB file must not make its pages resident in this process)."""
    fh.seek(start)
    found, tail, offset = [], b"", start
    keep = len(needle) - 1
    while True:
        buf = fh.read(chunk)
        if not buf:
            return found
        data = tail + buf
        base = offset - len(tail)
        i = data.find(needle)
        while i >= 0:
            found.append(base + i)
            if first_only:
                return found
            i = data.find(needle, i + 1)
        tail = data[-keep:] if keep else b""
        offset += len(buf)


def _model_spans(path: str, chunk: int = _SCAN_CHUNK) -> list[tuple[int, int]]:
    """Byte ranges of the MODEL ... ENDMDL records of a plain-text PDB file ([] if none)."""
    with open(path, "rb") as fh:
        head = fh.read(4096)
        if not head or head.lstrip().lower().startswith(b"data_"):
            return []                      # empty file, or mmCIF: read whole
        starts = ([0] if head[:6] == b"MODEL " else []) + [
            i + 1 for i in _find_all(fh, b"\nMODEL ", 0, chunk=chunk)]
        if not starts:
            return []
        size = os.fstat(fh.fileno()).st_size
        spans = list(zip(starts[:-1], starts[1:]))
        end = _find_all(fh, b"\nENDMDL", starts[-1], first_only=True, chunk=chunk)
        stop = _find_all(fh, b"\n", end[0] + 1, first_only=True, chunk=chunk) if end else []
        spans.append((starts[-1], stop[0] + 1 if stop else size))
    return spans


def plan_tasks(paths, models_per_task: int = DEFAULT_MODELS_PER_TASK) -> list[Task]:
    """One task per file; large plain-text multi-model PDB files split into runs of
    ``models_per_task`` MODEL records."""
    from .isolation import distinct_labels

    if models_per_task < 1:
        raise ValueError("models per task must be at least 1")
    paths = [str(p) for p in paths]
    tasks = []
    for i, (p, lab) in enumerate(zip(paths, distinct_labels(paths))):
        spans = []
        if not p.endswith(".gz") and os.path.isfile(p) and os.path.getsize(p) > 0:
            try:
                spans = _model_spans(p)
            except OSError:
                spans = []
        if len(spans) <= models_per_task:
            tasks.append(Task(i, p, lab, n_models=max(1, len(spans))))
            continue
        for k in range(0, len(spans), models_per_task):
            chunk = spans[k:k + models_per_task]
            tasks.append(Task(i, p, lab, k // models_per_task, (chunk[0][0], chunk[-1][1]), spans[0][0],
                              len(chunk)))
    return tasks


def group_tasks(tasks: list[Task], models_per_task: int = DEFAULT_MODELS_PER_TASK) -> list[tuple[Task, ...]]:
    """The units sent to the workers: runs of consecutive whole-file tasks with at most
    ``models_per_task`` models and files together (a decoy set of single-model files is read,
    mapped and predicted ``models_per_task`` files at a time, so the predictor stacks them:
    :meth:`~shiftcheck.predict.model.Predictor.predict_many`); a run of MODEL records of a large
    file is a unit of its own. Input order is kept."""
    if models_per_task < 1:
        raise ValueError("models per task must be at least 1")
    groups: list[tuple[Task, ...]] = []
    cur: list[Task] = []
    n = 0
    for t in tasks:
        if t.body is not None or (cur and n + t.n_models > models_per_task) or len(cur) >= models_per_task:
            if cur:
                groups.append(tuple(cur))
            cur, n = [], 0
        if t.body is not None:
            groups.append((t,))
            continue
        cur.append(t)
        n += t.n_models
    if cur:
        groups.append(tuple(cur))
    return groups


def _exact(v) -> bool:
    """True when equal values of ``v``'s type are interchangeable (no float inside)."""
    if v is None or type(v) in (str, int, bool):
        return True
    return type(v) is tuple and all(_exact(x) for x in v)


class Records(Mapping):
    """Per-model records (dicts of plain JSON values) kept compactly: each as a tuple of its
    values, the key tuple, lists (as tuples) and repeated values shared; ``records[name]``
    gives the dict back (a new one, equal to the record added). About a third of the memory
    of the dicts for the secondary-structure and geometry records of a run of many models."""

    def __init__(self):
        self._rows: dict[str, tuple] = {}
        self._seen: dict = {}

    def _intern(self, v):
        if isinstance(v, list):
            v = ("\0list", tuple(self._intern(x) for x in v))
        elif isinstance(v, dict):
            return ("\0dict", self._intern(list(v.keys())), self._intern(list(v.values())))
        if not _exact(v):                            # floats: 0.0 == -0.0, NaN != NaN
            return v
        return self._seen.setdefault((type(v), v), v)

    @staticmethod
    def _value(v):
        if isinstance(v, tuple) and v and v[0] == "\0list":
            return [Records._value(x) for x in v[1]]
        if isinstance(v, tuple) and v and v[0] == "\0dict":
            return dict(zip(Records._value(v[1]), Records._value(v[2])))
        return v

    def add(self, name: str, rec: dict) -> None:
        self._rows[name] = (self._intern(tuple(rec.keys())), tuple(self._intern(v) for v in rec.values()))

    def __getitem__(self, name: str) -> dict:
        keys, vals = self._rows[name]
        return {k: self._value(v) for k, v in zip(keys, vals)}

    def __iter__(self):
        return iter(self._rows)

    def __len__(self) -> int:
        return len(self._rows)

    def __contains__(self, name) -> bool:
        return name in self._rows


class _Shared:
    """One object per distinct value (mappings and residue tables repeat across decoy files)."""

    def __init__(self):
        self.seen: dict = {}

    def mapping(self, mp):
        key = ("m", mp.identity, mp.coverage, tuple(sorted(mp.seq_to_res.items())), tuple(mp.offsets),
               tuple(map(tuple, mp.mismatches)), mp.numbering)
        return self.seen.setdefault(key, mp)

    def array(self, a: np.ndarray) -> np.ndarray:
        return self.seen.setdefault(("a", a.dtype.str, a.tobytes()), a)


def _flat(results):
    """Task results from results of tasks and of task groups (lists)."""
    for r in results:
        if isinstance(r, TaskResult):
            yield r
        else:
            yield from r


def collect(results: Iterable, n_files: int, strict: bool = False,
            progress: Callable[[int, int], None] | None = None):
    """Merge task results (in input order) per file: ``(infos, mappings, projected, secondary,
    states, ensemble warnings, prediction warnings, skipped, geometry by model name)``."""
    shared = _Shared()
    geometry, secondary = Records(), Records()
    infos, maps, proj, states = [], [], [], {}
    ens_warn: list[list[str]] = []
    pred_warn: list[str] = []
    skipped_read, skipped_map = [], []
    last_file, done = -1, 0
    for r in _flat(results):
        done += 1
        if progress:
            progress(done, None)
        if r.skipped is not None:
            if strict and r.skipped.error is not None:
                raise r.skipped.error
            if r.task.file != last_file:
                (skipped_read if r.stage == "read" else skipped_map).append(r.skipped)
            last_file = r.task.file
            continue
        for name, rec in r.secondary.items():
            secondary.add(name, rec)
        for g in r.geometry:
            geometry.add(g["model"], g)
        for k, v in r.states.items():
            states.setdefault(k, set()).update(v)
        pred_warn += r.pred_warnings
        if r.task.file == last_file and r.task.part > 0 and infos and infos[-1].sources == [r.task.path]:
            info, p = infos[-1], proj[-1]          # the next run of models of the same file
            info.model_names += r.info.model_names
            p.vals += r.projected.vals
            p.model_names += r.projected.model_names
            ens_warn[-1] += [w for w in r.info.warnings if w not in ens_warn[-1]]
            continue
        last_file = r.task.file
        info = r.info
        info.res_seq, info.res_icode, info.res_name = (shared.array(info.res_seq), shared.array(info.res_icode),
                                                       shared.array(info.res_name))
        infos.append(info)
        maps.append(shared.mapping(r.mapping))
        proj.append(r.projected)
        ens_warn.append(list(info.warnings))
    return infos, maps, proj, secondary, states, ens_warn, pred_warn, skipped_read + skipped_map, geometry


def score_stream(shift_path, model_paths, *, list_id=None, entity_id=None, chain=None, partners="auto",
                 temperature=None, ph=None, strict: bool = False, on_models: Callable | None = None,
                 params=None, ring_model=None, min_identity=None, reref="auto", k_sigma=None, n_boot=None, seed=None,
                 include_mean=True, models_per_task: int = DEFAULT_MODELS_PER_TASK, jobs: int = 1,
                 scheduler: str | None = None, progress=None):
    """:func:`shiftcheck.pipeline.score_files`, streamed over tasks on the chosen engine
    (``jobs`` local processes, or the Dask scheduler at ``scheduler``)."""
    from .defaults import DEFAULT_MIN_IDENTITY
    from .engine import task_mapper
    from .io.shift_formats import read_shifts
    from .isolation import no_model_left
    from .predict.model import Predictor
    from .score.comparison import assemble, comparison_keys
    from .score.datacheck import apply_model_states, check_shifts
    from .score.scoring import score_comparison

    shifts = read_shifts(shift_path, list_id=list_id, entity_id=entity_id)
    if temperature is not None:
        shifts.conditions.temperature_K = temperature
    if ph is not None:
        shifts.conditions.pH = ph
    predictor = Predictor(params, ring_model).load()
    findings = check_shifts(shifts)
    ctx = Context(shifts, predictor.params_, predictor.ring_model_,
                  DEFAULT_MIN_IDENTITY if min_identity is None else min_identity, chain,
                  comparison_keys(shifts, (None, None)), findings, partners)
    tasks = plan_tasks(model_paths, models_per_task)
    groups = group_tasks(tasks, models_per_task)
    n_files = len({t.file for t in tasks})

    def tick(done, _):
        if progress:
            progress(done, len(tasks))

    if jobs is not None and jobs > len(groups):
        jobs = max(1, len(groups))                   # no idle processes for a small run
    with task_mapper(run_group, ctx, jobs=jobs, scheduler=scheduler) as mapper:
        infos, maps, proj, secondary, states, ens_warn, pred_warn, skipped, geometry = collect(
            mapper(groups), n_files, strict=strict, progress=tick)
    if not infos:
        raise no_model_left(skipped)
    if on_models is not None:
        on_models(infos, skipped)
    comp = assemble(shifts, ctx.rows, infos, maps, proj, include_mean=include_mean)
    warnings = [f"{info.name}: {w}" for info, ws in zip(infos, ens_warn) for w in ws] + pred_warn
    res = score_comparison(shifts, comp, infos, maps, findings=apply_model_states(findings, states),
                           secondary=secondary, model_warnings=warnings, params=predictor.params_,
                           ring_model=predictor.ring_model_,
                           params_source=describe_params(predictor.params_.get("_path")), reref=reref,
                           k_sigma=k_sigma, n_boot=n_boot, seed=seed, include_mean=include_mean)
    res.skipped = skipped
    res._geometry = geometry                          # structure.quality.result_geometry reads it
    return res


def describe_params(path) -> str:
    """'shipped default (params_default.json)' for the packaged file, else the path given."""
    if path is None:
        return "<dict>"
    from pathlib import Path

    from .predict.params import default_params_path

    shipped = default_params_path()
    try:
        if Path(str(path)).resolve() == Path(str(shipped)).resolve():
            return "shipped default (shiftcheck/data/params_default.json)"
    except OSError:
        pass
    return str(path)
