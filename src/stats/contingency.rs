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
    }

    #[test]
    fn from_counts_pads_short_rows() {
        let t = Contingency::from_counts(&[vec![1, 2, 3], vec![4]]);
        assert_eq!((t.rows, t.cols), (2, 3));
        assert_eq!(t.counts, vec![1, 2, 3, 4, 0, 0]);
    }
}
