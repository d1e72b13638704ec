#!/usr/bin/env bash
# Installs the pinned Python packages in a virtual environment and runs a
# pandas + statsmodels reference:
#
# - the bootstrap benchmark's (default):
#     bash bench/python/run.sh [DATA.csv] [REPLICATES]
#   DATA.csv defaults to the file `cargo bench --bench bootstrap` writes;
# - the survival benchmark's (IP-weighted and standardised hazard curves):
#     bash bench/python/run.sh survival [DATA.csv] [REPLICATES]
#   DATA.csv defaults to the file `cargo bench --bench survival` writes;
# - the estimate benchmark's 4-level categorical exposure:
#     bash bench/python/run.sh multilevel [DATA.csv]
#   DATA.csv defaults to the file `cargo bench --bench estimate` writes.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
repo="$(cd "$here/../.." && pwd)"
if [ "${1:-}" = "survival" ]; then
    shift
    bench=survival
    data="${1:-$repo/target/tmp/survival-bench-100000.csv}"
    run=("$here/survival_reference.py" "$data" "${2:-200}")
elif [ "${1:-}" = "multilevel" ]; then
    shift
    bench=estimate
    data="${1:-$repo/target/tmp/estimate-bench-1000000.csv}"
    run=("$here/multilevel_reference.py" "$data")
else
    bench=bootstrap
    data="${1:-$repo/target/tmp/bootstrap-bench-20000.csv}"
    run=("$here/bootstrap_reference.py" "$data" "${2:-200}")
fi
venv="${CAUSEWAY_BENCH_VENV:-$repo/target/bench-venv}"
if [ ! -f "$data" ]; then
    echo "no data at $data: run 'cargo bench --bench $bench' first, or give the CSV path" >&2
    exit 2
fi
if [ ! -x "$venv/bin/python" ]; then
    python3 -m venv "$venv"
fi
"$venv/bin/python" -m pip install --quiet --disable-pip-version-check -r "$here/requirements.txt"
# BLAS threads: 1 by default. With 20,000 x 32 matrices the work per call
# is small, and on a 2-core machine 2 OpenBLAS threads made the same run
# 5 to 10 times slower (measured; see bench/README.md), so one thread is the
# reference's best case. Set CAUSEWAY_BENCH_BLAS_THREADS=2 to compare.
# OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE, set on some machines for older
# OpenBLAS builds, slow a current one: unset them for this run only (the
# BLAS kernel in use is printed).
blas_threads="${CAUSEWAY_BENCH_BLAS_THREADS:-1}"
env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE \
    OPENBLAS_NUM_THREADS="$blas_threads" OMP_NUM_THREADS="$blas_threads" \
    "$venv/bin/python" "${run[@]}"
