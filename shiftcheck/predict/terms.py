"""The registry of predictor terms: one entry per fitted term, read by every part of the predictor.

Each :class:`Term` declares what the rest of the code needs to know about it:

* ``name`` — the term's group name, as listed per nucleus class in a parameter file's ``groups``;
* ``prefixes`` — the prefixes of its feature-column names (``"ring:"``, ``"hbx:"`` ...); their
  order across the registry is the fitted column order (:func:`column_rank`);
* ``output`` — the column of :attr:`Prediction.terms` (and of predict's CSV and residues.csv)
  that its contribution is added to;
* ``nuclei`` — the nucleus classes it applies to (each kept where leave-one-protein-out
  validation showed a gain; ``data/calibration.json`` ``groups_source`` and docs/validation.md);
  they are the default ``groups`` of ``shiftcheck calibrate`` (:func:`default_groups`);
* ``build`` — ``"module:function"`` of the column builder
  ``f(sf, nucleus, sel, settings) -> {name: (n_models, sel.size) array}``, where ``sf`` is a
  :class:`~shiftcheck.predict.features.StructureFeatures`, ``sel`` the indices of the targets of
  class ``nucleus`` and ``settings`` a :class:`FeatureSettings`;
* ``indicators`` — its columns are indicators: a name absent from a protein is a zero column;
* ``sorted_names`` — fitted columns sorted by name within a prefix (else in the order built).

Adding a term: write its module (kernel + builder) and add one line to :data:`REGISTRY`; then
refit (``shiftcheck calibrate``) so that the parameter file carries its coefficients.
"""
from __future__ import annotations

import importlib
from dataclasses import dataclass, field
from typing import Callable

from ..chem.nuclei import ALL_CLASSES, BACKBONE

__all__ = ["Term", "FeatureSettings", "REGISTRY", "OUTPUTS", "term", "default_groups", "column_rank",
           "term_of_column"]

_COLS = "shiftcheck.predict.term_columns"


@dataclass(frozen=True)
class Term:
    """One fitted term of the predictor (see the module docstring for the fields)."""

    name: str
    prefixes: tuple[str, ...]
    output: str
    nuclei: tuple[str, ...]
    build: str
    indicators: bool = False
    sorted_names: bool = False

    def builder(self) -> Callable:
        """The column-builder function named by ``build``."""
        module, func = self.build.split(":")
        return getattr(importlib.import_module(module), func)

    def owns(self, column: str) -> bool:
        """Whether a feature-column name belongs to this term."""
        return column.startswith(self.prefixes)

    def columns(self, sf, nucleus: str, sel, settings: "FeatureSettings") -> dict:
        """Feature columns of the targets ``sel`` of class ``nucleus``: {name: (n_models, sel.size)}."""
        return self.builder()(sf, nucleus, sel, settings)


@dataclass(frozen=True)
class FeatureSettings:
    """Settings the column builders read: ring-current model, the ``conformation`` setting
    (Fourier orders, neighbour blocks, χ1, side-chain orders) and the ``burial`` setting."""

    ring_model: str
    conformation: dict = field(default_factory=lambda: {"order": 2, "class_order": 1})
    burial: dict | None = None


#: Every fitted term, in fitted column order. One line per term.
REGISTRY: tuple[Term, ...] = (
    Term("offset", ("const", "res:"), "sequence", ALL_CLASSES, f"{_COLS}:offset", indicators=True,
         sorted_names=True),
    Term("neighbour", ("prev:", "next:"), "sequence", ("CB", "N"), f"{_COLS}:neighbour", indicators=True),
    Term("conformation", ("conf:",), "conformation", BACKBONE, f"{_COLS}:conformation"),
    Term("ring_current", ("ring:",), "ring_current", ("H", "HA", "CA", "CB", "HMe", "Haro"), f"{_COLS}:ring_current"),
    Term("hbond", ("hb:",), "hbond", ("H", "HA", "C", "N"), f"{_COLS}:hbond"),
    Term("anisotropy", ("aniso:",), "anisotropy", ("H", "HA", "C", "HMe", "Haro"), f"{_COLS}:anisotropy"),
    Term("burial", ("bur:", "hse:"), "burial", ("CB", "C", "N", "HMe", "Haro"), f"{_COLS}:burial"),
    Term("hbond_basis", ("hbx:",), "hbond", ("H",), f"{_COLS}:hbond_basis"),
    Term("sidechain", ("sc:",), "conformation", ("CA", "CB", "N"), f"{_COLS}:sidechain"),
    Term("efield", ("ef:",), "electric_field", ("CA", "CB", "C", "N"), f"{_COLS}:efield"),
)

#: Columns of :attr:`Prediction.terms`, in order: the fixed random-coil part, then each output
#: fed by a registered term (first appearance in the registry).
OUTPUTS: tuple[str, ...] = ("random_coil", *dict.fromkeys(t.output for t in REGISTRY))

_BY_NAME = {t.name: t for t in REGISTRY}
_PREFIXES = tuple(p for t in REGISTRY for p in t.prefixes)


def term(name: str) -> Term:
    """The registered term called ``name`` (KeyError if there is none)."""
    return _BY_NAME[name]


def default_groups() -> dict[str, list[str]]:
    """The term names per nucleus class, from the registry (``groups`` of a parameter file)."""
    return {nuc: [t.name for t in REGISTRY if nuc in t.nuclei] for nuc in ALL_CLASSES}


def term_of_column(column: str) -> Term | None:
    """The registered term a feature column belongs to (None for an unknown name)."""
    return next((t for t in REGISTRY if t.owns(column)), None)


def column_rank(column: str) -> tuple[int, str]:
    """Sort key of a fitted column: position of its prefix in the registry, then its name if its
    term sorts names (unknown names last)."""
    k = next((i for i, p in enumerate(_PREFIXES) if column.startswith(p)), len(_PREFIXES))
    t = term_of_column(column)
    return k, column if t is not None and t.sorted_names else ""
