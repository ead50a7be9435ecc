//! Sorting scores into tie groups, in linear time for large inputs.

/// Inputs at least this long are radix-sorted; shorter ones use a comparison sort.
const RADIX_THRESHOLD: usize = 1 << 12;

/// Bits per radix digit (four passes over a 64-bit key).
const DIGIT_BITS: u32 = 16;

/// A score's order key and the row it came from.
pub(crate) type KeyedRow = (u64, u32);

/// Maps a score to an unsigned key with the same order as `f64::total_cmp`,
/// after folding −0 into +0 so that the two compare as a tie.
fn order_key(score: f64) -> u64 {
    let bits = (score + 0.0).to_bits();
    if bits >> 63 == 1 {
        !bits
    } else {
        bits | (1 << 63)
    }
}

/// Rows sorted by ascending score, each with its order key; rows with equal
/// keys are adjacent, so `chunk_by` on the key yields the tie groups.
///
/// LSD radix sort with 16-bit digits (Knuth 1998, *TAOCP* vol. 3, §5.2.5),
/// skipping digits on which every key agrees.
pub(crate) fn sort_by_score(scores: &[f64]) -> Vec<KeyedRow> {
    let mut keyed: Vec<KeyedRow> = scores
        .iter()
        .enumerate()
        .map(|(row, &s)| (order_key(s), row as u32))
        .collect();
    if keyed.len() < RADIX_THRESHOLD {
        keyed.sort_unstable();
        return keyed;
    }
    let mut buffer = vec![(0, 0); keyed.len()];
    for pass in 0..64 / DIGIT_BITS {
        let shift = pass * DIGIT_BITS;
        if radix_pass(&keyed, &mut buffer, shift) {
            std::mem::swap(&mut keyed, &mut buffer);
        }
    }
    keyed
}

/// One stable counting-sort pass on the digit at `shift`; returns `false`
/// (leaving `to` untouched) when every key shares that digit.
fn radix_pass(from: &[KeyedRow], to: &mut [KeyedRow], shift: u32) -> bool {
    let digit = |key: u64| ((key >> shift) & ((1 << DIGIT_BITS) - 1)) as usize;
    let mut starts = vec![0usize; 1 << DIGIT_BITS];
    for &(key, _) in from {
        starts[digit(key)] += 1;
    }
    if starts.iter().any(|&c| c == from.len()) {
        return false;
    }
    let mut next = 0;
    for slot in &mut starts {
        let count = *slot;
        *slot = next;
        next += count;
    }
    for &item in from {
        let d = digit(item.0);
        to[starts[d]] = item;
        starts[d] += 1;
    }
    true
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
    fn radix_order_equals_numeric_order_with_signed_zero_tied() {
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
    }
}
