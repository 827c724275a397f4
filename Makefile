# Two commands: `make run` (service on 127.0.0.1:8080) and `make test` (the whole suite).
# Each creates or refreshes the local virtual environment in .venv first.
PYTHON ?= python3
VENV   ?= .venv
BIN    := $(VENV)/bin

.PHONY: run test bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(VENV)/.stamp-run: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e .
	touch $@

$(VENV)/.stamp-test: pyproject.toml $(VENV)/.stamp-run
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@

run: $(VENV)/.stamp-run
	$(BIN)/gunicorn -c gunicorn.conf.py service.wsgi:app

test: $(VENV)/.stamp-test
	$(BIN)/python -m pytest

bench: $(VENV)/.stamp-test
	$(BIN)/python bench/latency.py

clean:
	rm -rf $(VENV) .pytest_cache
