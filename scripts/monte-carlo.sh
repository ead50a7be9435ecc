#!/usr/bin/env bash
# Runs the seeded Monte Carlo measurements of tests/verdicts.rs and prints
# their rates. Usage: scripts/monte-carlo.sh [whole_set|false_flags|rates]...
#   whole_set    coverage of the whole-set attacker's 95% interval
#                (WHOLE_SET_REPLICATES data sets per design, default 400)
#   false_flags  share of pure-noise data sets with a proxy/review flag or a
#                failed gate at 5, 10 and 20 minority rows
#                (FALSE_FLAG_SEEDS data sets each, default 20)
#   rates        coverage of the single-feature intervals
# With no argument, runs all three.
set -euo pipefail
cd "$(dirname "$0")/.."
names=("$@")
[ ${#names[@]} -eq 0 ] && names=(whole_set false_flags rates)
for name in "${names[@]}"; do
    cargo test --release --test verdicts -- --ignored --nocapture --exact "monte_carlo_${name}" 2>&1 |
        grep -v '^$'
done
