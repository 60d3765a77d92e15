//! The two-phase hyperexponential law with balanced means, for cv >= 1.

use rand::Rng;
use rand_distr::{Distribution, Exp1};

use super::error::{LawError, check_mean};
use super::params::{LawContext, need_cv, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// Two-phase hyperexponential (H2) law with balanced means.
///
/// With probability p1 the time is exponential with mean m1, otherwise
/// exponential with mean m2. "Balanced means" fixes the third degree of
/// freedom by p1 m1 = p2 m2 (each phase carries half the mean).
///
/// # Formula
///
/// r = sqrt((cv^2 - 1) / (cv^2 + 1)), p1 = (1 + r) / 2, p2 = (1 - r) / 2,
/// m1 = m / (2 p1), m2 = m / (2 p2);
/// F(x) = p1 (1 - exp(-x / m1)) + p2 (1 - exp(-x / m2)).
/// Source: Whitt, "Approximating a point process by a renewal process, I:
/// two basic methods", Operations Research 30(1), 1982,; also
/// Allen, *Probability, Statistics, and Queueing Theory*, 2nd ed., 1990.
/// At cv = 1 both phases coincide and the law is exponential.
///
/// # Numerics
///
/// p2 is computed as 1 / ((cv^2 + 1)(1 + r)), which equals (1 - r) / 2
/// without the cancellation. The phase is chosen by comparing one raw 64-bit
/// word with the precomputed threshold p2 * 2^64 (performance shortcut: no
/// float conversion), then one ziggurat exponential is scaled by the phase
/// mean.
///
/// # Residual law
///
/// The stationary excess (equilibrium residual) of a mixture of exponentials
/// is again one: phase i with weight q_i = p_i m_i / m (its share of the
/// mean), then exponential with that phase's mean (an exponential's residual
/// is itself). With balanced means q1 = q2 = 1/2. P(R > w) =
/// q1 exp(-w / m1) + q2 exp(-w / m2). The phase is chosen by a raw 64-bit
/// word against q2 * 2^64, as in sampling.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hyperexponential {
    mean: f64,                 // > 0, finite
    cv: f64,                   // >= 1, finite
    p1: f64,                   // in [1/2, 1)
    p2: f64,                   // 1 - p1, computed without cancellation
    mean_1: f64,               // m / (2 p1), the shorter phase
    mean_2: f64,               // m / (2 p2), the longer phase, >= mean_1
    threshold_2: u64,          // p2 * 2^64, rounded down
    residual_q2: f64,          // p2 m2 / m, the longer phase's share of the mean (1/2)
    residual_threshold_2: u64, // residual_q2 * 2^64, rounded down
}

impl Hyperexponential {
    /// Builds the law from its mean (seconds, finite > 0) and cv (finite, >= 1).
    pub fn new(mean: f64, cv: f64) -> Result<Self, LawError> {
        check_mean("hyperexponential", mean)?;
        if !(1.0..f64::INFINITY).contains(&cv) {
            return Err(LawError::HyperexponentialCv { value: cv });
        }
        let c2 = cv * cv;
        let r = ((c2 - 1.0) / (c2 + 1.0)).sqrt();
        let p1 = 0.5 * (1.0 + r);
        let p2 = 1.0 / ((c2 + 1.0) * (1.0 + r));
        let mean_1 = mean / (2.0 * p1);
        let mean_2 = mean / (2.0 * p2);
        if !(c2.is_finite() && p2 > 0.0 && mean_1 > 0.0 && mean_2.is_finite()) {
            return Err(LawError::OutOfRange {
                law: "hyperexponential",
                mean,
                what: "cv",
                value: cv,
            });
        }
        // p2 <= 1/2, so p2 * 2^64 <= 2^63 fits; the cast rounds down.
        let threshold_2 = (p2 * 18_446_744_073_709_551_616.0) as u64;
        // Balanced means make this 1/2 up to rounding; the cast saturates
        // below 2^64 should rounding push it a hair over.
        let residual_q2 = (p2 * mean_2 / mean).clamp(0.0, 1.0);
        let residual_threshold_2 = (residual_q2 * 18_446_744_073_709_551_616.0) as u64;
        Ok(Hyperexponential {
            mean,
            cv,
            p1,
            p2,
            mean_1,
            mean_2,
            threshold_2,
            residual_q2,
            residual_threshold_2,
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

    /// The two phases as (probability, mean seconds), shorter phase first.
    pub fn phases(&self) -> [(f64, f64); 2] {
        [(self.p1, self.mean_1), (self.p2, self.mean_2)]
    }

    /// F(x) = p1 (1 - exp(-x / m1)) + p2 (1 - exp(-x / m2)).
    pub fn cdf(&self, x: f64) -> f64 {
        if x.is_nan() {
            return f64::NAN;
        }
        if x <= 0.0 {
            return 0.0;
        }
        -self.p1 * (-x / self.mean_1).exp_m1() - self.p2 * (-x / self.mean_2).exp_m1()
    }

    /// One draw: a raw 64-bit word picks the phase, a ziggurat exponential its length.
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let phase_mean = if rng.next_u64() < self.threshold_2 {
            self.mean_2
        } else {
            self.mean_1
        };
        let e: f64 = Exp1.sample(rng);
        e * phase_mean
    }

    /// P(R > w) for the residual R: q1 exp(-w / m1) + q2 exp(-w / m2).
    pub fn residual_tail(&self, w: f64) -> f64 {
        if w.is_nan() {
            return f64::NAN;
        }
        if w <= 0.0 {
            return 1.0;
        }
        let q2 = self.residual_q2;
        ((1.0 - q2) * (-w / self.mean_1).exp() + q2 * (-w / self.mean_2).exp()).clamp(0.0, 1.0)
    }

    /// One residual draw: a raw word picks the phase by its share of the
    /// mean, a ziggurat exponential its length.
    #[inline]
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let phase_mean = if rng.next_u64() < self.residual_threshold_2 {
            self.mean_2
        } else {
            self.mean_1
        };
        let e: f64 = Exp1.sample(rng);
        e * phase_mean
    }
}

/// The parameters of the hyperexponential law as a scenario file writes them:
/// `{ law = "hyperexponential", mean = "90s", cv = 1.8 }`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HyperexponentialParams {
    /// Mean (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
    /// Coefficient of variation.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cv: Option<f64>,
}

impl HyperexponentialParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Hyperexponential, C::Error> {
        let mean = need_mean(c, "hyperexponential", &self.mean)?;
        let cv = need_cv(c, "hyperexponential", self.cv)?;
        refused(c, Hyperexponential::new(mean, cv))
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Hyperexponential) -> Self {
        HyperexponentialParams {
            mean: seconds_amount(law.mean()),
            cv: Some(law.cv()),
        }
    }
}

impl Hyperexponential {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        format!(
            "hyperexponential, mean {} s, cv {:.2}",
            super::seconds(self.mean()),
            self.cv()
        )
    }

    /// The same law with its mean multiplied by `factor` and its shape kept.
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        Hyperexponential::new(self.mean() * factor, self.cv())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_parameters() {
        for bad in [f64::NAN, f64::INFINITY, -1.0, 0.0] {
            assert!(
                Hyperexponential::new(bad, 2.0).is_err(),
                "mean {bad} accepted"
            );
            assert!(
                Hyperexponential::new(60.0, bad).is_err(),
                "cv {bad} accepted"
            );
        }
        assert!(matches!(
            Hyperexponential::new(60.0, 1e200),
            Err(LawError::OutOfRange { .. })
        ));
    }

    #[test]
    fn cv_below_one_names_the_alternatives() {
        let msg = Hyperexponential::new(60.0, 0.5).unwrap_err().to_string();
        assert_eq!(
            msg,
            "cv 0.5 is impossible for hyperexponential: it needs cv >= 1 (use gamma or lognormal for cv < 1)"
        );
    }

    #[test]
    fn moments_and_balance() {
        // Mixture moments: E X = sum p_i m_i, E X^2 = sum 2 p_i m_i^2 (moments of an exponential mixture).
        for cv in [1.0, 1.5, 4.0, 1e3] {
            let law = Hyperexponential::new(120.0, cv).unwrap();
            let [(p1, m1), (p2, m2)] = law.phases();
            let ex = p1 * m1 + p2 * m2;
            let ex2 = 2.0 * (p1 * m1 * m1 + p2 * m2 * m2);
            let cv_back = (ex2 / (ex * ex) - 1.0).sqrt();
            assert!((ex - 120.0).abs() < 1e-9 * 120.0, "cv {cv}: mean {ex}");
            assert!((cv_back - cv).abs() < 1e-9 * cv, "cv {cv}: got {cv_back}");
            assert!(
                (p1 * m1 - p2 * m2).abs() < 1e-9 * 120.0,
                "means not balanced"
            );
        }
    }
}
