#!/usr/bin/env python3
"""The whole job, drop-one and removal plan included, against the equivalent
pandas + scikit-learn code; and the width check. Run through
scripts/bench-full.sh, which builds telltale and prepares the virtual
environment.

1. At ROWS x 19 features (default 30,000; the demo's 11 features plus 8 noise
   columns): `telltale scan` with drop-one and the removal plan, next to
   scikit-learn doing the same job on the same file and 5 folds: the singles,
   pairs and whole set of scripts/bench.py, plus drop-one refitting
   HistGradientBoostingClassifier without each feature in turn (the joint
   columns go with their members). The plan has no scikit-learn counterpart
   (it would add more refits on that side).
2. At WIDE_ROWS x 200 features (default 50,000; 189 noise columns): telltale
   alone, full job; the target is under 5 minutes on 2 cores.

Prints wall times, telltale's stage times, its refit count and the ratio.
"""

import argparse
import itertools
import json
import os
import subprocess
import sys
import tempfile
import time

import numpy as np
import pandas as pd
from sklearn.model_selection import StratifiedKFold

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import bench  # noqa: E402  (shares the scikit-learn side of the benchmark)


def run_telltale(exe, csv, out_json):
    cmd = [exe, "scan", csv, "--protected", bench.PROTECTED, "--quiet", "--timings",
           "--json", out_json, "--force"]
    start = time.perf_counter()
    proc = subprocess.run(cmd, capture_output=True, text=True)
    wall = time.perf_counter() - start
    if proc.returncode not in (0, 1):
        sys.exit(f"telltale failed: {proc.stderr}")
    stages = {}
    for line in proc.stderr.splitlines():
        if line.startswith("timing\t"):
            _, name, secs = line.split("\t")
            key = name.split(":")[0]
            stages[key] = stages.get(key, 0.0) + float(secs)
    with open(out_json) as fh:
        result = json.load(fh)["results"][0]
    return wall, stages, result


def sklearn_drop_one(df, y, folds, features, joints):
    for f in features:
        rest = [c for c in features if c != f]
        kept = [j for j in joints if f not in j]
        bench.sklearn_whole(df, y, folds, rest, kept)


def sklearn_job(csv, result):
    df = pd.read_csv(csv, dtype={"application_ref": object})
    y = (df.pop(bench.PROTECTED) == bench.POSITIVE).astype(int).to_numpy()
    features = list(df.columns)
    folds = list(StratifiedKFold(5, shuffle=True, random_state=0).split(np.zeros(len(y)), y))
    unpaired = {f["name"] for f in result["features"] if f["kind"] == "identifier-like"}
    pairs = list(itertools.combinations([f for f in features if f not in unpaired], 2))
    joints = [j["features"] for j in result["whole_set"]["joint_columns"]]
    times = {}
    times["singles"], _ = bench.timed(bench.sklearn_singles, df, y, folds, features)
    times["pairs"], _ = bench.timed(bench.sklearn_pairs, df, y, folds, pairs)
    times["whole set"], auc = bench.timed(bench.sklearn_whole, df, y, folds, features, joints)
    times["drop-one"], _ = bench.timed(sklearn_drop_one, df, y, folds, features, joints)
    return times, auc


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--telltale", required=True)
    ap.add_argument("--rows", type=int, default=30_000)
    ap.add_argument("--wide-rows", type=int, default=50_000)
    ap.add_argument("--wide-features", type=int, default=200)
    ap.add_argument("--skip", choices=["narrow", "wide"], default=None)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as work:
        if args.skip != "narrow":
            csv = os.path.join(work, "narrow.csv")
            bench.write_demo(args.telltale, args.rows, 19, csv)
            wall, stages, result = run_telltale(args.telltale, csv, os.path.join(work, "n.json"))
            print(f"running scikit-learn at {args.rows} rows ...", file=sys.stderr, flush=True)
            sk, sk_auc = sklearn_job(csv, result)
            whole = result["whole_set"]
            sk_total = sum(sk.values())
            print(f"\n{args.rows} rows x 19 features, full job (singles, pairs, whole set, drop-one, plan)")
            for name in ["singles", "pairs", "whole set", "drop-one"]:
                print(f"  {name:<14} telltale {stages.get(name, float('nan')):8.2f} s   scikit-learn {sk[name]:8.2f} s")
            print(f"  {'removal plan':<14} telltale {stages.get('removal plan', float('nan')):8.2f} s   scikit-learn (none)")
            print(f"  total wall     telltale {wall:8.2f} s   scikit-learn {sk_total:8.2f} s   "
                  f"ratio {sk_total / wall:6.1f}x  (target >= 30x)")
            print(f"  refits {whole['refits']}, drop-one refitted {sum(d['refit'] for d in whole['drop_one'])}, "
                  f"screened {len(whole['drop_one_screened'])}, plan steps {len(whole['removal_plan'])}, "
                  f"joint columns {[j['features'] for j in whole['joint_columns']]}")
            print(f"  whole-set AUC telltale {whole['auc']:.4f}, scikit-learn {sk_auc:.4f}")
        if args.skip != "wide":
            csv = os.path.join(work, "wide.csv")
            bench.write_demo(args.telltale, args.wide_rows, args.wide_features, csv)
            wall, stages, result = run_telltale(args.telltale, csv, os.path.join(work, "w.json"))
            whole = result["whole_set"]
            print(f"\n{args.wide_rows} rows x {args.wide_features} features, full job: "
                  f"{wall:.1f} s wall (target < 300 s)")
            print("  stages: " + ", ".join(f"{k} {v:.1f} s" for k, v in stages.items()))
            print(f"  refits {whole['refits']}, drop-one refitted {sum(d['refit'] for d in whole['drop_one'])}, "
                  f"not used (exact) {sum(not d['refit'] for d in whole['drop_one'])}, "
                  f"screened {len(whole['drop_one_screened'])}, plan steps {len(whole['removal_plan'])}, "
                  f"target reached {whole['target_reached']}")


if __name__ == "__main__":
    main()
