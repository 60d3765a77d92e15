//! The uniform law, symmetric about its mean.

use rand::{Rng, RngExt};
use rand_distr::{Distribution, Uniform as UniformSampler};

use super::error::{LawError, check_cv, check_mean};
use super::params::{LawContext, need_cv, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// Largest cv of a uniform law on [m - h, m + h] that stays at or above 0: 1 / sqrt(3).
pub const UNIFORM_MAX_CV: f64 = 0.577_350_269_189_625_8;

/// Uniform law on [m - h, m + h] with half-width h = m cv sqrt(3).
///
/// # Formula
///
/// The variance of a uniform law on an interval of width w is w^2 / 12, so
/// cv = h / (m sqrt 3); F(x) = (x - (m - h)) / (2 h) on the interval (Johnson,
/// Kotz and Balakrishnan, *Continuous Univariate Distributions* vol. 2, 2nd
/// ed., 1995, ch. 26). The lower end is >= 0 only when cv <= 1 / sqrt(3).
///
/// # Numerics
///
/// A draw is `low + width * U` with U from `rand_distr::Uniform` (53-bit
/// uniform on [0, 1)). A cv within 1e-12 (relative) above 1 / sqrt(3) is
/// accepted and its lower end, a rounding error below 0, is set to 0.
///
/// # Residual law
///
/// The length-biased law has density 2 x / (b^2 - a^2) on [a, b] (a = low,
/// b = high), drawn by inversion as sqrt(a^2 + U (b^2 - a^2)); the
/// stationary excess (equilibrium residual) is such a draw times an
/// independent uniform on (0, 1). Its tail, E[(S - w)+] / m, is
/// 1 - w / m for w <= a, (b - w)^2 / (2 (b - a) m) for a <= w <= b, 0 above.
/// b^2 - a^2 is computed as (b - a)(b + a), exact to rounding even for a
/// narrow interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Uniform {
    mean: f64, // > 0, finite
    cv: f64,   // in (0, 1/sqrt 3]
    low: f64,  // >= 0
    high: f64, // > low
    sampler: UniformSampler<f64>,
    low_sq: f64,  // low^2
    span_sq: f64, // high^2 - low^2 = (high - low)(high + low), > 0
}

impl Uniform {
    /// Builds the law from its mean (seconds, finite > 0) and cv in (0, 1/sqrt 3].
    pub fn new(mean: f64, cv: f64) -> Result<Self, LawError> {
        check_mean("uniform", mean)?;
        check_cv("uniform", cv)?;
        if cv > UNIFORM_MAX_CV * (1.0 + 1e-12) {
            return Err(LawError::UniformCv { value: cv });
        }
        let half_width = mean * cv * 3f64.sqrt();
        let low = (mean - half_width).max(0.0);
        let high = mean + half_width;
        let sampler = UniformSampler::new(low, high).map_err(|_| LawError::OutOfRange {
            law: "uniform",
            mean,
            what: "cv",
            value: cv,
        })?;
        Ok(Uniform {
            mean,
            cv,
            low,
            high,
            sampler,
            low_sq: low * low,
            span_sq: (high - low) * (high + low),
        })
    }

    /// Mean (seconds).
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Coefficient of variation.
    pub fn cv(&self) -> f64 {
        self.cv
    }

    /// The interval [low, high] (seconds).
    pub fn bounds(&self) -> (f64, f64) {
        (self.low, self.high)
    }

    /// F(x) = (x - low) / (high - low), clamped to [0, 1].
    pub fn cdf(&self, x: f64) -> f64 {
        if x.is_nan() {
            return f64::NAN;
        }
        ((x - self.low) / (self.high - self.low)).clamp(0.0, 1.0)
    }

    /// One draw: an affine map of a 53-bit uniform.
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }

    /// P(R > w) for the residual R (see the type's doc).
    pub fn residual_tail(&self, w: f64) -> f64 {
        if w.is_nan() {
            return f64::NAN;
        }
        let (a, b) = (self.low, self.high);
        let tail = if w <= a {
            1.0 - w / self.mean
        } else if w < b {
            (b - w) * (b - w) / (2.0 * (b - a) * self.mean)
        } else {
            0.0
        };
        tail.clamp(0.0, 1.0)
    }

    /// One residual draw: sqrt(a^2 + U (b^2 - a^2)) times an independent
    /// uniform on (0, 1).
    #[inline]
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let u: f64 = rng.random();
        let biased = (self.low_sq + u * self.span_sq).sqrt();
        // Rounding must not leave the interval.
        biased.clamp(self.low, self.high) * super::open_unit(rng)
    }
}

/// The parameters of the uniform law as a scenario file writes them:
/// `{ law = "uniform", mean = "1m", cv = 0.3 }`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UniformParams {
    /// Mean (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
    /// Coefficient of variation.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cv: Option<f64>,
}

impl UniformParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Uniform, C::Error> {
        let mean = need_mean(c, "uniform", &self.mean)?;
        let cv = need_cv(c, "uniform", self.cv)?;
        refused(c, Uniform::new(mean, cv))
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Uniform) -> Self {
        UniformParams {
            mean: seconds_amount(law.mean()),
            cv: Some(law.cv()),
        }
    }
}

impl Uniform {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        let (lo, hi) = self.bounds();
        format!(
            "uniform from {} s to {} s, mean {} s, cv {:.2}",
            super::seconds(lo),
            super::seconds(hi),
            super::seconds(self.mean()),
            self.cv()
        )
    }

    /// The same law with its mean multiplied by `factor` and its shape kept.
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        Uniform::new(self.mean() * factor, self.cv())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_parameters() {
        for bad in [f64::NAN, f64::INFINITY, -1.0, 0.0] {
            assert!(Uniform::new(bad, 0.2).is_err(), "mean {bad} accepted");
            assert!(Uniform::new(60.0, bad).is_err(), "cv {bad} accepted");
        }
        // cv so small that the interval collapses in f64.
        assert!(matches!(
            Uniform::new(60.0, 1e-300),
            Err(LawError::OutOfRange { .. })
        ));
    }

    #[test]
    fn cv_limit_is_one_over_root_three() {
        let msg = Uniform::new(60.0, 0.6).unwrap_err().to_string();
        assert!(msg.starts_with("cv 0.6 is impossible for uniform"), "{msg}");
        let edge = Uniform::new(60.0, 1.0 / 3f64.sqrt()).unwrap();
        let (lo, hi) = edge.bounds();
        assert_eq!(lo, 0.0);
        assert!((hi - 120.0).abs() < 1e-12);
        assert!((UNIFORM_MAX_CV - 1.0 / 3f64.sqrt()).abs() < 1e-16);
    }

    #[test]
    fn interval_follows_the_variance_formula() {
        // Var = w^2 / 12 for a uniform law of width w (JKB vol. 2, ch. 26).
        let law = Uniform::new(100.0, 0.2).unwrap();
        let (lo, hi) = law.bounds();
        let w = hi - lo;
        assert!(((w * w / 12.0).sqrt() / 100.0 - 0.2).abs() < 1e-12);
        assert!((law.cdf(100.0) - 0.5).abs() < 1e-12);
    }
}
