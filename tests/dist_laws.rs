//! The laws of `busyhour::dist` against the outside world.
//!
//! * Kolmogorov-Smirnov tests: n = 20,000 draws at a fixed seed against the
//!   law's published distribution function, taken from `statrs` with
//!   parameters computed here from the textbook formulas (not from the
//!   law's own fields). The critical value is the asymptotic Kolmogorov one
//!   at alpha = 0.001: c / sqrt(n) with c = sqrt(-ln(alpha / 2) / 2) = 1.9495,
//!   rounded down to 1.949.
//! * Moment tests: 200,000 draws; the sample mean must lie within 5 standard
//!   errors of the requested mean (SE = sigma / sqrt(n)) and the sample cv
//!   within 5 standard errors of the requested cv, where the cv's standard
//!   error comes from the first-order delta method applied to s / x-bar:
//!   Var(cv-hat) = (cv^2 / n) ((kappa - 1) / 4 + cv^2 - gamma1 cv),
//!   gamma1 the skewness and kappa the (non-excess) kurtosis of the law (for
//!   a normal law this is the familiar cv^2 (1/2 + cv^2) / n). The skewness
//!   and kurtosis come from each law's published moments, named at each case.
//! * Law::cdf against the statrs distribution function at fixed points.
//!
//! Every seed is fixed, so each test is deterministic and can fail.

use busyhour::dist::Law;
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;
use statrs::distribution::{self as sd, ContinuousCDF};
use statrs::function::gamma::gamma as gamma_fn;
use statrs::statistics::Distribution as _;

const KS_N: usize = 20_000;
const MOMENT_N: usize = 200_000;

/// Asymptotic Kolmogorov critical value at alpha = 0.001 for n draws.
fn ks_critical(n: usize) -> f64 {
    1.949 / (n as f64).sqrt()
}

fn draws(law: &Law, seed: u64, n: usize) -> Vec<f64> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    (0..n).map(|_| law.sample(&mut rng)).collect()
}

/// sup |F_n - F| over the line, for sorted draws; `cdf_left(x)` is P(X < x)
/// (equal to `cdf(x)` for a continuous law). Ties are handled by comparing
/// both one-sided limits at each distinct value.
fn ks_statistic(sorted: &[f64], cdf: impl Fn(f64) -> f64, cdf_left: impl Fn(f64) -> f64) -> f64 {
    let n = sorted.len() as f64;
    let mut d: f64 = 0.0;
    let mut i = 0;
    while i < sorted.len() {
        let x = sorted[i];
        let mut j = i;
        while j < sorted.len() && sorted[j] == x {
            j += 1;
        }
        d = d
            .max((j as f64 / n - cdf(x)).abs())
            .max((i as f64 / n - cdf_left(x)).abs());
        i = j;
    }
    d
}

/// KS test of `law` against a continuous reference distribution function.
fn ks_continuous(law: &Law, seed: u64, reference: impl Fn(f64) -> f64) {
    let mut x = draws(law, seed, KS_N);
    assert!(
        x.iter().all(|v| v.is_finite() && *v >= 0.0),
        "{}",
        law.describe()
    );
    x.sort_by(f64::total_cmp);
    let d = ks_statistic(&x, &reference, &reference);
    let crit = ks_critical(KS_N);
    assert!(
        d < crit,
        "{}: KS distance {d:.5} >= critical {crit:.5} (alpha 0.001)",
        law.describe()
    );
}

/// Shape-free moments of a law: skewness gamma1 and kurtosis kappa (non-excess).
struct Shape {
    skewness: f64,
    kurtosis: f64,
}

/// Skewness and kurtosis from the first four raw moments.
fn shape_from_raw(m1: f64, m2: f64, m3: f64, m4: f64) -> Shape {
    let var = m2 - m1 * m1;
    let mu3 = m3 - 3.0 * m1 * m2 + 2.0 * m1.powi(3);
    let mu4 = m4 - 4.0 * m1 * m3 + 6.0 * m1 * m1 * m2 - 3.0 * m1.powi(4);
    Shape {
        skewness: mu3 / var.powf(1.5),
        kurtosis: mu4 / (var * var),
    }
}

/// Moment test of `law` for the requested mean and cv.
fn moments(law: &Law, seed: u64, mean: f64, cv: f64, shape: Shape) {
    let x = draws(law, seed, MOMENT_N);
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    let var = x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0);
    let cv_hat = var.sqrt() / m;
    let se_mean = mean * cv / n.sqrt();
    let var_cv = cv * cv / n * ((shape.kurtosis - 1.0) / 4.0 + cv * cv - shape.skewness * cv);
    let se_cv = var_cv.sqrt();
    assert!(
        (m - mean).abs() < 5.0 * se_mean,
        "{}: sample mean {m} vs {mean} (5 SE = {})",
        law.describe(),
        5.0 * se_mean
    );
    assert!(
        (cv_hat - cv).abs() < 5.0 * se_cv,
        "{}: sample cv {cv_hat} vs {cv} (5 SE = {})",
        law.describe(),
        5.0 * se_cv
    );
}

/// Law::cdf against a reference at a spread of points.
fn cdf_agrees(law: &Law, reference: impl Fn(f64) -> f64) {
    let mean = law.mean();
    for f in [0.001, 0.05, 0.3, 0.7, 1.0, 1.6, 3.0, 8.0, 30.0] {
        let x = f * mean;
        let (got, want) = (law.cdf(x), reference(x));
        assert!(
            (got - want).abs() < 1e-9,
            "{}: cdf({x}) = {got}, reference {want}",
            law.describe()
        );
    }
    assert_eq!(law.cdf(-1.0), 0.0);
    assert!(law.cdf(f64::NAN).is_nan());
}

/// The statrs reference's own mean and cv must be the requested ones, so the
/// parameter mapping in these tests is checked too.
fn reference_moments(d: &impl statrs::statistics::Distribution<f64>, mean: f64, cv: f64) {
    let (m, s) = (d.mean().unwrap(), d.std_dev().unwrap());
    assert!(
        (m - mean).abs() < 1e-9 * mean,
        "reference mean {m} vs {mean}"
    );
    assert!(
        (s / m - cv).abs() < 1e-9 * cv.max(1.0),
        "reference cv {} vs {cv}",
        s / m
    );
}

// ---------------------------------------------------------------- exponential

#[test]
fn exponential_against_statrs() {
    // F(x) = 1 - exp(-x / m): statrs Exp with rate 1 / m.
    let mean = 180.0;
    let law = Law::exponential(mean).unwrap();
    let reference = sd::Exp::new(1.0 / mean).unwrap();
    reference_moments(&reference, mean, 1.0);
    assert_eq!((law.mean(), law.cv()), (mean, 1.0));
    ks_continuous(&law, 101, |x| reference.cdf(x));
    cdf_agrees(&law, |x| reference.cdf(x));
    // Exponential: skewness 2, kurtosis 9 (JKB vol. 1, ch. 19).
    moments(
        &law,
        201,
        mean,
        1.0,
        Shape {
            skewness: 2.0,
            kurtosis: 9.0,
        },
    );
}

// ---------------------------------------------------------------- erlang

/// Erlang-k / gamma with shape a: skewness 2 / sqrt(a), kurtosis 3 + 6 / a
/// (JKB vol. 1, ch. 17).
fn gamma_shape_moments(a: f64) -> Shape {
    Shape {
        skewness: 2.0 / a.sqrt(),
        kurtosis: 3.0 + 6.0 / a,
    }
}

#[test]
fn erlang_against_statrs() {
    // k = 3 uses the sum of exponentials, k = 20 the gamma sampler.
    for (k, seed) in [(1u32, 110u64), (3, 111), (8, 112), (20, 113)] {
        let mean = 180.0;
        let law = Law::erlang(mean, k).unwrap();
        let cv = 1.0 / f64::from(k).sqrt();
        // statrs Erlang(shape k, rate k / m).
        let reference = sd::Erlang::new(u64::from(k), f64::from(k) / mean).unwrap();
        reference_moments(&reference, mean, cv);
        assert!((law.cv() - cv).abs() < 1e-15);
        ks_continuous(&law, seed, |x| reference.cdf(x));
        cdf_agrees(&law, |x| reference.cdf(x));
        moments(
            &law,
            seed + 100,
            mean,
            cv,
            gamma_shape_moments(f64::from(k)),
        );
    }
}

// ---------------------------------------------------------------- gamma

#[test]
fn gamma_against_statrs() {
    // shape a = 1 / cv^2, rate a / m. cv 2 exercises the a < 1 boost step.
    for (mean, cv, seed) in [(6.0, 0.5, 120u64), (40.0, 2.0, 121), (300.0, 0.1, 122)] {
        let law = Law::gamma(mean, cv).unwrap();
        let a = 1.0 / (cv * cv);
        let reference = sd::Gamma::new(a, a / mean).unwrap();
        reference_moments(&reference, mean, cv);
        assert!((law.cv() - cv).abs() < 1e-12);
        ks_continuous(&law, seed, |x| reference.cdf(x));
        cdf_agrees(&law, |x| reference.cdf(x));
        moments(&law, seed + 100, mean, cv, gamma_shape_moments(a));
    }
}

#[test]
fn gamma_from_shape_against_statrs() {
    let (mean, a) = (75.0, 7.3);
    let law = Law::gamma_shape(mean, a).unwrap();
    let reference = sd::Gamma::new(a, a / mean).unwrap();
    reference_moments(&reference, mean, 1.0 / a.sqrt());
    ks_continuous(&law, 123, |x| reference.cdf(x));
    cdf_agrees(&law, |x| reference.cdf(x));
}

// ---------------------------------------------------------------- lognormal

#[test]
fn lognormal_against_statrs() {
    for (mean, cv, seed) in [(180.0, 1.1, 130u64), (45.0, 0.3, 131), (600.0, 3.0, 132)] {
        let law = Law::lognormal(mean, cv).unwrap();
        // JKB vol. 1, ch. 14: sigma^2 = ln(1 + cv^2), mu = ln m - sigma^2 / 2.
        let s2 = (1.0f64 + cv * cv).ln();
        let mu = f64::ln(mean) - s2 / 2.0;
        let reference = sd::LogNormal::new(mu, s2.sqrt()).unwrap();
        reference_moments(&reference, mean, cv);
        ks_continuous(&law, seed, |x| reference.cdf(x));
        cdf_agrees(&law, |x| reference.cdf(x));
        // Lognormal with w = exp(sigma^2): skewness (w + 2) sqrt(w - 1),
        // kurtosis w^4 + 2 w^3 + 3 w^2 - 3 (JKB vol. 1, ch. 14).
        let w = s2.exp();
        let shape = Shape {
            skewness: (w + 2.0) * (w - 1.0).sqrt(),
            kurtosis: w.powi(4) + 2.0 * w.powi(3) + 3.0 * w * w - 3.0,
        };
        if cv <= 1.1 {
            // For cv 3 the kurtosis (about 1e8) makes a 200,000-draw cv check
            // meaningless; the KS test covers that law.
            moments(&law, seed + 100, mean, cv, shape);
        }
    }
}

// ---------------------------------------------------------------- hyperexponential

/// The balanced-means H2 parameters, written out from Whitt (1982):
/// p1 = (1 + sqrt((c^2 - 1)/(c^2 + 1))) / 2, rate_i = 2 p_i / m.
fn balanced_h2(mean: f64, cv: f64) -> (f64, f64, f64, f64) {
    let c2 = cv * cv;
    let p1 = 0.5 * (1.0 + ((c2 - 1.0) / (c2 + 1.0)).sqrt());
    let p2 = 1.0 - p1;
    (p1, 2.0 * p1 / mean, p2, 2.0 * p2 / mean)
}

#[test]
fn hyperexponential_against_mixture_of_statrs_exponentials() {
    for (mean, cv, seed) in [(60.0, 1.0, 140u64), (60.0, 2.0, 141), (200.0, 5.0, 142)] {
        let law = Law::hyperexponential(mean, cv).unwrap();
        let (p1, r1, p2, r2) = balanced_h2(mean, cv);
        let (e1, e2) = (sd::Exp::new(r1).unwrap(), sd::Exp::new(r2).unwrap());
        let mixture = |x: f64| p1 * e1.cdf(x) + p2 * e2.cdf(x);
        ks_continuous(&law, seed, mixture);
        cdf_agrees(&law, mixture);
        // Mixture raw moments E X^j = sum p_i j! / rate_i^j.
        let raw = |j: i32, fact: f64| fact * (p1 / r1.powi(j) + p2 / r2.powi(j));
        let (m1, m2, m3, m4) = (raw(1, 1.0), raw(2, 2.0), raw(3, 6.0), raw(4, 24.0));
        assert!((m1 - mean).abs() < 1e-9 * mean);
        assert!(((m2 / (m1 * m1) - 1.0).sqrt() - cv).abs() < 1e-9 * cv);
        moments(&law, seed + 100, mean, cv, shape_from_raw(m1, m2, m3, m4));
    }
}

// ---------------------------------------------------------------- deterministic

#[test]
fn deterministic_is_constant() {
    let law = Law::deterministic(90.0).unwrap();
    let x = draws(&law, 150, KS_N);
    assert!(x.iter().all(|&v| v == 90.0));
    assert_eq!((law.mean(), law.cv()), (90.0, 0.0));
    assert_eq!(law.cdf(89.9), 0.0);
    assert_eq!(law.cdf(90.0), 1.0);
}

// ---------------------------------------------------------------- uniform

#[test]
fn uniform_against_statrs() {
    let max_cv = 1.0 / 3f64.sqrt();
    for (mean, cv, seed) in [(100.0, 0.2, 160u64), (30.0, max_cv, 161)] {
        let law = Law::uniform(mean, cv).unwrap();
        // Width w with w^2 / 12 = (m cv)^2 (JKB vol. 2, ch. 26).
        let h = mean * cv * 3f64.sqrt();
        let reference = sd::Uniform::new((mean - h).max(0.0), mean + h).unwrap();
        reference_moments(&reference, mean, cv);
        ks_continuous(&law, seed, |x| reference.cdf(x));
        cdf_agrees(&law, |x| reference.cdf(x));
        // Uniform: skewness 0, kurtosis 9/5.
        moments(
            &law,
            seed + 100,
            mean,
            cv,
            Shape {
                skewness: 0.0,
                kurtosis: 1.8,
            },
        );
    }
}

// ---------------------------------------------------------------- weibull

/// Weibull raw moments E X^j = lambda^j G(1 + j/k) (JKB vol. 1, ch. 21).
fn weibull_shape_moments(k: f64) -> Shape {
    let g = |j: f64| gamma_fn(1.0 + j / k);
    shape_from_raw(g(1.0), g(2.0), g(3.0), g(4.0))
}

/// The Weibull shape for a cv, solved here independently: bisection on k
/// with the gamma function itself (not its logarithm).
fn weibull_shape_by_bisection(cv: f64) -> f64 {
    let cv_of = |k: f64| (gamma_fn(1.0 + 2.0 / k) / gamma_fn(1.0 + 1.0 / k).powi(2) - 1.0).sqrt();
    let (mut lo, mut hi) = (0.2f64, 50.0f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if cv_of(mid) > cv {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

#[test]
fn weibull_against_statrs() {
    for (mean, cv, seed) in [(100.0, 0.5, 170u64), (100.0, 1.0, 171), (240.0, 2.5, 172)] {
        let law = Law::weibull(mean, cv).unwrap();
        let k = weibull_shape_by_bisection(cv);
        let scale = mean / gamma_fn(1.0 + 1.0 / k);
        let reference = sd::Weibull::new(k, scale).unwrap();
        reference_moments(&reference, mean, cv);
        let Law::Weibull(w) = &law else {
            panic!("not weibull")
        };
        assert!(
            (w.shape() - k).abs() < 1e-9 * k,
            "shape {} vs {k}",
            w.shape()
        );
        ks_continuous(&law, seed, |x| reference.cdf(x));
        cdf_agrees(&law, |x| reference.cdf(x));
        moments(&law, seed + 100, mean, cv, weibull_shape_moments(k));
    }
}

#[test]
fn weibull_from_shape_against_statrs() {
    let (mean, k) = (50.0, 0.7);
    let law = Law::weibull_shape(mean, k).unwrap();
    let reference = sd::Weibull::new(k, mean / gamma_fn(1.0 + 1.0 / k)).unwrap();
    let cv = reference.std_dev().unwrap() / reference.mean().unwrap();
    assert!((law.cv() - cv).abs() < 1e-9);
    ks_continuous(&law, 173, |x| reference.cdf(x));
    cdf_agrees(&law, |x| reference.cdf(x));
    moments(&law, 273, mean, cv, weibull_shape_moments(k));
}

// ---------------------------------------------------------------- empirical

/// The Hyndman-Fan type 5 law written independently, as a mixture of pieces:
/// a point mass 1/(2n) on the smallest and on the largest value, and mass 1/n
/// spread uniformly over each gap between neighbouring order statistics (a
/// point mass where the gap is empty).
struct Pieces {
    atoms: Vec<(f64, f64)>,      // (value, mass)
    spans: Vec<(f64, f64, f64)>, // (from, to, mass), from < to
}

impl Pieces {
    fn new(data: &[f64]) -> Pieces {
        let mut x = data.to_vec();
        x.sort_by(f64::total_cmp);
        let n = x.len() as f64;
        let mut atoms = vec![(x[0], 0.5 / n), (x[x.len() - 1], 0.5 / n)];
        let mut spans = Vec::new();
        for w in x.windows(2) {
            if w[1] > w[0] {
                spans.push((w[0], w[1], 1.0 / n));
            } else {
                atoms.push((w[0], 1.0 / n));
            }
        }
        Pieces { atoms, spans }
    }

    /// P(X <= x), or P(X < x) when `strict`.
    fn cdf(&self, x: f64, strict: bool) -> f64 {
        let atoms: f64 = self
            .atoms
            .iter()
            .filter(|(v, _)| if strict { *v < x } else { *v <= x })
            .map(|(_, p)| p)
            .sum();
        let spans: f64 = self
            .spans
            .iter()
            .map(|&(a, b, p)| p * ((x - a) / (b - a)).clamp(0.0, 1.0))
            .sum();
        (atoms + spans).min(1.0)
    }

    /// E X^j: uniform pieces give (b^(j+1) - a^(j+1)) / ((j+1)(b - a)).
    fn raw_moment(&self, j: i32) -> f64 {
        let atoms: f64 = self.atoms.iter().map(|(v, p)| p * v.powi(j)).sum();
        let spans: f64 = self
            .spans
            .iter()
            .map(|&(a, b, p)| p * (b.powi(j + 1) - a.powi(j + 1)) / (f64::from(j + 1) * (b - a)))
            .sum();
        atoms + spans
    }
}

/// A data set of measured-looking holding times with ties: lognormal draws
/// rounded to whole seconds.
fn holding_data(count: usize) -> Vec<f64> {
    let source = Law::lognormal(150.0, 1.2).unwrap();
    draws(&source, 7, count)
        .into_iter()
        .map(f64::round)
        .collect()
}

#[test]
fn empirical_against_independent_piecewise_linear_cdf() {
    for (data, seed) in [
        (vec![10.0, 20.0, 40.0, 80.0, 80.0, 200.0], 180u64),
        (holding_data(400), 181),
        (vec![33.0], 182),
    ] {
        let law = Law::empirical(data.clone()).unwrap();
        let pieces = Pieces::new(&data);
        let mut x = draws(&law, seed, KS_N);
        x.sort_by(f64::total_cmp);
        let lo = data.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = data.iter().copied().fold(0.0, f64::max);
        assert!(
            x[0] >= lo && x[x.len() - 1] <= hi,
            "draw outside the data range"
        );
        // With point masses the Kolmogorov critical value is conservative.
        let d = ks_statistic(&x, |v| pieces.cdf(v, false), |v| pieces.cdf(v, true));
        assert!(d < ks_critical(KS_N), "{}: KS distance {d}", law.describe());
        for q in [0.0, 0.1, 0.35, 0.5, 0.9, 0.999] {
            let v = lo + q * (hi - lo);
            assert!(
                (law.cdf(v) - pieces.cdf(v, false)).abs() < 1e-12,
                "cdf at {v}"
            );
        }
        // Mean of the law = data mean (exactly, by the type-5 construction).
        let data_mean = data.iter().sum::<f64>() / data.len() as f64;
        let m1 = pieces.raw_moment(1);
        assert!((m1 - data_mean).abs() < 1e-9 * data_mean);
        assert!((law.mean() - data_mean).abs() < 1e-12 * data_mean);
        let (m2, m3, m4) = (
            pieces.raw_moment(2),
            pieces.raw_moment(3),
            pieces.raw_moment(4),
        );
        let cv = (m2 - m1 * m1).max(0.0).sqrt() / m1;
        assert!((law.cv() - cv).abs() < 1e-9, "cv {} vs {cv}", law.cv());
        if cv > 0.0 {
            moments(
                &law,
                seed + 100,
                data_mean,
                cv,
                shape_from_raw(m1, m2, m3, m4),
            );
        }
    }
}

// ---------------------------------------------------------------- all laws

fn every_law() -> Vec<Law> {
    vec![
        Law::exponential(180.0).unwrap(),
        Law::erlang(180.0, 3).unwrap(),
        Law::erlang(180.0, 12).unwrap(),
        Law::gamma(6.0, 0.5).unwrap(),
        Law::gamma(40.0, 2.0).unwrap(),
        Law::lognormal(180.0, 1.1).unwrap(),
        Law::hyperexponential(60.0, 2.0).unwrap(),
        Law::deterministic(90.0).unwrap(),
        Law::uniform(100.0, 0.2).unwrap(),
        Law::weibull(100.0, 0.5).unwrap(),
        Law::empirical(holding_data(300)).unwrap(),
    ]
}

#[test]
fn scaled_is_the_same_shape_times_the_factor() {
    // Every law here is a scale family: X' = c X in distribution, and with the
    // same generator state each draw of the scaled law is c times the draw.
    for law in every_law() {
        let c = 2.5;
        let big = law.scaled(c).expect("factor 2.5 keeps every law in range");
        assert_eq!(big.name(), law.name());
        assert!((big.mean() - c * law.mean()).abs() < 1e-12 * big.mean());
        assert!((big.cv() - law.cv()).abs() < 1e-12, "{}", law.describe());
        let (a, b) = (draws(&law, 190, 1000), draws(&big, 190, 1000));
        for (x, y) in a.iter().zip(&b) {
            assert!(
                (y - c * x).abs() <= 1e-9 * y.abs(),
                "{}: {y} vs {c} * {x}",
                law.describe()
            );
        }
    }
}

#[test]
fn cdf_is_monotone_and_bounded() {
    for law in every_law() {
        let mut last = 0.0;
        for i in 0..=4000 {
            let x = law.mean() * f64::from(i) / 400.0;
            let f = law.cdf(x);
            assert!((0.0..=1.0).contains(&f), "{}: F({x}) = {f}", law.describe());
            assert!(f >= last, "{}: F falls at {x}", law.describe());
            last = f;
        }
        assert_eq!(law.cdf(f64::INFINITY), 1.0, "{}", law.describe());
    }
}
