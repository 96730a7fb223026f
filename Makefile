# Set-up and everyday commands. Each target builds .venv on first use.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed-stamp

.PHONY: demo test bench lint clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[test,scale]"
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/habit demo

test: $(STAMP)
	$(BIN)/python -m pytest -q

bench: $(STAMP)
	for f in benchmarks/*.py; do $(BIN)/python $$f || exit 1; done

lint: $(STAMP)
	$(BIN)/python -m pip install --quiet ruff mypy
	$(BIN)/ruff check habit tests benchmarks

clean:
	rm -rf $(VENV) demo-output .pytest_cache .hypothesis
