"""Tolerant readers (issue 13, items 2-3): PDB columns without geometry repaired, shift-list
fragments and preambles read, with a note.

Real cases: ../shared/realdata/server_models/foldpro_1.pdb (charge column '01' ... and
prediction-contest columns 73-80), hsr50/2LOK_0006.pdb (left-justified residue numbers),
nef_set/2k07/bmr6546.str and nef_set/2ko1/bmr16486.str (bare save frames),
server_models/akmt_d34a_shifts.str21 (2.1 fragment; its sequence in akmt_d34a.seq).
Column layout: wwPDB Atomic Coordinate Entry Format 3.3, ATOM record."""
import numpy as np
import pytest

from shiftcheck.io.coords import read_model_file
from shiftcheck.io.pdb_repair import repair_pdb_columns
from shiftcheck.io.shift_formats import read_shifts

LINE = "ATOM      1  N   MET A   1     -18.044  73.419 -15.242  1.00108.73           N  "


def _xyz_from_columns(text):
    """Coordinates straight from columns 31-54 of ATOM lines (independent of gemmi)."""
    return np.array([[float(ln[30:38]), float(ln[38:46]), float(ln[46:54])]
                     for ln in text.splitlines() if ln.startswith("ATOM")])


@pytest.mark.parametrize("tail, kind", [
    ("           N01", "charge"), ("       1SG 102", "element"), ("           Q9 ", "element"),
])
def test_bad_tail_columns_repaired(tail, kind):
    s = LINE[:66] + tail
    new, notes = repair_pdb_columns(s + "\n" + s + "\n")
    assert len([n for n in notes if kind in n]) == 1 and "2 lines" in " ".join(notes)
    assert new.splitlines()[0][:66] == s[:66]          # names, numbers, coordinates untouched


@pytest.mark.parametrize("occ_b, kind", [("  x.xx108.73", "occupancy"), ("  1.00abcdef", "B-factor")])
def test_bad_occupancy_and_b_repaired(occ_b, kind):
    s = LINE[:54] + occ_b + LINE[66:]
    new, notes = repair_pdb_columns(s + "\n")
    assert len(notes) == 1 and kind in notes[0] and new[:54] == s[:54]


def test_good_file_is_left_alone(realdata):
    text = (realdata / "ubiquitin" / "1D3Z.pdb").read_text()
    new, notes = repair_pdb_columns(text)
    assert new is text and notes == []


def test_foldpro_reads_with_coordinates_unchanged(realdata):
    path = realdata / "server_models" / "foldpro_1.pdb"
    ens = read_model_file(path)
    rep = [w for w in ens.warnings if w.startswith("repaired:")]
    assert any("charge" in w for w in rep) and len(rep) == len({w.split(":")[2] for w in rep})
    raw = _xyz_from_columns(path.read_text().replace("\r\n", "\n"))
    got = ens.coords[0][np.isfinite(ens.coords[0, :, 0])]
    assert got.shape == raw.shape                         # every ATOM line read
    assert np.allclose(np.sort(got, axis=0), np.sort(raw, axis=0), atol=1e-3)
    assert not set(ens.element) - {"C", "N", "O", "S", "H"}


def test_blank_chain_crlf_no_end(realdata):
    """Blank chain IDs, CRLF line ends and no END/TER (itasser_1.pdb rewritten so)."""
    lines = [ln[:21] + " " + ln[22:] for ln in
             (realdata / "server_models" / "itasser_1.pdb").read_text().splitlines() if ln.startswith("ATOM")]
    ens = read_model_file(_write(lines, "\r\n"))
    assert ens.n_residues > 150


def _write(lines, eol, name="m.pdb"):
    import tempfile
    from pathlib import Path

    p = Path(tempfile.mkdtemp()) / name
    p.write_bytes(eol.join(lines).encode())
    return p


def test_left_justified_residue_numbers(realdata):
    ens = read_model_file(realdata / "hsr50" / "2LOK_0006.pdb")
    assert ens.res_seq[0] >= 1 and np.all(np.diff(ens.res_seq) > 0)


@pytest.mark.parametrize("rel", ["nef_set/2k07/bmr6546.str", "nef_set/2ko1/bmr16486.str"])
def test_bare_save_frame(realdata, rel):
    sl = read_shifts(realdata / rel)
    assert len(sl) > 500 and any("no data_ block" in w for w in sl.warnings)


def test_star21_fragment_uses_its_sequence(realdata):
    sm = realdata / "server_models"
    sl = read_shifts(sm / "akmt_d34a_shifts.str21")
    assert any("fragment" in w for w in sl.warnings)
    text = (sm / "akmt_d34a_shifts.str21").read_text()
    block = text.split(";")[1]
    assert sl.one_letter == "".join(block.split())
    assert len(sl) == sum(1 for ln in text.splitlines() if ln.strip()[:1].isdigit()
                          and len(ln.split()) == 8)


def test_preamble_before_data_and_bom(realdata, tmp_path):
    src = (realdata / "ubiquitin" / "bmr17769.str").read_bytes()
    ref = read_shifts(realdata / "ubiquitin" / "bmr17769.str")
    p = tmp_path / "bmr17769.str.corr"
    p.write_bytes(b"Thu Mar  4 10:12:01 2010\n" + src)
    sl = read_shifts(p)
    assert len(sl) == len(ref) and any("before data_" in w for w in sl.warnings)
    assert np.array_equal(sl.line, ref.line + 1)
    q = tmp_path / "bom.str"
    q.write_bytes(b"\xef\xbb\xbf" + src)
    assert len(read_shifts(q)) == len(ref)


def test_headerless_star21_loop_rows(realdata, tmp_path):
    """The loop rows of akmt_d34a_shifts.str21 pasted without tags read as the same shifts."""
    sm = realdata / "server_models" / "akmt_d34a_shifts.str21"
    rows = [ln for ln in sm.read_text().splitlines() if ln.strip()[:1].isdigit() and len(ln.split()) == 8]
    p = tmp_path / "rows.txt"
    p.write_text("\n".join(rows) + "\n")
    sl, ref = read_shifts(p), read_shifts(sm)
    assert any("without tags" in w for w in sl.warnings)
    assert len(sl) == len(ref) and np.allclose(np.sort(sl.value), np.sort(ref.value))


def test_placeholder_values_left_out_with_their_line(realdata, tmp_path):
    """999.99, 9999.0 and 1e9 in a real list: set aside, named by line, the rest scored."""
    src = (realdata / "server_models" / "akmt_d34a_shifts.str21").read_text().splitlines()
    idx = [i for i, ln in enumerate(src) if ln.strip()[:1].isdigit() and len(ln.split()) == 8][:3]
    for i, v in zip(idx, ("999.99", "9999.0", "1e9")):
        parts = src[i].split()
        parts[5] = v
        src[i] = " ".join(parts)
    p = tmp_path / "ph.str21"
    p.write_text("\n".join(src) + "\n")
    from shiftcheck.score.datacheck import check_shifts

    sl = read_shifts(p)
    assert sorted(x["line"] for x in sl.placeholders) == [i + 1 for i in idx]
    found = [f for f in check_shifts(sl) if f.rule == "placeholder"]
    assert {f"line {i + 1}:" for i in idx} <= {f.message.split(" ", 2)[0] + " " + f.message.split(" ", 2)[1] for f in found}


def test_blank_chain_is_named_and_selectable(realdata):
    """Server models with blank chain IDs (server_models/chunk_tasser_1.pdb): one note, and
    --chain '' selects the chain."""
    from shiftcheck.io.coords import read_models

    p = realdata / "server_models" / "chunk_tasser_1.pdb"
    ens = read_model_file(p)
    assert ens.chain_id == "" and sum("blank chain ID" in w for w in ens.warnings) == 1
    assert read_models(p, chain="", build_hydrogens=False)[0].n_residues == ens.n_residues


def test_fast_tail_check_agrees_with_the_single_pattern(realdata):
    """The two-step test (distinct tails checked once) finds exactly the lines the one-pass
    pattern _BAD_LINE finds, on every public PDB file and on each malformed tail above."""
    from shiftcheck.io import pdb_repair as pr

    def fast_bad(text):
        return sorted(t for t in set(pr._TAIL.findall(text)) if not pr._GOOD.match(t))

    def slow_bad(text):
        return sorted({m.group(0)[54:] for m in pr._BAD_LINE.finditer(text)})

    texts = [p.read_text().replace("\r\n", "\n") for p in sorted(realdata.rglob("*.pdb"))]
    texts += [LINE[:66] + t + "\n" for t in ("           N01", "       1SG 102", "           Q9 ")]
    texts += [LINE[:54] + ob + LINE[66:] + "\n" for ob in ("  x.xx108.73", "  1.00abcdef")]
    assert len(texts) > 20 and any(slow_bad(t) for t in texts)
    for t in texts:
        assert fast_bad(t) == slow_bad(t)
