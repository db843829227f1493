"""The top-level Python API names resolve to the stage functions, also after the stage
subpackages were imported (their names must not shadow the functions; common practice, no source)."""
import importlib

import shiftcheck


def test_public_names_are_functions_after_subpackage_imports():
    for mod in ("shiftcheck.score.scoring", "shiftcheck.pipeline", "shiftcheck.predict.model", "shiftcheck.report.pdf",
                "shiftcheck.io.coords", "shiftcheck.structure.mapping"):
        importlib.import_module(mod)
    from shiftcheck.pipeline import score_models
    from shiftcheck.predict.model import predict, Predictor

    assert shiftcheck.score_models is score_models
    assert shiftcheck.predict_shifts is predict
    assert shiftcheck.Predictor is Predictor
    for name in shiftcheck.__all__:
        obj = getattr(shiftcheck, name)
        assert name == "__version__" or callable(obj), name
