"""Column-wise CSV text as byte matrices, for :mod:`shiftcheck.report.tables` (residues.csv).

A column is an (n, width) uint8 matrix padded with NUL bytes; :func:`_join_fields` lays the
columns side by side with commas and newlines and drops the padding, so a table of many
rows is built by a few numpy passes instead of a Python loop over its fields. The number
format is Python's ``repr(round(x, nd))`` of the row-wise writer (tests/test_table_format.py
compares the two).
"""
from __future__ import annotations

import numpy as np

__all__: list[str] = []


def _text(values, nd: int | None = None) -> list[str]:
    """Column of CSV fields: ``str(round(x, nd))`` of finite numbers, '' otherwise (as tables._num)."""
    if nd is None:
        a = np.asarray(values, dtype=float)
        out = list(map(repr, a.tolist()))
        for i in np.flatnonzero(~np.isfinite(a)).tolist():
            out[i] = ""
        return out
    m = _fixed_bytes(values, nd)
    return [bytes(row[row != 0]).decode("ascii") for row in m]


#: Below this magnitude a value is formatted from its scaled integer (see :func:`_fixed_bytes`).
_FAST_LIMIT = 1e5


def _fixed_bytes(values, nd: int) -> np.ndarray:
    """CSV fields ``repr(round(x, nd))`` of finite numbers, '' otherwise, as an (n, width) byte
    matrix padded with NUL bytes (left out when the rows are joined, :func:`_join_fields`).

    The same bytes as Python's ``repr(round(x, nd))`` (a test compares the two): for
    |x| < 1e5 the correctly rounded decimal is the integer nearest to x·10^nd (the product is
    exact to far better than 1e-5, so only values within 1e-5 of a half are left to Python's
    ``round``), printed without trailing zeros but with one decimal at least, and a minus sign
    when x is negative (``round`` keeps the sign of a negative x that rounds to zero: '-0.0').
    Below 10^-nd nothing needs an exponent (``repr`` switches to one under 1e-4), and
    numbers of at most 15 significant digits print as themselves. Larger magnitudes and the
    near-halves go through ``round`` and ``repr``.
    """
    a = np.asarray(values, dtype=float).reshape(-1)
    n = a.shape[0]
    fin = np.isfinite(a)
    fast = fin & (np.abs(a) < _FAST_LIMIT)
    p = 10 ** nd
    y = np.where(fast, a, 0.0) * p
    k = np.rint(y)
    near_half = fast & (np.abs(y - np.floor(y) - 0.5) < 1e-5)
    s = np.abs(k).astype(np.int64)
    q, r = np.divmod(s, p)
    n_int = max(1, len(str(int(q.max())))) if n else 1
    width = 1 + n_int + 1 + nd
    slow = np.flatnonzero((fin & ~fast) | near_half)
    texts = [repr(round(v, nd)).encode("ascii") for v in a[slow].tolist()]
    width = max([width] + [len(t) for t in texts])
    m = np.zeros((n, width), np.uint8)
    m[:, 0] = np.where(np.signbit(a) & fast, ord("-"), 0)
    for i in range(n_int):
        unit = 10 ** (n_int - 1 - i)
        digit = (q // unit) % 10 + 48
        m[:, 1 + i] = digit if i == n_int - 1 else np.where(q >= unit, digit, 0)
    m[:, 1 + n_int] = ord(".")
    for i in range(nd):
        unit = 10 ** (nd - 1 - i)
        digit = (r // unit) % 10 + 48
        m[:, 2 + n_int + i] = digit if i == 0 else np.where(r % (unit * 10) != 0, digit, 0)
    m[~fast] = 0
    for i, t in zip(slow.tolist(), texts):
        m[i] = 0
        m[i, :len(t)] = np.frombuffer(t, np.uint8)
    return m


def _string_bytes(strings) -> np.ndarray:
    """CSV fields (already quoted where needed) as an (n, width) UTF-8 byte matrix, NUL-padded."""
    b = np.array([x.encode("utf-8") for x in strings], dtype=bytes)
    if b.dtype.itemsize == 0 or not len(b):
        return np.zeros((len(b), 0), np.uint8)
    return b.view(np.uint8).reshape(len(b), b.dtype.itemsize)


def _join_fields(columns: list[np.ndarray]) -> bytes:
    """Rows of CSV text from per-column (n, width) byte matrices: fields joined by commas,
    rows ended by a newline, NUL padding left out."""
    n = columns[0].shape[0]
    widths = [c.shape[1] + 1 for c in columns]
    m = np.full((n, sum(widths)), ord(","), np.uint8)
    o = 0
    for c, w in zip(columns, widths):
        m[:, o:o + w - 1] = c
        o += w
    m[:, -1] = ord("\n")
    return m.tobytes().translate(None, b"\0")
