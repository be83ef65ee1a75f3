//! Pearson's chi-square test of homogeneity for an r × c table of counts (for example wins
//! by seat under each rule variant).

use serde::{Deserialize, Serialize};

use super::dist::chi_square_sf;
use super::error::StatsError;

/// Result of [`chi_square_homogeneity`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChiSquareTest {
    /// Pearson's X² = Σ (O − E)² / E over the non-empty rows and columns.
    pub statistic: f64,
    /// Degrees of freedom (r − 1)(c − 1) of the reduced table.
    pub df: usize,
    /// Upper-tail p-value of the statistic.
    pub p_value: f64,
    /// Indices of input rows dropped because they held no counts.
    pub dropped_rows: Vec<usize>,
    /// Indices of input columns dropped because they held no counts.
    pub dropped_columns: Vec<usize>,
    /// Smallest expected count in the reduced table.
    pub min_expected: f64,
    /// Cells of the reduced table whose expected count is below 5.
    pub cells_expected_below_5: usize,
    /// Cells in the reduced table.
    pub cells: usize,
}

impl ChiSquareTest {
    /// Whether the chi-square approximation is doubtful by Cochran's rule (common practice):
    /// some expected count below 1, or more than 20 % of them below 5.
    pub fn approximation_doubtful(&self) -> bool {
        self.min_expected < 1.0 || 5 * self.cells_expected_below_5 > self.cells
    }
}

/// Chi-square test that every row of `table` (rows × columns of counts) has the same column
/// distribution. All-zero rows and columns are dropped first and reported.
///
/// Errors if rows differ in length or fewer than two non-empty rows or columns remain.
pub fn chi_square_homogeneity(table: &[Vec<u64>]) -> Result<ChiSquareTest, StatsError> {
    let width = table.first().map_or(0, Vec::len);
    for (row, cells) in table.iter().enumerate() {
        if cells.len() != width {
            return Err(StatsError::RaggedTable {
                row,
                len: cells.len(),
                expected: width,
            });
        }
    }
    let row_sums: Vec<u64> = table.iter().map(|r| r.iter().sum()).collect();
    let col_sums: Vec<u64> = (0..width)
        .map(|c| table.iter().map(|r| r[c]).sum())
        .collect();
    let kept_rows: Vec<usize> = (0..table.len()).filter(|&r| row_sums[r] > 0).collect();
    let kept_cols: Vec<usize> = (0..width).filter(|&c| col_sums[c] > 0).collect();
    if kept_rows.len() < 2 || kept_cols.len() < 2 {
        return Err(StatsError::DegenerateTable {
            rows: kept_rows.len(),
            cols: kept_cols.len(),
        });
    }
    let total: f64 = row_sums.iter().sum::<u64>() as f64;
    let mut statistic = 0.0;
    let mut min_expected = f64::INFINITY;
    let mut below_5 = 0;
    for &r in &kept_rows {
        for &c in &kept_cols {
            // Both margins are positive here, so every expected count is positive.
            let expected = row_sums[r] as f64 * col_sums[c] as f64 / total;
            let diff = table[r][c] as f64 - expected;
            statistic += diff * diff / expected;
            min_expected = min_expected.min(expected);
            if expected < 5.0 {
                below_5 += 1;
            }
        }
    }
    let df = (kept_rows.len() - 1) * (kept_cols.len() - 1);
    Ok(ChiSquareTest {
        statistic,
        df,
        p_value: chi_square_sf(statistic, df as f64),
        dropped_rows: (0..table.len()).filter(|&r| row_sums[r] == 0).collect(),
        dropped_columns: (0..width).filter(|&c| col_sums[c] == 0).collect(),
        min_expected,
        cells_expected_below_5: below_5,
        cells: kept_rows.len() * kept_cols.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::dist::normal_sf;

    #[test]
    fn two_by_two_table_matches_hand_computation() {
        // Worked by hand: [[10, 20], [30, 40]], margins rows 30, 70; columns 40, 60; N = 100.
        // Expected 12, 18, 28, 42; every |O − E| = 2, so X² = 4/12 + 4/18 + 4/28 + 4/42
        // = 0.793651, df = 1. For 1 df, p = 2(1 − Φ(√X²)) (identity), = 0.372998
        // (recomputed with SciPy 1.17, chi2_contingency without Yates correction).
        let t = chi_square_homogeneity(&[vec![10, 20], vec![30, 40]]).unwrap();
        let hand = 4.0 / 12.0 + 4.0 / 18.0 + 4.0 / 28.0 + 4.0 / 42.0;
        assert!((t.statistic - hand).abs() < 1e-12);
        assert_eq!(t.df, 1);
        assert!((t.p_value - 2.0 * normal_sf(hand.sqrt())).abs() < 1e-12);
        assert!((t.p_value - 0.372_998).abs() < 1e-6);
        assert_eq!(t.min_expected, 12.0);
        assert!(!t.approximation_doubtful());
    }

    #[test]
    fn two_by_three_table_reproduces_textbook_example() {
        // Agresti (2007), gender × party identification, as in R's chisq.test help
        // (from memory): X² = 30.07, df = 2, p = 2.954e-07; full digits recomputed with
        // SciPy 1.17 (chi2_contingency): 30.070149, p 2.95359e-07.
        let t = chi_square_homogeneity(&[vec![762, 327, 468], vec![484, 239, 477]]).unwrap();
        assert!((t.statistic - 30.070_149).abs() < 1e-5);
        assert_eq!(t.df, 2);
        assert!((t.p_value - 2.953_59e-7).abs() < 1e-11);
    }

    #[test]
    fn zero_rows_and_columns_are_dropped_and_reported() {
        // The same hand table with an empty row and column inserted must give the same
        // statistic (the empty margins carry no information).
        let t = chi_square_homogeneity(&[vec![10, 0, 20], vec![0, 0, 0], vec![30, 0, 40]]).unwrap();
        let hand = 4.0 / 12.0 + 4.0 / 18.0 + 4.0 / 28.0 + 4.0 / 42.0;
        assert!((t.statistic - hand).abs() < 1e-12);
        assert_eq!(t.df, 1);
        assert_eq!(t.dropped_rows, vec![1]);
        assert_eq!(t.dropped_columns, vec![1]);
    }

    #[test]
    fn small_expected_counts_are_flagged() {
        // Hand check: [[1, 2], [3, 1]] has N = 7 and expected counts 12/7, 9/7, 16/7, 12/7,
        // all below 5.
        let t = chi_square_homogeneity(&[vec![1, 2], vec![3, 1]]).unwrap();
        assert_eq!(t.cells_expected_below_5, 4);
        assert!((t.min_expected - 9.0 / 7.0).abs() < 1e-12);
        assert!(t.approximation_doubtful());
    }

    #[test]
    fn ragged_or_degenerate_tables_are_errors() {
        assert_eq!(
            chi_square_homogeneity(&[vec![1, 2], vec![3]]),
            Err(StatsError::RaggedTable {
                row: 1,
                len: 1,
                expected: 2
            })
        );
        assert_eq!(
            chi_square_homogeneity(&[vec![1, 2], vec![0, 0]]),
            Err(StatsError::DegenerateTable { rows: 1, cols: 2 })
        );
        assert!(chi_square_homogeneity(&[]).is_err());
    }
}
