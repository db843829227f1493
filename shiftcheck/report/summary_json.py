"""summary.json written as it is made: the per-model parts are generated item by item.

``json.dumps(d, indent=1)`` needs the whole document as Python objects and then builds one
string per token before joining them (the pure-Python encoder: the C encoder does no
indentation); at 10,000 models that is a few hundred MB. :func:`write_json` writes the same
bytes (tests/test_summary_json.py compares it with ``json.dumps``) while holding one item of a
:class:`Lazy` part at a time: :func:`shiftcheck.report.tables.summary_dict` gives the
per-model parts (metrics, ranking, secondary structure, geometry, model files, mappings) as
``Lazy`` values, and :func:`materialise` turns them into plain lists and dicts for callers
who want the dict.
"""
from __future__ import annotations

import json
from collections.abc import Callable, Iterator

__all__ = ["Lazy", "write_json", "materialise"]


class Lazy:
    """A list (``kind='list'``: ``items()`` yields values) or dict (``kind='dict'``: yields
    ``(key, value)`` pairs) produced on demand; ``items`` may be called more than once."""

    __slots__ = ("kind", "items")

    def __init__(self, kind: str, items: Callable[[], Iterator]):
        if kind not in ("list", "dict"):
            raise ValueError(kind)
        self.kind, self.items = kind, items


def materialise(o):
    """``o`` with every :class:`Lazy` (at any depth of dicts and lists) as a plain list or dict."""
    if isinstance(o, Lazy):
        return ({k: materialise(v) for k, v in o.items()} if o.kind == "dict"
                else [materialise(v) for v in o.items()])
    if isinstance(o, dict):
        return {k: materialise(v) for k, v in o.items()}
    if isinstance(o, list):
        return [materialise(v) for v in o]
    return o


def _has_lazy(o) -> bool:
    if isinstance(o, Lazy):
        return True
    if isinstance(o, dict):
        return any(_has_lazy(v) for v in o.values())
    if isinstance(o, list):
        return any(_has_lazy(v) for v in o)
    return False


def write_json(fh, doc, default=None) -> None:
    """Write ``json.dumps(doc, indent=1, allow_nan=False, default=default) + "\\n"`` to ``fh``
    (a text file), :class:`Lazy` parts item by item."""
    enc = json.JSONEncoder(indent=1, allow_nan=False, default=default)
    key = json.encoder.encode_basestring_ascii

    def small(o, level: int) -> str:
        text = enc.encode(o)
        return text.replace("\n", "\n" + " " * level) if level else text

    def emit(o, level: int) -> None:
        if not _has_lazy(o):
            fh.write(small(o, level))
            return
        is_dict = o.kind == "dict" if isinstance(o, Lazy) else isinstance(o, dict)
        items = o.items() if isinstance(o, Lazy) else (o.items() if is_dict else iter(o))
        pad = "\n" + " " * (level + 1)
        first = True
        for item in items:
            fh.write(("{" if is_dict else "[") + pad if first else "," + pad)
            first = False
            if is_dict:
                k, v = item
                fh.write(key(_key(k)) + ": ")
                emit(v, level + 1)
            else:
                emit(item, level + 1)
        if first:
            fh.write("{}" if is_dict else "[]")
        else:
            fh.write("\n" + " " * level + ("}" if is_dict else "]"))

    emit(doc, 0)
    fh.write("\n")


def _key(k) -> str:
    """A dict key as json.dumps writes it (str, or int/float/bool/None converted)."""
    if isinstance(k, str):
        return k
    if k is True:
        return "true"
    if k is False:
        return "false"
    if k is None:
        return "null"
    if isinstance(k, (int, float)):
        return json.dumps(k)
    raise TypeError(f"keys must be str, int, float, bool or None, not {type(k).__name__}")
