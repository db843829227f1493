"""Put a shift list's residues in correspondence with a model chain by sequence alignment.

Shift lists and coordinate files rarely share a numbering: re-wrapped lists count from 1 along
the entity sequence, PDB files keep the author numbering and may carry tags or miss termini.
:func:`map_sequence` therefore aligns the two sequences and never trusts numbers alone.

Alignment: Biopython's ``PairwiseAligner`` (Cock et al. 2009, Bioinformatics 25:1422), global
with free end gaps, BLOSUM62 substitution scores (Henikoff & Henikoff 1992, PNAS 89:10915), gap
opening -10 and extension -0.5 (the customary defaults of global protein aligners; common
practice, no source).

Identity threshold: 0.9 by default. Point mutants, tag differences and the protein G B2/B3
domains pass (BMRB 2575, the B2 domain, against PDB 2OED, GB3: one difference in 56 aligned
residues, identity 0.98; BMRB 4974 against the CI2 crystal 1YPA: identity 0.92); another
protein gives about 0.1-0.3. The value is a judgement (no source): below it the shifts are
most likely of another protein, or of a variant whose shifts should not be compared residue by
residue.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from ..chem.residues import ONE_TO_THREE, THREE_TO_ONE
from ..defaults import DEFAULT_MIN_IDENTITY
from ..errors import MappingError
from ..shiftlist import ShiftList
from .ensemble import Ensemble

__all__ = ["Mapping", "map_sequence", "DEFAULT_MIN_IDENTITY"]



@dataclass
class Mapping:
    """Correspondence between shift-list residues (Seq_ID) and ensemble residues.

    Attributes
    ----------
    identity : float
        Identical residues / aligned residue pairs (pairs with an unknown residue 'X' on
        either side are mapped but not counted).
    coverage : float
        Fraction of the residues that carry shifts which have a model residue.
    n_aligned : int
        Aligned residue pairs.
    seq_to_res, res_to_seq : dict of int -> int
        Seq_ID -> residue index in the ensemble, and back.
    segments : list of tuple
        Runs of constant numbering offset: (first Seq_ID, last Seq_ID, first model residue
        number, last model residue number, offset = model number - Seq_ID).
    offsets : list of str
        One readable line per segment, e.g. ``"Seq_ID 1-95 -> model 5-99 (offset +4)"``.
    mismatches : list of tuple
        (Seq_ID, shift-list residue (three-letter), model residue label such as "GLN 2") for
        aligned but different residues.
    numbering : str
        Which numbering of the shift list equals the model's author numbering, if any.
    alignment : str
        The alignment as text (shifts on top, model below).
    unmapped_seq_ids : list of int
        Seq_IDs that carry shifts but have no model residue.
    """

    identity: float
    coverage: float
    n_aligned: int
    seq_to_res: dict[int, int]
    res_to_seq: dict[int, int]
    segments: list[tuple[int, int, int, int, int]]
    offsets: list[str]
    mismatches: list[tuple[int, str, str]]
    numbering: str
    alignment: str
    unmapped_seq_ids: list[int] = field(default_factory=list)
    chain_id: str = ""
    model: str = ""

    def table(self) -> str:
        """Compact multi-line description (for ``shiftcheck inspect``)."""
        lines = [f"identity {self.identity:.3f} over {self.n_aligned} aligned residues; "
                 f"coverage {self.coverage:.3f} of the residues with shifts"]
        lines += ["  " + o for o in self.offsets]
        lines.append("  numbering: " + self.numbering)
        if self.mismatches:
            lines.append("  mismatches (Seq_ID shift residue -> model residue): "
                         + ", ".join(f"{s} {a} -> {b}" for s, a, b in self.mismatches[:12])
                         + (" ..." if len(self.mismatches) > 12 else ""))
        if self.unmapped_seq_ids:
            lines.append(f"  {len(self.unmapped_seq_ids)} residue(s) with shifts but no model residue: "
                         + _ranges(self.unmapped_seq_ids))
        return "\n".join(lines)


@lru_cache(maxsize=1)
def _aligner():
    """The global aligner with BLOSUM62, created once (loading the matrix costs milliseconds)."""
    from Bio.Align import PairwiseAligner, substitution_matrices

    al = PairwiseAligner()
    al.mode = "global"
    al.substitution_matrix = substitution_matrices.load("BLOSUM62")
    al.open_gap_score = -10.0
    al.extend_gap_score = -0.5
    import Bio

    if tuple(int(x) for x in Bio.__version__.split(".")[:2]) >= (1, 85):  # renamed in 1.85
        al.end_insertion_score = 0.0
        al.end_deletion_score = 0.0
    else:  # pragma: no cover
        al.target_end_gap_score = 0.0
        al.query_end_gap_score = 0.0
    return al


@lru_cache(maxsize=64)
def _best_alignment(seq: str, model_seq: str):
    """First optimal global alignment; the same sequence pair (every file of a decoy set) is
    aligned once."""
    return _aligner().align(seq, model_seq)[0]


def _shift_sequence(shifts: ShiftList) -> tuple[str, np.ndarray]:
    """One-letter sequence and its Seq_IDs; rebuilt from the shifts if the list has none."""
    if len(shifts.sequence):
        ids = np.asarray(shifts.sequence_seq_ids, dtype=np.int64)
        if ids.size != len(shifts.sequence):
            ids = np.arange(1, len(shifts.sequence) + 1)
        return shifts.one_letter, ids
    if len(shifts) == 0:
        raise MappingError("the shift list holds no shifts and no sequence", path=shifts.source)
    seq = {}
    for s, c in zip(shifts.seq_id.tolist(), shifts.comp_id.tolist()):
        seq.setdefault(int(s), str(c))
    lo, hi = min(seq), max(seq)
    ids = np.arange(lo, hi + 1)
    return "".join(THREE_TO_ONE.get(seq.get(int(i), "UNK"), "X") for i in ids), ids


def _ranges(ids: list[int]) -> str:
    ids = sorted(ids)
    out, start = [], ids[0]
    for a, b in zip(ids, ids[1:] + [None]):
        if b is None or b != a + 1:
            out.append(f"{start}" if start == a else f"{start}-{a}")
            if b is not None:
                start = b
    return ", ".join(out)


def map_sequence(shifts: ShiftList, ens: Ensemble, min_identity: float = DEFAULT_MIN_IDENTITY) -> Mapping:
    """Align the shift list's sequence to the model chain and map Seq_ID to residues.

    Parameters
    ----------
    shifts : ShiftList
    ens : Ensemble
    min_identity : float
        Refuse below this identity (default 0.9, see the module docstring).

    Returns
    -------
    Mapping

    Raises
    ------
    MappingError
        Identity below ``min_identity`` or too little overlap: the shifts are probably of
        another protein.
    """
    seq, seq_ids = _shift_sequence(shifts)
    model_seq = ens.one_letter
    if not seq or not model_seq:
        raise MappingError("empty sequence: nothing to align", path=shifts.source)
    aln = _best_alignment(seq, model_seq)
    pairs = [(i, j) for (a0, a1), (b0, b1) in zip(*aln.aligned) for i, j in zip(range(a0, a1), range(b0, b1))]
    n = len(pairs)
    known = [seq[i] != "X" and model_seq[j] != "X" for i, j in pairs]
    same = [seq[i] == model_seq[j] for i, j in pairs]
    n_known = sum(known)
    identity = sum(s for s, k in zip(same, known) if k) / n_known if n_known else 0.0
    shorter = min(len(seq), len(model_seq))
    where = f" (model {ens.name}, chain {ens.chain_id})"
    if n < max(1, min(10, shorter // 2)) or n < 0.5 * shorter:
        raise MappingError(f"shifts are of another protein? only {n} residues align with the model "
                           f"sequence ({len(seq)} vs {len(model_seq)} residues){where}", path=shifts.source)
    if identity < min_identity:
        raise MappingError(f"shifts are of another protein? identity {identity:.2f} over {n} aligned "
                           f"residues, below the threshold {min_identity}{where}", path=shifts.source)
    seq_to_res = {int(seq_ids[i]): int(j) for i, j in pairs}
    res_to_seq = {j: s for s, j in seq_to_res.items()}
    mismatches = [(int(seq_ids[i]), ONE_TO_THREE.get(seq[i], "UNK"),
                   f"{ens.res_name[j]} {ens.res_seq[j]}{ens.res_icode[j]}")
                  for (i, j), ok, k in zip(pairs, same, known) if k and not ok]
    with_shifts = sorted(set(int(s) for s in np.asarray(shifts.seq_id).tolist()))
    unmapped = [s for s in with_shifts if s not in seq_to_res]
    coverage = 1.0 - len(unmapped) / len(with_shifts) if with_shifts else 0.0
    segments = _segments([(int(seq_ids[i]), j) for i, j in pairs], ens)
    return Mapping(identity=identity, coverage=coverage, n_aligned=n, seq_to_res=seq_to_res,
                   res_to_seq=res_to_seq, segments=segments,
                   offsets=[f"Seq_ID {a}-{b} -> model {c}-{d} (offset {o:+d})" for a, b, c, d, o in segments],
                   mismatches=mismatches, numbering=_numbering(shifts, seq_to_res, ens),
                   alignment=_format(aln, seq, model_seq, seq_ids, ens), unmapped_seq_ids=unmapped,
                   chain_id=ens.chain_id, model=ens.name)


def _segments(pairs: list[tuple[int, int]], ens: Ensemble) -> list[tuple[int, int, int, int, int]]:
    out: list[list[int]] = []
    for s, j in pairs:
        r = int(ens.res_seq[j])
        if out and s == out[-1][1] + 1 and r == out[-1][3] + 1 and r - s == out[-1][4]:
            out[-1][1], out[-1][3] = s, r
        else:
            out.append([s, s, r, r, r - s])
    return [tuple(x) for x in out]


def _numbering(shifts: ShiftList, seq_to_res: dict[int, int], ens: Ensemble) -> str:
    sid = np.asarray(shifts.seq_id).tolist()
    aid = np.asarray(shifts.auth_seq_id).tolist()
    auth_of = {int(s): int(a) for s, a in zip(sid, aid)}
    n = len(seq_to_res)
    eq_seq = sum(1 for s, j in seq_to_res.items() if ens.res_seq[j] == s)
    keys = [s for s in seq_to_res if s in auth_of]
    eq_auth = sum(1 for s in keys if ens.res_seq[seq_to_res[s]] == auth_of[s])
    differs = any(auth_of[s] != s for s in keys)
    if n and eq_seq == n:
        return "the model's author numbering equals the shift list's Seq_ID"
    if keys and differs and eq_auth == len(keys):
        return "the model's author numbering equals the shift list's Auth_seq_ID"
    best = max(eq_seq, eq_auth if differs else 0)
    return (f"neither Seq_ID nor Auth_seq_ID equals the model's numbering throughout "
            f"({best} of {n} aligned residues agree); mapping by alignment")


def _format(aln, seq: str, model_seq: str, seq_ids: np.ndarray, ens: Ensemble, width: int = 60) -> str:
    top, bottom = [], []
    i = j = 0
    for (a0, a1), (b0, b1) in zip(*aln.aligned):
        top.append(seq[i:a0] + "-" * (b0 - j))
        bottom.append("-" * (a0 - i) + model_seq[j:b0])
        top.append(seq[a0:a1])
        bottom.append(model_seq[b0:b1])
        i, j = a1, b1
    top.append(seq[i:] + "-" * (len(model_seq) - j))
    bottom.append("-" * (len(seq) - i) + model_seq[j:])
    t, b = "".join(top), "".join(bottom)
    mid = "".join("|" if x == y and x not in "-X" else ("." if x != "-" and y != "-" else " ")
                  for x, y in zip(t, b))
    first = f"shifts Seq_ID from {int(seq_ids[0])}; model {ens.chain_id} from {int(ens.res_seq[0])}"
    blocks = [first]
    for k in range(0, len(t), width):
        blocks.append(f"shifts {t[k:k + width]}\n       {mid[k:k + width]}\nmodel  {b[k:k + width]}")
    return "\n".join(blocks)
