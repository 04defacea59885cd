# gwclock developer and user entry points.  Every target sets up .venv first.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed

.PHONY: demo test plots bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	mkdir -p out
	$(BIN)/gwclock curve --table out/envelope.ecsv --plot out/envelope.png
	@echo "wrote out/envelope.ecsv and out/envelope.png"

test: $(STAMP)
	$(BIN)/python -m pytest

plots: $(STAMP)
	for spec in plots/*.toml; do $(BIN)/gwclock plot $$spec || exit 1; done

bench: $(STAMP)
	$(BIN)/python -m gwclock.bench

clean:
	rm -rf out build *.egg-info
