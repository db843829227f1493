"""Read a score output directory (summary.json, ranking.csv, residues.csv) into typed objects.

The report is drawn only from these files, so it can be redrawn without rescoring. Required
columns are checked at the door (:class:`~shiftcheck.errors.InputError` naming the file and
line); optional summary keys that are missing become notes in :attr:`ReportData.notes` and the
figure element that needs them is skipped.
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

    @property
    def best_model(self) -> str:
        best = self.summary.get("best_model")
        if isinstance(best, str) and best in self.ranking.model:
            return best
        order = np.argsort(self.ranking.rank, kind="stable")
        return self.ranking.model[int(order[0])]

    @property
    def best_group(self) -> set[str]:
        """Models that cannot be told apart from the best (from summary.json's ranking)."""
        rows = self.summary.get("ranking")
        group = set()
        if isinstance(rows, list):
            group = {r.get("model") for r in rows if isinstance(r, dict) and r.get("best_group")}
        return (group & set(self.ranking.model)) or {self.best_model}

    def offset(self, kind: str) -> dict | None:
        """The summary's offset entry for 'H', 'C' or 'N', or None."""
        off = self.summary.get("offsets")
        if isinstance(off, dict) and isinstance(off.get(kind), dict):
            return off[kind]
        return None


def _float(text: str) -> float:
    text = text.strip()
    if text == "" or text.lower() in ("nan", "na", "none", "."):
        return math.nan
    return float(text)


def _read_csv(path: Path, required: tuple[str, ...]) -> tuple[list[str], list[list[str]]]:
    if not path.is_file():
        raise InputError("missing file (is this a shiftcheck score output directory?)", path=path)
    try:
        with open(path, newline="", encoding="utf-8") as fh:
            rows = list(csv.reader(fh))
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        raise InputError(f"cannot read CSV: {exc}", path=path) from None
    if not rows:
        raise InputError("empty file, expected a header line", path=path, line=1)
    header = [h.strip() for h in rows[0]]
    missing = [c for c in required if c not in header]
    if missing:
        raise InputError(f"missing column(s) {', '.join(missing)}", path=path, line=1)
    body = [r for r in rows[1:] if any(x.strip() for x in r)]
    for i, r in enumerate(rows[1:], start=2):
        if any(x.strip() for x in r) and len(r) != len(header):
            raise InputError(f"{len(r)} fields where the header has {len(header)}", path=path, line=i)
    return header, body


def _column(header, body, name, path, conv=str):
    j = header.index(name)
    out = []
    for i, r in enumerate(body):
        try:
            out.append(conv(r[j]))
        except ValueError:
            raise InputError(f"column {name}: not a number: {r[j]!r}", path=path, line=i + 2) from None
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


def _read_residues(path: Path) -> ResidueTable:
    header, body = _read_csv(path, RESIDUES_REQUIRED)
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


def load_outdir(outdir) -> ReportData:
    """Read ``summary.json``, ``ranking.csv`` and ``residues.csv`` from a score output directory.

    Parameters
    ----------
    outdir : str or Path
        Directory written by ``shiftcheck score ... -o OUTDIR``.

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
    residues = _read_residues(outdir / "residues.csv")
    data = ReportData(outdir=outdir, summary=summary, ranking=ranking, residues=residues)
    for key in ("inputs", "mapping", "offsets", "flags", "secondary_structure", "expected_error",
                "parameters", "data_checks"):
        if key not in summary:
            data.notes.append(f"summary.json has no '{key}'; the parts of the report that need it are left out")
    unknown = sorted(set(residues.model) - set(ranking.model))
    if unknown:
        data.notes.append(f"residues.csv names model(s) not in ranking.csv: {', '.join(unknown[:5])}")
    return data
