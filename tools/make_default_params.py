"""Interim: write shiftcheck/data/params_default.json with the calibrate code (same as
`shiftcheck calibrate tools/realdata_pairs.tsv --data-dir $SHIFTCHECK_REALDATA -o ...`) while the
project's shift reader is incomplete. Usage: python tools/make_default_params.py"""
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
import realdata_pairs as rp  # noqa: E402

from shiftcheck.predict.calibrate import calibrate  # noqa: E402
from shiftcheck.predict.params import save_params  # noqa: E402

ps = rp.pairs()
ds = rp.load(ps)
p = calibrate(ds, description=f"tools/realdata_pairs.tsv ({len(ps)} pairs)")
save_params(p, Path(__file__).parent.parent / "shiftcheck/data/params_default.json")
print(len(ds), p["default_ring_model"]["value"], p["expected_error"]["values"])
