//! The gate: what makes a screen fail, from the finished report alone. The
//! exit status of `scan` and a policy's `failing` list both come from here,
//! so they cannot disagree.

use crate::report::{Flag, Report};

/// Every reason the report fails its gate, as `protected/subject: reason`:
/// features flagged `proxy` without an active policy acceptance, and a
/// whole-set interval whose lower bound reaches
/// `settings.thresholds.whole_set_auc_low`. Empty means the screen passes.
#[must_use]
pub fn gate_failures(report: &Report) -> Vec<String> {
    let thresholds = report.settings.thresholds;
    report
        .results
        .iter()
        .flat_map(|result| {
            let proxies = result
                .features
                .iter()
                .filter(|f| f.flag == Flag::Proxy && !f.accepted.as_ref().is_some_and(|a| a.active))
                .map(move |f| {
                    format!(
                        "{}/{}: proxy, AUC lower bound {} ≥ {} and not accepted",
                        result.protected,
                        f.name,
                        f.auc_low
                            .map_or_else(|| "n/a".into(), |v| format!("{v:.3}")),
                        thresholds.proxy_auc_low
                    )
                });
            let whole = result
                .whole_set
                .as_ref()
                .filter(|w| w.auc_low >= thresholds.whole_set_auc_low)
                .map(|w| {
                    format!(
                        "{}/whole set: AUC lower bound {:.3} ≥ {}",
                        result.protected, w.auc_low, thresholds.whole_set_auc_low
                    )
                });
            proxies.chain(whole).collect::<Vec<_>>()
        })
        .collect()
}
