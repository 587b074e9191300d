# The two commands of the README: `make demo` and `make test`. Everything installs into .venv.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed
DEMO_OUT ?= demo-results

.PHONY: demo test test-slow validate bench clean system-pictures system-test

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

# System packages (Mesa EGL for off-screen pictures; Chromium for the report test), installed
# with apt-get when missing: see tools/system-packages.sh.
system-pictures:
	bash tools/system-packages.sh pictures

system-test:
	bash tools/system-packages.sh test

demo: system-pictures $(STAMP)
	MPLBACKEND=Agg $(BIN)/poroplane run examples/embankment.toml -o $(DEMO_OUT) --force
	MPLBACKEND=Agg $(BIN)/poroplane report $(DEMO_OUT)
	@echo "The demo's results are in $(CURDIR)/$(DEMO_OUT)/: report.html (open it in a browser),"
	@echo "plots/ (PNG), results.xdmf (ParaView), probes.csv, summary.json, comparison.csv."

test: system-test $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m pytest -q

test-slow: system-test $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m pytest -q -m slow

validate: system-pictures $(STAMP)
	MPLBACKEND=Agg $(BIN)/poroplane validate

bench: $(STAMP)
	$(BIN)/poroplane bench

clean:
	rm -rf $(VENV) $(DEMO_OUT) validation-results
