"""The output of the predictor: predicted shifts per model, with each term kept separately."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["Prediction"]


@dataclass
class Prediction:
    """Predicted shifts of one ensemble.

    Attributes
    ----------
    ensemble_name : str
    model_names : list of str
    chain_id : str
    res_index : np.ndarray of int, shape (n,)
        Residue index in the ensemble (0-based).
    res_seq : np.ndarray of int, shape (n,)
        Author residue number in the model.
    comp_id, atom_id, nucleus : np.ndarray of str, shape (n,)
        Residue name, IUPAC atom name, scoring class (see :mod:`shiftcheck.chem.nuclei`).
    values : np.ndarray of float, shape (n_models, n)
        Predicted shift (ppm): the sum of all terms. NaN where it cannot be predicted.
    terms : dict of str -> np.ndarray (n_models, n)
        Contribution of each term (ppm), e.g. 'random_coil', 'conformation', 'ring_current',
        'hbond'. ``sum(terms.values()) == values``.
    params_source : str
        Which parameter file was used.
    """

    ensemble_name: str
    model_names: list[str]
    chain_id: str
    res_index: np.ndarray
    res_seq: np.ndarray
    comp_id: np.ndarray
    atom_id: np.ndarray
    nucleus: np.ndarray
    values: np.ndarray
    terms: dict[str, np.ndarray] = field(default_factory=dict)
    params_source: str = ""

    @property
    def n_models(self) -> int:
        return int(self.values.shape[0])

    def __len__(self) -> int:
        return int(self.values.shape[1])
