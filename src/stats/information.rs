//! Entropy and mutual information of contingency tables, in nats: plug-in,
//! Miller–Madow corrected, expected under independence, chance-adjusted and
//! normalised.
//!
//! Conventions follow scikit-learn 1.9's `mutual_info_score`,
//! `adjusted_mutual_info_score` and `normalized_mutual_info_score` so that
//! published reference values can be matched: levels that never occur are
//! ignored, and two single-level labelings count as a perfect match.

use super::contingency::Contingency;
use super::special::ln_factorial;

/// A hypergeometric term this far below the mode's probability ends the walk.
const NEGLIGIBLE_PROBABILITY: f64 = 1e-20;

/// Plug-in (maximum-likelihood) entropy −Σ p ln p of counts, in nats
/// (Shannon 1948; Cover & Thomas 2006, eq. 2.1). Zero counts are skipped.
#[must_use]
pub fn entropy(counts: &[u64]) -> f64 {
    let total: u64 = counts.iter().sum();
    if total == 0 {
        return 0.0;
    }
    let n = total as f64;
    (n.ln() - sum_c_ln_c(counts) / n).max(0.0)
}

/// Σ c ln c over counts, skipping 0 and 1 (whose terms are 0).
fn sum_c_ln_c(counts: &[u64]) -> f64 {
    counts
        .iter()
        .filter(|&&c| c > 1)
        .map(|&c| c as f64 * (c as f64).ln())
        .sum()
}

/// Miller–Madow corrected MI: Î − (m_xy − m_x − m_y + 1)/(2N), the m's
/// counting occupied cells, rows and columns (Miller 1955 applied to
/// I = H(X) + H(Y) − H(X,Y)). May be negative for a feature with no signal.
#[must_use]
pub fn miller_madow_mutual_information(table: &Contingency) -> f64 {
    let margins = Margins::of(table);
    margins.mutual_information(table) - margins.miller_madow_bias(table)
}

/// Every information measure of one table, sharing margins and entropies.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InformationSummary {
    /// Plug-in I(X; A), nats.
    pub mi_nats: f64,
    /// Miller–Madow corrected I(X; A), nats.
    pub mi_mm_nats: f64,
    /// Adjusted mutual information, arithmetic normalisation.
    pub ami: f64,
    /// Normalised mutual information, arithmetic normalisation.
    pub nmi: f64,
    /// Plug-in H(X) of the feature levels, nats.
    pub entropy_feature: f64,
    /// Plug-in H(A) of the protected classes, nats.
    pub entropy_protected: f64,
}

/// All measures of [`InformationSummary`] in one pass over the table's
/// margins (formulas as in the individual functions of this module).
#[must_use]
pub fn summarize(table: &Contingency) -> InformationSummary {
    let margins = Margins::of(table);
    let mi = margins.mutual_information(table);
    let entropy_feature = entropy(&margins.rows);
    let entropy_protected = entropy(&margins.cols);
    let mean_entropy = (entropy_feature + entropy_protected) / 2.0;
    let (ami, nmi) = if margins.both_single_level() {
        (1.0, 1.0)
    } else {
        let emi = margins.expected_mutual_information();
        let nmi = if mi == 0.0 { 0.0 } else { mi / mean_entropy };
        (adjust(mi, emi, mean_entropy), nmi)
    };
    InformationSummary {
        mi_nats: mi,
        mi_mm_nats: mi - margins.miller_madow_bias(table),
        ami,
        nmi,
        entropy_feature,
        entropy_protected,
    }
}

/// (I − E[I]) / (normaliser − E[I]), the denominator kept at least ε in
/// magnitude with its sign, as scikit-learn `adjusted_mutual_info_score`.
fn adjust(mi: f64, emi: f64, normaliser: f64) -> f64 {
    let denominator = normaliser - emi;
    let denominator = if denominator < 0.0 {
        denominator.min(-f64::EPSILON)
    } else {
        denominator.max(f64::EPSILON)
    };
    (mi - emi) / denominator
}

/// Non-zero row and column totals of a table.
struct Margins {
    rows: Vec<u64>,
    cols: Vec<u64>,
    total: u64,
}

impl Margins {
    fn of(table: &Contingency) -> Self {
        let nonzero = |v: Vec<u64>| v.into_iter().filter(|&c| c > 0).collect::<Vec<_>>();
        let rows = nonzero(table.row_totals());
        let cols = nonzero(table.col_totals());
        let total = rows.iter().sum();
        Self { rows, cols, total }
    }

    /// Both labelings have at most one level and the same number of levels.
    fn both_single_level(&self) -> bool {
        self.rows.len() == self.cols.len() && self.rows.len() <= 1
    }

    /// Plug-in MI; 0 when either side has a single level, clipped at 0.
    /// Uses I = ln N + (Σ n_ij ln n_ij − Σ a_i ln a_i − Σ b_j ln b_j)/N,
    /// one logarithm per cell with a count above 1.
    fn mutual_information(&self, table: &Contingency) -> f64 {
        if self.rows.len() <= 1 || self.cols.len() <= 1 {
            return 0.0;
        }
        let n = self.total as f64;
        let cells = sum_c_ln_c(&table.counts) - sum_c_ln_c(&self.rows) - sum_c_ln_c(&self.cols);
        (n.ln() + cells / n).max(0.0)
    }

    /// (m_xy − m_x − m_y + 1)/(2N), the Miller (1955) bias of plug-in MI.
    fn miller_madow_bias(&self, table: &Contingency) -> f64 {
        if self.total == 0 {
            return 0.0;
        }
        let cells = table.counts.iter().filter(|&&c| c > 0).count() as f64;
        let occupied = cells - self.rows.len() as f64 - self.cols.len() as f64 + 1.0;
        occupied / (2.0 * self.total as f64)
    }

    /// E[I] under the hypergeometric model, grouping equal margins.
    fn expected_mutual_information(&self) -> f64 {
        if self.rows.len() <= 1 || self.cols.len() <= 1 {
            return 0.0;
        }
        let row_groups = multiplicities(&self.rows);
        let col_groups = multiplicities(&self.cols);
        row_groups
            .iter()
            .flat_map(|&(a, ka)| col_groups.iter().map(move |&(b, kb)| (a, b, ka * kb)))
            .map(|(a, b, k)| k as f64 * cell_expected_information(self.total, a, b))
            .sum()
    }
}

/// Distinct values of `totals` with how often each occurs.
fn multiplicities(totals: &[u64]) -> Vec<(u64, u64)> {
    let mut sorted = totals.to_vec();
    sorted.sort_unstable();
    sorted
        .chunk_by(|a, b| a == b)
        .map(|run| (run[0], run.len() as u64))
        .collect()
}

/// E[(n/N) ln(N n/(a b))] for n ~ Hypergeometric(N, a, b), the contribution
/// of one cell to E[I] (Vinh, Epps & Bailey 2010, eq. 24a).
///
/// Starts at the mode ⌊(a+1)(b+1)/(N+2)⌋ with the pmf from log-factorials
/// and walks each way with P(n+1)/P(n) = (a−n)(b−n)/((n+1)(N−a−b+n+1)).
fn cell_expected_information(total: u64, a: u64, b: u64) -> f64 {
    let lowest = (a + b).saturating_sub(total);
    let highest = a.min(b);
    let mode =
        (((a + 1) as u128 * (b + 1) as u128 / (total + 2) as u128) as u64).clamp(lowest, highest);
    let ln_mode_pmf =
        ln_factorial(a) + ln_factorial(b) + ln_factorial(total - a) + ln_factorial(total - b)
            - ln_factorial(total)
            - ln_factorial(mode)
            - ln_factorial(a - mode)
            - ln_factorial(b - mode)
            - ln_factorial(total + mode - a - b);
    let mode_pmf = ln_mode_pmf.exp();
    let (n_total, ln_ab) = (total as f64, (a as f64).ln() + (b as f64).ln());
    let term = |n: u64, pmf: f64| {
        if n == 0 {
            0.0
        } else {
            let nf = n as f64;
            nf / n_total * (n_total.ln() + nf.ln() - ln_ab) * pmf
        }
    };
    let (af, bf) = (a as f64, b as f64);
    let rest = total as f64 - af - bf;
    let mut sum = term(mode, mode_pmf);
    let mut pmf = mode_pmf;
    for n in mode..highest {
        let nf = n as f64;
        pmf *= (af - nf) * (bf - nf) / ((nf + 1.0) * (rest + nf + 1.0));
        sum += term(n + 1, pmf);
        if pmf < mode_pmf * NEGLIGIBLE_PROBABILITY {
            break;
        }
    }
    pmf = mode_pmf;
    for n in (lowest + 1..=mode).rev() {
        let nf = n as f64;
        pmf *= nf * (rest + nf) / ((af - nf + 1.0) * (bf - nf + 1.0));
        sum += term(n - 1, pmf);
        if pmf < mode_pmf * NEGLIGIBLE_PROBABILITY {
            break;
        }
    }
    sum
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;
    use proptest::prelude::*;

    fn table(rows: &[&[u64]]) -> Contingency {
        Contingency::from_counts(&rows.iter().map(|r| r.to_vec()).collect::<Vec<_>>())
    }

    #[test]
    fn cover_thomas_example_2_2_1_in_bits() {
        // Cover & Thomas (2006), Example 2.2.1: H(X) = 7/4, H(Y) = 2, I(X;Y) = 3/8 bits
        // (WORKED-EXAMPLES §3). Counts are the joint probabilities × 32.
        let t = table(&[&[4, 2, 1, 1], &[2, 4, 1, 1], &[2, 2, 2, 2], &[8, 0, 0, 0]]);
        let s = summarize(&t);
        let bits = std::f64::consts::LN_2;
        assert!((s.mi_nats / bits - 0.375).abs() < 1e-12);
        assert!((s.entropy_feature / bits - 2.0).abs() < 1e-12);
        assert!((s.entropy_protected / bits - 1.75).abs() < 1e-12);
        assert!((s.mi_nats - 0.259_930).abs() < 5e-7);
    }

    #[test]
    fn plug_in_entropy_of_r_entropy_example() {
        // R package `entropy` example counts (WORKED-EXAMPLES §5): N = 19, m = 8,
        // plug-in 1.968382 nats (6 printed decimals).
        let y = [4, 2, 3, 0, 2, 4, 0, 0, 2, 1, 1];
        assert!((entropy(&y) - 1.968_382).abs() < 5e-7);
    }

    #[test]
    fn miller_madow_mi_and_g_link() {
        // WORKED-EXAMPLES §14/§5: T = [[30,20,10],[15,25,40]], Î = 0.078790 nats, G = 2NÎ =
        // 22.061210; full support so the MM correction is (R−1)(C−1)/(2N) = 2/280.
        let t = table(&[&[30, 20, 10], &[15, 25, 40]]);
        let mi = summarize(&t).mi_nats;
        assert!((mi - 0.078_790).abs() < 5e-7);
        assert!((2.0 * 140.0 * mi - 22.061_210).abs() < 5e-6);
        let mm = miller_madow_mutual_information(&t);
        assert!((mi - mm - 2.0 / 280.0).abs() < 1e-15);
    }

    #[test]
    fn ami_check_values_of_vinh_et_al() {
        // scikit-learn adjusted_mutual_info_score(average_method="arithmetic"), WORKED-EXAMPLES §6:
        // T = [[5,2,0],[1,3,4]]: I = 0.286362, E[I] = 0.080270, AMI = 0.255132;
        // T = [[3,1,0],[1,2,1],[0,1,3]]: I = 0.377149, E[I] = 0.233393, AMI = 0.166150.
        let t1 = table(&[&[5, 2, 0], &[1, 3, 4]]);
        // E[I] enters through AMI = (I − E[I]) / (mean entropy − E[I]).
        let s = summarize(&t1);
        assert!((s.mi_nats - 0.286_362).abs() < 5e-7);
        assert!((s.ami - 0.255_132).abs() < 5e-7);
        assert!((s.entropy_feature - 0.690_923).abs() < 5e-7);
        assert!((s.entropy_protected - 1.085_189).abs() < 5e-7);
        let t2 = table(&[&[3, 1, 0], &[1, 2, 1], &[0, 1, 3]]);
        let s2 = summarize(&t2);
        assert!((s2.mi_nats - 0.377_149).abs() < 5e-7);
        assert!((s2.ami - 0.166_150).abs() < 5e-7);
    }

    #[test]
    fn ami_of_an_identifier_is_zero() {
        // One row per level (an identifier): every a_i = 1, so n ∈ {0, 1} and
        // E[I] = Σ_j (b_j/N) ln(N/b_j) = H(A) = I exactly (eq. 24a with a_i = 1; computed
        // by hand), so AMI = 0.
        let n = 1_000_000u32;
        let ids: Vec<u32> = (0..n).collect();
        let classes: Vec<u32> = (0..n).map(|i| u32::from(i % 10 < 3)).collect();
        let t = Contingency::from_codes(&ids, n, &classes, 2);
        let h = entropy(&[700_000, 300_000]);
        let start = std::time::Instant::now();
        let s = summarize(&t);
        assert!(start.elapsed().as_secs_f64() < 1.0);
        assert!((s.mi_nats - h).abs() < 1e-9);
        assert!(s.ami.abs() < 1e-6);
    }

    #[test]
    fn edge_cases_follow_scikit_learn() {
        // scikit-learn conventions: both labelings single-level → AMI = NMI = 1;
        // one single-level side → MI = 0, AMI = 0, NMI = 0 (scikit-learn 1.9 source, from memory).
        let single = table(&[&[5], &[0]]);
        assert_eq!(summarize(&single).ami, 1.0);
        assert_eq!(summarize(&single).nmi, 1.0);
        let one_side = table(&[&[5, 3]]);
        let s = summarize(&one_side);
        assert_eq!((s.mi_nats, s.ami, s.nmi), (0.0, 0.0, 0.0));
        let empty = Contingency::from_codes(&[], 3, &[], 2);
        assert_eq!(summarize(&empty).mi_nats, 0.0);
    }

    #[test]
    fn ami_is_near_zero_on_average_for_independent_columns() {
        // Vinh, Epps & Bailey (2010) §4: AMI has expectation ≈ 0 under independence.
        // 2000 seeded tables, 3 × 4 levels, N = 100. Per-table sd of AMI ≈ 0.014
        // (sd of Î ≈ √(2·6)/(2N), over a mean entropy ≈ 1.24), so the mean's sd ≈ 3e-4;
        // tolerance 0.002 ≈ 6 sd. Plug-in MI's mean is far from 0 there: ≈ 6/200 = 0.03.
        let mut rng = SplitMix64::new(11);
        let (mut ami_sum, mut mi_sum) = (0.0, 0.0);
        for _ in 0..2000 {
            let x: Vec<u32> = (0..100).map(|_| rng.below(3) as u32).collect();
            let y: Vec<u32> = (0..100).map(|_| rng.below(4) as u32).collect();
            let s = summarize(&Contingency::from_codes(&x, 3, &y, 4));
            ami_sum += s.ami;
            mi_sum += s.mi_nats;
        }
        assert!(
            (ami_sum / 2000.0).abs() < 0.002,
            "mean AMI {}",
            ami_sum / 2000.0
        );
        assert!((mi_sum / 2000.0 - 0.03).abs() < 0.005);
    }

    fn transposed(t: &Contingency) -> Contingency {
        let counts = (0..t.cols)
            .flat_map(|c| (0..t.rows).map(move |r| t.get(r, c)))
            .collect();
        Contingency {
            rows: t.cols,
            cols: t.rows,
            counts,
        }
    }

    fn counts() -> impl Strategy<Value = (usize, usize, Vec<u64>)> {
        (1usize..6, 1usize..6)
            .prop_flat_map(|(r, c)| (Just(r), Just(c), prop::collection::vec(0u64..30, r * c)))
    }

    proptest! {
        // I(X;Y) = I(Y;X) ≥ 0 (Cover & Thomas 2006, eq. 2.45 and Theorem 2.6.3).
        #[test]
        fn mi_symmetric_and_nonnegative((rows, cols, counts) in counts()) {
            let t = Contingency { rows, cols, counts };
            let forward = summarize(&t);
            let backward = summarize(&transposed(&t));
            prop_assert!(forward.mi_nats >= 0.0);
            prop_assert!((forward.mi_nats - backward.mi_nats).abs() < 1e-12);
            prop_assert!((forward.ami - backward.ami).abs() < 1e-9);
        }

        // MI depends on the joint distribution only, not on level names
        // (Cover & Thomas 2006, §2.3): permuting rows and columns changes nothing.
        #[test]
        fn mi_unchanged_by_relabelling((rows, cols, counts) in counts(), shift in 0usize..5) {
            let t = Contingency { rows, cols, counts };
            let relabelled = Contingency {
                rows,
                cols,
                counts: (0..rows * cols)
                    .map(|i| {
                        let (r, c) = (i / cols, i % cols);
                        t.get((r + shift) % rows, cols - 1 - c)
                    })
                    .collect(),
            };
            let (a, b) = (summarize(&t), summarize(&relabelled));
            prop_assert!((a.mi_nats - b.mi_nats).abs() < 1e-12);
            prop_assert!((a.ami - b.ami).abs() < 1e-9);
            prop_assert!((a.nmi - b.nmi).abs() < 1e-12);
        }
    }
}
