"""residues.csv carries both numberings: seq_id in the shift list's numbering and model_res in
the model's own. Source of the expected offsets: the files themselves — the re-wrapped BMRB list
of 2KRK starts at Asn 1, while PDB 2KRK carries an 11-residue tag (Met 1 ... Pro 11, Asn 12) and
crystal structure 3KW6 starts three residues earlier (Pro 1-3, Asn 4); see also
SHIFTCHECK_REALDATA/README.md."""
import csv

from shiftcheck.cli import main


def test_model_numbering_column(realdata, tmp_path):
    d = realdata / "hr3102a"
    out = tmp_path / "o"
    assert main(["score", str(d / "2krk_shifts.str"), str(d / "2KRK.pdb"), str(d / "3KW6.pdb"), "-o",
                 str(out), "--no-report", "--quiet", "--bootstrap", "50"]) == 0
    with open(out / "residues.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    offs = {}
    for r in rows:
        offs.setdefault(r["model"].split("#")[0], set()).add(int(r["model_res"]) - int(r["seq_id"]))
    assert offs["2KRK.pdb"] == {11}
    assert offs["3KW6.pdb"] == {3}
