"""Outlier classes: 'every' when flagged in all individual models, 'some' otherwise.

Rule checked: |z| > k flags an atom (a k-sigma outlier rule, common practice, no source); the
class counts only the individual models, never the ensemble-mean entry (docs/outputs.md).
Inputs are hand-built z arrays with hand-counted expectations."""
from __future__ import annotations

import numpy as np

from shiftcheck.score.outliers import find_outliers


def test_classes_ignore_the_mean_entry():
    z = np.array([[0.0, 4.0, 4.0, -3.5, 2.9],
                  [0.0, 5.0, 0.5, -3.1, 3.0],
                  [9.0, 0.0, 0.0, 0.0, 0.0]])      # the ensemble-mean entry
    is_mean = np.array([False, False, True])
    out = find_outliers(z, is_mean, k=3.0)
    assert out.klass.tolist() == ["", "every", "some", "every", ""]   # 3.0 is not > 3
    assert out.n_models_flagged.tolist() == [0, 2, 1, 2, 0]
    assert out.flagged[2, 0]          # the mean entry itself is still flagged per row


def test_k_changes_the_threshold():
    z = np.array([[2.5, 4.0]])
    assert find_outliers(z, np.array([False]), k=2.0).klass.tolist() == ["every", "every"]
    assert find_outliers(z, np.array([False]), k=5.0).klass.tolist() == ["", ""]
