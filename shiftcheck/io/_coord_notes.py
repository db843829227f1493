"""Warnings of the coordinate reader: what was dropped, renamed or is missing, in compact form."""
from __future__ import annotations

__all__ = ["note_dropped", "note_missing"]

_BACKBONE = ("N", "CA", "C")


def _summ(items: list[str], k: int = 8) -> str:
    return ", ".join(items[:k]) + (f" ... (+{len(items) - k})" if len(items) > k else "")


def note_dropped(notes: dict, chain_id: str, warnings: list[str]) -> None:
    """Add warnings for dropped waters/ligands, renamed residues, altlocs and repeats."""
    if "waters" in notes:
        n = sum(len(v) for v in notes["waters"].values())
        warnings.append(f"dropped {n} water molecules")
    if "other residues" in notes:
        parts = [f"{k} x{len(v)}" for k, v in sorted(notes["other residues"].items())]
        warnings.append(f"dropped non-protein residues of chain {chain_id}: {_summ(parts)}")
    if "renamed" in notes:
        parts = [f"{k} -> {'/'.join(sorted(v))}" for k, v in sorted(notes["renamed"].items())]
        warnings.append(f"residues read as standard amino acids: {_summ(parts)}")
    if notes.get("altloc"):
        warnings.append(f"{notes['altloc']} residue(s) with alternate locations: kept the conformer "
                        "of highest occupancy (the first on ties)")
    if "duplicate residues" in notes:
        warnings.append(f"repeated residue numbers kept once: {_summ(sorted(notes['duplicate residues']))}")
    if "duplicate atoms" in notes:
        warnings.append(f"repeated atoms kept once: {_summ(sorted(notes['duplicate atoms']))}")


def note_missing(res_name, res_seq, res_icode, atom_res, atom_name, warnings: list[str],
                 heavy_atoms: dict[str, tuple[str, ...]]) -> None:
    """Add warnings for residues lacking backbone (N, CA, C) or side-chain heavy atoms."""
    present: list[set] = [set() for _ in range(len(res_name))]
    for r, a in zip(atom_res.tolist(), atom_name.tolist()):
        present[r].add(a)
    side, back = [], []
    for i, (rn, have) in enumerate(zip(res_name.tolist(), present)):
        label = f"{rn} {res_seq[i]}{res_icode[i]}"
        if any(a not in have for a in _BACKBONE):
            back.append(label)
        if any(a not in have for a in heavy_atoms.get(rn, ())):
            side.append(label)
    if back:
        warnings.append(f"{len(back)} residue(s) lack backbone atoms: {_summ(back)}")
    if side:
        warnings.append(f"{len(side)} residue(s) lack side-chain atoms: {_summ(side)}")
