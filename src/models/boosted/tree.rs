//! One regression tree: growing it best-leaf-first from gradient histograms, and predicting
//! with it on raw or binned rows.

use serde::{Deserialize, Serialize};

use super::super::matrix::Matrix;
use super::bins::BinnedData;
use super::histogram::{self, BinSums, LeafRows};
use super::params::BoostedParams;
use super::partition::{DataPartition, split_stable};
use super::split::{SplitCandidate, best_split, leaf_value};

/// An internal node. A child index `c ≥ 0` is a node, `c < 0` is leaf `!c`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Node {
    /// Feature tested.
    pub feature: u32,
    /// Rows whose bin is ≤ this go left (training-data bins).
    pub threshold_bin: u8,
    /// Raw-value form of the same test: value ≤ threshold (or NaN) goes left.
    pub threshold: f32,
    /// Left child.
    pub left: i32,
    /// Right child.
    pub right: i32,
    /// Loss reduction of this split (for feature importance).
    pub gain: f64,
}

/// A fitted tree; its leaf values already include the learning rate.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Tree {
    /// Internal nodes; node 0 is the root (empty for a single-leaf tree).
    pub nodes: Vec<Node>,
    /// Value added to the margin by each leaf.
    pub leaf_values: Vec<f64>,
}

impl Tree {
    /// The tree's output for a raw feature row (NaN goes left).
    #[inline]
    pub fn predict_row(&self, row: &[f32]) -> f64 {
        if self.nodes.is_empty() {
            return self.leaf_values[0];
        }
        let mut at = 0usize;
        loop {
            let node = &self.nodes[at];
            let v = row[node.feature as usize];
            // NaN goes left, matching bin 0 for NaN.
            let child = if v.is_nan() || v <= node.threshold {
                node.left
            } else {
                node.right
            };
            if child < 0 {
                return self.leaf_values[!child as usize];
            }
            at = child as usize;
        }
    }

    /// The tree's output for training row `i`, read from its bins.
    #[inline]
    pub fn predict_binned(&self, data: &BinnedData, i: usize) -> f64 {
        if self.nodes.is_empty() {
            return self.leaf_values[0];
        }
        let mut at = 0usize;
        loop {
            let node = &self.nodes[at];
            let b = data.column(node.feature as usize)[i];
            let child = if b <= node.threshold_bin {
                node.left
            } else {
                node.right
            };
            if child < 0 {
                return self.leaf_values[!child as usize];
            }
            at = child as usize;
        }
    }

    /// The leaf that training row `i` lands in, read from its bins.
    #[inline]
    pub fn leaf_binned(&self, data: &BinnedData, i: usize) -> usize {
        if self.nodes.is_empty() {
            return 0;
        }
        let mut at = 0usize;
        loop {
            let node = &self.nodes[at];
            let b = data.column(node.feature as usize)[i];
            let child = if b <= node.threshold_bin {
                node.left
            } else {
                node.right
            };
            if child < 0 {
                return !child as usize;
            }
            at = child as usize;
        }
    }

    /// Number of leaves.
    pub fn n_leaves(&self) -> usize {
        self.leaf_values.len()
    }
}

/// Buffers for finding the leaves of many rows at once ([`LeafWalk::leaves`]), reused from
/// one call to the next.
#[derive(Debug, Default)]
pub struct LeafWalk {
    /// Positions of the block, each node's rows a contiguous, increasing segment.
    positions: Vec<u32>,
    /// The right-going positions of the node being split, on the way.
    right: Vec<u32>,
    /// Nodes (or leaves) still to visit, with their segment.
    stack: Vec<(i32, usize, usize)>,
    /// The leaf of each position.
    leaves: Vec<u32>,
}

impl LeafWalk {
    /// The leaf of each of `m` rows: entry `k` for data row `row_of(k)`. The block's
    /// positions are split node by node, stably and without a branch on the data, so each
    /// node reads its column in the order of the rows (increasing when `row_of` is). The same
    /// leaves as [`Tree::leaf_binned`], several times faster on blocks of a few thousand rows:
    /// a row-by-row walk mispredicts about every other branch.
    pub fn leaves(
        &mut self,
        tree: &Tree,
        data: &BinnedData,
        m: usize,
        row_of: impl Fn(usize) -> usize,
    ) -> &[u32] {
        let row_of = &row_of;
        self.split_block(tree, m, |node| {
            let column = data.column(node.feature as usize);
            let threshold = node.threshold_bin;
            move |k| column[row_of(k)] <= threshold
        })
    }

    /// [`Self::leaves`] of the raw rows `first..first + m` of `x` (NaN goes left): the same
    /// leaves as [`Tree::predict_row`] reaches.
    pub fn leaves_of_raw_rows(
        &mut self,
        tree: &Tree,
        x: &Matrix,
        first: usize,
        m: usize,
    ) -> &[u32] {
        self.split_block(tree, m, |node| {
            let (feature, threshold) = (node.feature as usize, node.threshold);
            move |k| {
                let v = x.row(first + k)[feature];
                v.is_nan() || v <= threshold
            }
        })
    }

    /// Splits the positions `0..m` node by node; `test(node)` gives the node's question
    /// "does position k go left?".
    fn split_block<'t, T: Fn(usize) -> bool>(
        &mut self,
        tree: &'t Tree,
        m: usize,
        test: impl Fn(&'t Node) -> T,
    ) -> &[u32] {
        self.leaves.clear();
        self.leaves.resize(m, 0);
        if tree.nodes.is_empty() || m == 0 {
            return &self.leaves;
        }
        self.positions.clear();
        self.positions.extend(0..m as u32);
        self.stack.clear();
        self.stack.push((0, 0, m));
        while let Some((at, begin, end)) = self.stack.pop() {
            if at < 0 {
                let leaf = !at as u32;
                for &k in &self.positions[begin..end] {
                    self.leaves[k as usize] = leaf;
                }
                continue;
            }
            let node = &tree.nodes[at as usize];
            let goes_left = test(node);
            let n_left = begin
                + split_stable(&mut self.positions[begin..end], &mut self.right, |k| {
                    goes_left(k as usize)
                });
            self.stack.push((node.right, n_left, end));
            self.stack.push((node.left, begin, n_left));
        }
        &self.leaves
    }
}

/// What one tree is grown from.
pub struct GrowInput<'a> {
    /// The binned training data.
    pub data: &'a BinnedData,
    /// Gradient and hessian per row.
    pub gradients: &'a [[f32; 2]],
    /// The rows of this tree's sample (increasing), or `None` for all rows.
    pub rows: Option<&'a [u32]>,
    /// Whether each feature may be split on in this tree.
    pub active: &'a [bool],
    /// The active features' indices.
    pub active_list: &'a [usize],
    /// Hyperparameters.
    pub params: &'a BoostedParams,
}

struct LeafState {
    hist: Option<Vec<BinSums>>,
    totals: BinSums,
    depth: usize,
    best: Option<SplitCandidate>,
    parent: Option<(usize, bool)>,
}

/// Grows trees, reusing its buffers from one tree to the next; one learner serves one fit
/// (one `BinnedData`), since it caches the root's row counts.
#[derive(Default)]
pub struct TreeLearner {
    partition: DataPartition,
    ordered: Vec<[f32; 2]>,
    pool: Vec<Vec<BinSums>>,
    /// Row counts per histogram slot of the all-rows root, filled by the first such tree.
    root_counts: Option<Vec<u64>>,
    /// Partial histograms of a leaf's row chunks.
    scratch: Vec<BinSums>,
    /// Gradient, hessian and row totals of each leaf of the last grown tree.
    leaf_totals: Vec<BinSums>,
}

impl TreeLearner {
    /// The partition of the last grown tree: leaf k of the tree owns `partition().rows(k)`.
    pub fn partition(&self) -> &DataPartition {
        &self.partition
    }

    /// Gradient, hessian and row totals of each leaf of the last grown tree (over the rows it
    /// was grown on).
    pub fn leaf_totals(&self) -> &[BinSums] {
        &self.leaf_totals
    }

    fn take_buffer(&mut self, len: usize) -> Vec<BinSums> {
        match self.pool.pop() {
            Some(b) if b.len() == len => b,
            _ => vec![BinSums::default(); len],
        }
    }

    /// Builds the histogram of `leaf` into a pooled buffer.
    fn histogram_of(
        &mut self,
        input: &GrowInput,
        leaf: usize,
        totals: BinSums,
        all_rows: bool,
    ) -> Vec<BinSums> {
        let len = *input.data.offsets.last().unwrap_or(&0);
        let mut hist = self.take_buffer(len);
        let rows = self.partition.rows(leaf);
        let ordered: &[[f32; 2]] = if all_rows {
            input.gradients
        } else {
            self.ordered.clear();
            self.ordered
                .extend(rows.iter().map(|&r| input.gradients[r as usize]));
            &self.ordered
        };
        let leaf_rows = LeafRows {
            rows,
            ordered,
            all_rows,
            totals,
            known_counts: if all_rows {
                self.root_counts.as_deref()
            } else {
                None
            },
        };
        histogram::build(&mut hist, input.data, &leaf_rows, &mut self.scratch);
        if all_rows && self.root_counts.is_none() {
            self.root_counts = Some(hist.iter().map(|b| b.n).collect());
        }
        hist
    }

    fn may_split(params: &BoostedParams, depth: usize) -> bool {
        params.max_depth.is_none_or(|d| depth < d)
    }

    /// Grows one tree on the gradients, best leaf first, up to `max_leaves` leaves.
    pub fn grow(&mut self, input: &GrowInput) -> Tree {
        let params = input.params;
        let data = input.data;
        self.partition.reset(data.n_rows(), input.rows);
        let mut totals = BinSums::default();
        for &r in self.partition.rows(0) {
            let gh = input.gradients[r as usize];
            totals.g += f64::from(gh[0]);
            totals.h += f64::from(gh[1]);
            totals.n += 1;
        }
        let root_hist = self.histogram_of(input, 0, totals, input.rows.is_none());
        let root_best = if Self::may_split(params, 0) {
            best_split(&root_hist, data, input.active_list, totals, params)
        } else {
            None
        };
        let mut leaves = vec![LeafState {
            hist: Some(root_hist),
            totals,
            depth: 0,
            best: root_best,
            parent: None,
        }];
        let mut nodes: Vec<Node> = Vec::new();
        while leaves.len() < params.max_leaves {
            // The leaf with the largest gain; ties go to the lower leaf id.
            let mut chosen: Option<(usize, f64)> = None;
            for (k, leaf) in leaves.iter().enumerate() {
                if let Some(b) = leaf.best
                    && chosen.is_none_or(|(_, g)| b.gain > g)
                {
                    chosen = Some((k, b.gain));
                }
            }
            let Some((left_id, _)) = chosen else { break };
            let split = leaves[left_id]
                .best
                .take()
                .expect("chosen leaf has a split");
            let node_id = nodes.len();
            let right_id = leaves.len();
            nodes.push(Node {
                feature: split.feature as u32,
                threshold_bin: split.threshold_bin,
                threshold: data.edges[split.feature].upper[split.threshold_bin as usize],
                left: !(left_id as i32),
                right: !(right_id as i32),
                gain: split.gain,
            });
            if let Some((p, is_left)) = leaves[left_id].parent {
                if is_left {
                    nodes[p].left = node_id as i32;
                } else {
                    nodes[p].right = node_id as i32;
                }
            }
            let new_leaf =
                self.partition
                    .split(left_id, data.column(split.feature), split.threshold_bin);
            debug_assert_eq!(new_leaf, right_id);
            debug_assert_eq!(self.partition.rows(left_id).len() as u64, split.left.n);
            let depth = leaves[left_id].depth + 1;
            let parent_hist = leaves[left_id].hist.take();
            leaves[left_id].totals = split.left;
            leaves[left_id].depth = depth;
            leaves[left_id].parent = Some((node_id, true));
            leaves.push(LeafState {
                hist: None,
                totals: split.right,
                depth,
                best: None,
                parent: Some((node_id, false)),
            });
            let min_rows = 2 * params.min_rows_per_leaf as u64;
            let splittable = Self::may_split(params, depth)
                && (split.left.n >= min_rows || split.right.n >= min_rows);
            let Some(mut parent_hist) = parent_hist else {
                continue;
            };
            if !splittable || leaves.len() >= params.max_leaves {
                self.pool.push(parent_hist);
                continue;
            }
            // Build the smaller child; the larger one is the parent minus it.
            let (small, large) = if split.left.n <= split.right.n {
                (left_id, right_id)
            } else {
                (right_id, left_id)
            };
            let small_hist = self.histogram_of(input, small, leaves[small].totals, false);
            histogram::subtract_into(&mut parent_hist, &small_hist);
            for (id, hist) in [(small, small_hist), (large, parent_hist)] {
                let best = best_split(&hist, data, input.active_list, leaves[id].totals, params);
                leaves[id].best = best;
                if best.is_some() {
                    leaves[id].hist = Some(hist);
                } else {
                    self.pool.push(hist);
                }
            }
        }
        for leaf in &mut leaves {
            if let Some(h) = leaf.hist.take() {
                self.pool.push(h);
            }
        }
        self.leaf_totals.clear();
        self.leaf_totals.extend(leaves.iter().map(|l| l.totals));
        Tree {
            nodes,
            leaf_values: leaves
                .iter()
                .map(|l| leaf_value(l.totals, params.l2_leaf) * params.learning_rate)
                .collect(),
        }
    }
}
