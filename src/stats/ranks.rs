//! Sorting scores into tie groups through integer order keys.

use rayon::slice::ParallelSliceMut;

/// Inputs at least this long are sorted on all rayon threads.
const PARALLEL_SORT_MIN: usize = 1 << 16;

/// Sorts ascending, in parallel for long inputs (both pattern-defeating quicksort).
fn sort_fast<T: Ord + Send>(items: &mut [T]) {
    if items.len() >= PARALLEL_SORT_MIN {
        items.par_sort_unstable();
    } else {
        items.sort_unstable();
    }
}

/// A score's order key and the row it came from.
pub(crate) type KeyedRow = (u64, u32);

/// Maps a score to an unsigned key with the same order as `f64::total_cmp`,
/// after folding −0 into +0 so that the two compare as a tie.
pub(crate) fn order_key(score: f64) -> u64 {
    let bits = (score + 0.0).to_bits();
    if bits >> 63 == 1 {
        !bits
    } else {
        bits | (1 << 63)
    }
}

/// Order keys of `scores`, ascending (a comparison sort on `u64` keys
/// measured faster here than an LSD radix sort at 10⁶ keys).
pub(crate) fn sorted_keys<'a>(scores: impl Iterator<Item = &'a f64>) -> Vec<u64> {
    let mut keys: Vec<u64> = scores.map(|&s| order_key(s)).collect();
    sort_fast(&mut keys);
    keys
}

/// Rows sorted by ascending score, each with its order key; rows with equal
/// keys are adjacent, so [`tie_groups`] yields the ties.
pub(crate) fn sort_by_score(scores: &[f64]) -> Vec<KeyedRow> {
    let mut keyed: Vec<KeyedRow> = scores
        .iter()
        .enumerate()
        .map(|(row, &s)| (order_key(s), row as u32))
        .collect();
    sort_fast(&mut keyed);
    keyed
}

/// Tie groups of sorted rows: maximal runs sharing one score.
pub(crate) fn tie_groups(sorted: &[KeyedRow]) -> impl Iterator<Item = &[KeyedRow]> {
    sorted.chunk_by(|a, b| a.0 == b.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    #[test]
    fn key_order_equals_numeric_order_with_signed_zero_tied() {
        let mut rng = SplitMix64::new(3);
        let mut scores: Vec<f64> = (0..10_000)
            .map(|i| match i % 4 {
                0 => -0.0,
                1 => 0.0,
                2 => rng.normal() * 1e3,
                _ => f64::from((i % 7) as u32) - 3.0,
            })
            .collect();
        scores.push(f64::INFINITY);
        scores.push(f64::NEG_INFINITY);
        let sorted = sort_by_score(&scores);
        let values: Vec<f64> = sorted.iter().map(|&(_, r)| scores[r as usize]).collect();
        assert!(values.windows(2).all(|w| w[0] <= w[1]));
        let zero_groups = tie_groups(&sorted)
            .filter(|g| scores[g[0].1 as usize] == 0.0)
            .count();
        assert_eq!(zero_groups, 1);
        let keys = sorted_keys(scores.iter());
        assert!(keys.iter().zip(&sorted).all(|(&k, &(j, _))| k == j));
    }
}
