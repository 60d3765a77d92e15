//! The deterministic law: every draw is the same time.

use super::error::{LawError, check_mean};
use super::params::{LawContext, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// A constant time: every draw equals the mean.
///
/// # Formula
///
/// F(x) = 0 for x < m, 1 for x >= m; mean m, cv 0.
///
/// # Numerics
///
/// Sampling draws no random numbers, so a deterministic holding time leaves
/// the stream's generator where it was.
///
/// # Residual law
///
/// The length-biased law of a constant d is d itself, so the stationary
/// excess (equilibrium residual) is d times a uniform on (0, 1): uniform on
/// (0, d), P(R > w) = 1 - w / d on [0, d]. One 53-bit uniform per draw.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Deterministic {
    value: f64, // > 0, finite
}

impl Deterministic {
    /// Builds the law; the time must be finite and > 0 (seconds).
    pub fn new(mean: f64) -> Result<Self, LawError> {
        check_mean("deterministic", mean)?;
        Ok(Deterministic { value: mean })
    }

    /// Mean (seconds): the constant itself.
    pub fn mean(&self) -> f64 {
        self.value
    }

    /// Coefficient of variation: always 0.
    pub fn cv(&self) -> f64 {
        0.0
    }

    /// Unit step at the constant.
    pub fn cdf(&self, x: f64) -> f64 {
        if x.is_nan() {
            f64::NAN
        } else if x >= self.value {
            1.0
        } else {
            0.0
        }
    }

    /// The constant; no random numbers are used.
    #[inline]
    pub fn sample<R: rand::Rng + ?Sized>(&self, _rng: &mut R) -> f64 {
        self.value
    }

    /// P(R > w) for the residual R: 1 - w / d, clamped to [0, 1].
    pub fn residual_tail(&self, w: f64) -> f64 {
        if w.is_nan() {
            return f64::NAN;
        }
        (1.0 - w / self.value).clamp(0.0, 1.0)
    }

    /// One residual draw: d times a uniform on (0, 1).
    #[inline]
    pub fn sample_residual<R: rand::Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.value * super::open_unit(rng)
    }
}

/// The parameters of the deterministic law as a scenario file writes them:
/// `{ law = "deterministic", mean = "90s" }`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DeterministicParams {
    /// The constant time (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
}

impl DeterministicParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Deterministic, C::Error> {
        let mean = need_mean(c, "deterministic", &self.mean)?;
        refused(c, Deterministic::new(mean))
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Deterministic) -> Self {
        DeterministicParams {
            mean: seconds_amount(law.mean()),
        }
    }
}

impl Deterministic {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        format!("deterministic, {} s", super::seconds(self.mean()))
    }

    /// The same law with its mean multiplied by `factor` and its shape kept.
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        Deterministic::new(self.mean() * factor)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_means() {
        for bad in [f64::NAN, f64::INFINITY, -2.5, 0.0] {
            assert!(Deterministic::new(bad).is_err(), "mean {bad} accepted");
        }
    }

    #[test]
    fn step_at_the_value() {
        let law = Deterministic::new(90.0).unwrap();
        assert_eq!(law.cdf(89.999), 0.0);
        assert_eq!(law.cdf(90.0), 1.0);
        let mut rng = <rand_xoshiro::Xoshiro256PlusPlus as rand::SeedableRng>::seed_from_u64(1);
        assert_eq!(law.sample(&mut rng), 90.0);
    }
}
