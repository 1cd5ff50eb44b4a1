# labdb: two commands set everything up on a fresh machine with Python 3.11+ and make.
#   make run   – venv, install, migrate, demo data, serve on http://127.0.0.1:8000/ (SQLite)
#   make test  – venv, install, run the test suite (SQLite unless DATABASE_URL is set)

PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed
HOST   ?= 127.0.0.1
PORT   ?= 8000
# Only the test run uses this key; a real deployment sets SECRET_KEY itself.
TEST_ENV := SECRET_KEY=test-only-key-not-secret DEBUG=0

.PHONY: venv run test browser lint format bench clean

$(STAMP): pyproject.toml
	@test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	@touch $(STAMP)

venv: $(STAMP)

run: venv
	DEBUG=1 $(BIN)/python manage.py migrate --noinput
	DEBUG=1 $(BIN)/python manage.py seed_demo
	@echo ""
	@echo "  labdb is serving at http://$(HOST):$(PORT)/  (Ctrl-C stops it)"
	@echo ""
	DEBUG=1 $(BIN)/python manage.py runserver $(HOST):$(PORT)

test: venv
	$(TEST_ENV) $(BIN)/python -m pytest -q

# Browser tests drive Debian's chromium through Playwright (never a downloaded browser).
# Installing chromium needs root; run `sudo apt-get install -y chromium` yourself otherwise.
browser: venv
	@command -v chromium >/dev/null 2>&1 || { \
	  if [ "$$(id -u)" != 0 ]; then \
	    echo "chromium is missing: sudo apt-get install -y chromium (needs root)"; exit 1; fi; \
	  apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium; }
	$(TEST_ENV) LABDB_BROWSER_TESTS=1 $(BIN)/python -m pytest tests/browser -q

lint: venv
	$(BIN)/ruff check .
	$(BIN)/ruff format --check .

format: venv
	$(BIN)/ruff format .
	$(BIN)/ruff check --fix .

bench: venv
	$(BIN)/python bench/run_all.py

clean:
	rm -rf $(VENV) var .pytest_cache .ruff_cache
