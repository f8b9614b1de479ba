# Parapet: `make demo` sets everything up and runs the demo; `make test` runs the whole suite.
PY ?= python3.11
VENV := .venv
BIN := $(VENV)/bin
HOST ?= 127.0.0.1
PORT ?= 8000

.PHONY: setup demo test lint frontend system-packages

$(BIN)/python:
	$(PY) -m venv $(VENV)

$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/pip install --quiet --upgrade pip
	$(BIN)/pip install --quiet -e '.[dev]'
	touch $@

frontend:
	@if [ -f frontend/package.json ]; then cd frontend && npm ci --no-audit --no-fund --silent && npm run --silent build; fi

# Debian packages the tests use: Chromium (browser tests), poppler-utils (pdfsig, pdftoppm),
# qpdf, and DejaVu fonts for the browser's pages (the PDFs draw with the project's own copies in
# compliance/records/fonts/). Installed only when missing.
SYSTEM_PACKAGES := chromium:/usr/bin/chromium poppler-utils:/usr/bin/pdfsig qpdf:/usr/bin/qpdf \
	fonts-dejavu-core:/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf
system-packages:
	@missing=""; for entry in $(SYSTEM_PACKAGES); do [ -e "$${entry#*:}" ] || missing="$$missing $${entry%%:*}"; done; \
	if [ -n "$$missing" ]; then echo "apt-get install$$missing"; apt-get update -qq && \
	DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $$missing >/dev/null; fi

setup: $(VENV)/.installed frontend

demo: setup
	DJANGO_DEBUG=$${DJANGO_DEBUG:-true} $(BIN)/python manage.py demo --host $(HOST) --port $(PORT)

lint: $(VENV)/.installed
	$(BIN)/ruff check .
	$(BIN)/ruff format --check .
	$(BIN)/mypy
	$(BIN)/lint-imports

test: setup system-packages lint
	cd frontend && npm test --silent && npm run --silent check:api-types
	$(BIN)/python -m pytest $(PYTEST_ARGS)
