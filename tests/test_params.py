"""Parameter files: provenance of every number, validation errors name the file."""
import json

import pytest

from shiftcheck.errors import ParameterError
from shiftcheck.predict.params import default_params_path, load_params, numeric_sources, save_params
from shiftcheck.predict.randomcoil import load_table


def test_every_number_has_a_source():
    params = load_params()
    leaves = numeric_sources(params)
    assert len(leaves) > 500
    missing = [p for p, _, s in leaves if not s.strip()]
    assert not missing, missing[:5]
    assert all(s.strip() for _, _, s in numeric_sources(load_table()))


def test_default_file_structure():
    p = load_params()
    assert p["default_ring_model"]["value"] in p["coefficients"]
    assert set(p["coefficients"]) == {"haigh-mallion", "johnson-bovey", "point-dipole"}
    # expected errors of a structure-based backbone predictor are a few tenths of a ppm for
    # protons, about 1 ppm for carbons and 2-3 ppm for amide N (order of magnitude from
    # memory of published predictors' accuracies); protons must be below carbons below N
    e = p["expected_error"]["values"]
    for nuc, hi in (("H", 0.8), ("HA", 0.5), ("CA", 2.0), ("CB", 2.0), ("C", 2.0), ("N", 4.0)):
        assert 0 < e[nuc] < hi, nuc
    assert max(e["H"], e["HA"]) < min(e["CA"], e["CB"], e["C"]) < e["N"]


def test_roundtrip(tmp_path):
    p = load_params()
    out = tmp_path / "p.json"
    save_params(p, out)
    q = load_params(out)
    assert q["coefficients"] == p["coefficients"]


@pytest.mark.parametrize("mutate", [
    lambda d: d.pop("coefficients"),
    lambda d: d.__setitem__("format", "other"),
    lambda d: d["default_ring_model"].__setitem__("value", "nonsense"),
    lambda d: d["coefficients"]["point-dipole"]["H"]["values"].append(1.0),
    lambda d: d["expected_error"]["values"].__setitem__("H", -1),
    lambda d: d["coefficients"]["point-dipole"]["H"].__setitem__("source", ""),
])
def test_malformed_file_raises_with_path(tmp_path, mutate):
    d = json.loads(open(default_params_path()).read())
    mutate(d)
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(d))
    with pytest.raises(ParameterError) as exc:
        load_params(bad)
    assert str(bad) in str(exc.value)


def test_not_json(tmp_path):
    bad = tmp_path / "x.json"
    bad.write_text("{not json")
    with pytest.raises(ParameterError):
        load_params(bad)
    with pytest.raises(ParameterError):
        load_params(tmp_path / "missing.json")
