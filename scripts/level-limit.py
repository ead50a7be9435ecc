#!/usr/bin/env python3
"""Measures the rows-per-level limit of the kind rule (src/data/kinds.rs).

Whole-number columns keep one level per value for the frequency surrogate
while each level has on average at least 20 rows. This script scans, at
several rows per level, two seeded columns both ways (one level per value
with --categorical, quantile bins with --numeric) and prints, averaged
over 5 seeds, the frequency surrogate's AUC under each reading and the best
AUC of each reading. The integer-coded reading's best is the larger of its
frequency surrogate over levels and the logistic and tree surrogates over raw
values (which it shares with the numeric reading).

- an integer code: 80 codes whose class log-ratio follows (37·l mod 80), so
  neighbouring codes are unrelated; its Bayes AUC is computed exactly;
- a whole-number amount: 200 values, class shift of 0.5 standard deviation
  on a discretised normal, where the order carries everything.

Usage: scripts/level-limit.py [path/to/telltale]   (default target/release/telltale)
Standard library only; each scan takes about a second.
"""

import json
import math
import os
import random
import subprocess
import sys
import tempfile

BINARY = sys.argv[1] if len(sys.argv) > 1 else "target/release/telltale"
ROWS_PER_LEVEL = [5, 10, 20, 40, 80]
REPLICATES = 5


def code_pmfs():
    tilt = [((l * 37) % 80) / 79 - 0.5 for l in range(80)]
    w1 = [math.exp(2 * t) for t in tilt]
    w0 = [math.exp(-2 * t) for t in tilt]
    return [x / sum(w0) for x in w0], [x / sum(w1) for x in w1]


def bayes_auc(p0, p1):
    ratio = [a / b for a, b in zip(p1, p0)]
    auc = 0.0
    for pos, rp in zip(p1, ratio):
        for neg, rn in zip(p0, ratio):
            auc += pos * neg * (1.0 if rp > rn else 0.5 if rp == rn else 0.0)
    return auc


def scan(path, flag):
    out = subprocess.run(
        [BINARY, "scan", path, "-p", "group", "--json", "-", "--quiet",
         "--pairs", "none", "--no-whole-set", flag, "x"],
        capture_output=True)
    if out.returncode > 1:  # 1 only means a threshold was exceeded
        sys.exit(out.stderr.decode())
    out = out.stdout
    return json.loads(out)["results"][0]["features"][0]["surrogates"]


def write(rows, value_of, seed):
    rng = random.Random(seed)
    fd, path = tempfile.mkstemp(suffix=".csv")
    with os.fdopen(fd, "w") as f:
        f.write("group,x\n")
        for _ in range(rows):
            c = rng.random() < 0.4
            f.write(f"{'b' if c else 'a'},{value_of(rng, c)}\n")
    return path


def main():
    p0, p1 = code_pmfs()
    print(f"80 codes, Bayes AUC {bayes_auc(p0, p1):.3f}; "
          f"amount: 200 values, Bayes AUC {0.5 * math.erfc(-0.5 / 2):.3f}")
    print("rows/level | code: freq levels, freq bins, best coded, best bins "
          "| amount: freq levels, freq bins, best coded, best bins")

    def code(rng, c):
        return 1000 + rng.choices(range(80), weights=p1 if c else p0)[0]

    def amount(rng, c):
        z = rng.gauss(0.5 if c else 0.0, 1.0)
        return min(199, max(0, round(100 + 30 * z)))

    def both_readings(rows, value_of, seed):
        path = write(rows, value_of, seed)
        levels = scan(path, "--categorical")
        bins = scan(path, "--numeric")
        os.remove(path)
        coded = max(levels["frequency"], bins["logistic"], bins["tree"])
        return [levels["frequency"], bins["frequency"], coded, max(bins.values())]

    for per_level in ROWS_PER_LEVEL:
        sums = [0.0] * 8
        for rep in range(REPLICATES):
            values = (both_readings(80 * per_level, code, rep)
                      + both_readings(200 * per_level, amount, 100 + rep))
            for i, v in enumerate(values):
                sums[i] += v / REPLICATES
        print(f"{per_level:10d} | " + "  ".join(f"{v:.3f}" for v in sums[:4])
              + " | " + "  ".join(f"{v:.3f}" for v in sums[4:]))


if __name__ == "__main__":
    main()
