# shapegauge: `make serve` and `make test` are all a newcomer needs.
PYTHON ?= python3
VENV   ?= .venv
HOST   ?= 127.0.0.1
PORT   ?= 8080
BIN    := $(VENV)/bin

.PHONY: serve test openapi bench requirements clean

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

bench: $(VENV)/.test-installed
	OPENBLAS_NUM_THREADS=1 $(BIN)/python tests/benchmarks/bench_http.py
	OPENBLAS_NUM_THREADS=1 $(BIN)/python tests/benchmarks/bench_load.py 20 4000
	OPENBLAS_NUM_THREADS=1 $(BIN)/python tests/benchmarks/bench_mixture.py 100000 3

# The container's pins: a throwaway venv with the runtime dependencies only, frozen.
requirements:
	rm -rf build/reqvenv
	$(PYTHON) -m venv build/reqvenv
	build/reqvenv/bin/pip install --quiet .
	{ echo "# Pinned runtime requirements of the container image (regenerate: make requirements)."; \
	  build/reqvenv/bin/pip freeze --exclude shapegauge; } > docker/requirements.txt
	rm -rf build/reqvenv

clean:
	rm -rf $(VENV) .pytest_cache .hypothesis build *.egg-info
