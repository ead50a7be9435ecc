//! Whole-command behaviour of the `telltale` binary: bad input, outputs,
//! exit status, and the end-to-end pipeline on open reference data.

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

/// A fresh scratch folder for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("telltale-test-{}-{name}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).expect("scratch dir");
    dir
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> String {
    let path = dir.join(name);
    fs::write(&path, bytes).expect("write fixture");
    path.display().to_string()
}

fn stderr(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).to_string()
}

/// Asserts exit status 2 and a single error line containing every `needle`.
fn assert_input_error(output: &Output, needles: &[&str]) {
    let text = stderr(output);
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

/// A small valid CSV: 40 rows, two groups, a leaking column and noise.
fn small_csv() -> String {
    let mut text = String::from("group,area,noise,blank,same\n");
    for i in 0..40 {
        let group = if i % 2 == 0 { "a" } else { "b" };
        let area = if i % 2 == 0 { "north" } else { "south" };
        text.push_str(&format!("{group},{area},{},,{}\n", (i * 7) % 11, 1));
    }
    text
}

const QUICK: [&str; 4] = ["--pairs", "none", "--no-whole-set", "--quiet"];

fn scan_json(file: &str, extra: &[&str]) -> (Output, Value) {
    let mut args = vec!["scan", file, "--json", "-"];
    args.extend_from_slice(extra);
    let output = telltale(&args);
    let json = serde_json::from_slice(&output.stdout).unwrap_or(Value::Null);
    (output, json)
}

#[test]
fn missing_file_is_a_one_line_error() {
    let out = telltale(&["scan", "no/such/file.csv", "--protected", "x"]);
    assert_input_error(&out, &["no/such/file.csv", "cannot read"]);
}

#[test]
fn empty_and_header_only_files() {
    let dir = scratch("empty");
    let empty = write(&dir, "empty.csv", b"");
    assert_input_error(
        &telltale(&["scan", &empty, "-p", "x"]),
        &["empty.csv", "empty"],
    );
    let header = write(&dir, "header.csv", b"x,y\n");
    assert_input_error(
        &telltale(&["scan", &header, "-p", "x"]),
        &["header.csv", "no data rows"],
    );
}

#[test]
fn unknown_column_suggests_the_closest_name() {
    let dir = scratch("unknown");
    let file = write(&dir, "d.csv", small_csv().as_bytes());
    let out = telltale(&["scan", &file, "-p", "gruop"]);
    assert_input_error(&out, &["d.csv", "`gruop` not found", "`group`"]);
}

#[test]
fn duplicated_column_names() {
    let dir = scratch("dup");
    let file = write(&dir, "d.csv", b"a,b,a\n1,2,3\n");
    assert_input_error(
        &telltale(&["scan", &file, "-p", "b"]),
        &["d.csv", "`a`", "more than once"],
    );
}

#[test]
fn non_utf8_bytes_name_the_line() {
    let dir = scratch("utf8");
    let file = write(&dir, "latin1.csv", b"g,city\na,Z\xfcrich\nb,Bern\n");
    assert_input_error(
        &telltale(&["scan", &file, "-p", "g"]),
        &["latin1.csv", "line 2", "UTF-8"],
    );
}

#[test]
fn ragged_row_names_the_line() {
    let dir = scratch("ragged");
    let file = write(&dir, "r.csv", b"g,x\na,1\nb,2,3\n");
    assert_input_error(
        &telltale(&["scan", &file, "-p", "g"]),
        &["r.csv", "line 3", "3 fields", "header has 2"],
    );
}

#[test]
fn protected_attribute_problems() {
    let dir = scratch("protected");
    let mut one_class = String::from("g,x\n");
    let mut many = String::from("g,x\n");
    let mut all_missing = String::from("g,x\n");
    for i in 0..60 {
        one_class.push_str(&format!("a,{i}\n"));
        many.push_str(&format!("c{i},{i}\n"));
        all_missing.push_str(&format!(",{i}\n"));
    }
    let f = write(&dir, "one.csv", one_class.as_bytes());
    assert_input_error(
        &telltale(&["scan", &f, "-p", "g"]),
        &["one.csv", "`g`", "single class"],
    );
    let f = write(&dir, "many.csv", many.as_bytes());
    assert_input_error(
        &telltale(&["scan", &f, "-p", "g"]),
        &["many.csv", "`g`", "60 classes", "limit of 50"],
    );
    let f = write(&dir, "missing.csv", all_missing.as_bytes());
    assert_input_error(
        &telltale(&["scan", &f, "-p", "g"]),
        &["missing.csv", "`g`", "missing on every row"],
    );
}

#[test]
fn missing_protected_rows_are_dropped_and_counted() {
    let dir = scratch("dropped");
    let mut text = small_csv();
    text.push_str(",north,3,,1\n,south,4,,1\n");
    let file = write(&dir, "d.csv", text.as_bytes());
    let (out, json) = scan_json(&file, &[&["-p", "group"][..], &QUICK].concat());
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&out)
    );
    assert_eq!(json["dataset"]["rows"], 42);
    assert_eq!(json["dataset"]["rows_used"], 40);
    assert_eq!(json["dataset"]["rows_dropped_missing_protected"], 2);
}

#[test]
fn constant_and_all_missing_features_are_skipped_and_listed() {
    let dir = scratch("skipped");
    let file = write(&dir, "d.csv", small_csv().as_bytes());
    let (out, json) = scan_json(&file, &[&["-p", "group"][..], &QUICK].concat());
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&out)
    );
    let skipped: Vec<(String, String)> = json["skipped_columns"]
        .as_array()
        .expect("skipped list")
        .iter()
        .map(|s| {
            (
                s["name"].as_str().unwrap().to_string(),
                s["reason"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    assert!(
        skipped
            .iter()
            .any(|(n, r)| n == "blank" && r.contains("missing")),
        "{skipped:?}"
    );
    assert!(
        skipped
            .iter()
            .any(|(n, r)| n == "same" && r.contains("constant")),
        "{skipped:?}"
    );
    let names: Vec<&str> = json["results"][0]["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, vec!["area", "noise"]);
}

#[test]
fn report_folder_is_never_overwritten_without_force() {
    let dir = scratch("overwrite");
    let file = write(&dir, "d.csv", small_csv().as_bytes());
    let out_dir = dir.join("out").display().to_string();
    let args = [
        &["scan", &file, "-p", "group", "--report", &out_dir][..],
        &QUICK,
    ]
    .concat();
    let first = telltale(&args);
    assert!(
        first.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&first)
    );
    let written = fs::read_to_string(dir.join("out/report.json")).expect("report.json");
    let second = telltale(&args);
    assert_input_error(&second, &["report.json", "--force"]);
    assert_eq!(
        fs::read_to_string(dir.join("out/report.json")).unwrap(),
        written
    );
    let forced = telltale(&[&args[..], &["--force"]].concat());
    assert!(
        forced.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&forced)
    );
}

/// The exit status and the report's policy outcome come from one gate: with a
/// policy that accepts the proxy and sets no whole-set limit, the whole set
/// still fails at the scan's default limit, in the report as in the status.
#[test]
fn exit_status_and_policy_outcome_agree() {
    let dir = scratch("one-gate");
    let mut data = String::from("group,area\n");
    for i in 0..400 {
        let (group, area) = if i % 2 == 0 {
            ("a", "north")
        } else {
            ("b", "south")
        };
        data.push_str(&format!("{group},{area}\n"));
    }
    let file = write(&dir, "d.csv", data.as_bytes());
    let policy = write(
        &dir,
        "policy.toml",
        b"[[accept]]\nfeature = \"area\"\nreason = \"branch staffing\"\nreviewer = \"T. Vell\"\nexpires = \"2999-12-31\"\n",
    );
    let (out, json) = scan_json(
        &file,
        &[
            "-p", "group", "--pairs", "none", "--quiet", "--policy", &policy,
        ],
    );
    let failing = json["policy"]["failing"]
        .as_array()
        .expect("policy outcome");
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    assert!(
        failing.len() == 1 && failing[0].as_str().unwrap().contains("whole set"),
        "{failing:?}"
    );
    assert!(stderr(&out).contains("group/whole set"), "{}", stderr(&out));
}

#[test]
fn a_perfect_proxy_fails_the_gate_with_status_one() {
    let dir = scratch("gate");
    let file = write(&dir, "d.csv", small_csv().as_bytes());
    let (out, json) = scan_json(&file, &[&["-p", "group"][..], &QUICK].concat());
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("group/area: proxy"),
        "{}",
        stderr(&out)
    );
    assert_eq!(json["results"][0]["features"][0]["flag"], "proxy");
    assert_eq!(json["schema_version"], 1);
    assert!(
        json["caution"]
            .as_str()
            .unwrap()
            .contains("not a legal determination")
    );
}

/// The JSON report of a quick demo-fixture scan with `extra` flags; the
/// demo's planted proxy makes the gate fail (status 1).
fn demo_scan(extra: &[&str]) -> Value {
    let base = ["-p", "community", "--pairs", "none", "--quiet"];
    let (out, json) = scan_json(&demo_fixture(), &[&base[..], extra].concat());
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    json
}

#[test]
fn no_ablation_keeps_the_whole_set_attack_and_says_what_was_skipped() {
    let json = demo_scan(&["--no-ablation"]);
    let whole = &json["results"][0]["whole_set"];
    // The demo generator's Bayes AUC is about 0.978 (README, the demo); the
    // attacker without joint pair columns still sits far above chance.
    assert!(whole["auc"].as_f64().unwrap() > 0.9, "{whole}");
    assert_eq!(whole["ablation"], false);
    assert_eq!(whole["drop_one"], serde_json::json!([]));
    assert_eq!(whole["removal_plan"], serde_json::json!([]));
    let notes = json["notes"].to_string();
    assert!(notes.contains("--no-ablation"), "{notes}");
}

#[test]
fn large_data_ablation_runs_on_a_stated_sample() {
    let json = demo_scan(&["--ablation-rows", "2000"]);
    let whole = &json["results"][0]["whole_set"];
    // Stratified sample: each class contributes round(2000 · share) rows.
    let rows = whole["ablation_rows"].as_u64().unwrap();
    assert!((1999..=2001).contains(&rows), "{rows}");
    assert!(!whole["drop_one"].as_array().unwrap().is_empty());
    assert!(!whole["removal_plan"].as_array().unwrap().is_empty());
    assert!(json["notes"].to_string().contains("--ablation-rows"));
    let file = demo_fixture();
    let too_small = telltale(&["scan", &file, "-p", "community", "--ablation-rows", "10"]);
    assert_input_error(&too_small, &["ablation rows", "at least"]);
}

#[test]
fn piped_output_has_no_progress_bars() {
    let dir = scratch("quiet");
    let file = write(&dir, "d.csv", small_csv().as_bytes());
    let out = telltale(&[
        "scan",
        &file,
        "-p",
        "group",
        "--pairs",
        "none",
        "--no-whole-set",
    ]);
    let text = stderr(&out);
    assert!(
        !text.contains('\r') && !text.contains('['),
        "progress leaked: {text}"
    );
}

#[test]
fn bom_quotes_and_unusual_names_are_read() {
    let dir = scratch("names");
    let mut text = String::from("\u{feff}\"home region\",Ärger,\"quoted, name\"\n");
    for i in 0..40 {
        let g = if i % 2 == 0 { "x" } else { "y" };
        text.push_str(&format!("\"{g}\",{},\"v, {}\"\n", i % 3, i % 5));
    }
    let file = write(&dir, "n.csv", text.as_bytes());
    let (out, json) = scan_json(&file, &[&["-p", "home region"][..], &QUICK].concat());
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&out)
    );
    let mut names: Vec<&str> = json["results"][0]["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["name"].as_str().unwrap())
        .collect();
    names.sort_unstable();
    assert_eq!(names, vec!["quoted, name", "Ärger"]);
}

fn fixture(name: &str) -> String {
    format!("{}/fixtures/reference/{name}", env!("CARGO_MANIFEST_DIR"))
}

fn reference(name: &str) -> Value {
    serde_json::from_str(&fs::read_to_string(fixture(name)).expect("reference json"))
        .expect("valid json")
}

/// End to end on open data: with `--bins 10` the scan's plug-in MI and AMI of
/// every HMDA feature equal scikit-learn's (1.9.1, `mutual_info_score`,
/// `adjusted_mutual_info_score(average_method="arithmetic")`) to 1e-9, under
/// the rule the report states for the column: pandas `qcut(x, 10)` bins for
/// numeric columns, one level per value (the reference's
/// `alt_discretization`) for integer-coded and boolean numeric columns.
/// Data: Munnell et al. (1996) via AER::HMDA; values in
/// fixtures/reference/reference-hmda-afam.json.
#[test]
fn hmda_scan_matches_reference_information_values() {
    let reference = reference("reference-hmda-afam.json");
    let (out, json) = scan_json(
        &fixture("hmda.csv"),
        &[
            &["-p", "afam", "--exclude", "deny", "--bins", "10"][..],
            &QUICK,
        ]
        .concat(),
    );
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&out)
    );
    assert_eq!(json["dataset"]["rows"], 2380);
    // sha256 from fixtures/reference/SOURCES.md.
    assert_eq!(
        json["dataset"]["sha256"],
        "f3fc4072a77b05bedf36168dec3edbf38ab4b19a8238c3d8f6064bbfeeab734b"
    );
    let result = &json["results"][0];
    assert_eq!(result["positive"], "yes");
    let ours = result["features"].as_array().expect("features");
    let refs = reference["features"]
        .as_array()
        .expect("reference features");
    assert_eq!(ours.len(), refs.len());
    for r in refs {
        let name = r["feature"].as_str().unwrap();
        let f = ours
            .iter()
            .find(|f| f["name"] == name)
            .unwrap_or_else(|| panic!("{name} missing"));
        let per_value = matches!(f["kind"].as_str(), Some("integer-coded" | "boolean"))
            && r["dtype"] == "numeric";
        let expected = if per_value {
            &r["alt_discretization"]
        } else {
            r
        };
        for (ours_key, ref_key) in [("mi_nats", "mi_nats"), ("ami", "ami_arithmetic")] {
            let (a, b) = (
                f[ours_key].as_f64().unwrap(),
                expected[ref_key].as_f64().unwrap(),
            );
            assert!((a - b).abs() < 1e-9, "{name} {ours_key}: {a} vs {b}");
        }
    }
    let aucs: Vec<f64> = ours
        .iter()
        .map(|f| f["auc"].as_f64().unwrap_or(0.0))
        .collect();
    assert!(
        aucs.windows(2).all(|w| w[0] >= w[1]),
        "features not ranked by AUC: {aucs:?}"
    );
}

/// A three-class protected attribute (CPS 1985 `ethnicity`, Berndt 1991 via
/// AER) is scanned as multi-class: macro one-vs-rest AUC with Hand & Till's M,
/// and the same information values as scikit-learn 1.9.1 (reference JSON).
#[test]
fn cps1985_ethnicity_is_scanned_as_multiclass() {
    let reference = reference("reference-cps1985-ethnicity.json");
    let (out, json) = scan_json(
        &fixture("cps1985.csv"),
        &[
            &["-p", "ethnicity", "--exclude", "wage", "--bins", "10"][..],
            &QUICK,
        ]
        .concat(),
    );
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&out)
    );
    let result = &json["results"][0];
    assert_eq!(result["kind"], "multiclass");
    let ours = result["features"].as_array().unwrap();
    for r in reference["features"].as_array().unwrap() {
        let name = r["feature"].as_str().unwrap();
        let f = ours.iter().find(|f| f["name"] == name).unwrap();
        assert!(
            f["hand_till"].as_f64().is_some(),
            "{name}: Hand & Till M missing"
        );
        let per_value = matches!(f["kind"].as_str(), Some("integer-coded" | "boolean"))
            && r["dtype"] == "numeric";
        let expected = if per_value {
            &r["alt_discretization"]
        } else {
            r
        };
        let (a, b) = (
            f["mi_nats"].as_f64().unwrap(),
            expected["mi_nats"].as_f64().unwrap(),
        );
        assert!((a - b).abs() < 1e-9, "{name}: {a} vs {b}");
    }
}

fn demo_fixture() -> String {
    format!(
        "{}/fixtures/demo/lanternfield-4000.csv",
        env!("CARGO_MANIFEST_DIR")
    )
}

const FAST: [&str; 3] = ["--pairs", "none", "--quiet"];

#[test]
fn explain_gives_a_paragraph_and_rejects_unknown_features() {
    let out = telltale(
        &[
            &[
                "explain",
                &demo_fixture(),
                "-p",
                "community",
                "--feature",
                "branch_area",
            ][..],
            &FAST,
        ]
        .concat(),
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("Knowing `branch_area` alone recovers `community` with AUC"),
        "{text}"
    );
    assert!(text.contains("not a legal determination"));
    let bad = telltale(&[
        "explain",
        &demo_fixture(),
        "-p",
        "community",
        "--feature",
        "branch_aera",
        "--quiet",
    ]);
    assert_input_error(&bad, &["lanternfield-4000.csv", "`branch_aera`"]);
}

#[test]
fn diff_flags_a_new_proxy_and_rejects_non_reports() {
    let dir = scratch("diff");
    let old = dir.join("old.json").display().to_string();
    let new = dir.join("new.json").display().to_string();
    let base = [
        "scan",
        &demo_fixture(),
        "-p",
        "community",
        "--pairs",
        "none",
        "--quiet",
    ];
    telltale(&[&base[..], &["--exclude", "branch_area", "--json", &old]].concat());
    telltale(&[&base[..], &["--json", &new]].concat());
    let out = telltale(&["diff", &old, &new]);
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    assert!(String::from_utf8_lossy(&out.stdout).contains("branch_area"));
    let same = telltale(&["diff", &new, &new]);
    assert_eq!(same.status.code(), Some(0), "{}", stderr(&same));
    let junk = write(&dir, "junk.json", b"{ not json");
    assert_input_error(&telltale(&["diff", &junk, &new]), &["junk.json"]);
}

/// Splits the demo fixture into a base file without `months_at_address` and a
/// new source keyed by `application_ref` (one key repeated, one unknown key).
fn split_demo(dir: &Path) -> (String, String) {
    let text = fs::read_to_string(demo_fixture()).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let key = header.iter().position(|h| *h == "application_ref").unwrap();
    let moved = header
        .iter()
        .position(|h| *h == "months_at_address")
        .unwrap();
    let keep = |fields: &[&str]| -> String {
        fields
            .iter()
            .enumerate()
            .filter(|(i, _)| *i != moved)
            .map(|(_, f)| *f)
            .collect::<Vec<_>>()
            .join(",")
    };
    let mut base = format!("{}\n", keep(&header));
    let mut source = String::from("application_ref,months_at_address\n");
    for (row, line) in lines.enumerate() {
        let fields: Vec<&str> = line.split(',').collect();
        base.push_str(&format!("{}\n", keep(&fields)));
        if row % 10 != 9 {
            source.push_str(&format!("{},{}\n", fields[key], fields[moved]));
        }
        if row == 0 {
            source.push_str(&format!("{},{}\n", fields[key], fields[moved]));
        }
    }
    source.push_str("LM-0000000,12\n");
    (
        write(dir, "base.csv", base.as_bytes()),
        write(dir, "new.csv", source.as_bytes()),
    )
}

#[test]
fn add_source_counts_keys_and_tests_what_the_new_columns_add() {
    let dir = scratch("add-source");
    let (base, source) = split_demo(&dir);
    let (out, json) = scan_json(
        &base,
        &[
            &[
                "-p",
                "community",
                "--add-source",
                &source,
                "--key",
                "application_ref",
            ][..],
            &FAST,
        ]
        .concat(),
    );
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{}",
        stderr(&out)
    );
    let added = &json["added_source"];
    assert_eq!(
        added["new_columns"],
        serde_json::json!(["months_at_address"])
    );
    assert_eq!(added["base_rows"], 4000);
    assert_eq!(added["matched_rows"], 3600);
    assert_eq!(added["unmatched_base_rows"], 400);
    assert_eq!(added["unmatched_source_rows"], 1);
    assert_eq!(added["duplicate_keys_in_source"], 1);
    let effect = &added["per_protected"][0];
    assert!(
        effect["auc_with"]["auc"].as_f64().unwrap()
            > effect["auc_without"]["auc"].as_f64().unwrap()
    );
    assert!(effect["p_value"].as_f64().is_some());
    let features = json["results"][0]["features"].as_array().unwrap();
    assert!(
        features.iter().all(|f| f["name"] != "application_ref"),
        "the key must not be a feature"
    );
    let missing_key = telltale(&[
        "scan",
        &base,
        "-p",
        "community",
        "--add-source",
        &source,
        "--key",
        "nope",
        "--quiet",
    ]);
    assert_input_error(&missing_key, &["`nope`"]);
}

#[test]
fn policy_acceptance_and_expiry_drive_the_exit_status() {
    let dir = scratch("policy");
    let accept = |expires: &str| {
        format!(
            "[[accept]]\nfeature = \"branch_area\"\nreason = \"Branch staffing model; reviewed\"\nreviewer = \"A. Quill\"\nexpires = \"{expires}\"\n"
        )
    };
    let data = demo_fixture();
    let args = |policy: &str| -> Vec<String> {
        [
            &[
                "scan",
                data.as_str(),
                "-p",
                "community",
                "--whole-set-auc",
                "1.0",
                "--policy",
                policy,
            ][..],
            &FAST,
        ]
        .concat()
        .into_iter()
        .map(String::from)
        .collect()
    };
    let run = |policy: &str| {
        let owned = args(policy);
        telltale(&owned.iter().map(String::as_str).collect::<Vec<_>>())
    };
    let valid = write(&dir, "valid.toml", accept("2999-12-31").as_bytes());
    let out = run(&valid);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let expired = write(&dir, "expired.toml", accept("2001-01-31").as_bytes());
    assert_eq!(run(&expired).status.code(), Some(1));
    let broken = write(
        &dir,
        "broken.toml",
        b"[thresholds]\nproxy_auc_low = 0.7\nsurprise = 1\n",
    );
    assert_input_error(&run(&broken), &["broken.toml", "line 3"]);
}

/// `demo` shares `scan`'s validation: no flag value may panic.
#[test]
fn demo_validates_its_flags_as_scan_does() {
    let dir = scratch("demo-flags");
    let report = dir.join("out").display().to_string();
    for (flag, value, needle) in [
        ("--folds", "0", "folds must be between 2 and 50"),
        ("--folds", "300", "folds must be between 2 and 50"),
        ("--bins", "1", "bins must be between 2 and 1024"),
        ("--proxy-auc", "1.5", "between 0.5 and 1"),
    ] {
        let out = telltale(&[
            "demo", "--rows", "200", "--quiet", "--report", &report, flag, value,
        ]);
        assert_input_error(&out, &[needle]);
    }
    assert!(
        !dir.join("out").exists(),
        "nothing written on a usage error"
    );
}

/// The outcome screen needs a binary outcome; anything else is one line naming the column.
#[test]
fn a_non_binary_outcome_is_an_input_error() {
    let dir = scratch("outcome-classes");
    let mut data = String::from("group,area,grade\n");
    for i in 0..60 {
        let group = if i % 2 == 0 { "a" } else { "b" };
        data.push_str(&format!(
            "{group},{},{}\n",
            i % 3,
            ["low", "mid", "high"][i % 3]
        ));
    }
    let file = write(&dir, "d.csv", data.as_bytes());
    let out = telltale(&[
        "scan",
        &file,
        "-p",
        "group",
        "--outcome",
        "grade",
        "--quiet",
    ]);
    assert_input_error(&out, &["d.csv", "`grade`", "exactly two values"]);
}
