"""Plain shift tables (format documented in shiftcheck/io/shift_table.py)."""
import gzip

import numpy as np
import pytest

from shiftcheck.errors import InputError
from shiftcheck.io.shift_formats import read_shifts
from shiftcheck.io.shift_table import TABLE_COLUMNS


def _write(tmp_path, text, name="t.txt"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_column_order_documented():
    # the constant the reader uses must be the order the format description promises users
    # (module docstring of shiftcheck/io/shift_table.py; common practice, no source)
    import shiftcheck.io.shift_table as tables

    doc = " ".join(tables.__doc__.split())
    assert "Column order without a header: **seq_id, residue, atom, shift, error**" in doc
    assert TABLE_COLUMNS == ("seq_id", "comp_id", "atom_id", "value", "error")


def test_whitespace_table_without_header(tmp_path):
    p = _write(tmp_path, "# my shifts\n1 MET HN 8.35 0.02\n1 M CA 55.1  # comment\n\n"
                         "3 GLY HA1 3.97\n3 GLY HA2 3.80\n")
    s = read_shifts(p)
    assert s.seq_id.tolist() == [1, 1, 3, 3]
    # HN -> H and old Gly HA1/HA2 -> HA2/HA3 (Markley et al. 1998, Pure Appl. Chem. 70:117)
    assert s.atom_id.tolist() == ["H", "CA", "HA2", "HA3"]
    assert s.comp_id.tolist() == ["MET", "MET", "GLY", "GLY"]
    assert s.error[0] == 0.02 and np.isnan(s.error[1])
    assert s.atom_type.tolist() == ["H", "C", "H", "H"]
    # the sequence is rebuilt from the rows; residue 2 has no shift
    assert s.sequence == ("MET", "UNK", "GLY") and s.sequence_seq_ids.tolist() == [1, 2, 3]
    assert s.line.tolist() == [2, 3, 5, 6]


def test_comma_table_with_header_any_order(tmp_path):
    p = _write(tmp_path, "Residue,Num,Atom,Shift,Error,Note\nALA,5,CA,52.1,0.1,x\nA,6,HB,1.4,,y\n",
               "t.csv")
    s = read_shifts(p)
    assert s.seq_id.tolist() == [5, 6, 6, 6]
    # Ala HB as one row stands for the methyl: HB1, HB2, HB3 with one value
    assert s.atom_id.tolist() == ["CA", "HB1", "HB2", "HB3"]
    assert s.value.tolist() == [52.1, 1.4, 1.4, 1.4]


def test_gzip_table(tmp_path):
    p = tmp_path / "t.txt.gz"
    p.write_bytes(gzip.compress(b"1 ALA CA 52.0\n"))
    assert read_shifts(p).value.tolist() == [52.0]


def test_placeholder_skipped_with_warning(tmp_path):
    s = read_shifts(_write(tmp_path, "1 ALA CA 52.0\n2 ALA CA .\n"))
    assert len(s) == 1 and any("line 2" in w for w in s.warnings)


@pytest.mark.parametrize("text,line,words", [
    ("1 ALA CA\n", 1, "columns"),
    ("1 ALA CA 52\nx ALA CB 19\n", 2, "not an integer"),   # a late 'header' is a bad row
    ("1 ALA CA 52\n2 ALA CB abc\n", 2, "not a number"),
    ("1 ALA CA 52\n2.5 ALA CB 19\n", 2, "not an integer"),
    ("1 J CA 52\n", 1, "one-letter"),
    ("Hello world, this is not a table\n", 1, "not a shift table"),
    ("seq atom shift\n1 CA 52\n", 1, "lacks"),
    ("1 ALA CA 520\n", 1, "placeholder"),   # the only value is set aside: nothing left
    ("1 ALA CA .\n", None, "missing"),
])
def test_bad_tables(tmp_path, text, line, words):
    p = _write(tmp_path, text)
    with pytest.raises(InputError) as ei:
        read_shifts(p)
    msg = str(ei.value)
    assert "\n" not in msg and str(p) in msg
    if line is not None:
        assert ei.value.line == line and f":{line}:" in msg
    assert words in msg
