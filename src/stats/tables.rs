//! Classical tests on contingency tables and the four-fifths rule.

use super::contingency::Contingency;

/// Observed and expected counts of the occupied cells' table: rows and
/// columns with zero totals are dropped (they carry no expected count).
struct Expected {
    /// (observed, expected) for every cell of the occupied rows × columns.
    cells: Vec<(f64, f64)>,
    total: f64,
    occupied_rows: u64,
    occupied_cols: u64,
}

impl Expected {
    /// E_ij = r_i c_j / N (Pearson 1900; Agresti 2013, *Categorical Data Analysis*, eq. 3.1).
    fn of(table: &Contingency) -> Self {
        let row_totals = table.row_totals();
        let col_totals = table.col_totals();
        let total = table.total() as f64;
        let cells = (0..table.rows)
            .filter(|&r| row_totals[r] > 0)
            .flat_map(|r| (0..table.cols).map(move |c| (r, c)))
            .filter(|&(_, c)| col_totals[c] > 0)
            .map(|(r, c)| {
                let expected = row_totals[r] as f64 * col_totals[c] as f64 / total;
                (table.get(r, c) as f64, expected)
            })
            .collect();
        let occupied = |totals: &[u64]| totals.iter().filter(|&&t| t > 0).count() as u64;
        Self {
            cells,
            total,
            occupied_rows: occupied(&row_totals),
            occupied_cols: occupied(&col_totals),
        }
    }

    fn pearson(&self) -> f64 {
        self.cells.iter().map(|&(o, e)| (o - e) * (o - e) / e).sum()
    }
}

/// Cramér's V = √(χ² / (N (min(R, C) − 1))) over occupied rows and columns
/// (Cramér 1946, *Mathematical Methods of Statistics*, §21.9), as scipy
/// `contingency.association(method="cramer")`. 0 when a side has one level.
#[must_use]
pub fn cramers_v(table: &Contingency) -> f64 {
    let expected = Expected::of(table);
    let smaller = expected.occupied_rows.min(expected.occupied_cols);
    if smaller < 2 {
        return 0.0;
    }
    (expected.pearson() / (expected.total * (smaller - 1) as f64)).sqrt()
}

/// Impact ratio (sel_a/app_a) / (sel_b/app_b) of group a's selection rate to
/// group b's (29 CFR 1607.4(D), Uniform Guidelines 1978), for display; use
/// [`violates_four_fifths`] for the decision. `NaN` when a rate is undefined.
#[must_use]
pub fn selection_rate_ratio(sel_a: u64, app_a: u64, sel_b: u64, app_b: u64) -> f64 {
    if app_a == 0 || app_b == 0 || sel_b == 0 {
        return f64::NAN;
    }
    (sel_a as f64 * app_b as f64) / (sel_b as f64 * app_a as f64)
}

/// Four-fifths rule: group a's selection rate is below 4/5 of group b's
/// (29 CFR 1607.4(D); exactly 4/5 is not adverse impact, EEOC et al. 1979
/// Questions and Answers, Q. 12), decided in exact integer arithmetic as
/// `5·sel_a·app_b < 4·sel_b·app_a`, immune to rounding at the boundary.
#[must_use]
pub fn violates_four_fifths(sel_a: u64, app_a: u64, sel_b: u64, app_b: u64) -> bool {
    5 * u128::from(sel_a) * u128::from(app_b) < 4 * u128::from(sel_b) * u128::from(app_a)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table(rows: &[&[u64]]) -> Contingency {
        Contingency::from_counts(&rows.iter().map(|r| r.to_vec()).collect::<Vec<_>>())
    }

    #[test]
    fn cramers_v_check_values() {
        // scipy chi2_contingency(T, correction=False), WORKED-EXAMPLES §14 (6 printed digits):
        // [[30,20,10],[15,25,40]]: V = 0.388492.
        let t = table(&[&[30, 20, 10], &[15, 25, 40]]);
        assert!((cramers_v(&t) - 0.388_492).abs() < 5e-7);
        // [[12,5,3],[4,10,6],[2,3,15]]: V = 0.441745.
        let t = table(&[&[12, 5, 3], &[4, 10, 6], &[2, 3, 15]]);
        assert!((cramers_v(&t) - 0.441_745).abs() < 5e-7);
    }

    #[test]
    fn cramers_v_of_scipy_docstring_example() {
        // scipy 1.17.1 contingency.association docstring: V = 0.18617813077483678,
        // χ² = 84.056069 (WORKED-EXAMPLES §14). An empty row must not change anything.
        let t = table(&[&[100, 150], &[203, 322], &[0, 0], &[420, 700], &[320, 210]]);
        assert!((cramers_v(&t) - 0.186_178_130_774_836_78).abs() < 1e-12);
    }

    #[test]
    fn four_fifths_rule_examples() {
        // Uniform Guidelines Q&A (1979), WORKED-EXAMPLES §10: rates 45 %, 48 %, 51 % against
        // 60 %: ratios 75 %, 80 %, 85 %; only 75 % indicates adverse impact (exactly 80 % does not).
        assert!(violates_four_fifths(45, 100, 60, 100));
        assert!(!violates_four_fifths(48, 100, 60, 100));
        assert!(!violates_four_fifths(51, 100, 60, 100));
        assert!((selection_rate_ratio(45, 100, 60, 100) - 0.75).abs() < 1e-15);
        // WORKED-EXAMPLES §10 float pitfall: 6/10 against 15/20 is exactly 4/5, while
        // (6/10)/(15/20) = 0.7999999999999999 in IEEE double.
        assert!(!violates_four_fifths(6, 10, 15, 20));
        let hide = std::hint::black_box::<f64>;
        assert!((hide(6.0) / hide(10.0)) / (hide(15.0) / hide(20.0)) < 0.8);
        assert_eq!(selection_rate_ratio(6, 10, 15, 20), 0.8);
        assert!(violates_four_fifths(5, 10, 15, 20));
    }
}
