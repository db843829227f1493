"""Every number shipped in shiftcheck/data/*.json carries a source: a non-empty "source" string
in the object that holds it or in one that encloses it (project rule: every constant and fitted
number lives in a data file with its source). Metadata has one spelling in every file: a
top-level "description" and "source" strings (shiftcheck.datafiles.META_KEYS)."""
import json
from importlib import resources

import pytest

DATA = resources.files("shiftcheck.data")
FILES = sorted(p.name for p in DATA.iterdir() if p.name.endswith(".json"))
SOURCE_KEYS = ("source",)


def _has_source(obj) -> bool:
    return isinstance(obj, dict) and any(
        isinstance(obj.get(k), (str, dict, list)) and obj.get(k) for k in SOURCE_KEYS)


def _unsourced(obj, path="", sourced=False):
    """Paths of numeric leaves with no source on the way from the root."""
    here = sourced or _has_source(obj)
    if isinstance(obj, dict):
        for k, v in obj.items():
            if k in SOURCE_KEYS:
                continue
            yield from _unsourced(v, f"{path}/{k}", here)
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _unsourced(v, f"{path}[{i}]", here)
    elif isinstance(obj, (int, float)) and not isinstance(obj, bool) and not here:
        yield path


@pytest.mark.parametrize("name", FILES)
def test_every_number_has_a_source(name):
    data = json.loads(DATA.joinpath(name).read_text())
    missing = list(_unsourced(data))
    assert not missing, f"{name}: numbers without a source: {missing[:8]}"


def test_files_found():
    assert "params_default.json" in FILES and "random_coil.json" in FILES


def _keys(obj):
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield k
            yield from _keys(v)
    elif isinstance(obj, list):
        for v in obj:
            yield from _keys(v)


@pytest.mark.parametrize("name", FILES)
def test_one_spelling_of_metadata(name):
    data = json.loads(DATA.joinpath(name).read_text())
    assert isinstance(data.get("description"), str) and data["description"], name
    odd = sorted({k for k in _keys(data) if k.startswith("_") or k in ("comment", "sources", "note")})
    assert not odd, f"{name}: metadata keys other than description/source: {odd}"
