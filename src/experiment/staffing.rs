//! Staffing per interval by simulation: the fewest servers of one group in
//! each reporting interval such that every interval meets every goal, with
//! what each interval leaves to the next (callers still waiting, calls in
//! progress) simulated, not assumed away.
//!
//! # Method
//!
//! In the manner of the simulation-based iterative staffing algorithm
//! (Feldman, Mandelbaum, Massey and Whitt, "Staffing of time-varying queues
//! to achieve time-stable performance", Management Science 54, 2008): the
//! whole day is simulated with a staffing function, every interval is
//! judged, and the staffing of every interval is adjusted at once before
//! the next simulation; every simulation uses the same seeds (common random
//! numbers), so two staffings are compared on the same callers. Here the
//! adjustment is by the goals' verdicts rather than by a delay-probability
//! quantile, so that any per-interval goal (service level, mean wait,
//! abandonment, loss, occupancy) can be staffed for:
//!
//! 1. Start from the given staffing (the stationary formula's requirement
//!    of each interval, where one applies).
//! 2. Simulate. Every interval whose goals do not all hold (a goal that
//!    fails or whose interval straddles its bound) gets one server more,
//!    and is marked: one fewer is known not to do. Repeat until every
//!    interval holds.
//! 3. Then try one server fewer in every other unmarked interval at once
//!    (the even ones, then the odd ones, in turn: no two cuts are
//!    neighbours, so a shortfall in the interval after a cut is that cut's
//!    doing), and keep the cut where the interval and the next one still
//!    hold in that simulation; the others are marked. Go back to 2 with the
//!    cuts kept (which confirms them). Stop when no unmarked interval is
//!    left.
//!
//! Raising an interval never hurts another (more servers answer sooner,
//! leaving less to the next interval), so step 2 ends; each interval is cut
//! at most until it is marked, so step 3 ends. The answer is the last
//! staffing under which every interval held. Each interval's verdict is at
//! the run's 95% level on its own (no correction for the number of
//! intervals or rounds): "holds" means its whole interval is on the right
//! side of the bound.

use super::size::{Goal, Verdict};
use super::{ExperimentError, RunOptions, RunResult};
use crate::formulas::delay_goals::DelayGoals;
use crate::scenario::{Model, Replications};
use crate::shifts;
use crate::stats::{self, Figure, FigureId, Scope};
use crate::textbook::{self, IntervalReference};

/// The formulas' per-interval requirements of group `group` for the goals
/// they can express (a service level, a mean wait, an abandonment share on
/// a queue; a loss share on a loss group); see
/// [`textbook::interval_references`].
pub fn references(model: &Model, group: usize, goals: &[Goal]) -> Vec<IntervalReference> {
    let answer_within = (model.streams.iter())
        .filter(|s| s.route.first() == Some(&(group as u32)))
        .find_map(|s| s.answer_within_s);
    let mut delay = DelayGoals::default();
    let mut loss = None;
    for g in goals {
        match (g.figure, g.at_most) {
            (Figure::ServiceLevel, false) => {
                delay.service_level = answer_within.map(|t| (t, g.bound));
            }
            (Figure::WaitMean, true) => delay.mean_wait_s = Some(g.bound),
            (Figure::Abandonment, true) => delay.abandonment = Some(g.bound),
            (Figure::Loss, true) => loss = Some(g.bound),
            _ => {}
        }
    }
    textbook::interval_references(model, group, &delay, loss)
}

/// Where the search starts: the stationary requirement of each interval,
/// or one more than its load where no formula covers the goals.
pub fn formula_start(references: &[IntervalReference]) -> Vec<u32> {
    references
        .iter()
        .map(|r| r.stationary.unwrap_or(r.load.ceil() as u32 + 1).max(1))
        .collect()
}

/// One simulation of the search: the servers per interval and how many
/// intervals did not hold.
#[derive(Debug, Clone, PartialEq)]
pub struct Round {
    /// Servers taking calls per interval.
    pub servers: Vec<u32>,
    /// Intervals whose goals did not all hold.
    pub short: usize,
}

/// What the search found.
#[derive(Debug, Clone)]
pub struct StaffingPlan {
    /// Servers taking calls per interval: the last staffing under which
    /// every interval held (the start when none did).
    pub servers: Vec<u32>,
    /// Whether every interval held under `servers`.
    pub met: bool,
    /// Per interval: one server fewer was seen not to do (so the answer is
    /// the fewest, at the simulation's precision, given the neighbours).
    pub settled: Vec<bool>,
    /// The run at `servers`.
    pub result: RunResult,
    /// Every simulation, in order.
    pub rounds: Vec<Round>,
    /// The run at the starting staffing (the formula's plan, as the
    /// simulator sees it).
    pub at_start: Option<RunResult>,
    /// Stopped on request, or after the most rounds, before the search ended.
    pub partial: bool,
}

/// Why a goal cannot be staffed per interval, after the goal's text.
pub const NOT_PER_INTERVAL: &str = "that figure is not reported per interval; per-interval goals are on loss, abandonment, wait_probability, wait_mean, service_level, occupancy and time_congestion";

/// The first of `goals` whose figure is not reported per interval
/// ([`NOT_PER_INTERVAL`]), if any.
pub fn not_per_interval<'a>(model: &Model, goals: &'a [Goal]) -> Option<&'a Goal> {
    goals
        .iter()
        .find(|g| interval_goals(model, std::slice::from_ref(g), 0).is_none())
}

/// The goals of interval `b`: each goal's targets moved to the interval
/// (a stream figure to the stream's interval figure, a group figure to the
/// group's); `None` when a goal's figure is not reported per interval.
pub fn interval_goals(model: &Model, goals: &[Goal], b: usize) -> Option<Vec<Goal>> {
    goals
        .iter()
        .map(|goal| {
            let targets: Vec<FigureId> = goal
                .targets
                .iter()
                .map(|t| {
                    let scope = match t.scope {
                        Scope::Stream(s) | Scope::StreamInterval(_, s) => {
                            Scope::StreamInterval(b, s)
                        }
                        Scope::Group(g) | Scope::GroupInterval(_, g) => Scope::GroupInterval(b, g),
                        Scope::Stage(..) => t.scope,
                    };
                    FigureId {
                        scope,
                        figure: t.figure,
                    }
                })
                .filter(|t| match t.scope {
                    Scope::StreamInterval(_, s) => {
                        stats::stream_interval_figures(model, s).contains(&t.figure)
                    }
                    Scope::Stage(..) => false,
                    _ => stats::GROUP_INTERVAL_FIGURES.contains(&t.figure),
                })
                .collect();
            (!targets.is_empty()).then(|| Goal {
                targets,
                ..goal.clone()
            })
        })
        .collect()
}

/// The verdict of every interval of a run: holds if every goal holds
/// there, fails if one fails, otherwise undecided.
pub fn interval_verdicts(model: &Model, goals: &[Goal], result: &RunResult) -> Vec<Verdict> {
    (0..model.plan.interval_count())
        .map(|b| {
            let Some(goals) = interval_goals(model, goals, b) else {
                return Verdict::Undecided;
            };
            let verdicts: Vec<Verdict> =
                goals.iter().map(|g| g.judge_targets(result, 1).0).collect();
            if verdicts.contains(&Verdict::Fails) {
                Verdict::Fails
            } else if verdicts.contains(&Verdict::Undecided) {
                Verdict::Undecided
            } else {
                Verdict::Holds
            }
        })
        .collect()
}

/// Staff group `group` of `model` per reporting interval for `goals` (see
/// the module's method), starting from `start` (one entry per interval),
/// with at most `max_rounds` simulations of `replications` each.
///
/// # Errors
///
/// A staffing the model cannot take (more servers than a group may have),
/// or worker threads that cannot start.
pub fn staff(
    model: &Model,
    group: usize,
    goals: &[Goal],
    start: &[u32],
    replications: Option<Replications>,
    opts: &RunOptions,
    max_rounds: u32,
) -> Result<StaffingPlan, ExperimentError> {
    let bins = start.len();
    let simulate = |servers: &[u32]| -> Result<(RunResult, Vec<Verdict>), ExperimentError> {
        let m = model.with_schedule(group, servers)?;
        let result = super::run(&m, replications.clone(), opts)?;
        let verdicts = interval_verdicts(&m, goals, &result);
        Ok((result, verdicts))
    };
    let mut servers = start.to_vec();
    let mut settled = vec![false; bins];
    let mut rounds = Vec::new();
    let mut best: Option<(Vec<u32>, RunResult)> = None;
    let mut last: Option<RunResult> = None;
    let mut at_start: Option<RunResult> = None;
    let mut partial = true;
    let mut parity = 0;
    while rounds.len() < max_rounds as usize {
        let (result, verdicts) = simulate(&servers)?;
        if at_start.is_none() {
            at_start = Some(result.clone());
        }
        let short: Vec<usize> = (0..bins)
            .filter(|&b| verdicts[b] != Verdict::Holds)
            .collect();
        rounds.push(Round {
            servers: servers.clone(),
            short: short.len(),
        });
        if result.partial {
            last = Some(result);
            break;
        }
        if !short.is_empty() {
            // Step 2: one more where an interval falls short.
            for &b in &short {
                servers[b] += 1;
                settled[b] = true;
            }
            last = Some(result);
            continue;
        }
        best = Some((servers.clone(), result));
        // Step 3: one fewer in every other unsettled interval at once (the
        // other parity when this one has none left).
        let open = |b: usize| !settled[b] && servers[b] > 0;
        if !(0..bins).any(open) {
            partial = false;
            break;
        }
        if !(0..bins).any(|b| b % 2 == parity && open(b)) {
            parity = 1 - parity;
        }
        let cuts: Vec<usize> = (0..bins).filter(|&b| b % 2 == parity && open(b)).collect();
        parity = 1 - parity;
        if rounds.len() >= max_rounds as usize {
            break;
        }
        let mut trial = servers.clone();
        for &b in &cuts {
            trial[b] -= 1;
        }
        let (result, verdicts) = simulate(&trial)?;
        rounds.push(Round {
            servers: trial.clone(),
            short: verdicts.iter().filter(|&&v| v != Verdict::Holds).count(),
        });
        if result.partial {
            break;
        }
        let holds = |b: usize| b >= bins || verdicts[b] == Verdict::Holds;
        let mut kept = 0;
        for &b in &cuts {
            if holds(b) && holds(b + 1) {
                servers[b] -= 1;
                kept += 1;
            } else {
                settled[b] = true;
            }
        }
        if kept == 0 {
            // Nothing cut: the staffing is the confirmed one; the other
            // parity is tried next.
            continue;
        }
    }
    Ok(match best {
        Some((servers, result)) => StaffingPlan {
            servers,
            met: true,
            settled,
            result,
            rounds,
            at_start,
            partial,
        },
        None => StaffingPlan {
            servers: rounds.last().map_or(start.to_vec(), |r| r.servers.clone()),
            met: false,
            settled,
            result: match last {
                Some(r) => r,
                None => simulate(start)?.0,
            },
            rounds,
            at_start,
            partial: true,
        },
    })
}

/// A shift plan for a staffing, and what it does in the simulator.
#[derive(Debug, Clone)]
pub struct ShiftPlan {
    /// The shifts (fewest paid agent-hours covering `required`).
    pub cover: shifts::Cover,
    /// Agents to schedule per interval: the staffing's servers taking
    /// calls with the group's shrinkage added back (what the shifts cover).
    pub required: Vec<u32>,
    /// Agents on duty per interval by the shifts (at least `required`).
    pub scheduled: Vec<u32>,
    /// Of them, taking calls (after shrinkage).
    pub present: Vec<u32>,
    /// The run with the shifts' agents, on the same seeds as the staffing.
    pub result: RunResult,
    /// Each interval's verdict under the shifts.
    pub verdicts: Vec<Verdict>,
}

/// Cover the staffing `servers` (taking calls, per reporting interval) of
/// group `group` with the group's allowed shift types, then simulate the
/// shifts' agents (the cover usually gives some intervals more than they
/// need; the figures show what that buys).
///
/// # Errors
///
/// The group has no shift types, an interval that needs agents is on duty
/// in no allowed shift (named by its clock time), the cover search fails,
/// or the run cannot be carried out.
pub fn shift_plan(
    model: &Model,
    group: usize,
    goals: &[Goal],
    servers: &[u32],
    replications: Option<Replications>,
    opts: &RunOptions,
) -> Result<ShiftPlan, ExperimentError> {
    let types = &model.groups[group].shift_types;
    let staffed = model.with_schedule(group, servers)?;
    let schedule = staffed.groups[group].schedule.clone();
    let required: Vec<u32> = schedule
        .as_ref()
        .map_or_else(|| servers.to_vec(), |s| s.scheduled.clone());
    let cover = shifts::cover(&required, types).map_err(|e| match e {
        shifts::CoverError::Uncovered { interval, needed } => {
            let at = |b: usize| {
                crate::units::format_time_of_day(
                    model.plan.clock_start_s.unwrap_or(0.0) + stats::interval_start(model, b),
                )
            };
            ExperimentError::Shifts(format!(
                "group \"{}\": no allowed shift type is on duty from {} to {}, which needs {needed} agents: allow a shift that covers it",
                model.groups[group].name,
                at(interval),
                at(interval + 1),
            ))
        }
        other => ExperimentError::Shifts(format!(
            "group \"{}\": {other}",
            model.groups[group].name
        )),
    })?;
    let scheduled = shifts::coverage(&cover.shifts, required.len());
    let shrinkage_at = |b: usize| schedule.as_ref().map_or(0.0, |s| s.shrinkage[b]);
    let present: Vec<u32> = (0..scheduled.len())
        .map(|b| crate::scenario::Schedule::present_of(scheduled[b], shrinkage_at(b)))
        .collect();
    let mut m = model.with_schedule(group, &present)?;
    if let Some(s) = m.groups[group].schedule.as_mut() {
        // The shifts put these on duty (with_schedule would write the
        // fewest that leave `present` taking calls).
        s.scheduled.clone_from(&scheduled);
    }
    let result = super::run(&m, replications, opts)?;
    let verdicts = interval_verdicts(&m, goals, &result);
    Ok(ShiftPlan {
        cover,
        required,
        scheduled,
        present,
        result,
        verdicts,
    })
}
