# Two entry points, see README: `make demo` and `make test`.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin

.PHONY: demo test install clean

$(BIN)/shiftcheck: pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(BIN)/shiftcheck

install: $(BIN)/shiftcheck

demo: install
	$(BIN)/shiftcheck demo -o demo_output --force

test: install
	$(BIN)/python -m pytest -q

clean:
	rm -rf $(VENV) demo_output
