"""Fit the shipped parameters on the public realdata pairs (tools/realdata_pairs.tsv).

Usage (from the repository root)::

    SHIFTCHECK_REALDATA=../shared/realdata python tools/calibrate_realdata.py -o shiftcheck/data/params_default.json

The same fit as ``shiftcheck calibrate tools/realdata_pairs.tsv --data-dir "$SHIFTCHECK_REALDATA"``
(:func:`shiftcheck.predict.calibrate.calibrate` on the same pairs, with the same description), but
the shift lists are read by :func:`realdata_pairs.read_shifts_any`, which also reads the two
nef_set BMRB files that are bare saveframes, and features are cached per pair (.cache/).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import realdata_pairs as rp  # noqa: E402


def fit(pair_list=None, cache: bool = True) -> dict:
    """The parameter dict fitted on ``pair_list`` (default: every pair of the pairs file)."""
    from shiftcheck.predict.calibrate import calibrate

    pair_list = pair_list if pair_list is not None else rp.pairs()
    ds = rp.load(pair_list, cache=cache)
    return calibrate(ds, description=f"tools/realdata_pairs.tsv ({len(pair_list)} pairs)")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("-o", "--output", required=True)
    ap.add_argument("--no-cache", action="store_true", help="recompute features (ignore .cache/)")
    a = ap.parse_args(argv)
    from shiftcheck.predict.params import save_params

    params = fit(cache=not a.no_cache)
    save_params(params, a.output)
    ee = params["expected_error"]["values"]
    print(f"wrote {a.output}: default ring model {params['default_ring_model']['value']}; "
          "expected error (ppm): " + ", ".join(f"{k} {v:.3f}" for k, v in ee.items()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
