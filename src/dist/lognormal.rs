//! The lognormal law, from mean and cv: the usual fit to measured holding times.

use rand::Rng;
use rand_distr::{Distribution, LogNormal as LogNormalSampler};

use super::error::{LawError, check_cv, check_mean};
use super::params::{LawContext, need_cv, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// Lognormal law: ln X is normal with mean mu and standard deviation sigma.
///
/// # Formula
///
/// sigma^2 = ln(1 + cv^2), mu = ln(m) - sigma^2 / 2, so that E X = m and
/// sd X / E X = cv; F(x) = Phi((ln x - mu) / sigma) (Johnson, Kotz and
/// Balakrishnan, *Continuous Univariate Distributions* vol. 1, 2nd ed., 1994,
/// ch. 14).
///
/// # Numerics
///
/// sigma^2 is computed as `ln_1p(cv^2)` so that small cvs keep their
/// precision. A draw is `exp(mu + sigma Z)` with Z from the ziggurat normal
/// sampler of `rand_distr` (Marsaglia and Tsang, J. Stat. Softw. 5(8), 2000).
///
/// # Residual law
///
/// The length-biased law of lognormal(mu, sigma) is lognormal(mu + sigma^2,
/// sigma) (x times the normal density in ln x completes the square); the
/// stationary excess (equilibrium residual) is a length-biased draw times an
/// independent uniform on (0, 1). Its tail is
/// P(R > w) = E[(S - w)+] / m = Phi'(d1) - (w / m) Phi'(d2), with Phi' = 1 - Phi,
/// d1 = (ln w - mu - sigma^2) / sigma, d2 = (ln w - mu) / sigma (the partial
/// expectation E\[S; S > w\] = m Phi'(d1), JKB vol. 1, ch. 14). Both terms come
/// from `erfc`, so each is accurate in the tail; their difference keeps an
/// absolute error near 1e-16 (clamped to [0, 1]).
#[derive(Debug, Clone, PartialEq)]
pub struct Lognormal {
    mean: f64,  // > 0, finite
    cv: f64,    // > 0, finite
    mu: f64,    // finite
    sigma: f64, // > 0, finite
    sampler: LogNormalSampler<f64>,
    biased: LogNormalSampler<f64>, // mu + sigma^2, sigma: the length-biased law
}

impl Lognormal {
    /// Builds the law from its mean (seconds) and cv; both finite and > 0.
    pub fn new(mean: f64, cv: f64) -> Result<Self, LawError> {
        check_mean("lognormal", mean)?;
        check_cv("lognormal", cv)?;
        let out_of_range = LawError::OutOfRange {
            law: "lognormal",
            mean,
            what: "cv",
            value: cv,
        };
        let sigma2 = (cv * cv).ln_1p();
        let sigma = sigma2.sqrt();
        let mu = mean.ln() - 0.5 * sigma2;
        if !(sigma > 0.0 && sigma.is_finite() && mu.is_finite()) {
            return Err(out_of_range);
        }
        let sampler = LogNormalSampler::new(mu, sigma).map_err(|_| out_of_range.clone())?;
        let biased = LogNormalSampler::new(mu + sigma2, sigma).map_err(|_| out_of_range)?;
        Ok(Lognormal {
            mean,
            cv,
            mu,
            sigma,
            sampler,
            biased,
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

    /// mu, the mean of ln X.
    pub fn mu(&self) -> f64 {
        self.mu
    }

    /// sigma, the standard deviation of ln X.
    pub fn sigma(&self) -> f64 {
        self.sigma
    }

    /// F(x) = Phi((ln x - mu) / sigma) = erfc(-(ln x - mu) / (sigma sqrt 2)) / 2.
    pub fn cdf(&self, x: f64) -> f64 {
        if x.is_nan() {
            return f64::NAN;
        }
        if x <= 0.0 {
            return 0.0;
        }
        let z = (x.ln() - self.mu) / (self.sigma * std::f64::consts::SQRT_2);
        0.5 * statrs::function::erf::erfc(-z)
    }

    /// One draw: exp of a ziggurat normal.
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }

    /// P(R > w) for the residual R: Phi'(d1) - (w / m) Phi'(d2) (see the type's doc).
    pub fn residual_tail(&self, w: f64) -> f64 {
        if w.is_nan() {
            return f64::NAN;
        }
        if w <= 0.0 {
            return 1.0;
        }
        let s2 = std::f64::consts::SQRT_2 * self.sigma;
        let d2 = (w.ln() - self.mu) / s2;
        let d1 = d2 - self.sigma / std::f64::consts::SQRT_2;
        let above = |d: f64| 0.5 * statrs::function::erf::erfc(d);
        (above(d1) - w / self.mean * above(d2)).clamp(0.0, 1.0)
    }

    /// One residual draw: lognormal(mu + sigma^2, sigma) times an independent
    /// uniform on (0, 1).
    #[inline]
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.biased.sample(rng) * super::open_unit(rng)
    }
}

/// The parameters of the lognormal law as a scenario file writes them:
/// `{ law = "lognormal", mean = "3m", cv = 1.1 }`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LognormalParams {
    /// Mean (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
    /// Coefficient of variation.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cv: Option<f64>,
}

impl LognormalParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Lognormal, C::Error> {
        let mean = need_mean(c, "lognormal", &self.mean)?;
        let cv = need_cv(c, "lognormal", self.cv)?;
        refused(c, Lognormal::new(mean, cv))
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Lognormal) -> Self {
        LognormalParams {
            mean: seconds_amount(law.mean()),
            cv: Some(law.cv()),
        }
    }
}

impl Lognormal {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        format!(
            "lognormal, mean {} s, cv {:.2}",
            super::seconds(self.mean()),
            self.cv()
        )
    }

    /// The same law with its mean multiplied by `factor` and its shape kept.
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        Lognormal::new(self.mean() * factor, self.cv())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_parameters() {
        for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, -1.0, 0.0] {
            assert!(Lognormal::new(bad, 1.0).is_err(), "mean {bad} accepted");
            assert!(Lognormal::new(180.0, bad).is_err(), "cv {bad} accepted");
        }
        assert!(matches!(
            Lognormal::new(180.0, 1e200),
            Err(LawError::OutOfRange { .. })
        ));
    }

    #[test]
    fn parameters_follow_the_moment_formulas() {
        // JKB vol. 1, ch. 14: E X = exp(mu + sigma^2/2), cv^2 = exp(sigma^2) - 1.
        let law = Lognormal::new(180.0, 1.1).unwrap();
        let s2 = law.sigma() * law.sigma();
        assert!(((law.mu() + s2 / 2.0).exp() - 180.0).abs() < 1e-9);
        assert!((s2.exp_m1().sqrt() - 1.1).abs() < 1e-12);
        // The median is exp(mu).
        assert!((law.cdf(law.mu().exp()) - 0.5).abs() < 1e-15);
    }
}
