# Two commands on a fresh machine with Python 3.11+ and make:
#   make demo   build .venv, install qc from this checkout, run it on the bundled demo
#   make test   the same environment with the test extra, then the test suite
PYTHON ?= python3
VENV   ?= .venv
BIN    := $(VENV)/bin
DEMO   ?= demo_inspections/housings_winter.xlsx

.PHONY: demo test lint bench schemas clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(VENV)/.installed: $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e .
	touch $@

$(VENV)/.installed-test: $(VENV)/.installed
	$(BIN)/python -m pip install --quiet -e ".[test]"
	touch $@

demo: $(VENV)/.installed
	$(BIN)/qc normalise $(DEMO) --force

test: $(VENV)/.installed-test
	$(BIN)/python -m pytest

lint: $(VENV)/.installed-test
	$(BIN)/ruff check qc tests bench

bench: $(VENV)/.installed-test
	$(BIN)/python bench/run.py

schemas: $(VENV)/.installed
	$(BIN)/qc schemas --out schemas

clean:
	rm -rf $(VENV) build *.egg-info
