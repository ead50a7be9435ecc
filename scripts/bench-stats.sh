#!/usr/bin/env bash
# Times the stats estimators on 1,000,000 synthetic rows and prints a table
# (median and fastest of several runs, milliseconds).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo bench --bench stats 2>/dev/null
