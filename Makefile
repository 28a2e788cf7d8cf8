# shapegauge: `make serve` and `make test` are all a newcomer needs.
PYTHON ?= python3
VENV   ?= .venv
HOST   ?= 127.0.0.1
PORT   ?= 8080
BIN    := $(VENV)/bin

.PHONY: serve test openapi bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(VENV)/.run-installed: pyproject.toml | $(BIN)/python
	$(BIN)/pip install --quiet -e .
	@touch $@

$(VENV)/.test-installed: pyproject.toml | $(BIN)/python
	$(BIN)/pip install --quiet -e ".[test]"
	@touch $@ $(VENV)/.run-installed

serve: $(VENV)/.run-installed
	@echo "shapegauge on http://$(HOST):$(PORT)  (Ctrl-C stops it). Try, from this folder:"
	@echo "  curl -s -X POST http://$(HOST):$(PORT)/v1/normality -H 'Content-Type: application/json' -d @service/api/examples/demo.json"
	OPENBLAS_NUM_THREADS=1 SHAPEGAUGE_BIND=$(HOST):$(PORT) exec $(BIN)/gunicorn -c docker/gunicorn.conf.py "service:create_app()"

test: $(VENV)/.test-installed
	OPENBLAS_NUM_THREADS=1 $(BIN)/python -m pytest

openapi: $(VENV)/.test-installed
	$(BIN)/python -m service.api.openapi openapi/openapi.yaml

clean:
	rm -rf $(VENV) .pytest_cache .hypothesis build *.egg-info
