# jtcheck: the two commands a new user needs are `make run` and `make test`.
PY ?= python3
VENV ?= .venv
BIN := $(VENV)/bin

.PHONY: run test lint bench clean

$(BIN)/python:
	$(PY) -m venv $(VENV)
	$(BIN)/pip install --upgrade pip

$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/pip install -e .
	touch $@

$(VENV)/.installed-test: pyproject.toml | $(BIN)/python
	$(BIN)/pip install -e '.[test]'
	touch $(VENV)/.installed $@

run: $(VENV)/.installed
	$(BIN)/jtcheck demo

test: $(VENV)/.installed-test
	$(BIN)/ruff check jtcheck tests benchmarks
	$(BIN)/python -m pytest -q

bench: $(VENV)/.installed-test
	$(BIN)/python benchmarks/bench_flash.py

clean:
	rm -rf $(VENV) build *.egg-info
