//! Pure estimators of leakage and disparity: contingency tables, information
//! measures, AUC with DeLong intervals, balanced error rate, exact
//! and score intervals for rates, Fisher's exact test. No files, no terminal.

pub(crate) mod auc;
pub(crate) mod ber;
pub(crate) mod contingency;
pub(crate) mod disparity;
pub(crate) mod effect;
pub(crate) mod fisher;
pub(crate) mod fitting;
pub(crate) mod heldout;
pub(crate) mod information;
pub(crate) mod multiclass;
pub(crate) mod proportions;
mod ranks;
pub(crate) mod special;
pub(crate) mod tables;

pub use auc::{
    AucComparison, AucEstimate, auc_from_rating_table, auc_from_scores, auc_from_weighted_scores,
    delong, delong_compare, delong_rating_table, hanley_mcneil_se, roc_curve,
};
pub use ber::balanced_error_rate;
pub use contingency::Contingency;
pub use disparity::{AdverseImpact, Gap, Tally, adverse_impact, largest_gap};
pub use effect::{MeanDifference, standardized_mean_difference};
pub use fisher::fisher_exact_two_sided;
pub use fitting::FittedAuc;
pub use heldout::heldout_information;
pub use information::{InformationSummary, entropy, miller_madow_mutual_information, summarize};
pub use multiclass::{hand_till, macro_ovr, macro_ovr_compare};
pub use proportions::{Interval, clopper_pearson, katz_ratio, newcombe_difference, wilson};
pub use special::{normal_cdf, normal_quantile, two_sided_p_value};
pub use tables::{cramers_v, selection_rate_ratio, violates_four_fifths};
