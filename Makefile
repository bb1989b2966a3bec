# Two commands for a fresh clone: `make demo` builds the demo site, `make test` runs every test.
# Each sets up .venv on first use (Python 3.11 or newer).
PYTHON ?= python3
VENV := .venv
STAMP := $(VENV)/.installed

.PHONY: demo test bench clean

$(STAMP): pyproject.toml
	@$(PYTHON) -m venv $(VENV) || { echo "python3 -m venv failed: on Debian, apt-get install python3-venv"; exit 2; }
	$(VENV)/bin/python -m pip install --quiet --upgrade pip
	$(VENV)/bin/python -m pip install --quiet -e '.[test]'
	@touch $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/python build.py build fleet_data -o site
	@echo "Demo site written: open site/index.html in a browser"

test: $(STAMP)
	$(VENV)/bin/python -m pytest

bench: $(STAMP)
	$(VENV)/bin/python bench/bench_physics.py
	$(VENV)/bin/python bench/bench_build.py --sizes 10,100,1000 --json bench/results/build.json

clean:
	rm -rf $(VENV) site .pytest_cache .hypothesis .cache .aerialbook-cache
