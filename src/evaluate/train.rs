//! Training with the golden rule automated: an untouched test share, tuning by session-grouped
//! validation inside the rest, a final model fitted on all training sessions, and out-of-fold
//! traces for every finished session.

use super::folds::{Role, SessionKey, Split, split_sessions};
use crate::analysis::traces::{Trace, TraceSource};
use crate::features::{
    FeatureParams, FeatureSpec, TurnSample, TurnTable, build_table, build_training_table, rows_kept,
};
use crate::models::boosted::bins::BinnedData;
use crate::models::boosted::{Boosted, Validation, ValueRows};
use crate::models::logistic::PreparedRows;
use crate::models::win_model::{Fitted, ModelSummary, WinModel, normalise};
use crate::models::{BoostedParams, FitError, LogisticParams, Matrix};
use crate::progress::{Cancel, Cancelled, Progress};
use crate::sessions::SessionSet;
use rayon::prelude::*;
use serde::Serialize;
use std::time::Instant;

/// Which model to fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ModelChoice {
    /// Choose between logistic and boosted by session-grouped validation.
    Auto,
    /// Logistic regression.
    Logistic,
    /// Boosted trees.
    Boosted,
}

/// Mean turns per training session from which tuning and tree growth use one turn in two
/// ([`TrainOptions::sampled_growth`]). Our own rule of thumb: on 1,500-session board-game demos
/// (about 54 turns) the sample left held-out log loss within noise, while on tic-tac-toe
/// (at most 9 turns, each position far from the last) it lifted the error against exact
/// chances over the 0.02 bar.
pub const SAMPLED_GROWTH_MIN_TURNS: f64 = 20.0;

/// Below this many training sessions, only a strongly regularised logistic model is fitted.
pub const SMALL_SET_SESSIONS: usize = 60;
/// Fewest finished sessions needed to train and check a model.
pub const MIN_FINISHED_SESSIONS: usize = 8;

/// Settings of a training run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrainOptions {
    /// Which model to fit.
    pub choice: ModelChoice,
    /// Seed of the split, the bins and the subsampling.
    pub seed: u64,
    /// Share of finished sessions kept as the untouched test set.
    pub test_share: f64,
    /// Folds for cross-validation and cross-fitting.
    pub folds: usize,
    /// Feature settings.
    pub features: FeatureParams,
    /// Boosted-tree settings (rounds come from early stopping).
    pub boosted: BoostedParams,
    /// Fit one model per fold so every training session gets an out-of-fold trace.
    pub cross_fit: bool,
    /// Measure held-out log loss against the number of training sessions.
    pub learning_curve: bool,
    /// When sessions are long (on average at least [`SAMPLED_GROWTH_MIN_TURNS`] turns), tune
    /// every candidate and grow boosted trees on one turn in two (a seeded hash of session
    /// and turn), then set the trees' leaf values on every turn: neighbouring turns of a long
    /// session are near-copies, so the sample shapes the trees about as well at half the cost.
    /// Validation, test and traces always use every turn.
    pub sampled_growth: bool,
    /// Most feature values (turn rows × feature columns) used to fit one model; beyond it
    /// turns are sampled deterministically. Memory follows values, not rows: a game with few
    /// event labels has narrow rows and can use more of them.
    pub max_values: usize,
}

impl Default for TrainOptions {
    fn default() -> Self {
        TrainOptions {
            choice: ModelChoice::Auto,
            seed: 1,
            test_share: 0.2,
            folds: 5,
            features: FeatureParams::default(),
            boosted: BoostedParams::default(),
            cross_fit: true,
            learning_curve: true,
            sampled_growth: true,
            // About 0.8 GB of table values; with binning, tuning folds and traces a
            // 50,000-session board-game set stays under 4 GB.
            max_values: 200_000_000,
        }
    }
}

/// Why training could not run.
#[derive(Debug, thiserror::Error)]
pub enum TrainError {
    /// Too few finished sessions.
    #[error(
        "only {found} finished session(s); at least {needed} are needed to train a model and check it on sessions it never saw"
    )]
    TooFew {
        /// Finished sessions found.
        found: usize,
        /// Needed.
        needed: usize,
    },
    /// No finished session has a winner.
    #[error("no finished session has a winner (all draws); there is nothing to learn")]
    NoWinners,
    /// A set is unusable.
    #[error("set `{0}` is unusable; run `tellturn check` on it to see why")]
    Unusable(String),
    /// Fitting failed.
    #[error("fitting failed: {0}")]
    Fit(#[from] FitError),
    /// Cancelled.
    #[error("cancelled")]
    Cancelled,
}

impl From<Cancelled> for TrainError {
    fn from(_: Cancelled) -> Self {
        TrainError::Cancelled
    }
}

/// One tuning candidate and how it did on validation sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TuningRecord {
    /// The candidate, in words (`logistic, penalty 0.01`).
    pub candidate: String,
    /// Mean validation log loss per turn row.
    pub valid_log_loss: f64,
    /// Rounds chosen by early stopping (boosted only).
    pub rounds: Option<usize>,
    /// Whether it was chosen.
    pub chosen: bool,
}

/// One point of the learning curve.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LearningPoint {
    /// Training sessions used.
    pub sessions: usize,
    /// Held-out log loss per turn row on the test sessions.
    pub log_loss: f64,
}

/// A fall in held-out log loss per doubling of the training sessions above which the curve
/// counts as still improving (our own rule of thumb: about 1 % of a typical turn-level loss).
pub const STILL_IMPROVING_PER_DOUBLING: f64 = 0.005;

/// How much the held-out log loss falls per doubling of the training sessions: the
/// least-squares slope of loss against log2(sessions) over the curve's last three points
/// (its largest fits), negated. `None` with fewer than two points.
pub fn loss_fall_per_doubling(curve: &[LearningPoint]) -> Option<f64> {
    let tail = &curve[curve.len().saturating_sub(3)..];
    if tail.len() < 2 {
        return None;
    }
    let xs: Vec<f64> = tail.iter().map(|p| (p.sessions as f64).log2()).collect();
    let k = tail.len() as f64;
    let mx = xs.iter().sum::<f64>() / k;
    let my = tail.iter().map(|p| p.log_loss).sum::<f64>() / k;
    let sxx: f64 = xs.iter().map(|x| (x - mx).powi(2)).sum();
    let sxy: f64 = xs
        .iter()
        .zip(tail)
        .map(|(x, p)| (x - mx) * (p.log_loss - my))
        .sum();
    (sxx > 0.0).then(|| -sxy / sxx)
}

/// Seconds spent in each stage.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Timings {
    /// Building feature tables.
    pub features: f64,
    /// Fitting models (tuning, final, cross-fitting, learning curve).
    pub fit: f64,
    /// Scoring sessions.
    pub score: f64,
    /// Everything.
    pub total: f64,
    /// Wall seconds of each stage of the run, in order (`tuning`, `final fit`, ...).
    pub stages: Vec<(String, f64)>,
}

impl Timings {
    /// Records that `stage` ran from `since` until now.
    fn stage(&mut self, stage: &str, since: Instant) {
        self.stages
            .push((stage.to_string(), since.elapsed().as_secs_f64()));
    }
}

/// The result of a training run.
#[derive(Debug, Clone)]
pub struct Training {
    /// The final model, fitted on all training sessions.
    pub model: WinModel,
    /// Finished sessions as (set, session), in the order of `split.roles`.
    pub finished: Vec<(usize, usize)>,
    /// The split of finished sessions.
    pub split: Split,
    /// Traces: out-of-fold for finished sessions (test share, and cross-fitted training
    /// sessions when cross-fitting ran), scored by the final model for sessions in progress.
    pub traces: Vec<Trace>,
    /// Tuning candidates tried.
    pub tuning: Vec<TuningRecord>,
    /// Held-out log loss against training sessions.
    pub learning_curve: Vec<LearningPoint>,
    /// Notes for the user (small set, sampled turns, forced model kind...).
    pub notes: Vec<String>,
    /// Seconds per stage.
    pub timings: Timings,
    /// When turns were sampled for fitting: one in this many.
    pub sampled_one_in: Option<u32>,
}

/// The hyperparameters chosen by tuning.
#[derive(Debug, Clone, PartialEq)]
enum Chosen {
    Logistic(LogisticParams),
    Boosted(BoostedParams),
}

impl Chosen {
    fn describe(&self) -> String {
        match self {
            Chosen::Logistic(p) => format!("logistic regression, L2 penalty {}", p.l2),
            Chosen::Boosted(p) => format!(
                "boosted trees, {} rounds, {} leaves, learning rate {}",
                p.max_rounds, p.max_leaves, p.learning_rate
            ),
        }
    }
}

/// Prepared rows of some sessions: keys, features and labels.
struct Data {
    rows: Vec<crate::features::RowKey>,
    x: Matrix,
    won: Vec<f32>,
    draw: Vec<f32>,
    /// The rows binned for boosted trees, made on first use and shared by every boosted fit
    /// on these rows (win and draw models, tuning candidates): every candidate of a run has
    /// the run's bin settings (`Ctx::bins`).
    binned: std::sync::OnceLock<BinnedData>,
    /// Column statistics for logistic fits, made on first use and shared by every logistic
    /// fit on these rows (a penalty path; every candidate standardises).
    prepared: std::sync::OnceLock<PreparedRows>,
    /// As validation rows: binned with the edges of the rows being fitted (every boosted fit
    /// that stops early on these rows has the same edges: tuning's, and the learning curve's,
    /// whose rows are tuning's), made on first use.
    prediction_bins: std::sync::OnceLock<BinnedData>,
}

impl Data {
    /// Rows, matrix and labels, with nothing binned or prepared yet.
    fn new(rows: Vec<crate::features::RowKey>, x: Matrix, won: Vec<f32>, draw: Vec<f32>) -> Self {
        Self {
            rows,
            x,
            won,
            draw,
            binned: Default::default(),
            prepared: Default::default(),
            prediction_bins: Default::default(),
        }
    }

    /// The column statistics of these rows for logistic fits with `params`.
    fn prepared(&self, params: &LogisticParams) -> Result<&PreparedRows, FitError> {
        if let Some(p) = self.prepared.get() {
            return Ok(p);
        }
        let p = params.prepare(&self.x)?;
        Ok(self.prepared.get_or_init(|| p))
    }

    /// These rows as validation rows for a boosted fit on `fitted`, binned with its edges
    /// (kept for the next fit with the same edges).
    fn validation<'a>(&'a self, labels: &'a [f32], fitted: &BinnedData) -> Validation<'a> {
        let bins = self
            .prediction_bins
            .get_or_init(|| BinnedData::for_prediction(&self.x, fitted));
        Validation {
            x: &self.x,
            y: labels,
            // Other edges: the fit bins these rows itself.
            bins: (bins.edges == fitted.edges).then_some(bins),
        }
    }

    /// Whether any of the rows comes from a drawn session.
    fn has_draws(&self) -> bool {
        self.draw.iter().any(|&d| d > 0.5)
    }

    /// The rows binned with the run's bin settings (binned once, then reused).
    fn binned(&self, bins: &BoostedParams) -> Result<&BinnedData, FitError> {
        if let Some(b) = self.binned.get() {
            return Ok(b);
        }
        let b = bins.bin(&self.x)?;
        Ok(self.binned.get_or_init(|| b))
    }

    /// The rows of the listed sessions `(set, session)`, in row order, with their bins when
    /// these rows are binned already.
    fn sessions_subset(&self, sessions: &[(usize, usize)]) -> Data {
        let wanted: std::collections::HashSet<(usize, usize)> = sessions.iter().copied().collect();
        let idx: Vec<usize> = (0..self.rows.len())
            .filter(|&i| {
                let k = &self.rows[i];
                wanted.contains(&(k.set as usize, k.session as usize))
            })
            .collect();
        self.select(&idx)
    }

    /// The rows at positions `idx` (in that order), with their bins when these rows are
    /// binned already.
    fn select(&self, idx: &[usize]) -> Data {
        let subset = Data::new(
            idx.iter().map(|&i| self.rows[i]).collect(),
            self.x.select_rows(idx),
            idx.iter().map(|&i| self.won[i]).collect(),
            idx.iter().map(|&i| self.draw[i]).collect(),
        );
        if let Some(b) = self.binned.get() {
            let idx32: Vec<u32> = idx.iter().map(|&i| i as u32).collect();
            let _ = subset.binned.set(b.select_rows(&idx32));
        }
        subset
    }
}

struct Ctx<'a> {
    sets: &'a [&'a SessionSet],
    spec: FeatureSpec,
    sample: TurnSample,
    /// Bin settings (`max_bins`, `seed`) shared by every boosted fit of the run.
    bins: BoostedParams,
    /// Rounds of boosted draw models, when tuning chose them by early stopping.
    draw_rounds: Option<usize>,
    cancel: &'a Cancel,
    progress: &'a dyn Progress,
    timings: Timings,
}

/// Labels: did the row's actor win; was the session a draw.
fn labels(sets: &[&SessionSet], table: &TurnTable) -> (Vec<f32>, Vec<f32>) {
    let mut won = Vec::with_capacity(table.rows.len());
    let mut draw = Vec::with_capacity(table.rows.len());
    for k in &table.rows {
        let s = &sets[k.set as usize].sessions[k.session as usize];
        won.push(if s.winner_seat() == Some(k.actor as usize) {
            1.0
        } else {
            0.0
        });
        draw.push(if s.is_draw() { 1.0 } else { 0.0 });
    }
    (won, draw)
}

/// Mean log loss of normalised chances against won labels.
fn row_log_loss(chances: &[f64], won: &[f32]) -> f64 {
    let n = chances.len().max(1) as f64;
    chances
        .iter()
        .zip(won)
        .map(|(&p, &y)| {
            let p = p.clamp(1e-15, 1.0 - 1e-15);
            if y > 0.5 { -p.ln() } else { -(1.0 - p).ln() }
        })
        .sum::<f64>()
        / n
}

impl Ctx<'_> {
    /// Rows, matrix and labels of some sessions.
    fn data(&mut self, sessions: &[(usize, usize)], fitting: bool) -> Result<Data, TrainError> {
        // Validation and learning-curve rows are sampled like fitting rows when a set is too
        // large to use every turn; traces are always scored on every turn (score_sessions).
        self.data_sampled(sessions, fitting, self.sample)
    }

    /// [`Self::data`] with another turn sample.
    fn data_sampled(
        &mut self,
        sessions: &[(usize, usize)],
        fitting: bool,
        sample: TurnSample,
    ) -> Result<Data, TrainError> {
        let t0 = Instant::now();
        let mut table = if fitting {
            build_training_table(&self.spec, self.sets, sessions, sample, self.cancel)?
        } else {
            build_table(&self.spec, self.sets, sessions, sample, self.cancel)?
        };
        // Move the values into the matrix: a second copy of a big table would double the memory.
        let values = std::mem::take(&mut table.values);
        let x = Matrix::new(table.rows.len(), table.columns.len(), values)?;
        let (won, draw) = labels(self.sets, &table);
        self.timings.features += t0.elapsed().as_secs_f64();
        Ok(Data::new(table.rows, x, won, draw))
    }

    /// Fit the win model (and a draw model when the sessions have draws) on the sessions as
    /// tuning fitted them: boosted trees grown on `grow` turns when given (each tree's leaf
    /// values set with the other turns too), otherwise on every turn; returns the models and
    /// the number of turn rows whose labels they were fitted to.
    fn fit(
        &mut self,
        chosen: &Chosen,
        sessions: &[(usize, usize)],
        grow: Option<TurnSample>,
        stage: &str,
        with_draw: bool,
    ) -> Result<(Fitted, Option<Fitted>, usize), TrainError> {
        let data = self.data(sessions, true)?;
        let fitted_rows = data.rows.len();
        let t0 = Instant::now();
        let (win, draw) = match (chosen, grow) {
            (Chosen::Boosted(_), Some(sample)) => {
                // Built once; the growth rows are picked from every row, like tuning's.
                let whole = WholeRows::split(data, &[], self.sets, sample);
                let grow_rows = whole.all.select(&whole.grow);
                whole.bin(&grow_rows, &self.bins)?;
                self.fit_data(chosen, &grow_rows, stage, with_draw, None, Some(&whole))?
            }
            _ => self.fit_data(chosen, &data, stage, with_draw, None, None)?,
        };
        self.timings.fit += t0.elapsed().as_secs_f64();
        Ok((win, draw, fitted_rows))
    }

    /// Boosted win (and draw) models with their leaf values set again on every row of `data`
    /// (binned with the edges the trees were grown on); logistic models are returned as they
    /// are. A draw model is dropped when `data` has no draws.
    fn refit(
        &self,
        win: Fitted,
        draw: Option<Fitted>,
        data: &Data,
    ) -> Result<(Fitted, Option<Fitted>), TrainError> {
        let again = |m: Fitted, labels: &[f32]| -> Result<Fitted, TrainError> {
            Ok(match m {
                Fitted::Boosted(b) => {
                    // Every candidate shares the run's learning rate and leaf penalty.
                    let binned = data.binned(&self.bins)?;
                    Fitted::Boosted(b.refit(binned, None, labels, None, &self.bins, self.cancel)?)
                }
                other => other,
            })
        };
        let win = again(win, &data.won)?;
        let draw = match draw {
            Some(d) if data.has_draws() => Some(again(d, &data.draw)?),
            _ => None,
        };
        Ok((win, draw))
    }

    /// Fit the win model (and a draw model when asked and the rows have draws) on prepared
    /// data, with the rounds chosen by tuning; a logistic win model starts from `warm` (a fit
    /// of the same penalty on some of the rows) when given; boosted trees take their leaf
    /// values with the leaf-value rows of `values` too when given (`data` being its growth
    /// rows).
    fn fit_data(
        &self,
        chosen: &Chosen,
        data: &Data,
        stage: &str,
        with_draw: bool,
        warm: Option<&Fitted>,
        values: Option<&WholeRows>,
    ) -> Result<(Fitted, Option<Fitted>), TrainError> {
        let progress = StageProgress {
            inner: self.progress,
            stage,
        };
        let value_rows = |draw: bool| values.and_then(|w| w.values(draw));
        let win = fit_one(
            chosen,
            data,
            &data.won,
            value_rows(false),
            None,
            warm,
            None,
            &self.bins,
            &progress,
            self.cancel,
        )?;
        // The draw model is of the same kind as the win model: draws can depend on the
        // position as non-linearly as wins do.
        let has_draws = values.map_or(data.has_draws(), |w| w.all.has_draws());
        let draw_model = if with_draw && has_draws {
            Some(fit_one(
                chosen,
                data,
                &data.draw,
                value_rows(true),
                None,
                None,
                self.draw_rounds,
                &self.bins,
                &progress,
                self.cancel,
            )?)
        } else {
            None
        };
        Ok((win, draw_model))
    }

    /// Validation log loss of a fitted win model on prepared data.
    fn loss_on(&self, win: &Fitted, data: &Data) -> f64 {
        let raw = win.predict_proba(&data.x);
        let c = normalise(&data.rows, &raw, None);
        row_log_loss(&c.win, &data.won)
    }
}

/// Most turn rows, summed over the learning curve's smaller fits, for which those fits run
/// side by side.
const PARALLEL_CURVE_ROWS: usize = 400_000;

/// Gradient tolerance of the logistic tuning fits. Only their validation loss is used, and a
/// largest gradient entry below `tol` leaves the training objective within p·tol²/(2λ) of its
/// minimum: under 2·10⁻⁵ for 400 features at the weakest tuned penalty λ = 10⁻³ (the bound of
/// a λ-strongly convex function).
const TUNING_TOL: f64 = 1e-5;

/// Shares of the training sessions fitted for the learning curve, besides the tuning model
/// (about (k − 1)/k of them) and the final model (all of them).
const LEARNING_CURVE_SHARES: [f64; 2] = [0.125, 0.25];

/// One model of the chosen kind on `data` with `labels`: logistic started from `warm` (an
/// earlier logistic fit on the same data), or boosted trees on the data's shared bins (leaf
/// values from `values` when given) with early stopping on `valid` and `max_rounds` in place
/// of the chosen rounds when given.
#[allow(clippy::too_many_arguments)]
fn fit_one(
    chosen: &Chosen,
    data: &Data,
    labels: &[f32],
    values: Option<ValueRows>,
    valid: Option<(&Data, &[f32])>,
    warm: Option<&Fitted>,
    max_rounds: Option<usize>,
    bins: &BoostedParams,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Fitted, TrainError> {
    Ok(match chosen {
        Chosen::Logistic(p) => {
            let start = match warm {
                Some(Fitted::Logistic(l)) => Some(l),
                _ => None,
            };
            let prepared = data.prepared(p)?;
            Fitted::Logistic(
                p.fit_prepared(&data.x, prepared, labels, None, start, progress, cancel)?,
            )
        }
        Chosen::Boosted(p) => {
            progress.report("binning", 0.0);
            let binned = data.binned(bins)?;
            let params = BoostedParams {
                max_rounds: max_rounds.unwrap_or(p.max_rounds),
                ..p.clone()
            };
            let valid = valid.map(|(v, labels)| v.validation(labels, binned));
            Fitted::Boosted(
                params.fit_binned_valued(binned, labels, None, values, valid, progress, cancel)?,
            )
        }
    })
}

/// How one tuning candidate did on the validation folds.
struct CandidateResult {
    /// Mean validation log loss over the folds.
    loss: f64,
    /// The candidate with its rounds set by early stopping (boosted).
    tuned: Chosen,
    /// Its win model on the first fold.
    first_model: Option<Fitted>,
}

/// What the boosted side of tuning returns.
struct BoostedTuning {
    /// Each boosted candidate's result.
    results: Vec<CandidateResult>,
    /// The best candidate's draw model on the first fold, when the fold has draws.
    draw_model: Option<Boosted>,
    /// Seconds spent binning the rows.
    bin_seconds: f64,
}

/// Every row a boosted fit on sampled turns draws on (every fitted turn of its sessions, with
/// the start rows), built once, and which of them play which part: tuning's with one
/// validation fold, and each cross-fitting fit's (no validation sessions).
struct WholeRows {
    /// The rows; their bins, once made, have the growth rows' edges.
    all: Data,
    /// The validation fold's fitting part on the turns trees are grown on (every fitted turn
    /// unless growth is sampled), with its start rows.
    grow: Vec<usize>,
    /// The rest of the fitting part: rows that only set leaf values (increasing).
    extra: Vec<u32>,
    /// The validation fold's rows, without start rows.
    valid: Vec<usize>,
}

impl WholeRows {
    /// Splits `all` (built with the start rows) by the validation sessions and the growth sample.
    fn split(
        all: Data,
        valid_sessions: &[(usize, usize)],
        sets: &[&SessionSet],
        grow_sample: TurnSample,
    ) -> Self {
        let in_fold: std::collections::HashSet<(usize, usize)> =
            valid_sessions.iter().copied().collect();
        let grown = rows_kept(&all.rows, sets, grow_sample, true);
        // Every fitted turn, without the start rows.
        let turns = rows_kept(&all.rows, sets, TurnSample::All, false);
        let (mut grow, mut extra, mut valid) = (Vec::new(), Vec::new(), Vec::new());
        for (i, k) in all.rows.iter().enumerate() {
            if in_fold.contains(&(k.set as usize, k.session as usize)) {
                if turns[i] {
                    valid.push(i);
                }
            } else if grown[i] {
                grow.push(i);
            } else {
                extra.push(i as u32);
            }
        }
        Self {
            all,
            grow,
            extra,
            valid,
        }
    }

    /// Bins every row with edges found on the growth rows `grow_rows` (picked from `all` at
    /// `grow`), and gives those rows their bins from the same pass.
    fn bin(&self, grow_rows: &Data, bins: &BoostedParams) -> Result<(), TrainError> {
        let binned = bins.bin_with_edges_of(&self.all.x, &grow_rows.x)?;
        let grow: Vec<u32> = self.grow.iter().map(|&i| i as u32).collect();
        let _ = grow_rows.binned.set(binned.select_rows(&grow));
        let _ = self.all.binned.set(binned);
        Ok(())
    }

    /// The leaf-value rows with win or draw labels, once every row is binned.
    fn values(&self, draw: bool) -> Option<ValueRows<'_>> {
        Some(ValueRows {
            data: self.all.binned.get()?,
            rows: Some(&self.extra),
            y: if draw { &self.all.draw } else { &self.all.won },
            weights: None,
        })
    }
}

/// Passes engine progress on with a stage name of our own.
struct StageProgress<'a> {
    inner: &'a dyn Progress,
    stage: &'a str,
}

impl Progress for StageProgress<'_> {
    fn report(&self, _stage: &str, fraction: f64) {
        self.inner.report(self.stage, fraction);
    }
}

/// Score sessions with a model in chunks (bounded memory), returning their traces.
pub fn score_sessions(
    model: &WinModel,
    sets: &[&SessionSet],
    sessions: &[(usize, usize)],
    source: impl Fn(usize, usize) -> TraceSource,
    cancel: &Cancel,
) -> Result<Vec<Trace>, Cancelled> {
    let mut traces = Vec::with_capacity(sessions.len());
    for chunk in sessions.chunks(2_000) {
        let mut table = build_table(&model.spec, sets, chunk, TurnSample::All, cancel)?;
        // Move the values into the matrix rather than copy them; traces need only the keys.
        let values = std::mem::take(&mut table.values);
        let x = Matrix::new(table.rows.len(), table.columns.len(), values)
            .unwrap_or_else(|_| Matrix::zeros(0, table.columns.len()));
        let chances = model.chances_of(&table.rows, &x);
        traces.extend(model.traces_from(&table.rows, &chances, |k| {
            source(k.set as usize, k.session as usize)
        }));
    }
    Ok(traces)
}

/// Train on the finished sessions of `sets`.
pub fn train(
    sets: &[&SessionSet],
    options: &TrainOptions,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Training, TrainError> {
    let started = Instant::now();
    for s in sets {
        if !s.is_usable() {
            return Err(TrainError::Unusable(s.name.clone()));
        }
    }
    let mut finished = Vec::new();
    let mut keys = Vec::new();
    let mut seen_ids: std::collections::HashMap<&str, u32> = Default::default();
    for (si, set) in sets.iter().enumerate() {
        for (k, s) in set.sessions.iter().enumerate() {
            if s.is_finished() {
                finished.push((si, k));
                keys.push(SessionKey {
                    duplicate: {
                        let n = seen_ids.entry(s.id.as_str()).or_insert(0);
                        *n += 1;
                        *n - 1
                    },
                    id: s.id.clone(),
                    winner_seat: s.winner_seat(),
                    variant: s.variant().map(str::to_string),
                });
            }
        }
    }
    if finished.len() < MIN_FINISHED_SESSIONS {
        return Err(TrainError::TooFew {
            found: finished.len(),
            needed: MIN_FINISHED_SESSIONS,
        });
    }
    if keys.iter().all(|k| k.winner_seat.is_none()) {
        return Err(TrainError::NoWinners);
    }
    let folds = options.folds.clamp(2, 10);
    let split = split_sessions(&keys, options.test_share, folds, options.seed);
    let pick =
        |idx: Vec<usize>| -> Vec<(usize, usize)> { idx.into_iter().map(|i| finished[i]).collect() };
    let train_sessions = pick(split.train());
    let test_sessions = pick(split.test());
    let mut notes = Vec::new();

    let in_train: std::collections::HashSet<(usize, usize)> =
        train_sessions.iter().copied().collect();
    let spec = FeatureSpec::learn(sets, options.features, |si, k| in_train.contains(&(si, k)));

    // Sample turns when the training rows would exceed the limit.
    let rows: usize = train_sessions
        .iter()
        .map(|&(si, k)| {
            let s = &sets[si].sessions[k];
            s.turn_count() * s.actors.len()
        })
        .sum();
    let width = spec.width().max(1);
    let max_rows = (options.max_values / width).max(1);
    let sampled_one_in = (rows > max_rows).then(|| rows.div_ceil(max_rows) as u32);
    let sample = match sampled_one_in {
        Some(every) => {
            notes.push(format!(
                "the training sessions have {rows} turn rows × {width} features; to stay within memory, models were fitted on about one turn in {every} (chosen by a seeded hash, the same every run); every turn is still scored"
            ));
            TurnSample::OneIn {
                every,
                seed: options.seed,
            }
        }
        None => TurnSample::All,
    };
    let mut ctx = Ctx {
        sets,
        spec,
        sample,
        bins: BoostedParams {
            seed: options.seed,
            ..options.boosted.clone()
        },
        draw_rounds: None,
        cancel,
        progress,
        timings: Timings::default(),
    };

    // Tuning, inside the training part only.
    progress.report("tuning", 0.0);
    let stage_start = Instant::now();
    let small = train_sessions.len() < SMALL_SET_SESSIONS;
    // Long sessions: tuning fits and tree growth on one turn in two (see `sampled_growth`).
    let mean_turns = train_sessions
        .iter()
        .map(|&(si, k)| sets[si].sessions[k].turn_count() as f64)
        .sum::<f64>()
        / train_sessions.len().max(1) as f64;
    let grow_sample = if options.sampled_growth && !small && mean_turns >= SAMPLED_GROWTH_MIN_TURNS
    {
        ctx.sample.thinned(2, options.seed)
    } else {
        ctx.sample
    };
    // The turns boosted trees are grown on when they are not every fitted turn.
    let grow = (grow_sample != ctx.sample).then_some(grow_sample);
    let mut tuning = Vec::new();
    let fold_of = |i: usize| match split.roles[i] {
        Role::Fold(f) => f as usize,
        Role::Test => usize::MAX,
    };
    let train_idx = split.train();
    let fold_sessions = |f: usize, inside: bool| -> Vec<(usize, usize)> {
        train_idx
            .iter()
            .filter(|&&i| (fold_of(i) == f) == inside)
            .map(|&i| finished[i])
            .collect()
    };
    let mut candidates: Vec<Chosen> = Vec::new();
    let wants_logistic = small || options.choice != ModelChoice::Boosted;
    let wants_boosted = !small && options.choice != ModelChoice::Logistic;
    if small {
        notes.push(format!(
            "only {} training sessions: a strongly regularised logistic model was used (boosted trees would overfit); treat every figure as uncertain",
            train_sessions.len()
        ));
        if options.choice == ModelChoice::Boosted {
            notes.push("boosted trees were asked for, but the set is too small for them".into());
        }
    }
    if wants_logistic {
        // A path from strong to weak penalties: each fit starts from the previous solution,
        // and the path stops once the validation loss rises (the weak end is the slowest to
        // fit and rarely helps on turn tables, whose count columns are strongly correlated).
        let grid: &[f64] = if small {
            &[3.0, 1.0, 0.3, 0.1, 0.03]
        } else {
            &[1.0, 0.1, 1e-2, 1e-3, 1e-4]
        };
        for &l2 in grid {
            candidates.push(Chosen::Logistic(LogisticParams {
                l2,
                tol: TUNING_TOL,
                ..LogisticParams::default()
            }));
        }
    }
    if wants_boosted {
        // Bigger sets can carry bigger trees; early stopping picks the rounds.
        let leaves: &[usize] = match train_sessions.len() {
            0..300 => &[7, 15],
            300..3000 => &[31],
            _ => &[31, 63],
        };
        for &max_leaves in leaves {
            candidates.push(Chosen::Boosted(BoostedParams {
                max_leaves,
                seed: options.seed,
                ..options.boosted.clone()
            }));
        }
    }
    // Small sets: full grouped k-fold; larger sets: one validation fold (plenty of sessions).
    let cv_folds: Vec<usize> = if small { (0..folds).collect() } else { vec![0] };
    // The best candidate so far: its validation loss, settings, and its model on the first
    // validation fold (a learning-curve point for free: it never saw the test sessions).
    let mut best: Option<(f64, Chosen, Option<Fitted>)> = None;
    let n_candidates = candidates.len();
    // Each fold's tables are built once and shared by every candidate. With one validation
    // fold, every training row is built once (`whole`): the fold's fitting rows (its growth
    // turns), its validation rows, the leaf-value rows and the final rows are picked from it.
    let mut fold_data = Vec::new();
    let mut whole: Option<WholeRows> = None;
    // Training sessions behind the first fold's fits.
    let mut first_fold_sessions = 0;
    for &f in &cv_folds {
        let fit_on = fold_sessions(f, false);
        let valid = fold_sessions(f, true);
        if fit_on.is_empty() || valid.is_empty() {
            continue;
        }
        if fold_data.is_empty() {
            first_fold_sessions = fit_on.len();
        }
        if cv_folds.len() == 1 {
            let all = ctx.data(&train_sessions, true)?;
            let w = WholeRows::split(all, &valid, sets, grow_sample);
            fold_data.push((w.all.select(&w.grow), w.all.select(&w.valid)));
            whole = Some(w);
        } else {
            fold_data.push((
                ctx.data_sampled(&fit_on, true, grow_sample)?,
                ctx.data(&valid, false)?,
            ));
        }
    }
    // Boosted candidates need the rows binned: the edges come from the growth rows, every
    // training row is binned with them once (the final rows and the leaf-value rows) and
    // the growth rows' bins are picked from those. Done by the boosted side of the join
    // below, beside the logistic path.
    let bin_whole = || -> Result<(), TrainError> {
        match (&whole, fold_data.first()) {
            (Some(w), Some((grow_rows, _))) => w.bin(grow_rows, &ctx.bins),
            _ => Ok(()),
        }
    };
    // The rows that join the first fold's growth rows in setting leaf values.
    let fold_values = |draw: bool| whole.as_ref().and_then(|w| w.values(draw));
    // The logistic path and the boosted candidates run side by side (each fit is
    // deterministic, and the results are merged in candidate order, so the choice is the
    // same at any thread count); the path itself is sequential, each penalty warm-started.
    let (logistic, boosted): (Vec<Chosen>, Vec<Chosen>) = candidates
        .into_iter()
        .partition(|c| matches!(c, Chosen::Logistic(_)));
    let tried = std::sync::atomic::AtomicUsize::new(0);
    let tuning_progress = StageProgress {
        inner: progress,
        stage: "tuning",
    };
    let run_candidate = |cand: &Chosen,
                         warm: &mut [Option<Fitted>]|
     -> Result<Option<CandidateResult>, TrainError> {
        let mut loss = 0.0;
        let mut rounds_sum = 0usize;
        let mut first_model = None;
        for (fi, (fit_data, valid_data)) in fold_data.iter().enumerate() {
            let win = fit_one(
                cand,
                fit_data,
                &fit_data.won,
                if fi == 0 { fold_values(false) } else { None },
                Some((valid_data, &valid_data.won)),
                warm.get(fi).and_then(Option::as_ref),
                None,
                &ctx.bins,
                &tuning_progress,
                cancel,
            )?;
            loss += ctx.loss_on(&win, valid_data);
            match &win {
                Fitted::Boosted(m) => rounds_sum += m.best_rounds,
                Fitted::Logistic(_) => {
                    if let Some(w) = warm.get_mut(fi) {
                        *w = Some(win.clone());
                    }
                }
            }
            if fi == 0 {
                first_model = Some(win);
            }
        }
        let k = tried.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
        progress.report("tuning", k as f64 / n_candidates as f64);
        let counted = fold_data.len();
        if counted == 0 {
            return Ok(None);
        }
        let tuned = match cand {
            Chosen::Boosted(p) => Chosen::Boosted(BoostedParams {
                max_rounds: (rounds_sum / counted).max(1),
                ..p.clone()
            }),
            // The final fit converges to the default, tighter tolerance.
            Chosen::Logistic(p) => Chosen::Logistic(LogisticParams {
                tol: LogisticParams::default().tol,
                ..p.clone()
            }),
        };
        Ok(Some(CandidateResult {
            loss: loss / counted as f64,
            tuned,
            first_model,
        }))
    };
    let t0 = Instant::now();
    let (logistic_results, boosted_results) = rayon::join(
        || -> Result<(Vec<CandidateResult>, usize), TrainError> {
            // The last logistic fit of each fold, to start the next penalty from; the path
            // stops once the validation loss rises.
            let mut warm: Vec<Option<Fitted>> = vec![None; fold_data.len()];
            let mut results: Vec<CandidateResult> = Vec::new();
            for (i, cand) in logistic.iter().enumerate() {
                let Some(r) = run_candidate(cand, &mut warm)? else {
                    continue;
                };
                let rose = results.last().is_some_and(|last| r.loss > last.loss);
                results.push(r);
                if rose {
                    return Ok((results, logistic.len() - i - 1));
                }
            }
            Ok((results, 0))
        },
        || -> Result<BoostedTuning, TrainError> {
            let t0 = Instant::now();
            bin_whole()?;
            let bin_seconds = t0.elapsed().as_secs_f64();
            let mut results: Vec<CandidateResult> = Vec::new();
            // The best boosted candidate's draw model, by early stopping on the first fold
            // (used only when boosted trees are chosen): draws are rare, so they usually need
            // far fewer trees than wins, and more would overfit. Evaluated twice as often as
            // the win model: a draw model keeps few trees, and the patience then costs half
            // as many unused ones. Only its rounds depend on the candidate's fit, not its
            // settings, so with one candidate it grows beside the win model.
            let draw_fit = |cand: &Chosen| -> Result<Option<Boosted>, TrainError> {
                let Some((fit_data, valid_data)) = fold_data.first() else {
                    return Ok(None);
                };
                if !(fit_data.has_draws() && valid_data.has_draws()) {
                    return Ok(None);
                }
                let draw_candidate = match cand {
                    Chosen::Boosted(p) => Chosen::Boosted(BoostedParams {
                        eval_every: p.eval_every.div_ceil(2),
                        ..p.clone()
                    }),
                    other => other.clone(),
                };
                Ok(
                    match fit_one(
                        &draw_candidate,
                        fit_data,
                        &fit_data.draw,
                        fold_values(true),
                        Some((valid_data, &valid_data.draw)),
                        None,
                        Some(options.boosted.max_rounds),
                        &ctx.bins,
                        &tuning_progress,
                        cancel,
                    )? {
                        Fitted::Boosted(m) => Some(m),
                        Fitted::Logistic(_) => None,
                    },
                )
            };
            let draw_rounds = if let [only] = &boosted[..] {
                let (win, draw) = rayon::join(|| run_candidate(only, &mut []), || draw_fit(only));
                results.extend(win?);
                draw?
            } else {
                for cand in &boosted {
                    results.extend(run_candidate(cand, &mut [])?);
                }
                let best_boosted = results
                    .iter()
                    .fold(None::<&CandidateResult>, |b, r| match b {
                        Some(b) if b.loss <= r.loss => Some(b),
                        _ => Some(r),
                    });
                match best_boosted {
                    Some(b) => draw_fit(&b.tuned)?,
                    None => None,
                }
            };
            Ok(BoostedTuning {
                results,
                draw_model: draw_rounds,
                bin_seconds,
            })
        },
    );
    let (logistic_results, path_skipped) = logistic_results?;
    let BoostedTuning {
        results: boosted_results,
        draw_model: boosted_draw_model,
        bin_seconds,
    } = boosted_results?;
    // The rows were binned while the logistic path was fitting; binning counts as features.
    ctx.timings.features += bin_seconds;
    ctx.timings.fit += t0.elapsed().as_secs_f64() - bin_seconds;
    let boosted_draw_rounds = boosted_draw_model.as_ref().map(|m| m.best_rounds.max(1));
    for r in logistic_results.into_iter().chain(boosted_results) {
        tuning.push(TuningRecord {
            candidate: r.tuned.describe(),
            valid_log_loss: r.loss,
            rounds: match &r.tuned {
                Chosen::Boosted(p) => Some(p.max_rounds),
                Chosen::Logistic(_) => None,
            },
            chosen: false,
        });
        if best.as_ref().is_none_or(|(b, _, _)| r.loss < *b) {
            best = Some((r.loss, r.tuned, r.first_model));
        }
    }
    let Some((best_loss, chosen, tuning_model)) = best else {
        return Err(TrainError::TooFew {
            found: finished.len(),
            needed: MIN_FINISHED_SESSIONS,
        });
    };
    if matches!(chosen, Chosen::Boosted(_)) {
        ctx.draw_rounds = boosted_draw_rounds;
    }
    // With one validation fold, the rows built once are kept: every row for the final fit,
    // the fold's growth and validation rows for the learning curve's fits. Other tuning
    // tables are freed before the final fit.
    let tuned_fold = match (whole, fold_data.len()) {
        (Some(w), 1) => fold_data
            .pop()
            .map(|(grow_rows, valid)| (w, grow_rows, valid)),
        _ => None,
    };
    drop(fold_data);
    ctx.timings.stage("tuning", stage_start);
    for t in &mut tuning {
        t.chosen = t.candidate == chosen.describe() && t.valid_log_loss == best_loss;
    }
    let mut choice_text = format!(
        "{} — lowest validation log loss ({best_loss:.4}) among {} candidate(s) on {}",
        chosen.describe(),
        tuning.len(),
        if small {
            format!("{folds}-fold session-grouped cross-validation")
        } else {
            "a session-grouped validation fold of the training part".to_string()
        }
    );
    if path_skipped > 0 {
        choice_text
            .push_str("; weaker logistic penalties were not tried once the validation loss rose");
    }
    if let Some(r) = ctx.draw_rounds {
        choice_text.push_str(&format!(
            "; draw model: {r} rounds, by early stopping on the same fold"
        ));
    }
    if grow.is_some() {
        choice_text.push_str(&format!(
            "; sessions average {mean_turns:.0} turns, so tuning fitted one turn in two{}",
            if matches!(chosen, Chosen::Boosted(_)) {
                " and the trees' leaf values were then set on every turn of every training session"
            } else {
                ""
            }
        ));
    } else if matches!(chosen, Chosen::Boosted(_)) && tuned_fold.is_some() {
        choice_text
            .push_str("; the tuned trees' leaf values were then set on every training session");
    }

    // The learning curve's plan: sessions of the validation fold's fitting part in a seeded
    // order (every training session without a single fold); the sizes fitted besides the
    // tuning model (on that fitting part) and the final model, which are two points for free.
    let want_curve = options.learning_curve && test_sessions.len() >= 5;
    let fit_part: Vec<(usize, usize)> = match &tuned_fold {
        Some(_) => fold_sessions(cv_folds[0], false),
        None => train_sessions.clone(),
    };
    let mut ordered: Vec<(u64, (usize, usize))> = fit_part
        .iter()
        .map(|&(si, k)| {
            let id = &sets[si].sessions[k].id;
            (
                crate::features::stable_hash(options.seed, id, 11 + si as u64),
                (si, k),
            )
        })
        .collect();
    ordered.sort_unstable();
    let n = train_sessions.len();
    let with_tuning_point =
        tuning_model.is_some() && want_curve && first_fold_sessions > 0 && first_fold_sessions < n;
    // Subsets smaller than the tuning model's share, each at least 5 sessions.
    let below = if with_tuning_point {
        first_fold_sessions
    } else {
        ordered.len() + 1
    };
    let mut smaller: Vec<usize> = LEARNING_CURVE_SHARES
        .iter()
        .map(|f| ((n as f64 * f).round() as usize).max(5))
        .filter(|&m| want_curve && m < below && m <= ordered.len())
        .collect();
    smaller.dedup();
    let subset_of =
        |m: usize| -> Vec<(usize, usize)> { ordered[..m].iter().map(|x| x.1).collect() };

    // The final model, on every training session. With one validation fold, boosted trees are
    // the tuned ones with their leaf values set on every training row (binned with the
    // fold's edges). The learning curve's small fits use the machine's cores poorly one at a
    // time; when their tables are small, they run beside the final fit (each fit is
    // deterministic, so nothing depends on the thread count). Large tables are fitted one at
    // a time, after it, to bound memory.
    progress.report("final fit", 0.0);
    let stage_start = Instant::now();
    let (final_data, tuning_fit, valid_data, extra_rows) = match tuned_fold {
        Some((w, grow_rows, valid)) => (w.all, Some(grow_rows), Some(valid), w.extra),
        None => (ctx.data(&train_sessions, true)?, None, None, Vec::new()),
    };
    let trained_rows = final_data.rows.len();
    // The tuned trees can take new leaf values on the final rows once those are binned with
    // their edges (with the growth rows' bins, by `WholeRows::bin`).
    let refit_tuned = matches!(
        (&chosen, tuning_model.as_ref()),
        (Chosen::Boosted(_), Some(Fitted::Boosted(_)))
    ) && final_data.binned.get().is_some();
    // The tuned boosted candidate with rounds left to early stopping, for the curve's fits.
    // Evaluated twice as often as the win model, like the draw model: a fit on a small
    // subset keeps few trees, and the patience then costs half as many unused ones.
    let curve_candidate = match (&chosen, &valid_data) {
        (Chosen::Boosted(p), Some(_)) => Chosen::Boosted(BoostedParams {
            max_rounds: options.boosted.max_rounds,
            eval_every: p.eval_every.div_ceil(2),
            ..p.clone()
        }),
        _ => chosen.clone(),
    };
    // One learning-curve fit on the first `m` sessions of `ordered`, fitted as tuning fitted
    // its candidates: logistic on every turn; boosted trees with early stopping on the
    // validation rows, grown on the fold's growth rows (one turn in two when sampled, each
    // tree's leaf values then set with the subset's other turns too).
    let curve_fit = |m: usize| -> Result<Fitted, TrainError> {
        let quiet = crate::progress::NoProgress;
        let sessions = subset_of(m);
        let valid = valid_data.as_ref().map(|v| (v, &v.won[..]));
        match (&curve_candidate, valid, &tuning_fit) {
            (Chosen::Boosted(_), Some(valid), Some(grow_rows)) => {
                let grown = grow_rows.sessions_subset(&sessions);
                let wanted: std::collections::HashSet<(usize, usize)> =
                    sessions.iter().copied().collect();
                let rows: Vec<u32> = extra_rows
                    .iter()
                    .copied()
                    .filter(|&i| {
                        let k = &final_data.rows[i as usize];
                        wanted.contains(&(k.set as usize, k.session as usize))
                    })
                    .collect();
                let values = ValueRows {
                    data: final_data.binned(&ctx.bins)?,
                    rows: Some(&rows),
                    y: &final_data.won,
                    weights: None,
                };
                fit_one(
                    &curve_candidate,
                    &grown,
                    &grown.won,
                    Some(values),
                    Some(valid),
                    None,
                    None,
                    &ctx.bins,
                    &quiet,
                    cancel,
                )
            }
            // Every turn of the subset (logistic fits take no validation rows).
            _ => {
                let all = final_data.sessions_subset(&sessions);
                fit_one(
                    &curve_candidate,
                    &all,
                    &all.won,
                    None,
                    valid,
                    None,
                    None,
                    &ctx.bins,
                    &quiet,
                    cancel,
                )
            }
        }
    };
    let sub_rows: usize = smaller.iter().map(|&m| trained_rows * m / n.max(1)).sum();
    let curve_beside = sub_rows <= PARALLEL_CURVE_ROWS;
    let t0 = Instant::now();
    let (final_fit, curve_fits) = rayon::join(
        || {
            if refit_tuned {
                let win = tuning_model.clone().expect("checked above");
                let draw = boosted_draw_model.clone().map(Fitted::Boosted);
                let (win, refitted_draw) = ctx.refit(win, draw, &final_data)?;
                // A draw model tuning could not stop early (no draws in one of its parts)
                // is grown on the final rows with the chosen rounds.
                let draw = match refitted_draw {
                    Some(d) => Some(d),
                    None if final_data.has_draws() => Some(fit_one(
                        &chosen,
                        &final_data,
                        &final_data.draw,
                        None,
                        None,
                        None,
                        ctx.draw_rounds,
                        &ctx.bins,
                        &crate::progress::NoProgress,
                        cancel,
                    )?),
                    None => None,
                };
                Ok((win, draw))
            } else {
                // A logistic final fit starts from the tuning fold's solution.
                ctx.fit_data(
                    &chosen,
                    &final_data,
                    "final fit",
                    true,
                    tuning_model.as_ref(),
                    None,
                )
            }
        },
        || -> Vec<Result<Fitted, TrainError>> {
            if curve_beside {
                smaller.par_iter().map(|&m| curve_fit(m)).collect()
            } else {
                Vec::new()
            }
        },
    );
    let mut curve_fits = curve_fits;

    if !curve_beside {
        for (i, &m) in smaller.iter().enumerate() {
            progress.report("learning curve", i as f64 / (smaller.len() + 1) as f64);
            curve_fits.push(curve_fit(m));
        }
    }
    // The tuning model's point (its leaf values already come from every turn of its sessions).
    let tuning_point = tuning_model.as_ref().filter(|_| with_tuning_point);
    ctx.timings.fit += t0.elapsed().as_secs_f64();
    drop(final_data);
    drop(tuning_fit);
    drop(valid_data);
    let (win, draw) = final_fit?;
    let mut model = WinModel {
        spec: ctx.spec.clone(),
        win,
        draw,
        summary: ModelSummary {
            created_by: format!("tellturn {}", env!("CARGO_PKG_VERSION")),
            sets: sets.iter().map(|s| s.name.clone()).collect(),
            trained_sessions: train_sessions.len(),
            trained_rows,
            test_sessions: test_sessions.len(),
            seed: options.seed,
            choice: choice_text,
            settings: format!("{chosen:?}"),
            test_log_loss: None,
            test_accuracy: None,
            notes: Vec::new(),
        },
    };
    progress.report("final fit", 1.0);
    ctx.timings.stage("final fit", stage_start);

    // Traces: test share by the final model; training sessions cross-fitted. When every turn
    // is fitted, the test rows are built once, for the traces and the learning curve; a set
    // too large for that is scored in bounded chunks.
    let every_turn_test = (ctx.sample == TurnSample::All)
        .then(|| ctx.data(&test_sessions, false))
        .transpose()?;
    let t0 = Instant::now();
    let mut traces = match &every_turn_test {
        Some(test) => {
            let chances = model.chances_of(&test.rows, &test.x);
            model.traces_from(&test.rows, &chances, |_| TraceSource::Test)
        }
        None => score_sessions(
            &model,
            sets,
            &test_sessions,
            |_, _| TraceSource::Test,
            cancel,
        )?,
    };
    ctx.timings.score += t0.elapsed().as_secs_f64();
    if options.cross_fit {
        let stage_start = Instant::now();
        for f in 0..folds {
            progress.report("cross-fitting", f as f64 / folds as f64);
            let fit_on = fold_sessions(f, false);
            let predict = fold_sessions(f, true);
            if fit_on.is_empty() || predict.is_empty() {
                continue;
            }
            let (win, draw, _) = ctx.fit(&chosen, &fit_on, grow, "cross-fitting", true)?;
            let fold_model = WinModel {
                spec: ctx.spec.clone(),
                win,
                draw,
                summary: ModelSummary::default(),
            };
            let t0 = Instant::now();
            traces.extend(score_sessions(
                &fold_model,
                sets,
                &predict,
                |_, _| TraceSource::CrossFit { fold: f as u8 },
                cancel,
            )?);
            ctx.timings.score += t0.elapsed().as_secs_f64();
        }
        progress.report("cross-fitting", 1.0);
        ctx.timings.stage("cross-fitting", stage_start);
    }
    let open: Vec<(usize, usize)> = sets
        .iter()
        .enumerate()
        .flat_map(|(si, s)| {
            s.sessions
                .iter()
                .enumerate()
                .filter(|(_, x)| !x.is_finished())
                .map(move |(k, _)| (si, k))
        })
        .collect();
    let t0 = Instant::now();
    traces.extend(score_sessions(
        &model,
        sets,
        &open,
        |_, _| TraceSource::Scored,
        cancel,
    )?);
    ctx.timings.score += t0.elapsed().as_secs_f64();
    traces.sort_by_key(|t| (t.set, t.session));

    // Learning curve: held-out loss on the test share against training sessions used.
    let mut learning_curve = Vec::new();
    if want_curve {
        let stage_start = Instant::now();
        let test_data = match every_turn_test {
            Some(test) => test,
            None => ctx.data(&test_sessions, false)?,
        };
        for (&sessions, fitted) in smaller.iter().zip(curve_fits) {
            learning_curve.push(LearningPoint {
                sessions,
                log_loss: ctx.loss_on(&fitted?, &test_data),
            });
        }
        if let Some(m) = tuning_point {
            learning_curve.push(LearningPoint {
                sessions: first_fold_sessions,
                log_loss: ctx.loss_on(m, &test_data),
            });
        }
        learning_curve.push(LearningPoint {
            sessions: n,
            log_loss: ctx.loss_on(&model.win, &test_data),
        });
        progress.report("learning curve", 1.0);
        ctx.timings.stage("learning curve", stage_start);
    }
    model.summary.notes = notes.clone();
    ctx.timings.total = started.elapsed().as_secs_f64();
    Ok(Training {
        model,
        finished,
        split,
        traces,
        tuning,
        learning_curve,
        notes,
        timings: ctx.timings,
        sampled_one_in,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(sessions: usize, log_loss: f64) -> LearningPoint {
        LearningPoint { sessions, log_loss }
    }

    #[test]
    fn fall_per_doubling_is_the_least_squares_slope_over_the_last_three_points() {
        // By hand: at 200, 400, 800 sessions the x = log2 values are equally spaced one apart,
        // so the least-squares slope is (last − first) / 2 = (0.50 − 0.56) / 2 = −0.03.
        let curve = [
            point(100, 0.70),
            point(200, 0.56),
            point(400, 0.55),
            point(800, 0.50),
        ];
        let fall = loss_fall_per_doubling(&curve).unwrap();
        assert!((fall - 0.03).abs() < 1e-12, "{fall}");
        // Two points: the plain difference over the doublings between them (log2(4) = 2).
        let fall = loss_fall_per_doubling(&[point(100, 0.6), point(400, 0.5)]).unwrap();
        assert!((fall - 0.05).abs() < 1e-12, "{fall}");
        assert_eq!(loss_fall_per_doubling(&[point(100, 0.6)]), None);
        assert_eq!(
            loss_fall_per_doubling(&[point(100, 0.6), point(100, 0.5)]),
            None
        );
    }
}
