"""Read a score output directory (summary.json, ranking.csv, residues.csv) into typed objects.

The report is drawn only from these files, so it can be redrawn without rescoring. Required
columns are checked at the door (:class:`~shiftcheck.errors.InputError` naming the file and
line); optional summary keys that are missing become notes in :attr:`ReportData.notes` and the
figure element that needs them is skipped.

For runs of more than ``max_models`` models only the residues.csv rows of the models the report
draws are read (:func:`.summarise.drawn_models`; the file is scanned line by line, the other
rows are not parsed); :attr:`ReportData.drawn` then lists those models.
"""
from __future__ import annotations

import csv
import json
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..chem.nuclei import nucleus_class
from ..errors import InputError
from .summarise import MAX_DRAWN_MODELS, drawn_models

__all__ = ["RankingTable", "ResidueTable", "ReportData", "load_outdir", "RANKING_REQUIRED",
           "RESIDUES_REQUIRED"]

RANKING_REQUIRED = ("rank", "model", "score", "score_low", "score_high", "p_best")
RESIDUES_REQUIRED = ("model", "chain", "seq_id", "comp_id", "atom_id", "measured", "predicted",
                     "residual", "z", "flag")
_METRICS = ("rmsd", "mad", "r", "n")


@dataclass
class RankingTable:
    """ranking.csv: one row per model, in file order (rank ascending).

    ``metrics[stat][nucleus]`` is an array over models (NaN where the column is empty or absent).
    """
    rank: np.ndarray
    model: list[str]
    score: np.ndarray
    score_low: np.ndarray
    score_high: np.ndarray
    p_best: np.ndarray
    metrics: dict[str, dict[str, np.ndarray]]
    nuclei: list[str]


@dataclass
class ResidueTable:
    """residues.csv as a struct of arrays.

    ``nucleus`` comes from the optional ``nucleus`` column, else from comp_id/atom_id;
    ``offset`` (the referencing correction subtracted from ``measured`` before the residual
    was taken) from the optional ``offset`` column, else NaN.
    """
    model: np.ndarray
    chain: np.ndarray
    seq_id: np.ndarray
    comp_id: np.ndarray
    atom_id: np.ndarray
    measured: np.ndarray
    predicted: np.ndarray
    residual: np.ndarray
    z: np.ndarray
    flag: np.ndarray
    nucleus: np.ndarray
    offset: np.ndarray

    def __len__(self) -> int:
        return len(self.model)

    def select(self, mask: np.ndarray) -> "ResidueTable":
        """Rows where ``mask`` is true."""
        return ResidueTable(**{k: getattr(self, k)[mask] for k in self.__dataclass_fields__})


@dataclass
class ReportData:
    """Everything a report needs, read from one output directory."""
    outdir: Path
    summary: dict
    ranking: RankingTable
    residues: ResidueTable
    notes: list[str] = field(default_factory=list)
    #: models whose residues.csv rows were read, best first; None when every row was read
    drawn: list[str] | None = None
    #: number of distinct models named in residues.csv
    n_models_with_rows: int = 0
    #: the ``max_models`` the rows were chosen with
    max_models: int = MAX_DRAWN_MODELS

    @property
    def best_model(self) -> str:
        return _best_model(self.summary, self.ranking)

    @property
    def best_group(self) -> set[str]:
        """Models that cannot be told apart from the best (from summary.json's ranking)."""
        return _best_group(self.summary, self.ranking)

    def offset(self, kind: str) -> dict | None:
        """The summary's offset entry for 'H', 'C' or 'N', or None."""
        off = self.summary.get("offsets")
        if isinstance(off, dict) and isinstance(off.get(kind), dict):
            return off[kind]
        return None


def _best_model(summary: dict, ranking: RankingTable) -> str:
    best = summary.get("best_model")
    if isinstance(best, str) and best in ranking.model:
        return best
    order = np.argsort(ranking.rank, kind="stable")
    return ranking.model[int(order[0])]


def _best_group(summary: dict, ranking: RankingTable) -> set[str]:
    rows = summary.get("ranking")
    group = set()
    if isinstance(rows, list):
        group = {r.get("model") for r in rows if isinstance(r, dict) and r.get("best_group")}
    return (group & set(ranking.model)) or {_best_model(summary, ranking)}


def _float(text: str) -> float:
    text = text.strip()
    if text == "" or text.lower() in ("nan", "na", "none", "."):
        return math.nan
    return float(text)


def _first_field(line: str) -> str:
    """The first CSV field of one line (quoted fields parsed by the csv module)."""
    if line.startswith('"'):
        return next(csv.reader([line]), [""])[0]
    return line.split(",", 1)[0].rstrip("\r\n")


def _kept_lines(fh, keep: set, seen: set) -> list[tuple[int, str]]:
    """(line number, text) of the lines whose first field is in ``keep``; every first field
    met is added to ``seen``. Rows of one model are consecutive, so a line that starts like
    the one before it is not parsed again."""
    out, prefix, kept = [], None, False
    for i, line in enumerate(fh, start=2):
        if prefix is None or not line.startswith(prefix):
            name = _first_field(line)
            seen.add(name)
            kept = name in keep
            prefix = ('"' + name.replace('"', '""') + '",') if line.startswith('"') else name + ","
        if kept:
            out.append((i, line))
    seen.discard("")
    return out


def _read_csv(path: Path, required: tuple[str, ...], keep: set | None = None,
              seen: set | None = None) -> tuple[list[str], list[list[str]]]:
    """Header and body rows of a CSV file; with ``keep``, only rows whose first field is in it
    (the names of all first fields are collected into ``seen``)."""
    if not path.is_file():
        raise InputError("missing file (is this a shiftcheck score output directory?)", path=path)
    try:
        with open(path, newline="", encoding="utf-8") as fh:
            if keep is None:
                rows = list(csv.reader(fh))
                numbers = range(1, len(rows) + 1)
            else:
                head = fh.readline()
                kept = _kept_lines(fh, keep, seen if seen is not None else set())
                rows = list(csv.reader([head] + [t for _, t in kept])) if head else []
                numbers = [1] + [i for i, _ in kept]
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        raise InputError(f"cannot read CSV: {exc}", path=path) from None
    if not rows:
        raise InputError("empty file, expected a header line", path=path, line=1)
    header = [h.strip() for h in rows[0]]
    missing = [c for c in required if c not in header]
    if missing:
        raise InputError(f"missing column(s) {', '.join(missing)}", path=path, line=1)
    if keep is not None and header[:1] != ["model"]:
        raise InputError("expected 'model' as the first column", path=path, line=1)
    body = _Rows()
    for i, r in zip(numbers[1:], rows[1:]):
        if any(x.strip() for x in r):
            if len(r) != len(header):
                raise InputError(f"{len(r)} fields where the header has {len(header)}", path=path, line=i)
            body.append(r)
            body.lines.append(i)
    return header, body


class _Rows(list):
    """Body rows of a CSV file with their line numbers (``lines``), for messages."""

    def __init__(self):
        super().__init__()
        self.lines: list[int] = []


def _column(header, body, name, path, conv=str):
    j = header.index(name)
    out = []
    for i, r in enumerate(body):
        try:
            out.append(conv(r[j]))
        except ValueError:
            raise InputError(f"column {name}: not a number: {r[j]!r}", path=path,
                             line=body.lines[i]) from None
    return out


def _read_ranking(path: Path) -> RankingTable:
    header, body = _read_csv(path, RANKING_REQUIRED)
    if not body:
        raise InputError("no models listed", path=path, line=2)
    num = {c: np.array(_column(header, body, c, path, _float)) for c in RANKING_REQUIRED if c != "model"}
    nuclei = [c[5:] for c in header if c.startswith("rmsd_")]
    metrics = {s: {x: (np.array(_column(header, body, f"{s}_{x}", path, _float))
                       if f"{s}_{x}" in header else np.full(len(body), np.nan)) for x in nuclei}
               for s in _METRICS}
    return RankingTable(rank=num["rank"], model=_column(header, body, "model", path),
                        score=num["score"], score_low=num["score_low"],
                        score_high=num["score_high"], p_best=num["p_best"],
                        metrics=metrics, nuclei=nuclei)


def _read_residues(path: Path, keep: set | None = None, seen: set | None = None) -> ResidueTable:
    header, body = _read_csv(path, RESIDUES_REQUIRED, keep, seen)
    cols = {c: _column(header, body, c, path) for c in ("model", "chain", "comp_id", "atom_id", "flag")}
    seq = _column(header, body, "seq_id", path, lambda s: int(float(s)))
    num = {c: np.array(_column(header, body, c, path, _float), dtype=float)
           for c in ("measured", "predicted", "residual", "z")}
    if "nucleus" in header:
        nuc = [x.strip() or (nucleus_class(c, a) or "other") for x, c, a in
               zip(_column(header, body, "nucleus", path), cols["comp_id"], cols["atom_id"])]
    else:
        nuc = [nucleus_class(c, a) or "other" for c, a in zip(cols["comp_id"], cols["atom_id"])]
    offset = (np.array(_column(header, body, "offset", path, _float), dtype=float) if "offset" in header
              else np.full(len(body), np.nan))
    return ResidueTable(model=np.array(cols["model"], dtype=object),
                        chain=np.array(cols["chain"], dtype=object),
                        seq_id=np.array(seq, dtype=int),
                        comp_id=np.array(cols["comp_id"], dtype=object),
                        atom_id=np.array(cols["atom_id"], dtype=object),
                        flag=np.array([f.strip() for f in cols["flag"]], dtype=object),
                        nucleus=np.array(nuc, dtype=object), offset=offset, **num)


def _keep_drawn(summary: dict, keep: set) -> None:
    """Drop the per-model parts of ``summary`` the report does not draw: ``metrics`` (the report
    reads ranking.csv) and ``secondary_structure`` of models not drawn (kept: the drawn models and,
    for a drawn ``name#mean``, the first model of its ensemble, in file order). 10,000 models
    hold about 40 MB less while the pages are drawn."""
    summary.pop("metrics", None)
    ss = summary.get("secondary_structure")
    if not isinstance(ss, dict):
        return
    stems = {m.split("#")[0] for m in keep if m not in ss}
    out = {}
    for k, v in ss.items():
        stem = k.split("#")[0]
        if k in keep or stem in stems:
            out[k] = v
            stems.discard(stem)
    summary["secondary_structure"] = out


def load_outdir(outdir, show=(), max_models: int = MAX_DRAWN_MODELS) -> ReportData:
    """Read ``summary.json``, ``ranking.csv`` and ``residues.csv`` from a score output directory.

    Parameters
    ----------
    outdir : str or Path
        Directory written by ``shiftcheck score ... -o OUTDIR``.
    show : sequence of str
        Models whose residues.csv rows are read whatever their rank.
    max_models : int
        With more models than this in ranking.csv, only the rows of the best ``max_models``,
        the best group and ``show`` are read (:attr:`ReportData.drawn`).

    Returns
    -------
    ReportData

    Raises
    ------
    InputError
        If the directory or a file is missing or malformed (the message names the file).
    """
    outdir = Path(outdir)
    if not outdir.is_dir():
        raise InputError("not a directory (expected a shiftcheck score output directory)", path=outdir)
    spath = outdir / "summary.json"
    if not spath.is_file():
        raise InputError("missing file (is this a shiftcheck score output directory?)", path=spath)
    try:
        summary = json.loads(spath.read_text(encoding="utf-8"))
    except json.JSONDecodeError as exc:
        raise InputError(f"not valid JSON: {exc.msg}", path=spath, line=exc.lineno) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read: {exc}", path=spath) from None
    if not isinstance(summary, dict):
        raise InputError("expected a JSON object at top level", path=spath, line=1)
    ranking = _read_ranking(outdir / "ranking.csv")
    drawn = None
    if len(ranking.model) > max_models:
        keep = drawn_models(ranking, _best_group(summary, ranking), show, max_models)
        seen: set[str] = set()
        residues = _read_residues(outdir / "residues.csv", set(keep), seen)
        have = set(residues.model)
        drawn = [m for m in keep if m in have]
        _keep_drawn(summary, set(keep))
    else:
        residues = _read_residues(outdir / "residues.csv")
        seen = set(residues.model)
    data = ReportData(outdir=outdir, summary=summary, ranking=ranking, residues=residues,
                      drawn=drawn, n_models_with_rows=len(seen), max_models=max_models)
    for key in ("inputs", "mapping", "offsets", "flags", "secondary_structure", "expected_error",
                "parameters", "data_checks"):
        if key not in summary:
            data.notes.append(f"summary.json has no '{key}'; the parts of the report that need it are left out")
    unknown = sorted(seen - set(ranking.model))
    if unknown:
        data.notes.append(f"residues.csv names model(s) not in ranking.csv: {', '.join(unknown[:5])}")
    return data
