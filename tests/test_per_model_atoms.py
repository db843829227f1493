"""Per-model atom comparison (issue 13, item 4): a model that lacks residues, hydrogens or side
chains is handled on its own.

Built from ../shared/realdata/ubiquitin: 1D3Z.pdb (NMR ensemble with protons), 1ubq.pdb
(X-ray, no protons) and BMRB 17769 shifts."""
import numpy as np
import pytest

from shiftcheck.io.coords import read_models
from shiftcheck.io.shift_formats import read_shifts
from shiftcheck.pipeline import score_models


def _models(path, n=3):
    """The first n MODEL blocks of a PDB file as lists of ATOM lines."""
    out, cur = [], None
    for ln in path.read_text().splitlines():
        if ln.startswith("MODEL"):
            cur = []
        elif ln.startswith("ENDMDL"):
            out.append(cur)
            cur = None
            if len(out) == n:
                break
        elif cur is not None and ln.startswith("ATOM"):
            cur.append(ln)
    return out


def _write(tmp_path, name, models):
    text = []
    for k, m in enumerate(models, 1):
        text += [f"MODEL     {k:4d}", *m, "ENDMDL"]
    p = tmp_path / name
    p.write_text("\n".join(text + ["END"]) + "\n")
    return p


@pytest.fixture(scope="module")
def ubq(realdata):
    return read_shifts(realdata / "ubiquitin" / "bmr17769.str"), realdata / "ubiquitin"


def _score(shifts, paths):
    return score_models(shifts, read_models([str(p) for p in paths]), n_boot=20, include_mean=False)


def test_gap_in_one_model_is_left_out_for_that_model_only(ubq, tmp_path):
    shifts, d = ubq
    ms = _models(d / "1D3Z.pdb")
    full = _score(shifts, [_write(tmp_path, "full.pdb", ms)])
    gap = [ms[0], [ln for ln in ms[1] if not 30 <= int(ln[22:26]) <= 40], ms[2]]
    res = _score(shifts, [_write(tmp_path, "gap.pdb", gap)])
    fin = np.isfinite(res.comparison.predicted)
    assert len(res.comparison) == len(full.comparison)         # others keep their atoms
    assert fin[0].all() and fin[2].all()
    in_gap = (res.comparison.seq_id >= 30) & (res.comparison.seq_id <= 40)   # 1D3Z numbers as BMRB
    assert in_gap.any() and not fin[1, in_gap].any() and fin[1, ~in_gap].all()
    assert any("gap.pdb#2: lacks" in w for w in res.warnings)
    assert np.isfinite(res.ranking.score).all()


def test_hydrogens_built_for_the_model_that_has_none(ubq, tmp_path):
    shifts, d = ubq
    ms = _models(d / "1D3Z.pdb")
    noh = [ms[0], [ln for ln in ms[1] if ln[76:78].strip() != "H"], ms[2]]
    ens = read_models(str(_write(tmp_path, "noh.pdb", noh)))[0]
    h = np.flatnonzero(ens.atom_name == "H")
    assert h.size > 60 and np.isfinite(ens.coords[1, h, 0]).mean() > 0.95
    assert any("whose file records lack protons" in w for w in ens.warnings)
    # built amide H lies 1.0 A from its N in the stripped model
    n = ens.indices(ens.atom_res[h], "N")
    dist = np.linalg.norm(ens.coords[1, h] - ens.coords[1, n], axis=-1)
    assert np.nanmedian(dist) == pytest.approx(1.0, abs=0.05)


def test_ca_only_model_does_not_shrink_the_others(ubq, tmp_path):
    shifts, d = ubq
    ca = [ln for ln in (d / "1ubq.pdb").read_text().splitlines() if ln.startswith("ATOM") and ln[12:16] == " CA "]
    p = tmp_path / "ca_only.pdb"
    p.write_text("\n".join(ca + ["END"]) + "\n")
    alone = _score(shifts, [d / "1ubq.pdb"])
    both = _score(shifts, [d / "1ubq.pdb", p])
    names = [e.name for e in both.comparison.entries]
    i, j = names.index("1ubq.pdb"), names.index("ca_only.pdb")
    assert np.isfinite(both.comparison.predicted[i]).sum() == len(alone.comparison)
    fin = np.isfinite(both.comparison.predicted[j])
    assert set(both.comparison.atom_id[fin]) <= {"CA"}
    assert "ca_only.pdb" in both.comparison.absent
    assert any("ca_only.pdb: lacks" in w for w in both.warnings)


def test_clash_gives_a_warning(ubq, tmp_path):
    """Gly 10 of 1UBQ moved onto the Phe 45 ring (0.6 A above its centre): its HA is predicted
    below 2 ppm, outside anything measured for HA (shift_ranges.json), and a warning says so."""
    shifts, d = ubq
    atoms = [ln for ln in (d / "1ubq.pdb").read_text().splitlines() if ln.startswith("ATOM")]
    xyz = lambda ln: np.array([float(ln[30:38]), float(ln[38:46]), float(ln[46:54])])  # noqa: E731
    ring = np.array([xyz(ln) for ln in atoms if int(ln[22:26]) == 45
                     and ln[12:16].strip() in ("CG", "CD1", "CD2", "CE1", "CE2", "CZ")])
    nrm = np.cross(ring[1] - ring[0], ring[2] - ring[0])
    ca = next(xyz(ln) for ln in atoms if int(ln[22:26]) == 10 and ln[12:16] == " CA ")
    move = ring.mean(0) + 0.6 * nrm / np.linalg.norm(nrm) - ca
    out = [ln[:30] + "%8.3f%8.3f%8.3f" % tuple(xyz(ln) + move) + ln[54:] if int(ln[22:26]) == 10 else ln
           for ln in atoms]
    p = tmp_path / "clash.pdb"
    p.write_text("\n".join(out) + "\nEND\n")
    res = _score(shifts, [p])
    w = [x for x in res.warnings if "outside the usual range" in x]
    assert len(w) == 1 and "GLY 10 HA" in w[0]
    clean = _score(shifts, [d / "1ubq.pdb"])
    assert not [x for x in clean.warnings if "outside the usual range" in x]
