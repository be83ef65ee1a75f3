//! The boosting rounds: log-loss gradients, one tree per round, row and feature subsampling,
//! and early stopping on a validation set.

use rand::SeedableRng;
use rand::seq::index;
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::super::fit_error::{FitError, ParamError};
use super::super::logistic::{sigmoid, softplus};
use super::super::matrix::Matrix;
use super::super::weighted_rows::check_labels_and_weights;
use super::bins::{BinnedData, MAX_FEATURES_PER_GROUP, find_edges};
use super::params::BoostedParams;
use super::partition::OUT_OF_BAG;
use super::tree::{GrowInput, LeafWalk, Tree, TreeLearner};
use crate::progress::{Cancel, Progress};

/// Rows per parallel work item for loss sums and score updates; fixed so sums are
/// deterministic.
const CHUNK_ROWS: usize = 4096;

/// Rows predicted together: a block's raw rows (a few hundred bytes each) stay in cache while
/// every tree splits them.
const PREDICT_BLOCK_ROWS: usize = 256;

/// Losses at one evaluation point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EvalRecord {
    /// Trees fitted so far.
    pub round: usize,
    /// Mean (weighted) log loss on the training rows.
    pub train_loss: f64,
    /// Mean log loss on the validation rows, when a validation set was given.
    pub valid_loss: Option<f64>,
}

/// A fitted boosted-tree model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Boosted {
    /// Number of feature columns the model expects.
    pub n_features: usize,
    /// Starting margin: log-odds of the (weighted) mean label.
    pub base_score: f64,
    /// The kept trees (the first `best_rounds` grown).
    pub trees: Vec<Tree>,
    /// Rounds kept: the best validation round, or all rounds without validation.
    pub best_rounds: usize,
    /// Losses at each evaluation point, including those after the best round.
    pub history: Vec<EvalRecord>,
    /// Total split gain per feature over the kept trees.
    pub feature_importance: Vec<f64>,
}

/// Mean weighted log loss of margins against labels, summed in fixed chunk order.
fn mean_log_loss(scores: &[f64], y: &[f32], weights: Option<&[f32]>) -> f64 {
    let partials: Vec<(f64, f64)> = scores
        .par_chunks(CHUNK_ROWS)
        .enumerate()
        .map(|(c, s)| {
            let lo = c * CHUNK_ROWS;
            let mut loss = 0.0;
            let mut total = 0.0;
            for (k, &z) in s.iter().enumerate() {
                let w = weights.map_or(1.0, |w| f64::from(w[lo + k]));
                loss += w * (softplus(z) - f64::from(y[lo + k]) * z);
                total += w;
            }
            (loss, total)
        })
        .collect();
    let (loss, total) = partials
        .iter()
        .fold((0.0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1));
    loss / total
}

fn log_odds_of_mean(y: &[f32], weights: Option<&[f32]>) -> f64 {
    let (s, t) = label_sums(y.iter().enumerate().map(|(i, &l)| (i, l)), weights);
    log_odds(s / t)
}

/// Weighted sum of labels and total weight over `(row, label)` pairs.
fn label_sums(labels: impl Iterator<Item = (usize, f32)>, weights: Option<&[f32]>) -> (f64, f64) {
    labels.fold((0.0, 0.0), |(s, t), (i, v)| {
        let w = weights.map_or(1.0, |w| f64::from(w[i]));
        (s + w * f64::from(v), t + w)
    })
}

/// Log-odds of a mean label, kept finite.
fn log_odds(mean: f64) -> f64 {
    let mean = mean.clamp(1e-12, 1.0 - 1e-12);
    (mean / (1.0 - mean)).ln()
}

/// Rows that join the growth rows in setting every new tree's leaf values without shaping
/// the trees: for example the turns left out when trees are grown on one turn in two. They
/// must be binned with the growth rows' edges and must not repeat the growth rows.
#[derive(Clone, Copy)]
pub struct ValueRows<'a> {
    /// The binned rows (the growth rows' edges).
    pub data: &'a BinnedData,
    /// The rows of `data` to use (increasing), or `None` for all.
    pub rows: Option<&'a [u32]>,
    /// Labels, indexed by row of `data`.
    pub y: &'a [f32],
    /// Optional weights, indexed by row of `data`.
    pub weights: Option<&'a [f32]>,
}

/// Rows that judge early stopping: their raw values and labels, and optionally the same rows
/// binned beforehand with the training rows' edges ([`BinnedData::for_prediction`]), so that
/// several fits on rows with the same edges bin them once. Bins made with other edges are
/// ignored (the rows are binned again).
#[derive(Clone, Copy)]
pub struct Validation<'a> {
    /// The rows' raw feature values.
    pub x: &'a Matrix,
    /// Their labels.
    pub y: &'a [f32],
    /// The rows binned with the training rows' edges, when already done.
    pub bins: Option<&'a BinnedData>,
}

/// Gradient and hessian sums per leaf of `tree` over `rows` of `data` at their current
/// margins `scores` (one per listed row); writes each row's leaf to `leaf_of`. Sums are added
/// in fixed chunk order (thread-count independent).
fn leaf_sums(
    tree: &Tree,
    data: &BinnedData,
    rows: &[u32],
    y: &[f32],
    weights: Option<&[f32]>,
    scores: &[f64],
    leaf_of: &mut [u32],
) -> Vec<(f64, f64)> {
    let leaves = tree.n_leaves();
    let weight = |i: usize| weights.map_or(1.0, |w| f64::from(w[i]));
    let partials: Vec<Vec<(f64, f64)>> = leaf_of
        .par_chunks_mut(CHUNK_ROWS)
        .zip(scores.par_chunks(CHUNK_ROWS))
        .zip(rows.par_chunks(CHUNK_ROWS))
        .map_init(
            LeafWalk::default,
            |walk, ((chunk_leaves, chunk_scores), chunk_rows)| {
                let mut sums = vec![(0.0, 0.0); leaves];
                chunk_leaves.copy_from_slice(
                    walk.leaves(tree, data, chunk_rows.len(), |k| chunk_rows[k] as usize),
                );
                for ((&leaf, &z), &r) in chunk_leaves.iter().zip(chunk_scores).zip(chunk_rows) {
                    let i = r as usize;
                    let w = weight(i);
                    let prob = sigmoid(z);
                    let e = &mut sums[leaf as usize];
                    e.0 += w * (prob - f64::from(y[i]));
                    e.1 += w * prob * (1.0 - prob);
                }
                sums
            },
        )
        .collect();
    let mut sums = vec![(0.0f64, 0.0f64); leaves];
    for part in &partials {
        for (a, b) in sums.iter_mut().zip(part) {
            a.0 += b.0;
            a.1 += b.1;
        }
    }
    sums
}

/// Each leaf's Newton value −G/(H + λ) times the learning rate from its sums, or its `old`
/// value when no row of positive weight reached it.
fn newton_values(sums: &[(f64, f64)], old: &[f64], params: &BoostedParams) -> Vec<f64> {
    sums.iter()
        .zip(old)
        .map(|(&(g, h), &old)| {
            if h > 0.0 {
                -g / (h + params.l2_leaf) * params.learning_rate
            } else {
                old
            }
        })
        .collect()
}

/// Adds each row's leaf value to its margin.
fn add_leaf_values(scores: &mut [f64], leaf_of: &[u32], values: &[f64]) {
    scores
        .par_chunks_mut(CHUNK_ROWS)
        .zip(leaf_of.par_chunks(CHUNK_ROWS))
        .for_each(|(s, l)| {
            for (v, &leaf) in s.iter_mut().zip(l) {
                *v += values[leaf as usize];
            }
        });
}

/// The listed rows, or every row of `data`, checked to be in range.
fn rows_or_all<'a>(
    data: &BinnedData,
    rows: Option<&'a [u32]>,
    all: &'a mut Vec<u32>,
) -> Result<&'a [u32], FitError> {
    let rows = match rows {
        Some(r) => r,
        None => {
            *all = (0..data.n_rows() as u32).collect();
            all
        }
    };
    if let Some(&bad) = rows.iter().find(|&&r| r as usize >= data.n_rows()) {
        return Err(ParamError::new(
            "rows",
            format!("row {bad} is past the {} rows", data.n_rows()),
        )
        .into());
    }
    if rows.is_empty() {
        return Err(FitError::Empty("no rows to set leaf values on"));
    }
    Ok(rows)
}

/// Log-odds of the weighted mean label over `rows`.
fn log_odds_of_rows(rows: &[u32], y: &[f32], weights: Option<&[f32]>) -> f64 {
    let (s, t) = label_sums(rows.iter().map(|&r| (r as usize, y[r as usize])), weights);
    log_odds(s / t)
}

impl BoostedParams {
    /// Fits boosted trees with log loss to rows `x`, labels `y` in 0..=1 and optional
    /// non-negative weights. With `valid`, the validation log loss is measured every
    /// `eval_every` trees and fitting stops after `patience` evaluations without
    /// improvement, keeping the best number of rounds. NaN features count as missing and
    /// always go left (bin 0).
    pub fn fit(
        &self,
        x: &Matrix,
        y: &[f32],
        weights: Option<&[f32]>,
        valid: Option<(&Matrix, &[f32])>,
        progress: &dyn Progress,
        cancel: &Cancel,
    ) -> Result<Boosted, FitError> {
        self.check()?;
        check_labels_and_weights(x.n_rows(), y, weights)?;
        cancel.check()?;
        progress.report("binning", 0.0);
        let data = self.bin(x)?;
        self.fit_binned(&data, y, weights, valid, progress, cancel)
    }

    /// Bins `x` with this model's bin settings (`max_bins`, `seed`), for [`Self::fit_binned`].
    /// One binned copy serves every fit with the same bin settings on the same rows (a win
    /// model and its draw model, or tuning candidates that differ only in tree size).
    pub fn bin(&self, x: &Matrix) -> Result<BinnedData, FitError> {
        self.bin_with_edges_of(x, x)
    }

    /// Bins `x` with the edges [`Self::bin`] would find on `sample` (such as some of `x`'s
    /// rows, those trees will be grown on).
    pub fn bin_with_edges_of(&self, x: &Matrix, sample: &Matrix) -> Result<BinnedData, FitError> {
        self.check()?;
        if x.n_cols() == 0 {
            return Err(FitError::Empty("the matrix has no columns"));
        }
        if x.n_cols() != sample.n_cols() {
            return Err(FitError::ColumnMismatch {
                what: "rows to bin",
                expected: sample.n_cols(),
                actual: x.n_cols(),
            });
        }
        // Rows are indexed by u32, and each feature group's entry offsets are u32 too.
        let max_rows = u32::MAX as usize / MAX_FEATURES_PER_GROUP;
        if x.n_rows() > max_rows {
            return Err(FitError::TooManyRows {
                rows: x.n_rows(),
                max: max_rows,
            });
        }
        Ok(BinnedData::new(
            x,
            find_edges(sample, self.max_bins, self.seed),
        ))
    }

    /// [`Self::fit`] on rows binned beforehand by [`Self::bin`] (with the same `max_bins` and
    /// `seed`; the result is then identical to `fit` on the raw rows).
    pub fn fit_binned(
        &self,
        data: &BinnedData,
        y: &[f32],
        weights: Option<&[f32]>,
        valid: Option<(&Matrix, &[f32])>,
        progress: &dyn Progress,
        cancel: &Cancel,
    ) -> Result<Boosted, FitError> {
        let valid = valid.map(|(x, y)| Validation { x, y, bins: None });
        self.fit_binned_valued(data, y, weights, None, valid, progress, cancel)
    }

    /// [`Self::fit_binned`], with every tree's leaf values set on the growth rows and
    /// `values` together when given (grown on `data`, valued on more rows, such as the turns
    /// left out when `data` holds one turn in two): the starting margin comes from both sets
    /// of labels, each tree is grown on the gradients of `data` at the model's margins so
    /// far, then each leaf gets the Newton value of the growth rows' sums (which the tree
    /// holds already) plus the value rows' sums, and early stopping judges that model.
    #[allow(clippy::too_many_arguments)]
    pub fn fit_binned_valued(
        &self,
        data: &BinnedData,
        y: &[f32],
        weights: Option<&[f32]>,
        values: Option<ValueRows>,
        valid: Option<Validation>,
        progress: &dyn Progress,
        cancel: &Cancel,
    ) -> Result<Boosted, FitError> {
        self.check()?;
        check_labels_and_weights(data.n_rows(), y, weights)?;
        if data.n_features() == 0 {
            return Err(FitError::Empty("the matrix has no columns"));
        }
        if let Some(Validation { x: vx, y: vy, .. }) = valid {
            if vx.n_cols() != data.n_features() {
                return Err(FitError::ColumnMismatch {
                    what: "validation matrix",
                    expected: data.n_features(),
                    actual: vx.n_cols(),
                });
            }
            check_labels_and_weights(vx.n_rows(), vy, None).map_err(|e| match e {
                FitError::LengthMismatch {
                    expected, actual, ..
                } => FitError::LengthMismatch {
                    what: "validation labels",
                    expected,
                    actual,
                },
                other => other,
            })?;
        }
        cancel.check()?;
        let n = data.n_rows();
        let p = data.n_features();
        let mut all_values = Vec::new();
        let value_rows = match &values {
            Some(v) => {
                check_labels_and_weights(v.data.n_rows(), v.y, v.weights)?;
                if v.data.n_features() != p {
                    return Err(FitError::ColumnMismatch {
                        what: "leaf-value rows",
                        expected: p,
                        actual: v.data.n_features(),
                    });
                }
                // No extra rows: the growth rows alone, as without `values`.
                if v.rows.is_some_and(<[u32]>::is_empty) || v.data.n_rows() == 0 {
                    None
                } else {
                    Some(rows_or_all(v.data, v.rows, &mut all_values)?)
                }
            }
            None => None,
        };
        let base_score = match (&values, value_rows) {
            (Some(v), Some(rows)) => {
                let (s, t) = label_sums(y.iter().enumerate().map(|(i, &l)| (i, l)), weights);
                let (vs, vt) = label_sums(
                    rows.iter().map(|&r| (r as usize, v.y[r as usize])),
                    v.weights,
                );
                log_odds((s + vs) / (t + vt))
            }
            _ => log_odds_of_mean(y, weights),
        };
        let mut value_scores = vec![base_score; value_rows.map_or(0, <[u32]>::len)];
        let mut value_leaf = vec![0u32; value_scores.len()];
        let mut scores = vec![base_score; n];
        let mut valid_scores = valid.map(|v| vec![base_score; v.x.n_rows()]);
        // Validation rows binned with the training edges: each new tree is walked on bins,
        // which gives the same leaf as the raw values (value ≤ edge ⇔ bin ≤ the edge's bin).
        let binned_here;
        let valid_bins = match valid {
            Some(Validation {
                bins: Some(b), x, ..
            }) if b.n_rows() == x.n_rows() && b.edges == data.edges => Some(b),
            Some(v) => {
                binned_here = BinnedData::for_prediction(v.x, data);
                Some(&binned_here)
            }
            None => None,
        };
        let mut gradients = vec![[0.0f32; 2]; n];
        let mut learner = TreeLearner::default();
        let mut trees: Vec<Tree> = Vec::new();
        let mut history = Vec::new();
        let mut best_loss = f64::INFINITY;
        let mut best_rounds = 0;
        let mut since_best = 0;
        let subsampling = self.row_subsample < 1.0 || self.feature_subsample < 1.0;
        for round in 0..self.max_rounds {
            cancel.check()?;
            progress.report("boosting", round as f64 / self.max_rounds as f64);
            // Per-round draws come from (seed, round) so they do not depend on threads.
            let mut rng = ChaCha8Rng::seed_from_u64(self.seed);
            rng.set_stream(round as u64 + 1);
            let in_bag: Option<Vec<u32>> = (self.row_subsample < 1.0).then(|| {
                let k = ((n as f64 * self.row_subsample).round() as usize).clamp(1, n);
                let mut rows: Vec<u32> = index::sample(&mut rng, n, k)
                    .into_iter()
                    .map(|i| i as u32)
                    .collect();
                rows.sort_unstable();
                rows
            });
            let active_list: Vec<usize> = if self.feature_subsample < 1.0 {
                let k = ((p as f64 * self.feature_subsample).ceil() as usize).clamp(1, p);
                let mut f = index::sample(&mut rng, p, k).into_vec();
                f.sort_unstable();
                f
            } else {
                (0..p).collect()
            };
            let mut active = vec![false; p];
            for &j in &active_list {
                active[j] = true;
            }
            gradients
                .par_chunks_mut(CHUNK_ROWS)
                .zip(scores.par_chunks(CHUNK_ROWS))
                .enumerate()
                .for_each(|(c, (g, s))| {
                    let lo = c * CHUNK_ROWS;
                    for (k, (gh, &z)) in g.iter_mut().zip(s).enumerate() {
                        let w = weights.map_or(1.0, |w| f64::from(w[lo + k]));
                        let prob = sigmoid(z);
                        *gh = [
                            (w * (prob - f64::from(y[lo + k]))) as f32,
                            (w * prob * (1.0 - prob)) as f32,
                        ];
                    }
                });
            let mut tree = learner.grow(&GrowInput {
                data,
                gradients: &gradients,
                rows: in_bag.as_deref(),
                active: &active,
                active_list: &active_list,
                params: self,
            });
            if let (Some(v), Some(rows)) = (&values, value_rows) {
                // The growth rows' sums come with the tree; the value rows' are added to them.
                let mut sums = leaf_sums(
                    &tree,
                    v.data,
                    rows,
                    v.y,
                    v.weights,
                    &value_scores,
                    &mut value_leaf,
                );
                for (s, t) in sums.iter_mut().zip(learner.leaf_totals()) {
                    s.0 += t.g;
                    s.1 += t.h;
                }
                tree.leaf_values = newton_values(&sums, &tree.leaf_values, self);
                add_leaf_values(&mut value_scores, &value_leaf, &tree.leaf_values);
            }
            Self::update_scores(&mut scores, &tree, &learner, data);
            if let (Some(vs), Some(vb)) = (valid_scores.as_mut(), valid_bins) {
                vs.par_chunks_mut(CHUNK_ROWS).enumerate().for_each_init(
                    LeafWalk::default,
                    |walk, (c, s)| {
                        let leaves = walk.leaves(&tree, vb, s.len(), |k| c * CHUNK_ROWS + k);
                        for (v, &leaf) in s.iter_mut().zip(leaves) {
                            *v += tree.leaf_values[leaf as usize];
                        }
                    },
                );
            }
            let no_split = tree.nodes.is_empty();
            trees.push(tree);
            let done = round + 1;
            let last = done == self.max_rounds || (no_split && !subsampling);
            if done % self.eval_every == 0 || last {
                let train_loss = mean_log_loss(&scores, y, weights);
                let valid_loss = valid_scores
                    .as_ref()
                    .zip(valid)
                    .map(|(vs, v)| mean_log_loss(vs, v.y, None));
                history.push(EvalRecord {
                    round: done,
                    train_loss,
                    valid_loss,
                });
                if let Some(vl) = valid_loss {
                    if vl < best_loss {
                        best_loss = vl;
                        best_rounds = done;
                        since_best = 0;
                    } else {
                        since_best += 1;
                        if since_best >= self.patience {
                            break;
                        }
                    }
                }
            }
            if last {
                break;
            }
        }
        progress.report("boosting", 1.0);
        if valid.is_none() {
            best_rounds = trees.len();
        }
        trees.truncate(best_rounds);
        let mut feature_importance = vec![0.0; p];
        for t in &trees {
            for node in &t.nodes {
                feature_importance[node.feature as usize] += node.gain;
            }
        }
        Ok(Boosted {
            n_features: p,
            base_score,
            trees,
            best_rounds,
            history,
            feature_importance,
        })
    }

    /// Adds the new tree's output to every training score: rows of the tree's sample through
    /// the leaf they landed in, the others (out of bag) by walking the tree on their bins.
    fn update_scores(scores: &mut [f64], tree: &Tree, learner: &TreeLearner, data: &BinnedData) {
        let leaf_of = learner.partition().leaf_of();
        scores
            .par_chunks_mut(CHUNK_ROWS)
            .enumerate()
            .for_each(|(c, s)| {
                for (k, v) in s.iter_mut().enumerate() {
                    let i = c * CHUNK_ROWS + k;
                    *v += match leaf_of[i] {
                        OUT_OF_BAG => tree.predict_binned(data, i),
                        leaf => tree.leaf_values[leaf as usize],
                    };
                }
            });
    }
}

impl Boosted {
    /// The same trees with every leaf value estimated again, round by round, on rows of
    /// `data` (binned with the edges the trees were grown on, such as a superset of their
    /// training rows): all rows, or the listed ones. The starting margin comes from the new
    /// labels, then for each tree in turn each leaf gets the Newton value −G/(H + λ) of its
    /// rows at the margins so far, times the learning rate (`params.l2_leaf`,
    /// `params.learning_rate`). A leaf that no row of positive weight reaches keeps its value.
    /// Sums are added in fixed chunk order, so the result does not depend on the thread count.
    /// `y` and `weights` are indexed by row of `data`.
    pub fn refit(
        &self,
        data: &BinnedData,
        rows: Option<&[u32]>,
        y: &[f32],
        weights: Option<&[f32]>,
        params: &BoostedParams,
        cancel: &Cancel,
    ) -> Result<Boosted, FitError> {
        params.check()?;
        check_labels_and_weights(data.n_rows(), y, weights)?;
        if data.n_features() != self.n_features {
            return Err(FitError::ColumnMismatch {
                what: "refit rows",
                expected: self.n_features,
                actual: data.n_features(),
            });
        }
        let mut all = Vec::new();
        let rows = rows_or_all(data, rows, &mut all)?;
        let base_score = log_odds_of_rows(rows, y, weights);
        let mut scores = vec![base_score; rows.len()];
        let mut leaf_of = vec![0u32; rows.len()];
        let mut trees = Vec::with_capacity(self.trees.len());
        for tree in &self.trees {
            cancel.check()?;
            let sums = leaf_sums(tree, data, rows, y, weights, &scores, &mut leaf_of);
            let leaf_values = newton_values(&sums, &tree.leaf_values, params);
            add_leaf_values(&mut scores, &leaf_of, &leaf_values);
            trees.push(Tree {
                nodes: tree.nodes.clone(),
                leaf_values,
            });
        }
        Ok(Boosted {
            n_features: self.n_features,
            base_score,
            best_rounds: trees.len(),
            trees,
            history: Vec::new(),
            feature_importance: self.feature_importance.clone(),
        })
    }

    /// The log-odds for each row; a matrix with the wrong column count gives NaN margins.
    /// Rows go through the trees a block at a time ([`LeafWalk::leaves_of_raw_rows`]); each
    /// row's tree outputs are added in tree order, then to the base score.
    pub fn predict_margin(&self, x: &Matrix) -> Vec<f64> {
        if x.n_cols() != self.n_features {
            return vec![f64::NAN; x.n_rows()];
        }
        let mut margins = vec![0.0; x.n_rows()];
        margins
            .par_chunks_mut(PREDICT_BLOCK_ROWS)
            .enumerate()
            .for_each_init(LeafWalk::default, |walk, (b, out)| {
                let first = b * PREDICT_BLOCK_ROWS;
                // −0.0 is the empty sum of f64 (what `Iterator::sum` starts from).
                let mut sums = vec![-0.0f64; out.len()];
                for tree in &self.trees {
                    let leaves = walk.leaves_of_raw_rows(tree, x, first, out.len());
                    for (s, &leaf) in sums.iter_mut().zip(leaves) {
                        *s += tree.leaf_values[leaf as usize];
                    }
                }
                for (m, s) in out.iter_mut().zip(&sums) {
                    *m = self.base_score + s;
                }
            });
        margins
    }

    /// The win probability for each row.
    pub fn predict_proba(&self, x: &Matrix) -> Vec<f64> {
        self.predict_margin(x).into_iter().map(sigmoid).collect()
    }
}
