# Springwright: `make run` opens the program on a built-in example; `make test` runs every test.
# Both set up everything themselves: a virtual environment in .venv, the packages, and on Linux
# the system libraries Qt's window-system plugin needs.

PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed

.PHONY: run test fuzz setup qt-libs bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(STAMP): pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e ".[test]"
	touch $(STAMP)

setup: $(STAMP)

qt-libs:
	@sh tools/qt_libs.sh

run: setup qt-libs
	$(BIN)/springwright

test: setup
	@sh tools/qt_libs.sh offscreen
	QT_QPA_PLATFORM=offscreen $(BIN)/lint-imports pyproject.toml
	QT_QPA_PLATFORM=offscreen $(BIN)/python -m pytest -q

# fresh random examples for the property tests, ten times as many (finds new edge cases); then
# 3000 fresh malformed files (and special files) through load_model and the command line
# (tests/fuzz_files.py: FUZZ_FILES=N for more or fewer, FUZZ_SEED=S to replay a run)
FUZZ_FILES ?= 3000
fuzz: setup
	QT_QPA_PLATFORM=offscreen SW_HYPOTHESIS=fuzz SW_EXAMPLES=500 $(BIN)/python -m pytest -q tests/solver/test_random_models.py tests/solver/test_tuning.py "tests/solver/test_bad_input.py::test_round_trip_is_the_identity_for_every_accepted_model"
	QT_QPA_PLATFORM=offscreen $(BIN)/python tests/fuzz_files.py --count $(FUZZ_FILES) $(if $(FUZZ_SEED),--seed $(FUZZ_SEED))

bench: setup
	$(BIN)/python bench/solver_bench.py

clean:
	rm -rf $(VENV) .pytest_cache .hypothesis build *.egg-info
