# Parapet: `make demo` sets everything up and runs the demo; `make test` runs the whole suite.
PY ?= python3.11
VENV := .venv
BIN := $(VENV)/bin
HOST ?= 127.0.0.1
PORT ?= 8000

.PHONY: setup demo test lint frontend chromium

$(BIN)/python:
	$(PY) -m venv $(VENV)

$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/pip install --quiet --upgrade pip
	$(BIN)/pip install --quiet -e '.[dev]'
	touch $@

frontend:
	@if [ -f frontend/package.json ]; then cd frontend && npm ci --no-audit --no-fund --silent && npm run --silent build; fi

chromium:
	@[ -x /usr/bin/chromium ] || (apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null)

setup: $(VENV)/.installed frontend

demo: setup
	$(BIN)/python manage.py demo --host $(HOST) --port $(PORT)

lint: $(VENV)/.installed
	$(BIN)/ruff check .
	$(BIN)/ruff format --check .
	$(BIN)/mypy

test: setup chromium lint
	$(BIN)/python -m pytest $(PYTEST_ARGS)
