//! Many replications: run in parallel with rayon, combined in replication
//! order so results are identical for any thread count; a fixed count or
//! precision-driven stopping. Must not parse files or print.

pub mod compare;
pub mod cost;
pub mod explain;
pub mod shard;
pub mod size;
pub mod staffing;
pub mod sweep;
pub mod warnings;
pub mod work;

use crate::engine;
use crate::scenario::{Model, Replications};
use crate::stats::{self, Estimate, Figure, FigureId, Obs, Scope};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::time::Instant;
use thiserror::Error;

/// Replications run first when a precision goal is set.
pub const PRECISION_FIRST_BATCH: u32 = 10;

/// A run that could not be carried out.
#[derive(Debug, Error)]
pub enum ExperimentError {
    /// The worker threads could not be started.
    #[error("cannot start {threads} worker threads: {reason}")]
    Threads {
        /// Threads asked for.
        threads: usize,
        /// Why.
        reason: String,
    },
    /// No shift plan covers the staffing (the message says why).
    #[error("{0}")]
    Shifts(String),
    /// A sweep step or sizing probe the model cannot take.
    #[error(transparent)]
    Transform(#[from] crate::scenario::TransformError),
    /// The assumption ladder starts from a textbook model, which a call flow
    /// with stages does not have; compare two designs instead.
    #[error(
        "explain does not cover call flows with stages (stream \"{stream}\"): no textbook model holds a call through several stages; compare two designs with `busyhour compare` instead"
    )]
    FlowNotExplained {
        /// The first stream with stages.
        stream: String,
    },
}

/// How to run.
#[derive(Default)]
pub struct RunOptions<'a> {
    /// Worker threads (None: one per core).
    pub threads: Option<usize>,
    /// Called after each finished replication with (done, planned).
    pub progress: Option<&'a (dyn Fn(u64, u64) + Sync)>,
    /// When set, no new replication starts; the figures of the finished ones
    /// are returned, marked partial.
    pub stop: Option<&'a AtomicBool>,
}

/// Whether replications ran to the end of their plan or were stopped on
/// request ([`RunOptions::stop`]): the one meaning every function of this
/// module gives it.
#[must_use]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Completion {
    /// Every planned replication ran.
    Complete,
    /// Stopped early: a prefix of complete replications ran.
    Stopped,
}

impl Completion {
    /// Whether stopped early (a result is then marked partial).
    pub fn stopped(self) -> bool {
        self == Completion::Stopped
    }
}

/// Whether a precision goal was reached.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PrecisionStatus {
    /// Relative half-width asked for.
    pub target: f64,
    /// Largest relative half-width among the key figures.
    pub achieved: f64,
    /// Whether every key figure reached the target.
    pub met: bool,
}

/// The result of many replications of one model: estimates and what each
/// replication observed. (Not a call's outcome: that is
/// [`records::Outcome`](crate::records::Outcome).)
#[derive(Debug, Clone)]
pub struct RunResult {
    /// The figures, in order.
    pub layout: Vec<FigureId>,
    /// Estimates, one per figure of the layout.
    pub estimates: Vec<Estimate>,
    /// What each replication observed of each figure, in replication order.
    pub per_replication: Vec<Vec<Obs>>,
    /// Replications run.
    pub replications: u64,
    /// Events processed in all replications.
    pub events: u64,
    /// Wall-clock seconds.
    pub wall_s: f64,
    /// Precision goal status, when one was set.
    pub precision: Option<PrecisionStatus>,
    /// Stopped early on request: fewer replications than planned.
    pub partial: bool,
    /// Warnings about the start (short warm-up, visible transient).
    pub warnings: Vec<warnings::Warning>,
}

impl RunResult {
    /// The estimate of the figure named `name` (its design name, as in the
    /// JSON) in `scope`, if reported.
    pub fn get(&self, scope: Scope, name: &str) -> Option<Estimate> {
        Figure::from_name(name).and_then(|f| self.get_figure(scope, f))
    }

    /// The estimate of `figure` in `scope`, if reported.
    pub fn get_figure(&self, scope: Scope, figure: Figure) -> Option<Estimate> {
        self.index_of(scope, figure).map(|i| self.estimates[i])
    }

    /// Position of `figure` in `scope` in the layout.
    pub fn index_of(&self, scope: Scope, figure: Figure) -> Option<usize> {
        self.layout
            .iter()
            .position(|f| f.scope == scope && f.figure == figure)
    }

    /// The observations of figure `index` of the layout, in replication order.
    pub fn column(&self, index: usize) -> Vec<Obs> {
        self.per_replication.iter().map(|v| v[index]).collect()
    }

    /// The estimate of figure `index` at confidence `level` (sizing verdicts
    /// use a Bonferroni level above 95%).
    pub fn estimate_at(&self, index: usize, level: f64) -> Estimate {
        estimate_one(&self.layout, &self.per_replication, index, level)
    }
}

/// Figure values of replications 0..n of one model, in replication order.
#[derive(Debug, Clone, Default)]
pub struct Accumulated {
    /// What each replication observed of each figure.
    pub per_replication: Vec<Vec<Obs>>,
    /// Per replication and group, carried traffic in the first and second
    /// half of the measured period (for the transient check).
    pub halves: Vec<Vec<(f64, f64)>>,
    /// Events processed.
    pub events: u64,
}

/// One finished replication: its observations, its halves (per group,
/// first and second half carried traffic) and its events.
type Finished = (Vec<Obs>, Vec<(f64, f64)>, u64);

/// A pool of workers that runs replications and reports progress.
pub struct Runner<'a> {
    pool: rayon::ThreadPool,
    opts: &'a RunOptions<'a>,
    done: AtomicU64,
}

impl<'a> Runner<'a> {
    /// Start the workers.
    pub fn new(opts: &'a RunOptions<'a>) -> Result<Self, ExperimentError> {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(opts.threads.unwrap_or(0))
            .build()
            .map_err(|e| ExperimentError::Threads {
                threads: opts.threads.unwrap_or(0),
                reason: e.to_string(),
            })?;
        Ok(Runner {
            pool,
            opts,
            done: AtomicU64::new(0),
        })
    }

    /// Whether a stop was requested.
    pub fn stopped(&self) -> bool {
        self.opts.stop.is_some_and(|s| s.load(Ordering::Relaxed))
    }

    /// Run replications `acc.len()..to` of `model` and append their figure
    /// values. When stopped early, `acc` holds a prefix of complete
    /// replications, so a partial result stays reproducible.
    pub fn extend(
        &self,
        model: &Model,
        layout: &[FigureId],
        acc: &mut Accumulated,
        to: u64,
        planned: u64,
    ) -> Completion {
        let from = acc.per_replication.len() as u64;
        self.run_range(model, layout, from, to, planned, acc)
    }

    /// Run replications `from..to` of `model` and append their figure values
    /// to `acc` in index order. When stopped early, `acc` has a prefix of
    /// the range.
    pub fn run_range(
        &self,
        model: &Model,
        layout: &[FigureId],
        from: u64,
        to: u64,
        planned: u64,
        acc: &mut Accumulated,
    ) -> Completion {
        if to <= from {
            return Completion::Complete;
        }
        let results: Vec<Option<Finished>> = self.pool.install(|| {
            use rayon::prelude::*;
            (from..to)
                .into_par_iter()
                .map(|r| {
                    if self.stopped() {
                        return None;
                    }
                    let tally = engine::run_replication(model, r);
                    let values = stats::observe(model, layout, &tally);
                    let n = self.done.fetch_add(1, Ordering::Relaxed) + 1;
                    if let Some(p) = self.opts.progress {
                        p(n, planned);
                    }
                    Some((values, warnings::halves_of(model, &tally), tally.events))
                })
                .collect()
        });
        for r in results {
            match r {
                Some((values, halves, events)) => {
                    acc.per_replication.push(values);
                    acc.halves.push(halves);
                    acc.events += events;
                }
                None => return Completion::Stopped,
            }
        }
        Completion::Complete
    }

    /// Run `model` to the plan: a fixed count, or a precision goal (its
    /// status, unless stopped).
    pub fn run_plan(
        &self,
        model: &Model,
        plan: &Replications,
        acc: &mut Accumulated,
    ) -> (Option<PrecisionStatus>, Completion) {
        let layout = stats::layout(model);
        match *plan {
            Replications::Fixed(n) => (
                None,
                self.extend(model, &layout, acc, u64::from(n), u64::from(n)),
            ),
            Replications::Precision { target, max } => {
                let max = u64::from(max);
                let mut next = u64::from(PRECISION_FIRST_BATCH)
                    .min(max)
                    .max(acc.per_replication.len() as u64);
                loop {
                    if self.extend(model, &layout, acc, next, max).stopped() {
                        return (None, Completion::Stopped);
                    }
                    let have = acc.per_replication.len() as u64;
                    let estimates = estimates_of(&layout, &acc.per_replication);
                    let achieved = worst_relative(&layout, &estimates);
                    let met = achieved <= target;
                    if met || have >= max {
                        return (
                            Some(PrecisionStatus {
                                target,
                                achieved,
                                met,
                            }),
                            Completion::Complete,
                        );
                    }
                    // Replications needed grow with the square of the ratio
                    // of half-widths; aim 10% beyond, at least 10 more, at
                    // most max.
                    let ratio = if achieved.is_finite() {
                        achieved / target
                    } else {
                        2.0
                    };
                    let wanted = (have as f64 * ratio * ratio * 1.1).ceil() as u64;
                    next = wanted.max(have + 10).min(max);
                }
            }
        }
    }
}

/// Run `model` as its plan (or `replications`, when given) says.
pub fn run(
    model: &Model,
    replications: Option<Replications>,
    opts: &RunOptions,
) -> Result<RunResult, ExperimentError> {
    let started = Instant::now();
    let runner = Runner::new(opts)?;
    let plan = replications.unwrap_or_else(|| model.plan.replications.clone());
    let mut acc = Accumulated::default();
    let (precision, completion) = runner.run_plan(model, &plan, &mut acc);
    Ok(outcome_of(
        model,
        acc,
        started.elapsed().as_secs_f64(),
        precision,
        completion,
    ))
}

/// Assemble an outcome from accumulated replications (marked partial when
/// they were stopped early).
pub fn outcome_of(
    model: &Model,
    acc: Accumulated,
    wall_s: f64,
    precision: Option<PrecisionStatus>,
    completion: Completion,
) -> RunResult {
    let layout = stats::layout(model);
    let estimates = estimates_of(&layout, &acc.per_replication);
    let mut warnings = warnings::warnings(model, &acc.halves);
    warnings.extend(warnings::sparse(model, &layout, &acc.per_replication));
    RunResult {
        warnings,
        replications: acc.per_replication.len() as u64,
        layout,
        estimates,
        per_replication: acc.per_replication,
        events: acc.events,
        wall_s,
        precision,
        partial: completion.stopped(),
    }
}

/// Estimates of every figure from per-replication observations in index
/// order, at 95%.
pub fn estimates_of(layout: &[FigureId], per_replication: &[Vec<Obs>]) -> Vec<Estimate> {
    (0..layout.len())
        .map(|i| estimate_one(layout, per_replication, i, stats::LEVEL))
        .collect()
}

/// The estimate of figure `i` of the layout at confidence `level`: each
/// figure by its own estimator ([`stats::estimate_figure`]); the overflow
/// peakedness pooled from the overflow mean and mean square of the same
/// group ([`stats::pooled_peakedness`]).
pub fn estimate_one(
    layout: &[FigureId],
    per_replication: &[Vec<Obs>],
    i: usize,
    level: f64,
) -> Estimate {
    let column = |i: usize| -> Vec<Obs> { per_replication.iter().map(|v| v[i]).collect() };
    let f = layout[i];
    if f.figure == Figure::OverflowPeakedness {
        let find = |figure: Figure| {
            layout
                .iter()
                .position(|g| g.scope == f.scope && g.figure == figure)
        };
        if let (Some(m1), Some(m2)) = (find(Figure::OverflowMean), find(Figure::OverflowMeanSquare))
        {
            let own = |c: Vec<Obs>| c.iter().map(Obs::own).collect::<Vec<f64>>();
            return stats::pooled_peakedness(&own(column(m1)), &own(column(m2)), level)
                .within(f.figure.range());
        }
    }
    stats::estimate_figure(f.figure, &column(i), level)
}

/// The key figure of a precision goal with the largest relative half-width,
/// and that half-width (see [`worst_relative`]).
pub fn worst_key(layout: &[FigureId], estimates: &[Estimate]) -> Option<(FigureId, f64)> {
    layout
        .iter()
        .zip(estimates)
        .filter(|(f, e)| {
            matches!(f.scope, Scope::Stream(_) | Scope::Group(_))
                && f.figure.is_precision_key(f.scope.is_stream())
                && e.replications > 0
                && e.mean != 0.0
        })
        .map(|(f, e)| (*f, e.relative_half_width()))
        .filter(|(_, r)| !r.is_nan())
        .max_by(|a, b| a.1.total_cmp(&b.1))
}

/// The key figures of a precision goal: every stream's loss and every group's
/// carried traffic. Returns the largest relative half-width among them. A
/// figure never observed to be non-zero (no lost call in any replication)
/// has no relative precision and is left out: its interval is an absolute
/// bound ([`stats::clopper_pearson`]), shown as such.
pub fn worst_relative(layout: &[FigureId], estimates: &[Estimate]) -> f64 {
    worst_key(layout, estimates).map_or(0.0, |(_, r)| r.max(0.0))
}
