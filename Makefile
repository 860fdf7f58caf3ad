# Friedmann Desk: every target creates the virtual environment if it is missing.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed

.PHONY: run test bench venv clean

venv: $(STAMP)

$(STAMP): pyproject.toml
	test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install -q --upgrade pip
	$(PY) -m pip install -q -e '.[web,test]'
	touch $(STAMP)

run: $(STAMP)
	$(PY) -m server --host 127.0.0.1 --port 8050

test: $(STAMP)
	$(PY) -m pytest -q --headless -p no:cacheprovider

bench: $(STAMP)
	$(PY) -m benchmarks

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache .hypothesis
