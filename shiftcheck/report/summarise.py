"""Which models a report draws, and the text that says what was summarised.

A run of many models (10,000 decoys) is not drawn model by model. The report (PDF and
report.html) reads the residues.csv rows of the models it draws only -- the best
``max_models`` by score, the best group and the models asked for with ``--show``
(:func:`drawn_models`, one choice for both; of a best group larger than ``max_models`` its
best ``max_models``) -- and shows the whole run as distributions
of ranking.csv (combined score, per-nucleus RMSD). :func:`summarised_lines` is the statement
both the PDF's opening page and report.html print. Runs of at most ``max_models`` models are
drawn whole, as before.
"""
from __future__ import annotations

from ._layout import model_order

__all__ = ["MAX_DRAWN_MODELS", "drawn_models", "summarised_lines"]

MAX_DRAWN_MODELS = 100     # models whose residues.csv rows a report reads (plus best group, --show)


def drawn_models(ranking, best_group, show=(), max_models: int = MAX_DRAWN_MODELS,
                 have=None) -> list[str]:
    """The models a report draws, best first.

    Parameters
    ----------
    ranking : RankingTable
    best_group : set of str
        Models the bootstrap cannot tell apart from the best (always drawn).
    show : sequence of str
        Models drawn whatever their rank.
    max_models : int
        How many of the best models are drawn.
    have : set of str, optional
        Only these models are candidates (e.g. those with rows in residues.csv).

    Returns
    -------
    list of str
        The best ``max_models`` candidates by score, then the rest of the best group and ``show``
        in rank order. Of a best group larger than ``max_models`` (e.g. many copies of one
        model) only its best ``max_models`` members are drawn.
    """
    ranked = [ranking.model[i] for i in model_order(ranking)]
    if have is not None:
        ranked = [m for m in ranked if m in have]
    chosen = ranked[:max_models]
    group = set([m for m in ranked if m in best_group][:max_models])
    wanted = set(show)
    taken = set(chosen)
    chosen += [m for m in ranked if (m in group or m in wanted) and m not in taken]
    return chosen


def summarised_lines(data) -> list[str]:
    """What the report summarised (empty when every model's rows were read and drawn)."""
    if data.drawn is None:
        return []
    n_all, n_rows, k = len(data.ranking.model), data.n_models_with_rows, len(data.drawn)
    n_group = len(data.best_group)
    group = ("the best group" if n_group <= data.max_models else
             f"the best {data.max_models} of the {n_group} models of the best group")
    return [f"{n_all} models scored: the report read the residues.csv rows of {k} of the "
            f"{n_rows} models listed there (the best {min(data.max_models, n_all)} by score, "
            f"{group} and models asked for with --show); all rows stay in residues.csv.",
            f"Per-model points, correlation pages, the per-residue strip and the referencing "
            f"histograms use these {k} models; the ranking and the distributions of the combined "
            f"score and per-nucleus RMSD cover all {n_all} models (ranking.csv)."]
