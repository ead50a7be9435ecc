//! Pure estimators of leakage and disparity: contingency tables, information
//! measures, AUC with DeLong intervals, balanced error rate, bootstrap, exact
//! and score intervals for rates, Fisher's exact test. No files, no terminal.

pub mod auc;
pub mod ber;
pub mod bootstrap;
pub mod contingency;
pub mod disparity;
pub mod effect;
pub mod fisher;
pub mod fitting;
pub mod heldout;
pub mod information;
pub mod multiclass;
pub mod proportions;
mod ranks;
pub mod special;
pub mod tables;

pub use auc::{
    AucComparison, AucEstimate, auc_from_rating_table, auc_from_scores, auc_from_weighted_scores,
    compare_independent, delong, delong_compare, delong_rating_table, hanley_mcneil_se, roc_curve,
};
pub use ber::{balanced_error_rate, ber_at_threshold, min_ber};
pub use bootstrap::{bca_interval, jackknife_acceleration, percentile_interval};
pub use contingency::Contingency;
pub use heldout::heldout_information;
pub use information::{
    InformationSummary, NATS_PER_BIT, adjusted_mutual_information, entropy,
    expected_mutual_information, miller_madow_entropy, miller_madow_mutual_information,
    mutual_information, normalized_mutual_information, summarize,
};
pub use multiclass::{hand_till, macro_ovr, macro_ovr_compare};
pub use special::{normal_cdf, normal_quantile, two_sided_p_value};
pub use tables::{
    ChiSquareTest, chi_square_test, cramers_v, g_test, selection_rate_ratio, violates_four_fifths,
};
