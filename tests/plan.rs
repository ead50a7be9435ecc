//! Drop-one ablation, the removal plan and the attacker's joint columns on
//! seeded data whose generating model is known: which features carry the
//! protected attribute, which are copies of each other, which are noise.

use telltale::data::demo::SplitMix64;
use telltale::data::encode::{encode_levels, encode_numeric};
use telltale::data::{EncodedColumn, EncodedTable, FeatureKind, ProtectedAttribute};
use telltale::pipeline::{ScanOptions, Silent, scan_table};
use telltale::report::{ProtectedResult, WholeSet};

fn table(community: &[u32], features: Vec<EncodedColumn>) -> EncodedTable {
    EncodedTable {
        source_rows: community.len(),
        features,
        protected: vec![ProtectedAttribute::from_codes(
            "community".to_string(),
            vec!["a".to_string(), "b".to_string()],
            community.to_vec(),
            0,
        )],
        skipped: Vec::new(),
        missing_tokens: Vec::new(),
        readings: Vec::new(),
        outcome: None,
    }
}

fn categorical(name: &str, values: &[usize]) -> EncodedColumn {
    let labels: Vec<String> = values.iter().map(|v| format!("L{v:03}")).collect();
    encode_levels(
        name,
        FeatureKind::Categorical,
        labels.iter().map(|s| Some(s.as_str())),
    )
}

/// Draws class 1 with probability `share`.
fn classes(rng: &mut SplitMix64, rows: usize, share: f64) -> Vec<u32> {
    (0..rows)
        .map(|_| u32::from(rng.next_f64() < share))
        .collect()
}

/// A normal column whose mean is `shift` standard deviations higher for class 1.
fn shifted(rng: &mut SplitMix64, community: &[u32], shift: f64) -> Vec<f64> {
    community
        .iter()
        .map(|&g| rng.normal() + shift * f64::from(g))
        .collect()
}

fn whole(results: &[ProtectedResult]) -> &WholeSet {
    results[0].whole_set.as_ref().expect("whole set")
}

/// The features the plan removes, in order, after checking that every step
/// lowers the AUC it started from and starts where the previous one ended.
fn planned_removals(whole: &WholeSet) -> Vec<&str> {
    let mut before = whole.auc;
    for step in &whole.removal_plan {
        assert_eq!(step.auc_before, Some(before), "{step:?}");
        assert!(step.auc_after < before, "step raised the AUC: {step:?}");
        before = step.auc_after;
    }
    whole
        .removal_plan
        .iter()
        .flat_map(|s| s.features.iter().map(String::as_str))
        .collect()
}

#[test]
fn redundant_proxies_are_removed_together() {
    // Generating model: six regions, Valic ("b") applicants mostly in the
    // first two; 30 branches, five per region, drawn uniformly within the
    // region. So `branch` determines `region` and carries nothing more about
    // the community: each rebuilds the other's signal, and removing either
    // alone leaves the attacker the other. Two weak numeric proxies (0.3 sd)
    // and three noise columns complete the set.
    let mut rng = SplitMix64::new(7);
    let rows = 4_000;
    let community = classes(&mut rng, rows, 0.3);
    let region: Vec<usize> = community
        .iter()
        .map(|&g| {
            let favoured = rng.next_f64() < if g == 1 { 0.75 } else { 0.15 };
            if favoured {
                rng.below(2)
            } else {
                2 + rng.below(4)
            }
        })
        .collect();
    let branch: Vec<usize> = region.iter().map(|&r| 5 * r + rng.below(5)).collect();
    let features = vec![
        categorical("region", &region),
        categorical("branch", &branch),
        encode_numeric("weak_1", shifted(&mut rng, &community, 0.3), 32),
        encode_numeric("weak_2", shifted(&mut rng, &community, 0.3), 32),
        encode_numeric("noise_1", shifted(&mut rng, &community, 0.0), 32),
        categorical(
            "noise_2",
            &(0..rows).map(|_| rng.below(8)).collect::<Vec<_>>(),
        ),
        encode_numeric("noise_3", shifted(&mut rng, &community, 0.0), 32),
    ];
    let results = scan_table(
        &table(&community, features),
        &ScanOptions::default(),
        &Silent,
    );
    let whole = whole(&results);
    let removed = planned_removals(whole);
    assert!(
        removed.contains(&"region") && removed.contains(&"branch"),
        "plan {:?}",
        whole.removal_plan
    );
    assert!(whole.target_reached, "plan {:?}", whole.removal_plan);
    // The pair is reported as a redundancy group: removing it together costs
    // far more than removing either member alone (each alone is within the
    // noise of a refit; together they take the regional signal, whose Bayes
    // AUC alone is 0.5 + (0.75 − 0.15)/2 = 0.80).
    let group = whole
        .redundancy_groups
        .iter()
        .find(|g| g.features.contains(&"region".to_string()))
        .expect("region's redundancy group");
    let mut members = group.features.clone();
    members.sort_unstable();
    assert_eq!(members, ["branch", "region"]);
    let alone = group
        .auc_without_each
        .iter()
        .map(|a| a.expect("each member refitted"))
        .fold(f64::INFINITY, f64::min);
    assert!(
        alone - group.auc_without_group.auc > 0.05,
        "group {group:?}, whole {}",
        whole.auc
    );
}

#[test]
fn an_additive_signal_needing_eight_removals_reaches_the_target() {
    // Eight independent proxies, each shifted by 0.7 sd: one alone has Bayes
    // AUC Φ(0.7/√2) = 0.69, well above the 0.60 target even for an attacker
    // that overfits a little, so the target needs all eight removed; two
    // noise columns stay. At 3,000 rows a one-feature AUC's DeLong se is
    // about 0.011.
    let mut rng = SplitMix64::new(3);
    let rows = 3_000;
    let community = classes(&mut rng, rows, 0.4);
    let mut features: Vec<EncodedColumn> = (1..=8)
        .map(|j| encode_numeric(&format!("part_{j}"), shifted(&mut rng, &community, 0.7), 32))
        .collect();
    features.push(encode_numeric(
        "noise_a",
        shifted(&mut rng, &community, 0.0),
        32,
    ));
    features.push(categorical(
        "noise_b",
        &(0..rows).map(|_| rng.below(5)).collect::<Vec<_>>(),
    ));
    let results = scan_table(
        &table(&community, features),
        &ScanOptions::default(),
        &Silent,
    );
    let whole = whole(&results);
    assert!(whole.target_reached, "plan {:?}", whole.removal_plan);
    let mut removed = planned_removals(whole);
    removed.sort_unstable();
    let parts: Vec<String> = (1..=8).map(|j| format!("part_{j}")).collect();
    assert_eq!(removed, parts, "plan {:?}", whole.removal_plan);
}

#[test]
fn a_feature_no_model_uses_gets_its_drop_one_value_without_a_refit() {
    // `rare` has a second level on 10 of 3,000 rows: no split may leave fewer
    // than 20 rows in a leaf (min_samples_leaf, scikit-learn's default), so
    // no fold's attacker ever splits on it.
    let mut rng = SplitMix64::new(11);
    let rows = 3_000;
    let community = classes(&mut rng, rows, 0.3);
    let rare: Vec<usize> = (0..rows).map(|r| usize::from(r % 300 == 0)).collect();
    let features = vec![
        encode_numeric("signal", shifted(&mut rng, &community, 1.0), 32),
        categorical("rare", &rare),
        encode_numeric("noise", shifted(&mut rng, &community, 0.0), 32),
    ];
    // A target above any AUC is reached at once: no plan step refits.
    let options = ScanOptions {
        target_auc: 1.01,
        ..ScanOptions::default()
    };
    let results = scan_table(&table(&community, features), &options, &Silent);
    let whole = whole(&results);
    let rare = whole
        .drop_one
        .iter()
        .find(|d| d.feature == "rare")
        .expect("rare in drop-one");
    assert!(!rare.refit);
    assert_eq!((rare.auc, rare.delta), (whole.auc, 0.0));
    assert!(whole.removal_plan.is_empty());
    // One refit each for `signal` and `noise`, none for `rare`.
    assert_eq!(whole.refits, 2, "{:?}", whole.drop_one);
    assert_eq!(whole.drop_one.iter().filter(|d| d.refit).count(), 2);
}

#[test]
fn noise_builds_no_joint_column() {
    // 24 columns independent of the community (6- and 40-level categoricals
    // and numerics), 2,000 rows: no pair leaks jointly, so no training fold
    // may hand the attacker a joint column. Four seeds.
    for seed in 0..4 {
        let mut rng = SplitMix64::new(100 + seed);
        let rows = 2_000;
        let community = classes(&mut rng, rows, 0.3);
        let features: Vec<EncodedColumn> = (0..24)
            .map(|j| {
                let name = format!("noise_{j:02}");
                match j % 3 {
                    0 => categorical(&name, &(0..rows).map(|_| rng.below(6)).collect::<Vec<_>>()),
                    1 => categorical(&name, &(0..rows).map(|_| rng.below(40)).collect::<Vec<_>>()),
                    _ => encode_numeric(&name, shifted(&mut rng, &community, 0.0), 32),
                }
            })
            .collect();
        let options = ScanOptions {
            ablation: false,
            ..ScanOptions::default()
        };
        let results = scan_table(&table(&community, features), &options, &Silent);
        assert!(
            whole(&results).joint_columns.is_empty(),
            "seed {seed}: {:?}",
            whole(&results).joint_columns
        );
    }
}

#[test]
fn with_an_outcome_the_plan_removes_the_proxy_that_costs_nothing_first() {
    // Generating model: `pure` is shifted by 1.0 sd for class b and nothing
    // else; `useful` by 1.2 sd, and the outcome's log-odds are 1.5·useful, so
    // given `useful` the outcome is independent of `pure`. Alone, `useful`
    // leaks more (Bayes AUC Φ(1.2/√2) = 0.80 against Φ(1/√2) = 0.76), so
    // without an outcome the plan removes it first; with the outcome,
    // removing it costs most of the outcome AUC while removing `pure` costs
    // nothing, so `pure` goes first. Two noise columns carry no leakage and
    // are never removed. 4,000 rows: a one-feature AUC's se is about 0.01,
    // far below the gaps above.
    let mut rng = SplitMix64::new(21);
    let rows = 4_000;
    let community = classes(&mut rng, rows, 0.3);
    let pure = shifted(&mut rng, &community, 1.0);
    let useful = shifted(&mut rng, &community, 1.2);
    let approved: Vec<u32> = useful
        .iter()
        .map(|&u| u32::from(rng.next_f64() < 1.0 / (1.0 + (-1.5 * u).exp())))
        .collect();
    let features = vec![
        encode_numeric("pure", pure, 32),
        encode_numeric("useful", useful, 32),
        encode_numeric("noise_1", shifted(&mut rng, &community, 0.0), 32),
        categorical(
            "noise_2",
            &(0..rows).map(|_| rng.below(6)).collect::<Vec<_>>(),
        ),
    ];
    let mut data = table(&community, features);
    let options = ScanOptions::default();
    let without_outcome = scan_table(&data, &options, &Silent);
    assert_eq!(
        planned_removals(whole(&without_outcome)),
        ["useful", "pure"],
        "plan {:?}",
        whole(&without_outcome).removal_plan
    );
    data.outcome = Some(ProtectedAttribute::from_codes(
        "approved".to_string(),
        vec!["0".to_string(), "1".to_string()],
        approved,
        0,
    ));
    let with_outcome = scan_table(&data, &options, &Silent);
    let whole = whole(&with_outcome);
    assert_eq!(
        planned_removals(whole),
        ["pure", "useful"],
        "plan {:?}",
        whole.removal_plan
    );
    // Every step states the outcome AUC left, and the frontier holds the
    // full set and every step's set with the same leakage AUCs.
    assert_eq!(whole.frontier.len(), whole.removal_plan.len() + 1);
    for (step, point) in whole.removal_plan.iter().zip(&whole.frontier[1..]) {
        let (low, auc, high) = (
            step.outcome_auc_low.expect("outcome interval"),
            step.outcome_auc_after.expect("outcome AUC"),
            step.outcome_auc_high.expect("outcome interval"),
        );
        assert!(low <= auc && auc <= high, "{step:?}");
        assert_eq!(
            (point.leakage.auc, point.outcome.auc),
            (step.auc_after, auc)
        );
    }
    // Removing `pure` keeps the outcome AUC within the default tolerance;
    // removing `useful` too does not, so the named set is the first step's.
    let full = whole.frontier[0].outcome.auc;
    let named = whole
        .recommended_within_tolerance
        .as_ref()
        .expect("a named set");
    assert_eq!(named.removed, ["pure"], "frontier {:?}", whole.frontier);
    assert!(named.outcome.auc >= full - options.max_utility_loss);
}
