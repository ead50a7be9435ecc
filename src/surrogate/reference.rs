//! Out-of-fold AUCs of the surrogates against reference values computed with
//! scikit-learn 1.9.1 (Pedregosa et al. 2011, "Scikit-learn: Machine Learning
//! in Python", JMLR 12) on the same rows and the same fold of every row
//! (`folds_seed0` in fixtures/reference/reference-*.json, made by
//! fixtures/reference/make_reference.py; datasets described in SOURCES.md).
//!
//! Tolerance: the reference files give each AUC's spread over five fold seeds
//! (`fold_noise_*.std_ddof1`). We reuse the seed-0 folds, so only differences
//! in fitting remain (solver tolerance, tie-breaking, binning); 3 standard
//! deviations of the fold noise bounds those generously while still failing
//! on a wrong model. Some spreads are below 0.002 (binary features, where every
//! fold gives almost the same table), so a floor of 0.005 is used: smaller
//! than any difference between a working and a broken surrogate on these data,
//! larger than solver-level differences.

#[path = "../../tests/common/fixtures.rs"]
mod fixtures;

use super::{BoostedSurrogate, LogisticSurrogate, Scores, Surrogate, TreeSurrogate, cross_fit};
use crate::data::encode::{encode_integer_coded, encode_levels, encode_numeric};
use crate::data::{EncodedColumn, FeatureKind};
use crate::stats::auc::auc_from_scores;
use fixtures::Csv;
use serde_json::Value;

/// A reference case: encoded features, protected class codes, folds and the JSON.
struct Case {
    features: Vec<EncodedColumn>,
    target: Vec<u32>,
    classes: Vec<String>,
    folds: Vec<u8>,
    reference: Value,
}

/// Numeric when every field parses; ≤ 10 distinct numbers become integer-coded
/// levels (the reference README's alternative rule), else 32 quantile bins.
fn encode(name: &str, fields: &[String]) -> EncodedColumn {
    let numbers: Option<Vec<f64>> = fields.iter().map(|f| f.parse::<f64>().ok()).collect();
    match numbers {
        Some(values) => {
            let mut distinct = values.clone();
            distinct.sort_by(f64::total_cmp);
            distinct.dedup();
            if distinct.len() <= 10 {
                encode_integer_coded(name, values)
            } else {
                encode_numeric(name, values, 32)
            }
        }
        None => encode_levels(
            name,
            FeatureKind::Categorical,
            fields.iter().map(|f| Some(f.as_str())),
        ),
    }
}

fn load(csv: &str, reference: &str) -> Case {
    let reference: Value = serde_json::from_str(
        &std::fs::read_to_string(fixtures::fixture(&format!("reference/{reference}"))).unwrap(),
    )
    .unwrap();
    let csv = Csv::read(&fixtures::fixture(&format!("reference/{csv}")));
    let protected = reference["protected"].as_str().unwrap();
    let outcome = reference["outcome"].as_str();
    let mut features = Vec::new();
    let mut protected_fields = Vec::new();
    for (name, fields) in csv.header.iter().zip(&csv.columns) {
        if name == protected {
            protected_fields = fields.clone();
        } else if Some(name.as_str()) != outcome {
            features.push(encode(name, fields));
        }
    }
    let classes: Vec<String> = reference["classes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c.as_str().unwrap().to_string())
        .collect();
    let target = protected_fields
        .iter()
        .map(|f| classes.iter().position(|c| c == f).unwrap() as u32)
        .collect();
    let folds = reference["folds_seed0"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f.as_u64().unwrap() as u8)
        .collect();
    Case {
        features,
        target,
        classes,
        folds,
        reference,
    }
}

impl Case {
    fn scores(&self, model: &dyn Surrogate, columns: &[&EncodedColumn]) -> Scores {
        cross_fit(
            model,
            columns,
            &self.target,
            self.classes.len(),
            &self.folds,
            5,
        )
        .unwrap()
    }

    /// Binary: AUC of the positive class's score. Multi-class: macro one-vs-rest
    /// (the mean of each class's AUC against the rest, as scikit-learn's
    /// `roc_auc_score(multi_class="ovr", average="macro")`).
    fn auc(&self, scores: &Scores) -> f64 {
        let one_vs_rest = |class: usize| {
            let is_class: Vec<bool> = self.target.iter().map(|&t| t as usize == class).collect();
            auc_from_scores(&scores.column(class), &is_class).unwrap()
        };
        match self.reference["positive_class"].as_str() {
            Some(positive) => one_vs_rest(self.classes.iter().position(|c| c == positive).unwrap()),
            None => {
                (0..self.classes.len()).map(one_vs_rest).sum::<f64>() / self.classes.len() as f64
            }
        }
    }

    fn reference_auc(&self, block: &Value) -> f64 {
        block["auc"]
            .as_f64()
            .or_else(|| block["ovr_macro"].as_f64())
            .unwrap()
    }

    /// Compares every feature's out-of-fold AUC of `model` with the reference entry `key`.
    fn check_single_features(&self, model: &dyn Surrogate, key: &str, noise_key: &str) {
        let mut failures = Vec::new();
        for entry in self.reference["features"].as_array().unwrap() {
            let name = entry["feature"].as_str().unwrap();
            let column = self.features.iter().find(|c| c.name == name).unwrap();
            let ours = self.auc(&self.scores(model, &[column]));
            let expected = self.reference_auc(&entry[key]);
            let tolerance = 3.0 * entry[noise_key]["std_ddof1"].as_f64().unwrap().max(0.005);
            if (ours - expected).abs() > tolerance {
                failures.push(format!(
                    "{name}: ours {ours:.4}, reference {expected:.4} ± {tolerance:.4}"
                ));
            }
        }
        assert!(failures.is_empty(), "{}: {failures:#?}", model.name());
    }

    fn check_whole_set(&self) {
        let columns: Vec<&EncodedColumn> = self.features.iter().collect();
        let ours = self.auc(&self.scores(&BoostedSurrogate::default(), &columns));
        let hgb = &self.reference["whole_set"]["hgb"];
        let expected = self.reference_auc(hgb);
        let tolerance = 3.0 * hgb["fold_noise"]["std_ddof1"].as_f64().unwrap().max(0.005);
        assert!(
            (ours - expected).abs() <= tolerance,
            "boosted: ours {ours:.4}, reference {expected:.4} ± {tolerance:.4}"
        );
    }
}

fn hmda() -> Case {
    load("hmda.csv", "reference-hmda-afam.json")
}

fn cps_gender() -> Case {
    load("cps1985.csv", "reference-cps1985-gender.json")
}

fn cps_ethnicity() -> Case {
    load("cps1985.csv", "reference-cps1985-ethnicity.json")
}

#[test]
fn logistic_matches_reference_per_feature() {
    // Reference: LogisticRegression(C=1.0) after median imputation and
    // StandardScaler (numeric) or one-hot (categorical), `cv_auc_logreg`.
    for case in [hmda(), cps_gender(), cps_ethnicity()] {
        case.check_single_features(
            &LogisticSurrogate::default(),
            "cv_auc_logreg",
            "fold_noise_logreg",
        );
    }
}

#[test]
fn tree_matches_reference_per_feature() {
    // Reference: DecisionTreeClassifier(max_depth=4) on the raw or ordinal value, `cv_auc_tree`.
    for case in [hmda(), cps_gender(), cps_ethnicity()] {
        case.check_single_features(&TreeSurrogate::default(), "cv_auc_tree", "fold_noise_tree");
    }
}

#[test]
fn boosted_matches_reference_on_whole_set() {
    // Reference: HistGradientBoostingClassifier defaults with native categorical
    // support, `whole_set.hgb` (no early stopping: under 10000 training rows).
    for case in [hmda(), cps_gender(), cps_ethnicity()] {
        case.check_whole_set();
    }
}
