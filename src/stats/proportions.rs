//! Intervals for binomial proportions, their differences and their ratios:
//! Clopper–Pearson (exact), Wilson score, Newcombe's hybrid score interval
//! for a difference, and the Katz log interval for a ratio.

use super::special::{beta_quantile, normal_quantile};

/// A proportion's (or a difference's, or a ratio's) two-sided interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Interval {
    pub low: f64,
    pub high: f64,
}

/// z_{1 − α/2} for a two-sided interval at `level` (e.g. 0.95).
fn two_sided_z(level: f64) -> f64 {
    normal_quantile(0.5 + level / 2.0)
}

/// Clopper–Pearson exact interval for `successes` out of `trials` at
/// confidence `level` (Clopper & Pearson 1934, *Biometrika* 26, 404–413),
/// through the beta quantiles low = B(α/2; x, n − x + 1) and
/// high = B(1 − α/2; x + 1, n − x) (Brown, Cai & DasGupta 2001, *Stat. Sci.*
/// 16, eq. 4), as scipy `binomtest(x, n).proportion_ci(method="exact")`.
/// With x = 0 the upper end is 1 − (α/2)^{1/n} exactly: 0 events in 10 rows
/// still allow a rate of 30.8 % at 95 %. `None` when `trials` is 0 or
/// `successes > trials`.
#[must_use]
pub fn clopper_pearson(successes: u64, trials: u64, level: f64) -> Option<Interval> {
    if trials == 0 || successes > trials {
        return None;
    }
    let alpha = 1.0 - level;
    let (x, n) = (successes as f64, trials as f64);
    let low = if successes == 0 {
        0.0
    } else {
        beta_quantile(alpha / 2.0, x, n - x + 1.0)
    };
    let high = if successes == trials {
        1.0
    } else if successes == 0 {
        1.0 - (alpha / 2.0).powf(1.0 / n)
    } else {
        beta_quantile(1.0 - alpha / 2.0, x + 1.0, n - x)
    };
    Some(Interval { low, high })
}

/// Wilson score interval (Wilson 1927, *JASA* 22, 209–212; Newcombe 1998,
/// *Stat. Med.* 17, 857–872, method 3):
/// (p̂ + z²/2n ± z√(p̂(1−p̂)/n + z²/4n²)) / (1 + z²/n).
/// `None` when `trials` is 0 or `successes > trials`.
#[must_use]
pub fn wilson(successes: u64, trials: u64, level: f64) -> Option<Interval> {
    if trials == 0 || successes > trials {
        return None;
    }
    let z = two_sided_z(level);
    let n = trials as f64;
    let p = successes as f64 / n;
    let centre = p + z * z / (2.0 * n);
    let spread = z * (p * (1.0 - p) / n + z * z / (4.0 * n * n)).sqrt();
    let scale = 1.0 + z * z / n;
    // At 0 and n the limits are exactly 0 and 1; computed, they would round to ±1e-17.
    Some(Interval {
        low: if successes == 0 {
            0.0
        } else {
            (centre - spread) / scale
        },
        high: if successes == trials {
            1.0
        } else {
            (centre + spread) / scale
        },
    })
}

/// Newcombe's hybrid score interval for the difference p₁ − p₂ of two
/// independent proportions (Newcombe 1998, *Stat. Med.* 17, 873–890,
/// method 10), from the Wilson limits (l_i, u_i) of each:
/// low = δ − √((p₁ − l₁)² + (u₂ − p₂)²), high = δ + √((u₁ − p₁)² + (p₂ − l₂)²),
/// as statsmodels `confint_proportions_2indep(method="newcomb")`.
/// `None` when a group has no trials.
#[must_use]
pub fn newcombe_difference(
    (x1, n1): (u64, u64),
    (x2, n2): (u64, u64),
    level: f64,
) -> Option<Interval> {
    let first = wilson(x1, n1, level)?;
    let second = wilson(x2, n2, level)?;
    let (p1, p2) = (x1 as f64 / n1 as f64, x2 as f64 / n2 as f64);
    let delta = p1 - p2;
    Some(Interval {
        low: (delta - (p1 - first.low).hypot(second.high - p2)).max(-1.0),
        high: (delta + (first.high - p1).hypot(p2 - second.low)).min(1.0),
    })
}

/// Katz log interval for the ratio (x₁/n₁)/(x₂/n₂) of two independent
/// proportions: exp(ln RR ± z√(1/x₁ − 1/n₁ + 1/x₂ − 1/n₂)) (Katz, Baptista,
/// Azen & Pike 1978, *Biometrics* 34, 469–474), as statsmodels
/// `confint_proportions_2indep(compare="ratio", method="log")`. `None` when
/// either count of successes is 0 (the log ratio is then unbounded) or a
/// group has no trials.
#[must_use]
pub fn katz_ratio((x1, n1): (u64, u64), (x2, n2): (u64, u64), level: f64) -> Option<Interval> {
    if x1 == 0 || x2 == 0 || x1 > n1 || x2 > n2 {
        return None;
    }
    let z = two_sided_z(level);
    let (x1, n1, x2, n2) = (x1 as f64, n1 as f64, x2 as f64, n2 as f64);
    let log_ratio = (x1 / n1).ln() - (x2 / n2).ln();
    let se = (1.0 / x1 - 1.0 / n1 + 1.0 / x2 - 1.0 / n2).sqrt();
    Some(Interval {
        low: (log_ratio - z * se).exp(),
        high: (log_ratio + z * se).exp(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_events_upper_end_is_closed_form() {
        // 1 − 0.025^{1/10} = 0.3084971078187608 (closed form of the beta quantile
        // B(0.975; 1, 10); Clopper & Pearson 1934): "0 events in 10 rows: up to 31 %".
        let ci = clopper_pearson(0, 10, 0.95).unwrap();
        assert_eq!(ci.low, 0.0);
        assert!((ci.high - 0.308_497_107_818_760_8).abs() < 1e-15);
        let all = clopper_pearson(10, 10, 0.95).unwrap();
        assert_eq!(all.high, 1.0);
        assert!((all.low - (1.0 - 0.308_497_107_818_760_8)).abs() < 1e-12);
        assert!(clopper_pearson(1, 0, 0.95).is_none());
        assert!(clopper_pearson(3, 2, 0.95).is_none());
    }

    #[test]
    fn wilson_is_inside_zero_one_and_symmetric() {
        // Complement symmetry of the score interval: x of n ↔ n − x of n mirrored.
        let a = wilson(3, 17, 0.95).unwrap();
        let b = wilson(14, 17, 0.95).unwrap();
        assert!((a.low - (1.0 - b.high)).abs() < 1e-15);
        assert!((a.high - (1.0 - b.low)).abs() < 1e-15);
        let zero = wilson(0, 5, 0.95).unwrap();
        assert_eq!(zero.low, 0.0);
    }

    #[test]
    fn katz_needs_events_in_both_groups() {
        assert!(katz_ratio((0, 10), (5, 10), 0.95).is_none());
        let ci = katz_ratio((5, 10), (5, 10), 0.95).unwrap();
        assert!(
            (ci.low * ci.high - 1.0).abs() < 1e-12,
            "symmetric on the log scale"
        );
    }
}
