"""Structure-free data checks on small hand-made lists (values typed from the cited tables)."""
from __future__ import annotations

import numpy as np

from shiftcheck.score.datacheck import check_against_models, check_shifts
from shiftcheck.shiftlist import ShiftList


def _list(rows):
    sid = np.array([r[0] for r in rows])
    comp = np.array([r[1] for r in rows], dtype=object)
    atom = np.array([r[2] for r in rows], dtype=object)
    val = np.array([r[3] for r in rows], float)
    n = len(rows)
    seq_ids = sorted(set(sid.tolist()))
    seq = tuple(dict(zip(sid.tolist(), comp.tolist()))[i] for i in seq_ids)
    return ShiftList("/nonexistent/t.str", "1", "t", "1", seq, np.array(seq_ids), sid, sid.copy(), comp,
                     atom, np.array([a[0] for a in atom], dtype=object), val, np.full(n, np.nan),
                     np.ones(n, int), np.arange(n) + 1)


def _rules(findings, severity=None):
    return sorted((f.seq_id, f.rule) for f in findings if severity is None or f.severity == severity)


def test_ca_cb_swap_rule_with_random_coil_values():
    # random coil (Wishart et al. 1995, from memory): Ala CA 52.5 CB 19.1; Ser CA 58.3 CB 63.8;
    # Thr CA 61.8 CB 69.8
    rows = [(1, "ALA", "CA", 52.9), (1, "ALA", "CB", 19.0),      # normal
            (2, "ALA", "CA", 19.0), (2, "ALA", "CB", 52.9),      # swapped
            (3, "SER", "CA", 58.0), (3, "SER", "CB", 64.0),      # normal Ser: CB > CA
            (4, "SER", "CA", 64.0), (4, "SER", "CB", 58.0),      # swapped Ser
            (5, "THR", "CA", 61.5), (5, "THR", "CB", 70.1),      # normal Thr
            (6, "SER", "CA", 61.2), (6, "SER", "CB", 62.8),      # helical Ser: CA up 3, not a swap
            (7, "THR", "CA", 70.0), (7, "THR", "CB", 61.0)]      # swapped Thr
    got = [f.seq_id for f in check_shifts(_list(rows)) if f.rule == "ca_cb_swap"]
    assert got == [2, 4, 7]


def test_placeholders_ranges_duplicates():
    # 0.0 and 999 are the usual "no value" fillers; Gly CA 145 ppm is ~100 ppm above any
    # protein CA (random coil 45 ppm, Wishart et al. 1995, from memory); the same atom twice
    # is a duplicate; Leu HA 4.3 and CG 26.5 are ordinary values (common practice, no source)
    rows = [(1, "LYS", "CA", 0.0), (1, "LYS", "N", 999.0), (2, "LYS", "H", 8.2), (2, "LYS", "H", 8.3),
            (3, "GLY", "CA", 145.0), (4, "LEU", "HA", 4.3), (4, "LEU", "CG", 26.5)]
    f = check_shifts(_list(rows))
    assert _rules(f) == [(1, "placeholder"), (1, "placeholder"), (2, "duplicate"), (3, "range")]


def test_cis_pro_and_cys_redox():
    # Pro CB-CG: about 4.5 trans, 9.5 cis (Schubert et al. 2002, from memory)
    # Cys CB: about 28 reduced, 40 oxidised (Sharma & Rajarathnam 2000, from memory)
    rows = [(1, "PRO", "CB", 32.0), (1, "PRO", "CG", 27.3),
            (2, "PRO", "CB", 34.5), (2, "PRO", "CG", 24.6),
            (3, "CYS", "CB", 28.2), (4, "CYS", "CB", 41.0)]
    f = {(x.seq_id, x.rule): x for x in check_shifts(_list(rows))}
    assert f[(1, "cis_pro")].state == "trans" and f[(1, "cis_pro")].severity == "note"
    assert f[(2, "cis_pro")].state == "cis" and f[(2, "cis_pro")].severity == "warning"
    assert f[(3, "cys_redox")].state == "reduced"
    assert f[(4, "cys_redox")].state == "oxidised"
    assert all(x.source for x in f.values())


def test_cys_state_compared_with_model_disulfide():
    from shiftcheck.structure.builder import build_protein
    from shiftcheck.structure.mapping import map_sequence

    seq = ["ALA", "CYS", "GLY", "CYS", "ALA"]
    ens = build_protein(seq, np.full(5, -120.0), np.full(5, 130.0), name="m")
    # no disulfide in an extended chain: the oxidised-looking Cys 4 becomes a warning
    sl = _list([(1, "ALA", "CA", 52.0), (2, "CYS", "CB", 28.0), (3, "GLY", "CA", 45.0),
                (4, "CYS", "CB", 40.5), (5, "ALA", "CA", 52.0)])
    f = check_against_models(check_shifts(sl), [ens], [map_sequence(sl, ens)])
    cys = {x.seq_id: x for x in f if x.rule == "cys_redox"}
    assert cys[2].severity == "note"
    assert cys[4].severity == "warning" and "reduced" in cys[4].message
