//! Sizing: the fewest servers on one group for which every goal holds, where a
//! goal holds only when its whole 95% interval lies on the right side of the
//! bound. Candidates share common random numbers (the same seeds at every
//! size), so neighbouring sizes are compared fairly.

use super::{Accumulated, Completion, ExperimentError, RunOptions, RunResult, Runner, outcome_of};
use crate::scenario::{Model, Replications};
use crate::stats::{self, Estimate, Figure, FigureId, Scope};
use crate::textbook::formula_column;
use crate::units;
use std::collections::BTreeMap;
use std::time::Instant;
use thiserror::Error;

/// A goal that cannot be understood.
#[derive(Debug, Error, PartialEq)]
pub enum GoalError {
    /// The text is not `[name.]figure<=value` or `>=`.
    #[error(
        "goal '{0}': expected [stream.]figure<=value or >=value, like \"loss<=1%\" or \"office.service_level>=80%\""
    )]
    Syntax(String),
    /// The figure cannot be a goal.
    #[error("goal '{goal}': '{figure}' is not a figure a goal can name (use one of {allowed})")]
    Figure {
        /// The goal text.
        goal: String,
        /// The figure named.
        figure: String,
        /// The figures allowed.
        allowed: &'static str,
    },
    /// The stream or group prefix names nothing.
    #[error("goal '{goal}': no {what} is named \"{name}\"")]
    Name {
        /// The goal text.
        goal: String,
        /// "stream" or "group".
        what: &'static str,
        /// The name given.
        name: String,
    },
    /// The bound is not a value of the figure's unit.
    #[error("goal '{goal}': {reason}")]
    Value {
        /// The goal text.
        goal: String,
        /// What is wrong.
        reason: String,
    },
    /// No stream of the model reports the figure.
    #[error(
        "goal '{0}': no stream in this scenario reports that figure (waits need a queue, service level needs answer_within, attempt figures need retry, interruptions need preemption)"
    )]
    NotReported(String),
}

const STREAM_GOALS: &[&str] = &[
    "loss",
    "first_attempt_blocking",
    "attempt_blocking",
    "abandonment",
    "wait_probability",
    "wait_mean",
    "wait_p50",
    "wait_p90",
    "wait_p99",
    "service_level",
    "attempts_per_call",
    "interruptions",
];
const GROUP_GOALS: &[&str] = &["occupancy", "time_congestion"];
const ALLOWED: &str = "loss, first_attempt_blocking, attempt_blocking, abandonment, wait_probability, \
wait_mean, wait_p50, wait_p90, wait_p99, service_level, attempts_per_call, interruptions, occupancy, time_congestion";

/// A design goal on one figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Goal {
    /// As the user wrote it.
    pub text: String,
    /// The figure.
    pub figure: Figure,
    /// The figures the goal applies to (every stream that reports it, or the
    /// named one; a group figure applies to the named or the sized group).
    pub targets: Vec<FigureId>,
    /// True for `<=`, false for `>=`.
    pub at_most: bool,
    /// The bound, in the figure's unit (share, seconds or ratio).
    pub bound: f64,
    /// `... on 90% of days`: the goal is on the share of replications (days,
    /// or periods of the measured length) whose own figures meet the bound,
    /// which must be at least this share; `None`: on the long-run figure.
    pub days: Option<f64>,
}

/// Whether a goal holds, fails, or cannot be decided at this precision.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Verdict {
    /// The whole interval is on the right side of the bound.
    Holds,
    /// The whole interval is on the wrong side.
    Fails,
    /// The interval straddles the bound.
    Undecided,
}

impl Verdict {
    /// A word for reports.
    pub fn word(self) -> &'static str {
        match self {
            Verdict::Holds => "holds",
            Verdict::Fails => "fails",
            Verdict::Undecided => "undecided",
        }
    }
}

impl Goal {
    /// Parse `[name.]figure<=value` (or `>=`), optionally followed by
    /// `on SHARE of days` (or `of periods`), against a model; `group` is
    /// the group being sized (group figures without a prefix refer to it).
    pub fn parse(text: &str, model: &Model, group: usize) -> Result<Goal, GoalError> {
        let syntax = || GoalError::Syntax(text.to_string());
        // The days suffix comes after the comparison, so that a stream or
        // group name may itself contain " on ".
        let whole = text.trim();
        let op = whole.find(['<', '>']).unwrap_or(whole.len());
        let suffix = whole[op..].find(" on ").map(|i| op + i);
        let (t, days) = match suffix.map(|i| (&whole[..i], &whole[i + 4..])) {
            Some((goal, share)) => {
                let share = share.trim();
                let value = share
                    .strip_suffix("of days")
                    .or_else(|| share.strip_suffix("of periods"))
                    .ok_or_else(|| GoalError::Value {
                        goal: text.to_string(),
                        reason: format!(
                            "expected 'on SHARE of days' after the bound, like \"on 90% of days\", not 'on {share}'"
                        ),
                    })?;
                let d = units::parse_share(value.trim())
                    .ok()
                    .filter(|d| *d > 0.0 && *d < 1.0)
                    .ok_or_else(|| GoalError::Value {
                        goal: text.to_string(),
                        reason: format!(
                            "the share of days must lie strictly between 0% and 100%, not '{}'",
                            value.trim()
                        ),
                    })?;
                (goal.trim(), Some(d))
            }
            None => (whole, None),
        };
        let (left, at_most, right) = if let Some((l, r)) = t.split_once("<=") {
            (l, true, r)
        } else if let Some((l, r)) = t.split_once(">=") {
            (l, false, r)
        } else if let Some((l, r)) = t.split_once('<') {
            (l, true, r)
        } else if let Some((l, r)) = t.split_once('>') {
            (l, false, r)
        } else {
            return Err(syntax());
        };
        let left = left.trim();
        let (prefix, figure) = match left.rsplit_once('.') {
            Some((p, f)) => (Some(p.trim()), f.trim()),
            None => (None, left),
        };
        if figure.is_empty() || right.trim().is_empty() {
            return Err(syntax());
        }
        let is_stream = STREAM_GOALS.contains(&figure);
        let name = STREAM_GOALS
            .iter()
            .chain(GROUP_GOALS)
            .find(|n| **n == figure)
            .and_then(|n| Figure::from_name(n))
            .ok_or_else(|| GoalError::Figure {
                goal: text.to_string(),
                figure: figure.to_string(),
                allowed: ALLOWED,
            })?;
        let value_err = |reason: String| GoalError::Value {
            goal: text.to_string(),
            reason,
        };
        let right = right.trim();
        let bound = match name {
            Figure::WaitMean | Figure::WaitP50 | Figure::WaitP90 | Figure::WaitP99 => {
                units::parse_duration(right).map_err(|e| value_err(e.to_string()))?
            }
            Figure::AttemptsPerCall => right
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite() && *x >= 1.0)
                .ok_or_else(|| value_err(format!("'{right}' is not a number of attempts >= 1")))?,
            _ => units::parse_share(right).map_err(|e| value_err(e.to_string()))?,
        };
        let targets: Vec<FigureId> = if is_stream {
            let streams: Vec<usize> = match prefix {
                Some(p) => vec![model.stream_index(p).ok_or_else(|| GoalError::Name {
                    goal: text.to_string(),
                    what: "stream",
                    name: p.to_string(),
                })?],
                None => (0..model.streams.len()).collect(),
            };
            streams
                .into_iter()
                .filter(|&s| stats::stream_figures(model, s).contains(&name))
                .map(|s| FigureId {
                    scope: Scope::Stream(s),
                    figure: name,
                })
                .collect()
        } else {
            let g = match prefix {
                Some(p) => model.group_index(p).ok_or_else(|| GoalError::Name {
                    goal: text.to_string(),
                    what: "group",
                    name: p.to_string(),
                })?,
                None => group,
            };
            vec![FigureId {
                scope: Scope::Group(g),
                figure: name,
            }]
        };
        if targets.is_empty() {
            return Err(GoalError::NotReported(text.to_string()));
        }
        Ok(Goal {
            text: text.trim().to_string(),
            figure: name,
            targets,
            at_most,
            bound,
            days,
        })
    }

    /// The unit of the estimate a verdict is judged on: the figure's, or a
    /// share for a goal on the share of days.
    pub fn judged_unit(&self) -> stats::Unit {
        match self.days {
            Some(_) => stats::Unit::Share,
            None => self.figure.unit(),
        }
    }

    /// The bound a verdict is judged against, in [`Goal::judged_unit`]: the
    /// figure's bound, or the share of days.
    pub fn judged_bound(&self) -> f64 {
        self.days.unwrap_or(self.bound)
    }

    /// Whether the judged estimate must stay at most the judged bound (a
    /// share of days must be at least its bound).
    pub fn judged_at_most(&self) -> bool {
        self.days.is_none() && self.at_most
    }

    /// Whether the figure falls as servers are added (blocking, waits,
    /// occupancy) rather than rises (service level).
    fn falls_with_servers(&self) -> bool {
        self.figure.falls_with_servers()
    }

    /// Whether the goal is met by adding servers (a lower bound on the size)
    /// rather than by removing them (an upper bound, like a minimum occupancy).
    pub fn wants_more_servers(&self) -> bool {
        self.at_most == self.falls_with_servers()
    }

    /// The verdict on one estimate whose interval is already at the
    /// confidence of one of the repeated looks (see [`look_level`]).
    pub fn judge(&self, e: &Estimate) -> Verdict {
        if e.replications < 2 || !e.low.is_finite() || !e.high.is_finite() {
            return Verdict::Undecided;
        }
        let (lo, hi, bound) = (e.low, e.high, self.judged_bound());
        let (good, bad) = if self.judged_at_most() {
            (hi <= bound, lo > bound)
        } else {
            (lo >= bound, hi < bound)
        };
        if good {
            Verdict::Holds
        } else if bad {
            Verdict::Fails
        } else {
            Verdict::Undecided
        }
    }

    /// The verdict over every target figure of an outcome, each judged on
    /// its interval at the Bonferroni level of one of `looks` looks: holds
    /// if all hold, fails if any fails. Also returns the worst target's
    /// estimate (at that level) and its index in the layout.
    pub fn judge_outcome(&self, o: &RunResult, looks: u32) -> (Verdict, Estimate) {
        let (v, e, _) = self.judge_targets(o, looks);
        (v, e)
    }

    /// [`Goal::judge_outcome`], also naming the target whose estimate is the
    /// worst (the one that decides the verdict). A goal on the share of
    /// days is judged on that share ([`Goal::period_share_at`], exact
    /// interval at the look's level), which covers every target at once:
    /// it names the target only when there is one.
    pub fn judge_targets(
        &self,
        o: &RunResult,
        looks: u32,
    ) -> (Verdict, Estimate, Option<FigureId>) {
        if self.days.is_some() {
            let share = self.period_share_at(o, look_level(looks));
            let deciding = match self.targets.as_slice() {
                [one] => Some(*one),
                _ => None,
            };
            return (self.judge(&share), share, deciding);
        }
        let mut verdict = Verdict::Holds;
        let mut worst: Option<Estimate> = None;
        let mut deciding: Option<FigureId> = None;
        for f in &self.targets {
            let Some(i) = o.index_of(f.scope, f.figure) else {
                continue;
            };
            let e = o.estimate_at(i, look_level(looks));
            let v = self.judge(&e);
            let rank = |v: Verdict| match v {
                Verdict::Holds => 0,
                Verdict::Undecided => 1,
                Verdict::Fails => 2,
            };
            let worse = match worst {
                None => true,
                Some(w) => {
                    rank(v) > rank(verdict)
                        || (rank(v) == rank(verdict)
                            && if self.at_most {
                                e.mean > w.mean
                            } else {
                                e.mean < w.mean
                            })
                }
            };
            if worse {
                worst = Some(e);
                deciding = Some(*f);
            }
            if rank(v) > rank(verdict) {
                verdict = v;
            }
        }
        let worst = worst.unwrap_or(Estimate::UNDEFINED);
        (verdict, worst, deciding)
    }
}

impl Goal {
    /// The per-period view: the share of replications (periods of the
    /// measured length, say one half hour) in which the goal held for every
    /// target figure, each judged on that replication's own value, with its
    /// exact 95% (Clopper-Pearson) interval. It answers "how often does a
    /// period miss the goal", a different question from the long-run figure
    /// the verdict is about, unless the goal is on the share of days
    /// ([`Goal::days`]). Replications where a target is undefined (no
    /// call resolved) are left out.
    pub fn period_share(&self, o: &RunResult) -> Estimate {
        self.period_share_at(o, stats::LEVEL)
    }

    /// [`Goal::period_share`] with its exact interval at `level`.
    pub fn period_share_at(&self, o: &RunResult, level: f64) -> Estimate {
        let idx: Vec<usize> = self
            .targets
            .iter()
            .filter_map(|f| o.index_of(f.scope, f.figure))
            .collect();
        let (mut held, mut n) = (0u64, 0u64);
        for rep in &o.per_replication {
            let values: Vec<f64> = idx.iter().map(|&i| rep[i].own()).collect();
            if idx.is_empty() || values.iter().any(|v| v.is_nan()) {
                continue;
            }
            n += 1;
            let ok = values.iter().all(|&v| {
                if self.at_most {
                    v <= self.bound
                } else {
                    v >= self.bound
                }
            });
            held += u64::from(ok);
        }
        if n == 0 {
            return Estimate::UNDEFINED;
        }
        let (low, high) = stats::clopper_pearson(held as f64, n as f64, level);
        Estimate::between(held as f64 / n as f64, low, high, n)
    }
}

/// The confidence of each verdict when a size may be looked at `looks`
/// times: the Bonferroni level 1 - 0.05 / `looks`. A size is looked at
/// again each time replications are added while a goal is undecided, and
/// each look is a chance of a wrong verdict, so the chance of any wrong
/// verdict over all looks stays at most 5%.
pub fn look_level(looks: u32) -> f64 {
    1.0 - (1.0 - stats::LEVEL) / f64::from(looks.max(1))
}

/// The result at one size.
#[derive(Debug, Clone)]
pub struct Evaluation {
    /// Servers on the sized group.
    pub servers: u32,
    /// The run at that size.
    pub outcome: RunResult,
    /// Per goal: the verdict and the deciding estimate.
    pub goals: Vec<(Verdict, Estimate)>,
    /// Per goal, the share of replications (periods) in which it held
    /// ([`Goal::period_share`]).
    pub periods: Vec<Estimate>,
    /// Per goal, the target figure whose estimate decides it (the worst).
    pub deciding: Vec<Option<FigureId>>,
}

impl Evaluation {
    /// The combined verdict of every goal.
    pub fn verdict(&self) -> Verdict {
        if self.goals.iter().any(|g| g.0 == Verdict::Fails) {
            Verdict::Fails
        } else if self.goals.iter().any(|g| g.0 == Verdict::Undecided) {
            Verdict::Undecided
        } else {
            Verdict::Holds
        }
    }
}

/// What sizing found.
#[derive(Debug, Clone)]
pub struct SizeResult {
    /// The sized group.
    pub group: usize,
    /// The goals.
    pub goals: Vec<Goal>,
    /// The fewest servers meeting every goal, if any size up to the limit does.
    pub servers: Option<u32>,
    /// The evaluation at the answer.
    pub at_answer: Option<Evaluation>,
    /// The evaluation at one server fewer (showing a goal failing there).
    pub one_fewer: Option<Evaluation>,
    /// The closed-form answer, when formulas cover every goal.
    pub formula_servers: Option<u32>,
    /// Every size tried: (servers, replications, verdict).
    pub tried: Vec<(u32, u64, Verdict)>,
    /// Every size evaluated, fewest servers first: per goal, the deciding
    /// estimate with the interval its verdict was judged on (for the chart).
    pub by_size: Vec<(u32, Vec<Estimate>)>,
    /// Confidence of each verdict: 1 - 0.05 / looks (Bonferroni).
    pub looks: u32,
    /// One server fewer could not be decided within the replication cap:
    /// the answer is conservative.
    pub uncertain: bool,
    /// The largest size searched.
    pub limit: u32,
    /// Seconds taken.
    pub wall_s: f64,
    /// Interrupted: the search did not finish.
    pub partial: bool,
}

/// How to search.
#[derive(Debug, Clone)]
pub struct SizeOptions {
    /// Replications at each size to begin with (or a precision goal).
    pub replications: Replications,
    /// Most replications at one size while a goal is undecided.
    pub max_replications: u32,
}

impl SizeOptions {
    /// Start each size with `replications`; add replications while a goal
    /// is undecided up to `decide_within` (at least 2), or by default to
    /// [`default_cap`] of the starting count (a fixed count, or a precision
    /// goal's most).
    pub fn new(
        model: &Model,
        goals: &[Goal],
        replications: Replications,
        decide_within: Option<u32>,
    ) -> SizeOptions {
        let max_replications = decide_within.unwrap_or_else(|| {
            default_cap(
                model,
                goals,
                super::work::planned_replications(&replications),
            )
        });
        SizeOptions {
            replications,
            max_replications,
        }
    }
}

/// Sizing probes several sizes, each up to its cap of replications: its
/// work is taken as this many runs of the starting plan at the file's size
/// (probes of the galloping search and the bisection, most decided on
/// their first batch).
pub const WORK_FACTOR: f64 = 8.0;

/// The expected work of sizing `model` starting from `plan` on `cores`
/// worker threads: [`WORK_FACTOR`] runs of the plan
/// ([`work::estimate_on`](super::work::estimate_on)).
pub fn work_estimate(
    model: &Model,
    plan: &Replications,
    cores: usize,
) -> super::work::WorkEstimate {
    super::work::estimate_on(model, plan, cores).times(WORK_FACTOR)
}

/// Most replications the default decision cap asks for at one size.
pub const DEFAULT_CAP_MAX: u32 = 20_000;
/// Engine events the default decision cap may spend at one size (about 15
/// seconds of one core at the engine's measured 4 million events per
/// second; `docs/robustness.md`, "The work guard").
pub const DEFAULT_CAP_EVENTS: f64 = 6.0e7;

/// Engine events the default decision cap spends at one size on ordinary
/// goals (about 2 seconds of one core): cheap enough to decide most cases
/// instead of hedging, a bound on the work where a goal sits on its bound.
pub const DEFAULT_CAP_BASE_EVENTS: f64 = 1.0e7;

/// The default `--decide-within`: replications at one size while a goal is
/// undecided. As many as [`DEFAULT_CAP_BASE_EVENTS`] of engine work buy (at
/// least 10 times the starting count), raised for strict goals on shares of calls to what it takes to
/// show the goal with no event observed: a share bounded by b with zero
/// events in m calls needs m > ln(2K / 0.05) / b at the Bonferroni level
/// of K looks (the Clopper-Pearson bound for zero events is
/// 1 - (alpha/2)^(1/m), about ln(2/alpha) / m), and the cap asks for twice
/// that. Bounded by [`DEFAULT_CAP_MAX`] and by [`DEFAULT_CAP_EVENTS`] of
/// engine work (the starting count is always allowed).
pub fn default_cap(model: &Model, goals: &[Goal], start: u32) -> u32 {
    let per_rep = super::work::events_per_replication(model).max(1.0);
    let affordable = (DEFAULT_CAP_BASE_EVENTS / per_rep)
        .floor()
        .min(f64::from(DEFAULT_CAP_MAX)) as u32;
    let base = start.saturating_mul(10).max(affordable).max(start);
    let length = model.plan.length_s;
    let mut wanted = f64::from(base);
    let looks = 1.0
        + (DEFAULT_CAP_MAX as f64 / f64::from(start.max(1)))
            .log2()
            .ceil();
    for g in goals.iter().filter(|g| g.figure.is_call_share()) {
        // The share whose rare events decide: failures below an upper bound
        // (loss <= b), successes missing for a lower bound (service level >= b).
        let rare = if g.at_most { g.bound } else { 1.0 - g.bound };
        if !(rare > 0.0) {
            continue;
        }
        for f in &g.targets {
            let Scope::Stream(s) = f.scope else { continue };
            let calls = model.streams[s]
                .arrivals
                .mean_rate(length)
                .map(|r| r * length);
            if let Some(c) = calls.filter(|c| *c > 0.0) {
                let m = (2.0 * looks / (1.0 - stats::LEVEL)).ln() / rare;
                wanted = wanted.max(2.0 * m / c);
            }
        }
    }
    let by_work = (DEFAULT_CAP_EVENTS / per_rep).floor();
    (wanted.min(by_work).min(f64::from(DEFAULT_CAP_MAX)).ceil() as u32)
        .max(base.min(by_work as u32))
        .max(start)
}

/// The fewest servers for which the formula column meets every goal, when
/// every goal's figures have a formula at every size tried.
pub fn formula_answer(model: &Model, group: usize, goals: &[Goal], limit: u32) -> Option<u32> {
    let meets = |n: u32| -> Option<bool> {
        let m = model.with_servers(group, n).ok()?;
        let col = formula_column(&m);
        let mut all = true;
        for g in goals {
            for f in &g.targets {
                let v = col.get(f)?.value;
                let ok = if g.at_most {
                    v <= g.bound
                } else {
                    v >= g.bound
                };
                all &= ok;
            }
        }
        Some(all)
    };
    // The formula column gives long-run figures; the share of days that
    // meet a bound is not one of them.
    if goals
        .iter()
        .any(|g| !g.wants_more_servers() || g.days.is_some())
    {
        return None;
    }
    // Monotone in servers: bisection on [1, limit]. The formulas must apply
    // at the limit; below it a size where one does not apply (an unstable
    // queue has no Erlang C value) does not meet the goals.
    if !meets(limit)? {
        return None;
    }
    let (mut lo, mut hi) = (0u32, limit); // meets(lo) false (or lo = 0), meets(hi) true
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if meets(mid) == Some(true) {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Some(hi)
}

/// Sizing's question at one size, asked of a simulation by [`size`] and of
/// a stand-in in tests: the search ([`search`]) knows nothing else of the
/// model.
pub trait Oracle {
    /// At `servers` servers, the verdict on the goals that bound the size
    /// from below (those met by adding servers): `Holds` when every one
    /// holds, else `Fails` or `Undecided` (both count as not met, so the
    /// answer is conservative). `None`: stopped on request.
    fn judge(&mut self, servers: u32) -> Option<Verdict>;
}

/// Where a [`search`] ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Bracket {
    /// The fewest servers found to meet the goals: a size judged `Holds`
    /// whose size one fewer was judged not to (or is 0). None when no size
    /// up to the limit holds, or when stopped.
    pub servers: Option<u32>,
    /// Stopped before the search finished.
    pub partial: bool,
    /// Every size asked, in the order asked, with its verdict (each size
    /// is asked once).
    pub asked: Vec<(u32, Verdict)>,
}

/// The search for the fewest servers in `1..=limit` meeting the goals:
/// galloping from `start` (clamped to the range) in steps of 1, 2, 4, ...
/// to bracket the answer, then bisection between the largest size known
/// not to meet them (`lo`, 0 when none is) and the smallest known to meet
/// them (`hi`).
pub fn search(oracle: &mut impl Oracle, start: u32, limit: u32) -> Bracket {
    let mut asked: Vec<(u32, Verdict)> = Vec::new();
    let mut meets = |n: u32| -> Option<bool> {
        let v = match asked.iter().find(|a| a.0 == n) {
            Some(&(_, v)) => v,
            None => {
                let v = oracle.judge(n)?;
                asked.push((n, v));
                v
            }
        };
        Some(v == Verdict::Holds)
    };
    let found = bisect(&mut meets, start.clamp(1, limit), limit);
    Bracket {
        servers: found.flatten(),
        partial: found.is_none(),
        asked,
    }
}

/// [`gallop`], then bisection down to neighbours. `None`: stopped.
fn bisect(
    meets: &mut impl FnMut(u32) -> Option<bool>,
    start: u32,
    limit: u32,
) -> Option<Option<u32>> {
    let (mut lo, mut hi) = gallop(meets, start, limit)?;
    while let Some(h) = hi.filter(|&h| h > lo + 1) {
        let mid = lo + (h - lo) / 2;
        if meets(mid)? {
            hi = Some(mid);
        } else {
            lo = mid;
        }
    }
    Some(hi)
}

/// Steps of 1, 2, 4, ... from `start`: down while the goals are met, up
/// (to `limit`) while they are not. Returns `(lo, hi)`: `lo` 0 or a size
/// not meeting them, `hi` the smallest size seen meeting them (None when
/// even `limit` does not). `None`: stopped.
fn gallop(
    meets: &mut impl FnMut(u32) -> Option<bool>,
    start: u32,
    limit: u32,
) -> Option<(u32, Option<u32>)> {
    let mut step = 1u32;
    if meets(start)? {
        let mut hi = start;
        while hi > 1 {
            let cand = hi.saturating_sub(step).max(1);
            if !meets(cand)? {
                return Some((cand, Some(hi)));
            }
            hi = cand;
            step = step.saturating_mul(2);
        }
        Some((0, Some(hi)))
    } else {
        let mut lo = start;
        while lo < limit {
            let cand = lo.saturating_add(step).min(limit);
            if meets(cand)? {
                return Some((lo, Some(cand)));
            }
            lo = cand;
            step = step.saturating_mul(2);
        }
        Some((lo, None))
    }
}

/// The [`Oracle`] of [`size`]: each size simulated (the same seeds at every
/// size), replications added while a goal is undecided, up to the cap.
struct Simulated<'a> {
    model: &'a Model,
    group: usize,
    goals: &'a [Goal],
    how: &'a SizeOptions,
    runner: Runner<'a>,
    looks: u32,
    /// Every evaluation, by size.
    evaluations: BTreeMap<u32, Evaluation>,
    /// Every size evaluated: (servers, replications, verdict), in order.
    tried: Vec<(u32, u64, Verdict)>,
}

impl Simulated<'_> {
    /// The goals judged at `n` servers; more replications while a goal is
    /// undecided (a goal that already fails decides the size on its own).
    /// `None`: stopped.
    fn evaluate(&mut self, n: u32) -> Option<Evaluation> {
        let m = self
            .model
            .with_servers(self.group, n)
            .expect("sizes probed lie in 1..=limit, checked by size");
        let layout = stats::layout(&m);
        let mut acc = Accumulated::default();
        let (_, completion) = self.runner.run_plan(&m, &self.how.replications, &mut acc);
        if completion.stopped() {
            return None;
        }
        let cap = u64::from(self.how.max_replications);
        loop {
            let e = self.judged(&m, n, &acc);
            let have = acc.per_replication.len() as u64;
            if e.verdict() != Verdict::Undecided || have >= cap {
                self.tried.push((n, have, e.verdict()));
                return Some(e);
            }
            let next = (have * 2).min(cap);
            if self
                .runner
                .extend(&m, &layout, &mut acc, next, next)
                .stopped()
            {
                return None;
            }
        }
    }

    /// Every goal judged on the replications so far.
    fn judged(&self, m: &Model, n: u32, acc: &Accumulated) -> Evaluation {
        let o = outcome_of(m, acc.clone(), 0.0, None, Completion::Complete);
        let judged: Vec<(Verdict, Estimate, Option<FigureId>)> = self
            .goals
            .iter()
            .map(|g| g.judge_targets(&o, self.looks))
            .collect();
        Evaluation {
            servers: n,
            goals: judged.iter().map(|j| (j.0, j.1)).collect(),
            deciding: judged.iter().map(|j| j.2).collect(),
            periods: self.goals.iter().map(|g| g.period_share(&o)).collect(),
            outcome: o,
        }
    }
}

impl Oracle for Simulated<'_> {
    fn judge(&mut self, servers: u32) -> Option<Verdict> {
        let e = self.evaluate(servers)?;
        let lower = e
            .goals
            .iter()
            .zip(self.goals)
            .filter(|(_, g)| g.wants_more_servers())
            .map(|((v, _), _)| *v);
        let verdict = combined(lower);
        self.evaluations.insert(servers, e);
        Some(verdict)
    }
}

/// Holds if every verdict holds, fails if any fails, else undecided.
fn combined(verdicts: impl Iterator<Item = Verdict>) -> Verdict {
    let mut all = Verdict::Holds;
    for v in verdicts {
        match v {
            Verdict::Fails => return Verdict::Fails,
            Verdict::Undecided => all = Verdict::Undecided,
            Verdict::Holds => {}
        }
    }
    all
}

/// The largest size sizing searches: four times the offered traffic plus
/// 100, or four times the file's size, within the scenario's limit.
pub fn size_limit(model: &Model, group: usize) -> u32 {
    let offered: f64 = model
        .streams
        .iter()
        .map(|s| s.offered_traffic(model.plan.length_s).unwrap_or(0.0) * f64::from(s.units))
        .sum();
    let current = model.groups[group].servers;
    ((offered * 4.0 + 100.0) as u32)
        .max(current.saturating_mul(4))
        .min(crate::scenario::MAX_GROUP_SERVERS as u32)
}

/// Looks at one size: the first, then one per doubling up to the cap.
fn looks_of(how: &SizeOptions) -> u32 {
    let first_count = match how.replications {
        Replications::Fixed(n) => n,
        Replications::Precision { .. } => super::PRECISION_FIRST_BATCH,
    }
    .max(2);
    1 + (f64::from(how.max_replications.max(first_count)) / f64::from(first_count))
        .log2()
        .ceil() as u32
}

/// Find the fewest servers on `group` meeting every goal: [`search`] over
/// simulated sizes from the formula's answer (or the file's size), then
/// the check of the goals that bound the size from above.
pub fn size(
    model: &Model,
    group: usize,
    goals: Vec<Goal>,
    how: &SizeOptions,
    opts: &RunOptions,
) -> Result<SizeResult, ExperimentError> {
    let started = Instant::now();
    let runner = Runner::new(opts)?;
    let limit = size_limit(model, group);
    // The group exists and every size probed lies in 1..=limit, within the
    // scenario's limit: after this check no probe's model can fail.
    model.with_servers(group, limit)?;
    let formula_servers = formula_answer(model, group, &goals, limit);
    let looks = looks_of(how);
    let mut oracle = Simulated {
        model,
        group,
        goals: &goals,
        how,
        runner,
        looks,
        evaluations: BTreeMap::new(),
        tried: Vec::new(),
    };
    let start = formula_servers.unwrap_or(model.groups[group].servers);
    let bracket = search(&mut oracle, start, limit);
    let Simulated {
        evaluations, tried, ..
    } = oracle;
    // The answer must also meet the goals that bound the size from above.
    let servers = bracket.servers.filter(|s| {
        evaluations[s]
            .goals
            .iter()
            .zip(&goals)
            .all(|((v, _), g)| g.wants_more_servers() || *v == Verdict::Holds)
    });
    let at_answer = servers.and_then(|s| evaluations.get(&s).cloned());
    let one_fewer = servers.and_then(|s| {
        if s > 1 {
            evaluations.get(&(s - 1)).cloned()
        } else {
            None
        }
    });
    let uncertain = one_fewer
        .as_ref()
        .is_some_and(|e| e.verdict() == Verdict::Undecided);
    let by_size = (evaluations.iter())
        .map(|(&n, e)| (n, e.goals.iter().map(|g| g.1).collect()))
        .collect();
    Ok(SizeResult {
        group,
        goals,
        servers,
        at_answer,
        one_fewer,
        formula_servers,
        tried,
        by_size,
        uncertain,
        looks,
        limit,
        wall_s: started.elapsed().as_secs_f64(),
        partial: bracket.partial,
    })
}

/// The paired (common random numbers) difference b - a of figure `index`
/// across replications both outcomes share, at 95%
/// ([`stats::paired_difference`]).
pub fn paired_difference(a: &RunResult, b: &RunResult, index_a: usize, index_b: usize) -> Estimate {
    let n = a.per_replication.len().min(b.per_replication.len());
    let (mut ca, mut cb) = (a.column(index_a), b.column(index_b));
    ca.truncate(n);
    cb.truncate(n);
    stats::paired_difference(a.layout[index_a].figure, &ca, &cb, stats::LEVEL)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::ops::Range;

    /// A stand-in for simulation: the goals hold from `answer` servers on,
    /// sizes in `undecided` cannot be decided, and after `stop_after`
    /// questions it is stopped.
    struct Fake {
        answer: u32,
        undecided: Range<u32>,
        stop_after: usize,
        asked: usize,
    }

    impl Fake {
        fn holding_from(answer: u32) -> Fake {
            Fake {
                answer,
                undecided: 0..0,
                stop_after: usize::MAX,
                asked: 0,
            }
        }
    }

    impl Oracle for Fake {
        fn judge(&mut self, servers: u32) -> Option<Verdict> {
            if self.asked == self.stop_after {
                return None;
            }
            self.asked += 1;
            Some(if self.undecided.contains(&servers) {
                Verdict::Undecided
            } else if servers >= self.answer {
                Verdict::Holds
            } else {
                Verdict::Fails
            })
        }
    }

    fn verdict_at(b: &Bracket, n: u32) -> Option<Verdict> {
        b.asked.iter().find(|a| a.0 == n).map(|a| a.1)
    }

    /// Questions a search may ask: a gallop and a bisection of at most
    /// one per bit of the limit each, and the first.
    fn most_questions(limit: u32) -> usize {
        2 * (32 - limit.leading_zeros()) as usize + 2
    }

    #[test]
    fn the_search_brackets_the_answer_from_above_and_below() {
        let limit = 400;
        for answer in [1, 2, 3, 38, 150, 399, 400] {
            for start in [0, 1, 2, 5, 37, 38, 39, 200, 400, 1000] {
                let b = search(&mut Fake::holding_from(answer), start, limit);
                assert_eq!(b.servers, Some(answer), "answer {answer}, start {start}");
                assert!(!b.partial);
                assert_eq!(b.asked[0].0, start.clamp(1, limit), "starts at the start");
                // The size one fewer was asked (it shows the goal failing).
                if answer > 1 {
                    assert_eq!(verdict_at(&b, answer - 1), Some(Verdict::Fails));
                }
                assert!(b.asked.len() <= most_questions(limit), "{:?}", b.asked);
            }
        }
    }

    #[test]
    fn no_size_up_to_the_limit_is_no_answer() {
        let b = search(&mut Fake::holding_from(101), 10, 100);
        assert_eq!(b.servers, None);
        assert!(!b.partial);
        assert_eq!(verdict_at(&b, 100), Some(Verdict::Fails));
    }

    #[test]
    fn an_undecided_size_counts_as_not_met() {
        // Sizes 36 to 39 cannot be decided: the answer is the first size
        // that holds, and the size one fewer is the undecided 39 (which
        // `size` reports as an uncertain answer).
        let mut fake = Fake {
            undecided: 36..40,
            ..Fake::holding_from(40)
        };
        let b = search(&mut fake, 10, 400);
        assert_eq!(b.servers, Some(40));
        assert_eq!(verdict_at(&b, 39), Some(Verdict::Undecided));
        // Undecided where the goals would hold: the answer moves up past
        // them, conservatively.
        let mut fake = Fake {
            undecided: 40..45,
            ..Fake::holding_from(40)
        };
        assert_eq!(search(&mut fake, 60, 400).servers, Some(45));
        // Undecided up to the limit: no answer.
        let mut fake = Fake {
            undecided: 30..401,
            ..Fake::holding_from(40)
        };
        assert_eq!(search(&mut fake, 60, 400).servers, None);
    }

    #[test]
    fn a_stopped_search_has_no_answer() {
        for stop_after in 0..6 {
            let mut fake = Fake {
                stop_after,
                ..Fake::holding_from(77)
            };
            let b = search(&mut fake, 10, 400);
            assert!(b.partial);
            assert_eq!(b.servers, None);
            assert_eq!(b.asked.len(), stop_after);
        }
    }

    #[test]
    fn verdicts_combine_with_the_worst() {
        use Verdict::*;
        assert_eq!(combined([Holds, Holds].into_iter()), Holds);
        assert_eq!(combined([Holds, Undecided].into_iter()), Undecided);
        assert_eq!(combined([Undecided, Fails, Holds].into_iter()), Fails);
        assert_eq!(combined(std::iter::empty()), Holds);
    }

    /// Any verdicts at all, drawn per size from a seed (an oracle whose
    /// verdicts need not be monotone in the servers, as a noisy one).
    struct Arbitrary(u64);

    impl Arbitrary {
        fn verdict(&self, n: u32) -> Verdict {
            let h = (self.0 ^ u64::from(n)).wrapping_mul(0x9e37_79b9_7f4a_7c15);
            match (h >> 61) % 3 {
                0 => Verdict::Holds,
                1 => Verdict::Fails,
                _ => Verdict::Undecided,
            }
        }
    }

    impl Oracle for Arbitrary {
        fn judge(&mut self, servers: u32) -> Option<Verdict> {
            Some(self.verdict(servers))
        }
    }

    proptest::proptest! {
        /// With any verdicts, the answer is a boundary: it holds, and one
        /// server fewer was asked and does not hold (or is 0); with none,
        /// the limit was asked and does not hold. Every size asked lies in
        /// 1..=limit and is asked once.
        #[test]
        fn the_answer_is_a_boundary_whatever_the_verdicts(
            seed in proptest::prelude::any::<u64>(),
            limit in 1u32..2000,
            start in 0u32..3000,
        ) {
            let oracle = &mut Arbitrary(seed);
            let b = search(oracle, start, limit);
            proptest::prop_assert!(!b.partial);
            for (i, &(n, v)) in b.asked.iter().enumerate() {
                proptest::prop_assert!((1..=limit).contains(&n));
                proptest::prop_assert_eq!(v, oracle.verdict(n));
                proptest::prop_assert!(b.asked[..i].iter().all(|a| a.0 != n), "asked twice");
            }
            match b.servers {
                Some(s) => {
                    proptest::prop_assert_eq!(verdict_at(&b, s), Some(Verdict::Holds));
                    if s > 1 {
                        let fewer = verdict_at(&b, s - 1);
                        proptest::prop_assert!(fewer.is_some() && fewer != Some(Verdict::Holds));
                    }
                }
                None => {
                    let at_limit = verdict_at(&b, limit);
                    proptest::prop_assert!(at_limit.is_some() && at_limit != Some(Verdict::Holds));
                }
            }
        }

        /// Goals that hold from some size on (with an undecided band below
        /// it) are answered exactly, in few questions.
        #[test]
        fn a_monotone_answer_is_found_exactly(
            answer in 1u32..2100,
            band in 0u32..50,
            limit in 1u32..2000,
            start in 0u32..3000,
        ) {
            let mut fake = Fake {
                undecided: answer.saturating_sub(band)..answer,
                ..Fake::holding_from(answer)
            };
            let b = search(&mut fake, start, limit);
            let want = (answer <= limit).then_some(answer);
            proptest::prop_assert_eq!(b.servers, want);
            proptest::prop_assert!(b.asked.len() <= most_questions(limit));
        }
    }
}
