//! Bin edges per feature and the binned copy of the training data.
//!
//! Edges come from a deterministic sample of rows. Bin 0 holds the smallest values (zero for
//! the non-negative counts this engine sees) and NaN. Binned data are stored column-major in
//! bytes (for partitioning rows at a split), and also row by row as lists of only the entries
//! outside bin 0, in blocks of features, so a histogram is built from the non-zero entries of
//! the leaf's rows with contiguous reads. (Per-column lists of non-zero rows were tried first:
//! gathering a column's bins for a leaf's scattered rows cost a cache miss per row and
//! feature, and dominated the profile.)

use rand::SeedableRng;
use rand::seq::index;
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::super::matrix::Matrix;

/// Rows sampled to place the bin edges.
pub const EDGE_SAMPLE_ROWS: usize = 100_000;

/// Upper bounds of the bins of one feature: value v is in the first bin k with v ≤ upper[k],
/// or in the last bin when above all bounds; NaN is in bin 0.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BinEdges {
    /// Increasing upper bounds; there are `upper.len() + 1` bins.
    pub upper: Vec<f32>,
}

impl BinEdges {
    /// Number of bins.
    pub fn n_bins(&self) -> usize {
        self.upper.len() + 1
    }

    /// The bin of a raw value (NaN → 0).
    #[inline]
    pub fn bin_of(&self, v: f32) -> u8 {
        // Most values are the smallest (a zero count): answer those without a search.
        match self.upper.first() {
            Some(&first) if v <= first => return 0,
            None => return 0,
            _ => {}
        }
        // partition_point finds the first bound ≥ v; NaN compares false and lands in bin 0.
        self.upper.partition_point(|&u| u < v) as u8
    }
}

/// Whole values from −`COUNTED` to `COUNTED` − 1 are counted rather than sorted when a sample
/// holds nothing else (counts, differences of counts, turn numbers).
const COUNTED: i32 = 1024;

/// Each distinct value of a sample of whole numbers in −[`COUNTED`]..[`COUNTED`] (NaN ignored)
/// with how often it occurs, in increasing order; `None` when some value is outside.
fn count_whole_values(values: &[f32]) -> Option<Vec<(f32, usize)>> {
    let mut counts = vec![0usize; 2 * COUNTED as usize];
    for &v in values {
        if v.is_nan() {
            continue;
        }
        // Out-of-range and fractional values fail one of the two tests.
        let k = v as i32;
        if !(-COUNTED..COUNTED).contains(&k) || k as f32 != v {
            return None;
        }
        counts[(k + COUNTED) as usize] += 1;
    }
    Some(
        counts
            .iter()
            .enumerate()
            .filter(|&(_, &n)| n > 0)
            .map(|(k, &n)| ((k as i32 - COUNTED) as f32, n))
            .collect(),
    )
}

/// Edges for one feature from its sampled values; NaN values are ignored.
pub fn edges_from_sample(mut values: Vec<f32>, max_bins: usize) -> BinEdges {
    match count_whole_values(&values) {
        Some(distinct) => edges_from_distinct(&distinct, max_bins),
        None => {
            values.retain(|v| !v.is_nan());
            edges_from_distinct(&distinct_sorted(values), max_bins)
        }
    }
}

/// Each distinct value of `values` (no NaN) with its count, in increasing order.
fn distinct_sorted(mut values: Vec<f32>) -> Vec<(f32, usize)> {
    // Zeros (most of a count column) are counted rather than sorted; ±0 are one value.
    let mut zeros = 0usize;
    values.retain(|&v| {
        if v == 0.0 {
            zeros += 1;
            false
        } else {
            true
        }
    });
    // Sorted as integers: the order of `f32::total_cmp`, compared faster.
    values.sort_unstable_by_key(|v| {
        let b = v.to_bits() as i32;
        b ^ (((b >> 31) as u32) >> 1) as i32
    });
    // Distinct values with their counts.
    let mut distinct: Vec<(f32, usize)> = Vec::new();
    let push = |distinct: &mut Vec<(f32, usize)>, v: f32, n: usize| match distinct.last_mut() {
        Some((last, count)) if *last == v => *count += n,
        _ => distinct.push((v, n)),
    };
    let negatives = values.partition_point(|&v| v < 0.0);
    for &v in &values[..negatives] {
        push(&mut distinct, v, 1);
    }
    if zeros > 0 {
        push(&mut distinct, 0.0, zeros);
    }
    for &v in &values[negatives..] {
        push(&mut distinct, v, 1);
    }
    distinct
}

/// Edges from the distinct values of a sample and their counts (increasing): a bound between
/// every two neighbours when they are at most `max_bins`, otherwise bins of about equal counts.
fn edges_from_distinct(distinct: &[(f32, usize)], max_bins: usize) -> BinEdges {
    if distinct.len() <= 1 {
        return BinEdges { upper: Vec::new() };
    }
    // The bound between neighbouring values a < b; `a` itself when the midpoint rounds to b
    // or is undefined (a = −∞).
    let midpoint = |a: f32, b: f32| {
        let m = (f64::from(a) + (f64::from(b) - f64::from(a)) / 2.0) as f32;
        if m.is_nan() || m >= b { a } else { m }
    };
    let mut upper = Vec::new();
    if distinct.len() <= max_bins {
        for w in distinct.windows(2) {
            upper.push(midpoint(w[0].0, w[1].0));
        }
        return BinEdges { upper };
    }
    // Greedy equal-count bins; a heavy single value (such as zero) gets a bin of its own and the
    // remaining rows are spread over the remaining bins.
    let mut remaining_rows: usize = distinct.iter().map(|d| d.1).sum();
    let mut bins_left = max_bins;
    let mut in_bin = 0usize;
    for k in 0..distinct.len() - 1 {
        in_bin += distinct[k].1;
        let target = remaining_rows as f64 / bins_left as f64;
        let next_heavy = distinct[k + 1].1 as f64 >= target;
        if (in_bin as f64 >= target || next_heavy) && bins_left > 1 {
            upper.push(midpoint(distinct[k].0, distinct[k + 1].0));
            remaining_rows -= in_bin;
            in_bin = 0;
            bins_left -= 1;
        }
    }
    BinEdges { upper }
}

/// Bin edges for every column of `x` from a seeded sample of rows.
pub fn find_edges(x: &Matrix, max_bins: usize, seed: u64) -> Vec<BinEdges> {
    let n = x.n_rows();
    let p = x.n_cols();
    let rows: Vec<usize> = if n <= EDGE_SAMPLE_ROWS {
        (0..n).collect()
    } else {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let mut r = index::sample(&mut rng, n, EDGE_SAMPLE_ROWS).into_vec();
        r.sort_unstable();
        r
    };
    // Each block of features gathers its sampled values contiguously, then finds its edges.
    const FEATURES_PER_TASK: usize = 16;
    let blocks: Vec<Vec<BinEdges>> = (0..p.div_ceil(FEATURES_PER_TASK))
        .into_par_iter()
        .map(|b| {
            let cols = b * FEATURES_PER_TASK..((b + 1) * FEATURES_PER_TASK).min(p);
            let mut columns: Vec<Vec<f32>> = cols
                .clone()
                .map(|_| Vec::with_capacity(rows.len()))
                .collect();
            for &i in &rows {
                let row = &x.row(i)[cols.clone()];
                for (c, &v) in columns.iter_mut().zip(row) {
                    c.push(v);
                }
            }
            columns
                .into_iter()
                .map(|values| edges_from_sample(values, max_bins))
                .collect()
        })
        .collect();
    blocks.into_iter().flatten().collect()
}

/// The entries outside bin 0 of a block of consecutive features, stored row by row: row `i`'s
/// entries are `slots[row_start[i]..row_start[i + 1]]`, each the histogram slot
/// (`offsets[feature] + bin − first_slot`) of one feature whose bin is not 0.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FeatureGroup {
    /// Features in this group.
    pub features: std::ops::Range<usize>,
    /// First histogram slot of the group.
    pub first_slot: usize,
    /// Histogram slots of the group.
    pub n_slots: usize,
    /// Start of each row's entries, plus the end.
    pub row_start: Vec<u32>,
    /// Group-local histogram slot of each entry.
    pub slots: Vec<u16>,
}

/// The training data as bins.
#[derive(Debug, Clone, PartialEq)]
pub struct BinnedData {
    n_rows: usize,
    /// Edges per feature.
    pub edges: Vec<BinEdges>,
    /// Column-major bins: feature j's bins are `columns[j*n_rows..(j+1)*n_rows]`.
    columns: Vec<u8>,
    /// Row-wise lists of the entries outside bin 0, in blocks of features.
    pub groups: Vec<FeatureGroup>,
    /// First histogram slot of each feature; the last entry is the total slot count.
    pub offsets: Vec<usize>,
}

/// Most features in one group (so a group's slots fit in u16 and its histogram in cache).
pub const MAX_FEATURES_PER_GROUP: usize = 64;

/// Feature groups aimed at: so two threads share the work while each row is visited only a
/// few times (every visit of a scattered row is a cache miss).
const TARGET_GROUPS: usize = 4;

/// Groups of consecutive features, each of at most [`MAX_FEATURES_PER_GROUP`], with about
/// equal shares of the entries outside bin 0 (what a histogram pass reads), so the groups'
/// tasks take about equally long. Depends only on the data, never on the thread count.
fn group_layout(columns: &[u8], n_rows: usize, n_features: usize) -> Vec<std::ops::Range<usize>> {
    if n_features == 0 {
        return Vec::new();
    }
    // One more per feature: each also costs its bin-0 fill and split search.
    let weight: Vec<usize> = columns
        .par_chunks(n_rows.max(1))
        .map(|c| c.iter().filter(|&&b| b != 0).count() + 1)
        .collect();
    let total: usize = weight.iter().sum();
    let groups = TARGET_GROUPS.max(n_features.div_ceil(MAX_FEATURES_PER_GROUP));
    let mut ranges = Vec::with_capacity(groups);
    let (mut start, mut before, mut inside) = (0, 0, 0);
    for (j, &w) in weight.iter().enumerate() {
        inside += w;
        let k = ranges.len() + 1;
        let full = j + 1 - start == MAX_FEATURES_PER_GROUP;
        if full || (k < groups && before + inside >= total * k / groups) {
            ranges.push(start..j + 1);
            before += inside;
            inside = 0;
            start = j + 1;
        }
    }
    if start < n_features {
        ranges.push(start..n_features);
    }
    ranges
}

/// Rows binned per parallel work item.
const BIN_CHUNK_ROWS: usize = 8192;

/// Whole values 0, 1, … below this have their bins looked up, not searched (counts are).
const LOOKED_UP: usize = 64;

/// Column-major bins of every value of `x`.
fn bin_columns(x: &Matrix, edges: &[BinEdges]) -> Vec<u8> {
    let n = x.n_rows();
    let p = x.n_cols();
    let lookup: Vec<[u8; LOOKED_UP]> = edges
        .iter()
        .map(|e| std::array::from_fn(|k| e.bin_of(k as f32)))
        .collect();
    let n_chunks = n.div_ceil(BIN_CHUNK_ROWS);
    // Each chunk bins its rows into a small column-major block, copied into place after.
    let blocks: Vec<Vec<u8>> = (0..n_chunks)
        .into_par_iter()
        .map(|c| {
            let lo = c * BIN_CHUNK_ROWS;
            let hi = ((c + 1) * BIN_CHUNK_ROWS).min(n);
            let len = hi - lo;
            let mut block = vec![0u8; len * p];
            for i in lo..hi {
                for (j, &v) in x.row(i).iter().enumerate() {
                    // NaN and negative values convert to 0 and fail the comparison.
                    let k = v as usize;
                    block[j * len + (i - lo)] = if k < LOOKED_UP && k as f32 == v {
                        lookup[j][k]
                    } else {
                        edges[j].bin_of(v)
                    };
                }
            }
            block
        })
        .collect();
    let mut columns = vec![0u8; n * p];
    columns
        .par_chunks_mut(n.max(1))
        .enumerate()
        .for_each(|(j, col)| {
            for (c, block) in blocks.iter().enumerate() {
                let lo = c * BIN_CHUNK_ROWS;
                let len = block.len() / p;
                col[lo..lo + len].copy_from_slice(&block[j * len..(j + 1) * len]);
            }
        });
    columns
}

impl BinnedData {
    /// Bins every value of `x` with `edges`.
    pub fn new(x: &Matrix, edges: Vec<BinEdges>) -> Self {
        let columns = bin_columns(x, &edges);
        let layout = group_layout(&columns, x.n_rows(), x.n_cols());
        Self::assemble(x.n_rows(), edges, columns, &layout)
    }

    /// Bins `x` with `like`'s edges and feature groups.
    pub fn new_like(x: &Matrix, like: &BinnedData) -> Self {
        let columns = bin_columns(x, &like.edges);
        let layout: Vec<_> = like.groups.iter().map(|g| g.features.clone()).collect();
        Self::assemble(x.n_rows(), like.edges.clone(), columns, &layout)
    }

    /// Bins `x` with `like`'s edges for prediction on bins only ([`super::Tree::predict_binned`]):
    /// no row-wise entry lists, so it cannot be grown on. A tree walks one column at a time
    /// over many rows, which stays in cache where raw rows would not.
    pub fn for_prediction(x: &Matrix, like: &BinnedData) -> Self {
        let columns = bin_columns(x, &like.edges);
        Self::assemble(x.n_rows(), like.edges.clone(), columns, &[])
    }

    /// The binned data from column-major bins and a group layout.
    fn assemble(
        n: usize,
        edges: Vec<BinEdges>,
        columns: Vec<u8>,
        layout: &[std::ops::Range<usize>],
    ) -> Self {
        let mut offsets = Vec::with_capacity(edges.len() + 1);
        let mut total = 0;
        for e in &edges {
            offsets.push(total);
            total += e.n_bins();
        }
        offsets.push(total);
        let groups = layout
            .par_iter()
            .map(|features| {
                let features = features.clone();
                let first_slot = offsets[features.start];
                let n_slots = offsets[features.end] - first_slot;
                let cols: Vec<(&[u8], u16)> = features
                    .clone()
                    .map(|j| {
                        (
                            &columns[j * n..(j + 1) * n],
                            (offsets[j] - first_slot) as u16,
                        )
                    })
                    .collect();
                // Sized exactly by a count first, then filled without a branch on the data:
                // every bin is written at the cursor, which moves on only past non-zero bins.
                let entries: usize = cols
                    .iter()
                    .map(|(col, _)| col.iter().filter(|&&b| b != 0).count())
                    .sum();
                let mut slots = vec![0u16; entries + 1];
                let mut row_start = Vec::with_capacity(n + 1);
                row_start.push(0u32);
                let mut at = 0usize;
                for i in 0..n {
                    for &(col, base) in &cols {
                        let b = col[i];
                        slots[at] = base + u16::from(b);
                        at += usize::from(b != 0);
                    }
                    row_start.push(at as u32);
                }
                slots.truncate(entries);
                FeatureGroup {
                    features,
                    first_slot,
                    n_slots,
                    row_start,
                    slots,
                }
            })
            .collect();
        Self {
            n_rows: n,
            edges,
            columns,
            groups,
            offsets,
        }
    }

    /// The rows `rows` (in that order) of this binned data, with the same edges: what
    /// [`BinnedData::new`] would give for those rows of the raw matrix, without binning again.
    /// Indices must be below [`Self::n_rows`].
    pub fn select_rows(&self, rows: &[u32]) -> BinnedData {
        let n = self.n_rows;
        let m = rows.len();
        let mut columns = vec![0u8; m * self.n_features()];
        columns
            .par_chunks_mut(m.max(1))
            .enumerate()
            .for_each(|(j, out)| {
                let col = &self.columns[j * n..(j + 1) * n];
                for (o, &r) in out.iter_mut().zip(rows) {
                    *o = col[r as usize];
                }
            });
        let groups = self
            .groups
            .par_iter()
            .map(|g| {
                let mut row_start = Vec::with_capacity(m + 1);
                let mut slots = Vec::new();
                row_start.push(0u32);
                for &r in rows {
                    let r = r as usize;
                    slots.extend_from_slice(
                        &g.slots[g.row_start[r] as usize..g.row_start[r + 1] as usize],
                    );
                    row_start.push(slots.len() as u32);
                }
                FeatureGroup {
                    features: g.features.clone(),
                    first_slot: g.first_slot,
                    n_slots: g.n_slots,
                    row_start,
                    slots,
                }
            })
            .collect();
        BinnedData {
            n_rows: m,
            edges: self.edges.clone(),
            columns,
            groups,
            offsets: self.offsets.clone(),
        }
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.n_rows
    }

    /// Number of features.
    pub fn n_features(&self) -> usize {
        self.edges.len()
    }

    /// Bins of feature `j`, one per row.
    #[inline]
    pub fn column(&self, j: usize) -> &[u8] {
        &self.columns[j * self.n_rows..(j + 1) * self.n_rows]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counted_whole_values_give_the_edges_sorting_gives() {
        // Counts, differences of counts (negative) and ±0, with few and with many distinct
        // values (more than the bins: the equal-count path), and a heavy zero.
        let mut rng_state = 7u64;
        let mut next = || {
            rng_state = rng_state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (rng_state >> 33) as i64
        };
        for (spread, zeros) in [(5i64, 0usize), (40, 300), (900, 2000)] {
            let mut values: Vec<f32> = (0..5000)
                .map(|_| (next() % (2 * spread + 1) - spread) as f32)
                .collect();
            values.extend(std::iter::repeat_n(0.0, zeros));
            values.push(-0.0);
            values.push(f32::NAN);
            let counted = count_whole_values(&values).expect("whole values in range");
            let mut present = values.clone();
            present.retain(|v| !v.is_nan());
            let sorted = distinct_sorted(present);
            assert_eq!(counted, sorted);
            for max_bins in [16, 255] {
                assert_eq!(
                    edges_from_sample(values.clone(), max_bins),
                    edges_from_distinct(&sorted, max_bins)
                );
            }
        }
        // A fraction, or a value past the counted range, is sorted instead.
        assert!(count_whole_values(&[1.0, 2.5]).is_none());
        assert!(count_whole_values(&[1.0, 5000.0]).is_none());
        assert!(count_whole_values(&[f32::INFINITY]).is_none());
    }

    #[test]
    fn few_distinct_values_get_one_bin_each_with_zero_in_bin_0() {
        let e = edges_from_sample(vec![0.0, 0.0, 3.0, 1.0, 1.0, f32::NAN], 255);
        assert_eq!(e.upper, vec![0.5, 2.0]);
        assert_eq!(e.bin_of(0.0), 0);
        assert_eq!(e.bin_of(f32::NAN), 0);
        assert_eq!(e.bin_of(1.0), 1);
        assert_eq!(e.bin_of(2.0), 1);
        assert_eq!(e.bin_of(7.0), 2);
    }

    #[test]
    fn many_distinct_values_respect_max_bins_and_give_zero_its_own_bin() {
        let mut v = vec![0.0f32; 5000];
        v.extend((1..=5000).map(|i| i as f32));
        let e = edges_from_sample(v, 16);
        assert!(e.n_bins() <= 16);
        assert_eq!(e.bin_of(0.0), 0);
        assert_eq!(e.bin_of(1.0), 1);
        // Equal-count bins over the non-zero values: about 5000/15 values each (common practice).
        let first = (1..=5000).filter(|&i| e.bin_of(i as f32) == 1).count();
        assert!((250..=450).contains(&first), "{first}");
    }

    #[test]
    fn zeros_of_both_signs_are_one_value_between_the_negatives_and_positives() {
        // By hand: distinct values −2, 0 (three of them, −0 included), 1, 5; the bounds are the
        // midpoints −1, 0.5 and 3.
        let e = edges_from_sample(vec![1.0, -0.0, 5.0, 0.0, -2.0, 1.0, 0.0, f32::NAN], 255);
        assert_eq!(e.upper, vec![-1.0, 0.5, 3.0]);
        assert_eq!(e.bin_of(-0.0), 1);
        assert_eq!(e.bin_of(0.0), 1);
    }

    #[test]
    fn looked_up_bins_equal_searched_bins() {
        let edges = edges_from_sample(vec![0.0, 1.0, 2.0, 5.0, 40.0, 63.0, 64.0, 70.5], 255);
        let values = [
            0.0,
            -0.0,
            1.0,
            2.0,
            3.0,
            5.0,
            39.0,
            63.0,
            64.0,
            65.0,
            2.5,
            -1.0,
            f32::NAN,
        ];
        let x = Matrix::new(values.len(), 1, values.to_vec()).unwrap();
        let binned = BinnedData::new(&x, vec![edges.clone()]);
        for (i, &v) in values.iter().enumerate() {
            assert_eq!(binned.column(0)[i], edges.bin_of(v), "value {v}");
        }
    }

    #[test]
    fn infinite_values_give_ordered_bounds() {
        let e = edges_from_sample(vec![f32::NEG_INFINITY, 0.0, 1.0, f32::INFINITY], 255);
        assert!(e.upper.windows(2).all(|w| w[0] < w[1]), "{:?}", e.upper);
        assert_eq!(e.bin_of(f32::NEG_INFINITY), 0);
        assert_eq!(e.bin_of(f32::INFINITY), 3);
    }

    /// A small count table with zeros, repeats and a NaN, 5 columns wide.
    fn counts(rows: usize, salt: usize) -> Matrix {
        let values = (0..rows * 5)
            .map(|k| match (k * 7 + salt) % 11 {
                0..=4 => 0.0,
                10 => f32::NAN,
                v => (v * (k % 5 + 1)) as f32,
            })
            .collect();
        Matrix::new(rows, 5, values).unwrap()
    }

    #[test]
    fn groups_are_contiguous_capped_and_balanced_by_entries() {
        // 200 features: the first 20 have an entry in every row, the rest in one row of ten.
        let (n, p) = (50, 200);
        let mut columns = vec![0u8; n * p];
        for j in 0..p {
            for i in 0..n {
                if j < 20 || i % 10 == 0 {
                    columns[j * n + i] = 1;
                }
            }
        }
        let layout = group_layout(&columns, n, p);
        assert_eq!(layout.first().map(|r| r.start), Some(0));
        assert_eq!(layout.last().map(|r| r.end), Some(p));
        assert!(layout.windows(2).all(|w| w[0].end == w[1].start));
        assert!(layout.iter().all(|r| r.len() <= MAX_FEATURES_PER_GROUP));
        // By hand: weights (entries + 1) are 51 for the first 20 features and 6 for the rest,
        // 2,100 in all, so the targets are 525, 1,050 and 1,575 cumulated. The first group
        // closes after feature 10 (11 × 51 = 561), the second after feature 24 (1,020 + 5 × 6);
        // the third would need 88 more features and stops at the cap of 64, and the rest
        // (111 features) is cut at the cap too.
        assert_eq!(layout, vec![0..11, 11..25, 25..89, 89..153, 153..200]);
    }

    #[test]
    fn selected_rows_equal_binning_the_selected_raw_rows() {
        let x = counts(60, 1);
        let edges = find_edges(&x, 4, 2);
        let all = BinnedData::new(&x, edges.clone());
        let rows = [59usize, 0, 7, 7, 33];
        let picked = all.select_rows(&rows.map(|r| r as u32));
        assert_eq!(picked, BinnedData::new(&x.select_rows(&rows), edges));
    }

    #[test]
    fn constant_column_has_a_single_bin() {
        assert_eq!(edges_from_sample(vec![2.0; 10], 255).n_bins(), 1);
    }
}
