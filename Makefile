# Two commands: `make run` and `make test`. Everything else they need is installed here.
PYTHON ?= python3
VENV   ?= .venv
BIN    := $(VENV)/bin
PORT   ?= 8000
DATA   ?=

.PHONY: run test lint bench chromium clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

# Re-install whenever pyproject.toml changes.
$(VENV)/.run-deps: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e .
	touch $@

$(VENV)/.test-deps: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@ $(VENV)/.run-deps

run: $(VENV)/.run-deps
	$(BIN)/leafcast serve --host 127.0.0.1 --port $(PORT) $(if $(DATA),--data-dir $(DATA))

# Debian's chromium for the browser tests: installed when missing and we are root.
chromium:
	@command -v chromium >/dev/null 2>&1 || command -v chromium-browser >/dev/null 2>&1 || \
	  { if [ "$$(id -u)" = "0" ] && command -v apt-get >/dev/null 2>&1; then \
	      echo "installing Debian's chromium for the browser tests"; \
	      apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null; \
	    else echo "chromium not found and not root: browser tests will skip"; fi; }

test: $(VENV)/.test-deps chromium
	$(BIN)/python -m pytest $(PYTEST_ARGS)

lint: $(VENV)/.test-deps
	$(BIN)/ruff check app tests

bench: $(VENV)/.run-deps
	$(BIN)/python -m app.bench

clean:
	rm -rf $(VENV) .pytest_cache build *.egg-info
