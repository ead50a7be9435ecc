//! `telltale outputs` as a user runs it: bad input, suppression, exit status
//! and the files it writes.

use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn telltale(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_telltale"))
        .args(args)
        .output()
        .expect("run telltale")
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("telltale-outputs-{}-{name}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).expect("scratch dir");
    dir
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let path = dir.join(name);
    fs::write(&path, text).expect("write fixture");
    path.display().to_string()
}

/// Exit status 2 and one error line naming every `needle`, never a panic.
fn assert_input_error(output: &Output, needles: &[&str]) {
    let text = String::from_utf8_lossy(&output.stderr).to_string();
    assert_eq!(output.status.code(), Some(2), "stderr: {text}");
    assert_eq!(
        text.trim_end().lines().count(),
        1,
        "one line expected: {text}"
    );
    assert!(!text.contains("panicked"), "{text}");
    for needle in needles {
        assert!(text.contains(needle), "`{needle}` missing from: {text}");
    }
}

/// 60 rows: group a (40 rows) and b (20 rows); a is selected 3 times in 4,
/// b once in 4; score = selection plus a small spread; outcome on alternate rows.
fn scored_csv(mut edit: impl FnMut(usize, &mut Vec<String>)) -> String {
    let mut text = String::from("group,score,decision,outcome,branch\n");
    for i in 0..60 {
        let group = if i < 40 { "a" } else { "b" };
        let selected = if i < 40 { i % 4 != 0 } else { i % 4 == 0 };
        let score = f64::from(u8::from(selected)) * 0.5 + (i % 7) as f64 / 20.0;
        let mut fields = vec![
            group.to_string(),
            format!("{score:.3}"),
            u8::from(selected).to_string(),
            (i % 2).to_string(),
            if i < 12 { "Greyholm" } else { "Ashcombe" }.to_string(),
        ];
        edit(i, &mut fields);
        text.push_str(&fields.join(","));
        text.push('\n');
    }
    text
}

const BASE: [&str; 6] = [
    "--score",
    "score",
    "--protected",
    "group",
    "--outcome",
    "outcome",
];

fn run_json(path: &str, extra: &[&str]) -> (Output, Value) {
    let mut args = vec!["outputs", path];
    args.extend(BASE);
    args.extend(extra);
    args.extend(["--json", "-"]);
    let output = telltale(&args);
    let json = serde_json::from_slice(&output.stdout).unwrap_or(Value::Null);
    (output, json)
}

#[test]
fn score_that_is_not_numeric_is_an_input_error() {
    let dir = scratch("text-score");
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i == 7 {
                f[1] = "high".into();
            }
        }),
    );
    let (output, _) = run_json(&path, &["--decision", "decision"]);
    assert_input_error(&output, &["scored.csv", "`score`", "numeric", "`high`"]);
}

#[test]
fn decision_that_is_not_zero_or_one_is_an_input_error() {
    let dir = scratch("decision");
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i == 3 {
                f[2] = "yes".into();
            }
        }),
    );
    let (output, _) = run_json(&path, &["--decision", "decision"]);
    assert_input_error(&output, &["scored.csv", "`decision`", "0 or 1", "`yes`"]);
    let path = write(
        &dir,
        "outcome.csv",
        &scored_csv(|i, f| {
            if i == 5 {
                f[3] = "2".into();
            }
        }),
    );
    let (output, _) = run_json(&path, &["--decision", "decision"]);
    assert_input_error(&output, &["outcome.csv", "`outcome`", "0 or 1"]);
}

#[test]
fn threshold_outside_the_score_range_is_an_input_error() {
    let dir = scratch("threshold");
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    let (output, _) = run_json(&path, &["--threshold", "1.5"]);
    assert_input_error(
        &output,
        &["scored.csv", "`score`", "outside the score range"],
    );
    let (output, _) = run_json(&path, &["--selection-rate", "1.2"]);
    assert_input_error(&output, &["--selection-rate"]);
    let mut args = vec!["outputs", path.as_str()];
    args.extend(BASE);
    let output = telltale(&args);
    assert_eq!(output.status.code(), Some(2), "no way to decide selection");
}

#[test]
fn a_group_without_positive_outcomes_has_no_tpr_and_says_why() {
    let dir = scratch("no-positives");
    // Group b never has outcome 1.
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i >= 40 {
                f[3] = "0".into();
            }
        }),
    );
    let (output, json) = run_json(&path, &["--decision", "decision"]);
    assert_ne!(
        output.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let b = &json["results"][0]["groups"][1];
    assert_eq!(b["label"], "b");
    assert!(b["tpr"].is_null());
    assert!(
        b["not_estimable"][0]
            .as_str()
            .unwrap()
            .contains("TPR not estimable: no rows with outcome 1")
    );
    // The TPR gap then compares the groups that have a TPR: only `a`, so none.
    assert!(json["results"][0]["equalized_odds"]["tpr_gap"].is_null());
    assert!(!json["results"][0]["equalized_odds"]["fpr_gap"].is_null());
}

#[test]
fn four_fifths_decides_the_exit_status_and_small_groups_are_suppressed() {
    let dir = scratch("exit");
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    // a: 30 of 40 selected, b: 5 of 20: ratio 1/3, below four-fifths.
    let (output, json) = run_json(&path, &["--decision", "decision"]);
    assert_eq!(output.status.code(), Some(1));
    let impact = &json["results"][0]["adverse_impact_ratio"];
    assert!((impact["ratio"].as_f64().unwrap() - 1.0 / 3.0).abs() < 1e-15);
    assert_eq!(impact["four_fifths"]["below"], true);
    // With min_cell 25, group b (20 rows) is suppressed everywhere: no ratio, no count.
    let (output, json) = run_json(&path, &["--decision", "decision", "--min-cell", "25"]);
    assert_eq!(output.status.code(), Some(0));
    let b = &json["results"][0]["groups"][1];
    assert!(b["count"].is_null() && b["selected"].is_null() && b["selection_rate"].is_null());
    assert!(json["results"][0]["adverse_impact_ratio"].is_null());
    assert!(json["results"][0]["standardized_mean_difference"].is_null());
    let text = String::from_utf8_lossy(
        &telltale(&[
            "outputs",
            &path,
            "--score",
            "score",
            "--protected",
            "group",
            "--decision",
            "decision",
            "--min-cell",
            "25",
        ])
        .stdout,
    )
    .to_string();
    assert!(text.contains("<25"), "{text}");
    assert!(!text.contains(" 20 "), "the suppressed count leaks: {text}");
}

#[test]
fn missing_scores_are_dropped_and_counted() {
    let dir = scratch("missing");
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i % 10 == 1 {
                f[1] = String::new();
            }
        }),
    );
    let (_, json) = run_json(&path, &["--decision", "decision"]);
    assert_eq!(json["dataset"]["rows"], 60);
    assert_eq!(json["dataset"]["rows_used"], 54);
    let notes = json["notes"].to_string();
    assert!(
        notes.contains("6 rows dropped: score `score` missing"),
        "{notes}"
    );
}

#[test]
fn thin_segment_states_how_high_a_zero_rate_may_be() {
    let dir = scratch("thin");
    // Greyholm: 12 rows, none selected.
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i < 12 {
                f[2] = "0".into();
            }
        }),
    );
    let (_, json) = run_json(&path, &["--decision", "decision", "--segment", "branch"]);
    let thin = json["results"][0]["thin_segments"].as_array().unwrap();
    let greyholm = thin
        .iter()
        .find(|t| t["level"] == "Greyholm" && t["event"] == "selected")
        .expect("Greyholm listed");
    // 1 − 0.025^{1/12} = 0.2646 (Clopper & Pearson 1934 at zero events).
    let high = greyholm["rate"]["high"].as_f64().unwrap();
    assert!((high - (1.0 - 0.025f64.powf(1.0 / 12.0))).abs() < 1e-12);
    assert!(
        greyholm["statement"]
            .as_str()
            .unwrap()
            .starts_with("0 selected in 12 rows: the rate may still be as high as 26.5%")
    );
}

#[test]
fn report_folder_is_written_once_and_kept() {
    let dir = scratch("folder");
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    let out = dir.join("out");
    let out_arg = out.display().to_string();
    let mut args = vec![
        "outputs",
        path.as_str(),
        "--selection-rate",
        "0.5",
        "--report",
        &out_arg,
    ];
    args.extend(BASE);
    let first = telltale(&args);
    assert_ne!(
        first.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    let json: Value =
        serde_json::from_str(&fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    assert_eq!(json["report_kind"], "outputs");
    assert_eq!(json["settings"]["selection"], "selection_rate");
    assert!(
        json["caution"]
            .as_str()
            .unwrap()
            .contains("not a legal determination")
    );
    let again = telltale(&args);
    assert_input_error(&again, &["report.json", "--force"]);
}

#[test]
fn demo_scored_file_shows_the_planted_branch_penalty() {
    // The demo's model subtracts 0.8 from the log-odds of repayment on the 12 branches that
    // 90% of Valic and 8% of Osmeric applicants use (src/data/demo.rs); repayment itself
    // does not depend on the branch. So the score separates the communities, branch_area
    // carries most of it, and within a score band Valic applicants repay more often.
    let dir = scratch("demo");
    let file = dir.join("scored.csv").display().to_string();
    let written = telltale(&["demo", "--write-scored", &file]);
    assert_eq!(written.status.code(), Some(0));
    let output = telltale(&[
        "outputs",
        &file,
        "--score",
        "approval_score",
        "--decision",
        "approved",
        "--protected",
        "community",
        "--outcome",
        "repaid",
        "--features",
        "branch_area,loan_amount,product",
        "--json",
        "-",
    ]);
    assert_eq!(
        output.status.code(),
        Some(1),
        "the gates fail on the planted penalty"
    );
    let json: Value = serde_json::from_slice(&output.stdout).unwrap();
    let result = &json["results"][0];
    // 20,000 rows: the DeLong SE of the score AUC is about 0.004; 0.70 is 15 SE below 0.78.
    assert!(result["score_auc"]["auc_low"].as_f64().unwrap() > 0.70);
    assert_eq!(result["higher_scoring"], "Osmeric");
    assert_eq!(result["carriers"][0]["feature"], "branch_area");
    // Per band about 200–1,800 rows per cell: the binomial sd of a cell's rate is at most
    // 3.5 points, of the mean over ten bands about 1.5; the planted gap is 5–10 points.
    let bands = result["calibration"].as_array().unwrap();
    let gaps: Vec<f64> = bands
        .iter()
        .filter_map(|band| {
            let rate = |g: usize| band["groups"][g]["outcome_rate"]["rate"].as_f64();
            Some(rate(1)? - rate(0)?)
        })
        .collect();
    assert!(gaps.len() >= 8, "{gaps:?}");
    let mean = gaps.iter().sum::<f64>() / gaps.len() as f64;
    assert!(
        mean > 0.03,
        "Valic repays more than Osmeric at the same score: {gaps:?}"
    );
}
