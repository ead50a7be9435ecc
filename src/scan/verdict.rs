//! Flags and the headline sentence.

use crate::report::{FeatureResult, Flag, Thresholds, WholeSet};

/// The flag rule (DESIGN §3, thresholds common practice): `proxy` when the AUC
/// interval's lower bound reaches `proxy_auc_low`; `review` when it reaches
/// `review_auc_low` or AMI reaches `review_ami`; otherwise `clear`. A missing
/// AUC judges on AMI alone. Shared by the scan and by review policies.
#[must_use]
pub fn flag_for(auc_low: Option<f64>, ami: f64, t: &Thresholds) -> Flag {
    let reaches = |limit: f64| auc_low.is_some_and(|low| low >= limit);
    if reaches(t.proxy_auc_low) {
        Flag::Proxy
    } else if reaches(t.review_auc_low) || ami >= t.review_ami {
        Flag::Review
    } else {
        Flag::Clear
    }
}

/// The pair rule: pairs carry no AMI, so they are judged on their AUC
/// interval alone. Shared by the pair scan and by review policies.
#[must_use]
pub fn pair_flag(auc_low: f64, t: &Thresholds) -> Flag {
    flag_for(Some(auc_low), f64::NEG_INFINITY, t)
}

/// The one-sentence answer to "does dropping the attribute hide it?".
#[must_use]
pub fn headline(
    protected: &str,
    whole: Option<&WholeSet>,
    features: &[FeatureResult],
    thresholds: &Thresholds,
) -> String {
    let proxies: Vec<&str> = features
        .iter()
        .filter(|f| f.flag == Flag::Proxy)
        .map(|f| f.name.as_str())
        .collect();
    let named = match proxies.as_slice() {
        [] => String::new(),
        [one] => format!("; `{one}` alone is a proxy"),
        many => format!("; {} features are proxies on their own", many.len()),
    };
    match whole {
        Some(w) if w.auc_low >= thresholds.proxy_auc_low => format!(
            "Dropping `{protected}` does not hide it: the other features rebuild it with AUC {:.2} ({:.2}–{:.2}){named}.",
            w.auc, w.auc_low, w.auc_high
        ),
        Some(w) if w.auc_low >= thresholds.review_auc_low => format!(
            "Dropping `{protected}` only partly hides it: the other features rebuild it with AUC {:.2} ({:.2}–{:.2}){named}.",
            w.auc, w.auc_low, w.auc_high
        ),
        Some(w) => format!(
            "With `{protected}` dropped, the other features recover it with AUC {:.2} ({:.2}–{:.2}), below the review threshold{named}.",
            w.auc, w.auc_low, w.auc_high
        ),
        None => format!("Whole-set attack on `{protected}` not run{named}."),
    }
}
