//! Shifts on a grid of equal intervals: who is on duty when, and the
//! cheapest set of shifts whose cover meets a per-interval requirement.
//! Pure planning: knows nothing of scenarios, simulation or reports.
//!
//! Time is counted in whole intervals from the start of the measured
//! period (interval 0). A shift starts at an interval boundary, lasts a
//! whole number of intervals and may hold breaks, each a whole number of
//! intervals from the shift's start; an agent on a break is not on duty.
//!
//! # The cover problem
//!
//! Given a requirement `r[i]` (agents on duty in interval `i`) and the
//! allowed shift types (a length, the earliest and latest start, a step
//! between starts, the breaks), choose how many agents work each allowed
//! shift so that every interval is covered and the paid agent-intervals
//! (each shift's whole length, breaks included) are fewest: the set-cover
//! integer program of shift scheduling (Dantzig 1954, "A comment on Edie's
//! traffic delays at toll booths"). Without breaks its matrix has
//! consecutive ones in each column and is totally unimodular, so the linear
//! relaxation already has an integral optimum; breaks break that, and
//! branch and bound (microlp) closes the gap, within a node limit that
//! keeps the answer deterministic.

use microlp::{ComparisonOp, OptimizationDirection, Problem, SolveOptions};
use thiserror::Error;

/// Branch-and-bound nodes the cover may use; deterministic, unlike a time
/// limit. Shift problems of a day (tens of intervals, a few hundred
/// allowed shifts) end far below it.
pub const NODE_LIMIT: u64 = 200_000;

/// A break inside a shift.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Break {
    /// Intervals from the shift's start to the break's start.
    pub after: u32,
    /// Length in intervals.
    pub length: u32,
}

/// Agents working one shift.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Shift {
    /// First interval of the shift.
    pub start: u32,
    /// Length in intervals, breaks included.
    pub length: u32,
    /// Breaks, in order, inside the shift.
    pub breaks: Vec<Break>,
    /// Agents working it.
    pub count: u32,
}

impl Shift {
    /// Whether an agent of this shift is on duty (on shift, not on a
    /// break) in interval `i`.
    pub fn on_duty(&self, i: u32) -> bool {
        if i < self.start || i >= self.start + self.length {
            return false;
        }
        let k = i - self.start;
        !self
            .breaks
            .iter()
            .any(|b| k >= b.after && k < b.after + b.length)
    }

    /// The interval after the shift's last one.
    pub fn end(&self) -> u32 {
        self.start + self.length
    }
}

/// Agents on duty per interval `0..intervals` under `shifts`.
pub fn coverage(shifts: &[Shift], intervals: usize) -> Vec<u32> {
    (0..intervals as u32)
        .map(|i| {
            shifts
                .iter()
                .filter(|s| s.on_duty(i))
                .map(|s| s.count)
                .sum()
        })
        .collect()
}

/// An allowed kind of shift for the cover.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ShiftType {
    /// Length in intervals, breaks included.
    pub length: u32,
    /// Earliest start (interval).
    pub earliest: u32,
    /// Latest start (interval), at least `earliest`.
    pub latest: u32,
    /// Intervals between allowed starts (at least 1).
    pub every: u32,
    /// Breaks, each inside the shift.
    pub breaks: Vec<Break>,
    /// The most agents all shifts of this type may have together (a
    /// contract mix: so many part-time posts); `None`: no limit.
    pub max_agents: Option<u32>,
}

impl ShiftType {
    /// Every shift of this type, one agent each, in order of start.
    pub fn shifts(&self) -> impl Iterator<Item = Shift> + '_ {
        (self.earliest..=self.latest)
            .step_by(self.every.max(1) as usize)
            .map(|start| Shift {
                start,
                length: self.length,
                breaks: self.breaks.clone(),
                count: 1,
            })
    }
}

/// The cheapest cover found.
#[derive(Debug, Clone, PartialEq)]
pub struct Cover {
    /// The shifts worked, with their agents, in order of start (no shift
    /// with no agent).
    pub shifts: Vec<Shift>,
    /// Paid agent-intervals: each shift's length times its agents.
    pub agent_intervals: u64,
    /// Whether no cheaper cover exists (proven by the search); otherwise
    /// the best found within [`NODE_LIMIT`].
    pub proven: bool,
}

/// Why no cover was found.
#[derive(Debug, Error, PartialEq)]
pub enum CoverError {
    /// No allowed shift is on duty in an interval that needs agents.
    #[error("no allowed shift is on duty in interval {interval}, which needs {needed} agents")]
    Uncovered {
        /// The interval (0-based).
        interval: usize,
        /// Agents it needs.
        needed: u32,
    },
    /// The allowed shifts are not usable (no start, zero length).
    #[error("{0}")]
    Types(String),
    /// The types' agent limits leave some interval short.
    #[error("the shift types' max_agents limits leave no cover: allow more agents")]
    Limits,
    /// The solver stopped without a cover or failed.
    #[error("the shift cover search ended without a cover: {0}")]
    Solver(String),
}

/// The fewest paid agent-intervals of the allowed `types` whose coverage
/// is at least `requirement[i]` in every interval `i` (see the module's
/// method). Shifts may run past the last interval; those intervals are
/// paid and need nothing.
///
/// # Errors
///
/// An interval with a requirement that no allowed shift is on duty in;
/// unusable types; a solver failure.
pub fn cover(requirement: &[u32], types: &[ShiftType]) -> Result<Cover, CoverError> {
    if types.is_empty() {
        return Err(CoverError::Types("no shift type is allowed".into()));
    }
    if let Some(t) = types
        .iter()
        .find(|t| t.length == 0 || t.latest < t.earliest)
    {
        return Err(CoverError::Types(format!(
            "a shift type of {} intervals starting from {} to {} allows no shift",
            t.length, t.earliest, t.latest
        )));
    }
    let candidates: Vec<Shift> = types.iter().flat_map(ShiftType::shifts).collect();
    let kind: Vec<usize> = (types.iter().enumerate())
        .flat_map(|(k, t)| std::iter::repeat_n(k, t.shifts().count()))
        .collect();
    let needed: Vec<(usize, u32)> = (requirement.iter().copied().enumerate())
        .filter(|&(_, r)| r > 0)
        .collect();
    for &(i, r) in &needed {
        if !candidates.iter().any(|s| s.on_duty(i as u32)) {
            return Err(CoverError::Uncovered {
                interval: i,
                needed: r,
            });
        }
    }
    let most = requirement.iter().copied().max().unwrap_or(0);
    if most == 0 {
        return Ok(Cover {
            shifts: Vec::new(),
            agent_intervals: 0,
            proven: true,
        });
    }
    let upper = i32::try_from(most).unwrap_or(i32::MAX);
    let mut problem = Problem::new(OptimizationDirection::Minimize);
    let vars: Vec<_> = (candidates.iter())
        .map(|s| problem.add_integer_var(f64::from(s.length), (0, upper)))
        .collect();
    for &(i, r) in &needed {
        let terms: Vec<_> = (candidates.iter().zip(&vars))
            .filter(|(s, _)| s.on_duty(i as u32))
            .map(|(_, &v)| (v, 1.0))
            .collect();
        problem.add_constraint(terms.as_slice(), ComparisonOp::Ge, f64::from(r));
    }
    for (k, t) in types.iter().enumerate() {
        if let Some(most) = t.max_agents {
            let terms: Vec<_> = (vars.iter().zip(&kind))
                .filter(|&(_, &j)| j == k)
                .map(|(&v, _)| (v, 1.0))
                .collect();
            problem.add_constraint(terms.as_slice(), ComparisonOp::Le, f64::from(most));
        }
    }
    let mut options = SolveOptions::default();
    options.node_limit = Some(NODE_LIMIT);
    let outcome = problem.solve_with(options).map_err(|e| match e {
        microlp::Error::Infeasible => CoverError::Limits,
        e => CoverError::Solver(e.to_string()),
    })?;
    let proven = outcome.is_optimal();
    let solution = outcome
        .into_solution()
        .map_err(|_| CoverError::Solver(format!("no cover within {NODE_LIMIT} search nodes")))?;
    let mut shifts: Vec<Shift> = (candidates.into_iter().zip(&vars))
        .filter_map(|(s, &v)| {
            let count = solution.var_value(v).round().max(0.0) as u32;
            (count > 0).then_some(Shift { count, ..s })
        })
        .collect();
    shifts.sort_by_key(|s| (s.start, s.length));
    // The solver meets each row within a tolerance; the rounded counts are
    // checked exactly, so a cover that is returned covers.
    let covered = coverage(&shifts, requirement.len());
    if let Some(i) = (0..requirement.len()).find(|&i| covered[i] < requirement[i]) {
        return Err(CoverError::Solver(format!(
            "the rounded cover leaves interval {i} short"
        )));
    }
    let agent_intervals = shifts
        .iter()
        .map(|s| u64::from(s.length) * u64::from(s.count))
        .sum();
    Ok(Cover {
        shifts,
        agent_intervals,
        proven,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn shift(start: u32, length: u32, count: u32) -> Shift {
        Shift {
            start,
            length,
            breaks: Vec::new(),
            count,
        }
    }

    #[test]
    fn on_duty_skips_breaks_and_ends() {
        let s = Shift {
            start: 2,
            length: 6,
            breaks: vec![Break {
                after: 3,
                length: 1,
            }],
            count: 2,
        };
        let duty: Vec<bool> = (0..10).map(|i| s.on_duty(i)).collect();
        assert_eq!(
            duty,
            [
                false, false, true, true, true, false, true, true, false, false
            ]
        );
        assert_eq!(coverage(&[s, shift(0, 3, 1)], 5), vec![1, 1, 3, 2, 2]);
    }

    #[test]
    fn one_type_that_must_start_everywhere() {
        // Requirement 1 in each of 4 intervals, only 2-interval shifts on
        // any start: two shifts, 4 agent-intervals.
        let t = ShiftType {
            length: 2,
            earliest: 0,
            latest: 3,
            every: 1,
            breaks: Vec::new(),
            max_agents: None,
        };
        let c = cover(&[1, 1, 1, 1], &[t]).unwrap();
        assert_eq!(c.agent_intervals, 4);
        assert!(c.proven);
        assert_eq!(c.shifts, vec![shift(0, 2, 1), shift(2, 2, 1)]);
    }

    #[test]
    fn an_interval_no_shift_reaches_is_named() {
        let t = ShiftType {
            length: 2,
            earliest: 0,
            latest: 0,
            every: 1,
            breaks: Vec::new(),
            max_agents: None,
        };
        assert_eq!(
            cover(&[1, 0, 3], &[t]),
            Err(CoverError::Uncovered {
                interval: 2,
                needed: 3
            })
        );
    }
}
