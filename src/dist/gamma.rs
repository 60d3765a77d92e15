//! The gamma law, from mean and cv or from mean and shape.

use rand::Rng;
use rand_distr::{Distribution, Gamma as GammaSampler};

use super::error::{LawError, check_cv, check_mean, is_positive_finite};
use super::params::{CvOrShape, LawContext, cv_or_shape, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// Gamma law with shape a and scale m / a.
///
/// # Formula
///
/// F(x) = P(a, x a / m), the regularized lower incomplete gamma function;
/// mean m, cv 1 / sqrt(a), so a = 1 / cv^2 (Johnson, Kotz and Balakrishnan,
/// *Continuous Univariate Distributions* vol. 1, 2nd ed., 1994, ch. 17).
///
/// # Numerics
///
/// Draws come from `rand_distr::Gamma`: Marsaglia and Tsang, "A simple method
/// for generating gamma variables", ACM TOMS 26(3), 2000, with their boosting
/// step for a < 1 (one extra uniform and a `powf`). For a very small shape
/// (cv above about 30) most draws underflow towards 0.
///
/// # Residual law
///
/// The length-biased law (density x f(x) / m) of gamma(a, theta) is
/// gamma(a + 1, theta); the stationary excess (equilibrium residual) is a
/// length-biased draw times an independent uniform on (0, 1). Its tail is
/// P(R > w) = E[(S - w)+] / m = Q(a + 1, y) - (y / a) Q(a, y), y = w / theta,
/// with Q the regularized upper incomplete gamma function (from
/// E\[S; S > w\] = m Q(a + 1, y), JKB vol. 1, ch. 17).
///
/// The difference loses relative accuracy once y is well above a (both
/// terms small and close): the absolute error stays near 1e-16, so the tail
/// is good to about 1e-12 and clamped to [0, 1]; the warm-up rule needs it
/// only down to 1e-4.
#[derive(Debug, Clone, PartialEq)]
pub struct Gamma {
    mean: f64,  // > 0, finite
    shape: f64, // > 0, finite
    scale: f64, // mean / shape, > 0, finite
    sampler: GammaSampler<f64>,
    biased: GammaSampler<f64>, // shape + 1, same scale: the length-biased law
}

impl Gamma {
    /// Builds the law from its mean (seconds) and cv; both finite and > 0.
    pub fn from_cv(mean: f64, cv: f64) -> Result<Self, LawError> {
        check_mean("gamma", mean)?;
        check_cv("gamma", cv)?;
        let shape = 1.0 / (cv * cv);
        Self::build(mean, shape, "cv", cv)
    }

    /// Builds the law from its mean (seconds) and shape a; both finite and > 0.
    pub fn from_shape(mean: f64, shape: f64) -> Result<Self, LawError> {
        check_mean("gamma", mean)?;
        if !is_positive_finite(shape) {
            return Err(LawError::Shape {
                law: "gamma",
                value: shape,
            });
        }
        Self::build(mean, shape, "shape", shape)
    }

    fn build(mean: f64, shape: f64, what: &'static str, value: f64) -> Result<Self, LawError> {
        let out_of_range = LawError::OutOfRange {
            law: "gamma",
            mean,
            what,
            value,
        };
        let scale = mean / shape;
        if !is_positive_finite(shape) || !is_positive_finite(scale) {
            return Err(out_of_range);
        }
        let sampler = GammaSampler::new(shape, scale).map_err(|_| out_of_range.clone())?;
        let biased = GammaSampler::new(shape + 1.0, scale).map_err(|_| out_of_range)?;
        Ok(Gamma {
            mean,
            shape,
            scale,
            sampler,
            biased,
        })
    }

    /// Mean (seconds).
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Coefficient of variation 1 / sqrt(shape).
    pub fn cv(&self) -> f64 {
        1.0 / self.shape.sqrt()
    }

    /// Shape a.
    pub fn shape(&self) -> f64 {
        self.shape
    }

    /// F(x) = P(a, x / scale).
    pub fn cdf(&self, x: f64) -> f64 {
        regularized_lower_gamma(self.shape, x / self.scale)
    }

    /// One Marsaglia-Tsang draw.
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }

    /// P(R > w) for the residual R: Q(a + 1, y) - (y / a) Q(a, y), y = w / scale.
    pub fn residual_tail(&self, w: f64) -> f64 {
        gamma_residual_tail(self.shape, w / self.scale)
    }

    /// One residual draw: gamma(a + 1, scale) times an independent uniform on (0, 1).
    #[inline]
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.biased.sample(rng) * super::open_unit(rng)
    }
}

/// Residual tail of a gamma law of shape `a` at `y` = w / scale:
/// Q(a + 1, y) - (y / a) Q(a, y), clamped to [0, 1]; 1 for y <= 0, NaN for NaN.
pub(crate) fn gamma_residual_tail(a: f64, y: f64) -> f64 {
    if y.is_nan() || a.is_nan() {
        return f64::NAN;
    }
    if y <= 0.0 {
        return 1.0;
    }
    if y == f64::INFINITY {
        return 0.0;
    }
    let upper = |s: f64| statrs::function::gamma::checked_gamma_ur(s, y).unwrap_or(f64::NAN);
    (upper(a + 1.0) - y / a * upper(a)).clamp(0.0, 1.0)
}

/// P(a, y): the regularized lower incomplete gamma function, 0 for y <= 0 and
/// 1 for y = +inf, NaN for NaN. Computed by `statrs::function::gamma`
/// (series / continued fraction after Numerical Recipes, 6.2).
pub(crate) fn regularized_lower_gamma(a: f64, y: f64) -> f64 {
    if y.is_nan() || a.is_nan() {
        return f64::NAN;
    }
    if y <= 0.0 {
        return 0.0;
    }
    if y == f64::INFINITY {
        return 1.0;
    }
    statrs::function::gamma::checked_gamma_lr(a, y).unwrap_or(f64::NAN)
}

/// The parameters of the gamma law as a scenario file writes them:
/// `{ law = "gamma", mean = "6s", cv = 0.5 }` or with `shape = 4` instead of the cv.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GammaParams {
    /// Mean (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
    /// Coefficient of variation (or give the shape).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cv: Option<f64>,
    /// Shape a (or give the cv).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shape: Option<f64>,
}

impl GammaParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Gamma, C::Error> {
        let mean = need_mean(c, "gamma", &self.mean)?;
        let made = match cv_or_shape(c, "gamma", self.cv, self.shape)? {
            CvOrShape::Cv(cv) => Gamma::from_cv(mean, cv),
            CvOrShape::Shape(shape) => Gamma::from_shape(mean, shape),
        };
        refused(c, made)
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Gamma) -> Self {
        GammaParams {
            mean: seconds_amount(law.mean()),
            cv: None,
            shape: Some(law.shape()),
        }
    }
}

impl Gamma {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        format!(
            "gamma, mean {} s, cv {:.2} (shape {})",
            super::seconds(self.mean()),
            self.cv(),
            super::significant(self.shape(), 3)
        )
    }

    /// The same law with its mean multiplied by `factor` and its shape kept.
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        Gamma::from_shape(self.mean() * factor, self.shape())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_parameters() {
        for bad in [f64::NAN, f64::INFINITY, -1.0, 0.0] {
            assert!(Gamma::from_cv(bad, 0.5).is_err(), "mean {bad} accepted");
            assert!(Gamma::from_cv(60.0, bad).is_err(), "cv {bad} accepted");
            assert!(
                Gamma::from_shape(60.0, bad).is_err(),
                "shape {bad} accepted"
            );
        }
        // cv so small or so large that the shape leaves f64 range.
        assert!(matches!(
            Gamma::from_cv(60.0, 1e-200),
            Err(LawError::OutOfRange { .. })
        ));
        assert!(matches!(
            Gamma::from_cv(60.0, 1e200),
            Err(LawError::OutOfRange { .. })
        ));
    }

    #[test]
    fn zero_cv_points_to_deterministic() {
        let msg = Gamma::from_cv(60.0, 0.0).unwrap_err().to_string();
        assert_eq!(
            msg,
            "cv 0 is not valid for gamma: it needs a finite number > 0 (use deterministic for a constant time)"
        );
    }

    #[test]
    fn shape_one_is_exponential() {
        // Gamma with shape 1 is the exponential law (JKB vol. 1, ch. 17).
        let law = Gamma::from_shape(30.0, 1.0).unwrap();
        for x in [1.0, 30.0, 100.0] {
            assert!((law.cdf(x) - (1.0 - (-x / 30.0f64).exp())).abs() < 1e-12);
        }
        assert!((Gamma::from_cv(30.0, 0.5).unwrap().shape() - 4.0).abs() < 1e-12);
    }
}
