#!/usr/bin/env bash
# The whole job (drop-one and removal plan included) against the equivalent
# pandas + scikit-learn code at 30,000 rows x 19 features, and telltale alone
# at 50,000 rows x 200 features. See scripts/bench_full.py.
#
# Usage: scripts/bench-full.sh [--rows N] [--wide-rows N] [--wide-features N] [--skip narrow|wide]
# Installs its Python requirements itself in the cargo target directory.
set -euo pipefail
cd "$(dirname "$0")/.."
TARGET=${CARGO_TARGET_DIR:-target}
cargo build --release --locked
VENV=$TARGET/bench-venv
if [ ! -x "$VENV/bin/python" ]; then
  python3 -m venv "$VENV"
  "$VENV/bin/pip" install --quiet "numpy==2.*" "pandas==2.*" "scikit-learn==1.*"
fi
"$VENV/bin/python" scripts/bench_full.py --telltale "$TARGET/release/telltale" "$@"
