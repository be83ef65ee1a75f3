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
}

/// Fills `hist` (all features, laid out by `data.offsets`) for the leaf.
pub fn build(hist: &mut [BinSums], data: &BinnedData, leaf: &LeafRows) {
    let mut parts: Vec<(&FeatureGroup, &mut [BinSums])> = Vec::with_capacity(data.groups.len());
    let mut rest = hist;
    for group in &data.groups {
        let (head, tail) = rest.split_at_mut(group.n_slots);
        parts.push((group, head));
        rest = tail;
    }
    parts.par_iter_mut().for_each(|(group, h)| {
        h.iter_mut().for_each(|b| *b = BinSums::default());
        if leaf.all_rows {
            for (r, &gh) in leaf.ordered.iter().enumerate() {
                add_row(h, group, r, gh);
            }
        } else {
            for (&r, &gh) in leaf.rows.iter().zip(leaf.ordered) {
                add_row(h, group, r as usize, gh);
            }
        }
        // Bin 0 of each feature is what its other bins leave of the leaf total.
        for j in group.features.clone() {
            let lo = data.offsets[j] - group.first_slot;
            let hi = data.offsets[j + 1] - group.first_slot;
            let mut others = BinSums::default();
            for b in &h[lo + 1..hi] {
                others.g += b.g;
                others.h += b.h;
                others.n += b.n;
            }
            h[lo] = leaf.totals.minus(others);
        }
    });
}

#[inline]
fn add_row(h: &mut [BinSums], group: &FeatureGroup, r: usize, gh: [f32; 2]) {
    let lo = group.row_start[r] as usize;
    let hi = group.row_start[r + 1] as usize;
    for &slot in &group.slots[lo..hi] {
        h[slot as usize].add(gh);
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
