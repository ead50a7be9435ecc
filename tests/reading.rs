//! How columns are read, end to end through `telltale scan`: missing-value
//! tokens, whole numbers that keep both their order and their levels,
//! collapsed bins, forced readings, and files left with no usable feature.

use serde_json::Value;
use std::fs;
use std::path::PathBuf;
use std::process::{Command, Output};
use telltale::data::demo::SplitMix64;
use telltale::data::demo::draw;

fn telltale(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_telltale"))
        .args(args)
        .output()
        .expect("run telltale")
}

/// Writes `text` to a fresh scratch file for one test.
fn write(name: &str, text: &str) -> String {
    let dir = std::env::temp_dir().join(format!("telltale-reading-{}", std::process::id()));
    fs::create_dir_all(&dir).expect("scratch dir");
    let path: PathBuf = dir.join(name);
    fs::write(&path, text).expect("write fixture");
    path.display().to_string()
}

/// Scans `file` with the single-feature screen only and returns the JSON report.
fn scan(file: &str, extra: &[&str]) -> Value {
    let mut args = vec![
        "scan",
        file,
        "--json",
        "-",
        "--quiet",
        "--pairs",
        "none",
        "--no-whole-set",
    ];
    args.extend_from_slice(extra);
    let output = telltale(&args);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        output.status.code().is_some_and(|c| c <= 1),
        "scan failed: {stderr}"
    );
    serde_json::from_slice(&output.stdout).expect("JSON report")
}

fn feature<'a>(report: &'a Value, name: &str) -> &'a Value {
    report["results"][0]["features"]
        .as_array()
        .expect("features")
        .iter()
        .find(|f| f["name"] == name)
        .unwrap_or_else(|| panic!("feature {name} not in {report}"))
}

fn reading<'a>(report: &'a Value, name: &str) -> &'a Value {
    report["reading"]["columns"]
        .as_array()
        .expect("reading columns")
        .iter()
        .find(|c| c["name"] == name)
        .unwrap_or_else(|| panic!("no reading for {name}: {}", report["reading"]))
}

fn class_labels(report: &Value) -> Vec<String> {
    report["results"][0]["levels"]
        .as_array()
        .expect("levels")
        .iter()
        .map(|l| l["label"].as_str().unwrap().to_string())
        .collect()
}

/// 200 rows as a statistics package or a database export writes them:
/// `NA` and `NULL` in the protected column (6 rows each), `NA` in one
/// numeric column every 10th row, `NULL` in another every 20th row.
fn credit_csv() -> String {
    let mut text = String::from("group,income,assets,region\n");
    for i in 0..200 {
        let group = match i {
            0..6 => "NA",
            6..12 => "NULL",
            _ if i % 3 == 0 => "b",
            _ => "a",
        };
        let income = if i % 10 == 5 {
            "NA".to_string()
        } else {
            format!("{}.5", 20_000 + (i * 7919) % 5000)
        };
        let assets = if i % 20 == 7 {
            "NULL".to_string()
        } else {
            format!("{}.25", (i * 104_729) % 9000)
        };
        let region = ["north", "south", "east"][i % 3];
        text.push_str(&format!("{group},{income},{assets},{region}\n"));
    }
    text
}

#[test]
fn missing_value_tokens_keep_numbers_numeric_and_never_become_a_class() {
    let file = write("credit.csv", &credit_csv());
    let report = scan(&file, &["-p", "group"]);
    assert_eq!(feature(&report, "income")["kind"], "numeric");
    assert_eq!(feature(&report, "assets")["kind"], "numeric");
    assert_eq!(class_labels(&report), vec!["a", "b"]);
    assert_eq!(report["dataset"]["rows_dropped_missing_protected"], 12);
    // Per column and token, over every row of the file: rows 5, 15, ..., 195
    // hold `NA` in income (20), rows 7, 27, ..., 187 `NULL` in assets (10).
    assert_eq!(reading(&report, "group")["missing_tokens"]["NA"], 6);
    assert_eq!(reading(&report, "group")["missing_tokens"]["NULL"], 6);
    assert_eq!(reading(&report, "income")["missing_tokens"]["NA"], 20);
    assert_eq!(reading(&report, "assets")["missing_tokens"]["NULL"], 10);
    // Missing fraction over the 188 rows analysed: income rows 15, 25, ..., 195.
    let income_missing = feature(&report, "income")["missing_fraction"]
        .as_f64()
        .unwrap();
    assert!(
        (income_missing - 19.0 / 188.0).abs() < 1e-12,
        "{income_missing}"
    );
    let notes = report["notes"].to_string();
    assert!(notes.contains("income (NA ×20)"), "{notes}");
}

#[test]
fn na_values_replace_the_tokens_and_the_opt_out_keeps_every_text() {
    let file = write("credit-tokens.csv", &credit_csv());
    // Only `NULL` is missing: `NA` is a class, and income is text with a note.
    let report = scan(&file, &["-p", "group", "--na-values", "NULL"]);
    assert_eq!(class_labels(&report), vec!["NA", "a", "b"]);
    assert_ne!(feature(&report, "income")["kind"], "numeric");
    let note = reading(&report, "income")["note"].as_str().unwrap();
    assert!(
        note.contains("20 of 194 present fields are not numbers"),
        "{note}"
    );
    assert_eq!(feature(&report, "assets")["kind"], "numeric");
    // --numeric reads the `NA` fields as missing and says so.
    let report = scan(
        &file,
        &["-p", "group", "--na-values", "NULL", "--numeric", "income"],
    );
    assert_eq!(feature(&report, "income")["kind"], "numeric");
    let note = reading(&report, "income")["note"].as_str().unwrap();
    assert!(note.contains("--numeric: 20 fields"), "{note}");
    // No token at all: both spellings are classes, both numeric columns text.
    let report = scan(&file, &["-p", "group", "--no-na-values"]);
    assert_eq!(class_labels(&report), vec!["NA", "NULL", "a", "b"]);
    assert_ne!(feature(&report, "assets")["kind"], "numeric");
    assert_eq!(report["reading"]["missing_tokens"], serde_json::json!([]));
}

/// Draws `rows` (class, value) pairs: class 1 with probability `share`.
fn draw_classes(rows: usize, share: f64, seed: u64) -> (SplitMix64, Vec<bool>) {
    let mut rng = SplitMix64::new(seed);
    let classes = (0..rows).map(|_| rng.next_f64() < share).collect();
    (rng, classes)
}

/// A whole-number amount nearly all distinct and shifted by class, written
/// as is and with a `.5` offset: both must be read as the same quantity.
#[test]
fn whole_number_amount_keeps_its_order() {
    // Equal-variance normals shifted by d standard deviations have Bayes AUC
    // Φ(d/√2) (the binormal model; Hanley & McNeil 1982): d = 0.78 gives 0.71,
    // and a monotone transform (here exp, giving amounts of 3 to 6 digits,
    // whose order as text is not their numeric order) leaves it unchanged.
    let (mut rng, classes) = draw_classes(2_000, 0.3, 7);
    let amounts: Vec<f64> = classes
        .iter()
        .map(|&c| {
            (9.0 + 0.8 * (rng.normal() + if c { 0.78 } else { 0.0 }))
                .exp()
                .round()
        })
        .collect();
    let mut distinct = amounts.clone();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    let share = distinct.len() as f64 / amounts.len() as f64;
    assert!((0.95..0.99).contains(&share), "{share}");
    let csv = |offset: f64| {
        let mut text = String::from("group,amount\n");
        for (c, a) in classes.iter().zip(&amounts) {
            text.push_str(&format!("{},{}\n", if *c { "b" } else { "a" }, a + offset));
        }
        text
    };
    let whole = scan(&write("amount-whole.csv", &csv(0.0)), &["-p", "group"]);
    let offset = scan(&write("amount-half.csv", &csv(0.5)), &["-p", "group"]);
    let whole_amount = feature(&whole, "amount");
    assert_eq!(whole_amount["kind"], "numeric");
    let auc = |report: &Value| feature(report, "amount")["auc"].as_f64().unwrap();
    assert!(
        (auc(&whole) - auc(&offset)).abs() <= 0.03,
        "{} vs {}",
        auc(&whole),
        auc(&offset)
    );
    // With 600 and 1,400 rows the AUC's standard error is about 0.013, so the
    // lower bound of an AUC near 0.71 sits far above the review line 0.60.
    assert!(
        whole_amount["auc_low"].as_f64().unwrap() >= 0.60,
        "{whole_amount}"
    );
    assert_ne!(whole_amount["flag"], "clear");
    let note = reading(&whole, "amount")["note"].as_str().unwrap();
    assert!(note.contains("--exclude"), "{note}");
}

/// Exact Bayes AUC of a discrete feature with class pmfs `p0` and `p1`: the
/// likelihood ratio is the optimal score, and AUC = P(s1 > s0) + ½ P(s1 = s0)
/// (Mann–Whitney with ties; Hanley & McNeil 1982).
fn bayes_auc(p0: &[f64], p1: &[f64]) -> f64 {
    let ratios: Vec<f64> = p1.iter().zip(p0).map(|(a, b)| a / b).collect();
    let mut auc = 0.0;
    for (positive, ratio_positive) in p1.iter().zip(&ratios) {
        for (negative, ratio_negative) in p0.iter().zip(&ratios) {
            if ratio_positive > ratio_negative {
                auc += positive * negative;
            } else if ratio_positive == ratio_negative {
                auc += 0.5 * positive * negative;
            }
        }
    }
    auc
}

#[test]
fn integer_codes_reach_their_bayes_auc() {
    // 80 branch codes 1000–1079. Neighbouring codes have unrelated class
    // shares (the log-ratio follows (37·l mod 80), a permutation), so any
    // grouping of adjacent codes mixes strong and weak ones.
    let tilt: Vec<f64> = (0..80)
        .map(|l| f64::from((l * 37) % 80) / 79.0 - 0.5)
        .collect();
    let normalise = |w: Vec<f64>| {
        let total: f64 = w.iter().sum();
        w.into_iter().map(|x| x / total).collect::<Vec<f64>>()
    };
    let p1 = normalise(tilt.iter().map(|t| (2.0 * t).exp()).collect());
    let p0 = normalise(tilt.iter().map(|t| (-2.0 * t).exp()).collect());
    let bayes = bayes_auc(&p0, &p1);
    assert!((0.79..0.81).contains(&bayes), "{bayes}");
    let (mut rng, classes) = draw_classes(10_000, 0.4, 11);
    let mut text = String::from("group,branch\n");
    for &c in &classes {
        let code = 1000 + draw(&mut rng, if c { &p1 } else { &p0 });
        text.push_str(&format!("{},{code}\n", if c { "b" } else { "a" }));
    }
    let report = scan(&write("branch.csv", &text), &["-p", "group"]);
    let branch = feature(&report, "branch");
    assert_eq!(branch["kind"], "integer-coded");
    assert_eq!(branch["levels"], 80);
    // 10,000 rows give the AUC a standard error near 0.005, and the
    // out-of-fold frequency surrogate estimates 80 shares from about 100
    // rows each; 0.03 leaves room for both while a binned reading (which
    // averages neighbouring codes) falls short by more.
    let auc = branch["auc"].as_f64().unwrap();
    assert!((auc - bayes).abs() <= 0.03, "auc {auc}, Bayes {bayes}");
    assert!(
        reading(&report, "branch")["note"]
            .as_str()
            .unwrap()
            .contains("80 distinct values")
    );
}

#[test]
fn collapsed_bins_keep_the_values_and_constant_means_one_value() {
    // 57 distinct values, 92% of them zero: ten quantile bins merge into one.
    let mut text = String::from("group,arrears,flat\n");
    for i in 0..1_000 {
        let group = if i % 2 == 0 { "a" } else { "b" };
        let arrears = if i % 25 < 23 { 0 } else { 1 + i % 57 };
        text.push_str(&format!("{group},{arrears}.5,7\n"));
    }
    let report = scan(
        &write("arrears.csv", &text),
        &["-p", "group", "--bins", "10"],
    );
    let arrears = feature(&report, "arrears");
    assert_eq!(arrears["kind"], "numeric");
    let levels = arrears["levels"].as_u64().unwrap();
    assert!(levels >= 2, "{arrears}");
    assert!(
        reading(&report, "arrears")["note"]
            .as_str()
            .unwrap()
            .contains("merge into one")
    );
    let skipped = report["skipped_columns"].to_string();
    assert!(
        skipped.contains("flat") && skipped.contains("constant"),
        "{skipped}"
    );
}

/// Asserts exit status 2 and one error line containing every `needle`.
fn assert_input_error(output: &Output, needles: &[&str]) {
    let text = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "stderr: {text}");
    assert_eq!(
        text.trim_end().lines().count(),
        1,
        "one line expected: {text}"
    );
    for needle in needles {
        assert!(text.contains(needle), "`{needle}` missing from: {text}");
    }
}

#[test]
fn no_usable_feature_is_an_input_error() {
    let mut text = String::from("group,flat,empty\n");
    for i in 0..40 {
        text.push_str(&format!("{},1,\n", if i % 2 == 0 { "a" } else { "b" }));
    }
    let file = write("nothing.csv", &text);
    let output = telltale(&["scan", &file, "-p", "group", "--quiet"]);
    assert_input_error(&output, &["nothing.csv", "no usable feature", "flat"]);
    let output = telltale(&["scan", &file, "-p", "group", "--features", "group"]);
    assert_input_error(&output, &["nothing.csv", "no feature column"]);
    let output = telltale(&[
        "scan",
        &file,
        "-p",
        "group",
        "--numeric",
        "flat",
        "--categorical",
        "flat",
    ]);
    assert_input_error(&output, &["flat", "--numeric", "--categorical"]);
}

/// A Parquet file with native types: text, booleans, integers with nulls and
/// floats, as a pandas or polars user writes them.
fn typed_parquet(name: &str) -> (String, usize) {
    use polars::prelude::*;
    let rows = 400;
    let (mut rng, is_b) = draw_classes(rows, 0.4, 11);
    let sex: Vec<&str> = is_b.iter().map(|&b| if b { "F" } else { "M" }).collect();
    // A member flag that leans towards class F, so it is a real feature.
    let member: Vec<bool> = is_b
        .iter()
        .map(|&b| rng.next_f64() < if b { 0.7 } else { 0.3 })
        .collect();
    let amount: Vec<Option<i64>> = (0..rows)
        .map(|i| (i % 9 != 0).then(|| 1000 + (rng.next_f64() * 5000.0) as i64))
        .collect();
    let score: Vec<f64> = (0..rows).map(|_| rng.next_f64()).collect();
    let approved: Vec<bool> = score.iter().map(|&s| s >= 0.5).collect();
    let repaid: Vec<i64> = (0..rows).map(|_| i64::from(rng.next_f64() < 0.6)).collect();
    let selected = approved.iter().filter(|&&a| a).count();
    let mut frame = df!(
        "sex" => sex,
        "member" => member,
        "amount" => amount,
        "score" => score,
        "approved" => approved,
        "repaid" => repaid,
    )
    .expect("frame");
    let path = write(name, "");
    let file = fs::File::create(&path).expect("parquet file");
    ParquetWriter::new(file)
        .finish(&mut frame)
        .expect("write parquet");
    (path, selected)
}

#[test]
fn parquet_booleans_and_nullable_integers_are_read() {
    let (file, selected) = typed_parquet("typed.parquet");
    let leave_out = [
        "--exclude",
        "score",
        "--exclude",
        "approved",
        "--exclude",
        "repaid",
    ];
    let report = scan(&file, &[&["-p", "sex"][..], &leave_out].concat());
    let member = feature(&report, "member");
    assert_eq!(member["levels"], 2, "{member}");
    assert!(member["auc"].as_f64().expect("auc") > 0.6, "{member}");
    let amount = feature(&report, "amount");
    assert_ne!(amount["kind"], "categorical", "{amount}");
    // The boolean decision of `outputs` is read as selected / not selected.
    let output = telltale(&[
        "outputs",
        &file,
        "--score",
        "score",
        "--decision",
        "approved",
        "--outcome",
        "repaid",
        "-p",
        "sex",
        "--json",
        "-",
        "--quiet",
    ]);
    assert!(
        output.status.code().is_some_and(|c| c <= 1),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let counted: u64 = report["results"][0]["groups"]
        .as_array()
        .expect("groups")
        .iter()
        .map(|g| g["selected"].as_u64().expect("selected count"))
        .sum();
    assert_eq!(counted as usize, selected);
}
