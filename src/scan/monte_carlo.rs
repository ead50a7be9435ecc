//! Monte Carlo of the whole-set attacker's interval and of the added-source
//! test, on seeded synthetic designs whose truth is known by construction.
//! Measurements, not checks: run by `scripts/monte-carlo.sh whole_set`. They
//! live in the crate because the planted designs' truth needs the attacker
//! itself, trained on one sample and scored on another.

use super::{PairMode, ScanOptions, Silent};
use crate::data::demo::draw;
use crate::data::encode::{encode_levels, encode_numeric};
use crate::data::{EncodedColumn, EncodedTable, FeatureKind, ProtectedAttribute};
use crate::rng::SplitMix64;

/// A binary attribute of `rows` rows with exactly `minority` rows of class 1,
/// at seeded random positions.
fn attribute(rows: usize, minority: usize, rng: &mut SplitMix64) -> ProtectedAttribute {
    let mut codes: Vec<u32> = (0..rows).map(|i| u32::from(i < minority)).collect();
    rng.shuffle(&mut codes);
    ProtectedAttribute::from_codes("group".into(), vec!["a".into(), "b".into()], codes, 0)
}

/// A categorical column whose level is drawn from `shares[class]`.
fn categorical(
    name: &str,
    classes: &[u32],
    shares: &[&[f64]],
    rng: &mut SplitMix64,
) -> EncodedColumn {
    let labels: Vec<String> = classes
        .iter()
        .map(|&c| format!("L{:02}", draw(rng, shares[c as usize])))
        .collect();
    encode_levels(
        name,
        FeatureKind::Categorical,
        labels.iter().map(|s| Some(s.as_str())),
    )
}

/// Six noise columns over `classes` (any number of classes): numerics,
/// 6-level and 40-level categoricals in turn.
fn noise_columns(classes: &[u32], rng: &mut SplitMix64) -> Vec<EncodedColumn> {
    (0..6)
        .map(|i| {
            let name = format!("noise_{i:02}");
            let levels = [0, 6, 40][i % 3];
            if levels == 0 {
                encode_numeric(&name, classes.iter().map(|_| rng.normal()).collect(), 32)
            } else {
                let uniform = vec![1.0 / f64::from(levels); levels as usize];
                let k = classes.iter().max().map_or(1, |&c| c as usize + 1);
                categorical(&name, classes, &vec![uniform.as_slice(); k], rng)
            }
        })
        .collect()
}

/// Level shares by class of the planted 4-level columns: moderate (Bayes
/// AUC 0.75 on its own, as in `intervals_cover_a_planted_bayes_auc`) and
/// strong (Σ_j P_b(j)·[P_a(< j) + ½P_a(j)] = 0.0025 + 0.0525 + 0.1875 +
/// 0.6325 = 0.875 by Hanley & McNeil 1982, eq. 1).
const PLANTED: [[[f64; 4]; 2]; 2] = [
    [[0.4, 0.3, 0.2, 0.1], [0.1, 0.2, 0.3, 0.4]],
    [[0.55, 0.25, 0.15, 0.05], [0.05, 0.15, 0.25, 0.55]],
];

/// A whole-set design: `rows` rows with `minority` rows of class 1 and six
/// noise columns (two each of numerics, 6- and 40-level categoricals),
/// plus the planted 4-level column `PLANTED[p]` when `planted` is `Some(p)`.
fn whole_set_table(
    rows: usize,
    minority: usize,
    planted: Option<usize>,
    seed: u64,
) -> EncodedTable {
    let mut rng = SplitMix64::new(seed);
    let group = attribute(rows, minority, &mut rng);
    let mut features = noise_columns(&group.codes, &mut rng);
    if let Some(p) = planted {
        let [a, b] = &PLANTED[p];
        features.push(categorical("planted", &group.codes, &[a, b], &mut rng));
    }
    table(group, features)
}

/// An encoded table of `features` with the one protected attribute `group`.
fn table(group: ProtectedAttribute, features: Vec<EncodedColumn>) -> EncodedTable {
    EncodedTable {
        source_rows: group.codes.len(),
        features,
        protected: vec![group],
        skipped: Vec::new(),
        missing_tokens: Vec::new(),
        readings: Vec::new(),
        outcome: None,
    }
}

/// Data sets per design: `WHOLE_SET_REPLICATES`, default 400.
fn replicates() -> u64 {
    std::env::var("WHOLE_SET_REPLICATES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(400)
}

/// Runs the whole-set attacker on `replicates` data sets from `data_of(seed)`
/// and prints how often its interval covered `truth`, with the sd of the AUC
/// over the mean reported standard error.
fn measure(name: &str, truth: f64, replicates: u64, data_of: impl Fn(u64) -> EncodedTable) {
    let started = std::time::Instant::now();
    let results: Vec<(f64, f64, bool)> = (0..replicates)
        .map(|seed| {
            let whole = whole_set_of(&data_of(seed), seed);
            let covers = whole.auc_low <= truth && truth <= whole.auc_high;
            (whole.auc, whole.auc_se, covers)
        })
        .collect();
    let c = crate::stats::fitting::Calibration::of(&results);
    println!(
        "{name}: truth {truth:.4}, coverage {:.4} ({replicates} data sets), mean AUC {:.4}, \
         sd of AUC {:.4}, mean se {:.4}, sd/se {:.3}, {:.1} s",
        c.coverage,
        c.mean,
        c.sd,
        c.mean_se,
        c.spread_ratio(),
        started.elapsed().as_secs_f64()
    );
}

/// The whole-set attacker's report on `data`: no pairs (so no joint
/// columns), no ablation.
fn whole_set_of(data: &EncodedTable, seed: u64) -> crate::report::WholeSet {
    let options = ScanOptions {
        seed,
        pairs: PairMode::None,
        ablation: false,
        ..ScanOptions::default()
    };
    super::scan(data, &options, &Silent)[0]
        .whole_set
        .clone()
        .expect("whole set scanned")
}

/// The estimand of a planted design's cross-fitted AUC: the expected AUC,
/// on new rows, of the attacker trained on a training fold's worth of rows
/// (4/5 of 2 000), which is what cross-validation estimates (Bates, Hastie &
/// Tibshirani 2023, "Cross-validation: what does it estimate and how well
/// does it do it?", JASA, §2). Mean over `trainings` seeded training sets,
/// each scored on 50 000 fresh rows.
fn planted_truth(planted: usize, trainings: u64) -> f64 {
    use crate::surrogate::{BoostedSurrogate, Fitted};
    let (train_rows, test_rows) = (1_600, 50_000);
    let total: f64 = (0..trainings)
        .map(|t| {
            let rows = train_rows + test_rows;
            let data = whole_set_table(rows, rows * 3 / 10, Some(planted), 90_000 + t);
            let columns: Vec<&EncodedColumn> = data.features.iter().collect();
            let classes = &data.protected[0].codes;
            let train: Vec<usize> = (0..train_rows).collect();
            let test: Vec<usize> = (train_rows..rows).collect();
            let model = BoostedSurrogate::default()
                .fit_model(&columns, classes, 2, &train)
                .expect("fit");
            let proba = model.predict_proba(&columns, &test);
            let scores: Vec<f64> = proba.chunks_exact(2).map(|p| p[1]).collect();
            let positive: Vec<bool> = test.iter().map(|&r| classes[r] == 1).collect();
            crate::stats::auc_from_scores(&scores, &positive).expect("both classes")
        })
        .sum();
    total / trainings as f64
}

/// Measurement run, not a check (`scripts/monte-carlo.sh whole_set`):
/// coverage of the whole-set attacker's 95 % interval on pure noise (truth
/// 0.5; 30 % and 5 % minority) and on the planted designs (truth from
/// [`planted_truth`]), with the empirical sd of the AUC over the mean
/// reported standard error; `WHOLE_SET_REPLICATES` data sets per design
/// (default 400).
#[test]
#[ignore = "Monte Carlo measurement; prints rates"]
fn monte_carlo_whole_set() {
    let replicates = replicates();
    let designs = [
        ("noise, 30% minority", 600, None),
        ("noise, 5% minority", 100, None),
        (
            "planted 4-level (0.75) + 6 noise, 30% minority",
            600,
            Some(0),
        ),
        (
            "planted 4-level (0.875) + 6 noise, 30% minority",
            600,
            Some(1),
        ),
    ];
    for (name, minority, planted) in designs {
        let truth = planted.map_or(0.5, |p| planted_truth(p, 40));
        measure(name, truth, replicates, |seed| {
            whole_set_table(2_000, minority, planted, 60_000 + seed)
        });
    }
    let started = std::time::Instant::now();
    let significant = (0..replicates)
        .filter(|&seed| {
            let data = whole_set_table(2_000, 600, None, 60_000 + seed);
            let options = ScanOptions {
                seed,
                ..ScanOptions::default()
            };
            let added = super::added_source_effects(&data, &["noise_05".into()], &options);
            added[0].p_value.is_some_and(|p| p < 0.05)
        })
        .count();
    println!(
        "added noise column (40 levels) to five noise columns, 30% minority: p < 0.05 in {:.4} \
         ({replicates} data sets), {:.1} s",
        significant as f64 / replicates as f64,
        started.elapsed().as_secs_f64()
    );
}

/// Measurement run, not a check (`scripts/monte-carlo.sh whole_set_multiclass`):
/// coverage of the whole-set attacker's 95 % interval for a three-class
/// attribute (50/30/20 %, macro one-vs-rest AUC) on the six noise columns
/// (truth 0.5); `WHOLE_SET_REPLICATES` data sets (default 400).
#[test]
#[ignore = "Monte Carlo measurement; prints rates"]
fn monte_carlo_whole_set_multiclass() {
    measure("three-class noise (50/30/20%)", 0.5, replicates(), |seed| {
        let mut rng = SplitMix64::new(70_000 + seed);
        let codes: Vec<u32> = (0..2_000)
            .map(|_| draw(&mut rng, &[0.5, 0.3, 0.2]) as u32)
            .collect();
        let labels = vec!["a".into(), "b".into(), "c".into()];
        let group = ProtectedAttribute::from_codes("group".into(), labels, codes, 0);
        let features = noise_columns(&group.codes, &mut rng);
        table(group, features)
    });
}
