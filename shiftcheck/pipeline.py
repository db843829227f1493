"""The whole job in one place: read -> map -> predict -> score, organised per model batch.

Stages and the data passed between them (see docs/architecture.md)::

    read_shifts, read_models -> ShiftList, [Ensemble]
    model_batches             -> Batch (a few ensembles with their positions)
    predict_batch (per batch) -> BatchResult (Mapping and Prediction per ensemble)
    reduce_batches            -> [Mapping], [Prediction] in input order
    score                     -> ScoreResult

:func:`predict_batch` is pure (no I/O, no globals written) and takes and returns picklable
objects, so a caller may hand the batches to ``multiprocessing`` or stream them: pass any
``map``-like callable as ``mapper`` to :func:`predict_all`.
"""
from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass

from .defaults import DEFAULT_MIN_IDENTITY
from .errors import InputError
from .predict.model import Predictor
from .predict.prediction import Prediction
from .score.scoring import ScoreResult, score
from .shiftlist import ShiftList
from .structure.ensemble import Ensemble
from .structure.mapping import Mapping, map_sequence
from .stream import describe_params

__all__ = ["Batch", "BatchResult", "model_batches", "predict_batch", "reduce_batches", "predict_all",
           "score_models", "score_files", "describe_params"]


@dataclass(frozen=True)
class Batch:
    """A few ensembles to map and predict together: ``index[k]`` is the input position of ``ensembles[k]``."""

    index: tuple[int, ...]
    ensembles: tuple[Ensemble, ...]
    mappings: tuple[Mapping, ...] | None = None     # given: used as they are; None: mapped by the worker


@dataclass(frozen=True)
class BatchResult:
    """Mapping and prediction of every ensemble of a :class:`Batch`, in the batch's order."""

    index: tuple[int, ...]
    mappings: tuple[Mapping, ...]
    predictions: tuple[Prediction, ...]


def model_batches(ensembles: Iterable[Ensemble], size: int = 1,
                  mappings: list[Mapping] | None = None) -> Iterator[Batch]:
    """Group ensembles (with their mappings, when given) into batches of ``size`` (the last may
    be smaller), keeping input order."""
    if size < 1:
        raise ValueError("batch size must be at least 1")
    index: list[int] = []
    group: list[Ensemble] = []

    def batch() -> Batch:
        return Batch(tuple(index), tuple(group),
                     None if mappings is None else tuple(mappings[i] for i in index))

    for i, ens in enumerate(ensembles):
        index.append(i)
        group.append(ens)
        if len(group) == size:
            yield batch()
            index, group = [], []
    if group:
        yield batch()


def predict_batch(shifts: ShiftList, batch: Batch, predictor: Predictor,
                  min_identity: float = DEFAULT_MIN_IDENTITY) -> BatchResult:
    """Map the shift list onto every ensemble of ``batch``, then predict every model.

    Pure and picklable: the worker of :func:`predict_all`. Raises MappingError for shifts of
    another protein (all ensembles of the batch are mapped before any is predicted).
    """
    mappings = batch.mappings
    if mappings is None:
        mappings = tuple(map_sequence(shifts, ens, min_identity=min_identity) for ens in batch.ensembles)
    preds = tuple(predictor.predict_many(batch.ensembles, shifts.conditions))   # same-topology files stacked
    return BatchResult(batch.index, mappings, preds)


def reduce_batches(results: Iterable[BatchResult], n: int,
                   progress: Callable[[int, int], None] | None = None) -> tuple[list[Mapping], list[Prediction]]:
    """Collect batch results (in any order) into mapping and prediction lists in input order.

    ``progress(done, n)`` is called after every ensemble collected.
    """
    mappings: list = [None] * n
    preds: list = [None] * n
    done = 0
    for r in results:
        for i, m, p in zip(r.index, r.mappings, r.predictions):
            mappings[i], preds[i] = m, p
            done += 1
            if progress:
                progress(done, n)
    if done != n:
        raise RuntimeError(f"{n - done} of {n} ensembles missing from the batch results")
    return mappings, preds


def predict_all(shifts: ShiftList, ensembles: list[Ensemble], predictor: Predictor, *,
                mappings: list[Mapping] | None = None, min_identity: float | None = None,
                batch_size: int = 64, mapper: Callable = map,
                progress: Callable[[int, int], None] | None = None) -> tuple[list[Mapping], list[Prediction]]:
    """Map (unless ``mappings`` are given) and predict every ensemble: batches ->
    ``mapper(worker, batches)`` -> reduce."""
    thr = DEFAULT_MIN_IDENTITY if min_identity is None else min_identity
    batches = list(model_batches(ensembles, batch_size, mappings))
    results = mapper(predict_batch, [shifts] * len(batches), batches, [predictor] * len(batches),
                     [thr] * len(batches))
    return reduce_batches(results, len(ensembles), progress)


def score_models(shifts: ShiftList, ensembles: list[Ensemble], *, mappings: list[Mapping] | None = None,
                 params=None, ring_model: str | None = None,
                 min_identity: float | None = None, reref: str = "auto", k_sigma: float | None = None,
                 n_boot: int | None = None, seed: int | None = None, include_mean: bool = True,
                 batch_size: int = 64, mapper: Callable = map,
                 progress: Callable[[int, int], None] | None = None) -> ScoreResult:
    """Map, predict and score every model of every ensemble against a shift list.

    ``params`` (path, dict or None for the shipped defaults) and ``ring_model`` choose the
    predictor; the remaining options are those of :func:`shiftcheck.score.scoring.score`.
    Raises MappingError (shifts of another protein) and InputError (no model, no common atom).
    """
    if not ensembles:
        raise InputError("no models given")
    predictor = Predictor(params, ring_model).load()
    mappings, preds = predict_all(shifts, ensembles, predictor, mappings=mappings, min_identity=min_identity,
                                  batch_size=batch_size, mapper=mapper, progress=progress)
    return score(shifts, ensembles, mappings, preds, params=predictor.params_,
                 ring_model=predictor.ring_model_, params_source=describe_params(predictor.params_.get("_path")),
                 reref=reref, k_sigma=k_sigma, n_boot=n_boot, seed=seed, include_mean=include_mean)


def score_files(shift_path, model_paths, *, list_id=None, entity_id=None, chain: str | None = None,
                partners: str = "auto",
                temperature: float | None = None, ph: float | None = None, strict: bool = False,
                on_models: Callable | None = None, jobs: int | None = 1, scheduler: str | None = None,
                models_per_task: int | None = None, **options) -> ScoreResult:
    """Read a shift file and coordinate files and score them, streamed (:mod:`shiftcheck.stream`):
    the models are read, mapped and predicted a file (or a run of ``models_per_task`` MODEL
    records) at a time, on ``jobs`` local processes (None: all cores) or the Dask scheduler at
    ``scheduler``; only the predictions on the compared atoms are kept. The results equal
    :func:`score_models` on the same models (tests/test_streaming.py).

    Keyword options are those of :func:`score_models` (``batch_size`` and ``mapper`` do not
    apply). A model file that cannot be read, has no protein chain or does not map onto the
    shift list is skipped (``ScoreResult.skipped`` says which and why) unless ``strict``, when it
    raises the usual one-line error; no model left raises with every reason. ``on_models(infos,
    skipped)`` is called once every model is read, before the scoring (the CLI checks ``--show``
    names and prints the skips there). ``temperature`` (K) and ``ph`` replace the sample
    conditions read from the shift file (NEF files carry none). ``partners`` says whether the
    files' other protein chains surround the scored one (:func:`shiftcheck.io.coords.read_models`).
    """
    from .stream import DEFAULT_MODELS_PER_TASK, score_stream

    options.pop("batch_size", None)
    options.pop("mapper", None)
    return score_stream(shift_path, model_paths, list_id=list_id, entity_id=entity_id, chain=chain,
                        partners=partners,
                        temperature=temperature, ph=ph, strict=strict, on_models=on_models, jobs=jobs,
                        scheduler=scheduler, models_per_task=models_per_task or DEFAULT_MODELS_PER_TASK,
                        **options)
