# The two set-up commands are `make demo` and `make test`; both work on a fresh machine with
# Python 3.10+, Node.js 18+ and npm. Browser tests need /usr/bin/chromium (.ci/run installs it).
PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
PORT ?= 8899
STAMP := $(VENV)/.installed

.PHONY: demo test install js lint typecheck jstest pytest bench clean

$(PY):
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip

node_modules/.bin/esbuild: package.json
	npm install --no-audit --no-fund
	touch $@

js: node_modules/.bin/esbuild
	npm run build

$(STAMP): $(PY) pyproject.toml node_modules/.bin/esbuild
	$(PY) -m pip install --quiet -e ".[test]"
	touch $@

install: $(STAMP) js

lint: install
	$(VENV)/bin/ruff check src tests
	$(VENV)/bin/ruff format --check src tests

typecheck: node_modules/.bin/esbuild
	npx tsc --noEmit

jstest: node_modules/.bin/esbuild
	npm test

pytest: install
	$(PY) -m pytest tests --ignore=tests/bench

test: install lint typecheck jstest pytest

demo: install
	@echo "Starting JupyterLab on 127.0.0.1:$(PORT) with notebooks/demo.ipynb; open the URL printed below"
	@echo "(it carries the access token). Ctrl-C stops the server."
	$(VENV)/bin/jupyter lab --no-browser --allow-root --ip=127.0.0.1 --port=$(PORT) \
		--ServerApp.root_dir=$(CURDIR) notebooks/demo.ipynb

bench: install
	$(PY) -m tests.bench.run

clean:
	rm -rf $(VENV) node_modules build src/axeswidget/static
