"""Plain records and pandas DataFrames from the result objects of the Python API.

``to_records(table)`` returns a list of plain dicts (str, int, float, bool, None), made by the
same row functions that write the CSV files, so the numbers are those of the tables.
``to_frame(table)`` turns those records into a :class:`pandas.DataFrame`; pandas is imported only
then and is an optional extra (``pip install shiftcheck[pandas]``), not a dependency.

    >>> res = sc.score_models(shifts, models)                     # doctest: +SKIP
    >>> res.to_frame()            # ranking.csv as a DataFrame    # doctest: +SKIP
    >>> res.to_frame("residues")  # residues.csv                  # doctest: +SKIP
    >>> shifts.to_records()[0]    # one dict per shift            # doctest: +SKIP
"""
from __future__ import annotations

__all__ = ["Tabular", "ScoreTables", "ShiftTables", "frame_from_records", "SHIFT_COLUMNS",
           "OFFSET_COLUMNS"]

SHIFT_COLUMNS = ["seq_id", "auth_seq_id", "comp_id", "atom_id", "atom_type", "value", "error",
                 "ambiguity", "line"]
OFFSET_COLUMNS = ["isotope", "value", "low", "high", "n", "applied", "threshold"]


def frame_from_records(records: list[dict], columns: list[str] | None = None):
    """A pandas DataFrame of ``records`` (columns in the given order); pandas imported lazily."""
    try:
        import pandas as pd
    except ModuleNotFoundError as exc:
        raise ModuleNotFoundError("to_frame() needs pandas: pip install 'shiftcheck[pandas]' "
                                  "(or use to_records() for plain dicts)", name=exc.name) from None
    return pd.DataFrame.from_records(records, columns=columns)


class Tabular:
    """Mixin: ``to_records(table)`` / ``to_frame(table)`` from ``_tables()``.

    ``_tables()`` maps table names to ``(row function, columns)``; the first is the default.
    """

    def _tables(self) -> dict:  # pragma: no cover - each class defines it
        raise NotImplementedError

    @property
    def tables(self) -> tuple[str, ...]:
        """Names accepted by :meth:`to_records` and :meth:`to_frame`."""
        return tuple(self._tables())

    def _table(self, table: str | None):
        tabs = self._tables()
        name = next(iter(tabs)) if table is None else table
        if name not in tabs:
            raise ValueError(f"unknown table {table!r}; choose from {', '.join(tabs)}")
        return tabs[name]

    def to_records(self, table: str | None = None) -> list[dict]:
        """One plain dict per row of ``table`` (default: the first of :attr:`tables`)."""
        rows, _ = self._table(table)
        return [dict(r) for r in rows()]

    def to_frame(self, table: str | None = None):
        """``table`` as a pandas DataFrame (pandas needed; see the module docstring)."""
        rows, columns = self._table(table)
        return frame_from_records([dict(r) for r in rows()], columns)


class ScoreTables(Tabular):
    """Tables of a ScoreResult: ``ranking`` (ranking.csv), ``residues`` (residues.csv),
    ``offsets`` (one row per isotope, as summary.json's ``offsets`` without ``per_atom``)."""

    def _tables(self) -> dict:
        from .report.tables import RANKING_COLUMNS, RESIDUE_COLUMNS, ranking_rows, residue_rows

        def offsets():
            for iso, off in self.offsets.items():
                d = off.as_dict()
                yield {"isotope": iso, **{k: d[k] for k in OFFSET_COLUMNS[1:]}}

        return {"ranking": (lambda: ranking_rows(self), list(RANKING_COLUMNS)),
                "residues": (lambda: residue_rows(self), list(RESIDUE_COLUMNS)),
                "offsets": (offsets, OFFSET_COLUMNS)}


class ShiftTables(Tabular):
    """Table of a ShiftList: ``shifts``, one row per shift (NaN error as None)."""

    def _tables(self) -> dict:
        import math

        def shifts():
            for k in range(len(self)):
                err = float(self.error[k])
                yield {"seq_id": int(self.seq_id[k]), "auth_seq_id": int(self.auth_seq_id[k]),
                       "comp_id": str(self.comp_id[k]), "atom_id": str(self.atom_id[k]),
                       "atom_type": str(self.atom_type[k]), "value": float(self.value[k]),
                       "error": err if math.isfinite(err) else None,
                       "ambiguity": int(self.ambiguity[k]), "line": int(self.line[k])}

        return {"shifts": (shifts, SHIFT_COLUMNS)}
