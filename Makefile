# Two commands from a bare clone: `make demo` and `make test`.
PY      ?= python3
VENV    := .venv
BIN     := $(VENV)/bin
STAMP   := $(VENV)/.installed
# Debian packages the tests use as outside checks (an independent Verilog simulator; a browser
# engine that renders report.html headless).
DEBS    := iverilog chromium

.PHONY: demo test lint bench venv debs clean

$(STAMP): pyproject.toml
	$(PY) -m venv $(VENV)
	$(BIN)/pip install -q --upgrade pip
	$(BIN)/pip install -q -e '.[test]'
	touch $(STAMP)

venv: $(STAMP)

debs:
	@missing=""; for p in $(DEBS); do dpkg -s $$p >/dev/null 2>&1 || missing="$$missing $$p"; done; \
	if [ -n "$$missing" ]; then \
	  echo "installing Debian packages:$$missing"; \
	  SUDO=""; [ "$$(id -u)" = 0 ] || SUDO="sudo"; \
	  $$SUDO apt-get update -qq && DEBIAN_FRONTEND=noninteractive $$SUDO apt-get install -y -qq $$missing >/dev/null; \
	fi

demo: $(STAMP)
	$(BIN)/netfit inspect examples/doorbell/chime.blif
	$(BIN)/netfit verify examples/doorbell/chime.blif examples/doorbell/chime_rework.blif
	$(BIN)/netfit build examples/doorbell/chime.blif --target nand-only -o out/chime
	$(BIN)/netfit compare examples/doorbell/chime.blif

test: $(STAMP) debs lint
	$(BIN)/python -m pytest -n 2 -q

# the house's linter and type checker, with the settings in pyproject.toml
lint: $(STAMP)
	$(BIN)/ruff check mapper tests bench
	$(BIN)/mypy

bench: $(STAMP)
	$(BIN)/python bench/run.py

clean:
	rm -rf $(VENV) build dist *.egg-info out
