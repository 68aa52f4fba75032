# Everything a fresh clone needs: `make demo` and `make test` create .venv on first use.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed
TEST_STAMP := $(VENV)/.installed-test

.PHONY: demo test lint bench clean

CHECKED := planner tests benchmarks sample_tle

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

# PYTHONWARNINGS=ignore: the build backend's own notes (an editable install's import caveat) are
# for packagers, not for someone installing the tool; pip's errors still show.
$(STAMP): pyproject.toml | $(BIN)/python
	PYTHONWARNINGS=ignore $(BIN)/python -m pip install --quiet -e .
	touch $@

$(TEST_STAMP): pyproject.toml | $(BIN)/python
	PYTHONWARNINGS=ignore $(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@ $(STAMP)

demo: $(STAMP)
	$(BIN)/planner compare scenarios/demo.toml --report report --force

# Lint, format and type checks first (seconds), then the test suite.
lint: $(TEST_STAMP)
	$(BIN)/ruff check $(CHECKED)
	$(BIN)/ruff format --check $(CHECKED)
	$(BIN)/mypy

# One test process per core (pytest-xdist); the tests share no files, each has its own tmp_path.
test: lint
	$(BIN)/python -m pytest -n auto

bench: $(STAMP)
	$(BIN)/python benchmarks/passes.py

clean:
	rm -rf $(VENV) build *.egg-info
