//! The built-in demo: loan applications at *Lanternfield Mutual*, a fictional
//! credit union in the invented Vell Valley, where applicants belong to one of
//! two (invented) language communities, Osmeric and Valic. The protected
//! attribute is `community`; the generator plants features of known strength:
//!
//! | column | role |
//! |---|---|
//! | `branch_area` | strong categorical proxy: branches serve mostly one community |
//! | `commute_km` | weak numeric proxy: shifted by 0.3 standard deviations |
//! | `application_ref` | identifier-like: unique per row, no signal |
//! | `rate_type`, `contact_channel` | leak only jointly: each is independent of `community`, their agreement is not |
//! | `months_at_address` | missing far more often for one community; values themselves carry nothing |
//! | `loan_amount`, `term_months`, `has_guarantor`, `product`, `noise_NN` | noise |
//! | `income_k` | independent of `community`; predicts the outcome |
//! | `approved` | the outcome: depends on `community`, `income_k` and `commute_km` |
//!
//! Every row is drawn given its community, so the true log-likelihood ratio of
//! each row is known; [`DemoData::true_log_odds`] is the Bayes score, whose AUC
//! is the best any attacker can reach.

/// The generator behind the demo's draws, public so that simulations can
/// reproduce them.
pub use crate::rng::SplitMix64;
use polars::prelude::{Column, DataFrame, DataType, NamedFrom, Series};

/// Share of applicants in the minority community (Valic).
pub const MINORITY_SHARE: f64 = 0.3;
/// Mean shift of `commute_km` between communities, in standard deviations.
pub const COMMUTE_SHIFT_SD: f64 = 0.3;
/// P(rate type and channel disagree | community): Valic, Osmeric.
pub const DISAGREE: [f64; 2] = [0.15, 0.85];
/// P(months_at_address missing | community): Osmeric, Valic.
pub const MISSING_ADDRESS: [f64; 2] = [0.05, 0.40];

const TOWNS: [&str; 8] = [
    "Ashcombe",
    "Brindle Cross",
    "Corrowmere",
    "Dunhallow",
    "Elsworth Vale",
    "Farrowgate",
    "Greyholm",
    "Harlow Fen",
];
const PRODUCTS: [&str; 5] = [
    "home-improvement",
    "vehicle",
    "consolidation",
    "education",
    "small-business",
];

/// Generated rows plus what the generator knows about them.
pub struct DemoData {
    pub frame: DataFrame,
    /// ln P(features | Valic) − ln P(features | Osmeric) for every row.
    pub true_log_odds: Vec<f64>,
    /// The true log-odds of `approved` for every row (see [`APPROVAL_LOG_ODDS`]).
    pub approval_log_odds: Vec<f64>,
}

/// Settings of the generator.
#[derive(Debug, Clone, Copy)]
pub struct DemoSpec {
    pub rows: usize,
    pub seed: u64,
    /// Extra pure-noise numeric columns `noise_01`… (for wide benchmarks).
    pub extra_noise: usize,
}

impl Default for DemoSpec {
    fn default() -> Self {
        Self {
            rows: 20_000,
            seed: 0,
            extra_noise: 0,
        }
    }
}

/// Branch-area weights given community: 40 branches, 5 in each town; Valic
/// applicants use mostly the first 12, Osmeric ones mostly the rest.
fn area_weights() -> [Vec<f64>; 2] {
    let osmeric: Vec<f64> = (0..40).map(|i| if i < 12 { 0.2 } else { 1.0 }).collect();
    let valic: Vec<f64> = (0..40).map(|i| if i < 12 { 2.0 } else { 0.1 }).collect();
    [normalise(osmeric), normalise(valic)]
}

fn normalise(weights: Vec<f64>) -> Vec<f64> {
    let total: f64 = weights.iter().sum();
    weights.into_iter().map(|w| w / total).collect()
}

fn area_name(index: usize) -> String {
    format!("{} {}", TOWNS[index / 5], index % 5 + 1)
}

/// Draws an index with probability proportional to `weights` (which sum to 1)
/// by inverting their cumulative sum.
#[must_use]
pub fn draw(rng: &mut SplitMix64, weights: &[f64]) -> usize {
    let u = rng.next_f64();
    let mut cumulative = 0.0;
    for (i, w) in weights.iter().enumerate() {
        cumulative += w;
        if u < cumulative {
            return i;
        }
    }
    weights.len() - 1
}

/// Generates the demo dataset.
#[must_use]
pub fn generate(spec: DemoSpec) -> DemoData {
    let mut rng = SplitMix64::new(spec.seed);
    let areas = area_weights();
    let n = spec.rows;
    let mut community = Vec::with_capacity(n);
    let mut branch = Vec::with_capacity(n);
    let mut commute = Vec::with_capacity(n);
    let mut rate = Vec::with_capacity(n);
    let mut channel = Vec::with_capacity(n);
    let mut months: Vec<Option<i64>> = Vec::with_capacity(n);
    let mut log_odds = Vec::with_capacity(n);
    for _ in 0..n {
        let g = usize::from(rng.next_f64() < MINORITY_SHARE);
        let area = draw(&mut rng, &areas[g]);
        let z = rng.normal();
        let km = 14.0 + 5.0 * (z - COMMUTE_SHIFT_SD * g as f64);
        let fixed = rng.next_f64() < 0.5;
        let disagree = rng.next_f64() < DISAGREE[1 - g];
        let missing = rng.next_f64() < MISSING_ADDRESS[g];
        let stay = 1 + rng.below(240) as i64;
        community.push(if g == 1 { "Valic" } else { "Osmeric" });
        branch.push(area_name(area));
        commute.push((km * 10.0).round() / 10.0);
        rate.push(if fixed { "fixed" } else { "variable" });
        channel.push(if fixed != disagree {
            "branch"
        } else {
            "online"
        });
        months.push((!missing).then_some(stay));
        log_odds.push(bayes_log_odds(&areas, area, km, disagree, missing));
    }
    let mut refs: Vec<usize> = (0..n).collect();
    rng.shuffle(&mut refs);
    let mut columns = vec![
        text_column("community", &community),
        text_column("branch_area", &branch),
        Column::from(Series::new("commute_km".into(), commute.clone())),
        text_column(
            "application_ref",
            &refs
                .iter()
                .map(|r| format!("LM-{:07}", 1_000_003 + 7 * r))
                .collect::<Vec<_>>(),
        ),
        text_column("rate_type", &rate),
        text_column("contact_channel", &channel),
        Column::from(Series::new("months_at_address".into(), months)),
    ];
    columns.extend(noise_columns(&mut rng, n, spec.extra_noise));
    let outcome = outcome_columns(spec.seed, &community, &commute);
    columns.extend(outcome.columns);
    DemoData {
        frame: DataFrame::new_infer_height(columns).unwrap_or_default(),
        true_log_odds: log_odds,
        approval_log_odds: outcome.log_odds,
    }
}

/// Log-odds of approval: intercept, the Valic shift (a disadvantage in the
/// historical decisions), per standard deviation of `income_k`, and per
/// kilometre of `commute_km` above 14.
pub const APPROVAL_LOG_ODDS: [f64; 4] = [0.6, -0.9, 0.9, -0.06];

/// The outcome and the feature that predicts it independently of `community`.
struct OutcomeColumns {
    columns: Vec<Column>,
    log_odds: Vec<f64>,
}

/// Draws `income_k` (independent of `community`) and `approved` from their own
/// stream, so the other columns are the same for a seed with or without them.
/// `branch_area` predicts approval only through `community` (a pure proxy),
/// `income_k` only by itself, `commute_km` both ways.
fn outcome_columns(seed: u64, community: &[&str], commute: &[f64]) -> OutcomeColumns {
    let mut rng = SplitMix64::new(seed ^ 0x005E_ED0F_0A11);
    let [intercept, valic, per_income_sd, per_km] = APPROVAL_LOG_ODDS;
    let mut income = Vec::with_capacity(community.len());
    let mut approved = Vec::with_capacity(community.len());
    let mut log_odds = Vec::with_capacity(community.len());
    for (&group, &km) in community.iter().zip(commute) {
        let z = rng.normal();
        let eta = intercept
            + valic * f64::from(u8::from(group == "Valic"))
            + per_income_sd * z
            + per_km * (km - 14.0);
        income.push(((48.0 + 11.0 * z) * 10.0).round() / 10.0);
        approved.push(i64::from(rng.next_f64() < 1.0 / (1.0 + (-eta).exp())));
        log_odds.push(eta);
    }
    OutcomeColumns {
        columns: vec![
            Column::from(Series::new("income_k".into(), income)),
            Column::from(Series::new("approved".into(), approved)),
        ],
        log_odds,
    }
}

fn text_column<S: AsRef<str>>(name: &str, values: &[S]) -> Column {
    let values: Vec<&str> = values.iter().map(AsRef::as_ref).collect();
    Column::from(Series::new(name.into(), values))
}

fn noise_columns(rng: &mut SplitMix64, n: usize, extra: usize) -> Vec<Column> {
    // Whole numbers are stored as integers, so the CSV reads `186`, not `186.0`.
    let amount: Vec<i64> = (0..n)
        .map(|_| (9.0 + 0.6 * rng.normal()).exp().round() as i64)
        .collect();
    let term: Vec<i64> = (0..n).map(|_| 12 * (1 + rng.below(5)) as i64).collect();
    let guarantor: Vec<&str> = (0..n)
        .map(|_| if rng.next_f64() < 0.2 { "yes" } else { "no" })
        .collect();
    let product: Vec<&str> = (0..n)
        .map(|_| PRODUCTS[rng.below(PRODUCTS.len())])
        .collect();
    let mut columns = vec![
        Column::from(Series::new("loan_amount".into(), amount)),
        Column::from(Series::new("term_months".into(), term)),
        text_column("has_guarantor", &guarantor),
        text_column("product", &product),
    ];
    columns.extend((1..=extra).map(|k| {
        let values: Vec<f64> = (0..n)
            .map(|_| (rng.normal() * 1000.0).round() / 1000.0)
            .collect();
        Column::from(Series::new(format!("noise_{k:02}").into(), values))
    }));
    columns
}

/// The exact log-likelihood ratio of a row (Valic vs Osmeric) under the generator.
fn bayes_log_odds(
    areas: &[Vec<f64>; 2],
    area: usize,
    km: f64,
    disagree: bool,
    missing: bool,
) -> f64 {
    let area_term = (areas[1][area] / areas[0][area]).ln();
    // Normal densities with equal variance: ln f1/f0 = (μ1−μ0)(x − (μ0+μ1)/2)/σ².
    let (mu0, mu1, sd) = (14.0, 14.0 - 5.0 * COMMUTE_SHIFT_SD, 5.0);
    let commute_term = (mu1 - mu0) * (km - (mu0 + mu1) / 2.0) / (sd * sd);
    let p_disagree = |g: usize| {
        if disagree {
            DISAGREE[1 - g]
        } else {
            1.0 - DISAGREE[1 - g]
        }
    };
    let pair_term = (p_disagree(1) / p_disagree(0)).ln();
    let p_missing = |g: usize| {
        if missing {
            MISSING_ADDRESS[g]
        } else {
            1.0 - MISSING_ADDRESS[g]
        }
    };
    let missing_term = (p_missing(1) / p_missing(0)).ln();
    area_term + commute_term + pair_term + missing_term
}

/// Branches 0–11 (Ashcombe, Brindle Cross and Corrowmere 1–2), used mostly by
/// Valic applicants: the demo's scoring model penalises them.
const PENALISED_BRANCHES: usize = 12;
/// The scoring model's penalty on those branches, on the log-odds scale;
/// repayment itself does not depend on the branch.
pub const BRANCH_PENALTY: f64 = 0.8;
/// Approved when the score reaches this.
pub const APPROVAL_THRESHOLD: f64 = 0.75;

/// Log-odds of repayment under the demo's planted outcome model: a
/// guarantor helps, a larger loan (in sd of ln amount) hurts, a known
/// address helps. Nothing here depends on the community.
fn repayment_log_odds(guarantor: bool, ln_amount: f64, address_known: bool) -> f64 {
    1.2 + 0.9 * f64::from(u8::from(guarantor)) - 0.6 * (ln_amount - 9.0) / 0.6
        + 0.5 * f64::from(u8::from(address_known))
}

fn logistic(x: f64) -> f64 {
    1.0 / (1.0 + (-x).exp())
}

/// Adds what a trained model and a later review would have to the demo data:
/// `approval_score` (the model's probability of repayment, 4 decimals),
/// `approved` (1 when the score is at least [`APPROVAL_THRESHOLD`]) and
/// `repaid` (the observed outcome). The model is the planted repayment model
/// of [`repayment_log_odds`] minus [`BRANCH_PENALTY`] for the branches most
/// Valic applicants use, as a model trained on past decisions that
/// penalised those branches would be: its score stands in for `community`
/// through `branch_area`, and it under-predicts repayment there.
#[must_use]
pub fn with_scores(mut data: DemoData, seed: u64) -> DemoData {
    let frame = &data.frame;
    let text = |name: &str| -> Vec<Option<String>> {
        frame
            .column(name)
            .ok()
            .and_then(|c| {
                c.str()
                    .ok()
                    .map(|s| s.iter().map(|v| v.map(str::to_string)).collect())
            })
            .unwrap_or_default()
    };
    let numbers = |name: &str| -> Vec<Option<f64>> {
        frame
            .column(name)
            .ok()
            .and_then(|c| c.cast(&DataType::Float64).ok())
            .and_then(|c| c.f64().ok().map(|s| s.iter().collect()))
            .unwrap_or_default()
    };
    let penalised: std::collections::HashSet<String> =
        (0..PENALISED_BRANCHES).map(area_name).collect();
    let branch = text("branch_area");
    let guarantor = text("has_guarantor");
    let amount = numbers("loan_amount");
    let months = numbers("months_at_address");
    let mut rng = SplitMix64::derive(seed, 1);
    let mut score = Vec::with_capacity(branch.len());
    let mut approved = Vec::with_capacity(branch.len());
    let mut repaid = Vec::with_capacity(branch.len());
    for row in 0..branch.len() {
        let truth = repayment_log_odds(
            guarantor[row].as_deref() == Some("yes"),
            amount[row].unwrap_or(9.0_f64.exp()).ln(),
            months[row].is_some(),
        );
        let penalty = branch[row]
            .as_ref()
            .filter(|b| penalised.contains(*b))
            .map_or(0.0, |_| BRANCH_PENALTY);
        let s = (logistic(truth - penalty) * 1e4).round() / 1e4;
        score.push(s);
        approved.push(i32::from(s >= APPROVAL_THRESHOLD));
        repaid.push(i32::from(rng.next_f64() < logistic(truth)));
    }
    let columns = [
        Column::from(Series::new("approval_score".into(), score)),
        Column::from(Series::new("approved".into(), approved)),
        Column::from(Series::new("repaid".into(), repaid)),
    ];
    for column in columns {
        let _ = data.frame.with_column(column);
    }
    data
}

/// The demo's roles: `community` is the protected attribute, every other column a feature.
#[must_use]
pub fn demo_roles() -> super::prepare::Roles {
    super::prepare::Roles {
        protected: vec!["community".to_string()],
        outcome: Some("approved".to_string()),
        ..super::prepare::Roles::default()
    }
}

/// Encodes generated demo data for a scan of `community` (no file involved).
pub fn encode_demo(
    data: &DemoData,
    options: &super::prepare::EncodeOptions,
) -> Result<super::EncodedTable, crate::error::InputError> {
    use super::prepare::{encode_table, plan_columns};
    let source = std::path::Path::new("demo");
    let columns: Vec<String> = data
        .frame
        .get_column_names()
        .iter()
        .map(|n| n.to_string())
        .collect();
    let roles = demo_roles();
    let plan = plan_columns(source, &columns, &roles)?;
    encode_table(source, &data.frame, &plan, &roles, options)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_seed_same_data_and_planted_shares() {
        let a = generate(DemoSpec {
            rows: 5000,
            seed: 3,
            extra_noise: 2,
        });
        let b = generate(DemoSpec {
            rows: 5000,
            seed: 3,
            extra_noise: 2,
        });
        assert!(a.frame.equals_missing(&b.frame));
        assert_eq!(a.frame.width(), 15);
        let community = a.frame.column("community").unwrap().str().unwrap().clone();
        let valic = community.iter().filter(|v| *v == Some("Valic")).count();
        // Binomial(5000, 0.3): sd ≈ 32 rows, so ±130 rows is a 4-sd band.
        assert!((valic as i64 - 1500).abs() < 130, "{valic}");
    }
}
