//! The stationary-excess (equilibrium residual) laws of `busyhour::dist`
//! against renewal theory and `statrs`.
//!
//! The residual R of a holding law S has density (1 - F(x)) / E[S] and
//! mean E[S^2] / (2 E[S]) = m (1 + cv^2) / 2 (Cox, *Renewal Theory*, 1962,
//! ch. 5; Kleinrock, *Queueing Systems* vol. 1, 1975, section 5.2). For every
//! law:
//!
//! * `residual_tail(w)` against a numerical integral of 1 - F from w up over
//!   the mean, with 1 - F from `statrs` distributions whose parameters are
//!   computed here from the textbook formulas (hyperexponential: a mixture of
//!   two `statrs` exponentials with Whitt's balanced-means phases; the
//!   deterministic and empirical laws from their definitions);
//! * the mean of 200,000 `sample_residual` draws against m (1 + cv^2) / 2,
//!   within 5 standard errors (the sample's own standard deviation over
//!   sqrt n);
//! * a Kolmogorov-Smirnov test of 20,000 draws against 1 - residual_tail at
//!   alpha = 0.001 (asymptotic critical value 1.949 / sqrt n, as in
//!   dist_laws.rs);
//! * value stability: the first five residual draws from seed 42.
//!
//! Every seed is fixed, so each test is deterministic and can fail.

use busyhour::dist::Law;
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;
use statrs::distribution::{self as sd, ContinuousCDF};
use statrs::function::gamma::gamma as gamma_fn;

const KS_N: usize = 20_000;
const MEAN_N: usize = 200_000;

/// A law under test with its reference survival function 1 - F, the points
/// where that function has a jump or a kink, and E[S^2] from the textbook.
struct Case {
    law: Law,
    survival: Box<dyn Fn(f64) -> f64>,
    kinks: Vec<f64>,
    second_moment: f64,
}

fn sf<D: ContinuousCDF<f64, f64> + 'static>(d: D) -> Box<dyn Fn(f64) -> f64> {
    Box::new(move |x| if x < 0.0 { 1.0 } else { d.sf(x) })
}

/// Type-5 empirical law (Hyndman and Fan 1996, definition 5): point masses
/// 1/(2n) on the smallest and largest value, mass 1/n spread uniformly over
/// each gap between neighbouring order statistics.
fn empirical_cdf(sorted: &[f64], x: f64) -> f64 {
    let n = sorted.len();
    if x < sorted[0] {
        return 0.0;
    }
    if x >= sorted[n - 1] {
        return 1.0;
    }
    let i = sorted.iter().rposition(|&v| v <= x).unwrap();
    (i as f64 + 0.5 + (x - sorted[i]) / (sorted[i + 1] - sorted[i])) / n as f64
}

fn cases() -> Vec<Case> {
    let mut out = Vec::new();
    // Exponential, mean m: E S^2 = 2 m^2.
    out.push(Case {
        law: Law::exponential(180.0).unwrap(),
        survival: sf(sd::Exp::new(1.0 / 180.0).unwrap()),
        kinks: vec![],
        second_moment: 2.0 * 180.0 * 180.0,
    });
    // Erlang-k with phase rate k / m: E S^2 = m^2 (1 + 1/k).
    for k in [3u32, 12] {
        out.push(Case {
            law: Law::erlang(180.0, k).unwrap(),
            survival: sf(sd::Erlang::new(u64::from(k), f64::from(k) / 180.0).unwrap()),
            kinks: vec![],
            second_moment: 180.0 * 180.0 * (1.0 + 1.0 / f64::from(k)),
        });
    }
    // Gamma, shape a = 1/cv^2, rate a / m: E S^2 = m^2 (1 + cv^2).
    for (mean, cv) in [(6.0, 0.5), (120.0, 2.0)] {
        let a = 1.0 / (cv * cv);
        out.push(Case {
            law: Law::gamma(mean, cv).unwrap(),
            survival: sf(sd::Gamma::new(a, a / mean).unwrap()),
            kinks: vec![],
            second_moment: mean * mean * (1.0 + cv * cv),
        });
    }
    // Lognormal: sigma^2 = ln(1 + cv^2), mu = ln m - sigma^2 / 2 (JKB vol. 1, ch. 14).
    for (mean, cv) in [(180.0, 0.5), (180.0, 2.0)] {
        let s2 = (1.0f64 + cv * cv).ln();
        out.push(Case {
            law: Law::lognormal(mean, cv).unwrap(),
            survival: sf(sd::LogNormal::new(mean.ln() - s2 / 2.0, s2.sqrt()).unwrap()),
            kinks: vec![],
            second_moment: mean * mean * (1.0 + cv * cv),
        });
    }
    // Hyperexponential, balanced means (Whitt 1982): r = sqrt((c2-1)/(c2+1)),
    // p = (1 +- r)/2, m_i = m / (2 p_i); E S^2 = sum 2 p_i m_i^2.
    for (mean, cv) in [(60.0, 2.0), (300.0, 1.3)] {
        let c2: f64 = cv * cv;
        let r = ((c2 - 1.0) / (c2 + 1.0)).sqrt();
        let (p1, p2) = ((1.0 + r) / 2.0, (1.0 - r) / 2.0);
        let (m1, m2) = (mean / (2.0 * p1), mean / (2.0 * p2));
        let (e1, e2) = (
            sd::Exp::new(1.0 / m1).unwrap(),
            sd::Exp::new(1.0 / m2).unwrap(),
        );
        out.push(Case {
            law: Law::hyperexponential(mean, cv).unwrap(),
            survival: Box::new(move |x| {
                if x < 0.0 {
                    1.0
                } else {
                    p1 * e1.sf(x) + p2 * e2.sf(x)
                }
            }),
            kinks: vec![],
            second_moment: 2.0 * (p1 * m1 * m1 + p2 * m2 * m2),
        });
    }
    // Deterministic d: a unit step at d.
    out.push(Case {
        law: Law::deterministic(90.0).unwrap(),
        survival: Box::new(|x| if x < 90.0 { 1.0 } else { 0.0 }),
        kinks: vec![90.0],
        second_moment: 90.0 * 90.0,
    });
    // Uniform on [m - h, m + h], h = m cv sqrt 3: E S^2 = m^2 + h^2 / 3.
    for (mean, cv) in [(100.0, 0.2), (60.0, 1.0 / 3f64.sqrt())] {
        let h = mean * cv * 3f64.sqrt();
        let (lo, hi) = ((mean - h).max(0.0), mean + h);
        out.push(Case {
            law: Law::uniform(mean, cv).unwrap(),
            survival: sf(sd::Uniform::new(lo, hi).unwrap()),
            kinks: vec![lo, hi],
            second_moment: mean * mean + h * h / 3.0,
        });
    }
    // Weibull, shape k, scale m / G(1 + 1/k): E S^2 = scale^2 G(1 + 2/k) (JKB vol. 1, ch. 21).
    for (mean, shape) in [(100.0, 0.5), (100.0, 2.0), (100.0, 1.0)] {
        let scale = mean / gamma_fn(1.0 + 1.0 / shape);
        out.push(Case {
            law: Law::weibull_shape(mean, shape).unwrap(),
            survival: sf(sd::Weibull::new(shape, scale).unwrap()),
            kinks: vec![],
            second_moment: scale * scale * gamma_fn(1.0 + 2.0 / shape),
        });
    }
    // Empirical, with a zero and tied values: E S^2 from the definition
    // (end masses x^2 / (2n), each gap (a^2 + ab + b^2) / (3n)).
    for data in [
        vec![45.0, 0.0, 30.0, 12.0, 600.0, 30.0, 75.0, 180.0, 60.0],
        vec![42.0],
        vec![10.0, 1000.0],
    ] {
        let mut sorted = data.clone();
        sorted.sort_by(f64::total_cmp);
        let n = sorted.len() as f64;
        let (first, last) = (sorted[0], sorted[sorted.len() - 1]);
        let gaps: f64 = sorted
            .windows(2)
            .map(|w| (w[0] * w[0] + w[0] * w[1] + w[1] * w[1]) / 3.0)
            .sum();
        let second_moment = (gaps + (first * first + last * last) / 2.0) / n;
        let s = sorted.clone();
        out.push(Case {
            law: Law::empirical(data).unwrap(),
            survival: Box::new(move |x| 1.0 - empirical_cdf(&s, x)),
            kinks: sorted,
            second_moment,
        });
    }
    out
}

/// Composite Simpson rule for the integral of `f(e^u) e^u` over u in
/// [ln a, ln b] (that is, of f over [a, b], 0 < a < b), `steps` even.
fn simpson_log(f: &dyn Fn(f64) -> f64, a: f64, b: f64, steps: usize) -> f64 {
    let (ua, ub) = (a.ln(), b.ln());
    let h = (ub - ua) / steps as f64;
    // The ends are taken from inside the piece: 1 - F may jump at a kink.
    let (inside_a, inside_b) = (a.next_up(), b.next_down());
    let g = |u: f64| {
        let x = u.exp().clamp(inside_a, inside_b);
        f(x) * x
    };
    let mut sum = g(ua) + g(ub);
    for i in 1..steps {
        let w = if i % 2 == 1 { 4.0 } else { 2.0 };
        sum += w * g(ua + h * i as f64);
    }
    sum * h / 3.0
}

/// The integral of 1 - F from w to infinity over the mean, piece by piece
/// between the kinks; the far tail is cut at 1e6 means (1 - F is below 1e-40
/// there for every case) and [0, 1e-12 m] counts as 1 - F = 1 (its error is
/// below 1e-12).
fn integral_tail(case: &Case, w: f64) -> f64 {
    let mean = case.law.mean();
    let floor = 1e-12 * mean;
    let start = w.max(floor);
    let mut total = start - w.min(start);
    let mut points = vec![start];
    points.extend(case.kinks.iter().copied().filter(|&k| k > start));
    points.push(1e6 * mean);
    for pair in points.windows(2) {
        if pair[1] > pair[0] {
            total += simpson_log(&*case.survival, pair[0], pair[1], 4000);
        }
    }
    total / mean
}

#[test]
fn residual_tail_matches_the_integral_of_the_survival_function() {
    for case in cases() {
        let law = &case.law;
        let mean = law.mean();
        assert_eq!(law.residual_tail(0.0), 1.0, "{}", law.describe());
        assert_eq!(law.residual_tail(-5.0), 1.0, "{}", law.describe());
        assert!(law.residual_tail(f64::NAN).is_nan());
        for f in [0.001, 0.1, 0.5, 0.999, 1.0, 1.7, 3.0, 6.66, 10.0, 25.0] {
            let w = f * mean;
            let (got, want) = (law.residual_tail(w), integral_tail(&case, w));
            assert!(
                (got - want).abs() < 2e-9,
                "{}: residual_tail({w}) = {got}, integral {want}",
                law.describe()
            );
        }
        // Non-increasing along a fine grid.
        let mut last = 1.0;
        for i in 0..=2000 {
            let t = law.residual_tail(mean * i as f64 / 100.0);
            assert!(t <= last, "{}: tail rises at {i}", law.describe());
            last = t;
        }
    }
}

#[test]
fn residual_mean_is_half_the_second_moment_over_the_mean() {
    for (i, case) in cases().into_iter().enumerate() {
        let law = &case.law;
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(1000 + i as u64);
        let x: Vec<f64> = (0..MEAN_N).map(|_| law.sample_residual(&mut rng)).collect();
        assert!(x.iter().all(|v| v.is_finite() && *v >= 0.0));
        let n = x.len() as f64;
        let m = x.iter().sum::<f64>() / n;
        let sd = (x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0)).sqrt();
        let want = case.second_moment / (2.0 * law.mean());
        let se = sd / n.sqrt();
        assert!(
            (m - want).abs() < 5.0 * se,
            "{}: residual mean {m} vs E S^2 / (2 E S) = {want} (5 SE = {})",
            law.describe(),
            5.0 * se
        );
        // The same figure from mean and cv, m (1 + cv^2) / 2.
        let cv = law.cv();
        assert!((law.mean() * (1.0 + cv * cv) / 2.0 - want).abs() < 1e-9 * want);
    }
}

#[test]
fn residual_draws_pass_kolmogorov_smirnov_against_the_tail() {
    for (i, case) in cases().into_iter().enumerate() {
        let law = &case.law;
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(2000 + i as u64);
        let mut x: Vec<f64> = (0..KS_N).map(|_| law.sample_residual(&mut rng)).collect();
        x.sort_by(f64::total_cmp);
        let n = KS_N as f64;
        let mut d: f64 = 0.0;
        for (j, &v) in x.iter().enumerate() {
            let f = 1.0 - law.residual_tail(v);
            d = d
                .max((f - j as f64 / n).abs())
                .max(((j + 1) as f64 / n - f).abs());
        }
        let crit = 1.949 / n.sqrt();
        assert!(
            d < crit,
            "{}: KS distance {d:.5} >= critical {crit:.5}",
            law.describe()
        );
    }
}

/// Recorded from this implementation (not an outside reference): pins how
/// each law turns generator output into residual times, as
/// dist_stability.rs does for ordinary draws. A deliberate change of
/// sampler updates the table and says so in the commit message.
#[test]
fn residual_value_stability() {
    let pinned: [(Law, [f64; 5]); 9] = [
        (
            Law::exponential(180.0).unwrap(),
            [
                191.5236824382933,
                84.10890000826625,
                269.9551393460183,
                130.66869067043166,
                262.6561389720823,
            ],
        ),
        (
            Law::erlang(180.0, 3).unwrap(),
            [
                325.1411469500583,
                163.3693086759663,
                20.079225473800722,
                277.9935233205603,
                113.61943534818492,
            ],
        ),
        (
            Law::gamma(6.0, 0.5).unwrap(),
            [
                9.90467215585138,
                5.066727972461466,
                0.7100375507533794,
                8.477323336303533,
                3.5183441058237244,
            ],
        ),
        (
            Law::lognormal(180.0, 2.0).unwrap(),
            [
                369.84997040863107,
                1683.3077722868004,
                793.6727919938378,
                42.43768533754471,
                173.35181354614787,
            ],
        ),
        (
            Law::hyperexponential(60.0, 2.0).unwrap(),
            [
                15.798688506915198,
                24.544298419141334,
                33.965577791294315,
                413.1154679326496,
                182.10252610618124,
            ],
        ),
        (
            Law::deterministic(90.0).unwrap(),
            [
                73.28746306106189,
                28.693893605549512,
                88.55047513597398,
                63.10220383212801,
                71.41540407225561,
            ],
        ),
        (
            Law::uniform(100.0, 0.2).unwrap(),
            [
                39.76343865020685,
                93.8187400217453,
                72.66507504460714,
                46.90667524990113,
                78.9217170239883,
            ],
        ),
        (
            Law::weibull_shape(100.0, 0.5).unwrap(),
            [
                898.8456979898104,
                360.0655768314105,
                10.191364636391324,
                758.2074377454254,
                255.27481126672632,
            ],
        ),
        (
            Law::empirical(vec![0.0, 12.0, 30.0, 30.0, 600.0]).unwrap(),
            [
                334.21805327024464,
                314.42510700250557,
                363.0734691943035,
                560.0082705868984,
                376.25054244701425,
            ],
        ),
    ];
    let mut changed = Vec::new();
    for (law, want) in pinned {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(42);
        let got: [f64; 5] = std::array::from_fn(|_| law.sample_residual(&mut rng));
        if got
            .iter()
            .zip(&want)
            .any(|(g, p)| (g - p).abs() > 1e-12 * p.abs())
        {
            changed.push(format!(
                "{}:\n  got    {got:?}\n  pinned {want:?}",
                law.describe()
            ));
        }
    }
    assert!(changed.is_empty(), "{}", changed.join("\n"));
}
