//! Sizing a delay system against a planner's goals: the fewest agents, or
//! the most traffic a number of agents serves, such that a service level,
//! a mean wait and an abandonment share all hold. Callers who never give up
//! are Erlang C (M/M/N); callers with exponential patience are Erlang A
//! (M/M/N+M, Palm 1943 / Garnett, Mandelbaum and Reiman 2002).
//!
//! Owns only the search; every figure comes from [`super::erlang_c`] and
//! [`super::erlang_a`]. Each figure is monotone in the agents (more agents:
//! shorter waits, fewer abandonments) and in the traffic (more traffic:
//! longer waits), so the searches bracket and bisect.

use super::erlang_a;
use super::erlang_b::MAX_FORMULA_SERVERS;
use super::erlang_c;
use super::error::{FormulaError, non_negative, open_share, positive};

/// What the planner asks of the queue. At least one goal must be given.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct DelayGoals {
    /// At least this share of all calls answered within this time:
    /// `(within_s, share)`.
    pub service_level: Option<(f64, f64)>,
    /// Mean wait of all calls at most this (s).
    pub mean_wait_s: Option<f64>,
    /// At most this share of calls abandon (needs a patience).
    pub abandonment: Option<f64>,
}

/// The figures of one queue, by Erlang C or Erlang A.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DelayFigures {
    /// Agents.
    pub agents: u32,
    /// Offered traffic (E).
    pub traffic: f64,
    /// Share of all calls answered within the goal's time (when a
    /// service-level goal is given).
    pub service_level: Option<f64>,
    /// Mean wait of all calls (s).
    pub mean_wait_s: f64,
    /// Probability of waiting.
    pub wait_probability: f64,
    /// Share of calls that abandon (0 without patience).
    pub abandonment: f64,
    /// Agent occupancy: carried traffic / agents.
    pub occupancy: f64,
}

impl DelayGoals {
    fn check(&self, patience_s: Option<f64>) -> Result<(), FormulaError> {
        if self.service_level.is_none() && self.mean_wait_s.is_none() && self.abandonment.is_none()
        {
            return Err(FormulaError::InvalidArgument {
                name: "goals",
                value: 0.0,
                expected: "at least one goal: a service level, a mean wait or an abandonment share",
            });
        }
        if let Some((within, share)) = self.service_level {
            non_negative("answer-within time (s)", within)?;
            open_share("service level target", share)?;
        }
        if let Some(w) = self.mean_wait_s {
            positive("mean wait goal (s)", w)?;
        }
        if let Some(a) = self.abandonment {
            open_share("abandonment goal", a)?;
            if patience_s.is_none() {
                return Err(FormulaError::InvalidArgument {
                    name: "abandonment goal",
                    value: a,
                    expected: "a mean patience: callers who never give up never abandon",
                });
            }
        }
        Ok(())
    }

    /// Whether `f` meets every goal.
    pub fn met_by(&self, f: &DelayFigures) -> bool {
        self.service_level
            .is_none_or(|(_, share)| f.service_level.is_some_and(|sl| sl >= share))
            && self.mean_wait_s.is_none_or(|w| f.mean_wait_s <= w)
            && self.abandonment.is_none_or(|a| f.abandonment <= a)
    }
}

/// The figures of `agents` serving `traffic` erlangs of `holding_s`-second
/// calls; with `patience_s`, Erlang A, otherwise Erlang C.
///
/// # Errors
///
/// Invalid arguments as for [`erlang_c`] and [`erlang_a::solve`];
/// [`FormulaError::Unstable`] for Erlang C at `traffic >= agents`.
pub fn figures(
    agents: u32,
    traffic: f64,
    holding_s: f64,
    patience_s: Option<f64>,
    within_s: Option<f64>,
) -> Result<DelayFigures, FormulaError> {
    match patience_s {
        Some(patience) => {
            let q = erlang_a::solve(agents, traffic, holding_s, patience)?;
            Ok(DelayFigures {
                agents,
                traffic,
                service_level: within_s.map(|t| q.service_level(t)),
                mean_wait_s: q.mean_wait_s,
                wait_probability: q.wait_probability,
                abandonment: q.abandonment,
                occupancy: q.occupancy,
            })
        }
        None => Ok(DelayFigures {
            agents,
            traffic,
            service_level: within_s
                .map(|t| erlang_c::service_level(agents, traffic, holding_s, t))
                .transpose()?,
            mean_wait_s: erlang_c::mean_wait(agents, traffic, holding_s)?,
            wait_probability: erlang_c::wait_probability(agents, traffic)?,
            abandonment: 0.0,
            occupancy: erlang_c::occupancy(agents, traffic)?,
        }),
    }
}

/// Whether `agents` meet `goals` (an unstable Erlang C queue meets none).
fn meets(
    agents: u32,
    traffic: f64,
    holding_s: f64,
    patience_s: Option<f64>,
    goals: &DelayGoals,
) -> Result<bool, FormulaError> {
    let within = goals.service_level.map(|g| g.0);
    match figures(agents, traffic, holding_s, patience_s, within) {
        Ok(f) => Ok(goals.met_by(&f)),
        // Unstable (Erlang C at A >= N) or a queue too long to hold (Erlang A
        // in deep overload): far from any goal.
        Err(FormulaError::Unstable { .. } | FormulaError::OutOfRange { .. }) => Ok(false),
        Err(e) => Err(e),
    }
}

/// The fewest agents for which every goal holds.
///
/// # Example
///
/// ```
/// use busyhour::formulas::{delay_goals::{self, DelayGoals}, erlang_c};
/// let goals = DelayGoals { service_level: Some((20.0, 0.8)), ..Default::default() };
/// // Without patience it is the Erlang C answer ...
/// let c = delay_goals::agents_for(12.0, 180.0, None, &goals)?;
/// assert_eq!(c, erlang_c::agents_for_service_level(12.0, 180.0, 20.0, 0.8)?);
/// // ... and callers who give up after a minute on average need fewer.
/// let a = delay_goals::agents_for(12.0, 180.0, Some(60.0), &goals)?;
/// assert!(a < c);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
///
/// # Errors
///
/// No goal, invalid goals or arguments; [`FormulaError::OutOfRange`] when
/// even [`MAX_FORMULA_SERVERS`] agents do not meet the goals.
pub fn agents_for(
    traffic: f64,
    holding_s: f64,
    patience_s: Option<f64>,
    goals: &DelayGoals,
) -> Result<u32, FormulaError> {
    goals.check(patience_s)?;
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    positive("mean holding time (s)", holding_s)?;
    let ok = |n: u32| meets(n, traffic, holding_s, patience_s, goals);
    if ok(1)? {
        return Ok(1);
    }
    // Bracket: the least stable size (Erlang C) or 1, then doubling steps.
    let mut lo = (traffic.floor() as u32).clamp(1, MAX_FORMULA_SERVERS);
    let mut hi;
    if ok(lo)? {
        hi = lo;
        lo = 1;
    } else {
        let mut step = (traffic.sqrt().ceil() as u32).max(1);
        loop {
            hi = lo.saturating_add(step).min(MAX_FORMULA_SERVERS);
            if ok(hi)? {
                break;
            }
            if hi == MAX_FORMULA_SERVERS {
                return Err(FormulaError::OutOfRange {
                    what: "agents needed for the goals",
                    limit: u64::from(MAX_FORMULA_SERVERS),
                });
            }
            lo = hi;
            step = step.saturating_mul(2);
        }
    }
    // ok(lo) is false, ok(hi) true.
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if ok(mid)? {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Ok(hi)
}

/// The most traffic (E) that `agents` serve with every goal holding.
///
/// # Example
///
/// ```
/// use busyhour::formulas::{delay_goals::{self, DelayGoals}, erlang_c};
/// let goals = DelayGoals { service_level: Some((20.0, 0.8)), ..Default::default() };
/// let a = delay_goals::traffic_for(14, 180.0, None, &goals)?;
/// // At that load 14 agents answer 80% within 20 s, just.
/// let sl = erlang_c::service_level(14, a, 180.0, 20.0)?;
/// assert!((sl - 0.8).abs() < 1e-6);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
///
/// # Errors
///
/// No goal, invalid goals or arguments.
pub fn traffic_for(
    agents: u32,
    holding_s: f64,
    patience_s: Option<f64>,
    goals: &DelayGoals,
) -> Result<f64, FormulaError> {
    goals.check(patience_s)?;
    positive("mean holding time (s)", holding_s)?;
    let ok = |a: f64| meets(agents, a, holding_s, patience_s, goals);
    // Erlang C is unstable from A = N on; Erlang A serves any load, so its
    // upper end is found by doubling (abandonment rises towards 1 - N/A).
    let mut hi = f64::from(agents);
    if patience_s.is_some() {
        while ok(hi)? {
            hi *= 2.0;
            if hi > 1e9 {
                return Ok(hi);
            }
        }
    }
    let mut lo = 0.0;
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if ok(mid)? {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi - lo <= 1e-12 * hi {
            break;
        }
    }
    Ok(lo)
}
