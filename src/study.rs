//! A study: everything a report or the dashboard shows, from one engine call.
//!
//! Each side (one group of sets, or one variant of a set) gets its own model by default — a rule
//! change changes what events mean — with out-of-fold traces for every finished session; then
//! decided turns, swings, balance and, with two sides, the comparison.

use crate::analysis::AnalysisError;
use crate::analysis::balance::{Balance, BalanceParams, balance};
use crate::analysis::compare::{CompareParams, CompareSide, Comparison, compare};
use crate::analysis::decision::{DecisionReport, decision_report};
use crate::analysis::findings::{Findings, FindingsInput, assemble_findings};
use crate::analysis::swings::{
    EventImpact, EventImpactParams, LeverageParams, LeverageTable, event_impact, leverage_by_turn,
};
use crate::analysis::traces::{Trace, TraceSource};
use crate::evaluate::quality::{Quality, quality};
use crate::evaluate::train::{TrainError, TrainOptions, Training, train};
use crate::progress::{Cancel, Progress};
use crate::sessions::SessionSet;
use crate::stats::BootstrapParams;
use serde::Serialize;
use std::ops::Range;

/// Settings of a study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudyOptions {
    /// Training settings (cross-fitting is always on in a study).
    pub train: TrainOptions,
    /// Decided-turn threshold (the user's choice).
    pub threshold: f64,
    /// A second, looser threshold the report also gives.
    pub second_threshold: f64,
    /// Bootstrap resamples for event-impact intervals.
    pub bootstrap: usize,
    /// Split one set by its `variant` column into sides, each with its own model.
    pub split_variants: bool,
}

impl Default for StudyOptions {
    fn default() -> Self {
        StudyOptions {
            train: TrainOptions::default(),
            threshold: 0.9,
            second_threshold: 0.75,
            bootstrap: 1000,
            split_variants: true,
        }
    }
}

/// Why a study could not run.
#[derive(Debug, thiserror::Error)]
pub enum StudyError {
    /// Training failed on one side.
    #[error("{side}: {source}")]
    Train {
        /// The side.
        side: String,
        /// Why.
        source: TrainError,
    },
    /// An analysis failed.
    #[error("{0}")]
    Analysis(#[from] AnalysisError),
    /// Nothing to study.
    #[error("no session set given")]
    Empty,
}

/// Everything computed for one side.
#[derive(Debug, Clone)]
pub struct SideResult {
    /// The side's name (variant or set names).
    pub name: String,
    /// Which of [`Study::sets`] belong to it.
    pub sets: Range<usize>,
    /// The training run; trace `set` indices point into [`Study::sets`].
    pub training: Training,
    /// Which model produced its traces, in words.
    pub model_label: String,
    /// Scores on the untouched test share.
    pub test_quality: Option<Quality>,
    /// Scores on every out-of-fold trace (test share and cross-fitted sessions).
    pub oof_quality: Option<Quality>,
    /// Decisions at the chosen threshold.
    pub decisions: DecisionReport,
    /// Decisions at the second threshold.
    pub decisions_second: DecisionReport,
    /// Event impact with bootstrap intervals.
    pub impact: EventImpact,
    /// Leverage by turn number.
    pub leverage: LeverageTable,
    /// Balance between seats, actors and routes.
    pub balance: Balance,
    /// The side's headline findings.
    pub findings: Findings,
}

impl SideResult {
    /// The side's traces (out-of-fold for finished sessions, scored for sessions in progress).
    pub fn traces(&self) -> Vec<&Trace> {
        self.training.traces.iter().collect()
    }
}

/// The whole study.
#[derive(Debug, Clone)]
pub struct Study {
    /// Every set, side by side.
    pub sets: Vec<SessionSet>,
    /// One or two sides.
    pub sides: Vec<SideResult>,
    /// Side B against side A, when there are two sides.
    pub comparison: Option<Comparison>,
    /// The headline findings (side A's, plus the comparison's verdicts).
    pub findings: Findings,
    /// The options used.
    pub options: StudyOptions,
    /// Notes on how sides were formed.
    pub notes: Vec<String>,
}

impl Study {
    /// References to every set.
    pub fn set_refs(&self) -> Vec<&SessionSet> {
        self.sets.iter().collect()
    }
    /// Decisions of side `side` at another threshold (cheap: no retraining).
    pub fn decisions_at(
        &self,
        side: usize,
        threshold: f64,
    ) -> Result<DecisionReport, AnalysisError> {
        decision_report(&self.sides[side].traces(), &self.set_refs(), threshold)
    }
    /// The comparison at another threshold (cheap: no retraining).
    pub fn comparison_at(&self, threshold: f64) -> Option<Result<Comparison, AnalysisError>> {
        (self.sides.len() >= 2).then(|| compare_sides(&self.sets, &self.sides, threshold))
    }
}

fn compare_sides(
    sets: &[SessionSet],
    sides: &[SideResult],
    threshold: f64,
) -> Result<Comparison, AnalysisError> {
    let refs: Vec<&SessionSet> = sets.iter().collect();
    let a = CompareSide {
        name: sides[0].name.clone(),
        model: sides[0].model_label.clone(),
        traces: sides[0].traces(),
    };
    let b = CompareSide {
        name: sides[1].name.clone(),
        model: sides[1].model_label.clone(),
        traces: sides[1].traces(),
    };
    compare(
        &refs,
        &a,
        &b,
        &CompareParams {
            threshold,
            ..CompareParams::default()
        },
    )
}

/// Progress with a side prefix (`A: tuning`).
struct SidePrefix<'a> {
    inner: &'a dyn Progress,
    prefix: String,
}

impl Progress for SidePrefix<'_> {
    fn report(&self, stage: &str, fraction: f64) {
        self.inner
            .report(&format!("{}{stage}", self.prefix), fraction);
    }
}

/// Form the sides: `a` and `b` as given; or, with only `a` and `split_variants`, one side per
/// recorded variant when every finished session records one and there are two or more.
fn form_sides(
    a: Vec<SessionSet>,
    b: Vec<SessionSet>,
    split: bool,
    notes: &mut Vec<String>,
) -> (Vec<SessionSet>, Vec<(String, Range<usize>)>) {
    let names = |sets: &[SessionSet]| {
        sets.iter()
            .map(|s| s.main_variant())
            .collect::<Vec<_>>()
            .join(" + ")
    };
    if !b.is_empty() {
        let (na, nb) = (names(&a), names(&b));
        let (la, lb) = (a.len(), b.len());
        let mut sets = a;
        sets.extend(b);
        let (na, nb) = if na == nb {
            (format!("{na} (first)"), format!("{nb} (second)"))
        } else {
            (na, nb)
        };
        return (sets, vec![(na, 0..la), (nb, la..la + lb)]);
    }
    if split && a.len() == 1 {
        let set = &a[0];
        let mut counts: std::collections::BTreeMap<String, usize> = Default::default();
        let mut all_recorded = true;
        for s in set.finished() {
            match s.variant() {
                Some(v) => *counts.entry(v.to_string()).or_default() += 1,
                None => all_recorded = false,
            }
        }
        if all_recorded && counts.len() >= 2 {
            let mut by_count: Vec<(String, usize)> = counts.into_iter().collect();
            by_count.sort_by(|x, y| y.1.cmp(&x.1).then(x.0.cmp(&y.0)));
            let mut chosen: Vec<String> = by_count.iter().take(2).map(|x| x.0.clone()).collect();
            chosen.sort();
            if by_count.len() > 2 {
                notes.push(format!(
                    "{} records {} variants; the two largest ({} and {}) are compared",
                    set.name,
                    by_count.len(),
                    chosen[0],
                    chosen[1]
                ));
            }
            notes.push(format!(
                "{} holds variants {} and {}: each gets its own model (a rule change changes what events mean); sessions in progress go with {}",
                set.name, chosen[0], chosen[1], chosen[0]
            ));
            let first = chosen[0].clone();
            let sa = set.subset(&format!("{} {}", set.name, chosen[0]), |s| {
                s.variant() == Some(&first) || !s.is_finished()
            });
            let second = chosen[1].clone();
            let sb = set.subset(&format!("{} {}", set.name, chosen[1]), |s| {
                s.variant() == Some(&second)
            });
            return (
                vec![sa, sb],
                vec![(chosen[0].clone(), 0..1), (chosen[1].clone(), 1..2)],
            );
        }
    }
    let n = a.len();
    let name = names(&a);
    (a, vec![(name, 0..n)])
}

/// Run a study on sets `a` (and, to compare, sets `b`).
pub fn run_study(
    a: Vec<SessionSet>,
    b: Vec<SessionSet>,
    options: &StudyOptions,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Study, StudyError> {
    if a.is_empty() {
        return Err(StudyError::Empty);
    }
    let mut notes = Vec::new();
    let (sets, groups) = form_sides(a, b, options.split_variants, &mut notes);
    let mut train_options = options.train.clone();
    train_options.cross_fit = true;
    let mut sides = Vec::new();
    let two = groups.len() > 1;
    for (k, (name, range)) in groups.into_iter().enumerate() {
        let prefix = if two {
            format!("{name}: ")
        } else {
            String::new()
        };
        let p = SidePrefix {
            inner: progress,
            prefix: prefix.clone(),
        };
        let refs: Vec<&SessionSet> = sets[range.clone()].iter().collect();
        let mut training =
            train(&refs, &train_options, &p, cancel).map_err(|source| StudyError::Train {
                side: name.clone(),
                source,
            })?;
        for t in &mut training.traces {
            t.set += range.start;
        }
        let all: Vec<&SessionSet> = sets.iter().collect();
        let traces: Vec<&Trace> = training.traces.iter().collect();
        let test: Vec<&Trace> = traces
            .iter()
            .copied()
            .filter(|t| t.source == TraceSource::Test)
            .collect();
        let oof: Vec<&Trace> = traces
            .iter()
            .copied()
            .filter(|t| t.source.is_out_of_fold())
            .collect();
        let test_quality = quality(&all, &test);
        let oof_quality = quality(&all, &oof);
        let decisions = decision_report(&traces, &all, options.threshold)?;
        let decisions_second = decision_report(&traces, &all, options.second_threshold)?;
        p.report("event impact", 0.0);
        let impact = event_impact(
            &traces,
            &all,
            &EventImpactParams {
                bootstrap: BootstrapParams {
                    resamples: options.bootstrap,
                    seed: options.train.seed,
                    ..BootstrapParams::default()
                },
                ..EventImpactParams::default()
            },
            &p,
            cancel,
        )?;
        let leverage = leverage_by_turn(&traces, &all, &LeverageParams::default())?;
        let balance = balance(
            &sets[range.clone()].iter().collect::<Vec<_>>(),
            Some(&decisions.decisions),
            &BalanceParams::default(),
        )?;
        let reports = [decisions.clone(), decisions_second.clone()];
        let findings = assemble_findings(&FindingsInput {
            balance: Some(&balance),
            decisions: &reports,
            impact: Some(&impact),
            leverage: Some(&leverage),
            comparisons: &[],
            swing_makers: 3,
        });
        let kind = training.model.win.kind();
        let model_label = format!(
            "{} trained on {}'s own sessions (seed {})",
            match kind {
                crate::models::win_model::ModelKind::Boosted => "boosted trees",
                crate::models::win_model::ModelKind::Logistic => "logistic regression",
            },
            name,
            options.train.seed
        );
        let _ = k;
        sides.push(SideResult {
            name,
            sets: range,
            training,
            model_label,
            test_quality,
            oof_quality,
            decisions,
            decisions_second,
            impact,
            leverage,
            balance,
            findings,
        });
    }
    let comparison = if sides.len() >= 2 {
        Some(compare_sides(&sets, &sides, options.threshold)?)
    } else {
        None
    };
    let first = &sides[0];
    let reports = [first.decisions.clone(), first.decisions_second.clone()];
    let comparisons: Vec<Comparison> = comparison.iter().cloned().collect();
    let findings = assemble_findings(&FindingsInput {
        balance: Some(&first.balance),
        decisions: &reports,
        impact: Some(&first.impact),
        leverage: Some(&first.leverage),
        comparisons: &comparisons,
        swing_makers: 3,
    });
    Ok(Study {
        sets,
        sides,
        comparison,
        findings,
        options: options.clone(),
        notes,
    })
}
