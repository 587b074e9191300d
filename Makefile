# The two commands of the README: `make demo` and `make test`. Everything installs into .venv.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed
DEMO_OUT ?= demo-results

.PHONY: demo test test-slow validate bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	MPLBACKEND=Agg $(BIN)/poroplane run examples/embankment.toml -o $(DEMO_OUT)
	MPLBACKEND=Agg $(BIN)/poroplane report $(DEMO_OUT)
	@echo "The demo's results are in $(CURDIR)/$(DEMO_OUT)/: report.html (open it in a browser),"
	@echo "plots/ (PNG), results.xdmf (ParaView), probes.csv, summary.json, comparison.csv."

test: $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m pytest -q

test-slow: $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m pytest -q -m slow

validate: $(STAMP)
	MPLBACKEND=Agg $(BIN)/poroplane validate

bench: $(STAMP)
	$(BIN)/poroplane bench

clean:
	rm -rf $(VENV) $(DEMO_OUT) validation-results
