# Two entry points, see README: `make demo` and `make test`.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin

.PHONY: demo test install clean validation bench

$(BIN)/shiftcheck: pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test,pandas,fast]'
	touch $(BIN)/shiftcheck

install: $(BIN)/shiftcheck

demo: install
	$(BIN)/shiftcheck demo -o demo_output --force

test: install
	$(BIN)/python -m pytest -q

clean:
	rm -rf $(VENV) demo_output

# Regenerates docs/validation.md (both sections) from the public data in $(SHIFTCHECK_REALDATA).
SHIFTCHECK_REALDATA ?= ../shared/realdata
validation: install
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python tools/validate_predictor.py
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python tools/validate_scoring.py

bench: install
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python benchmarks/bench_read.py
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python benchmarks/bench_predict.py
	SHIFTCHECK_REALDATA=$(SHIFTCHECK_REALDATA) $(BIN)/python benchmarks/bench_score.py
