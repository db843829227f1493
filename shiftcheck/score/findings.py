"""One data-check result (:class:`Finding`), shared by the checks of :mod:`.datacheck` and
:mod:`.datacheck_rows`."""
from __future__ import annotations

from dataclasses import asdict, dataclass

__all__ = ["Finding"]


@dataclass
class Finding:
    """One data-check result."""

    seq_id: int
    comp_id: str
    atom_id: str
    rule: str
    message: str
    source: str
    severity: str = "warning"   # 'warning' or 'note'
    state: str = ""             # cis/trans or reduced/oxidised/uncertain where the rule reads one

    def as_dict(self) -> dict:
        return asdict(self)
