//! Flags, the power statement and the headline sentence.

use crate::report::{FeatureResult, Flag, PairResult, ProtectedResult, Thresholds, WholeSet};
use crate::stats::fitting::{POWER, detectable_auc};

/// The three-way flag rule (DESIGN §3, lines common practice), read off a
/// 95 % interval that includes the fitting variance: `proxy` when its lower
/// bound reaches `proxy_auc_low`, `review` when it reaches `review_auc_low`,
/// `clear` only when its upper bound is below `review_auc_low`; otherwise
/// (the interval straddles the review line, or is not estimable)
/// `unresolved`. The rule never looks at the number of levels. Shared by the
/// scan and by review policies.
#[must_use]
pub fn flag_for(auc_low: Option<f64>, auc_high: Option<f64>, t: &Thresholds) -> Flag {
    match (auc_low, auc_high) {
        (Some(low), Some(high)) if low < high => {
            if low >= t.proxy_auc_low {
                Flag::Proxy
            } else if low >= t.review_auc_low {
                Flag::Review
            } else if high < t.review_auc_low {
                Flag::Clear
            } else {
                Flag::Unresolved
            }
        }
        _ => Flag::Unresolved,
    }
}

/// The power statement of one attribute.
#[derive(Debug, Clone, PartialEq)]
pub struct Power {
    pub detectable_auc: Option<f64>,
    pub inflation: f64,
    pub statement: String,
}

/// Class sizes the power statement uses: the positive class (binary) or the
/// smallest class (multi-class, its one-vs-rest AUC), against all other rows.
#[must_use]
pub fn power_classes(counts: &[usize], positive: Option<usize>) -> (u64, u64) {
    let total: usize = counts.iter().sum();
    let small = positive
        .and_then(|p| counts.get(p).copied())
        .unwrap_or_else(|| counts.iter().copied().min().unwrap_or(0));
    (small as u64, (total - small) as u64)
}

/// The smallest AUC detectable at the review line with 80 % power
/// ([`detectable_auc`]), with `inflation` the measured fitting-variance factor.
#[must_use]
pub fn power(classes: (u64, u64), inflation: f64, t: &Thresholds) -> Power {
    let detectable = detectable_auc(t.review_auc_low, classes.0, classes.1, inflation, POWER);
    let statement = match detectable {
        Some(auc) => format!(
            "At these class sizes this screen detects a feature or pair with AUC {auc:.2} or more \
             with {:.0}% power (its 95% lower bound clearing the review line {:.2}; Hanley & McNeil \
             1982 standard error × {inflation:.2}, the measured fitting-variance factor).",
            100.0 * POWER,
            t.review_auc_low
        ),
        None => format!(
            "At these class sizes not even an AUC of 1 would clear the review line {:.2} with {:.0}% power.",
            t.review_auc_low,
            100.0 * POWER
        ),
    };
    Power {
        detectable_auc: detectable,
        inflation,
        statement,
    }
}

/// Why flags are withheld for an attribute whose smallest class has fewer
/// than `min_class` rows; `None` when they are issued.
#[must_use]
pub fn withheld_reason(smallest_class: usize, min_class: u64) -> Option<String> {
    ((smallest_class as u64) < min_class).then(|| {
        format!(
            "its smallest class has fewer than {min_class} rows (--min-class): too few for an \
             AUC of 0.80 to clear the review line with 80% power, so no AUC flag or gate is issued"
        )
    })
}

/// Why no removal plan is made for an attribute whose smallest class has
/// fewer than `min_class` rows; `None` when one is made. Below that size the
/// AUC after a removal cannot be told from noise, and a plan is advice to act.
#[must_use]
pub fn plan_withheld_reason(smallest_class: usize, min_class: u64) -> Option<String> {
    ((smallest_class as u64) < min_class).then(|| {
        format!(
            "its smallest class has fewer than {min_class} rows (--min-class), too few for the \
             AUC after a removal to be told apart from noise"
        )
    })
}

/// `0.63 (0.55–0.71)`, or `0.63 (interval not estimable)` for a missing or
/// zero-width interval.
#[must_use]
pub fn interval_text(auc: f64, low: Option<f64>, high: Option<f64>) -> String {
    match (low, high) {
        (Some(l), Some(h)) if l < h => format!("{auc:.2} ({l:.2}–{h:.2})"),
        _ => format!("{auc:.2} (interval not estimable)"),
    }
}

/// The whole-set clause of the headline, consistent with its interval.
fn whole_set_clause(protected: &str, w: &WholeSet, t: &Thresholds, named: &str) -> String {
    let text = interval_text(w.auc, Some(w.auc_low), Some(w.auc_high));
    match flag_for(Some(w.auc_low), Some(w.auc_high), t) {
        Flag::Proxy => format!(
            "Dropping `{protected}` does not hide it: the other features rebuild it with AUC {text}{named}."
        ),
        Flag::Review => format!(
            "Dropping `{protected}` only partly hides it: the other features rebuild it with AUC {text}{named}."
        ),
        Flag::Clear => format!(
            "With `{protected}` dropped, the other features recover it with AUC {text}, wholly below the review line {:.2}{named}.",
            t.review_auc_low
        ),
        Flag::Unresolved => format!(
            "With `{protected}` dropped, the other features recover it with AUC {text}: not resolved against the review line {:.2} with this data{named}.",
            t.review_auc_low
        ),
    }
}

/// The headline's clause on the single features flagged `proxy`, or, when
/// none is, `review`: so a flag in the table is never left out of the answer.
fn flagged_alone(features: &[FeatureResult]) -> String {
    let with = |flag: Flag| -> Vec<&str> {
        features
            .iter()
            .filter(|f| f.flag == flag)
            .map(|f| f.name.as_str())
            .collect()
    };
    let proxies = with(Flag::Proxy);
    if !proxies.is_empty() {
        return match proxies.as_slice() {
            [one] => format!("; `{one}` alone is a proxy"),
            many => format!("; {} features are proxies on their own", many.len()),
        };
    }
    match with(Flag::Review).as_slice() {
        [] => String::new(),
        [one] => format!("; `{one}` alone is flagged for review"),
        many => format!(
            "; {} features are flagged for review on their own",
            many.len()
        ),
    }
}

/// The one-sentence answer to "does dropping the attribute hide it?",
/// followed by the power statement when nothing is flagged, or by the
/// reason when flags are withheld.
#[must_use]
pub fn headline(
    result: &ProtectedResult,
    features: &[FeatureResult],
    pairs: &[PairResult],
    thresholds: &Thresholds,
) -> String {
    let protected = result.protected.as_str();
    if let Some(reason) = &result.flags_withheld {
        return format!("No flags for `{protected}`: {reason}.");
    }
    let named = flagged_alone(features);
    let whole = result.whole_set.as_ref();
    let mut text = match whole {
        Some(w) => whole_set_clause(protected, w, thresholds, &named),
        None => format!("Whole-set attack on `{protected}` not run{named}."),
    };
    let flagged = |flag: Flag| matches!(flag, Flag::Proxy | Flag::Review);
    let whole_flagged =
        whole.is_some_and(|w| flagged(flag_for(Some(w.auc_low), Some(w.auc_high), thresholds)));
    let nothing_flagged = !whole_flagged
        && !features.iter().any(|f| flagged(f.flag))
        && !pairs.iter().any(|p| flagged(p.flag));
    if nothing_flagged {
        text.push_str(" Nothing is flagged. ");
        text.push_str(&result.power_statement);
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::WholeSet;

    const LINES: Thresholds = Thresholds {
        proxy_auc_low: 0.70,
        review_auc_low: 0.60,
        whole_set_auc_low: 0.70,
    };

    #[test]
    fn three_way_flags_follow_the_interval() {
        // DESIGN §3 rule (lines common practice).
        let flag = |low, high| flag_for(Some(low), Some(high), &LINES);
        assert_eq!(flag(0.71, 0.80), Flag::Proxy);
        assert_eq!(flag(0.60, 0.80), Flag::Review);
        assert_eq!(flag(0.45, 0.599), Flag::Clear);
        assert_eq!(flag(0.55, 0.65), Flag::Unresolved);
        assert_eq!(flag(0.27, 0.98), Flag::Unresolved);
        assert_eq!(flag(0.5, 0.5), Flag::Unresolved);
        assert_eq!(flag_for(None, None, &LINES), Flag::Unresolved);
    }

    #[test]
    fn interval_text_marks_zero_width_as_not_estimable() {
        assert_eq!(
            interval_text(0.5, Some(0.5), Some(0.5)),
            "0.50 (interval not estimable)"
        );
        assert_eq!(
            interval_text(0.63, Some(0.27), Some(0.98)),
            "0.63 (0.27–0.98)"
        );
    }

    fn whole_set(auc: f64, low: f64, high: f64) -> WholeSet {
        WholeSet {
            auc,
            auc_low: low,
            auc_high: high,
            auc_se: (high - low) / 3.92,
            ber: 0.4,
            hand_till: None,
            surrogate: "boosted".to_string(),
            features_used: 3,
            roc: None,
            drop_one: Vec::new(),
            removal_plan: Vec::new(),
            target_reached: false,
            ablation: false,
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
            outcome: None,
            protected_auc_within_outcome: None,
            frontier: Vec::new(),
            recommended_within_tolerance: None,
            outcome_refits: 0,
        }
    }

    fn result(whole: WholeSet) -> ProtectedResult {
        let power = power((30, 1970), 1.3, &LINES);
        ProtectedResult {
            protected: "group".to_string(),
            kind: "binary".to_string(),
            levels: Vec::new(),
            positive: None,
            entropy_nats: 0.1,
            headline: String::new(),
            detectable_auc: power.detectable_auc,
            fitting_inflation: Some(power.inflation),
            power_statement: power.statement,
            flags_withheld: None,
            features: Vec::new(),
            pairs: Vec::new(),
            whole_set: Some(whole),
        }
    }

    #[test]
    fn headline_never_calls_a_straddling_interval_below_the_line() {
        // AUC 0.63 (0.27–0.98): the point is above the review line and the
        // interval reaches both sides, so the sentence must say unresolved.
        let r = result(whole_set(0.63, 0.27, 0.98));
        let text = headline(&r, &[], &[], &LINES);
        assert!(text.contains("0.63 (0.27–0.98)"), "{text}");
        assert!(text.contains("not resolved"), "{text}");
        assert!(!text.contains("below"), "{text}");
        // Nothing flagged: the power statement follows.
        assert!(
            text.contains("Nothing is flagged") && text.contains("80% power"),
            "{text}"
        );
        let clear = headline(&result(whole_set(0.52, 0.50, 0.55)), &[], &[], &LINES);
        assert!(clear.contains("wholly below the review line"), "{clear}");
        let degenerate = headline(&result(whole_set(0.5, 0.5, 0.5)), &[], &[], &LINES);
        assert!(
            degenerate.contains("interval not estimable"),
            "{degenerate}"
        );
        let proxy = headline(&result(whole_set(0.9, 0.88, 0.92)), &[], &[], &LINES);
        assert!(proxy.contains("does not hide it") && !proxy.contains("Nothing is flagged"));
    }

    #[test]
    fn headline_names_a_review_feature_when_the_whole_set_is_unresolved() {
        // The attacker on all features at 0.62 (0.59–0.65) is unresolved, while
        // one feature alone clears the review line: the headline says both.
        let r = result(whole_set(0.62, 0.59, 0.65));
        let mut feature = crate::report::sample::sample_report().results[0].features[0].clone();
        feature.name = "region".to_string();
        feature.flag = Flag::Review;
        let text = headline(&r, &[feature.clone()], &[], &LINES);
        assert!(text.contains("not resolved"), "{text}");
        assert!(
            text.contains("`region` alone is flagged for review"),
            "{text}"
        );
        assert!(!text.contains("Nothing is flagged"), "{text}");
        feature.flag = Flag::Proxy;
        let text = headline(&r, &[feature], &[], &LINES);
        assert!(text.contains("`region` alone is a proxy"), "{text}");
    }

    #[test]
    fn default_minimum_class_comes_from_the_power_calculation() {
        // The documented derivation: the smallest class at which an AUC of
        // 0.80 clears the review line 0.60 with 80% power (factor 1.4).
        let derived = crate::stats::fitting::min_class_size(
            0.80,
            0.60,
            crate::stats::fitting::DEFAULT_INFLATION,
            POWER,
        );
        assert_eq!(derived, super::super::DEFAULT_MIN_CLASS);
    }

    #[test]
    fn withheld_attributes_never_fail_the_gate() {
        let mut flagged = result(whole_set(0.9, 0.88, 0.92));
        flagged
            .features
            .push(crate::report::sample::sample_report().results[0].features[0].clone());
        flagged.features[0].flag = Flag::Proxy;
        let mut report = crate::report::sample::sample_report();
        report.results = vec![flagged];
        assert_eq!(crate::review::gate::gate_failures(&report).len(), 2);
        report.results[0].flags_withheld = withheld_reason(5, 28);
        assert!(crate::review::gate::gate_failures(&report).is_empty());
    }

    #[test]
    fn withheld_only_below_the_minimum_class() {
        assert!(withheld_reason(27, 28).is_some());
        assert!(withheld_reason(28, 28).is_none());
    }
}
