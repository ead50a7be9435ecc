//! Calibration of the fitting-inclusive intervals and the verdicts built on
//! them, on seeded synthetic data whose truth is known by construction.

use telltale::data::demo::{SplitMix64, draw};
use telltale::data::encode::{encode_levels, encode_numeric};
use telltale::data::{EncodedColumn, EncodedTable, FeatureKind, ProtectedAttribute};
use telltale::pipeline::{PairMode, ScanOptions, Silent, fitted_auc, scan_table};
use telltale::report::Flag;
use telltale::review::gate::gate_failures;

/// A binary attribute of `rows` rows with exactly `minority` rows of class 1,
/// at seeded random positions.
fn attribute(rows: usize, minority: usize, rng: &mut SplitMix64) -> ProtectedAttribute {
    let mut codes: Vec<u32> = (0..rows).map(|i| u32::from(i < minority)).collect();
    rng.shuffle(&mut codes);
    ProtectedAttribute::from_codes(
        "group".to_string(),
        vec!["a".to_string(), "b".to_string()],
        codes,
        0,
    )
}

/// A categorical column whose level is drawn from `shares[class]`.
fn categorical(
    name: &str,
    classes: &[u32],
    shares: &[Vec<f64>],
    rng: &mut SplitMix64,
) -> EncodedColumn {
    let labels: Vec<String> = classes
        .iter()
        .map(|&c| format!("L{:02}", draw(rng, &shares[c as usize])))
        .collect();
    encode_levels(
        name,
        FeatureKind::Categorical,
        labels.iter().map(|s| Some(s.as_str())),
    )
}

fn uniform(levels: usize) -> Vec<Vec<f64>> {
    vec![vec![1.0 / levels as f64; levels]; 2]
}

/// Share of `replicates` seeded data sets (2 000 rows, 30 % minority) whose
/// 95 % interval for a column drawn from `shares` covers `truth`.
fn coverage(shares: &[Vec<f64>], truth: f64, replicates: u64) -> f64 {
    coverage_with(&[0.7, 0.3], shares, truth, replicates)
}

/// [`coverage`] with class c drawn with probability `priors[c]` (the last
/// class when u < its prior, and so on down, so that `[0.7, 0.3]` puts a row
/// in class 1 when u < 0.3).
fn coverage_with(priors: &[f64], shares: &[Vec<f64>], truth: f64, replicates: u64) -> f64 {
    let labels: Vec<String> = (0..priors.len()).map(|c| format!("g{c}")).collect();
    let covered = (0..replicates)
        .filter(|&seed| {
            let mut rng = SplitMix64::new(1_000 + seed);
            let classes: Vec<u32> = (0..2_000)
                .map(|_| {
                    let (u, mut upper) = (rng.next_f64(), 0.0);
                    (0..priors.len())
                        .rev()
                        .find(|&c| {
                            upper += priors[c];
                            u < upper
                        })
                        .unwrap_or(0) as u32
                })
                .collect();
            let group = ProtectedAttribute::from_codes(
                "group".to_string(),
                labels.clone(),
                classes.clone(),
                0,
            );
            let column = categorical("x", &classes, shares, &mut rng);
            let options = ScanOptions {
                seed,
                ..ScanOptions::default()
            };
            let fitted = fitted_auc(&column, &group, &options);
            fitted
                .low
                .zip(fitted.high)
                .is_some_and(|(low, high)| low <= truth && truth <= high)
        })
        .count();
    covered as f64 / replicates as f64
}

// Coverage checks: 600 seeded data sets each. The nominal rate is 0.95 with
// binomial sd √(0.95·0.05/600) = 0.0089, so a calibrated interval lands in
// the required band [0.93, 0.97] with probability ≈ 0.98 (±2.25 sd).

#[test]
fn intervals_cover_a_planted_bayes_auc() {
    // Four levels with P(level | a) = (.4, .3, .2, .1), P(level | b) =
    // (.1, .2, .3, .4): likelihood ratios increase with the level, so the
    // Bayes AUC is Σ_j P_b(j)·[P_a(< j) + ½P_a(j)] = 0.02 + 0.11 + 0.24 +
    // 0.38 = 0.75 (Hanley & McNeil 1982, eq. 1 on the rating table).
    let shares = vec![vec![0.4, 0.3, 0.2, 0.1], vec![0.1, 0.2, 0.3, 0.4]];
    let rate = coverage(&shares, 0.75, 600);
    assert!((0.93..=0.97).contains(&rate), "coverage {rate}");
}

#[test]
fn intervals_cover_chance_for_6_level_noise() {
    let rate = coverage(&uniform(6), 0.5, 600);
    assert!((0.93..=0.97).contains(&rate), "coverage {rate}");
}

#[test]
fn intervals_cover_chance_for_40_level_noise() {
    let rate = coverage(&uniform(40), 0.5, 600);
    assert!((0.93..=0.97).contains(&rate), "coverage {rate}");
}

#[test]
fn intervals_cover_chance_for_a_three_class_attribute() {
    // Macro one-vs-rest AUC (the multi-class AUC the report prints) of 6- and
    // 40-level noise, classes 50/30/20 %: the truth is 0.5 for every class.
    // A planted 4-level column: its truth is the macro one-vs-rest Bayes AUC
    // of the generating pmfs ([`bayes_macro_ovr`]).
    let priors = [0.5, 0.3, 0.2];
    let planted = vec![
        vec![0.4, 0.3, 0.2, 0.1],
        vec![0.1, 0.2, 0.3, 0.4],
        vec![0.25, 0.1, 0.4, 0.25],
    ];
    let mut rates: Vec<f64> = [6u32, 40]
        .iter()
        .map(|&levels| {
            let shares = vec![vec![1.0 / f64::from(levels); levels as usize]; 3];
            coverage_with(&priors, &shares, 0.5, 600)
        })
        .collect();
    let truth = bayes_macro_ovr(&priors, &planted);
    rates.push(coverage_with(&priors, &planted, truth, 600));
    println!(
        "three classes: coverage (6-level noise, 40-level noise, planted {truth:.4}) {rates:?}"
    );
    assert!(
        rates.iter().all(|r| (0.93..=0.97).contains(r)),
        "coverage {rates:?}"
    );
}

/// Macro one-vs-rest Bayes AUC of a categorical column with level pmfs
/// `shares[c]` and class priors `priors`: for each class c, the rest's pmf is
/// the prior-weighted mixture of the others; levels ranked by the likelihood
/// ratio give AUC_c = Σ_j P_c(j)·[Q_c(< j) + ½Q_c(j)] (Hanley & McNeil 1982,
/// eq. 1 on the rating table); the macro AUC is the mean over classes (Hand &
/// Till 2001 define the one-vs-rest average this way).
fn bayes_macro_ovr(priors: &[f64], shares: &[Vec<f64>]) -> f64 {
    let classes = priors.len();
    let per_class = (0..classes).map(|c| {
        let rest_mass = 1.0 - priors[c];
        let rest: Vec<f64> = (0..shares[c].len())
            .map(|j| {
                (0..classes)
                    .filter(|&d| d != c)
                    .map(|d| priors[d] * shares[d][j])
                    .sum::<f64>()
                    / rest_mass
            })
            .collect();
        let mut levels: Vec<usize> = (0..rest.len()).collect();
        levels.sort_by(|&a, &b| (shares[c][a] / rest[a]).total_cmp(&(shares[c][b] / rest[b])));
        let mut below = 0.0;
        levels
            .iter()
            .map(|&j| {
                let auc = shares[c][j] * (below + 0.5 * rest[j]);
                below += rest[j];
                auc
            })
            .sum::<f64>()
    });
    per_class.sum::<f64>() / classes as f64
}

/// `count` noise columns over `classes`: numerics, 6-level and 40-level categoricals in turn.
fn noise_columns(classes: &[u32], count: usize, rng: &mut SplitMix64) -> Vec<EncodedColumn> {
    (0..count)
        .map(|i| {
            let name = format!("noise_{i:02}");
            match i % 3 {
                0 => encode_numeric(&name, classes.iter().map(|_| rng.normal()).collect(), 32),
                1 => categorical(&name, classes, &uniform(6), rng),
                _ => categorical(&name, classes, &uniform(40), rng),
            }
        })
        .collect()
}

fn table(protected: ProtectedAttribute, features: Vec<EncodedColumn>) -> EncodedTable {
    EncodedTable {
        source_rows: protected.codes.len(),
        features,
        protected: vec![protected],
        skipped: Vec::new(),
        missing_tokens: Vec::new(),
        readings: Vec::new(),
        outcome: None,
    }
}

/// The report of a scan of 2 000 rows with `minority` rows of class 1 and
/// 24 noise columns, the data drawn from `data_seed`.
fn noise_report(
    minority: usize,
    data_seed: u64,
    options: &ScanOptions,
) -> telltale::report::Report {
    let mut rng = SplitMix64::new(data_seed);
    let group = attribute(2_000, minority, &mut rng);
    let features = noise_columns(&group.codes, 24, &mut rng);
    let info = telltale::report::DatasetInfo {
        source: "noise".to_string(),
        rows: 2_000,
        rows_used: 2_000,
        columns: 25,
        sha256: None,
        rows_dropped_missing_protected: 0,
        sample: None,
    };
    let screen = telltale::pipeline::ScreenOptions {
        scan: options.clone(),
        ..Default::default()
    };
    telltale::pipeline::screen_table(&table(group, features), info, &screen, &Silent).report
}

#[test]
fn tiny_minorities_raise_no_flag_and_pass_the_gate() {
    // 2 000 rows, 5, 10 or 20 minority rows, 24 pure-noise columns, every
    // pair scanned: nothing may be flagged proxy or review and the gate must
    // pass (scan exit 0), in every seed. The gate skips an attribute whose
    // flags are withheld, whole set included (unit test in scan::verdict),
    // so the slow whole-set attacker is left out here.
    for minority in [5, 10, 20] {
        for seed in 0..2 {
            let options = ScanOptions {
                seed,
                whole_set: false,
                pairs: PairMode::All,
                ..ScanOptions::default()
            };
            let report = noise_report(minority, 77 + seed, &options);
            let result = &report.results[0];
            let raised = |flag: Flag| matches!(flag, Flag::Proxy | Flag::Review);
            assert!(
                !result.features.iter().any(|f| raised(f.flag)),
                "{minority}/{seed}"
            );
            assert!(
                !result.pairs.iter().any(|p| raised(p.flag)),
                "{minority}/{seed}"
            );
            assert!(gate_failures(&report).is_empty(), "{minority}/{seed}");
            assert!(result.flags_withheld.is_some(), "{minority}/{seed}");
            assert!(result.headline.contains("No flags"), "{}", result.headline);
        }
    }
}

#[test]
fn a_tiny_minority_gets_drop_one_but_no_removal_plan() {
    // 5 minority rows in 2 000 (below the default --min-class 28): the
    // attacker and drop-one are still measured, but no removal is advised,
    // and the report says why.
    let options = ScanOptions {
        pairs: PairMode::None,
        ..ScanOptions::default()
    };
    let report = noise_report(5, 91, &options);
    let whole = report.results[0].whole_set.as_ref().expect("whole set ran");
    assert!(whole.removal_plan.is_empty());
    assert!(!whole.target_reached);
    assert!(!whole.drop_one.is_empty());
    let reason = whole.plan_withheld.as_deref().expect("a reason is given");
    assert!(reason.contains("--min-class"), "{reason}");
    use telltale::report::Renderer;
    let page = telltale::report::markdown::MarkdownRenderer.render(&report);
    assert!(
        page.contains("No removal plan: its smallest class"),
        "{page}"
    );
}

#[test]
fn a_boolean_and_a_32_bin_numeric_with_the_same_auc_get_the_same_verdict() {
    // Binary x with P(x=1 | b) = p₁, P(x=1 | a) = p₀ has AUC ½ + (p₁ − p₀)/2;
    // a normal x shifted by δ in class b has AUC Φ(δ/√2) (binormal model,
    // unit variances). Pairs: AUC 0.66 (p₁ − p₀ = 0.32, δ = 0.5824) and
    // 0.55 (0.10, δ = 0.1777). At 20 000 balanced rows the interval is about
    // ±0.012 wide, over 4 sd away from the lines, so the verdicts are
    // determined: review and clear, whatever the number of levels.
    for (auc, gap, shift, expected) in [
        (0.66, 0.32, 0.5824, Flag::Review),
        (0.55, 0.10, 0.1777, Flag::Clear),
    ] {
        for seed in 0..5 {
            let mut rng = SplitMix64::new(500 + seed);
            let group = attribute(20_000, 10_000, &mut rng);
            let p = |class: u32| 0.5 + gap * (f64::from(class) - 0.5);
            let flags: Vec<&str> = group
                .codes
                .iter()
                .map(|&c| if rng.next_f64() < p(c) { "yes" } else { "no" })
                .collect();
            let boolean =
                encode_levels("flag", FeatureKind::Boolean, flags.iter().map(|s| Some(*s)));
            let values = group
                .codes
                .iter()
                .map(|&c| rng.normal() + shift * f64::from(c))
                .collect();
            let numeric = encode_numeric("amount", values, 32);
            let data = table(group, vec![boolean, numeric]);
            let options = ScanOptions {
                seed,
                whole_set: false,
                pairs: PairMode::None,
                ..ScanOptions::default()
            };
            let result = &scan_table(&data, &options, &Silent)[0];
            for f in &result.features {
                assert_eq!(
                    f.flag, expected,
                    "AUC {auc}, seed {seed}: {} {:?}",
                    f.name, f.auc
                );
            }
            let ami = |name: &str| result.features.iter().find(|f| f.name == name).unwrap().ami;
            if auc > 0.6 {
                assert!(ami("flag") > 2.0 * ami("amount"), "AMI depends on levels");
            }
        }
    }
}

#[test]
fn explain_names_no_partner_on_pure_noise() {
    // Eight noise columns, 2 000 balanced rows: no pair can gain over its
    // singles, so explain's paragraph must name no partner.
    for seed in 0..4 {
        let mut rng = SplitMix64::new(900 + seed);
        let group = attribute(2_000, 1_000, &mut rng);
        let features = noise_columns(&group.codes, 8, &mut rng);
        let data = table(group, features);
        let options = ScanOptions {
            seed,
            ..ScanOptions::default()
        };
        for feature in ["noise_01", "noise_02"] {
            let explained =
                telltale::pipeline::explain_table(&data, 0, feature, &options, &Silent).unwrap();
            assert!(
                !explained.paragraph.contains("Together with"),
                "{seed} {feature}: {}",
                explained.paragraph
            );
        }
    }
}

/// Measurement run, not a check (`scripts/monte-carlo.sh rates`): coverage
/// of the fitting-inclusive and of the DeLong interval on the three coverage
/// designs of the single-feature scan.
#[test]
#[ignore = "Monte Carlo measurement; prints rates"]
fn monte_carlo_rates() {
    let designs: [(&str, Vec<Vec<f64>>, f64); 3] = [
        (
            "planted 4-level, Bayes AUC 0.75",
            vec![vec![0.4, 0.3, 0.2, 0.1], vec![0.1, 0.2, 0.3, 0.4]],
            0.75,
        ),
        ("noise, 6 levels", uniform(6), 0.5),
        ("noise, 40 levels", uniform(40), 0.5),
    ];
    let replicates = 1_000u64;
    for (name, shares, truth) in &designs {
        let (mut fitted, mut delong, mut ratio) = (0, 0, 0.0);
        for seed in 0..replicates {
            let mut rng = SplitMix64::new(50_000 + seed);
            let classes: Vec<u32> = (0..2_000)
                .map(|_| u32::from(rng.next_f64() < 0.3))
                .collect();
            let column = categorical("x", &classes, shares, &mut rng);
            let group = ProtectedAttribute::from_codes(
                "group".into(),
                vec!["a".into(), "b".into()],
                classes,
                0,
            );
            let options = ScanOptions {
                seed,
                whole_set: false,
                pairs: PairMode::None,
                ..ScanOptions::default()
            };
            let f = &scan_table(&table(group, vec![column]), &options, &Silent)[0].features[0];
            let auc = f.auc.unwrap();
            let covers = |low: f64, high: f64| low <= *truth && *truth <= high;
            fitted += usize::from(f.auc_low.zip(f.auc_high).is_some_and(|(l, h)| covers(l, h)));
            let se = f.auc_delong_se.unwrap();
            delong += usize::from(covers(auc - 1.959_964 * se, auc + 1.959_964 * se));
            ratio += f.auc_se.unwrap_or(f64::NAN) / se;
        }
        let n = replicates as f64;
        println!(
            "{name}: coverage fitting-inclusive {:.4}, DeLong {:.4}, mean se ratio {:.3} ({replicates} data sets)",
            fitted as f64 / n,
            delong as f64 / n,
            ratio / n
        );
    }
}

/// A Monte Carlo size from the environment variable `name`, else `default`.
fn count_from_env(name: &str, default: u64) -> u64 {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// Measurement run, not a check (`scripts/monte-carlo.sh false_flags`): the
/// false-flag rates on pure noise with 5, 10 and 20 minority rows in 2 000
/// (flags of features and pairs; the gate, i.e. exit 1, includes the
/// whole-set attacker, without ablation), with the minimum class size
/// switched off (the intervals alone), lowered to 10 and at its default;
/// `FALSE_FLAG_SEEDS` data sets each (default 20).
#[test]
#[ignore = "Monte Carlo measurement; prints rates"]
fn monte_carlo_false_flags() {
    let seeds = count_from_env("FALSE_FLAG_SEEDS", 20);
    for minority in [5, 10, 20] {
        for min_class in [0, 10, telltale::pipeline::DEFAULT_MIN_CLASS] {
            let (mut sets_flagged, mut gate_failed, mut flags, mut tests) = (0, 0, 0, 0);
            for seed in 0..seeds {
                let options = ScanOptions {
                    seed,
                    ablation: false,
                    min_class,
                    ..ScanOptions::default()
                };
                let report = noise_report(minority, 7_000 + seed, &options);
                let r = &report.results[0];
                let raised = |flag: Flag| matches!(flag, Flag::Proxy | Flag::Review);
                let n = r.features.iter().filter(|f| raised(f.flag)).count()
                    + r.pairs.iter().filter(|p| raised(p.flag)).count();
                flags += n;
                tests += r.features.len() + r.pairs.len();
                sets_flagged += usize::from(n > 0);
                gate_failed += usize::from(!gate_failures(&report).is_empty());
            }
            println!(
                "minority {minority}, --min-class {min_class}: data sets with a proxy/review flag {sets_flagged}/{seeds}, \
                 gate failed {gate_failed}/{seeds}, flags per feature-or-pair {:.5}",
                flags as f64 / tests as f64
            );
        }
    }
}
