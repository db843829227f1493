"""Bad shift input: every case raises InputError with a one-line message naming the file
(and the line where it is known). Bad files are built in tmp_path, from the real BMRB files
when SHIFTCHECK_REALDATA is set and from small hand-written STAR text otherwise."""
import gzip

import pytest

from shiftcheck.errors import InputError
from shiftcheck.io.shift_formats import read_shifts

SMALL3 = """data_small
save_list_1
   _Assigned_chem_shift_list.Sf_category  assigned_chemical_shifts
   _Assigned_chem_shift_list.ID           1
   loop_
      _Atom_chem_shift.ID
      _Atom_chem_shift.Seq_ID
      _Atom_chem_shift.Comp_ID
      _Atom_chem_shift.Atom_ID
      _Atom_chem_shift.Atom_type
      _Atom_chem_shift.Val
      1 1 MET CA C 55.1
      2 1 MET N  N 120.3
      3 2 LYS CA C 56.0
   stop_
save_
"""
SMALL21 = """data_small
save_list_1
   _Saveframe_category assigned_chemical_shifts
   _Details
;
free text
;
   loop_
      _Atom_shift_assign_ID _Residue_seq_code _Residue_label _Atom_name _Atom_type
      _Chem_shift_value _Chem_shift_value_error _Chem_shift_ambiguity_code
      1 1 MET CA C 55.1 . 1
      2 1 MET N  N 120.3 . 1
      3 2 LYS CA C 56.0 . 1
   stop_
save_
"""


def _check(path, line=None, words=None):
    with pytest.raises(InputError) as ei:
        read_shifts(path)
    msg = str(ei.value)
    assert "\n" not in msg and str(path) in msg, msg
    if line is not None:
        assert ei.value.line == line and f"{path}:{line}:" in msg, msg
    if words is not None:
        assert words.lower() in msg.lower(), msg
    return ei.value


def test_missing_file(tmp_path):
    _check(tmp_path / "nope.str", words="not found")


def test_directory(tmp_path):
    _check(tmp_path, words="directory")


def test_empty_file(tmp_path):
    p = tmp_path / "empty.str"
    p.write_text("  \n\n")
    _check(p, words="empty")


def test_binary_garbage(tmp_path):
    p = tmp_path / "garbage.str"
    p.write_bytes(bytes(range(256)) * 8)
    _check(p, words="binary")
    q = tmp_path / "garbage2.str"   # no NUL byte, not UTF-8, mostly control bytes
    q.write_bytes(bytes([0x81, 0x02, 0x03, 0x9f, 0xff, 0x10]) * 200)
    _check(q, words="binary")


def test_broken_gzip(tmp_path):
    p = tmp_path / "x.str.gz"
    p.write_bytes(gzip.compress(SMALL3.encode())[:30])
    _check(p, words="gzip")


@pytest.fixture(params=["3", "21"])
def star(request, tmp_path):
    """(lines of a STAR text, the line number of the shift loop's first row, version)."""
    text = SMALL3 if request.param == "3" else SMALL21
    lines = text.splitlines()
    first = next(i for i, s in enumerate(lines) if s.strip().startswith("1 1 MET")) + 1
    return lines, first, request.param


def _write(tmp_path, lines, name="bad.str"):
    p = tmp_path / name
    p.write_text("\n".join(lines) + "\n")
    return p


def test_small_files_read(tmp_path, star):
    lines, first, _ = star
    s = read_shifts(_write(tmp_path, lines))
    assert len(s) == 3 and s.line[0] == first


def test_truncated_open_loop(tmp_path, star):
    lines, first, _ = star
    _check(_write(tmp_path, lines[:first + 1]), words="loop")


def test_unclosed_semicolon_block(tmp_path, star):
    lines, first, _ = star
    bad = lines[:3] + ["   _Extra.Text", ";", "text that never ends"] + lines[3:first]
    bad = [s for s in bad if s.strip() != ";" or bad.index(s) == 4]  # keep one opening ';'
    e = _check(_write(tmp_path, bad))
    assert e.line is not None


def test_no_shift_loop(tmp_path, star):
    lines, first, _ = star
    loop_at = next(i for i, s in enumerate(lines) if s.strip() == "loop_")
    stop_at = next(i for i, s in enumerate(lines) if s.strip() == "stop_")
    _check(_write(tmp_path, lines[:loop_at] + lines[stop_at + 1:]), words="no assigned chemical shift")


def test_non_numeric_value(tmp_path, star):
    lines, first, _ = star
    bad = list(lines)
    bad[first] = bad[first].replace("120.3", "12O.3")
    _check(_write(tmp_path, bad), line=first + 1, words="not a number")


def test_out_of_range_value_is_a_placeholder_not_a_refusal(tmp_path, star):
    """A value outside -10..300 ppm (issue 13: 999, 1e9) is set aside as a placeholder and
    reported by the data checks with its line; only a list of nothing else is refused."""
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.score.datacheck import check_shifts

    lines, first, _ = star
    bad = list(lines)
    bad[first - 1] = bad[first - 1].replace("55.1", "5510")
    sl = read_shifts(_write(tmp_path, bad))
    assert 5510.0 not in sl.value and [p["line"] for p in sl.placeholders] == [first]
    f = [x for x in check_shifts(sl) if x.rule == "placeholder"]
    assert len(f) == 1 and f"line {first}:" in f[0].message


def test_wrong_value_count_21(tmp_path):
    lines = SMALL21.splitlines()
    first = next(i for i, s in enumerate(lines) if s.strip().startswith("1 1 MET"))
    lines[first] = lines[first].replace(" . 1", " 1")
    loop_line = next(i for i, s in enumerate(lines) if s.strip() == "loop_") + 1
    _check(_write(tmp_path, lines), line=loop_line, words="multiple")


# ------------------------------------------------------------- the same cases cut from real files

@pytest.fixture(params=["yppr/16570_v3.str", "yppr/16570_v2.str"])
def real(request, realdata):
    text = (realdata / request.param).read_text()
    lines = text.splitlines()
    s = read_shifts(realdata / request.param)
    return lines, s


def test_real_truncated(tmp_path, real):
    lines, s = real
    cut = int(s.line[len(s) // 2])
    _check(_write(tmp_path, lines[:cut]), words="loop")


def test_real_unclosed_semicolon(tmp_path, real):
    lines, s = real
    k = next(i for i, x in enumerate(lines) if x.startswith(";"))
    bad = lines[:k + 1] + [x for x in lines[k + 1:] if not x.startswith(";")]
    e = _check(_write(tmp_path, bad), line=k + 1)
    assert e.line == k + 1


def test_real_non_numeric(tmp_path, real):
    lines, s = real
    ln = int(s.line[10])
    bad = list(lines)
    val = f"{s.value[10]:.2f}".rstrip("0").rstrip(".")
    assert val in bad[ln - 1]
    bad[ln - 1] = bad[ln - 1].replace(" " + val, " abc", 1)
    _check(_write(tmp_path, bad), line=ln, words="'abc'")


def test_real_no_shift_loop(tmp_path, real):
    lines, s = real
    first, last = int(s.line.min()), int(s.line.max())
    start = max(i for i in range(first) if lines[i].strip() == "loop_")
    stop = next(i for i in range(last, len(lines)) if lines[i].strip() == "stop_")
    _check(_write(tmp_path, lines[:start] + lines[stop + 1:]), words="no assigned chemical shift")
