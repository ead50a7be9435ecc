//! Review workflow end to end: comparing two reports, the gate, policy files
//! and their effect on a report. The reports are built here from illustrative
//! inputs (made-up names and numbers, not real data); the expected values come
//! from the normal distribution tables and the rules stated beside each check.

mod common;

use std::collections::BTreeMap;
use std::path::PathBuf;
use telltale::report::{
    DatasetInfo, FeatureResult, Flag, ProtectedResult, Report, SCHEMA_VERSION, Settings,
    Thresholds, ToolInfo, WholeSet,
};
use telltale::review::{
    Policy, PolicyError, ReviewError, compare, load_report, render_diff_markdown, render_diff_text,
};

const ALPHA: f64 = 0.05;
/// The documented default minimum effect size of `diff`.
const MIN_EFFECT: f64 = telltale::review::diff::DEFAULT_MIN_EFFECT;

fn feature(name: &str, auc: f64, se: f64, flag: Flag) -> FeatureResult {
    FeatureResult {
        name: name.to_string(),
        kind: "categorical".to_string(),
        levels: 4,
        missing_fraction: 0.0,
        mi_nats: 0.01,
        mi_mm_nats: 0.009,
        ami: 0.01,
        nmi: 0.01,
        heldout_info_nats: Some(0.008),
        auc: Some(auc),
        auc_low: Some(auc - 1.959_964 * se),
        auc_high: Some(auc + 1.959_964 * se),
        auc_se: Some(se),
        auc_delong_se: None,
        hand_till: None,
        ber: Some(0.45),
        surrogate: Some("frequency".to_string()),
        surrogates: BTreeMap::from([("frequency".to_string(), auc)]),
        flag,
        accepted: None,
        composition: None,
        roc: None,
        outcome: None,
    }
}

fn whole_set(auc: f64, se: f64) -> WholeSet {
    WholeSet {
        auc,
        auc_low: auc - 1.959_964 * se,
        auc_high: auc + 1.959_964 * se,
        auc_se: se,
        ber: 0.4,
        hand_till: None,
        surrogate: "boosted".to_string(),
        features_used: 3,
        roc: None,
        drop_one: Vec::new(),
        removal_plan: Vec::new(),
        target_reached: false,
        outcome: None,
        protected_auc_within_outcome: None,
        ablation: true,
        ablation_rows: None,
        joint_columns: Vec::new(),
        refits: 0,
        drop_one_rule: String::new(),
        drop_one_screened: Vec::new(),
        drop_one_screened_auc: None,
        plan_check: None,
        plan_withheld: None,
        redundancy_groups: Vec::new(),
        plan_rule: String::new(),
        frontier: Vec::new(),
        recommended_within_tolerance: None,
        outcome_refits: 0,
    }
}

fn protected(name: &str, features: Vec<FeatureResult>, whole: Option<WholeSet>) -> ProtectedResult {
    ProtectedResult {
        protected: name.to_string(),
        kind: "binary".to_string(),
        levels: Vec::new(),
        positive: Some("a".to_string()),
        entropy_nats: std::f64::consts::LN_2,
        headline: String::new(),
        detectable_auc: None,
        fitting_inflation: None,
        power_statement: String::new(),
        flags_withheld: None,
        features,
        pairs: Vec::new(),
        whole_set: whole,
    }
}

fn report(results: Vec<ProtectedResult>, sha256: &str) -> Report {
    Report {
        schema_version: SCHEMA_VERSION,
        tool: ToolInfo {
            name: "telltale".to_string(),
            version: "0.1.0".to_string(),
        },
        dataset: DatasetInfo {
            source: "applications.csv".to_string(),
            rows: 5000,
            rows_used: 5000,
            columns: 6,
            sha256: Some(sha256.to_string()),
            rows_dropped_missing_protected: 0,
            sample: None,
        },
        settings: Settings {
            folds: 5,
            seed: 0,
            bins: 32,
            min_cell: 10,
            thresholds: Thresholds::default(),
            pairs: "all".to_string(),
            target_auc: 0.6,
            command: "scan applications.csv --protected community".to_string(),
            min_class: 28,
            interval_method: String::new(),
            verdict_surrogate: String::new(),
            max_utility_loss: None,
        },
        results,
        skipped_columns: Vec::new(),
        reading: telltale::report::ReadingInfo::default(),
        added_source: None,
        policy: None,
        outcome: None,
        notes: Vec::new(),
        caution: telltale::CAUTION.to_string(),
    }
}

/// Old review: postcode is already a proxy, age clear, tenure under review.
fn old_report() -> Report {
    report(
        vec![
            protected(
                "community",
                vec![
                    feature("postcode", 0.80, 0.02, Flag::Proxy),
                    feature("age", 0.55, 0.02, Flag::Clear),
                    feature("tenure", 0.63, 0.02, Flag::Review),
                ],
                Some(whole_set(0.70, 0.03)),
            ),
            protected(
                "ethnicity",
                vec![feature("postcode", 0.7, 0.02, Flag::Review)],
                None,
            ),
        ],
        "aaaa",
    )
}

/// New review: age became a proxy, tenure dropped, branch_area added, sex added.
fn new_report() -> Report {
    report(
        vec![
            protected(
                "community",
                vec![
                    feature("postcode", 0.81, 0.02, Flag::Proxy),
                    feature("age", 0.78, 0.02, Flag::Proxy),
                    feature("branch_area", 0.62, 0.02, Flag::Review),
                ],
                Some(whole_set(0.72, 0.04)),
            ),
            protected(
                "sex",
                vec![feature("occupation", 0.58, 0.02, Flag::Clear)],
                None,
            ),
        ],
        "bbbb",
    )
}

#[test]
fn diff_lists_added_and_removed_features_attributes_and_flag_changes() {
    let diff = compare(&old_report(), &new_report(), ALPHA, MIN_EFFECT);
    assert_eq!(diff.protected_added, ["sex"]);
    assert_eq!(diff.protected_removed, ["ethnicity"]);
    let community = &diff.protected[0];
    assert_eq!(community.protected, "community");
    assert_eq!(community.features_added, ["branch_area"]);
    assert_eq!(community.features_removed, ["tenure"]);
    let changes: Vec<(&str, Option<Flag>, Option<Flag>)> = community
        .flag_changes
        .iter()
        .map(|c| (c.feature.as_str(), c.old, c.new))
        .collect();
    assert_eq!(
        changes,
        [
            ("age", Some(Flag::Clear), Some(Flag::Proxy)),
            ("branch_area", None, Some(Flag::Review)),
            ("tenure", Some(Flag::Review), None),
        ]
    );
    let names: Vec<&str> = diff
        .protected
        .iter()
        .map(|p| p.protected.as_str())
        .collect();
    assert_eq!(names, ["community", "sex", "ethnicity"]);
    assert_eq!(diff.protected[2].features_removed, ["postcode"]);
}

/// A report on one feature for protected attribute `sex`.
fn single_feature(feature: FeatureResult, sha256: &str) -> Report {
    report(vec![protected("sex", vec![feature], None)], sha256)
}

/// Two reports differing only in one feature's AUC, with SEs 0.03 and 0.04 so
/// that √(0.03² + 0.04²) = 0.05 exactly and z = change / 0.05.
fn auc_pair(z: f64) -> (Report, Report) {
    let old = single_feature(feature("x", 0.60, 0.03, Flag::Clear), "aaaa");
    let new = single_feature(feature("x", 0.60 + z * 0.05, 0.04, Flag::Clear), "bbbb");
    (old, new)
}

// Two-sided normal tail p = 2(1 − Φ(z)). Φ(1) = 0.841344746068543 (Abramowitz &
// Stegun 1964, Table 26.1), so p(1) = 0.317310507862914. The 0.975 and 0.995
// quantiles 1.959964 and 2.575829 give p = 0.05 and 0.01 (A&S Table 26.5,
// from memory; confirmed with Python's math.erfc). Tolerance 2e-7: z is given
// to 6 decimals, so p can be off by up to 0.5e-6 · 2φ(z) ≤ 6e-8, plus rounding.
#[test]
fn auc_change_z_and_p_match_the_normal_distribution() {
    for (z, p, significant) in [
        (1.0, 0.317_310_507_862_914, false),
        (1.959_964, 0.05, false),
        (2.575_829, 0.01, true),
        (-2.575_829, 0.01, true),
    ] {
        let (old, new) = auc_pair(z);
        let diff = compare(&old, &new, ALPHA, MIN_EFFECT);
        let change = &diff.protected[0].auc_changes[0];
        let got_z = change.z.expect("both SEs present");
        let got_p = change.p_value.expect("both SEs present");
        assert!((got_z - z).abs() < 1e-9, "z {got_z} vs {z}");
        assert!((got_p - p).abs() < 2e-7, "p {got_p} vs {p} at z = {z}");
        if (p - ALPHA).abs() > 1e-3 {
            assert_eq!(change.significant, significant, "z = {z}");
        }
    }
}

#[test]
fn missing_standard_error_gives_no_test() {
    let (old, mut new) = auc_pair(3.0);
    new.results[0].features[0].auc_se = None;
    let change = compare(&old, &new, ALPHA, MIN_EFFECT).protected[0].auc_changes[0].clone();
    assert!(change.change.is_some());
    assert_eq!(
        (change.z, change.p_value, change.significant),
        (None, None, false)
    );
}

// Gate rule: fail on a feature newly flagged proxy (absent or not proxy before)
// unless its acceptance is active, or on a significant rise of the whole-set AUC.
#[test]
fn gate_fails_on_a_new_proxy_and_not_on_an_old_one() {
    let diff = compare(&old_report(), &new_report(), ALPHA, MIN_EFFECT);
    assert!(diff.gate_failed());
    let reasons = diff.gate_reasons();
    assert_eq!(reasons.len(), 1, "{reasons:?}");
    assert!(reasons[0].contains("`age`"), "{reasons:?}");

    let mut still_proxy = new_report();
    still_proxy.results[0].features[1].flag = Flag::Review;
    assert!(!compare(&old_report(), &still_proxy, ALPHA, MIN_EFFECT).gate_failed());
}

#[test]
fn gate_fails_when_the_whole_set_auc_rises_significantly() {
    let mut old = old_report();
    let mut new = old_report();
    old.results[0].whole_set = Some(whole_set(0.70, 0.03));
    // z = 0.15 / 0.05 = 3 → p ≈ 0.0027 (A&S Table 26.1: Φ(3) = 0.998650102).
    new.results[0].whole_set = Some(whole_set(0.85, 0.04));
    let rise = compare(&old, &new, ALPHA, MIN_EFFECT);
    assert!(rise.protected[0].whole_set.as_ref().unwrap().significant);
    assert!(rise.gate_failed());
    let fall = compare(&new, &old, ALPHA, MIN_EFFECT);
    assert!(fall.protected[0].whole_set.as_ref().unwrap().significant);
    assert!(!fall.gate_failed(), "a significant fall is an improvement");
}

#[test]
fn differing_settings_raise_a_warning() {
    let old = old_report();
    let mut new = old_report();
    new.settings.folds = 10;
    let diff = compare(&old, &new, ALPHA, MIN_EFFECT);
    let folds = diff
        .context
        .iter()
        .find(|c| c.field == "settings.folds")
        .unwrap();
    assert!(folds.changed && folds.old == "5" && folds.new == "10");
    assert!(
        diff.warnings.iter().any(|w| w.contains("settings.folds")),
        "{:?}",
        diff.warnings
    );
}

#[test]
fn renderings_name_the_gate_and_the_changes() {
    let diff = compare(&old_report(), &new_report(), ALPHA, MIN_EFFECT);
    let plain = render_diff_text(&diff, false);
    assert!(plain.contains("Gate: FAILED."), "{plain}");
    let age_row: Vec<&str> = plain
        .lines()
        .find(|l| l.trim_start().starts_with("age "))
        .unwrap()
        .split_whitespace()
        .collect();
    assert_eq!(age_row, ["age", "clear", "proxy", "no"], "{plain}");
    assert!(!plain.contains('\x1b'));
    let coloured = render_diff_text(&diff, true);
    assert!(coloured.contains("\x1b[1;38;5;203mage"), "{coloured}");
    let markdown = render_diff_markdown(&diff);
    assert!(markdown.contains("**Gate: FAILED.**"));
    assert!(markdown.contains("| age | clear | proxy | no |"));
}

#[test]
fn diff_markdown_escapes_names_in_tables() {
    // GFM splits table rows at unescaped `|` (GitHub Flavored Markdown spec
    // 0.29, §4.10 "Tables"), so a name holding one must be escaped to keep
    // the row's column count.
    let old = single_feature(feature("a|b", 0.55, 0.01, Flag::Clear), "same");
    let new = single_feature(feature("a|b", 0.80, 0.01, Flag::Proxy), "same");
    let markdown = render_diff_markdown(&compare(&old, &new, ALPHA, MIN_EFFECT));
    let rows: Vec<&str> = markdown
        .lines()
        .filter(|l| l.starts_with("| a\\|b |"))
        .collect();
    assert_eq!(rows.len(), 2, "{markdown}");
    for row in rows {
        let cells = row.matches('|').count() - row.matches("\\|").count() - 1;
        let header = if row.contains("proxy") { 4 } else { 7 };
        assert_eq!(cells, header, "{row}");
    }
}

const POLICY: &str = r#"# review policy
[thresholds]
whole_set_auc_low = 0.70

[[accept]]
protected = "community"
feature = "age"
reason = "Needed for pricing; reviewed by model-risk"
reviewer = "R. Okafor"
expires = "2027-06-30"
"#;

fn policy(text: &str) -> Policy {
    Policy::from_toml_str(text, "policy.toml").expect("valid policy")
}

fn error_line(text: &str) -> (usize, String) {
    match Policy::from_toml_str(text, "policy.toml") {
        Err(error @ PolicyError::Invalid { line, .. }) => {
            let message = error.to_string();
            assert!(message.starts_with("policy.toml: line "), "{message}");
            assert!(!message.contains('\n'), "one line: {message}");
            (line, message)
        }
        other => panic!("expected a located error, got {other:?}"),
    }
}

#[test]
fn policy_errors_name_the_line() {
    let unknown = POLICY.replace("reviewer =", "reviewed_by =");
    let (line, message) = error_line(&unknown);
    assert_eq!(line, 9, "{message}");
    assert!(message.contains("reviewed_by"), "{message}");

    let bad_date = POLICY.replace("2027-06-30", "2027-02-30");
    let (line, message) = error_line(&bad_date);
    assert_eq!(line, 10, "{message}");
    assert!(message.contains("2027-02-30"), "{message}");

    let wrong_type = POLICY.replace("whole_set_auc_low = 0.70", "whole_set_auc_low = \"high\"");
    assert_eq!(error_line(&wrong_type).0, 3);

    let no_reason = POLICY.replace(
        "reason = \"Needed for pricing; reviewed by model-risk\"\n",
        "",
    );
    let (line, message) = error_line(&no_reason);
    assert_eq!(line, 5, "the [[accept]] header: {message}");
    assert!(message.contains("reason"), "{message}");
}

#[test]
fn bare_toml_dates_are_accepted_and_checked() {
    let bare = POLICY.replace("\"2027-06-30\"", "2027-06-30");
    assert_eq!(policy(&bare).accept[0].expires, "2027-06-30");
    let impossible = POLICY.replace("\"2027-06-30\"", "2027-02-30");
    assert_eq!(error_line(&impossible).0, 10);
}

#[test]
fn policy_accepts_the_example_layout() {
    let parsed = policy(POLICY);
    assert_eq!(parsed.thresholds.whole_set_auc_low, Some(0.70));
    assert_eq!(parsed.accept.len(), 1);
    assert_eq!(parsed.accept[0].protected.as_deref(), Some("community"));
    assert_eq!(parsed.accept[0].line, 5);
    assert_eq!(parsed.sha256.len(), 64);
}

// An acceptance holds through its `expires` day and lapses the day after.
#[test]
fn expiry_turns_acceptance_inactive_and_flips_the_gate() {
    let rules = policy(&POLICY.replace("whole_set_auc_low = 0.70", ""));
    let mut on_last_day = new_report();
    let outcome = rules.apply(&mut on_last_day, "2027-06-30");
    assert_eq!(outcome.accepted_features, ["community/age"]);
    assert!(
        outcome.failing.iter().all(|f| !f.contains("/age")),
        "{outcome:?}"
    );
    assert_eq!(on_last_day.policy.as_ref(), Some(&outcome));
    assert!(!compare(&old_report(), &on_last_day, ALPHA, MIN_EFFECT).gate_failed());

    let mut day_after = on_last_day.clone();
    let outcome = rules.apply(&mut day_after, "2027-07-01");
    assert_eq!(outcome.expired_acceptances, ["community/age"]);
    assert!(
        outcome
            .failing
            .iter()
            .any(|f| f.starts_with("community/age"))
    );
    let accepted = day_after.results[0].features[1].accepted.as_ref().unwrap();
    assert!(!accepted.active && accepted.reviewer == "R. Okafor");
    assert!(compare(&old_report(), &day_after, ALPHA, MIN_EFFECT).gate_failed());
}

#[test]
fn policy_fails_unaccepted_proxies_and_a_leaky_whole_set() {
    let mut scanned = new_report();
    let outcome = policy(POLICY).apply(&mut scanned, "2027-01-01");
    // postcode is a proxy with no acceptance; age is accepted. Whole-set lower
    // bound 0.72 − 1.959964·0.04 = 0.6416 < 0.70, so the whole set passes.
    assert_eq!(outcome.failing.len(), 1, "{:?}", outcome.failing);
    assert!(outcome.failing[0].starts_with("community/postcode"));

    let strict = POLICY.replace("0.70", "0.60");
    let outcome = policy(&strict).apply(&mut new_report(), "2027-01-01");
    assert!(
        outcome
            .failing
            .iter()
            .any(|f| f.starts_with("community/whole set"))
    );
}

// Flag rule (DESIGN §3, common practice): proxy when auc_low ≥ proxy_auc_low,
// review when auc_low ≥ review_auc_low, clear when auc_high < review_auc_low,
// otherwise unresolved; the number of levels (AMI) plays no part.
#[test]
fn threshold_override_changes_flags() {
    let mut scanned = new_report();
    // branch_area: auc 0.62, se 0.02 → auc_low = 0.62 − 0.0392 = 0.5808.
    let stricter = "[thresholds]\nproxy_auc_low = 0.55\n";
    policy(stricter).apply(&mut scanned, "2027-01-01");
    let community = &scanned.results[0];
    assert_eq!(community.features[2].flag, Flag::Proxy);
    assert_eq!(scanned.settings.thresholds.proxy_auc_low, 0.55);
    assert_eq!(scanned.settings.thresholds.review_auc_low, 0.60, "kept");

    let mut scanned = new_report();
    // occupation: interval 0.58 ± 0.0392 = (0.5408, 0.6192) straddles 0.60:
    // unresolved by default, review once the review line drops to 0.54.
    policy("[thresholds]\nreview_auc_low = 0.60\n").apply(&mut scanned, "2027-01-01");
    assert_eq!(scanned.results[1].features[0].flag, Flag::Unresolved);
    policy("[thresholds]\nreview_auc_low = 0.54\n").apply(&mut scanned, "2027-01-01");
    assert_eq!(scanned.results[1].features[0].flag, Flag::Review);
}

#[test]
fn acceptance_of_an_unknown_feature_is_noted() {
    let text = POLICY.replace("feature = \"age\"", "feature = \"shoe_size\"");
    let mut scanned = new_report();
    policy(&text).apply(&mut scanned, "2027-01-01");
    let warning = scanned
        .notes
        .iter()
        .find(|n| n.contains("shoe_size"))
        .unwrap();
    assert!(warning.contains("policy.toml line 5"), "{warning}");
}

fn temp_file(name: &str, contents: &str) -> PathBuf {
    PathBuf::from(common::write(
        &common::scratch(&format!("review-{name}")),
        name,
        contents.as_bytes(),
    ))
}

#[test]
fn report_round_trips_through_json() {
    let mut original = new_report();
    policy(POLICY).apply(&mut original, "2027-01-01");
    let path = temp_file(
        "round-trip.json",
        &serde_json::to_string_pretty(&original).unwrap(),
    );
    let loaded = load_report(&path).unwrap();
    std::fs::remove_file(&path).unwrap();
    assert_eq!(loaded, original);
}

#[test]
fn load_report_names_the_problem() {
    let missing = std::env::temp_dir().join("telltale-review-does-not-exist.json");
    assert!(matches!(
        load_report(&missing),
        Err(ReviewError::Unreadable { .. })
    ));

    let cases: [(&str, String); 5] = [
        (
            "broken.json",
            "{\n  \"schema_version\": 1,\n  oops\n}".to_string(),
        ),
        ("future.json", "{\"schema_version\": 2}".to_string()),
        (
            "partial.json",
            serde_json::to_string(&new_report())
                .unwrap()
                .replace("\"caution\"", "\"cautions\""),
        ),
        ("array.json", "[1, 2]".to_string()),
        (
            "outputs.json",
            "{\"schema_version\": 1, \"report_kind\": \"outputs\"}".to_string(),
        ),
    ];
    let errors: Vec<ReviewError> = cases
        .iter()
        .map(|(name, text)| {
            let path = temp_file(name, text);
            let error = load_report(&path).unwrap_err();
            std::fs::remove_file(&path).unwrap();
            error
        })
        .collect();
    assert!(
        matches!(errors[0], ReviewError::NotJson { line: 3, .. }),
        "{}",
        errors[0]
    );
    assert!(
        errors[1].to_string().contains("schema_version 2"),
        "{}",
        errors[1]
    );
    assert!(
        matches!(&errors[2], ReviewError::MissingField { field, .. } if field == "caution"),
        "{}",
        errors[2]
    );
    assert!(
        errors[3].to_string().contains("JSON object"),
        "{}",
        errors[3]
    );
    assert!(
        errors[4].to_string().contains("`outputs` report"),
        "{}",
        errors[4]
    );
    assert!(errors.iter().all(|e| e.to_string().contains(".json:")));
}
