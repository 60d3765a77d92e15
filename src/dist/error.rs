//! The one error type of the law constructors.

/// Why a law could not be built from the given parameters.
///
/// Every message is one line, quotes the rejected value and says what the law
/// needs (and, where one exists, which other law fits the request).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LawError {
    /// The mean is NaN, infinite, zero or negative; give a finite number of seconds > 0.
    #[error("mean {value} s is not valid for {law}: it needs a finite number of seconds > 0")]
    Mean {
        /// Law name as in the scenario file.
        law: &'static str,
        /// The rejected mean (seconds).
        value: f64,
    },
    /// The cv is NaN, infinite, zero or negative; give a finite cv > 0.
    #[error("cv {value} is not valid for {law}: it needs a finite number > 0{hint}")]
    Cv {
        /// Law name as in the scenario file.
        law: &'static str,
        /// The rejected coefficient of variation.
        value: f64,
        /// Extra advice, empty or starting with a space.
        hint: &'static str,
    },
    /// A two-phase hyperexponential cannot have cv below 1; use gamma or lognormal.
    #[error(
        "cv {value} is impossible for hyperexponential: it needs cv >= 1 (use gamma or lognormal for cv < 1)"
    )]
    HyperexponentialCv {
        /// The rejected coefficient of variation.
        value: f64,
    },
    /// A uniform law symmetric about its mean reaches below 0 when cv > 1/sqrt(3).
    #[error(
        "cv {value} is impossible for uniform: it needs cv <= 0.5774 (1/sqrt 3) so that no time is negative (use gamma or lognormal for more spread)"
    )]
    UniformCv {
        /// The rejected coefficient of variation.
        value: f64,
    },
    /// The cv lies outside what the supported Weibull shapes can give.
    #[error(
        "cv {value} is outside the range weibull supports: it needs {min:.5} <= cv <= {max:.0} (shape {shape_max} down to {shape_min}); use gamma for other cvs"
    )]
    WeibullCv {
        /// The rejected coefficient of variation.
        value: f64,
        /// Smallest supported cv (at the largest shape).
        min: f64,
        /// Largest supported cv (at the smallest shape).
        max: f64,
        /// Smallest supported shape.
        shape_min: f64,
        /// Largest supported shape.
        shape_max: f64,
    },
    /// The shape is NaN, infinite, zero or negative; give a finite shape > 0.
    #[error("shape {value} is not valid for {law}: it needs a finite number > 0")]
    Shape {
        /// Law name as in the scenario file.
        law: &'static str,
        /// The rejected shape.
        value: f64,
    },
    /// The Weibull shape lies outside the supported range.
    #[error(
        "shape {value} is outside the range weibull supports: it needs {shape_min} <= shape <= {shape_max}"
    )]
    WeibullShape {
        /// The rejected shape.
        value: f64,
        /// Smallest supported shape.
        shape_min: f64,
        /// Largest supported shape.
        shape_max: f64,
    },
    /// An Erlang law needs at least one phase; use k = 1 for the exponential law.
    #[error("erlang needs k >= 1 phases, got k = 0 (k = 1 is the exponential law)")]
    ErlangPhases,
    /// An empirical law needs at least one measured value.
    #[error("empirical law needs at least one value, got none")]
    NoData,
    /// A measured value is NaN, infinite or negative; durations are finite and >= 0.
    #[error(
        "value {value} (number {position} in the data) is not valid for empirical: values must be finite seconds >= 0"
    )]
    DataValue {
        /// 1-based position of the value in the data as given.
        position: usize,
        /// The rejected value.
        value: f64,
    },
    /// Every measured value is 0, so the mean is not > 0.
    #[error("every one of the {count} values of the empirical data is 0: the mean must be > 0")]
    DataAllZero {
        /// Number of values given.
        count: usize,
    },
    /// A scale factor is NaN, infinite, zero or negative; give a finite factor > 0.
    #[error("scale factor {value} is not valid: it needs a finite number > 0")]
    ScaleFactor {
        /// The rejected factor.
        value: f64,
    },
    /// The parameters are valid one by one but together leave floating-point range.
    #[error(
        "{law} with mean {mean} s and {what} {value} is outside floating-point range: choose a less extreme {what}"
    )]
    OutOfRange {
        /// Law name as in the scenario file.
        law: &'static str,
        /// The requested mean (seconds).
        mean: f64,
        /// Which parameter went with it ("cv", "shape", "k", "scale factor").
        what: &'static str,
        /// Its value.
        value: f64,
    },
}

/// `true` when `x` is a finite number > 0 (false for NaN).
#[inline]
pub(crate) fn is_positive_finite(x: f64) -> bool {
    x > 0.0 && x.is_finite()
}

/// Checks a mean for the named law.
pub(crate) fn check_mean(law: &'static str, mean: f64) -> Result<(), LawError> {
    if is_positive_finite(mean) {
        Ok(())
    } else {
        Err(LawError::Mean { law, value: mean })
    }
}

/// Checks a cv that must be finite and > 0 for the named law.
pub(crate) fn check_cv(law: &'static str, cv: f64) -> Result<(), LawError> {
    if is_positive_finite(cv) {
        Ok(())
    } else {
        let hint = if cv == 0.0 {
            " (use deterministic for a constant time)"
        } else {
            ""
        };
        Err(LawError::Cv {
            law,
            value: cv,
            hint,
        })
    }
}
