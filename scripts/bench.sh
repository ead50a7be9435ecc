#!/usr/bin/env bash
# Benchmark: telltale against the equivalent pandas + scikit-learn code, side
# by side on the same seeded demo data (1,000,000 rows x 25 features by default,
# plus 100k and 300k rows for the growth check). Prints a ratio table.
#
# Usage: scripts/bench.sh [ROWS ...]      e.g. scripts/bench.sh 100000 300000 1000000
# Installs its Python requirements itself in target/bench-venv.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --locked
VENV=target/bench-venv
if [ ! -x "$VENV/bin/python" ]; then
  python3 -m venv "$VENV"
  "$VENV/bin/pip" install --quiet "numpy==2.*" "pandas==2.*" "scikit-learn==1.*"
fi
"$VENV/bin/python" scripts/bench.py --telltale target/release/telltale "$@"
