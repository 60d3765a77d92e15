//! The Weibull law, from mean and cv (shape found by a root search) or from mean and shape.

use rand::Rng;
use rand_distr::{Distribution, Gamma as GammaSampler, Weibull as WeibullSampler};
use statrs::function::gamma::ln_gamma;

use super::error::{LawError, check_cv, check_mean, is_positive_finite};
use super::params::{CvOrShape, LawContext, cv_or_shape, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// Smallest supported Weibull shape (cv about 3.7e5).
pub const WEIBULL_SHAPE_MIN: f64 = 0.05;
/// Largest supported Weibull shape (cv about 2.6e-3).
pub const WEIBULL_SHAPE_MAX: f64 = 500.0;

/// Weibull law with shape k and scale lambda.
///
/// # Formula
///
/// F(x) = 1 - exp(-(x / lambda)^k); E X = lambda G(1 + 1/k);
/// cv^2 = G(1 + 2/k) / G(1 + 1/k)^2 - 1, where G is Euler's gamma function
/// (Johnson, Kotz and Balakrishnan, *Continuous Univariate Distributions*
/// vol. 1, 2nd ed., 1994, ch. 21). The cv falls strictly as k grows (k = 1 is
/// the exponential law, cv 1; k = 2 the Rayleigh law).
///
/// # Numerics
///
/// From a cv the shape is found by bisection on ln k over
/// [[`WEIBULL_SHAPE_MIN`], [`WEIBULL_SHAPE_MAX`]], comparing
/// ln(1 + cv^2) = lnG(1 + 2/k) - 2 lnG(1 + 1/k) (log-gamma by
/// `statrs::function::gamma::ln_gamma`, a Lanczos approximation) until the
/// bracket is below 1e-14 relative; monotonicity makes the bisection
/// certain to converge. lambda = m exp(-lnG(1 + 1/k)). Draws come from
/// `rand_distr::Weibull`: lambda (-ln U)^(1/k) with U uniform on (0, 1].
///
/// # Residual law
///
/// With Y = (X / lambda)^k standard exponential, the length-biased law
/// (density x f(x) / m) is X = lambda Y^(1/k) with Y ~ gamma(1 + 1/k, 1)
/// (x dx becomes y^(1/k) e^(-y) dy up to a constant); the stationary excess
/// (equilibrium residual) is such a draw (`rand_distr::Gamma`, shape from
/// 1.002 to 21) times an independent uniform on (0, 1). Its tail is
/// P(R > w) = E[(S - w)+] / m = Q(1 + 1/k, y) - (w / m) exp(-y), y = (w / lambda)^k,
/// Q the regularized upper incomplete gamma function (E\[S; S > w\] =
/// m Q(1 + 1/k, y)). As for the gamma law, the difference keeps an absolute
/// error near 1e-16 (clamped to [0, 1]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Weibull {
    mean: f64,  // > 0, finite
    shape: f64, // in [WEIBULL_SHAPE_MIN, WEIBULL_SHAPE_MAX]
    scale: f64, // > 0, finite
    cv: f64,    // from the shape by the formula above
    sampler: WeibullSampler<f64>,
    biased: GammaSampler<f64>, // gamma(1 + 1/k, 1): (X / lambda)^k of the length-biased law
}

/// ln(1 + cv^2) of a Weibull law of shape k: lnG(1 + 2/k) - 2 lnG(1 + 1/k).
fn log_one_plus_cv2(shape: f64) -> f64 {
    ln_gamma(1.0 + 2.0 / shape) - 2.0 * ln_gamma(1.0 + 1.0 / shape)
}

/// cv of a Weibull law of shape k.
pub fn weibull_cv_of_shape(shape: f64) -> f64 {
    log_one_plus_cv2(shape).exp_m1().sqrt()
}

/// Shape k of the Weibull law with the given cv, by bisection on ln k
/// (see [`Weibull`]); `None` when the cv lies outside the supported shapes.
pub fn weibull_shape_of_cv(cv: f64) -> Option<f64> {
    if !is_positive_finite(cv) {
        return None;
    }
    let target = (cv * cv).ln_1p();
    let (mut lo, mut hi) = (WEIBULL_SHAPE_MIN.ln(), WEIBULL_SHAPE_MAX.ln());
    // log_one_plus_cv2 falls as the shape grows: lo gives the largest cv. The
    // ends are widened by 1e-12 (relative) so that the cv of an end shape,
    // after rounding, still maps back to it.
    let largest = log_one_plus_cv2(WEIBULL_SHAPE_MIN) * (1.0 + 1e-12);
    let smallest = log_one_plus_cv2(WEIBULL_SHAPE_MAX) * (1.0 - 1e-12);
    if !(smallest..=largest).contains(&target) {
        return None;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if log_one_plus_cv2(mid.exp()) > target {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi - lo < 1e-14 {
            break;
        }
    }
    Some(
        (0.5 * (lo + hi))
            .exp()
            .clamp(WEIBULL_SHAPE_MIN, WEIBULL_SHAPE_MAX),
    )
}

impl Weibull {
    /// Builds the law from its mean (seconds, finite > 0) and cv, solving the shape.
    pub fn from_cv(mean: f64, cv: f64) -> Result<Self, LawError> {
        check_mean("weibull", mean)?;
        check_cv("weibull", cv)?;
        let shape = weibull_shape_of_cv(cv).ok_or(LawError::WeibullCv {
            value: cv,
            min: weibull_cv_of_shape(WEIBULL_SHAPE_MAX),
            max: weibull_cv_of_shape(WEIBULL_SHAPE_MIN),
            shape_min: WEIBULL_SHAPE_MIN,
            shape_max: WEIBULL_SHAPE_MAX,
        })?;
        let mut law = Self::from_shape(mean, shape)?;
        // Keep the cv as asked; the solved shape reproduces it to about 1e-13.
        law.cv = cv;
        Ok(law)
    }

    /// Builds the law from its mean (seconds, finite > 0) and shape k in
    /// [[`WEIBULL_SHAPE_MIN`], [`WEIBULL_SHAPE_MAX`]].
    pub fn from_shape(mean: f64, shape: f64) -> Result<Self, LawError> {
        check_mean("weibull", mean)?;
        if !is_positive_finite(shape) {
            return Err(LawError::Shape {
                law: "weibull",
                value: shape,
            });
        }
        if !(WEIBULL_SHAPE_MIN..=WEIBULL_SHAPE_MAX).contains(&shape) {
            return Err(LawError::WeibullShape {
                value: shape,
                shape_min: WEIBULL_SHAPE_MIN,
                shape_max: WEIBULL_SHAPE_MAX,
            });
        }
        let out_of_range = LawError::OutOfRange {
            law: "weibull",
            mean,
            what: "shape",
            value: shape,
        };
        let scale = mean * (-ln_gamma(1.0 + 1.0 / shape)).exp();
        if !is_positive_finite(scale) {
            return Err(out_of_range);
        }
        let sampler = WeibullSampler::new(scale, shape).map_err(|_| out_of_range.clone())?;
        let biased = GammaSampler::new(1.0 + 1.0 / shape, 1.0).map_err(|_| out_of_range)?;
        Ok(Weibull {
            mean,
            shape,
            scale,
            cv: weibull_cv_of_shape(shape),
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

    /// Shape k.
    pub fn shape(&self) -> f64 {
        self.shape
    }

    /// Scale lambda (seconds).
    pub fn scale(&self) -> f64 {
        self.scale
    }

    /// F(x) = 1 - exp(-(x / lambda)^k), as `-expm1(-(x / lambda)^k)`.
    pub fn cdf(&self, x: f64) -> f64 {
        if x.is_nan() {
            return f64::NAN;
        }
        if x <= 0.0 {
            return 0.0;
        }
        -(-(x / self.scale).powf(self.shape)).exp_m1()
    }

    /// The same shape with the mean multiplied by `factor` (finite, > 0).
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        let mut law = Self::from_shape(self.mean * factor, self.shape)?;
        law.cv = self.cv;
        Ok(law)
    }

    /// One draw: lambda (-ln U)^(1/k).
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }

    /// P(R > w) for the residual R: Q(1 + 1/k, y) - (w / m) exp(-y), y = (w / lambda)^k.
    pub fn residual_tail(&self, w: f64) -> f64 {
        if w.is_nan() {
            return f64::NAN;
        }
        if w <= 0.0 {
            return 1.0;
        }
        let y = (w / self.scale).powf(self.shape);
        if y == f64::INFINITY {
            return 0.0;
        }
        let q = statrs::function::gamma::checked_gamma_ur(1.0 + 1.0 / self.shape, y)
            .unwrap_or(f64::NAN);
        (q - w / self.mean * (-y).exp()).clamp(0.0, 1.0)
    }

    /// One residual draw: lambda Y^(1/k), Y ~ gamma(1 + 1/k, 1), times an
    /// independent uniform on (0, 1).
    #[inline]
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let y = self.biased.sample(rng);
        self.scale * y.powf(1.0 / self.shape) * super::open_unit(rng)
    }
}

/// The parameters of the weibull law as a scenario file writes them:
/// `{ law = "weibull", mean = "1m", cv = 0.8 }` or with `shape = 1.5` instead of the cv.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WeibullParams {
    /// Mean (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
    /// Coefficient of variation (or give the shape).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cv: Option<f64>,
    /// Shape k (or give the cv).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shape: Option<f64>,
}

impl WeibullParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Weibull, C::Error> {
        let mean = need_mean(c, "weibull", &self.mean)?;
        let made = match cv_or_shape(c, "weibull", self.cv, self.shape)? {
            CvOrShape::Cv(cv) => Weibull::from_cv(mean, cv),
            CvOrShape::Shape(shape) => Weibull::from_shape(mean, shape),
        };
        refused(c, made)
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Weibull) -> Self {
        WeibullParams {
            mean: seconds_amount(law.mean()),
            cv: None,
            shape: Some(law.shape()),
        }
    }
}

impl Weibull {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        format!(
            "weibull, mean {} s, cv {:.2} (shape {})",
            super::seconds(self.mean()),
            self.cv(),
            super::significant(self.shape(), 3)
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_parameters() {
        for bad in [f64::NAN, f64::INFINITY, -1.0, 0.0] {
            assert!(Weibull::from_cv(bad, 0.5).is_err(), "mean {bad} accepted");
            assert!(Weibull::from_cv(60.0, bad).is_err(), "cv {bad} accepted");
            assert!(
                Weibull::from_shape(60.0, bad).is_err(),
                "shape {bad} accepted"
            );
        }
        assert!(matches!(
            Weibull::from_shape(60.0, 0.01),
            Err(LawError::WeibullShape { .. })
        ));
        assert!(matches!(
            Weibull::from_cv(60.0, 1e-4),
            Err(LawError::WeibullCv { .. })
        ));
        assert!(matches!(
            Weibull::from_cv(60.0, 1e7),
            Err(LawError::WeibullCv { .. })
        ));
    }

    #[test]
    fn cv_range_message() {
        let msg = Weibull::from_cv(60.0, 1e-4).unwrap_err().to_string();
        assert!(
            msg.starts_with(
                "cv 0.0001 is outside the range weibull supports: it needs 0.00256 <= cv <= 371277"
            ),
            "{msg}"
        );
    }

    #[test]
    fn known_shapes() {
        // k = 1 is exponential (cv 1); k = 2 is Rayleigh with cv = sqrt(4/pi - 1)
        // (JKB vol. 1, ch. 21).
        assert!((weibull_cv_of_shape(1.0) - 1.0).abs() < 1e-13);
        let rayleigh_cv = (4.0 / std::f64::consts::PI - 1.0).sqrt();
        assert!((weibull_cv_of_shape(2.0) - rayleigh_cv).abs() < 1e-13);
        assert!((weibull_shape_of_cv(1.0).unwrap() - 1.0).abs() < 1e-12);
        assert!((weibull_shape_of_cv(rayleigh_cv).unwrap() - 2.0).abs() < 1e-12);
    }

    #[test]
    fn large_shape_cv_follows_the_series() {
        // lnG(1 + z) = -gamma z + sum_{j>=2} (-1)^j zeta(j) z^j / j (Abramowitz and
        // Stegun 6.1.33), so with e = 1/k:
        // ln(1 + cv^2) = zeta(2) e^2 - 2 zeta(3) e^3 + 3.5 zeta(4) e^4 + O(e^5).
        let z2 = std::f64::consts::PI.powi(2) / 6.0;
        let z3 = 1.202_056_903_159_594_3; // Apery's constant, recalled from handbook tables
        let z4 = std::f64::consts::PI.powi(4) / 90.0;
        for k in [200.0f64, 400.0, 500.0] {
            let e = 1.0 / k;
            let series = z2 * e * e - 2.0 * z3 * e.powi(3) + 3.5 * z4 * e.powi(4);
            let got = log_one_plus_cv2(k);
            // The first omitted term, 6 zeta(5) e^5, is below 1e-6 of the sum here.
            assert!(
                (got - series).abs() < 1e-6 * series,
                "k {k}: got {got}, series {series}"
            );
        }
    }

    #[test]
    fn round_trip_shape_cv() {
        for shape in [0.05, 0.3, 0.7, 1.0, 1.5, 3.6, 12.0, 100.0, 500.0] {
            let cv = weibull_cv_of_shape(shape);
            let back = weibull_shape_of_cv(cv).unwrap();
            assert!(
                (back - shape).abs() < 1e-10 * shape,
                "shape {shape} -> {back}"
            );
        }
    }
}
