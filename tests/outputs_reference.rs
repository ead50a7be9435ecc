//! `telltale outputs` on a scored file derived from open data, checked against
//! reference values computed by `fixtures/outputs/make_scored.py` with
//! scikit-learn 1.9.1 (`roc_auc_score`), pandas 3.1.1 (group rates, means,
//! `var(ddof=1)`, `qcut`), scipy 1.17.1 (`beta.ppf`, checked there against
//! `binomtest(...).proportion_ci(method="exact")`, and `fisher_exact`) and
//! statsmodels 0.15.0 (`confint_proportions_2indep`: Katz log ratio,
//! Newcombe hybrid score difference); versions are recorded in the JSON.
//! The data: Boston HMDA mortgage applications (Munnell, Tootell, Browne &
//! McEneaney 1996, as shipped in R's AER), scored by a logistic regression
//! fitted without the protected attribute `afam`.

use serde_json::Value;
use std::path::PathBuf;
use telltale::data::load::LoadOptions;
use telltale::data::prepare::{EncodeOptions, Roles};
use telltale::outputs::input::{ScoredSpec, Selection, read_scored};
use telltale::outputs::{OutputsOptions, OutputsReport, OutputsResult, build_report};

/// Every figure here is a deterministic function of the same counts and
/// scores, so the two computations agree to rounding: 1e-9 absolute.
const TOLERANCE: f64 = 1e-9;

fn reference() -> Value {
    let text = std::fs::read_to_string("fixtures/outputs/reference-hmda-scored.json").unwrap();
    serde_json::from_str(&text).unwrap()
}

fn spec() -> ScoredSpec {
    ScoredSpec {
        path: PathBuf::from("fixtures/outputs/hmda-scored.csv"),
        load: LoadOptions::default(),
        roles: Roles {
            protected: vec!["afam".into(), "single".into()],
            intersect: true,
            features: Some(vec!["chist".into(), "insurance".into(), "phist".into()]),
            ..Roles::default()
        },
        score: "approve_score".into(),
        selection: Selection::Column("approved".into()),
        outcome: Some("not_denied".into()),
        segment: Some("chist".into()),
        encode: EncodeOptions {
            min_class_rows: 1,
            ..EncodeOptions::default()
        },
    }
}

fn report() -> OutputsReport {
    let spec = spec();
    let data = read_scored(&spec).unwrap();
    build_report(&data, &spec, &OutputsOptions::default(), String::new())
}

fn close(actual: f64, expected: &Value, what: &str) {
    let expected = expected
        .as_f64()
        .unwrap_or_else(|| panic!("{what}: not a number"));
    assert!(
        (actual - expected).abs() <= TOLERANCE,
        "{what}: {actual} vs reference {expected}"
    );
}

fn result<'a>(report: &'a OutputsReport, name: &str) -> &'a OutputsResult {
    report.results.iter().find(|r| r.protected == name).unwrap()
}

const ATTRIBUTES: [&str; 3] = ["afam", "single", "afam × single"];

#[test]
fn group_rates_and_exact_intervals_match_pandas_and_scipy() {
    let report = report();
    let reference = reference();
    for name in ATTRIBUTES {
        let expected = &reference["attributes"][name]["groups"];
        let groups = &result(&report, name).groups;
        assert_eq!(groups.len(), expected.as_array().unwrap().len());
        for (group, want) in groups.iter().zip(expected.as_array().unwrap()) {
            let what = format!("{name} = {}", group.label);
            assert_eq!(group.label, want["label"].as_str().unwrap());
            assert_eq!(group.count, want["count"].as_u64(), "{what}");
            assert_eq!(group.selected, want["selected"].as_u64(), "{what}");
            assert_eq!(group.positives, want["positives"].as_u64(), "{what}");
            assert_eq!(group.negatives, want["negatives"].as_u64(), "{what}");
            for (field, value) in [
                ("selection_rate", group.selection_rate),
                ("selection_rate_low", group.selection_rate_low),
                ("selection_rate_high", group.selection_rate_high),
                ("tpr", group.tpr),
                ("tpr_low", group.tpr_low),
                ("tpr_high", group.tpr_high),
                ("fpr", group.fpr),
                ("fpr_low", group.fpr_low),
                ("fpr_high", group.fpr_high),
                ("mean_score", group.mean_score),
            ] {
                close(value.unwrap(), &want[field], &format!("{what} {field}"));
            }
            let auc = &reference["attributes"][name]["auc_vs_rest"][&group.label];
            close(
                group.score_auc_vs_rest.unwrap(),
                auc,
                &format!("{what} AUC vs rest"),
            );
        }
    }
}

#[test]
fn score_auc_matches_scikit_learn() {
    let report = report();
    let reference = reference();
    for name in ATTRIBUTES {
        let want = &reference["attributes"][name];
        let got = result(&report, name);
        close(got.score_auc.unwrap().auc, &want["score_auc"], name);
        for stratum in &got.score_auc_by_outcome {
            let key = stratum.outcome.to_string();
            close(
                stratum.score_auc.unwrap().auc,
                &want["score_auc_by_outcome"][&key],
                &format!("{name} within outcome {key}"),
            );
        }
        assert_eq!(got.score_auc_by_outcome.len(), 2);
    }
    // The score was fitted without `afam`, yet separates it: 0.711 (scikit-learn).
    let afam = result(&report, "afam");
    assert_eq!(afam.higher_scoring.as_deref(), Some("no"));
    assert!(afam.score_auc.unwrap().auc_low > 0.65);
}

#[test]
fn adverse_impact_ratio_matches_statsmodels_and_scipy() {
    let report = report();
    let reference = reference();
    for name in ATTRIBUTES {
        let want = &reference["attributes"][name]["adverse_impact_ratio"];
        let got = result(&report, name).adverse_impact_ratio.as_ref().unwrap();
        assert_eq!(got.lowest, want["lowest"].as_str().unwrap());
        assert_eq!(got.highest, want["highest"].as_str().unwrap());
        close(got.ratio.unwrap(), &want["ratio"], name);
        close(got.ratio_low.unwrap(), &want["ratio_low"], name);
        close(got.ratio_high.unwrap(), &want["ratio_high"], name);
        // p-values reach 1e-55 here: compared relatively, to 1e-9 of their size.
        let p = want["fisher_exact_p"].as_f64().unwrap();
        assert!(
            (got.fisher_exact_p - p).abs() <= TOLERANCE * p,
            "{name}: Fisher p {} vs {p}",
            got.fisher_exact_p
        );
        assert!(got.four_fifths.below, "{name}");
        assert!(got.four_fifths.basis.contains("29 CFR 1607.4(D)"));
        assert!(got.four_fifths.basis.starts_with("common practice"));
    }
}

#[test]
fn standardized_mean_difference_matches_pandas() {
    let report = report();
    let reference = reference();
    for name in ATTRIBUTES {
        let got = result(&report, name)
            .standardized_mean_difference
            .as_ref()
            .unwrap();
        let want = &reference["attributes"][name]["smd_vs_rest"];
        close(got.smd, &want[&got.group], name);
        // Binary: the less frequent class; multi-class: the largest |d| of all classes.
        let largest = want
            .as_object()
            .unwrap()
            .values()
            .map(|v| v.as_f64().unwrap().abs())
            .fold(0.0, f64::max);
        if name.contains('×') {
            assert!((got.smd.abs() - largest).abs() <= TOLERANCE);
        } else {
            assert_eq!(got.group, "yes");
        }
    }
}

#[test]
fn equalized_odds_gaps_match_newcombe_in_statsmodels() {
    let report = report();
    let reference = reference();
    for name in ATTRIBUTES {
        let odds = result(&report, name).equalized_odds.as_ref().unwrap();
        for (field, gap) in [("tpr_gap", &odds.tpr_gap), ("fpr_gap", &odds.fpr_gap)] {
            let want = &reference["attributes"][name][field];
            let gap = gap.as_ref().unwrap();
            let what = format!("{name} {field}");
            assert_eq!(gap.highest, want["highest"].as_str().unwrap(), "{what}");
            assert_eq!(gap.lowest, want["lowest"].as_str().unwrap(), "{what}");
            close(gap.difference, &want["difference"], &what);
            close(gap.difference_low, &want["difference_low"], &what);
            close(gap.difference_high, &want["difference_high"], &what);
        }
    }
}

#[test]
fn calibration_bands_match_pandas_qcut() {
    let report = report();
    let reference = reference();
    for name in ATTRIBUTES {
        let want = reference["attributes"][name]["calibration"]
            .as_array()
            .unwrap();
        let bands = &result(&report, name).calibration;
        assert_eq!(bands.len(), want.len(), "{name}");
        for (band, want) in bands.iter().zip(want) {
            close(band.score_low, &want["score_low"], name);
            close(band.score_high, &want["score_high"], name);
            for cell in &band.groups {
                let Some(expected) = want["cells"].get(&cell.label) else {
                    assert_eq!(cell.count, None, "{name}: empty cell");
                    continue;
                };
                let rows = expected["count"].as_u64().unwrap();
                if rows < 10 {
                    assert_eq!(cell.count, None, "{name}: cell under min_cell shown");
                    continue;
                }
                assert_eq!(cell.count, Some(rows));
                let rate = cell.outcome_rate.unwrap();
                close(rate.rate, &expected["outcome_rate"], name);
                close(rate.low, &expected["low"], name);
                close(rate.high, &expected["high"], name);
                close(cell.mean_score.unwrap(), &expected["mean_score"], name);
            }
        }
    }
}

#[test]
fn carriers_match_a_pandas_residualisation() {
    let report = report();
    let reference = reference();
    for name in ATTRIBUTES {
        let got = result(&report, name);
        assert_eq!(got.carriers.len(), 3);
        for carrier in &got.carriers {
            let want = &reference["attributes"][name]["carriers"][&carrier.feature];
            close(
                carrier.auc_adjusted.unwrap(),
                &want["auc_adjusted"],
                &carrier.feature,
            );
            let drop = got.score_auc.unwrap().auc - carrier.auc_adjusted.unwrap();
            assert!((carrier.auc_drop.unwrap() - drop).abs() < 1e-15);
        }
    }
    // Credit history carries most of `afam` into the score.
    assert_eq!(result(&report, "afam").carriers[0].feature, "chist");
}

#[test]
fn thin_segments_are_the_levels_with_few_events() {
    let report = report();
    let reference = reference();
    let afam = result(&report, "afam");
    for level in reference["segment_chist"].as_array().unwrap() {
        let label = level["label"].as_i64().unwrap().to_string();
        let selected = level["selected"].as_u64().unwrap();
        let listed = afam
            .thin_segments
            .iter()
            .find(|t| t.column == "chist" && t.level == label && t.event == "selected");
        assert_eq!(listed.is_some(), selected < 5, "chist = {label}");
        if let Some(thin) = listed {
            assert_eq!(thin.rows, level["count"].as_u64().unwrap());
            close(thin.rate.high, &level["selection_rate_high"], &label);
        }
    }
}
