"""Secondary structure of ubiquitin 1UBQ against its known elements.

Reference (from memory, PDB/DSSP annotation of 1UBQ): alpha helix 23-34, 3-10 helix 56-59,
beta strands 1-7, 10-17, 40-45, 48-49, 66-72.
"""
from __future__ import annotations

import numpy as np

from shiftcheck.score.secondary import assign_secondary


def test_ubiquitin_elements(realdata):
    from shiftcheck.io.coords import read_models

    ens = read_models([realdata / "ubiquitin" / "1ubq.pdb"])[0]
    ss = assign_secondary(ens)[0]
    at = {int(r): c for r, c in zip(ens.res_seq, ss)}
    helix = [at[r] for r in range(24, 34)]
    strands = [at[r] for r in list(range(2, 7)) + list(range(12, 16)) + list(range(66, 71))]
    assert helix.count("H") >= 9
    assert strands.count("E") >= 12
    ref = np.array(["C"] * 76, dtype="<U1")
    for a, b, c in ((23, 34, "H"), (56, 59, "H"), (1, 7, "E"), (10, 17, "E"), (40, 45, "E"),
                    (48, 49, "E"), (66, 72, "E")):
        ref[a - 1:b] = c
    got = np.array([at.get(r, "C") for r in range(1, 77)])
    assert np.mean(got == ref) >= 0.75
