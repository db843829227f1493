"""Chemistry facts in one place: residues (:mod:`.residues`), atom names (:mod:`.names`) and nucleus classes (:mod:`.nuclei`)."""
