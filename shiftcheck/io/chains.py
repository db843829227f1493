"""Which protein chains of a coordinate file are scored and which surround it.

:func:`choose_chain` picks the scored chain (``--chain`` or the first chain with protein
residues); :func:`attach_partners` reads the file's other protein chains as its surroundings
(:attr:`shiftcheck.structure.ensemble.Ensemble.partners`), unless the file is a crystal
structure, whose other chains may be copies in the asymmetric unit.
"""
from __future__ import annotations

from typing import Callable

from ..chem.names import normalise_comp_id
from ..chem.residues import AA20
from ..errors import InputError, ShiftcheckError
from ..structure.ensemble import Ensemble

__all__ = ["PARTNER_MODES", "protein_chains", "choose_chain", "attach_partners"]

#: Values of ``partners=`` (and of the CLI's ``--partner-chains``).
PARTNER_MODES = ("auto", "use", "ignore")
#: Experimental methods whose files hold an asymmetric unit (other chains may be crystal copies).
_CRYSTAL_METHODS = ("X-RAY", "NEUTRON", "CRYSTALLOGRAPHY", "FIBER")
_AA20 = frozenset(AA20)


def _is_protein_name(name: str) -> bool:
    try:
        return normalise_comp_id(name) in _AA20
    except Exception:
        return False


def attach_partners(st, ens: Ensemble, mode: str, read_chain: Callable[[str], Ensemble]) -> None:
    """Read the file's other protein chains (``read_chain(chain_id)``) into ``ens.partners``
    (see :func:`shiftcheck.io.coords.read_models`)."""
    others = [c for c in protein_chains(st[0])[0] if c != ens.chain_id]
    if not others:
        return
    names = ", ".join(others)
    if mode == "auto" and any(k in ens.method.upper() for k in _CRYSTAL_METHODS):
        ens.warnings.append(f"chain(s) {names} not used as surroundings of chain {ens.chain_id}: in a "
                            "crystal structure they may be copies of the asymmetric unit rather than "
                            "partners (--partner-chains use to include them)")
        return
    got, left = [], []
    for c in others:
        try:
            p = read_chain(c)
        except ShiftcheckError:
            left.append(c)
            continue
        if p.n_models != ens.n_models:
            left.append(c)
            continue
        p.warnings = []
        got.append(p)
    ens.partners = got
    if got:
        ens.warnings.append(f"chain(s) {', '.join(p.chain_id for p in got)} used as surroundings of chain "
                            f"{ens.chain_id} (ring currents, hydrogen bonds, burial, electric field; "
                            "--partner-chains ignore to leave them out)")
    if left:
        ens.warnings.append(f"chain(s) {', '.join(left)} not used as surroundings: not in every model")


def protein_chains(model) -> tuple[list[str], dict[str, int], list[str]]:
    """(protein chains in file order, protein residues per chain, all chain names in order)."""
    counts: dict[str, int] = {}
    order: list[str] = []
    for ch in model:
        n = sum(1 for r in ch if _is_protein_name(r.name))
        if ch.name not in counts:
            order.append(ch.name)
            counts[ch.name] = 0
        counts[ch.name] += n
    return [c for c in order if counts[c] > 0], counts, order


def choose_chain(model, chain: str | None, path: str, warnings: list[str]) -> str:
    protein, counts, order = protein_chains(model)
    if chain is not None:
        if chain not in counts:
            raise InputError(f"no chain {chain!r} (chains: {', '.join(order) or 'none'})", path=path)
        if counts[chain] == 0:
            raise InputError(f"chain {chain!r} has no protein residues "
                             f"(protein chains: {', '.join(protein) or 'none'})", path=path)
        return chain
    if not protein:
        names = sorted({r.name for ch in model for r in ch})
        raise InputError("no protein residues found (residues present: "
                         f"{', '.join(names[:8]) or 'none'}{' ...' if len(names) > 8 else ''})", path=path)
    if len(protein) > 1:
        others = ", ".join(f"{c} ({counts[c]} residues)" for c in protein[1:])
        warnings.append(f"using chain {protein[0]}; other protein chains: {others} (choose with --chain)")
    return protein[0]
