//! A small seeded pseudo-random generator so that every report is reproducible
//! from its seed, independent of platform, thread count and crate versions.

/// SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number
/// generators", OOPSLA): a 64-bit state advanced by a Weyl sequence and mixed.
#[derive(Debug, Clone)]
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator whose whole stream is fixed by `seed`.
    #[must_use]
    pub fn new(seed: u64) -> Self {
        Self { state: seed }
    }

    /// A generator for an independent sub-stream, e.g. one per feature or fold.
    #[must_use]
    pub fn derive(seed: u64, stream: u64) -> Self {
        let mut base = Self::new(seed ^ stream.wrapping_mul(0xA076_1D64_78BD_642F));
        base.next_u64();
        base
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// A uniform draw in [0, 1) with 53 bits of precision.
    pub fn next_f64(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform integer in `0..bound` (Lemire 2019 multiply-shift; bias < 2^-32 for our bounds).
    pub fn below(&mut self, bound: usize) -> usize {
        ((u128::from(self.next_u64()) * bound as u128) >> 64) as usize
    }

    /// A standard normal draw (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u1 = 1.0 - self.next_f64();
        let u2 = self.next_f64();
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }

    /// A Poisson draw with the given mean (0 for a mean that is not positive).
    ///
    /// Means below 10: inversion by sequential search (Devroye 1986,
    /// "Non-Uniform Random Variate Generation", §X.3.3); for the whole-number
    /// means a count table passes, the search runs over a cumulative table
    /// built once with the same recurrence, so it gives the same draw without
    /// a division per step. Larger means: the transformed rejection method
    /// PTRS (Hörmann 1993, "The transformed rejection method for generating
    /// Poisson random variables", Insurance: Mathematics and Economics 12(1)),
    /// constants as published there.
    #[inline]
    pub fn poisson(&mut self, mean: f64) -> u64 {
        if mean.is_nan() || mean <= 0.0 {
            return 0;
        }
        let whole = mean as usize;
        if whole < SMALL_MEANS && whole as f64 == mean {
            let cumulative = &small_mean_tables()[whole];
            let u = self.next_f64();
            let last = cumulative.len() - 1;
            return cumulative.iter().position(|&c| u <= c).unwrap_or(last) as u64;
        }
        self.poisson_large_or_fractional(mean)
    }

    #[inline(never)]
    fn poisson_large_or_fractional(&mut self, mean: f64) -> u64 {
        if mean < SMALL_MEANS as f64 {
            let u = self.next_f64();
            inversion_search(mean, (-mean).exp(), |k, cumulative, probability| {
                (u > cumulative && probability > 0.0).then_some(k)
            })
        } else {
            self.poisson_ptrs(mean)
        }
    }

    fn poisson_ptrs(&mut self, mean: f64) -> u64 {
        let log_mean = mean.ln();
        let b = 0.931 + 2.53 * mean.sqrt();
        let a = -0.059 + 0.02483 * b;
        let inv_alpha = 1.1239 + 1.1328 / (b - 3.4);
        let v_r = 0.9277 - 3.6224 / (b - 2.0);
        loop {
            let u = self.next_f64() - 0.5;
            let v = self.next_f64();
            let us = 0.5 - u.abs();
            let k = ((2.0 * a / us + b) * u + mean + 0.43).floor();
            if us >= 0.07 && v <= v_r {
                return k as u64;
            }
            if k < 0.0 || (us < 0.013 && v > us) {
                continue;
            }
            let accept = (v * inv_alpha / (a / (us * us) + b)).ln();
            if accept <= -mean + k * log_mean - crate::stats::special::ln_gamma(k + 1.0) {
                return k as u64;
            }
        }
    }

    /// Shuffles `items` in place (Fisher–Yates).
    pub fn shuffle<T>(&mut self, items: &mut [T]) {
        for i in (1..items.len()).rev() {
            let j = self.below(i + 1);
            items.swap(i, j);
        }
    }
}

/// Means below this are drawn by inversion.
const SMALL_MEANS: usize = 10;

/// e^{−n} for the whole-number means below [`SMALL_MEANS`].
const EXP_NEG: [f64; SMALL_MEANS] = [
    1.0,
    0.367_879_441_171_442_33,
    0.135_335_283_236_612_7,
    0.049_787_068_367_863_944,
    0.018_315_638_888_734_18,
    0.006_737_946_999_085_467,
    0.002_478_752_176_666_358_4,
    0.000_911_881_965_554_516_2,
    0.000_335_462_627_902_511_84,
    0.000_123_409_804_086_679_55,
];

/// Sequential search of the Poisson(`mean`) distribution from P(0) = `p0`:
/// P(k) = P(k−1)·mean/k, accumulated; `keep_going(k, cumulative, P(k))`
/// returns `Some(k)` while the search should go on, and the search returns
/// the k where it stopped.
fn inversion_search(
    mean: f64,
    p0: f64,
    mut keep_going: impl FnMut(u64, f64, f64) -> Option<u64>,
) -> u64 {
    let (mut k, mut probability) = (0u64, p0);
    let mut cumulative = probability;
    while keep_going(k, cumulative, probability).is_some() {
        k += 1;
        probability *= mean / k as f64;
        cumulative += probability;
    }
    k
}

/// For each whole-number mean n below [`SMALL_MEANS`], the cumulative
/// probabilities P(X ≤ k) of the inversion's recurrence from k = 0 until
/// P(k) underflows to 0 (the search stops there whatever the uniform).
fn small_mean_tables() -> &'static [Vec<f64>; SMALL_MEANS] {
    static TABLES: std::sync::OnceLock<[Vec<f64>; SMALL_MEANS]> = std::sync::OnceLock::new();
    TABLES.get_or_init(|| {
        std::array::from_fn(|n| {
            let mut table = Vec::new();
            inversion_search(n as f64, EXP_NEG[n], |k, cumulative, probability| {
                table.push(cumulative);
                (probability > 0.0).then_some(k)
            });
            table
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_seed_same_stream_and_uniform_range() {
        let mut a = SplitMix64::new(7);
        let mut b = SplitMix64::new(7);
        for _ in 0..1000 {
            let x = a.next_f64();
            assert_eq!(x.to_bits(), b.next_f64().to_bits());
            assert!((0.0..1.0).contains(&x));
        }
    }

    #[test]
    fn poisson_draws_have_the_poisson_mean_and_variance() {
        // A Poisson(λ) law has mean and variance λ. 20 000 seeded draws per λ
        // (both sampling paths): the sample mean's sd is √(λ/20 000), so 4 sd
        // is allowed; the sample variance's relative sd is ≈ √(2/20 000) = 1 %
        // (plus 1/λ kurtosis), so 6 % is allowed.
        for mean in [0.3, 2.0, 9.5, 10.0, 57.0, 2_500.0] {
            let mut rng = SplitMix64::new(17);
            let draws: Vec<f64> = (0..20_000).map(|_| rng.poisson(mean) as f64).collect();
            let n = draws.len() as f64;
            let m = draws.iter().sum::<f64>() / n;
            let v = draws.iter().map(|d| (d - m).powi(2)).sum::<f64>() / (n - 1.0);
            assert!(
                (m - mean).abs() < 4.0 * (mean / n).sqrt(),
                "{mean}: mean {m}"
            );
            assert!((v / mean - 1.0).abs() < 0.06, "{mean}: variance {v}");
        }
        assert_eq!(SplitMix64::new(1).poisson(0.0), 0);
    }

    #[test]
    fn table_draws_equal_the_sequential_search() {
        // The whole-number means' tables must give the draw the inversion's
        // own recurrence gives from the same uniform.
        for (n, &p0) in EXP_NEG.iter().enumerate().skip(1) {
            let (mut table, mut search) = (SplitMix64::new(5), SplitMix64::new(5));
            for _ in 0..5_000 {
                let u = search.next_f64();
                let expected =
                    inversion_search(n as f64, p0, |k, c, p| (u > c && p > 0.0).then_some(k));
                assert_eq!(table.poisson(n as f64), expected, "mean {n}");
            }
        }
    }

    #[test]
    fn splitmix_first_output_for_seed_zero() {
        // First output of Vigna's reference splitmix64.c seeded with 0
        // (https://prng.di.unimi.it/splitmix64.c); value from memory.
        assert_eq!(SplitMix64::new(0).next_u64(), 0xE220_A839_7B1D_CDAF);
    }
}
