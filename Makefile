# symfilt: every target sets itself up. `make demo` and `make test` are all a fresh machine needs.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed

.PHONY: demo test bench install clean

$(STAMP): pyproject.toml
	test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	$(PY) -m compileall -q symfilt
	touch $(STAMP)

install: $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/symfilt demo

test: $(STAMP)
	$(PY) -m pytest

bench: $(STAMP)
	$(PY) benchmarks/run.py
	$(PY) benchmarks/commands.py

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache .hypothesis
