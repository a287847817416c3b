# elimscan: two commands for a fresh clone (see README.md)
#   make demo     - create .venv if missing, install, run the demo into results/demo, print a summary
#   make test     - create/update .venv with test extras, run pytest (both tiers); as root with apt-get it first
#                   installs Debian's chromium and chromium-driver for the browser test (target browser-deps)
# Other targets: install (.venv with the test extras, nothing else), test-fast (no GFN2-xTB), bench,
# reference-cases(-fast), reference-progress, calibration, basicity, schema, clean.

PYTHON ?= python3.11
VENV   := .venv
VPY    := $(VENV)/bin/python
# One OpenMP/BLAS thread per process: parallelism comes from processes, not threads.
export OMP_NUM_THREADS ?= 1
export OPENBLAS_NUM_THREADS ?= 1
export MKL_NUM_THREADS ?= 1
export OMP_STACKSIZE ?= 1G
export MPLBACKEND ?= Agg
# pytest-xdist worker processes for make test / test-fast (one core each: the tests run one thread a process).
# A worker takes whole test files (a module fixture is computed once), in the order tests/conftest.py gives them.
TEST_WORKERS ?= 2
PYTEST_XDIST := -n $(TEST_WORKERS) --dist loadfile --no-loadscope-reorder

.PHONY: install reference-cases reference-cases-fast reference-progress calibration basicity demo test test-fast bench kernel-sweep schema clean check-python browser-deps

check-python:
	@command -v $(PYTHON) >/dev/null 2>&1 || { \
	  echo "error: $(PYTHON) not found. elimscan needs CPython 3.11 (xtb-python has wheels only up to 3.11)."; \
	  echo "       Debian/Ubuntu: apt-get install python3.11 python3.11-venv ; or set PYTHON=/path/to/python3.11"; \
	  exit 1; }
	@$(PYTHON) -c 'import sys; sys.exit(0 if sys.version_info[:2] == (3, 11) else 1)' || { \
	  echo "error: $(PYTHON) is not Python 3.11 (found $$($(PYTHON) -V 2>&1)). Set PYTHON=/path/to/python3.11"; exit 1; }
	@$(PYTHON) -c 'import venv, ensurepip' >/dev/null 2>&1 || { \
	  echo "error: the venv module of $(PYTHON) is missing. Debian/Ubuntu: apt-get install python3.11-venv"; exit 1; }

$(VENV)/.installed: pyproject.toml | check-python
	@test -x $(VPY) || $(PYTHON) -m venv $(VENV)
	$(VPY) -m pip install --quiet --upgrade pip
	$(VPY) -m pip install --quiet -e '.[test]'
	@touch $@

# install only: .venv with elimscan (editable) and its test extras; nothing is run and nothing system-wide changes
install: $(VENV)/.installed

demo: $(VENV)/.installed
	@rm -rf results/demo
	$(VENV)/bin/elimscan run configs/demo.yaml --out results/demo
	$(VENV)/bin/elimscan summary results/demo

# The browser check of report.html needs Debian's chromium and chromium-driver. As root with apt-get
# (as in CI) they are installed when missing; elsewhere the browser test skips with a message.
browser-deps:
	@if command -v chromium >/dev/null 2>&1 && command -v chromedriver >/dev/null 2>&1; then :; \
	elif [ "$$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then \
	  echo "installing chromium and chromium-driver (Debian) for the browser test of report.html"; \
	  { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium chromium-driver >/dev/null; } \
	  || echo "warning: could not install chromium/chromium-driver: the browser test will be skipped"; \
	else \
	  echo "note: chromium or chromedriver not found (Debian/Ubuntu: apt-get install chromium chromium-driver);"; \
	  echo "      the browser test of report.html will be skipped"; \
	fi

test: $(VENV)/.installed browser-deps
	$(VPY) -m pytest $(PYTEST_XDIST)

test-fast: $(VENV)/.installed
	$(VPY) -m pytest $(PYTEST_XDIST) -m "not xtb"

bench: $(VENV)/.installed
	$(VPY) benchmarks/bench_engine.py
	$(VPY) benchmarks/bench_paths.py
	$(VPY) benchmarks/bench_substitution.py
	$(VPY) benchmarks/bench_batch.py
	$(VPY) benchmarks/bench_dft.py
	$(VPY) benchmarks/bench_dft.py --functional wb97x-3c

# GFN2-xTB checks whose verdict flips with the OpenBLAS kernel or a 0.001 Å nudge of the starting geometries, and
# the demo under two kernels (about an hour on two cores; not part of make test). Resumable in SWEEP_DIR.
SWEEP_DIR ?= results/kernel-sweep
kernel-sweep: $(VENV)/.installed
	$(VPY) benchmarks/kernel_sweep.py --work $(SWEEP_DIR) --demo

# The reference benchmark (validation/cases.yaml) against experiment; not part of make test. Resumable: the
# batches stay in REFERENCE_DIR, and running the target again computes only the unfinished jobs; every job that
# finishes ok is also archived by its key in validation/records (commit it), so a later checkout on another
# machine scores it and never computes it again.
#   reference-cases       every case, three seeds, the frozen base model; writes validation/VALIDATION.md (days on
#                         two cores; the page estimates what is left)
#   reference-cases-fast  five small cases, one seed; writes validation/VALIDATION-fast-seeds1.md (a quick look;
#                         SEEDS=3 writes VALIDATION-fast.md, the committed page)
# Another base model: BASE_MODEL=NAME (pages VALIDATION-NAME.md, VALIDATION-fast-NAME.md). SEEDS=N scores the
# first N seeds of each case; a run on fewer seeds than its cases' three writes a page of its own, named -seedsN
# (VALIDATION-seeds1.md: the set that fits a night), and only pages of every seed go into the package's record.
REFERENCE_DIR ?= results/reference-cases
REFERENCE_WORKERS ?= 2
BASE_MODEL ?=
SEEDS ?=
reference-cases: $(VENV)/.installed
	$(VPY) validation/validate.py $(if $(BASE_MODEL),--base-model $(BASE_MODEL)) $(if $(SEEDS),--seeds $(SEEDS)) --work $(REFERENCE_DIR) --workers $(REFERENCE_WORKERS)

reference-cases-fast: $(VENV)/.installed
	$(VPY) validation/validate.py --subset fast $(if $(BASE_MODEL),--base-model $(BASE_MODEL)) $(if $(SEEDS),--seeds $(SEEDS)) --work $(REFERENCE_DIR)-fast --workers $(REFERENCE_WORKERS)

# How far `make reference-cases` got (read-only, beside the running one): jobs finished of all, the estimate of the
# rest, and the invocation computing in $(REFERENCE_DIR) now (no install step: it must not touch the venv a running
# benchmark uses)
reference-progress:
	$(VPY) validation/validate.py --progress $(if $(BASE_MODEL),--base-model $(BASE_MODEL)) $(if $(SEEDS),--seeds $(SEEDS)) --work $(REFERENCE_DIR)

# Choosing the base model (issue 18), never on the test cases: the calibration set under one candidate
# (BASE_MODEL=alcohol-2 etc., see workflow/elimscan/analysis/benchmark_models.py; writes CALIBRATION-<model>.md;
# without BASE_MODEL the frozen model of validation/model-freeze.yaml, writes CALIBRATION.md),
# and the relative alkoxide basicity under every candidate (writes validation/BASICITY.md; minutes).
# Choosing the DFT level (registered in validation/model-freeze.yaml): DFT=b3lyp or DFT=wb97x-3c adds absolute DFT
# single points to every calibration job (writes CALIBRATION-dft-<level>.md; hours a job with the frozen model's
# clusters, and 10+ GB a calculation at def2-SVPD: run it with REFERENCE_WORKERS=1).
calibration: $(VENV)/.installed
	$(VPY) validation/validate.py --subset calibration $(if $(BASE_MODEL),--base-model $(BASE_MODEL)) $(if $(DFT),--dft $(DFT)) $(if $(SEEDS),--seeds $(SEEDS)) --work $(REFERENCE_DIR) --workers $(REFERENCE_WORKERS)

basicity: $(VENV)/.installed
	$(VPY) validation/basicity.py

schema: $(VENV)/.installed
	$(VPY) -m elimscan.results.schema results-schema

clean:
	rm -rf $(VENV) results/demo .pytest_cache
