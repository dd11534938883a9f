# Two entry points, both creating a local virtual environment in .venv:
#   make demo   set up, then run the bundled sample city and write its briefing pack
#   make test   set up, then run ruff, mypy and the whole test suite
PYTHON ?= python3
VENV   ?= .venv
BIN    := $(VENV)/bin
DEMO_OUT ?= prepkit-demo

.PHONY: demo test lint setup sysdeps clean

demo: $(BIN)/.ready
	$(BIN)/prepkit demo $(DEMO_OUT)

test: $(BIN)/.ready
	$(BIN)/ruff check prepkit tests benchmarks sample_workbooks
	$(BIN)/mypy
	$(BIN)/pytest

lint: $(BIN)/.ready
	$(BIN)/ruff check prepkit tests benchmarks sample_workbooks
	$(BIN)/mypy

setup: $(BIN)/.ready

# The PDF renderer needs Pango and HarfBuzz from the system. Install them when
# they are missing and we are allowed to (root, or sudo without a password).
sysdeps:
	@if ! ldconfig -p 2>/dev/null | grep -q 'libpangoft2-1.0.so.0' || \
	    ! ldconfig -p 2>/dev/null | grep -q 'libharfbuzz-subset.so.0'; then \
	  if command -v apt-get >/dev/null 2>&1; then \
	    SUDO=""; [ "$$(id -u)" = 0 ] || SUDO="sudo -n"; \
	    echo "Installing the system libraries the PDF renderer needs"; \
	    $$SUDO apt-get update -qq && DEBIAN_FRONTEND=noninteractive $$SUDO apt-get install -y -qq \
	      --no-install-recommends libpango-1.0-0 libpangoft2-1.0-0 libharfbuzz-subset0 fonts-dejavu-core; \
	  else \
	    echo "Please install Pango (libpango-1.0, libpangoft2-1.0) and HarfBuzz (libharfbuzz-subset)"; \
	    exit 1; \
	  fi; \
	fi

# setuptools prints an "Editable installation" notice for every editable install
# of a project whose packages are mapped from other folders (templates/ ships as
# prepkit.templates); it is information, not a problem, so it alone is filtered.
# Every other warning of the build, such as a deprecation, still shows.
EDITABLE_NOTICE := PYTHONWARNINGS='ignore:Editable installation'

$(BIN)/.ready: pyproject.toml | sysdeps
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(EDITABLE_NOTICE) $(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@

clean:
	rm -rf $(VENV) build dist *.egg-info .pytest_cache .mypy_cache .ruff_cache $(DEMO_OUT)
