//! The error type shared by every closed-form formula.

use thiserror::Error;

/// Why a formula could not give an answer.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum FormulaError {
    /// An argument is outside its domain (negative, NaN, infinite or out of
    /// range); pass a value in the stated range.
    #[error("{name} = {value} is not valid: expected {expected}")]
    InvalidArgument {
        /// The argument's name, as a traffic engineer would call it.
        name: &'static str,
        /// The value that was passed.
        value: f64,
        /// What the argument must be.
        expected: &'static str,
    },
    /// The offered traffic is at least the number of agents of a queue whose
    /// callers never give up, so the queue grows without bound; add agents
    /// (more agents than erlangs) or model abandonment (Erlang A).
    #[error(
        "offered traffic {} erlangs on {agents} agents is an unstable queue: \
         the queue grows without bound; need more agents than erlangs",
        crate::units::trim_float(*traffic, 4)
    )]
    Unstable {
        /// Offered traffic in erlangs.
        traffic: f64,
        /// Number of agents (servers).
        agents: u32,
    },
    /// The goal can never be met, whatever the number of servers or the
    /// traffic; relax the goal.
    #[error("{goal} = {} cannot be met: {reason}", crate::units::trim_float(*value, 6))]
    NoSolution {
        /// The goal that was asked for.
        goal: &'static str,
        /// Its value.
        value: f64,
        /// Why no answer exists.
        reason: &'static str,
    },
    /// The answer lies beyond the size this formula is built to solve (for
    /// example more than 100 million servers); reduce the traffic or relax
    /// the goal.
    #[error("{what} would exceed {limit}, beyond the range this formula solves")]
    OutOfRange {
        /// The quantity that grew too large.
        what: &'static str,
        /// The limit it would exceed.
        limit: u64,
    },
}

/// Accepts a finite value >= 0 (rejects NaN).
pub(crate) fn non_negative(name: &'static str, value: f64) -> Result<f64, FormulaError> {
    if value >= 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(FormulaError::InvalidArgument {
            name,
            value,
            expected: "a finite number >= 0",
        })
    }
}

/// Accepts a finite value > 0 (rejects NaN).
pub(crate) fn positive(name: &'static str, value: f64) -> Result<f64, FormulaError> {
    if value > 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(FormulaError::InvalidArgument {
            name,
            value,
            expected: "a finite number > 0",
        })
    }
}

/// Accepts a share strictly between 0 and 1 (rejects NaN).
pub(crate) fn open_share(name: &'static str, value: f64) -> Result<f64, FormulaError> {
    if value > 0.0 && value < 1.0 {
        Ok(value)
    } else {
        Err(FormulaError::InvalidArgument {
            name,
            value,
            expected: "a share strictly between 0 and 1 (0% and 100%)",
        })
    }
}

/// Accepts a count of at least one.
pub(crate) fn at_least_one(name: &'static str, value: u32) -> Result<u32, FormulaError> {
    if value >= 1 {
        Ok(value)
    } else {
        Err(FormulaError::InvalidArgument {
            name,
            value: f64::from(value),
            expected: "at least 1",
        })
    }
}
