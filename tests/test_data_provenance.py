"""Every number shipped in shiftcheck/data/*.json carries a source: a non-empty "source" (or
"_source", "sources", "_comment") string in the object that holds it or in one that encloses it
(project rule: every constant and fitted number lives in a data file with its source)."""
import json
from importlib import resources

import pytest

DATA = resources.files("shiftcheck.data")
FILES = sorted(p.name for p in DATA.iterdir() if p.name.endswith(".json"))
SOURCE_KEYS = ("source", "_source", "sources", "_comment", "_sources")


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
