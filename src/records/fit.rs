//! The holding-time law of measured calls: mean, cv, percentiles and the
//! best fit among exponential, Erlang-k, gamma, lognormal, hyperexponential
//! and the empirical law, ranked by the Kolmogorov-Smirnov distance.
//!
//! # Memory
//!
//! [`HoldingSample`] keeps running moments (Welford's updates, Welford 1962)
//! of the holding times and of their logarithms, and a reservoir sample of
//! fixed size drawn by Algorithm R (Vitter, "Random sampling with a
//! reservoir", ACM TOMS 11(1), 1985): every value read has the same chance
//! of being in it, whatever the file's length. Moments and maximum-likelihood
//! fits use every value; percentiles, the Kolmogorov-Smirnov distances and the
//! empirical law use the reservoir (all values when there are fewer).
//!
//! # Fits
//!
//! | law | method |
//! | --- | --- |
//! | exponential | maximum likelihood: mean = sample mean |
//! | Erlang-k | k = round(1/cv^2) (at least 1), then maximum likelihood for the rate given k: mean = sample mean |
//! | gamma | maximum likelihood: shape k solves ln k - digamma(k) = ln(mean) - mean(ln x) (Choi and Wette 1969), mean = sample mean |
//! | lognormal | maximum likelihood: mu = mean(ln x), sigma^2 = mean((ln x - mu)^2) |
//! | hyperexponential | moments (two phases, balanced means), only when cv > 1 |
//! | empirical | the data itself ([`crate::dist::Law::empirical`] on the reservoir) |
//!
//! Gamma and lognormal are fitted to the values above zero (a zero holding
//! time has no logarithm); their count is reported.
//!
//! # Acceptance
//!
//! A parametric law *fits* when its Kolmogorov-Smirnov distance D to the
//! sample is below the 1% critical value 1.628 / sqrt(n) of the asymptotic
//! Kolmogorov distribution (Kolmogorov 1933; Smirnov 1948), n the sample
//! size. The parameters come from the same data, which makes the test
//! lenient (Lilliefors 1967): a law that fails it surely does not fit. When
//! no parametric law fits, the empirical law is recommended.

use crate::dist::Law;
use rand::{RngExt, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// Reservoir size: holding times kept for percentiles, the KS distances and
/// the empirical law.
pub const RESERVOIR_SIZE: usize = 100_000;

/// Fixed seed of the reservoir sampling, so that a file always gives the
/// same figures.
pub const RESERVOIR_SEED: u64 = 0x5EED_CA11;

/// Asymptotic 1% critical value of the Kolmogorov distribution:
/// P(sqrt(n) D > 1.628) = 0.01 (Kolmogorov 1933; checked in the tests
/// against the series 1 - 2 sum (-1)^(k-1) exp(-2 k^2 x^2)).
pub const KS_CRITICAL_1PCT: f64 = 1.628;

/// Largest Erlang k fitted (cv down to about 0.03).
pub const ERLANG_MAX_K: u32 = 1000;

/// Percentiles reported.
pub const PERCENTILES: [f64; 5] = [0.5, 0.75, 0.9, 0.95, 0.99];

/// Running moments by Welford's method.
#[derive(Debug, Clone, Copy, Default)]
struct Moments {
    n: u64,
    mean: f64,
    m2: f64,
}

impl Moments {
    fn add(&mut self, x: f64) {
        self.n += 1;
        let d = x - self.mean;
        self.mean += d / self.n as f64;
        self.m2 += d * (x - self.mean);
    }

    /// Sample variance (n - 1 divisor).
    fn variance(&self) -> f64 {
        if self.n < 2 {
            0.0
        } else {
            self.m2 / (self.n - 1) as f64
        }
    }
}

/// Holding times of answered calls, kept in fixed memory.
#[derive(Debug, Clone)]
pub struct HoldingSample {
    all: Moments,
    logs: Moments, // of ln x over x > 0
    positive: Moments,
    min: f64,
    max: f64,
    reservoir: Vec<f64>,
    capacity: usize,
    rng: Xoshiro256PlusPlus,
}

impl HoldingSample {
    /// An empty sample with a reservoir of `capacity` values (at least 1).
    pub fn new(capacity: usize, seed: u64) -> Self {
        HoldingSample {
            all: Moments::default(),
            logs: Moments::default(),
            positive: Moments::default(),
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            reservoir: Vec::with_capacity(capacity.clamp(1, 1 << 20)),
            capacity: capacity.max(1),
            rng: Xoshiro256PlusPlus::seed_from_u64(seed),
        }
    }

    /// Add one holding time (s, finite, >= 0). Algorithm R: the i-th value
    /// (0-based) replaces a random slot with chance capacity / (i + 1).
    pub fn add(&mut self, x: f64) {
        debug_assert!(x >= 0.0 && x.is_finite());
        let i = self.all.n;
        self.all.add(x);
        if x > 0.0 {
            self.positive.add(x);
            self.logs.add(x.ln());
        }
        self.min = self.min.min(x);
        self.max = self.max.max(x);
        if self.reservoir.len() < self.capacity {
            self.reservoir.push(x);
        } else {
            let j = self.rng.random_range(0..=i);
            if (j as usize) < self.capacity {
                self.reservoir[j as usize] = x;
            }
        }
    }

    /// Number of values added.
    pub fn count(&self) -> u64 {
        self.all.n
    }

    /// Statistics and fitted laws (see the module doc). Fails only when no
    /// law can be built: no value, or every value 0.
    pub fn summarise(&self) -> Result<HoldingSummary, String> {
        let n = self.all.n;
        if n == 0 {
            return Err("no answered call to measure holding times from".into());
        }
        let mean = self.all.mean;
        if mean.is_nan() || mean <= 0.0 {
            return Err(format!("all {n} answered calls have a holding time of 0 s"));
        }
        let cv = self.all.variance().sqrt() / mean;
        let mut sorted = self.reservoir.clone();
        sorted.sort_by(f64::total_cmp);
        let percentiles = PERCENTILES
            .iter()
            .map(|&p| (p, hazen_quantile(&sorted, p)))
            .collect();
        let mut fits = Vec::new();
        let mut push = |law: Result<Law, crate::dist::LawError>, method: &'static str| {
            if let Ok(law) = law {
                let d = ks_distance(&sorted, |x| law.cdf(x));
                fits.push(Fit {
                    law,
                    method,
                    ks_distance: d,
                    acceptable: false,
                });
            }
        };
        if n >= 2 && cv > 0.0 {
            push(Law::exponential(mean), "maximum likelihood");
            let k = (1.0 / (cv * cv))
                .round()
                .clamp(1.0, f64::from(ERLANG_MAX_K)) as u32;
            push(
                Law::erlang(mean, k),
                "k = round(1/cv^2), rate by maximum likelihood",
            );
            let pos = self.positive;
            if pos.n >= 2 {
                let s = pos.mean.ln() - self.logs.mean;
                if let Some(shape) = gamma_shape_mle(s) {
                    push(Law::gamma_shape(pos.mean, shape), "maximum likelihood");
                }
                let sigma2 = self.logs.m2 / self.logs.n as f64;
                if sigma2 > 0.0 {
                    let m = (self.logs.mean + sigma2 / 2.0).exp();
                    let c = sigma2.exp_m1().sqrt();
                    push(Law::lognormal(m, c), "maximum likelihood");
                }
            }
            if cv > 1.0 {
                push(Law::hyperexponential(mean, cv), "moments (balanced means)");
            }
        }
        let critical = KS_CRITICAL_1PCT / (sorted.len() as f64).sqrt();
        for f in &mut fits {
            f.acceptable = f.ks_distance < critical;
        }
        fits.sort_by(|a, b| a.ks_distance.total_cmp(&b.ks_distance));
        let empirical_law = Law::empirical(sorted.clone()).map_err(|e| e.to_string())?;
        let empirical_d = ks_distance(&sorted, |x| empirical_law.cdf(x));
        let best = fits.first().filter(|f| f.acceptable).map(|f| f.law.clone());
        fits.push(Fit {
            law: empirical_law.clone(),
            method: "the data itself",
            ks_distance: empirical_d,
            acceptable: true,
        });
        Ok(HoldingSummary {
            count: n,
            zeros: n - self.positive.n,
            mean_s: mean,
            cv,
            min_s: self.min,
            max_s: self.max,
            percentiles,
            sample_size: sorted.len(),
            ks_critical: critical,
            fits,
            recommended: best.clone().unwrap_or(empirical_law),
            parametric_fits: best.is_some(),
        })
    }
}

/// One fitted law.
#[derive(Debug, Clone, PartialEq)]
pub struct Fit {
    /// The fitted law.
    pub law: Law,
    /// How its parameters were found.
    pub method: &'static str,
    /// Kolmogorov-Smirnov distance to the sample.
    pub ks_distance: f64,
    /// Below the 1% critical value (always true for the empirical law).
    pub acceptable: bool,
}

/// Holding-time statistics of the answered calls.
#[derive(Debug, Clone, PartialEq)]
pub struct HoldingSummary {
    /// Values measured.
    pub count: u64,
    /// Of which exactly 0 s.
    pub zeros: u64,
    /// Mean (s), over every value.
    pub mean_s: f64,
    /// Coefficient of variation (sample standard deviation / mean).
    pub cv: f64,
    /// Shortest (s).
    pub min_s: f64,
    /// Longest (s).
    pub max_s: f64,
    /// (share, seconds) pairs, Hazen's definition on the reservoir.
    pub percentiles: Vec<(f64, f64)>,
    /// Values in the reservoir (the KS sample size n).
    pub sample_size: usize,
    /// The 1% critical KS distance 1.628 / sqrt(n).
    pub ks_critical: f64,
    /// Parametric fits from best to worst KS distance, then the empirical law.
    pub fits: Vec<Fit>,
    /// The best acceptable parametric law, or else the empirical law.
    pub recommended: Law,
    /// Whether some parametric law fits.
    pub parametric_fits: bool,
}

/// Maximum-likelihood gamma shape from s = ln(mean) - mean(ln x) > 0: the
/// root of ln k - digamma(k) = s (Choi and Wette, Technometrics 11(4), 1969).
/// The left side falls strictly from +inf to 0 as k grows, so bisection on
/// ln k in [1e-4, 1e8] finds the unique root to full precision. `None` when
/// s is not > 0 (all values equal) or the root lies outside that range.
pub fn gamma_shape_mle(s: f64) -> Option<f64> {
    use statrs::function::gamma::digamma;
    if !(s > 0.0 && s.is_finite()) {
        return None;
    }
    let f = |ln_k: f64| ln_k - digamma(ln_k.exp()) - s;
    let (mut lo, mut hi) = (1e-4f64.ln(), 1e8f64.ln());
    if f(lo) < 0.0 || f(hi) > 0.0 {
        return None;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi - lo < 1e-15 {
            break;
        }
    }
    Some((0.5 * (lo + hi)).exp())
}

/// Kolmogorov-Smirnov distance D = sup |F_n(x) - F(x)| between the sample
/// (sorted ascending) and a continuous distribution function `cdf`:
/// D = max over i of max(i/n - F(x_i), F(x_i) - (i-1)/n), 1-based i
/// (exact for ties too, since F_n jumps there). 1 for an empty sample.
pub fn ks_distance(sorted: &[f64], cdf: impl Fn(f64) -> f64) -> f64 {
    if sorted.is_empty() {
        return 1.0;
    }
    let n = sorted.len() as f64;
    let mut d = 0.0f64;
    for (i, &x) in sorted.iter().enumerate() {
        let f = cdf(x);
        d = d.max((i + 1) as f64 / n - f).max(f - i as f64 / n);
    }
    d
}

/// Sample quantile of sorted data by Hazen's definition (Hyndman and Fan
/// 1996, type 5): x(i) at probability (i - 1/2)/n, linear between; the same
/// rule as the empirical law's.
pub fn hazen_quantile(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    if n == 0 {
        return f64::NAN;
    }
    let t = (p * n as f64 - 0.5).clamp(0.0, (n - 1) as f64);
    let i = (t as usize).min(n - 1);
    let j = (i + 1).min(n - 1);
    sorted[i] + (t - i as f64) * (sorted[j] - sorted[i])
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The Kolmogorov distribution P(K <= x) = 1 - 2 sum_{k>=1} (-1)^(k-1)
    /// exp(-2 k^2 x^2) (Kolmogorov 1933) at 1.628 is 0.99 to three places.
    #[test]
    fn critical_value_is_the_one_percent_point() {
        let x = KS_CRITICAL_1PCT;
        let tail: f64 = (1..100)
            .map(|k| {
                let k = f64::from(k);
                (if k as u32 % 2 == 1 { 1.0 } else { -1.0 }) * (-2.0 * k * k * x * x).exp()
            })
            .sum::<f64>()
            * 2.0;
        assert!((tail - 0.01).abs() < 1e-4, "tail {tail}");
    }

    #[test]
    fn gamma_shape_solves_the_likelihood_equation() {
        use statrs::function::gamma::digamma;
        for k in [0.3, 1.0, 2.5, 40.0, 3000.0] {
            let s = f64::ln(k) - digamma(k);
            let got = gamma_shape_mle(s).unwrap();
            assert!((got / k - 1.0).abs() < 1e-9, "k {k}: {got}");
        }
        assert_eq!(gamma_shape_mle(0.0), None);
        assert_eq!(gamma_shape_mle(f64::NAN), None);
    }

    #[test]
    fn ks_distance_of_a_known_sample() {
        // Uniform cdf on [0,1]; sample {0.1, 0.5, 0.9}: D = max(1/3-0.1,
        // 0.5-1/3, 2/3-0.5, 0.9-2/3, 1-0.9) = 0.2333... (by hand).
        let d = ks_distance(&[0.1, 0.5, 0.9], |x| x.clamp(0.0, 1.0));
        assert!((d - (0.9 - 2.0 / 3.0)).abs() < 1e-12);
        // Ties: {0.5, 0.5}: F_n jumps from 0 to 1 at 0.5; D = 0.5.
        assert_eq!(ks_distance(&[0.5, 0.5], |x| x), 0.5);
    }

    #[test]
    fn reservoir_is_uniform_and_bounded() {
        // Algorithm R keeps each of N values with chance k/N. Over 2000
        // values with k = 100, the count kept from the first half is
        // hypergeometric: mean 50, sd sqrt(100 * 0.5 * 0.5 * 1900/1999) = 4.87.
        let mut s = HoldingSample::new(100, 1);
        for i in 0..2000 {
            s.add(f64::from(i));
        }
        assert_eq!(s.reservoir.len(), 100);
        let first_half = s.reservoir.iter().filter(|&&x| x < 1000.0).count() as f64;
        assert!((first_half - 50.0).abs() < 4.0 * 4.87, "{first_half}");
        assert_eq!(s.count(), 2000);
    }

    #[test]
    fn quantiles_match_the_empirical_law() {
        let v = [1.0, 2.0, 4.0, 8.0];
        assert_eq!(hazen_quantile(&v, 0.5), 3.0);
        assert_eq!(hazen_quantile(&v, 0.0), 1.0);
        assert_eq!(hazen_quantile(&v, 1.0), 8.0);
        let law = Law::empirical(v.to_vec()).unwrap();
        for p in [0.2, 0.5, 0.7] {
            assert!((law.cdf(hazen_quantile(&v, p)) - p).abs() < 1e-12);
        }
    }

    #[test]
    fn nothing_to_fit() {
        assert!(HoldingSample::new(10, 1).summarise().is_err());
        let mut s = HoldingSample::new(10, 1);
        s.add(0.0);
        assert!(s.summarise().unwrap_err().contains("0 s"));
        let mut s = HoldingSample::new(10, 1);
        s.add(60.0);
        let h = s.summarise().unwrap();
        assert!(!h.parametric_fits && h.recommended.name() == "empirical");
    }
}
