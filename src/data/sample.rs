//! Seeded row sample stratified by the protected attribute (`--sample N`).

use crate::rng::SplitMix64;

/// Ascending row indices of a sample of about `target` rows keeping each
/// class's share: class `k` contributes `round(target · n_k / n)` rows, at least one.
#[must_use]
pub fn stratified_sample(
    classes: &[u32],
    n_classes: usize,
    target: usize,
    seed: u64,
) -> Vec<usize> {
    if target >= classes.len() {
        return (0..classes.len()).collect();
    }
    let mut by_class: Vec<Vec<usize>> = vec![Vec::new(); n_classes];
    for (row, &c) in classes.iter().enumerate() {
        by_class[c as usize].push(row);
    }
    let mut rng = SplitMix64::derive(seed, 0x5A3E);
    let total = classes.len() as f64;
    let mut chosen: Vec<usize> = by_class
        .iter_mut()
        .flat_map(|rows| {
            let take = ((target as f64 * rows.len() as f64 / total).round() as usize)
                .clamp(1.min(rows.len()), rows.len());
            rng.shuffle(rows);
            rows[..take].to_vec()
        })
        .collect();
    chosen.sort_unstable();
    chosen
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sample_keeps_class_shares() {
        let classes: Vec<u32> = (0..10_000).map(|i| u32::from(i % 4 == 0)).collect();
        let rows = stratified_sample(&classes, 2, 1000, 1);
        assert_eq!(rows.len(), 1000);
        assert_eq!(rows.iter().filter(|&&r| classes[r] == 1).count(), 250);
        assert!(rows.windows(2).all(|w| w[0] < w[1]));
    }
}
