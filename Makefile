# Two commands for a fresh clone: `make demo` builds the demo site, `make test` runs every test.
# Each sets up .venv on first use (Python 3.11 or newer): `demo` with what building needs, `test` with
# the test tools too (NEC-2 solver, scikit-rf, playwright) and Debian's chromium for the browser tests.
PYTHON ?= python3
VENV := .venv
BUILD_STAMP := $(VENV)/.installed-build
TEST_STAMP := $(VENV)/.installed-test

.PHONY: demo test bench browser clean

$(VENV)/bin/python:
	@$(PYTHON) -m venv $(VENV) || { echo "python3 -m venv failed: on Debian, apt-get install python3-venv"; exit 2; }
	$(VENV)/bin/python -m pip install --quiet --upgrade pip

$(BUILD_STAMP): pyproject.toml | $(VENV)/bin/python
	$(VENV)/bin/python -m pip install --quiet -e .
	@touch $(BUILD_STAMP)

$(TEST_STAMP): pyproject.toml | $(VENV)/bin/python
	$(VENV)/bin/python -m pip install --quiet -e '.[test]'
	@touch $(BUILD_STAMP) $(TEST_STAMP)

# The browser tests drive Debian's chromium (playwright is told its path; it downloads no browser).
browser:
	@command -v chromium >/dev/null || { \
	  if [ "$$(id -u)" = 0 ] && command -v apt-get >/dev/null; then \
	    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends chromium; \
	  else echo "the browser tests need chromium: run 'sudo apt-get install chromium'"; exit 2; fi; }

demo: $(BUILD_STAMP)
	$(VENV)/bin/python build.py build fleet_data -o site
	@echo "Demo site written: open site/index.html in a browser"

test: $(TEST_STAMP) browser
	$(VENV)/bin/python -m pytest

bench: $(BUILD_STAMP)
	$(VENV)/bin/python bench/bench_physics.py
	$(VENV)/bin/python bench/bench_build.py --sizes 10,100,1000 --json bench/results/build.json

clean:
	rm -rf $(VENV) site .pytest_cache .hypothesis .cache .aerialbook-cache
