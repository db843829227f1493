"""`check` reports what `score` notices (issue 13): repeated rows with different values, atoms
a residue does not have (ALA HG), another residue type at a position. Built from the real
list ../shared/realdata/server_models/akmt_d34a_shifts.str21 (NMR-STAR 2.1 fragment);
atom names: IUPAC 1998 (Markley et al., Pure Appl. Chem. 70:117)."""
import json

from shiftcheck.cli import main


def _edited(realdata, tmp_path):
    lines = (realdata / "server_models" / "akmt_d34a_shifts.str21").read_text().splitlines()
    rows = [i for i, ln in enumerate(lines) if ln.strip()[:1].isdigit() and len(ln.split()) == 8]
    ala = next(i for i in rows if lines[i].split()[2] == "ALA" and lines[i].split()[3] == "HA")
    f = lines[ala].split()
    lines[ala] = " ".join(f[:3] + ["HG", "H", "1.234"] + f[6:])            # ALA HG
    dup = rows[0]
    f = lines[dup].split()
    lines.insert(dup + 1, " ".join([str(9999)] + f[1:5] + [f"{float(f[5]) + 1.5:.3f}"] + f[6:]))
    other = rows[20] + 1
    f = lines[other].split()
    conflict_seq = f[1]
    lines[other] = " ".join(f[:2] + ["TRP" if f[2] != "TRP" else "ALA"] + f[3:])
    p = tmp_path / "edited.str21"
    p.write_text("\n".join(lines) + "\n")
    return p, ala + 1 + (dup < ala), dup + 2, int(conflict_seq)   # the inserted row shifts later lines


def test_check_reports_rows(realdata, tmp_path, capsys):
    p, ala_line, dup_line, conflict_seq = _edited(realdata, tmp_path)
    assert main(["check", str(p), "--json"]) == 0
    found = json.loads(capsys.readouterr().out)
    by = {}
    for f in found:
        by.setdefault(f["rule"], []).append(f)
    assert [f["atom_id"] for f in by["unknown_atom"]] == ["HG"] and f"line {ala_line}" in by["unknown_atom"][0]["message"]
    assert len(by["duplicate"]) == 1 and by["duplicate"][0]["severity"] == "warning"
    assert str(dup_line) in by["duplicate"][0]["message"]
    assert [f["seq_id"] for f in by["residue_conflict"]] == [conflict_seq]


def test_clean_real_list_has_none(realdata, capsys):
    assert main(["check", str(realdata / "server_models" / "akmt_d34a_shifts.str21"), "--json"]) == 0
    rules = {f["rule"] for f in json.loads(capsys.readouterr().out)}
    assert not rules & {"unknown_atom", "duplicate", "residue_conflict"}
