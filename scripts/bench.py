#!/usr/bin/env python3
"""Side-by-side benchmark of telltale and the equivalent pandas + scikit-learn code.

Run through scripts/bench.sh, which builds telltale and prepares the virtual
environment. For each row count the script

1. writes the seeded demo data (`telltale demo --write-data`, 25 features);
2. runs `telltale scan` on it with `--timings`, recording each stage's wall time
   and the peak resident memory (GNU time);
3. runs the scikit-learn equivalent on the same file and the same 5 folds:
   - singles: mutual_info_score on the binned feature (32 quantile bins for
     numeric columns, levels for text), 5-fold LogisticRegression and 5-fold
     depth-4 DecisionTreeClassifier per feature;
   - pairs: a 5-fold depth-4 DecisionTreeClassifier on each pair telltale
     scans (identifier-like columns are screened alone);
   - whole set: 5-fold HistGradientBoostingClassifier on all features, plus
     the joint columns of the pairs telltale hands its own attacker;
4. prints the ratios against the targets.

scikit-learn's singles and pairs are slow at a million rows; with
`--sklearn-sample K` (default: all at <= 100k rows, 6 features / 12 pairs
above) they are timed on K features or 2K pairs and scaled linearly to the full
count; the table says when a figure is extrapolated.
"""

import argparse
import itertools
import os
import subprocess
import sys
import tempfile
import time

import numpy as np
import pandas as pd
from sklearn.ensemble import HistGradientBoostingClassifier
from sklearn.impute import SimpleImputer
from sklearn.linear_model import LogisticRegression
from sklearn.metrics import mutual_info_score, roc_auc_score
from sklearn.model_selection import StratifiedKFold
from sklearn.pipeline import Pipeline
from sklearn.preprocessing import OneHotEncoder, StandardScaler
from sklearn.tree import DecisionTreeClassifier

PROTECTED = "community"
POSITIVE = "Valic"
OUTCOME = "approved"  # the demo's outcome: not a feature, dropped from the benchmark data
DEMO_FEATURES = 11  # the demo's features besides the protected attribute and the outcome
FEATURES = 25


def write_demo(exe, rows, features, path):
    """The seeded demo data with `features` features (noise columns added to
    the demo's own), without the outcome column."""
    subprocess.run([exe, "demo", "--rows", str(rows), "--extra-noise", str(features - DEMO_FEATURES),
                    "--write-data", path, "--force"], check=True, capture_output=True)
    df = pd.read_csv(path, dtype={"application_ref": object})
    df.drop(columns=[OUTCOME]).to_csv(path, index=False)


def run_telltale(exe, csv, out_json):
    # Drop-one ablation and the removal plan refit the attacker once per
    # feature and step; they have no scikit-learn counterpart here.
    cmd = ["/usr/bin/time", "-f", "peak_kb %M", exe, "scan", csv, "--protected", PROTECTED,
           "--quiet", "--timings", "--no-ablation", "--json", out_json, "--force"]
    proc = subprocess.run(cmd, capture_output=True, text=True)
    if proc.returncode not in (0, 1):
        sys.exit(f"telltale failed: {proc.stderr}")
    stages, peak_kb = {}, None
    for line in proc.stderr.splitlines():
        if line.startswith("timing\t"):
            _, name, secs = line.split("\t")
            stages[name.split(":")[0]] = stages.get(name.split(":")[0], 0.0) + float(secs)
        elif line.startswith("peak_kb"):
            peak_kb = int(line.split()[1])
    import json
    with open(out_json) as fh:
        report = json.load(fh)
    result = report["results"][0]
    # The pairs telltale hands its attacker as joint columns (chosen inside
    # each training fold; src/scan/joints.rs), so scikit-learn gets the same inputs.
    joints = [j["features"] for j in result["whole_set"].get("joint_columns", [])]
    # telltale screens identifier-like columns alone, not in pairs.
    unpaired = {f["name"] for f in result["features"] if f["kind"] == "identifier-like"}
    return stages, peak_kb, result["whole_set"]["auc"], joints, unpaired


def loaded_bytes(df):
    """Compact in-memory size of the loaded columns: 8 bytes per numeric value;
    text as its UTF-8 bytes plus a 4-byte offset per value (Arrow layout)."""
    total = 0
    for c in df.columns:
        if df[c].dtype == object:
            total += int(df[c].fillna("").str.len().sum()) + 4 * len(df)
        else:
            total += 8 * len(df)
    return total


def binned(s):
    if s.dtype == object:
        return s.fillna("<NA>").astype("category").cat.codes.to_numpy()
    codes = pd.qcut(s, 32, labels=False, duplicates="drop")
    return np.where(codes.isna(), -1, codes).astype(np.int64)


def lr_pipe(is_text):
    if is_text:
        return Pipeline([("ohe", OneHotEncoder(handle_unknown="ignore")),
                         ("lr", LogisticRegression(max_iter=1000))])
    return Pipeline([("imp", SimpleImputer(strategy="median", add_indicator=True)),
                     ("sc", StandardScaler()), ("lr", LogisticRegression(max_iter=1000))])


def ordinal(s):
    if s.dtype == object:
        return s.astype("category").cat.codes.to_numpy(dtype=float).reshape(-1, 1)
    return s.to_numpy(dtype=float).reshape(-1, 1)


def cv(model_factory, X, y, folds):
    for tr, te in folds:
        m = model_factory()
        m.fit(X[tr], y[tr])
        m.predict_proba(X[te])


def sklearn_singles(df, y, folds, features):
    for c in features:
        s = df[c]
        is_text = s.dtype == object
        mutual_info_score(y, binned(s))
        X_lr = s.fillna("<NA>").to_numpy().reshape(-1, 1) if is_text else s.to_numpy().reshape(-1, 1)
        cv(lambda: lr_pipe(is_text), X_lr, y, folds)
        cv(lambda: DecisionTreeClassifier(max_depth=4, random_state=0), ordinal(s), y, folds)


def sklearn_pairs(df, y, folds, pairs):
    for a, b in pairs:
        X = np.hstack([ordinal(df[a]), ordinal(df[b])])
        cv(lambda: DecisionTreeClassifier(max_depth=4, random_state=0), X, y, folds)


def sklearn_whole(df, y, folds, features, joints):
    X = pd.DataFrame({c: (df[c].astype("category") if df[c].dtype == object else df[c])
                      for c in features})
    for a, b in joints:
        X[f"{a} x {b}"] = (df[a].astype(str) + "|" + df[b].astype(str)).astype("category")
    features = list(X.columns)
    if any(X[c].dtype.name == "category" and len(X[c].cat.categories) > 255 for c in features):
        for c in features:
            if X[c].dtype.name == "category" and len(X[c].cat.categories) > 255:
                X[c] = X[c].cat.codes.astype(float)
    p = np.zeros(len(y))
    for tr, te in folds:
        m = HistGradientBoostingClassifier(random_state=0, categorical_features="from_dtype")
        m.fit(X.iloc[tr], y[tr])
        p[te] = m.predict_proba(X.iloc[te])[:, 1]
    return roc_auc_score(y, p)


def timed(f, *args):
    start = time.perf_counter()
    value = f(*args)
    return time.perf_counter() - start, value


def bench(exe, rows, sample, workdir):
    csv = os.path.join(workdir, f"demo-{rows}.csv")
    write_demo(exe, rows, FEATURES, csv)
    stages, peak_kb, tt_auc, joints, unpaired = run_telltale(
        exe, csv, os.path.join(workdir, "out.json"))
    df = pd.read_csv(csv, dtype={"application_ref": object})
    y = (df.pop(PROTECTED) == POSITIVE).astype(int).to_numpy()
    features = list(df.columns)
    folds = list(StratifiedKFold(5, shuffle=True, random_state=0).split(np.zeros(len(y)), y))
    all_pairs = list(itertools.combinations([f for f in features if f not in unpaired], 2))
    k = len(features) if sample is None else min(sample, len(features))
    kp = len(all_pairs) if sample is None else min(2 * sample, len(all_pairs))
    t_singles, _ = timed(sklearn_singles, df, y, folds, features[:k])
    t_pairs, _ = timed(sklearn_pairs, df, y, folds, all_pairs[:kp])
    t_whole, sk_auc = timed(sklearn_whole, df, y, folds, features, joints)
    return {
        "rows": rows,
        "features": len(features),
        "tt": stages,
        "sk_singles": t_singles * len(features) / k,
        "sk_pairs": t_pairs * len(all_pairs) / kp,
        "extrapolated": k < len(features) or kp < len(all_pairs),
        "sk_whole": t_whole,
        "tt_auc": tt_auc,
        "sk_auc": sk_auc,
        "peak_bytes": (peak_kb or 0) * 1024,
        "loaded_bytes": loaded_bytes(df) + 8 * len(y),
    }


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--telltale", required=True)
    ap.add_argument("--sklearn-sample", type=int, default=None)
    ap.add_argument("rows", nargs="*", type=int, default=[100_000, 300_000, 1_000_000])
    args = ap.parse_args()
    results = []
    with tempfile.TemporaryDirectory() as workdir:
        for rows in args.rows:
            sample = args.sklearn_sample if args.sklearn_sample else (None if rows <= 100_000 else 6)
            print(f"running {rows} rows ...", file=sys.stderr, flush=True)
            results.append(bench(args.telltale, rows, sample, workdir))
    print(f"\n{'rows':>9} {'measure':<28} {'telltale s':>11} {'sklearn s':>10} {'ratio':>8}  target")
    for r in results:
        tt = r["tt"]
        ext = " (sklearn extrapolated)" if r["extrapolated"] else ""
        lines = [
            ("singles", tt.get("singles", float("nan")), r["sk_singles"], ">= 30x faster" + ext),
            ("pairs", tt.get("pairs", float("nan")), r["sk_pairs"], ">= 50x faster" + ext),
            ("whole set (boosted)", tt.get("whole set", float("nan")), r["sk_whole"], "telltale <= 1.5x sklearn time, i.e. ratio >= 0.67x"),
        ]
        for name, t, s, target in lines:
            ratio = s / t if t > 0 else float("nan")
            print(f"{r['rows']:>9} {name:<28} {t:>11.3f} {s:>10.3f} {ratio:>7.1f}x  {target}")
        floor = tt.get("floor pass", float("nan"))
        print(f"{r['rows']:>9} {'singles / floor pass':<28} {tt.get('singles', 0):>11.3f} {floor:>10.4f} "
              f"{tt.get('singles', 0) / floor if floor > 0 else float('nan'):>7.1f}x  <= 5x")
        print(f"{r['rows']:>9} {'whole-set AUC diff':<28} {r['tt_auc']:>11.4f} {r['sk_auc']:>10.4f} "
              f"{abs(r['tt_auc'] - r['sk_auc']):>8.4f}  <= 0.01")
        print(f"{r['rows']:>9} {'peak memory / loaded':<28} {r['peak_bytes'] / 1e6:>10.1f}M {r['loaded_bytes'] / 1e6:>9.1f}M "
              f"{r['peak_bytes'] / r['loaded_bytes']:>7.2f}x  <= 2x")
    if len(results) > 1:
        base = results[0]
        for r in results[1:]:
            scale = r["rows"] / base["rows"]
            total = lambda x: sum(v for k, v in x["tt"].items() if k != "floor pass")
            print(f"growth {base['rows']}->{r['rows']} rows (x{scale:.0f}): time x{total(r) / total(base):.2f}, "
                  f"memory x{r['peak_bytes'] / base['peak_bytes']:.2f} (linear = x{scale:.0f})")


if __name__ == "__main__":
    main()
