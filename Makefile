# gwclock developer and user entry points.  Every target sets up .venv first.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed
TESTED := $(VENV)/.installed-test
DOCS   := $(VENV)/.installed-docs

.PHONY: demo test lint docs mutants plots bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

# the demo needs the package only; the tests add pytest, hypothesis, coverage and dask
$(STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e .
	touch $(STAMP)

$(TESTED): $(STAMP)
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(TESTED)

$(DOCS): $(STAMP)
	$(BIN)/python -m pip install --quiet -e '.[docs]'
	touch $(DOCS)

demo: $(STAMP)
	mkdir -p out
	$(BIN)/gwclock curve --table out/envelope.ecsv --plot out/envelope.png
	@echo "wrote out/envelope.ecsv and out/envelope.png"

test: $(TESTED)
	$(BIN)/ruff check gwclock tests
	$(BIN)/python -m pytest --cov --cov-report=json:.coverage.json --cov-report=term-missing:skip-covered
	$(BIN)/python tests/coverage_floor.py .coverage.json 90

lint: $(TESTED)
	$(BIN)/ruff check gwclock tests

# the documentation site (user guide, model, API reference); any Sphinx warning fails the build
docs: $(DOCS)
	$(BIN)/python -m sphinx -W --keep-going -q -b html docs docs/_build/html
	@echo "wrote docs/_build/html/index.html"

# every physics mutant of tests/mutants.toml must make its tests fail (about 8 min on 2 cores)
mutants: $(TESTED)
	$(BIN)/python tests/mutants.py $(MUTANTS)

plots: $(STAMP)
	for spec in plots/*.toml; do $(BIN)/gwclock plot $$spec || exit 1; done

bench: $(TESTED)
	$(BIN)/python -m gwclock.bench

clean:
	rm -rf out build docs/_build *.egg-info .coverage .coverage.json
