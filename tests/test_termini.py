"""Chain ends: which residues count as charged termini (common practice, no source: the free
amine and carboxylate shift nearby nuclei by ppm, and peptide random-coil tables exclude them).
Checked on public entries whose construct boundaries are known from the files themselves."""
from shiftcheck.chem.nuclei import at_chain_terminus, entity_ends


def test_ubiquitin_ends_are_termini(realdata):
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.structure.mapping import map_sequence

    s = read_shifts(realdata / "ubiquitin" / "bmr17769.str")
    ens = read_models([realdata / "ubiquitin" / "1ubq.pdb"])
    ends = entity_ends(s, ens, [map_sequence(s, e).seq_to_res for e in ens])
    # BMRB 17769 lists the whole 76-residue protein and 1UBQ models residues 1-76
    assert ends == (1, 76)
    assert at_chain_terminus(1, "N", ends) and at_chain_terminus(76, "C", ends)
    assert not at_chain_terminus(76, "N", ends) and not at_chain_terminus(2, "N", ends)


def test_tagged_construct_cancels_the_ends(realdata):
    from shiftcheck.io.coords import read_models
    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.structure.mapping import map_sequence

    s = read_shifts(realdata / "hr3102a" / "2krk_shifts.str")
    ens = read_models([realdata / "hr3102a" / "2KRK.pdb"])
    # without models the re-wrapped list's own numbering (1-72) defines the ends ...
    assert entity_ends(s) == (1, 72)
    # ... but the NMR model carries an 11-residue N-terminal tag and residues past Seq_ID 72,
    # so neither listed end is a chain end of the protein in the tube
    assert entity_ends(s, ens, [map_sequence(s, e).seq_to_res for e in ens]) == (None, None)


def test_free_amine_nitrogen_is_not_a_range_error(realdata):
    # BMRB 15283 (GB3, solid state) lists Met 1 N at 38.95 ppm: the free alpha-amine of the
    # first residue (about 30-40 ppm, from memory), not an amide. The same value on an internal
    # residue is far outside the backbone N range and must still be reported.
    import dataclasses

    import numpy as np

    from shiftcheck.io.shift_formats import read_shifts
    from shiftcheck.score.datacheck import check_shifts

    s = read_shifts(realdata / "gb3" / "bmr15283.str")
    first_n = (s.seq_id == s.sequence_seq_ids.min()) & (s.atom_id == "N")
    assert np.isclose(s.value[first_n][0], 38.953)
    assert not [f for f in check_shifts(s) if f.rule == "range"]
    moved = s.value.copy()
    internal_n = np.flatnonzero((s.seq_id == 10) & (s.atom_id == "N"))[0]
    moved[internal_n] = 38.953
    bad = [f for f in check_shifts(dataclasses.replace(s, value=moved)) if f.rule == "range"]
    assert [(f.seq_id, f.atom_id) for f in bad] == [(10, "N")]
