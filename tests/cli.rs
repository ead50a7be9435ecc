//! Whole-command behaviour of the `telltale` binary: bad input, outputs,
//! exit status, and the end-to-end pipeline on open reference data.

mod common;

use common::{scratch, stderr, stdout, telltale, write};
use serde_json::Value;
use std::fs;
use std::path::Path;
use std::process::Output;

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
    // A folder holding only one of the three files is refused before the
    // scan: nothing printed, nothing written.
    let partial = dir.join("partial");
    fs::create_dir_all(&partial).unwrap();
    fs::write(partial.join("report.md"), "notes").unwrap();
    let partial = partial.display().to_string();
    let refused = telltale(&[&args[..4], &["--report", &partial], &QUICK[..]].concat());
    assert_input_error(&refused, &["report.md", "--force"]);
    assert!(stdout(&refused).is_empty(), "{}", stdout(&refused));
    let missing = dir.join("no-such-folder/x.json").display().to_string();
    let refused = telltale(&[&args[..4], &["--json", &missing], &QUICK[..]].concat());
    assert_input_error(&refused, &["x.json", "does not exist"]);
    assert!(stdout(&refused).is_empty(), "{}", stdout(&refused));
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
    // Each class has 20 rows, below the default minimum class size (28),
    // which would withhold every flag; the minimum is lowered to the data.
    let args = [&["-p", "group", "--min-class", "20"][..], &QUICK].concat();
    let (out, json) = scan_json(&file, &args);
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
fn max_utility_loss_outside_its_range_is_an_input_error() {
    // An outcome AUC loss lies between 0 (keep every bit of utility) and 0.5
    // (from a perfect model to chance); anything else is a usage error.
    let file = demo_fixture();
    for value in ["-0.01", "0.6", "NaN"] {
        let flag = format!("--max-utility-loss={value}");
        let out = telltale(&["scan", &file, "-p", "community", &flag]);
        assert_input_error(&out, &["max utility loss", "between 0 and 0.5"]);
    }
    let out = telltale(&["demo", "--rows", "2000", "--max-utility-loss", "1"]);
    assert_input_error(&out, &["max utility loss"]);
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
        "--min-class",
        "20",
        "--pairs",
        "none",
        "--no-whole-set",
    ]);
    // The scan must have run to its end (the perfect proxy `area` fails the
    // gate with status 1) for the absence of progress output to mean anything.
    let text = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{text}");
    assert!(stdout(&out).contains("Features ranked by AUC"));
    assert!(
        !text.contains('\r') && !text.contains('[') && !text.contains('\x1b'),
        "progress leaked: {text}"
    );
}

/// 400 rows in groups `a` and `b`; `area` follows the group except for 5% of
/// rows, and its level `islet` holds only the first four rows.
fn rare_level_csv() -> String {
    let mut text = String::from("group,area,noise\n");
    for i in 0..400 {
        let group = if i % 2 == 0 { "a" } else { "b" };
        let area = if i < 4 {
            "islet"
        } else if (i % 2 == 0) != (i % 20 == 3) {
            "north"
        } else {
            "south"
        };
        text.push_str(&format!("{group},{area},{}\n", (i * 7) % 11));
    }
    text
}

/// Asserts that `line` shows no number but the suppression placeholder
/// `<min_cell` (as plain text, Markdown or HTML).
fn assert_only_placeholders(line: &str, min_cell: u64, what: &str) {
    let mut rest = line.to_string();
    for placeholder in [
        format!("&lt;{min_cell}"),
        format!("\\<{min_cell}"),
        format!("<{min_cell}"),
    ] {
        rest = rest.replace(&placeholder, "");
    }
    assert!(
        !rest.chars().any(|c| c.is_ascii_digit()),
        "{what}: a count of a rare level shows: {line}"
    );
}

/// Small-cell suppression end to end: the minimum cell (10, the default;
/// common practice for aggregate releases) is applied to a level that is
/// rare in the data, and no output format shows its count or shares.
#[test]
fn rare_levels_are_suppressed_in_every_format() {
    const POOLED: &str = "(1 level with fewer than 10 rows each, pooled)";
    let min_cell = 10;
    let data = rare_level_csv();
    let rare_rows = data.lines().filter(|l| l.contains(",islet,")).count();
    assert!(rare_rows > 0 && rare_rows < min_cell, "{rare_rows}");
    let dir = scratch("rare");
    let file = write(&dir, "d.csv", data.as_bytes());
    let folder = dir.join("report").display().to_string();
    let scan = ["scan", &file, "-p", "group", "--pairs", "none", "--quiet"];
    let out = telltale(&[&scan[..], &["--report", &folder]].concat());
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));

    let json: Value =
        serde_json::from_str(&fs::read_to_string(dir.join("report/report.json")).unwrap()).unwrap();
    let area = json["results"][0]["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["name"] == "area")
        .unwrap();
    assert_eq!(area["flag"], "proxy", "{area}");
    let levels = area["composition"].as_array().unwrap();
    // The rare level is never named: its rows pool into one suppressed row.
    assert!(!json.to_string().contains("islet"));
    let pooled = |label: &str| label.contains("level with fewer than 10 rows each");
    let islet = levels
        .iter()
        .find(|l| pooled(l["label"].as_str().unwrap()))
        .unwrap();
    assert_eq!(islet["count"], Value::Null, "{islet}");
    assert!(
        islet["shares"]
            .as_array()
            .unwrap()
            .iter()
            .all(Value::is_null)
    );
    let north_rows = data.lines().filter(|l| l.contains(",north,")).count();
    let north = levels.iter().find(|l| l["label"] == "north").unwrap();
    assert_eq!(north["count"].as_u64(), Some(north_rows as u64), "{north}");

    let explain = telltale(&[
        "explain",
        &file,
        "-p",
        "group",
        "--feature",
        "area",
        "--pairs",
        "none",
        "--quiet",
    ]);
    assert_eq!(explain.status.code(), Some(0), "{}", stderr(&explain));
    let rendered = [
        (
            "report.md",
            fs::read_to_string(dir.join("report/report.md")).unwrap(),
        ),
        (
            "report.html",
            fs::read_to_string(dir.join("report/report.html")).unwrap(),
        ),
        ("explain", stdout(&explain)),
    ];
    for (what, text) in &rendered {
        // Table rows: HTML `<tr>` elements, otherwise lines.
        let rows: Vec<&str> = if text.contains("<tr>") {
            text.split("<tr>")
                .filter_map(|r| r.split("</tr>").next())
                .collect()
        } else {
            text.lines().collect()
        };
        assert!(!text.contains("islet"), "{what} names the rare level");
        let rare: Vec<&&str> = rows.iter().filter(|r| pooled(r)).collect();
        assert!(!rare.is_empty(), "{what} lists no pooled rare levels");
        for row in rare {
            assert_only_placeholders(&row.replace(POOLED, ""), min_cell as u64, what);
        }
    }
    let summary = stdout(&telltale(&scan));
    assert!(!summary.contains("islet"));
    for line in summary.lines().filter(|l| pooled(l)) {
        assert_only_placeholders(
            &line.replace(POOLED, ""),
            min_cell as u64,
            "terminal summary",
        );
    }
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

fn reference(name: &str) -> Value {
    let path = common::fixture(&format!("reference/{name}"));
    serde_json::from_str(&fs::read_to_string(path).expect("reference json")).expect("valid json")
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
        &common::fixture("reference/hmda.csv"),
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
    // The reference gives one level per value only to numeric columns with at
    // most 10 distinct values and bins the rest; `education`, `experience`
    // and `age` (17, 52 and 47 whole numbers: one level per value in our
    // reading at 534 rows) are binned with --numeric so that both sides
    // discretise them alike.
    let (out, json) = scan_json(
        &common::fixture("reference/cps1985.csv"),
        &[
            &[
                "-p",
                "ethnicity",
                "--exclude",
                "wage",
                "--bins",
                "10",
                "--numeric",
                "education",
                "--numeric",
                "experience",
                "--numeric",
                "age",
            ][..],
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
    common::fixture("demo/lanternfield-4000.csv")
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
    // The paragraph is wrapped for the terminal: compare with single spaces.
    let text = stdout(&out)
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ");
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
    assert!(stdout(&out).contains("branch_area"));
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
        &[&[
            "-p",
            "community",
            "--add-source",
            &source,
            "--key",
            "application_ref",
            "--quiet",
        ][..]]
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
    // "AUC with" is the same fit as the report's whole set (joint columns included).
    assert_eq!(
        effect["auc_with"]["auc"],
        json["results"][0]["whole_set"]["auc"]
    );
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
fn conflicting_roles_blank_names_and_crossed_lines_are_usage_errors() {
    let dir = scratch("conflicts");
    let mut text = String::from("group,area,size\n");
    for i in 0..40 {
        text.push_str(&format!("{},{},{}\n", ["a", "b"][i % 2], i % 3, i));
    }
    let file = write(&dir, "d.csv", text.as_bytes());
    let scan =
        |extra: &[&str]| telltale(&[&["scan", file.as_str(), "--quiet"][..], extra].concat());
    assert_input_error(
        &scan(&["-p", "group", "-p", "group"]),
        &["`group`", "twice"],
    );
    assert_input_error(
        &scan(&["-p", "group", "--outcome", "group"]),
        &["`group`", "outcome"],
    );
    assert_input_error(
        &scan(&["-p", "group", "--review-auc", "0.8", "--proxy-auc", "0.7"]),
        &["--review-auc", "--proxy-auc"],
    );
    assert_input_error(
        &scan(&["-p", "group", "--sample", "0"]),
        &["--sample must be at least 100"],
    );
    let blank = write(&dir, "blank.csv", b"group,area,\na,1,2\nb,2,3\n");
    let out = telltale(&["scan", &blank, "-p", "group", "--quiet"]);
    assert_input_error(&out, &["blank.csv", "line 1", "column 3 has no name"]);
}

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
    for (rows, noise, needle) in [
        ("5", "0", "at least 100"),
        ("100000000", "0", "cells"),
        ("50000", "100000", "cells"),
    ] {
        let out = telltale(&[
            "demo",
            "--rows",
            rows,
            "--extra-noise",
            noise,
            "--quiet",
            "--report",
            &report,
        ]);
        assert_input_error(&out, &["--rows", needle]);
    }
    assert!(
        !dir.join("out").exists(),
        "nothing written on a usage error"
    );
}

// `telltale outputs`: bad input, suppression, thin segments, exit status, files.

/// 60 rows: group a (40 rows) and b (20 rows); a is selected 3 times in 4,
/// b once in 4; score = selection plus a small spread; outcome on alternate rows.
fn scored_csv(mut edit: impl FnMut(usize, &mut Vec<String>)) -> Vec<u8> {
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
    text.into_bytes()
}

const OUTPUTS_BASE: [&str; 6] = [
    "--score",
    "score",
    "--protected",
    "group",
    "--outcome",
    "outcome",
];

fn run_outputs_json(path: &str, extra: &[&str]) -> (Output, Value) {
    let mut args = vec!["outputs", path];
    args.extend(OUTPUTS_BASE);
    args.extend(extra);
    args.extend(["--json", "-"]);
    let output = telltale(&args);
    let json = serde_json::from_slice(&output.stdout).unwrap_or(Value::Null);
    (output, json)
}

#[test]
fn score_that_is_not_numeric_is_an_input_error() {
    let dir = scratch("outputs-text-score");
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i == 7 {
                f[1] = "high".into();
            }
        }),
    );
    let (output, _) = run_outputs_json(&path, &["--decision", "decision"]);
    assert_input_error(&output, &["scored.csv", "`score`", "numeric", "`high`"]);
}

#[test]
fn decision_that_is_not_zero_or_one_is_an_input_error() {
    let dir = scratch("outputs-decision");
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i == 3 {
                f[2] = "maybe".into();
            }
        }),
    );
    let (output, _) = run_outputs_json(&path, &["--decision", "decision"]);
    assert_input_error(&output, &["scored.csv", "`decision`", "0 or 1", "`maybe`"]);
    let path = write(
        &dir,
        "outcome.csv",
        &scored_csv(|i, f| {
            if i == 5 {
                f[3] = "2".into();
            }
        }),
    );
    let (output, _) = run_outputs_json(&path, &["--decision", "decision"]);
    assert_input_error(&output, &["outcome.csv", "`outcome`", "0 or 1"]);
}

#[test]
fn threshold_outside_the_score_range_is_an_input_error() {
    let dir = scratch("outputs-threshold");
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    let (output, _) = run_outputs_json(&path, &["--threshold", "1.5"]);
    assert_input_error(
        &output,
        &["scored.csv", "`score`", "outside the score range"],
    );
    let (output, _) = run_outputs_json(&path, &["--selection-rate", "1.2"]);
    assert_input_error(&output, &["--selection-rate"]);
    let mut args = vec!["outputs", path.as_str()];
    args.extend(OUTPUTS_BASE);
    let output = telltale(&args);
    assert_eq!(output.status.code(), Some(2), "no way to decide selection");
}

#[test]
fn a_group_without_positive_outcomes_has_no_tpr_and_says_why() {
    let dir = scratch("outputs-no-positives");
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
    let (output, json) = run_outputs_json(&path, &["--decision", "decision"]);
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
    let dir = scratch("outputs-exit");
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    // a: 30 of 40 selected, b: 5 of 20: ratio 1/3, below four-fifths.
    let (output, json) = run_outputs_json(&path, &["--decision", "decision"]);
    assert_eq!(output.status.code(), Some(1));
    let impact = &json["results"][0]["adverse_impact_ratio"];
    assert!((impact["ratio"].as_f64().unwrap() - 1.0 / 3.0).abs() < 1e-15);
    assert_eq!(impact["four_fifths"]["below"], true);
    // With min_cell 25, group b (20 rows) is suppressed everywhere: no ratio, no count.
    let (output, json) = run_outputs_json(&path, &["--decision", "decision", "--min-cell", "25"]);
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
    let dir = scratch("outputs-missing");
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| {
            if i % 10 == 1 {
                f[1] = String::new();
            }
        }),
    );
    let (_, json) = run_outputs_json(&path, &["--decision", "decision"]);
    assert_eq!(json["dataset"]["rows"], 60);
    assert_eq!(json["dataset"]["rows_used"], 54);
    let notes = json["notes"].to_string();
    assert!(
        notes.contains("6 rows dropped: score `score` missing"),
        "{notes}"
    );
}

#[test]
fn outputs_reads_missing_values_as_scan_does() {
    let dir = scratch("outputs-na-values");
    // Every tenth score is `NA` (a default missing token) or `-99` (a sentinel).
    let path = write(
        &dir,
        "scored.csv",
        &scored_csv(|i, f| match i % 10 {
            1 => f[1] = "NA".into(),
            2 => f[1] = "-99".into(),
            _ => {}
        }),
    );
    let (_, json) = run_outputs_json(&path, &["--decision", "decision"]);
    assert_eq!(json["dataset"]["rows_used"], 54, "NA is missing by default");
    let (_, json) = run_outputs_json(&path, &["--decision", "decision", "--na-values", "NA,-99"]);
    assert_eq!(json["dataset"]["rows_used"], 48);
    assert!(
        json["notes"]
            .to_string()
            .contains("12 rows dropped: score `score` missing")
    );
    let (output, _) = run_outputs_json(&path, &["--decision", "decision", "--no-na-values"]);
    assert_input_error(&output, &["scored.csv", "score", "`NA`"]);
}

#[test]
fn thin_segment_states_how_high_a_zero_rate_may_be() {
    let dir = scratch("outputs-thin");
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
    let (_, json) = run_outputs_json(&path, &["--decision", "decision", "--segment", "branch"]);
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

/// The 60-row scored file in a fresh folder `name`, and the arguments of an
/// `outputs` run with `selection` that writes its report into `name/out`.
fn outputs_report_args(name: &str, selection: &[&str]) -> (std::path::PathBuf, Vec<String>) {
    let dir = scratch(name);
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    let out = dir.join("out");
    let mut args = vec!["outputs".to_string(), path];
    args.extend(selection.iter().map(|a| (*a).to_string()));
    args.extend(["--report".to_string(), out.display().to_string()]);
    args.extend(OUTPUTS_BASE.iter().map(|a| (*a).to_string()));
    (out, args)
}

#[test]
fn report_folder_is_written_once_and_kept() {
    let (out, args) = outputs_report_args("outputs-folder", &["--selection-rate", "0.5"]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
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
    for document in ["report.md", "report.html"] {
        let text = fs::read_to_string(out.join(document)).unwrap();
        assert!(
            text.contains("Selection and error rates by group"),
            "{document}"
        );
    }
    let again = telltale(&args);
    assert_input_error(&again, &["report.json", "--force"]);
}

#[test]
fn outputs_reports_in_every_format_carry_the_caution_and_withhold_small_groups() {
    let (out, args) = outputs_report_args(
        "outputs-formats",
        &["--decision", "decision", "--min-cell", "25"],
    );
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let output = telltale(&args);
    assert_eq!(output.status.code(), Some(0));
    let terminal = String::from_utf8_lossy(&output.stdout).to_string();
    let markdown = fs::read_to_string(out.join("report.md")).unwrap();
    let html = fs::read_to_string(out.join("report.html")).unwrap();
    // Group b has 20 rows, under --min-cell 25: its count, its 5 selected and
    // its 25.0% selection rate appear in no rendering.
    for text in [&terminal, &markdown, &html] {
        assert!(text.contains("not a legal determination"), "{text}");
        assert!(text.contains("<25") || text.contains("&lt;25"), "{text}");
        assert!(!text.contains("25.0%"), "b's selection rate leaks: {text}");
    }
    assert!(markdown.contains(r"| b | \<25 | \<25 |"), "{markdown}");
    assert!(!html.contains(r#"<td class="num">20</td>"#));
    // Rates with interval bars and the four-fifths line; score distribution
    // and calibration as lines by group.
    assert_eq!(html.matches("chart-rates").count(), 1);
    assert_eq!(html.matches("chart-lines").count(), 2);
    assert!(html.contains("four-fifths of the highest rate: 60.0% (common practice)"));
    // The gate section states the exit status the run returned.
    assert!(terminal.contains("passes (exit 0)"), "{terminal}");
}

#[test]
fn outputs_policy_thresholds_decide_the_exit_status_and_the_report_agrees() {
    let dir = scratch("outputs-policy");
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    // Ratio 1/3: below four-fifths, not below 0.3. TPR: a 100%, b 0% (every
    // odd row of b is unselected), so a gap limit of 0.1 is exceeded.
    let lenient = write(&dir, "lenient.toml", b"[outputs]\nimpact_ratio_min = 0.3\n");
    let strict = write(
        &dir,
        "strict.toml",
        b"[outputs]\nimpact_ratio_min = 0.3\nodds_gap_low = 0.1\n",
    );
    let (output, json) = run_outputs_json(&path, &["--decision", "decision", "--policy", &lenient]);
    assert_eq!(output.status.code(), Some(0));
    assert_eq!(json["failing"], Value::Array(vec![]));
    assert_eq!(json["policy"]["file"], "lenient.toml");
    assert_eq!(json["settings"]["thresholds"]["impact_ratio"], 0.3);
    let (output, json) = run_outputs_json(&path, &["--decision", "decision", "--policy", &strict]);
    assert_eq!(output.status.code(), Some(1));
    let failing: Vec<&str> = json["failing"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f.as_str().unwrap())
        .collect();
    assert_eq!(failing.len(), 1, "{failing:?}");
    assert!(failing[0].contains("TPR gap lower bound"), "{failing:?}");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains(failing[0]), "{stderr}");
    let bad = write(&dir, "bad.toml", b"[outputs]\nimpact_ratio_min = 4\n");
    let (output, _) = run_outputs_json(&path, &["--decision", "decision", "--policy", &bad]);
    assert_input_error(&output, &["bad.toml", "line 2", "impact_ratio_min"]);
}

#[test]
fn a_ratio_below_four_fifths_on_small_numbers_fails_only_when_significant() {
    // Groups a (488 rows, 235 selected) and b (12 rows, 8 selected): ratio
    // 0.482/0.667 = 0.72, below four-fifths, but Fisher's exact two-sided
    // p = 0.2498 (scipy.stats.fisher_exact([[235, 253], [8, 4]]), scipy
    // 1.17.1; the test only needs p > 0.05): not
    // significant at 0.05, so the default gate passes and says why
    // (29 CFR 1607.4(D), small numbers); --impact-alpha 1 gates on the ratio
    // alone, as does a policy's impact_alpha = 1.
    let dir = scratch("outputs-small-numbers");
    let mut text = String::from("group,score,decision,outcome\n");
    for i in 0..500 {
        let (group, selected) = if i < 488 {
            ("a", i < 235)
        } else {
            ("b", i < 488 + 8)
        };
        let score = if selected { 0.8 } else { 0.2 };
        let outcome = i % 2;
        text.push_str(&format!(
            "{group},{score},{},{outcome}\n",
            u8::from(selected)
        ));
    }
    let path = write(&dir, "scored.csv", text.as_bytes());
    let (output, json) = run_outputs_json(&path, &["--decision", "decision"]);
    assert_eq!(output.status.code(), Some(0), "{}", stderr(&output));
    let impact = &json["results"][0]["adverse_impact_ratio"];
    assert_eq!(impact["four_fifths"]["below"], true);
    let p = impact["fisher_exact_p"].as_f64().unwrap();
    assert!(p > 0.05, "p = {p}");
    assert_eq!(json["settings"]["thresholds"]["impact_alpha"], 0.05);
    let (output, json) =
        run_outputs_json(&path, &["--decision", "decision", "--impact-alpha", "1"]);
    assert_eq!(output.status.code(), Some(1));
    assert!(
        json["failing"][0]
            .as_str()
            .unwrap()
            .contains("adverse impact ratio")
    );
    let ratio_alone = write(&dir, "ratio-alone.toml", b"[outputs]\nimpact_alpha = 1\n");
    let (output, _) =
        run_outputs_json(&path, &["--decision", "decision", "--policy", &ratio_alone]);
    assert_eq!(output.status.code(), Some(1));
    let (output, _) = run_outputs_json(&path, &["--decision", "decision", "--impact-alpha", "0"]);
    assert_input_error(&output, &["--impact-alpha"]);
}

#[test]
fn a_negative_threshold_is_read_as_a_number() {
    // Log-odds scores have negative thresholds; `--threshold -0.5` must reach
    // the range check (scores here lie in [0, 0.8]) rather than fail as an
    // unknown flag.
    let dir = scratch("outputs-negative-threshold");
    let path = write(&dir, "scored.csv", &scored_csv(|_, _| {}));
    let (output, _) = run_outputs_json(&path, &["--threshold", "-0.5"]);
    assert_input_error(&output, &["threshold -0.5 is outside the score range"]);
}

#[test]
fn a_suppressed_group_leaves_the_score_auc_unchanged() {
    // Groups a and b (200 rows each, b scoring higher) and 6 rows of a group
    // shown only as `<10`: the score AUC must be the one without those rows,
    // as the impact ratio leaves them out, and the report notes it.
    let dir = scratch("outputs-suppressed-group");
    let rows = |with_tiny: bool| -> Vec<u8> {
        let mut text = String::from("group,score,decision,outcome\n");
        for i in 0..400 {
            let group = if i % 2 == 0 { "a" } else { "b" };
            let score = (i % 17) as f64 / 17.0 + if group == "b" { 0.3 } else { 0.0 };
            text.push_str(&format!(
                "{group},{score},{},{}\n",
                u8::from(score > 0.6),
                i % 3 % 2
            ));
        }
        if with_tiny {
            for i in 0..6 {
                text.push_str(&format!("tiny,{},1,{}\n", 0.1 * f64::from(i), i % 2));
            }
        }
        text.into_bytes()
    };
    let with = write(&dir, "with.csv", &rows(true));
    let without = write(&dir, "without.csv", &rows(false));
    let (_, with) = run_outputs_json(&with, &["--decision", "decision"]);
    let (_, without) = run_outputs_json(&without, &["--decision", "decision"]);
    let auc = |json: &Value| json["results"][0]["score_auc"].clone();
    assert!(auc(&without)["auc"].as_f64().unwrap() > 0.6);
    assert_eq!(auc(&with), auc(&without));
    assert_eq!(
        with["results"][0]["score_auc_by_outcome"],
        without["results"][0]["score_auc_by_outcome"]
    );
    let notes = with["notes"].to_string();
    assert!(notes.contains("leave out the 1 class"), "{notes}");
}

#[test]
fn demo_scored_file_shows_the_planted_branch_penalty() {
    // The demo's model subtracts 0.8 from the log-odds of repayment on the 12 branches that
    // 90% of Valic and 8% of Osmeric applicants use (src/data/demo.rs); repayment itself
    // does not depend on the branch. So the score separates the communities, branch_area
    // carries most of it, and within a score band Valic applicants repay more often.
    let dir = scratch("outputs-demo");
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
