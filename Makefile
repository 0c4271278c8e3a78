# The two set-up commands a new machine needs: `make run` and `make test`.
# Both build .venv from nothing with the pinned dependencies in pyproject.toml.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

HOST ?= 127.0.0.1
PORT ?= 8080

.PHONY: run test lint bench schemas clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

lint: $(STAMP)
	$(BIN)/ruff check service plugins tests deploy
	$(BIN)/ruff format --check service plugins tests deploy
	$(BIN)/bandit -q -c pyproject.toml -r service plugins deploy

# pytest exits 5 when it collected nothing: that is a failure here, never a pass.
test: lint
	$(BIN)/python -m pytest -q -p no:cacheprovider; rc=$$?; \
	if [ $$rc -eq 5 ]; then echo "no tests collected: failing"; exit 1; fi; exit $$rc

run: $(STAMP)
	$(BIN)/burnproof serve --host $(HOST) --port $(PORT)

# Regenerate the JSON Schema and OpenAPI documents in schemas/ from the code.
schemas: $(STAMP)
	$(BIN)/python -m service.schemas.export

# Benchmarks print figures and ratios against their targets; they are not tests.
bench: $(STAMP)
	@for script in tests/perf/bench_*.py; do echo "== $$script"; $(BIN)/python $$script || exit 1; done

clean:
	rm -rf $(VENV) build *.egg-info
