"""summary.json written item by item (shiftcheck.report.summary_json) has the bytes of json.dumps.

The reference is the standard library's ``json.dumps(doc, indent=1, allow_nan=False)`` (the
layout docs/outputs.md documents); no other source needed.
"""
from __future__ import annotations

import io
import json

import pytest
from hypothesis import given, settings, strategies as st

from shiftcheck.report.summary_json import Lazy, materialise, write_json

_leaf = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6),
                  st.floats(allow_nan=False, allow_infinity=False), st.text(max_size=8))
_tree = st.recursive(_leaf, lambda kids: st.one_of(st.lists(kids, max_size=4),
                                                   st.dictionaries(st.text(max_size=5), kids, max_size=4)),
                     max_leaves=25)


def _lazify(o, depth=0):
    """The same document with every other container a Lazy."""
    if isinstance(o, dict):
        d = {k: _lazify(v, depth + 1) for k, v in o.items()}
        return Lazy("dict", lambda: iter(d.items())) if depth % 2 == 0 else d
    if isinstance(o, list):
        lst = [_lazify(v, depth + 1) for v in o]
        return Lazy("list", lambda: iter(lst)) if depth % 2 == 0 else lst
    return o


def _written(doc) -> str:
    buf = io.StringIO()
    write_json(buf, doc)
    return buf.getvalue()


@settings(max_examples=60, deadline=None)
@given(_tree)
def test_lazy_document_written_as_json_dumps(doc):
    want = json.dumps(doc, indent=1, allow_nan=False) + "\n"
    assert _written(_lazify(doc)) == want
    assert _written(doc) == want
    assert materialise(_lazify(doc)) == doc


def test_summary_like_document_with_empty_and_nested_lazy_parts():
    doc = {"a": 1, "metrics": Lazy("dict", lambda: ((f"m{k}", {"H": {"rmsd": 0.1 * k, "n": 3}}) for k in range(3))),
           "empty_list": Lazy("list", lambda: iter(())), "empty_dict": Lazy("dict", lambda: iter(())),
           "inputs": {"models": Lazy("list", lambda: ({"name": "é", "paths": []} for _ in range(2)))},
           "z": [1, [2, {}]]}
    assert _written(doc) == json.dumps(materialise(doc), indent=1) + "\n"


def test_nan_refused_as_json_dumps_refuses_it():
    with pytest.raises(ValueError):
        _written({"x": Lazy("list", lambda: iter([float("nan")]))})
