//! The exponential law: memoryless holding times, Poisson inter-arrival times.

use rand::Rng;
use rand_distr::{Distribution, Exp1};

use super::error::{LawError, check_mean};
use super::params::{LawContext, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// Exponential law with the given mean.
///
/// # Formula
///
/// F(x) = 1 - exp(-x / m) for x >= 0; mean m, cv 1.
///
/// # Numerics
///
/// A sample is `m * E` where `E` is a standard exponential variate drawn by
/// the ziggurat method (Marsaglia and Tsang, "The ziggurat method for
/// generating random variables", J. Stat. Softw. 5(8), 2000) as implemented
/// by `rand_distr::Exp1`.
///
/// # Residual law
///
/// The stationary excess (equilibrium residual) law of an exponential law is
/// the same exponential law (memorylessness): P(R > w) = exp(-w / m). It is
/// drawn directly, one ziggurat exponential per draw.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Exponential {
    mean: f64, // > 0, finite
}

impl Exponential {
    /// Builds the law; the mean must be finite and > 0 (seconds).
    pub fn new(mean: f64) -> Result<Self, LawError> {
        check_mean("exponential", mean)?;
        Ok(Exponential { mean })
    }

    /// Mean (seconds).
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Coefficient of variation: always 1.
    pub fn cv(&self) -> f64 {
        1.0
    }

    /// F(x) = 1 - exp(-x / m), written as `-expm1(-x / m)` for accuracy at small x.
    pub fn cdf(&self, x: f64) -> f64 {
        if x.is_nan() {
            return f64::NAN;
        }
        if x <= 0.0 {
            return 0.0;
        }
        -(-x / self.mean).exp_m1()
    }

    /// One draw: ziggurat standard exponential times the mean (one generator call
    /// in about 98% of draws).
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let e: f64 = Exp1.sample(rng);
        e * self.mean
    }

    /// P(R > w) = exp(-w / m) for the residual R (1 for w <= 0).
    pub fn residual_tail(&self, w: f64) -> f64 {
        if w.is_nan() {
            return f64::NAN;
        }
        if w <= 0.0 {
            return 1.0;
        }
        (-w / self.mean).exp()
    }

    /// One residual draw: the same law as [`Exponential::sample`].
    #[inline]
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sample(rng)
    }
}

/// The parameters of the exponential law as a scenario file writes them:
/// `{ law = "exponential", mean = "3m" }`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExponentialParams {
    /// Mean (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
}

impl ExponentialParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Exponential, C::Error> {
        let mean = need_mean(c, "exponential", &self.mean)?;
        refused(c, Exponential::new(mean))
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Exponential) -> Self {
        ExponentialParams {
            mean: seconds_amount(law.mean()),
        }
    }
}

impl Exponential {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        format!("exponential, mean {} s, cv 1", super::seconds(self.mean()))
    }

    /// The same law with its mean multiplied by `factor` and its shape kept.
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        Exponential::new(self.mean() * factor)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_means() {
        for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, -1.0, 0.0, -0.0] {
            assert!(Exponential::new(bad).is_err(), "mean {bad} accepted");
        }
        assert!(Exponential::new(f64::MIN_POSITIVE).is_ok());
    }

    #[test]
    fn message_quotes_the_value() {
        let e = Exponential::new(-3.0).unwrap_err().to_string();
        assert_eq!(
            e,
            "mean -3 s is not valid for exponential: it needs a finite number of seconds > 0"
        );
    }

    #[test]
    fn cdf_at_the_mean_is_one_minus_one_over_e() {
        // F(m) = 1 - 1/e for any exponential law (definition).
        let law = Exponential::new(180.0).unwrap();
        assert!((law.cdf(180.0) - (1.0 - (-1.0f64).exp())).abs() < 1e-15);
        assert_eq!(law.cdf(-1.0), 0.0);
        assert_eq!(law.cdf(f64::INFINITY), 1.0);
    }
}
