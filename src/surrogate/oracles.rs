//! Independent checks of our own solvers against linfa's (Rust ML toolkit,
//! linfa-logistic and linfa-trees 0.8.1) on small data. linfa's solvers were
//! measured too slow for the scan itself, so they serve here as oracles only.

use super::{LogisticSurrogate, Surrogate, TreeSurrogate};
use crate::data::encode::encode_numeric;
use crate::rng::SplitMix64;
use linfa::Dataset;
use linfa::prelude::{Fit, Predict};
use ndarray::{Array1, Array2};

/// `n` rows: class 1 with probability 0.6, and a numeric value shifted by
/// 0.8 standard deviations for class 1. Continuous values, so no ties.
fn shifted_column(n: usize, seed: u64) -> (Vec<f64>, Vec<u32>) {
    let mut rng = SplitMix64::new(seed);
    let target: Vec<u32> = (0..n).map(|_| u32::from(rng.next_f64() < 0.6)).collect();
    let values = target
        .iter()
        .map(|&t| rng.normal() + 0.8 * f64::from(t))
        .collect();
    (values, target)
}

/// Our logistic surrogate minimises C·Σ log-loss + ½‖w‖² on the value
/// standardised with the training mean and population standard deviation;
/// linfa-logistic minimises Σ log-loss + (α/2)‖w‖², so α = 1/C = 1 on the
/// same standardised value is the same problem. Both solvers converge to
/// the unique optimum; 1e-6 on probabilities bounds linfa's gradient
/// tolerance (1e-10) comfortably.
#[test]
fn logistic_matches_linfa_logistic_on_a_numeric_column() {
    let (values, target) = shifted_column(400, 17);
    let column = encode_numeric("x", values.clone(), 32);
    let rows: Vec<usize> = (0..values.len()).collect();
    let ours = LogisticSurrogate::default()
        .fit(&[&column], &target, 2, &rows)
        .unwrap()
        .predict_proba(&[&column], &rows);

    let mean = values.iter().sum::<f64>() / values.len() as f64;
    let sd = (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / values.len() as f64).sqrt();
    let records = Array2::from_shape_fn((values.len(), 1), |(i, _)| (values[i] - mean) / sd);
    let labels: Array1<usize> = target.iter().map(|&t| t as usize).collect();
    let fitted = linfa_logistic::LogisticRegression::default()
        .alpha(1.0)
        .gradient_tolerance(1e-10)
        .max_iterations(1000)
        .fit(&Dataset::new(records.clone(), labels))
        .unwrap();
    let larger_is_one = fitted.labels().pos.class == 1;
    let theirs = fitted.predict_probabilities(&records);
    for (row, p) in theirs.iter().enumerate() {
        let p_one = if larger_is_one { *p } else { 1.0 - p };
        assert!(
            (ours[2 * row + 1] - p_one).abs() < 1e-6,
            "row {row}: ours {} linfa {p_one}",
            ours[2 * row + 1]
        );
    }
}

/// Both trees grow exact CART splits by Gini impurity to depth 4 with leaves
/// of one row or more, so on the training rows each leaf's majority class
/// must agree. Rows in a leaf whose classes tie are skipped (the two
/// libraries may break a tie differently).
#[test]
fn tree_matches_linfa_trees_on_a_numeric_column() {
    let (values, target) = shifted_column(300, 29);
    let column = encode_numeric("x", values.clone(), 32);
    let rows: Vec<usize> = (0..values.len()).collect();
    let ours = TreeSurrogate::default()
        .fit(&[&column], &target, 2, &rows)
        .unwrap()
        .predict_proba(&[&column], &rows);

    let records = Array2::from_shape_fn((values.len(), 1), |(i, _)| values[i]);
    let labels: Array1<usize> = target.iter().map(|&t| t as usize).collect();
    let tree = linfa_trees::DecisionTree::params()
        .max_depth(Some(4))
        .min_weight_leaf(1.0)
        .min_weight_split(2.0)
        .min_impurity_decrease(1e-12)
        .fit(&Dataset::new(records.clone(), labels))
        .unwrap();
    let theirs = tree.predict(&records);
    let mut compared = 0;
    for (row, &class) in theirs.iter().enumerate() {
        let p_one = ours[2 * row + 1];
        if (p_one - 0.5).abs() < 1e-12 {
            continue;
        }
        compared += 1;
        assert_eq!(usize::from(p_one > 0.5), class, "row {row}: ours {p_one}");
    }
    assert!(compared > 250, "only {compared} rows in untied leaves");
}
