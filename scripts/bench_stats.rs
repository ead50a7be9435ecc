//! Timings of the leakage estimators on 1,000,000 seeded synthetic rows.
//!
//! Each estimator runs several times; the table shows the median and the
//! fastest run in milliseconds. Run with `cargo bench --bench stats` or
//! `scripts/bench-stats.sh`.

use std::hint::black_box;
use std::time::Instant;
use telltale::data::demo::SplitMix64;
use telltale::stats::{
    Contingency, auc_from_rating_table, auc_from_scores, balanced_error_rate, delong, macro_ovr,
    summarize,
};

const ROWS: usize = 1_000_000;
const RUNS: usize = 7;
const FEATURE_LEVELS: u32 = 32;
const CLASSES: usize = 3;

/// Seeded synthetic columns shared by every measurement.
struct Data {
    binary: Vec<u32>,
    positive: Vec<bool>,
    feature: Vec<u32>,
    identifier: Vec<u32>,
    scores: Vec<f64>,
    labels: Vec<u32>,
    proba: Vec<f64>,
}

impl Data {
    fn new() -> Self {
        let mut rng = SplitMix64::new(42);
        let positive: Vec<bool> = (0..ROWS).map(|_| rng.next_f64() < 0.3).collect();
        let binary = positive.iter().map(|&p| u32::from(p)).collect();
        let scores: Vec<f64> = positive
            .iter()
            .map(|&p| rng.normal() + 0.8 * f64::from(u8::from(p)))
            .collect();
        let feature = scores
            .iter()
            .map(|s| ((s + 4.0) * 4.0).clamp(0.0, f64::from(FEATURE_LEVELS - 1)) as u32)
            .collect();
        let mut identifier: Vec<u32> = (0..ROWS as u32).collect();
        rng.shuffle(&mut identifier);
        let labels: Vec<u32> = (0..ROWS).map(|_| rng.below(CLASSES) as u32).collect();
        let proba = labels
            .iter()
            .flat_map(|&l| {
                let raw: Vec<f64> = (0..CLASSES)
                    .map(|k| (rng.normal() + if k == l as usize { 0.7 } else { 0.0 }).exp())
                    .collect();
                let sum: f64 = raw.iter().sum();
                raw.into_iter().map(move |r| r / sum)
            })
            .collect();
        Self {
            binary,
            positive,
            feature,
            identifier,
            scores,
            labels,
            proba,
        }
    }
}

/// Median and minimum wall time of `RUNS` calls, in milliseconds.
fn time<T>(mut work: impl FnMut() -> T) -> (f64, f64) {
    let mut times: Vec<f64> = (0..RUNS)
        .map(|_| {
            let start = Instant::now();
            black_box(work());
            start.elapsed().as_secs_f64() * 1e3
        })
        .collect();
    times.sort_by(f64::total_cmp);
    (times[RUNS / 2], times[0])
}

fn main() {
    let data = Data::new();
    let feature_table = Contingency::from_codes(&data.feature, FEATURE_LEVELS, &data.binary, 2);
    let id_table = Contingency::from_codes(&data.identifier, ROWS as u32, &data.binary, 2);
    let class_counts = |class: usize| -> Vec<u64> {
        feature_table
            .counts
            .chunks(2)
            .map(|row| row[class])
            .collect()
    };
    let (negatives, positives) = (class_counts(0), class_counts(1));
    let coarse_scores: Vec<f64> = data.feature.iter().map(|&c| f64::from(c)).collect();
    let rows: Vec<(&str, (f64, f64))> = vec![
        (
            "contingency, 32 levels",
            time(|| Contingency::from_codes(&data.feature, FEATURE_LEVELS, &data.binary, 2)),
        ),
        (
            "contingency, identifier",
            time(|| Contingency::from_codes(&data.identifier, ROWS as u32, &data.binary, 2)),
        ),
        (
            "MI+AMI+NMI, 32-level table",
            time(|| summarize(&feature_table)),
        ),
        (
            "MI+AMI+NMI, identifier table",
            time(|| summarize(&id_table)),
        ),
        (
            "AUC (Mann-Whitney)",
            time(|| auc_from_scores(&data.scores, &data.positive)),
        ),
        (
            "AUC, 32 distinct scores",
            time(|| auc_from_scores(&coarse_scores, &data.positive)),
        ),
        (
            "DeLong AUC + variance",
            time(|| delong(&data.scores, &data.positive)),
        ),
        (
            "macro OvR + variance, 3 classes",
            time(|| macro_ovr(&data.proba, CLASSES, &data.labels)),
        ),
        (
            "BER balanced Bayes, 3 classes",
            time(|| balanced_error_rate(&data.proba, CLASSES, &data.labels)),
        ),
        (
            "AUC from 32-level rating table",
            time(|| auc_from_rating_table(&negatives, &positives)),
        ),
    ];
    println!("{ROWS} rows, {RUNS} runs each");
    println!("{:<34} {:>12} {:>12}", "estimator", "median ms", "min ms");
    for (name, (median, min)) in rows {
        println!("{name:<34} {median:>12.2} {min:>12.2}");
    }
}
