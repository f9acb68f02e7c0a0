# jtcheck: the two commands a new user needs are `make run` and `make test`.
PY ?= python3
VENV ?= .venv
BIN := $(VENV)/bin

.PHONY: run test test-all-pg lint bench clean clean-kernels

$(BIN)/python:
	$(PY) -m venv $(VENV)
	$(BIN)/pip install --upgrade pip

$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/pip install -e .
	touch $@

$(VENV)/.installed-test: pyproject.toml | $(BIN)/python
	$(BIN)/pip install -e '.[test]'
	touch $(VENV)/.installed $@

# Serves the case register on http://127.0.0.1:$${PORT:-8000} with the invented demo site; on the first
# start it prints a one-time admin password (`make run RESET_ADMIN=1` prints a new one for a lost password).
# Cookies over plain http on loopback only (SESSION_COOKIE_SECURE=0).
run: $(VENV)/.installed
	@echo "jtcheck: starting (the first start compiles the calculation kernels: one to two minutes)..."
	SESSION_COOKIE_SECURE=0 JTCHECK_RESET_ADMIN_PASSWORD=$(RESET_ADMIN) $(BIN)/python -m jtcheck.web --host 127.0.0.1 --port $${PORT:-8000}

# The whole suite runs on SQLite (the embedded default), then every test that touches a database (marked
# `database`; tests/conftest.py fails a test that opens a connection without the mark) runs again on PostgreSQL.
# `make test-all-pg` runs the whole suite on PostgreSQL.
test: $(VENV)/.installed-test
	$(BIN)/ruff check jtcheck tests benchmarks deploy
	tests/tools/ensure_chromium.sh
	@echo "== test suite on SQLite =="
	env -u DATABASE_URL $(BIN)/python -m pytest -q
	@echo "== test suite on PostgreSQL =="
	@# a database of its own per run, so that concurrent runs on one server cannot interfere
	db=jtcheck_test_$$$$; url=$$(tests/tools/ensure_postgres.sh $$db) || exit 1; \
	DATABASE_URL=$$url $(BIN)/python -m pytest -q -m database; rc=$$?; tests/tools/drop_postgres_db.sh $$db; exit $$rc

test-all-pg: $(VENV)/.installed-test
	db=jtcheck_test_$$$$; url=$$(tests/tools/ensure_postgres.sh $$db) || exit 1; \
	DATABASE_URL=$$url $(BIN)/python -m pytest -q; rc=$$?; tests/tools/drop_postgres_db.sh $$db; exit $$rc

bench: $(VENV)/.installed-test
	$(BIN)/python benchmarks/bench_flash.py
	$(BIN)/python benchmarks/bench_record.py
	$(BIN)/python benchmarks/bench_batch.py --end-to-end
	$(BIN)/python benchmarks/bench_hydrate.py

clean:
	rm -rf $(VENV) build *.egg-info

# numba's on-disk cache of the compiled kernels (*.nbi, *.nbc in __pycache__).  numba does not notice a change in
# another source file (numba issue #1833): after editing a model kernel under jtcheck/thermo/models, run this, or the
# flash kernels keep the old model code they were compiled with.
clean-kernels:
	find jtcheck benchmarks -path '*/__pycache__/*' \( -name '*.nbi' -o -name '*.nbc' \) -delete
