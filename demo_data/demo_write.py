"""Helpers of make_demo.py: writers for PDB, mmCIF and NMR-STAR 3.1.

Used only to make the INVENTED demo scenario (invented protein, invented lab).
"""
from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np

__all__ = ["write_pdb", "write_mmcif", "write_star", "atomic_write"]


def atomic_write(path: Path, text: str) -> None:
    """Write text to path through a temporary file and os.replace."""
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=".tmp_", dir=path.parent)
    with os.fdopen(fd, "w", newline="\n") as fh:
        fh.write(text)
    os.chmod(tmp, 0o644)
    os.replace(tmp, path)


def _structure(ens, model: int = 0):
    import gemmi

    st = gemmi.Structure()
    st.name = "KFPA"
    m = gemmi.Model("1")
    ch = gemmi.Chain(ens.chain_id)
    serial = 0
    for r in range(ens.n_residues):
        res = gemmi.Residue()
        res.name = str(ens.res_name[r])
        res.seqid = gemmi.SeqId(int(ens.res_seq[r]), " ")
        res.entity_type = gemmi.EntityType.Polymer
        for a in np.flatnonzero(ens.atom_res == r):
            at = gemmi.Atom()
            at.name = str(ens.atom_name[a])
            at.element = gemmi.Element(str(ens.element[a]))
            x, y, z = (round(float(v), 3) for v in ens.coords[model, a])
            at.pos = gemmi.Position(x, y, z)
            at.occ = 1.0
            at.b_iso = 20.0
            serial += 1
            at.serial = serial
            res.add_atom(at)
        ch.add_residue(res)
    m.add_chain(ch)
    st.add_model(m)
    st.setup_entities()
    return st


def write_pdb(ens, path: Path, title: str, remarks: list[str]) -> None:
    """PDB file with an invented-data header and heavy atoms (gemmi formats the records)."""
    import gemmi

    st = _structure(ens)
    opt = gemmi.PdbWriteOptions(minimal=True)
    body = st.make_pdb_string(opt)
    head = ["HEADER    DE NOVO PROTEIN (INVENTED DEMO DATA)    01-JAN-00   XXXX              ",
            f"TITLE     {title.upper()[:69]}"]
    head += [f"REMARK 250 {r[:68]}" for r in remarks]
    head += ["EXPDTA    THEORETICAL MODEL"]
    lines = [ln for ln in body.splitlines() if ln[:6] not in ("HEADER", "TITLE ", "EXPDTA")]
    atomic_write(path, "\n".join(f"{h:<80}".rstrip() for h in head) + "\n" + "\n".join(lines) + "\n")


def write_mmcif(ens, path: Path, title: str, remarks: list[str]) -> None:
    """mmCIF file (gemmi) with an invented-data title and details."""
    st = _structure(ens)
    st.info["_struct.title"] = title
    st.info["_struct.pdbx_descriptor"] = "INVENTED DEMO DATA: " + " ".join(remarks)
    st.info["_exptl.method"] = "THEORETICAL MODEL"
    doc = st.make_mmcif_document()
    doc.check_for_duplicates()
    atomic_write(path, doc.as_string())


_ATOM_TAGS = ["ID", "Assembly_atom_ID", "Entity_assembly_ID", "Entity_ID", "Comp_index_ID", "Seq_ID",
              "Comp_ID", "Atom_ID", "Atom_type", "Atom_isotope_number", "Val", "Val_err",
              "Assign_fig_of_merit", "Ambiguity_code", "Ambiguity_set_ID", "Occupancy", "Resonance_ID",
              "Auth_entity_assembly_ID", "Auth_asym_ID", "Auth_seq_ID", "Auth_comp_ID", "Auth_atom_ID",
              "Details", "Entry_ID", "Assigned_chem_shift_list_ID"]
_ISOTOPE = {"H": "1", "C": "13", "N": "15"}


def write_star(path: Path, entry_id: str, title: str, lab: str, seq: list[str], rows: list[tuple],
               temperature_K: float, pH: float) -> None:
    """NMR-STAR 3.1 entry: entry information, entity, sample conditions, assigned shift list.

    ``rows`` are (seq_id, comp_id, atom_id, value, error, ambiguity_code).
    """
    import pynmrstar

    from shiftcheck.chem.residues import THREE_TO_ONE

    entry = pynmrstar.Entry.from_scratch(entry_id)

    def frame(name, category, prefix, tags):
        sf = pynmrstar.Saveframe.from_scratch(name, prefix)
        sf.add_tag("Sf_category", category)
        sf.add_tag("Sf_framecode", name)
        if category == "entry_information":
            sf.add_tag("ID", entry_id)
        else:
            sf.add_tag("Entry_ID", entry_id)
            sf.add_tag("ID", "1")
        for k, v in tags:
            sf.add_tag(k, v)
        entry.add_saveframe(sf)
        return sf

    info = frame("entry_information", "entry_information", "_Entry",
                 [("Title", title), ("Type", "macromolecule"), ("Version_type", "original"),
                  ("NMR_STAR_version", "3.1.1.61"), ("Details", "INVENTED DEMO DATA made by "
                   "demo_data/make_demo.py of shiftcheck; not a real protein and not a real laboratory.")])
    auth = pynmrstar.Loop.from_scratch("_Entry_author")
    auth.add_tag(["Ordinal", "Given_name", "Family_name", "Entry_ID"])
    auth.add_data([["1", ".", lab, entry_id]])
    info.add_loop(auth)

    one = "".join(THREE_TO_ONE[s] for s in seq)
    ent = frame("entity_1", "entity", "_Entity",
                [("Name", title), ("Type", "polymer"), ("Polymer_type", "polypeptide(L)"),
                 ("Polymer_seq_one_letter_code", one), ("Number_of_monomers", str(len(seq)))])
    comp = pynmrstar.Loop.from_scratch("_Entity_comp_index")
    comp.add_tag(["ID", "Auth_seq_ID", "Comp_ID", "Entry_ID", "Entity_ID"])
    comp.add_data([[str(i + 1), str(i + 1), s, entry_id, "1"] for i, s in enumerate(seq)])
    ent.add_loop(comp)

    cond = frame("sample_conditions_1", "sample_conditions", "_Sample_condition_list", [])
    var = pynmrstar.Loop.from_scratch("_Sample_condition_variable")
    var.add_tag(["Type", "Val", "Val_err", "Val_units", "Sample_condition_list_ID", "Entry_ID"])
    var.add_data([["temperature", f"{temperature_K:g}", "0.1", "K", "1", entry_id],
                  ["pH", f"{pH:g}", "0.05", "pH", "1", entry_id]])
    cond.add_loop(var)

    sl = frame("assigned_chem_shifts_1", "assigned_chemical_shifts", "_Assigned_chem_shift_list",
               [("Sample_condition_list_ID", "1"), ("Sample_condition_list_label", "$sample_conditions_1"),
                ("Chem_shift_reference_ID", "1"), ("Details", "INVENTED DEMO DATA")])
    loop = pynmrstar.Loop.from_scratch("_Atom_chem_shift")
    loop.add_tag(_ATOM_TAGS)
    data = []
    for k, (sid, cid, aid, val, err, amb) in enumerate(rows, start=1):
        t = aid[0]
        data.append([str(k), ".", "1", "1", str(sid), str(sid), cid, aid, t, _ISOTOPE[t], f"{val:.3f}",
                     f"{err:.2f}", ".", str(amb), ".", ".", ".", "1", "A", str(sid), cid, aid, ".",
                     entry_id, "1"])
    loop.add_data(data)
    sl.add_loop(loop)
    atomic_write(path, str(entry))
