//! Two-way contingency tables of a feature's codes against the protected classes.

/// Counts of rows per (feature level, protected class), row-major `rows × cols`.
///
/// Rows are feature levels, columns protected classes. Levels that never
/// occur leave all-zero rows, which every measure in this module ignores.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Contingency {
    /// Number of feature levels.
    pub rows: usize,
    /// Number of protected classes.
    pub cols: usize,
    /// `counts[r * cols + c]`: rows with feature level `r` and class `c`.
    pub counts: Vec<u64>,
}

impl Contingency {
    /// Cross-tabulates codes `x < x_levels` against `y < y_levels` in one O(N) pass.
    ///
    /// # Panics
    /// If a code is not below its level count or the slices differ in length
    /// (codes come from `data::encode`, which guarantees both).
    #[must_use]
    pub fn from_codes(x: &[u32], x_levels: u32, y: &[u32], y_levels: u32) -> Self {
        assert_eq!(
            x.len(),
            y.len(),
            "feature and protected codes differ in length"
        );
        let (rows, cols) = (x_levels as usize, y_levels as usize);
        let mut counts = vec![0u64; rows * cols];
        for (&a, &b) in x.iter().zip(y) {
            counts[cell(a, b, rows, cols)] += 1;
        }
        Self { rows, cols, counts }
    }

    /// One table per stratum `z < z_levels` (e.g. per outcome value, for
    /// outcome-conditioned measures), built in one O(N) pass.
    ///
    /// # Panics
    /// As [`Contingency::from_codes`], and if `z` differs in length.
    #[must_use]
    pub fn from_codes_stratified(
        x: &[u32],
        x_levels: u32,
        y: &[u32],
        y_levels: u32,
        z: &[u32],
        z_levels: u32,
    ) -> Vec<Self> {
        assert_eq!(
            x.len(),
            z.len(),
            "feature and stratum codes differ in length"
        );
        let (rows, cols) = (x_levels as usize, y_levels as usize);
        let mut counts = vec![0u64; z_levels as usize * rows * cols];
        for ((&a, &b), &s) in x.iter().zip(y).zip(z) {
            assert!(
                (s as usize) < z_levels as usize,
                "stratum code out of range"
            );
            counts[s as usize * rows * cols + cell(a, b, rows, cols)] += 1;
        }
        if rows * cols == 0 {
            return vec![
                Self {
                    rows,
                    cols,
                    counts: Vec::new()
                };
                z_levels as usize
            ];
        }
        counts
            .chunks(rows * cols)
            .map(|chunk| Self {
                rows,
                cols,
                counts: chunk.to_vec(),
            })
            .collect()
    }

    /// A table from explicit rows of counts; short rows are padded with zeros.
    #[must_use]
    pub fn from_counts(rows: &[Vec<u64>]) -> Self {
        let cols = rows.iter().map(Vec::len).max().unwrap_or(0);
        let counts = rows
            .iter()
            .flat_map(|row| row.iter().copied().chain(std::iter::repeat(0)).take(cols))
            .collect();
        Self {
            rows: rows.len(),
            cols,
            counts,
        }
    }

    /// Count of one cell.
    #[must_use]
    pub fn get(&self, row: usize, col: usize) -> u64 {
        self.counts[row * self.cols + col]
    }

    /// Rows per feature level.
    #[must_use]
    pub fn row_totals(&self) -> Vec<u64> {
        if self.cols == 0 {
            return vec![0; self.rows];
        }
        self.counts
            .chunks(self.cols)
            .map(|r| r.iter().sum())
            .collect()
    }

    /// Rows per protected class.
    #[must_use]
    pub fn col_totals(&self) -> Vec<u64> {
        let mut totals = vec![0u64; self.cols];
        for row in self.counts.chunks(self.cols.max(1)) {
            for (total, &c) in totals.iter_mut().zip(row) {
                *total += c;
            }
        }
        totals
    }

    /// All rows.
    #[must_use]
    pub fn total(&self) -> u64 {
        self.counts.iter().sum()
    }

    /// The same table with rows and columns swapped.
    #[must_use]
    pub fn transposed(&self) -> Self {
        let counts = (0..self.cols)
            .flat_map(|c| (0..self.rows).map(move |r| (r, c)))
            .map(|(r, c)| self.get(r, c))
            .collect();
        Self {
            rows: self.cols,
            cols: self.rows,
            counts,
        }
    }
}

/// Row-major index of cell (`a`, `b`), checking both codes.
fn cell(a: u32, b: u32, rows: usize, cols: usize) -> usize {
    let (a, b) = (a as usize, b as usize);
    assert!(
        a < rows && b < cols,
        "code out of range: ({a}, {b}) in {rows}×{cols}"
    );
    a * cols + b
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cross_tabulation_counts_every_row_once() {
        // Hand-counted: pairs (0,1) ×2, (2,0) ×1, (0,0) ×1; level 1 never occurs.
        let t = Contingency::from_codes(&[0, 2, 0, 0], 3, &[1, 0, 1, 0], 2);
        assert_eq!(t.counts, vec![1, 2, 0, 0, 1, 0]);
        assert_eq!(t.row_totals(), vec![3, 0, 1]);
        assert_eq!(t.col_totals(), vec![2, 2]);
        assert_eq!(t.total(), 4);
        assert_eq!(t.transposed().counts, vec![1, 0, 1, 2, 0, 0]);
    }

    #[test]
    fn strata_partition_the_pooled_table() {
        let x = [0, 1, 1, 0, 1];
        let y = [0, 0, 1, 1, 1];
        let z = [1, 0, 1, 1, 0];
        let strata = Contingency::from_codes_stratified(&x, 2, &y, 2, &z, 2);
        assert_eq!(strata[0].counts, vec![0, 0, 1, 1]);
        assert_eq!(strata[1].counts, vec![1, 1, 0, 1]);
        let pooled = Contingency::from_codes(&x, 2, &y, 2);
        let summed: Vec<u64> = (0..4)
            .map(|i| strata[0].counts[i] + strata[1].counts[i])
            .collect();
        assert_eq!(summed, pooled.counts);
    }

    #[test]
    fn from_counts_pads_short_rows() {
        let t = Contingency::from_counts(&[vec![1, 2, 3], vec![4]]);
        assert_eq!((t.rows, t.cols), (2, 3));
        assert_eq!(t.counts, vec![1, 2, 3, 4, 0, 0]);
    }
}
