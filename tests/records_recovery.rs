//! Records generated from known parameters: `records` must recover the
//! offered traffic, the busy hour, the holding-time law and the peakedness
//! within tolerances derived from the statistics. Fixed seeds throughout.

use busyhour::dist::Law;
use busyhour::records::synthetic::{self, SyntheticSpec, TimeStyle};
use busyhour::records::time::days_from_civil;
use busyhour::records::{self, Analysis, Options};
use statrs::function::gamma::digamma;

const TENTH: f64 = 0.1; // records hold times to the tenth of a second

fn records_of(spec: &SyntheticSpec) -> Vec<u8> {
    let mut csv = Vec::new();
    synthetic::write_csv(spec, u64::MAX, &mut csv).expect("write to memory");
    csv
}

fn analyse(csv: &[u8]) -> Analysis {
    records::analyse_reader(csv, "synthetic.csv", &Options::default())
        .expect("synthetic records analyse")
}

/// Calls per hour by hour of day, repeated as quarter-hour steps.
fn hourly(per_hour: [f64; 24]) -> Vec<f64> {
    per_hour.iter().flat_map(|r| [r / 3600.0; 4]).collect()
}

/// Expected traffic offered to an infinite-server group (the mean number of
/// calls in progress) averaged over [from, to) seconds of the day, for a
/// piecewise-constant arrival rate: m(t) = sum_k r_k [G(t - a_k) - G(t - min(b_k, t))]
/// with G(x) = integral_0^x P(S > y) dy (the Mt/G/infinity mean: Eick,
/// Massey and Whitt, "The physics of the Mt/G/inf queue", Operations
/// Research 41(4), 1993). Integrated on a 1-second grid.
fn offered_mt_g_inf(rates: &[f64], step_s: f64, law: &Law, from: f64, to: f64) -> f64 {
    let horizon = to as usize + 1;
    let mut g = vec![0.0; horizon + 1];
    for x in 1..=horizon {
        let (a, b) = ((x - 1) as f64, x as f64);
        // Simpson's rule for the survival function over one second.
        let s = |y: f64| 1.0 - law.cdf(y);
        g[x] = g[x - 1] + (s(a) + 4.0 * s(0.5 * (a + b)) + s(b)) / 6.0;
    }
    let g_at = |x: f64| {
        if x <= 0.0 {
            return 0.0;
        }
        let i = x.floor() as usize;
        let f = x - i as f64;
        g[i] + f * (g[(i + 1).min(horizon)] - g[i])
    };
    let mut total = 0.0;
    let n = (to - from) as usize;
    for k in 0..n {
        let t = from + k as f64 + 0.5;
        let mut m = 0.0;
        for (j, r) in rates.iter().enumerate() {
            let (a, b) = (j as f64 * step_s, (j + 1) as f64 * step_s);
            if a >= t {
                break;
            }
            m += r * (g_at(t - a) - g_at(t - b.min(t)));
        }
        total += m;
    }
    total / n as f64
}

/// A day with a sharp morning peak: 10:00-11:00 at 1200 calls/h between
/// hours of 400/h; lognormal holding, mean 120 s, cv 1; 10 days of records
/// through 48 lines.
fn peaked_spec() -> SyntheticSpec {
    let mut per_hour = [60.0; 24];
    for (h, r) in [
        (7, 300.0),
        (8, 300.0),
        (9, 400.0),
        (10, 1200.0),
        (11, 400.0),
        (12, 300.0),
        (13, 300.0),
    ] {
        per_hour[h] = r;
    }
    for r in per_hour.iter_mut().take(18).skip(14) {
        *r = 300.0;
    }
    SyntheticSpec {
        first_day: days_from_civil(2025, 3, 3),
        days: 10,
        step_s: 900.0,
        day_rates: hourly(per_hour),
        weekday_factors: [1.0; 7],
        holding: Law::lognormal(120.0, 1.0).unwrap(),
        servers: 48,
        time_style: TimeStyle::Zoned(3600),
        seed: 41,
    }
}

#[test]
fn busy_hour_and_offered_traffic_are_recovered() {
    let spec = peaked_spec();
    let a = analyse(&records_of(&spec));
    assert_eq!(a.rows.skipped, 0);
    // Every day's peak hour and the time-consistent busy hour are the
    // known 10:00-11:00: a window shifted by 15 minutes trades a quarter at
    // 1200/h for one at 400/h, 4 standard deviations of the window
    // difference (compound-Poisson variance, see below).
    for p in &a.busy_hour.daily {
        assert_eq!(p.start_clock_s, 10 * 3600, "day {}: {p:?}", p.day);
    }
    let tc = a.busy_hour.time_consistent.unwrap();
    assert_eq!((tc.start_clock_s, tc.days), (10 * 3600, 10));

    // Offered traffic in the window: the Mt/G/inf mean for the known
    // profile. Its standard error per day, for the holding time inside a
    // window of length T of calls arriving at rate r, is at most
    // sqrt(r E[S^2] / T) erlangs (compound Poisson: Var sum S = r T E[S^2]),
    // E[S^2] = m^2 (1 + cv^2); over D days divide by sqrt(D).
    let expected = offered_mt_g_inf(&spec.day_rates, 900.0, &spec.holding, 36000.0, 39600.0);
    let (m, cv, r): (f64, f64, f64) = (120.0, 1.0, 1200.0 / 3600.0);
    let se = (r * m * m * (1.0 + cv * cv) / 3600.0 / 10.0).sqrt();
    let got = tc.offered_traffic;
    assert!(
        (got - expected).abs() <= 4.0 * se,
        "offered traffic of the busy hour: expected {expected:.3} E, got {got:.3} E, 4 se = {:.3}",
        4.0 * se
    );
    // The carried traffic is below the offered (blocking at 48 lines) and
    // the group cannot carry more than it has.
    assert!(tc.carried_traffic < got && tc.carried_traffic <= 48.0);
    // Calls per hour: Poisson count of 1200/h over 10 days.
    let calls_se = (1200.0f64 * 10.0).sqrt() / 10.0;
    assert!(
        (tc.calls_per_hour - 1200.0).abs() <= 4.0 * calls_se,
        "{tc:?}"
    );
    // The average of daily peaks is never below the time-consistent figure
    // (each day's peak is at least that day's value at the fixed hour).
    assert!(a.busy_hour.average_daily_peak_offered.unwrap() >= tc.offered_traffic - 1e-12);

    // Holding times: lognormal ranks first and fits; the exponential law
    // (same mean and cv, different shape) does not.
    let h = &a.holding;
    assert!(h.parametric_fits);
    assert_eq!(h.recommended.name(), "lognormal", "{:?}", h.fits);
    let exp = h
        .fits
        .iter()
        .find(|f| f.law.name() == "exponential")
        .unwrap();
    assert!(!exp.acceptable && exp.ks_distance > h.ks_critical);
    // Mean within 4 standard errors (sd / sqrt n), allowing the rounding to
    // a tenth of a second.
    let n = h.count as f64;
    assert!(
        (h.mean_s - 120.0).abs() <= 4.0 * 120.0 / n.sqrt() + TENTH,
        "mean {}",
        h.mean_s
    );
    // The lognormal sigma by maximum likelihood has asymptotic variance
    // sigma^2 / (2n) (normal-theory MLE of a standard deviation).
    let Law::Lognormal(fitted) = &h.recommended else {
        unreachable!()
    };
    let sigma = (1.0f64 + 1.0).ln().sqrt();
    assert!(
        (fitted.sigma() - sigma).abs() <= 4.0 * sigma / (2.0 * n).sqrt() + 1e-3,
        "sigma {}",
        fitted.sigma()
    );

    // Poisson arrivals: the peakedness is 1 within 4 standard errors.
    let z = a.peakedness.unwrap();
    assert!((z.value - 1.0).abs() <= 4.0 * z.standard_error, "{z:?}");
    assert!(z.standard_error < 0.1);
}

#[test]
fn doubled_arrivals_double_the_peakedness() {
    // Every call written twice: each count doubles, so its variance
    // quadruples and variance/mean doubles exactly.
    let spec = SyntheticSpec {
        days: 4,
        ..peaked_spec()
    };
    let csv = String::from_utf8(records_of(&spec)).unwrap();
    let mut lines = csv.lines();
    let mut twice = format!("{}\n", lines.next().unwrap());
    for l in lines {
        twice.push_str(l);
        twice.push('\n');
        twice.push_str(l);
        twice.push('\n');
    }
    let z1 = analyse(csv.as_bytes()).peakedness.unwrap();
    let z2 = analyse(twice.as_bytes()).peakedness.unwrap();
    assert!((z2.value / z1.value - 2.0).abs() < 1e-9, "{z1:?} {z2:?}");
    assert!(!z2.poisson_fair());
}

#[test]
fn gamma_holding_times_are_recovered() {
    // Gamma, mean 100 s, cv 0.6 (shape 1/0.36 = 2.78), 30,000-odd calls.
    let shape = 1.0 / 0.36;
    let law = Law::gamma(100.0, 0.6).unwrap();
    let spec = SyntheticSpec::constant(
        days_from_civil(2025, 3, 3),
        2,
        720.0 / 3600.0,
        law.clone(),
        u32::MAX,
        5,
    );
    let a = analyse(&records_of(&spec));
    let h = &a.holding;
    let first = &h.fits[0];
    assert_eq!(first.law.name(), "gamma", "{:?}", h.fits);
    assert!(first.acceptable);
    // Fisher information of the gamma shape with the scale also estimated:
    // Var k = k / (n (k trigamma(k) - 1)) (Choi and Wette 1969); trigamma
    // by a central difference of statrs' digamma.
    let trigamma = (digamma(shape + 1e-5) - digamma(shape - 1e-5)) / 2e-5;
    let n = h.count as f64;
    let se = (shape / (n * (shape * trigamma - 1.0))).sqrt();
    let Law::Gamma(g) = &first.law else {
        unreachable!()
    };
    assert!(
        (g.shape() - shape).abs() <= 4.0 * se,
        "shape {} vs {shape}, se {se}",
        g.shape()
    );
    // The sample median against the law: F(sample median) has standard
    // deviation 1 / (2 sqrt n) (order statistics of uniforms: a Beta law),
    // plus the rounding to tenths of a second times the density.
    let median = h.percentiles.iter().find(|p| p.0 == 0.5).unwrap().1;
    let density = law.cdf(median + 0.5) - law.cdf(median - 0.5);
    let off = (law.cdf(median) - 0.5).abs();
    assert!(
        off <= 4.0 / (2.0 * n.sqrt()) + density * TENTH,
        "median {median}: F = {}",
        law.cdf(median)
    );
}

#[test]
fn bimodal_holding_times_fit_no_parametric_law() {
    // Short enquiries around 30 s and long ones around 10 min, half each:
    // no single law of those tried has that shape.
    let values: Vec<f64> = (0..200)
        .map(|i| 20.0 + f64::from(i) * 0.1)
        .chain((0..200).map(|i| 600.0 + f64::from(i) * 0.3))
        .collect();
    let law = Law::empirical(values).unwrap();
    let spec = SyntheticSpec::constant(days_from_civil(2025, 3, 3), 1, 0.2, law, u32::MAX, 8);
    let a = analyse(&records_of(&spec));
    let h = &a.holding;
    assert!(!h.parametric_fits, "{:?}", h.fits);
    assert!(
        h.fits
            .iter()
            .filter(|f| f.law.name() != "empirical")
            .all(|f| !f.acceptable)
    );
    assert_eq!(h.recommended.name(), "empirical");
    let text = busyhour::report::records::to_text(&a);
    assert!(text.contains("no parametric law fits"), "{text}");
}

#[test]
fn reservoir_keeps_memory_fixed_and_the_mean_exact() {
    // More answered calls than the reservoir holds: the mean uses every
    // call (running sums), the KS sample is the reservoir.
    let law = Law::exponential(60.0).unwrap();
    let spec = SyntheticSpec::constant(0, 1, 3.0, law, u32::MAX, 3);
    let csv = records_of(&spec);
    let opts = Options {
        reservoir: 5000,
        ..Options::default()
    };
    let a = records::analyse_reader(csv.as_slice(), "big.csv", &opts).unwrap();
    let h = &a.holding;
    assert_eq!(h.sample_size, 5000);
    assert!(h.count > 250_000);
    // The mean from the running sums equals the mean of the file's values
    // (rounded to tenths when written) to rounding error.
    let text = String::from_utf8(csv).unwrap();
    let (sum, n) = text.lines().skip(1).fold((0.0, 0u64), |(s, n), l| {
        let d: f64 = l.split(',').nth(2).unwrap().parse().unwrap();
        (s + d, n + 1)
    });
    assert_eq!(n, h.count);
    assert!((h.mean_s - sum / n as f64).abs() < 1e-9 * h.mean_s);
    // Exponential fits (KS on 5000 values, critical 1.628/sqrt(5000)).
    assert!((h.ks_critical - 1.628 / 5000f64.sqrt()).abs() < 1e-12);
    let exp = h
        .fits
        .iter()
        .find(|f| f.law.name() == "exponential")
        .unwrap();
    assert!(exp.acceptable, "{:?}", h.fits);
}
