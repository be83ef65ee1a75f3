//! Gradient, hessian and row-count sums per bin, for every feature of one leaf.
//!
//! Only the entries outside bin 0 are summed (read row by row from the feature groups of
//! `BinnedData`); each feature's bin 0 is then the leaf total minus its other bins. A
//! sibling's histogram is the parent's minus the child's. Every group is summed by one task in
//! row order, so the sums do not depend on the thread count.

use rayon::prelude::*;

use super::bins::{BinnedData, FeatureGroup};

/// Sums over the rows of one bin (or one leaf).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct BinSums {
    /// Sum of gradients.
    pub g: f64,
    /// Sum of hessians.
    pub h: f64,
    /// Number of rows.
    pub n: u64,
}

impl BinSums {
    #[inline]
    fn add(&mut self, gh: [f32; 2]) {
        self.g += f64::from(gh[0]);
        self.h += f64::from(gh[1]);
        self.n += 1;
    }

    /// Adds `other`, field by field.
    #[inline]
    fn add_sums(&mut self, other: &BinSums) {
        self.g += other.g;
        self.h += other.h;
        self.n += other.n;
    }

    /// `self − other`, field by field.
    #[inline]
    pub fn minus(self, other: BinSums) -> BinSums {
        BinSums {
            g: self.g - other.g,
            h: self.h - other.h,
            n: self.n - other.n,
        }
    }
}

/// What a histogram build needs to know about the leaf's rows.
pub struct LeafRows<'a> {
    /// The leaf's rows in increasing order.
    pub rows: &'a [u32],
    /// Gradient and hessian of each row, in the order of `rows`.
    pub ordered: &'a [[f32; 2]],
    /// True when `rows` is every row 0..n in order (the root without subsampling).
    pub all_rows: bool,
    /// Totals over the leaf's rows.
    pub totals: BinSums,
    /// Row counts per slot when they are already known (the root of a tree grown on all
    /// rows has the same counts in every round), so only gradients need summing.
    pub known_counts: Option<&'a [u64]>,
}

/// Rows per histogram task: a leaf with at least twice as many rows is summed in up to
/// [`MAX_CHUNKS`] equal chunks, each into its own partial histogram, and the partials are added
/// in chunk order. The chunks depend only on the leaf's row count, so the sums do not depend on
/// the thread count; they let two threads share a leaf evenly, where one task per feature group
/// alone would not.
const ROWS_PER_TASK: usize = 16_384;

/// Most chunks per leaf: every partial histogram is zeroed and added once, which costs memory
/// traffic in proportion to the slots, so big leaves get a few big chunks, not many.
const MAX_CHUNKS: usize = 4;

/// Fills `hist` (all features, laid out by `data.offsets`) for the leaf; `scratch` holds the
/// partial histograms of a leaf's later row chunks (reused between calls).
pub fn build(hist: &mut [BinSums], data: &BinnedData, leaf: &LeafRows, scratch: &mut Vec<BinSums>) {
    let m = leaf.ordered.len();
    let chunks = (m / ROWS_PER_TASK).clamp(1, MAX_CHUNKS);
    let chunk_rows = m.div_ceil(chunks);
    let total = hist.len();
    // Every task zeroes its own slice first, so old scratch contents need no clearing.
    scratch.resize((chunks - 1) * total, BinSums::default());
    {
        // One task per (row chunk, group): chunk 0 sums into `hist`, the others into scratch.
        let outputs = std::iter::once(&mut hist[..]).chain(scratch.chunks_mut(total.max(1)));
        let mut tasks: Vec<(usize, &FeatureGroup, &mut [BinSums])> = outputs
            .take(chunks)
            .enumerate()
            .flat_map(|(c, out)| {
                by_group(out, &data.groups)
                    .into_iter()
                    .map(move |(g, h)| (c, g, h))
            })
            .collect();
        tasks.par_iter_mut().for_each(|(c, group, h)| {
            let lo = (*c * chunk_rows).min(m);
            let hi = ((*c + 1) * chunk_rows).min(m);
            sum_chunk(h, group, leaf, lo..hi);
        });
    }
    // Add the later chunks in order, then fill each feature's bin 0.
    let scratch = &scratch[..(chunks - 1) * total];
    by_group(hist, &data.groups)
        .par_iter_mut()
        .for_each(|(group, h)| {
            for c in 1..chunks {
                let start = (c - 1) * total + group.first_slot;
                for (a, b) in h.iter_mut().zip(&scratch[start..start + group.n_slots]) {
                    a.add_sums(b);
                }
            }
            finish_group(h, group, data, leaf);
        });
}

/// `hist` cut into each group's slots, in group order.
fn by_group<'a>(
    hist: &'a mut [BinSums],
    groups: &'a [FeatureGroup],
) -> Vec<(&'a FeatureGroup, &'a mut [BinSums])> {
    let mut parts = Vec::with_capacity(groups.len());
    let mut rest = hist;
    for group in groups {
        let (head, tail) = std::mem::take(&mut rest).split_at_mut(group.n_slots);
        parts.push((group, head));
        rest = tail;
    }
    parts
}

/// Sums rows `range` (positions in the leaf's row list) of one feature group into `h`.
fn sum_chunk(
    h: &mut [BinSums],
    group: &FeatureGroup,
    leaf: &LeafRows,
    range: std::ops::Range<usize>,
) {
    h.iter_mut().for_each(|b| *b = BinSums::default());
    let ordered = &leaf.ordered[range.clone()];
    if leaf.known_counts.is_some() {
        sum_all_rows_gradients(h, group, ordered, range.start);
    } else if leaf.all_rows {
        sum_all_rows(h, group, ordered, range.start);
    } else {
        sum_leaf_rows(h, group, &leaf.rows[range], ordered);
    }
}

/// Known counts in place of the summed ones, then each feature's bin 0 from the leaf total.
fn finish_group(h: &mut [BinSums], group: &FeatureGroup, data: &BinnedData, leaf: &LeafRows) {
    if let Some(counts) = leaf.known_counts {
        let counts = &counts[group.first_slot..group.first_slot + group.n_slots];
        for (b, &n) in h.iter_mut().zip(counts) {
            b.n = n;
        }
    }
    // Bin 0 of each feature is what its other bins leave of the leaf total.
    for j in group.features.clone() {
        let lo = data.offsets[j] - group.first_slot;
        let hi = data.offsets[j + 1] - group.first_slot;
        let mut others = BinSums::default();
        for b in &h[lo + 1..hi] {
            others.add_sums(b);
        }
        h[lo] = leaf.totals.minus(others);
    }
}

/// Consecutive rows from `first`, counts known: only gradients and hessians are summed.
#[inline(never)]
fn sum_all_rows_gradients(
    h: &mut [BinSums],
    group: &FeatureGroup,
    gradients: &[[f32; 2]],
    first: usize,
) {
    for (k, &gh) in gradients.iter().enumerate() {
        add_row_gradients(h, group, first + k, gh);
    }
}

/// Consecutive rows from `first`.
#[inline(never)]
fn sum_all_rows(h: &mut [BinSums], group: &FeatureGroup, gradients: &[[f32; 2]], first: usize) {
    for (k, &gh) in gradients.iter().enumerate() {
        add_row(h, group, first + k, gh);
    }
}

/// The rows of one leaf (scattered), with their gradients in the same order.
#[inline(never)]
fn sum_leaf_rows(h: &mut [BinSums], group: &FeatureGroup, rows: &[u32], ordered: &[[f32; 2]]) {
    // Each row's entries are a cache miss; fetch them a few rows ahead (and their start
    // offsets further ahead).
    let m = rows.len();
    for (k, (&r, &gh)) in rows.iter().zip(ordered).enumerate() {
        if k + 2 * PREFETCH_ROWS < m {
            prefetch(&group.row_start[rows[k + 2 * PREFETCH_ROWS] as usize]);
        }
        if k + PREFETCH_ROWS < m {
            let start = group.row_start[rows[k + PREFETCH_ROWS] as usize] as usize;
            prefetch(group.slots.as_ptr().wrapping_add(start));
        }
        add_row(h, group, r as usize, gh);
    }
}

/// How many rows ahead the entries are fetched.
const PREFETCH_ROWS: usize = 16;

/// A hint to load the cache line holding `p`; it never faults and changes no result.
#[inline(always)]
fn prefetch<T>(p: *const T) {
    #[cfg(target_arch = "x86_64")]
    // SAFETY: a prefetch is only a hint; it does not dereference the pointer.
    unsafe {
        std::arch::x86_64::_mm_prefetch::<{ std::arch::x86_64::_MM_HINT_T0 }>(p.cast::<i8>());
    }
    #[cfg(not(target_arch = "x86_64"))]
    let _ = p;
}

#[inline]
fn add_row(h: &mut [BinSums], group: &FeatureGroup, r: usize, gh: [f32; 2]) {
    let lo = group.row_start[r] as usize;
    let hi = group.row_start[r + 1] as usize;
    for &slot in &group.slots[lo..hi] {
        h[slot as usize].add(gh);
    }
}

#[inline]
fn add_row_gradients(h: &mut [BinSums], group: &FeatureGroup, r: usize, gh: [f32; 2]) {
    let lo = group.row_start[r] as usize;
    let hi = group.row_start[r + 1] as usize;
    for &slot in &group.slots[lo..hi] {
        let b = &mut h[slot as usize];
        b.g += f64::from(gh[0]);
        b.h += f64::from(gh[1]);
    }
}

/// Turns the parent's histogram into the larger child's: `parent −= smaller`.
pub fn subtract_into(parent: &mut [BinSums], smaller: &[BinSums]) {
    parent
        .par_chunks_mut(8192)
        .zip(smaller.par_chunks(8192))
        .for_each(|(p, s)| {
            for (a, b) in p.iter_mut().zip(s) {
                *a = a.minus(*b);
            }
        });
}
