# Two entry points, see README: `make demo` and `make test`.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin

.PHONY: demo test install clean validation bench decoys

$(BIN)/shiftcheck: pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test,pandas,cluster,fast]'
	touch $(BIN)/shiftcheck

install: $(BIN)/shiftcheck

demo: install
	$(BIN)/shiftcheck demo -o demo_output --force

test: install
	$(BIN)/python -m pytest -q -n 2 --dist loadfile

clean:
	rm -rf $(VENV) demo_output

# Regenerates docs/validation.md (all sections) from the public data in $(SHIFTCHECK_REALDATA);
# the fold-selection section needs the decoy cache of `make decoys`.
SHIFTCHECK_REALDATA ?= ../shared/realdata
validation: install
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python tools/validate_predictor.py
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python tools/validate_scoring.py
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python tools/validate_folds.py

# Fold-selection decoys (minimised torsion decoys, perturbation ladder, threaded wrong folds) into .cache/decoys/
# (outside git); development-only OpenMM + PDBFixer; fixed seeds; 2 worker processes (see
# docs/validation.md, fold-selection section, for the measured time).
decoys: install
	$(BIN)/python -m pip install --quiet -e '.[decoys]'
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python tools/plausible_decoys.py

bench: install
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python benchmarks/bench_read.py
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python benchmarks/bench_predict.py
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python benchmarks/bench_score.py
