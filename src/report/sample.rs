//! A complete report for renderer tests. Every number here is an
//! illustrative structure-test input, not a computed or published value:
//! the renderer tests check layout, escaping and suppression, never statistics.

use super::*;
use std::collections::BTreeMap;

/// A column name that needs escaping in every markup format.
pub const AWKWARD_NAME: &str = r#"<b>&"x""#;

/// A column name with a table separator and non-ASCII letters.
pub const PIPE_NAME: &str = "région|code";

/// Share that only a suppressed level carries; it must never be printed.
pub const SUPPRESSED_SHARE: f64 = 0.4321;

/// An illustrative concave ROC curve `tpr = fpr^power`, 21 points.
fn roc(power: f64) -> Vec<[f64; 2]> {
    (0..=20)
        .map(|i| {
            let fpr = f64::from(i) / 20.0;
            [fpr, fpr.powf(power)]
        })
        .collect()
}

/// A feature with the fields the renderers show; the rest left empty.
fn feature(name: &str, kind: &str, auc: Option<f64>, ami: f64, flag: Flag) -> FeatureResult {
    let half_width = 0.02;
    FeatureResult {
        name: name.to_owned(),
        kind: kind.to_owned(),
        levels: 12,
        missing_fraction: 0.01,
        mi_nats: ami * 1.5,
        mi_mm_nats: ami * 1.4,
        ami,
        nmi: ami * 1.1,
        heldout_info_nats: auc.map(|a| (a - 0.5) * 0.3),
        auc,
        auc_low: auc.map(|a| a - half_width),
        auc_high: auc.map(|a| a + half_width),
        auc_se: auc.map(|_| half_width / 1.96),
        auc_delong_se: auc.map(|_| half_width / 1.96 / 1.3),
        hand_till: None,
        ber: auc.map(|a| 1.0 - a),
        surrogate: auc.map(|_| "frequency".to_owned()),
        surrogates: auc
            .map(|a| {
                BTreeMap::from([
                    ("frequency".to_owned(), a),
                    ("logistic".to_owned(), a - 0.01),
                ])
            })
            .unwrap_or_default(),
        flag,
        accepted: None,
        composition: None,
        roc: None,
        outcome: None,
    }
}

/// Composition of a flagged feature: two visible levels and one suppressed.
fn composition() -> Vec<LevelComposition> {
    vec![
        LevelComposition {
            label: "north".into(),
            count: Some(5120),
            shares: vec![Some(0.81), Some(0.19)],
        },
        LevelComposition {
            label: "south".into(),
            count: Some(4701),
            shares: vec![Some(0.22), Some(0.78)],
        },
        LevelComposition {
            label: "island".into(),
            count: None,
            shares: vec![Some(SUPPRESSED_SHARE), Some(1.0 - SUPPRESSED_SHARE)],
        },
    ]
}

fn features() -> Vec<FeatureResult> {
    let mut region = feature(PIPE_NAME, "categorical", Some(0.861), 0.21, Flag::Proxy);
    region.composition = Some(composition());
    region.roc = Some(roc(0.30));
    let mut awkward = feature(AWKWARD_NAME, "categorical", Some(0.742), 0.07, Flag::Proxy);
    awkward.roc = Some(roc(0.45));
    awkward.accepted = Some(Acceptance {
        reason: "required by the pricing regulation".into(),
        reviewer: "model-risk team".into(),
        expires: "2027-06-30".into(),
        active: true,
    });
    let mut income = feature("income", "numeric", Some(0.655), 0.03, Flag::Review);
    income.roc = Some(roc(0.65));
    vec![
        region,
        awkward,
        income,
        feature(
            "tenure_months",
            "integer-coded",
            Some(0.561),
            0.004,
            Flag::Clear,
        ),
        feature("has_card", "boolean", Some(0.512), 0.0003, Flag::Clear),
        feature(
            "customer_ref",
            "identifier-like",
            None,
            0.0,
            Flag::Unresolved,
        ),
    ]
}

fn pair(a: &str, b: &str, auc: f64, gain: f64, flag: Flag) -> PairResult {
    PairResult {
        features: [a.to_owned(), b.to_owned()],
        auc,
        auc_low: Some(auc - 0.02),
        auc_high: Some(auc + 0.02),
        auc_se: Some(0.01),
        gain,
        gain_low: Some(gain - 0.012),
        gain_high: Some(gain + 0.012),
        heldout_info_nats: Some(gain * 0.5),
        flag,
    }
}

fn pairs() -> Vec<PairResult> {
    vec![
        pair("income", "tenure_months", 0.731, 0.076, Flag::Proxy),
        pair(PIPE_NAME, "income", 0.872, 0.011, Flag::Proxy),
        pair(AWKWARD_NAME, "has_card", 0.744, 0.002, Flag::Proxy),
        pair("tenure_months", "has_card", 0.559, -0.002, Flag::Clear),
    ]
}

fn removal_step(remove: &str, auc: f64) -> RemovalStep {
    RemovalStep {
        remove: remove.to_owned(),
        auc_after: auc,
        auc_low: auc - 0.015,
        auc_high: auc + 0.015,
        features: vec![remove.to_owned()],
        auc_before: None,
        outcome_auc_after: None,
        outcome_auc_low: None,
        outcome_auc_high: None,
    }
}

fn whole_set() -> WholeSet {
    WholeSet {
        auc: 0.902,
        auc_low: 0.891,
        auc_high: 0.913,
        auc_se: 0.0056,
        ber: 0.17,
        hand_till: None,
        surrogate: "boosted".into(),
        features_used: 5,
        roc: Some(roc(0.2)),
        drop_one: vec![DropOne {
            feature: PIPE_NAME.into(),
            auc: 0.801,
            auc_low: 0.788,
            auc_high: 0.814,
            delta: 0.101,
            p_value: Some(0.0001),
            refit: true,
        }],
        removal_plan: vec![
            removal_step(PIPE_NAME, 0.801),
            removal_step(AWKWARD_NAME, 0.688),
            removal_step("income", 0.583),
        ],
        target_reached: true,
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

fn sex_result() -> ProtectedResult {
    ProtectedResult {
        protected: "sex".into(),
        kind: "binary".into(),
        levels: vec![
            LevelCount {
                label: "female".into(),
                count: Some(4912),
            },
            LevelCount {
                label: "male".into(),
                count: Some(4970),
            },
        ],
        positive: Some("female".into()),
        entropy_nats: 0.693,
        headline: "Dropping sex does not hide it: the other features recover it with AUC 0.902."
            .into(),
        detectable_auc: Some(0.62),
        fitting_inflation: Some(1.3),
        power_statement: "At these class sizes this screen detects a feature or pair with AUC 0.62 or more with 80% power.".into(),
        flags_withheld: None,
        features: features(),
        pairs: pairs(),
        whole_set: Some(whole_set()),
    }
}

/// A second attribute with no whole-set result and no pairs.
fn age_result() -> ProtectedResult {
    ProtectedResult {
        protected: "age band".into(),
        kind: "multiclass".into(),
        levels: vec![
            LevelCount {
                label: "18-39".into(),
                count: Some(6100),
            },
            LevelCount {
                label: "40+".into(),
                count: Some(3778),
            },
            LevelCount {
                label: "unknown".into(),
                count: None,
            },
        ],
        positive: None,
        entropy_nats: 0.67,
        headline: "Dropping age band mostly hides it: no feature set was scored.".into(),
        detectable_auc: Some(0.63),
        fitting_inflation: Some(1.3),
        power_statement: "At these class sizes this screen detects a feature or pair with AUC 0.63 or more with 80% power.".into(),
        flags_withheld: None,
        features: vec![feature(
            "income",
            "numeric",
            Some(0.58),
            0.01,
            Flag::Unresolved,
        )],
        pairs: Vec::new(),
        whole_set: None,
    }
}

/// The full illustrative report.
pub fn sample_report() -> Report {
    Report {
        schema_version: SCHEMA_VERSION,
        tool: ToolInfo {
            name: "telltale".into(),
            version: "0.1.0".into(),
        },
        dataset: DatasetInfo {
            source: "applications.csv".into(),
            rows: 10_000,
            rows_used: 9_882,
            columns: 9,
            sha256: Some("9f2c".repeat(16)),
            rows_dropped_missing_protected: 118,
            sample: None,
        },
        settings: Settings {
            folds: 5,
            seed: 42,
            bins: 32,
            min_cell: 10,
            thresholds: Thresholds::default(),
            pairs: "top".into(),
            target_auc: 0.60,
            command: "telltale scan applications.csv --protected sex --report out/".into(),
            min_class: 28,
            interval_method: "Poisson bootstrap of the cross-fit, 200 replicates".into(),
            verdict_surrogate: "frequency".into(),
            max_utility_loss: None,
        },
        results: vec![sex_result(), age_result()],
        skipped_columns: vec![SkippedColumnInfo {
            name: "batch_id".into(),
            reason: "constant".into(),
        }],
        reading: ReadingInfo::default(),
        added_source: Some(AddedSource {
            source: "bureau.parquet".into(),
            sha256: "41ab".repeat(16),
            key: "customer_ref".into(),
            new_columns: vec!["bureau_score".into()],
            base_rows: 9_882,
            matched_rows: 9_500,
            unmatched_base_rows: 382,
            unmatched_source_rows: 40,
            duplicate_keys_in_source: 0,
            duplicate_keys_in_base: 0,
            per_protected: vec![AddedSourceEffect {
                protected: "sex".into(),
                auc_without: AucInterval {
                    auc: 0.902,
                    auc_low: 0.891,
                    auc_high: 0.913,
                    auc_se: 0.0056,
                },
                auc_with: AucInterval {
                    auc: 0.915,
                    auc_low: 0.905,
                    auc_high: 0.925,
                    auc_se: 0.005,
                },
                difference: 0.013,
                p_value: Some(0.03),
            }],
        }),
        policy: Some(PolicyOutcome {
            file: "policy.toml".into(),
            sha256: "77de".repeat(16),
            evaluated_on: "2026-12-02".into(),
            accepted_features: vec![AWKWARD_NAME.into()],
            expired_acceptances: Vec::new(),
            failing: vec![PIPE_NAME.into()],
        }),
        outcome: None,
        notes: vec!["customer_ref: AUC not computed (identifier-like column).".into()],
        caution: crate::CAUTION.into(),
    }
}

/// An illustrative interval of half-width 0.01 around `auc`.
fn around(auc: f64) -> AucInterval {
    AucInterval {
        auc,
        auc_low: auc - 0.01,
        auc_high: auc + 0.01,
        auc_se: 0.005,
    }
}

/// The sample report as scanned with an outcome: every feature of the first
/// attribute gets outcome values (the i-th feature a gain of 0.05·i), each
/// plan step its outcome AUC, and the plan a frontier whose second set is named.
pub fn sample_report_with_outcome() -> Report {
    let mut report = sample_report();
    report.settings.max_utility_loss = Some(0.02);
    let result = &mut report.results[0];
    for (i, feature) in result.features.iter_mut().enumerate() {
        let gain = 0.05 * i as f64;
        feature.outcome = Some(FeatureOutcome {
            auc: Some(0.6),
            auc_low: Some(0.58),
            auc_high: Some(0.62),
            gain_over_protected: Some(gain),
            gain_low: Some(gain - 0.02),
            gain_high: Some(gain + 0.02),
            protected_auc_within_outcome: feature.auc,
            protected_auc_within_outcome_low: feature.auc_low,
            protected_auc_within_outcome_high: feature.auc_high,
        });
    }
    let whole = result
        .whole_set
        .as_mut()
        .expect("the sample has a whole set");
    whole.outcome = Some(around(0.75));
    let mut removed = Vec::new();
    whole.frontier = vec![FrontierPoint {
        steps: 0,
        removed: Vec::new(),
        leakage: around(whole.auc),
        outcome: around(0.75),
    }];
    for (i, step) in whole.removal_plan.iter_mut().enumerate() {
        let outcome = 0.745 - 0.03 * i as f64;
        step.outcome_auc_after = Some(outcome);
        step.outcome_auc_low = Some(outcome - 0.01);
        step.outcome_auc_high = Some(outcome + 0.01);
        removed.push(step.remove.clone());
        whole.frontier.push(FrontierPoint {
            steps: i + 1,
            removed: removed.clone(),
            leakage: around(step.auc_after),
            outcome: around(outcome),
        });
    }
    whole.recommended_within_tolerance = Some(whole.frontier[1].clone());
    report
}
