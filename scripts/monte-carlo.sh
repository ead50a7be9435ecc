#!/usr/bin/env bash
# Runs the seeded Monte Carlo measurements (tests/verdicts.rs and
# src/scan/monte_carlo.rs) and prints their rates.
# Usage: scripts/monte-carlo.sh [whole_set|whole_set_multiclass|false_flags|rates]...
#   whole_set    coverage of the whole-set attacker's 95% interval
#                (WHOLE_SET_REPLICATES data sets per design, default 400)
#   whole_set_multiclass  the same for a three-class attribute on noise
#   false_flags  share of pure-noise data sets with a proxy/review flag or a
#                failed gate at 5, 10 and 20 minority rows
#                (FALSE_FLAG_SEEDS data sets each, default 20)
#   rates        coverage of the single-feature intervals
# With no argument, runs all four.
set -euo pipefail
cd "$(dirname "$0")/.."
names=("$@")
[ ${#names[@]} -eq 0 ] && names=(whole_set whole_set_multiclass false_flags rates)
for name in "${names[@]}"; do
    case "$name" in
    whole_set | whole_set_multiclass) where=(--lib) test="scan::monte_carlo::monte_carlo_${name}" ;;
    *) where=(--test verdicts) test="monte_carlo_${name}" ;;
    esac
    cargo test --release "${where[@]}" -- --ignored --nocapture --exact "$test" 2>&1 |
        grep -v '^$'
done
