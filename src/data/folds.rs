//! Stratified k-fold assignment, seeded, so every class is spread evenly over folds.

use crate::rng::SplitMix64;

/// Fold id (`0..k`) per row. Rows of each class are shuffled with the seed and
/// dealt round-robin, continuing the count across classes, so fold sizes differ
/// by at most one and each class's share is the same in every fold (±1 row).
#[must_use]
pub fn stratified_folds(classes: &[u32], n_classes: usize, k: usize, seed: u64) -> Vec<u8> {
    let mut by_class: Vec<Vec<usize>> = vec![Vec::new(); n_classes];
    for (row, &c) in classes.iter().enumerate() {
        by_class[c as usize].push(row);
    }
    let mut rng = SplitMix64::derive(seed, 0xF01D);
    let mut folds = vec![0u8; classes.len()];
    let mut dealt = 0usize;
    for rows in &mut by_class {
        rng.shuffle(rows);
        for &row in rows.iter() {
            folds[row] = (dealt % k) as u8;
            dealt += 1;
        }
    }
    folds
}

/// Row indices of the training and held-out parts of fold `fold`.
#[must_use]
pub fn split(folds: &[u8], fold: u8) -> (Vec<usize>, Vec<usize>) {
    (0..folds.len()).partition(|&r| folds[r] != fold)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn folds_are_balanced_stratified_and_deterministic() {
        let classes: Vec<u32> = (0..1003).map(|i| u32::from(i % 7 == 0)).collect();
        let a = stratified_folds(&classes, 2, 5, 3);
        assert_eq!(a, stratified_folds(&classes, 2, 5, 3));
        assert_ne!(a, stratified_folds(&classes, 2, 5, 4));
        for f in 0..5u8 {
            let size = a.iter().filter(|&&x| x == f).count();
            assert!((200..=201).contains(&size));
            let positives = (0..a.len())
                .filter(|&r| a[r] == f && classes[r] == 1)
                .count();
            assert!((28..=30).contains(&positives), "fold {f}: {positives}");
        }
    }
}
