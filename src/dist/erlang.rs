//! The Erlang-k law: k exponential phases in series.

use rand::Rng;
use rand_distr::{Distribution, Exp1, Gamma};

use super::error::{LawError, check_mean, is_positive_finite};
use super::gamma::{gamma_residual_tail, regularized_lower_gamma};
use super::params::{LawContext, need_mean, refused, seconds_amount};
use crate::units::Amount;
use serde::{Deserialize, Serialize};

/// Largest k sampled as a plain sum of k exponential draws.
///
/// Performance shortcut: up to this many phases, summing k ziggurat
/// exponentials is faster than the Marsaglia-Tsang gamma sampler (which
/// needs a normal draw, a uniform and a logarithm per try).
pub const ERLANG_SUM_MAX_K: u32 = 8;

/// Erlang law: the sum of k independent exponential phases, each of mean m / k.
///
/// # Formula
///
/// F(x) = P(k, k x / m), the regularized lower incomplete gamma function;
/// mean m, cv 1 / sqrt(k) (A. K. Erlang; see Kleinrock, *Queueing Systems*
/// vol. 1, 1975, ch. 4, the method of stages).
///
/// # Numerics
///
/// For k <= [`ERLANG_SUM_MAX_K`] a draw is the sum of k ziggurat exponentials
/// times m / k; above that, `rand_distr::Gamma` (Marsaglia and Tsang, ACM TOMS
/// 26(3), 2000) with shape k and scale m / k.
///
/// # Residual law
///
/// The length-biased law of Erlang-k (gamma(k, m / k)) is gamma(k + 1, m / k);
/// the stationary excess (equilibrium residual) is a length-biased draw
/// (`rand_distr::Gamma`) times an independent uniform on (0, 1), and its tail
/// is the gamma law's (see [`super::Gamma`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Erlang {
    mean: f64,       // > 0, finite
    k: u32,          // >= 1
    phase_mean: f64, // mean / k, > 0
    sampler: ErlangSampler,
    biased: Gamma<f64>, // shape k + 1, scale mean / k: the length-biased law
}

#[derive(Debug, Clone, PartialEq)]
enum ErlangSampler {
    /// Sum of k exponentials (k <= ERLANG_SUM_MAX_K).
    Sum,
    /// Marsaglia-Tsang gamma with integer shape k.
    Gamma(Gamma<f64>),
}

impl Erlang {
    /// Builds the law from its mean (seconds, finite > 0) and number of phases k >= 1.
    pub fn new(mean: f64, k: u32) -> Result<Self, LawError> {
        check_mean("erlang", mean)?;
        if k == 0 {
            return Err(LawError::ErlangPhases);
        }
        let phase_mean = mean / f64::from(k);
        if !is_positive_finite(phase_mean) {
            return Err(LawError::OutOfRange {
                law: "erlang",
                mean,
                what: "k",
                value: f64::from(k),
            });
        }
        let biased =
            Gamma::new(f64::from(k) + 1.0, phase_mean).map_err(|_| LawError::OutOfRange {
                law: "erlang",
                mean,
                what: "k",
                value: f64::from(k),
            })?;
        let sampler = if k <= ERLANG_SUM_MAX_K {
            ErlangSampler::Sum
        } else {
            let g = Gamma::new(f64::from(k), phase_mean).map_err(|_| LawError::OutOfRange {
                law: "erlang",
                mean,
                what: "k",
                value: f64::from(k),
            })?;
            ErlangSampler::Gamma(g)
        };
        Ok(Erlang {
            mean,
            k,
            phase_mean,
            sampler,
            biased,
        })
    }

    /// Mean (seconds).
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Number of phases k.
    pub fn k(&self) -> u32 {
        self.k
    }

    /// Coefficient of variation 1 / sqrt(k).
    pub fn cv(&self) -> f64 {
        1.0 / f64::from(self.k).sqrt()
    }

    /// F(x) = P(k, x / (m / k)).
    pub fn cdf(&self, x: f64) -> f64 {
        regularized_lower_gamma(f64::from(self.k), x / self.phase_mean)
    }

    /// One draw (see the type's Numerics section).
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        match &self.sampler {
            ErlangSampler::Sum => {
                let mut total = 0.0;
                for _ in 0..self.k {
                    let e: f64 = Exp1.sample(rng);
                    total += e;
                }
                total * self.phase_mean
            }
            ErlangSampler::Gamma(g) => g.sample(rng),
        }
    }

    /// P(R > w) for the residual R: Q(k + 1, y) - (y / k) Q(k, y), y = w k / m.
    pub fn residual_tail(&self, w: f64) -> f64 {
        gamma_residual_tail(f64::from(self.k), w / self.phase_mean)
    }

    /// One residual draw: gamma(k + 1, m / k) times an independent uniform on (0, 1).
    #[inline]
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.biased.sample(rng) * super::open_unit(rng)
    }
}

/// The parameters of the erlang law as a scenario file writes them:
/// `{ law = "erlang", mean = "3m", k = 3 }`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ErlangParams {
    /// Mean (a duration).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean: Option<Amount>,
    /// Number of phases.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub k: Option<i64>,
}

impl ErlangParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Erlang, C::Error> {
        let mean = need_mean(c, "erlang", &self.mean)?;
        let k = self.k.ok_or_else(|| {
            c.invalid(
                None,
                "the erlang law needs its number of phases, like k = 3".into(),
            )
        })?;
        let k = c.count("k", k, 1, 1000)?;
        refused(c, Erlang::new(mean, k))
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Erlang) -> Self {
        ErlangParams {
            mean: seconds_amount(law.mean()),
            k: Some(i64::from(law.k())),
        }
    }
}

impl Erlang {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        let k = self.k();
        format!(
            "erlang with {k} phase{}, mean {} s, cv {:.2}",
            if k == 1 { "" } else { "s" },
            super::seconds(self.mean()),
            self.cv()
        )
    }

    /// The same law with its mean multiplied by `factor` and its shape kept.
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        Erlang::new(self.mean() * factor, self.k())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_parameters() {
        for bad in [f64::NAN, f64::INFINITY, -1.0, 0.0] {
            assert!(Erlang::new(bad, 2).is_err(), "mean {bad} accepted");
        }
        assert_eq!(Erlang::new(60.0, 0), Err(LawError::ErlangPhases));
        assert!(Erlang::new(60.0, u32::MAX).is_ok());
    }

    #[test]
    fn cv_is_one_over_root_k() {
        // Erlang-k cv = 1/sqrt(k) (Kleinrock vol. 1, ch. 4).
        let law = Erlang::new(60.0, 4).unwrap();
        assert_eq!(law.cv(), 0.5);
        assert_eq!(law.k(), 4);
    }

    #[test]
    fn erlang_two_cdf_matches_closed_form() {
        // Erlang-2 with rate l per phase: F(x) = 1 - exp(-l x)(1 + l x) (integrating the Erlang-2 density l^2 x exp(-l x)).
        let law = Erlang::new(10.0, 2).unwrap();
        let rate = 2.0f64 / 10.0;
        for x in [0.5f64, 3.0, 10.0, 40.0] {
            let expected = 1.0 - (-rate * x).exp() * (1.0 + rate * x);
            assert!((law.cdf(x) - expected).abs() < 1e-12, "x {x}");
        }
        assert_eq!(law.cdf(0.0), 0.0);
    }
}
