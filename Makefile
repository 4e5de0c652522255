# thickpanel developer tasks. `make demo` and `make test` create .venv when missing.
PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
STAMP := $(VENV)/.installed

.PHONY: demo test lint bench clean

$(STAMP): pyproject.toml
	test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e ".[test]"
	touch $(STAMP)

demo: $(STAMP)
	$(PY) -m thickpanel.demo
	$(PY) examples/spiral_drawings.py exports/drawings

lint: $(STAMP)
	$(PY) -m ruff check thickpanel hinges tests bench examples
	$(PY) -m mypy

test: $(STAMP) lint
	$(PY) -m pytest -q -p no:cacheprovider tests

bench: $(STAMP)
	for f in bench/bench_*.py; do echo "== $$f"; $(PY) $$f || exit 1; done

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache .mypy_cache .ruff_cache
