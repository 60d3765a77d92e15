//! Forecast uncertainty of a stream's rate (`uncertainty`): the day's
//! factor against its law, the number of calls in progress against the
//! mixed-Poisson variance, and the averaged loss of an Erlang B group
//! against the loss integrated over the factor's law, each computed here
//! from statrs. Seeds are fixed; tolerances come from each estimate's own
//! interval.

mod common;
use busyhour::engine;
use busyhour::experiment::RunOptions;
use busyhour::experiment::size::{self, Goal, SizeOptions};
use busyhour::scenario::Replications;
use busyhour::stats::{Figure, Scope};
use busyhour::textbook::{self, FORECAST_ERLANG_B};
use common::*;
use statrs::distribution::{self as sd, Continuous, ContinuousCDF};

/// One loss group of `servers`, one Poisson stream of `traffic` erlangs
/// (exponential holding of 60 s) with the given extra stream keys.
fn loss_group(servers: u32, traffic: f64, reps: u32, length: &str, extra: &str) -> String {
    format!(
        r#"
[simulation]
length = "{length}"
replications = {reps}
seed = 4242
[[group]]
name = "g"
servers = {servers}
[[stream]]
name = "s"
arrivals = {{ law = "poisson", rate = "{traffic}/m" }}
holding = {{ law = "exponential", mean = "60s" }}
route = ["g"]
{extra}
"#
    )
}

/// sup |F_n - F| of sorted draws against a continuous cdf.
fn ks_distance(sorted: &[f64], cdf: impl Fn(f64) -> f64) -> f64 {
    let n = sorted.len() as f64;
    (sorted.iter().enumerate())
        .map(|(i, &x)| {
            let f = cdf(x);
            (f - i as f64 / n).abs().max(((i + 1) as f64 / n - f).abs())
        })
        .fold(0.0, f64::max)
}

/// E[h(F)] by composite Simpson over [0, hi] with the statrs density: a
/// method independent of the library's quadrature.
fn simpson(pdf: impl Fn(f64) -> f64, h: impl Fn(f64) -> f64, hi: f64) -> f64 {
    let n = 20_000;
    let dx = hi / n as f64;
    let mut sum = 0.0;
    for i in 0..=n {
        let x = i as f64 * dx;
        let w = if i == 0 || i == n {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        };
        // The densities vanish at 0 (gamma shape > 1, lognormal).
        if x > 0.0 {
            sum += w * pdf(x) * h(x);
        }
    }
    sum * dx / 3.0
}

#[test]
fn the_days_factor_has_mean_one_and_the_asked_cv() {
    // Gamma of mean 1 and cv c is Gamma(shape 1/c^2, rate 1/c^2); the
    // lognormal has sigma^2 = ln(1 + c^2), mu = -sigma^2/2 (Johnson, Kotz
    // and Balakrishnan vol. 1, ch. 14 and 17). KS at alpha 0.001
    // (critical 1.949 / sqrt(n), asymptotic Kolmogorov) and the sample mean
    // and variance within 5 standard errors.
    let n = 20_000u64;
    for (law, cv) in [("gamma", 0.1), ("gamma", 0.4), ("lognormal", 0.25)] {
        let m = model(&loss_group(
            10,
            5.0,
            2,
            "1m",
            &format!("uncertainty = {cv}\nuncertainty_law = \"{law}\""),
        ));
        let mut x: Vec<f64> = (0..n).map(|r| engine::day_factors(&m, r)[0]).collect();
        let mean = x.iter().sum::<f64>() / n as f64;
        let var = x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        let se_mean = cv / (n as f64).sqrt();
        assert!(
            (mean - 1.0).abs() < 5.0 * se_mean,
            "{law} {cv}: mean {mean}"
        );
        // Var of the sample variance ~ (mu4 - sigma^4) / n; mu4 from the
        // draws themselves.
        let mu4 = x.iter().map(|v| (v - mean).powi(4)).sum::<f64>() / n as f64;
        let se_var = ((mu4 - var * var) / n as f64).sqrt();
        assert!(
            (var - cv * cv).abs() < 5.0 * se_var,
            "{law} {cv}: variance {var} vs {}",
            cv * cv
        );
        x.sort_by(f64::total_cmp);
        let d = match law {
            "gamma" => {
                let k = 1.0 / (cv * cv);
                let g = sd::Gamma::new(k, k).unwrap();
                ks_distance(&x, |v| g.cdf(v))
            }
            _ => {
                let s2 = (1.0f64 + cv * cv).ln();
                let l = sd::LogNormal::new(-0.5 * s2, s2.sqrt()).unwrap();
                ks_distance(&x, |v| l.cdf(v))
            }
        };
        assert!(d < 1.949 / (n as f64).sqrt(), "{law} {cv}: KS {d}");
    }
}

#[test]
fn calls_in_progress_follow_the_mixed_poisson_variance() {
    // On an (effectively) infinite group the calls in progress of a day of
    // factor F are Poisson with mean m F (M/G/inf); mixed over a gamma F of
    // mean 1 and cv c they are negative binomial with Var N = m + c^2 m^2
    // (Johnson, Kotz and Kemp, Univariate Discrete Distributions, 2nd ed.,
    // 1992, ch. 5: the gamma mixture of Poisson laws). The number in progress
    // at one instant of each day is read as the busy integral over a measured
    // period of 1 ms (a call changes there with chance ~ 2 m x 1e-3 / 100).
    let (m, cv, reps) = (20.0, 0.3, 20_000u64);
    let text = format!(
        r#"
[simulation]
warmup = "2000s"
length = "0.001s"
replications = 2
seed = 4242
[[group]]
name = "big"
servers = 1000
[[stream]]
name = "s"
arrivals = {{ law = "poisson", rate = "{rate}/s" }}
holding = {{ law = "exponential", mean = "100s" }}
route = ["big"]
uncertainty = {cv}
"#,
        rate = m / 100.0
    );
    let model = model(&text);
    let n: Vec<f64> = (0..reps)
        .map(|r| engine::run_replication(&model, r).groups[0].busy_s / 0.001)
        .collect();
    let len = reps as f64;
    let mean = n.iter().sum::<f64>() / len;
    let var = n.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (len - 1.0);
    let mu4 = n.iter().map(|v| (v - mean).powi(4)).sum::<f64>() / len;
    let se_var = ((mu4 - var * var) / len).sqrt();
    let se_mean = (var / len).sqrt();
    let expected = m + cv * cv * m * m;
    assert!((mean - m).abs() < 4.0 * se_mean, "mean {mean} vs {m}");
    assert!(
        (var - expected).abs() < 4.0 * se_var,
        "Var N {var:.3} ± {:.3} vs m + cv^2 m^2 = {expected}",
        4.0 * se_var
    );
    // Can fail: the Poisson variance m alone lies far outside.
    assert!(
        (var - m).abs() > 20.0 * se_var,
        "Var N {var} too close to m"
    );
}

#[test]
fn the_averaged_loss_is_the_loss_integrated_over_the_factors_law() {
    // Loss pooled over days = E[lost] / E[offered] = E[F B(N, A F)] / E[F]
    // (ratio of sums across replications); B from the truncated Poisson of
    // statrs, the expectation by Simpson's rule over the statrs gamma
    // density.
    let (n, a, cv) = (30u32, 25.0, 0.2);
    let m = model(&loss_group(
        n,
        a,
        2000,
        "1h",
        &format!("uncertainty = {cv}"),
    ));
    let k = 1.0 / (cv * cv);
    let g = sd::Gamma::new(k, k).unwrap();
    let b = |f: f64| erlang_b_statrs(u64::from(n), a * f);
    let ef = simpson(|x| g.pdf(x), |f| f, 4.0);
    let integrated = simpson(|x| g.pdf(x), |f| f * b(f), 4.0) / ef;
    let time_congestion = simpson(|x| g.pdf(x), b, 4.0);
    let book = erlang_b_statrs(u64::from(n), a);

    // The formula column carries the integrated value, named so.
    let col = textbook::formula_column(&m);
    let entry = |scope, figure| {
        col.get(&busyhour::stats::FigureId { scope, figure })
            .cloned()
            .expect("a formula entry")
    };
    let loss_entry = entry(Scope::Stream(0), Figure::Loss);
    assert_eq!(loss_entry.name, FORECAST_ERLANG_B);
    assert!(
        (loss_entry.value - integrated).abs() < 1e-7 * integrated,
        "column {} vs integrated {integrated}",
        loss_entry.value
    );
    let tc_entry = entry(Scope::Group(0), Figure::TimeCongestion);
    assert!((tc_entry.value - time_congestion).abs() < 1e-7 * time_congestion);

    let o = run(&m);
    let loss = o.get_figure(Scope::Stream(0), Figure::Loss).unwrap();
    assert_covers("averaged loss", loss, integrated, 3.0);
    assert_precise("averaged loss", loss, 0.05);
    // Can fail: the book value at the mean load lies far outside.
    assert!(
        (loss.mean - book).abs() > 4.0 * loss.half_width,
        "loss {} ± {} does not tell E[F B]/E[F] = {integrated} from B(N, A) = {book}",
        loss.mean,
        loss.half_width
    );
    let tc = o
        .get_figure(Scope::Group(0), Figure::TimeCongestion)
        .unwrap();
    assert_covers("averaged time congestion", tc, time_congestion, 3.0);
}

#[test]
fn the_lognormal_factor_integrates_like_its_statrs_density() {
    // The same integral for a lognormal factor (sigma^2 = ln(1 + cv^2),
    // mu = -sigma^2 / 2), by Simpson over the statrs density.
    let (n, a, cv) = (40u32, 32.0, 0.3);
    let m = model(&loss_group(
        n,
        a,
        2,
        "1h",
        &format!("uncertainty = {cv}\nuncertainty_law = \"lognormal\""),
    ));
    let s2 = (1.0f64 + cv * cv).ln();
    let l = sd::LogNormal::new(-0.5 * s2, s2.sqrt()).unwrap();
    let b = |f: f64| erlang_b_statrs(u64::from(n), a * f);
    let integrated = simpson(|x| l.pdf(x), |f| f * b(f), 8.0) / simpson(|x| l.pdf(x), |f| f, 8.0);
    let col = textbook::formula_column(&m);
    let e = col
        .get(&busyhour::stats::FigureId {
            scope: Scope::Stream(0),
            figure: Figure::Loss,
        })
        .expect("a formula entry");
    assert!(
        (e.value - integrated).abs() < 1e-7 * integrated,
        "{} vs {integrated}",
        e.value
    );
}

#[test]
fn no_book_value_at_the_mean_load_where_the_spread_reaches() {
    // Two independent factors on one group: no one-dimensional integral,
    // so no value at all; the group a known stream overflows to from an
    // uncertain group is reached too.
    let text = r#"
[simulation]
length = "1h"
replications = 2
[[group]]
name = "first"
servers = 10
[[group]]
name = "last"
servers = 10
[[stream]]
name = "a"
arrivals = { law = "poisson", rate = "300/h" }
holding = { law = "exponential", mean = "2m" }
route = ["first", "last"]
uncertainty = "10%"
[[stream]]
name = "b"
arrivals = { law = "poisson", rate = "120/h" }
holding = { law = "exponential", mean = "2m" }
route = ["last"]
uncertainty = "10%"
"#;
    let col = textbook::formula_column(&model(text));
    // Only the first group, offered stream "a" alone (one factor), keeps
    // values, integrated ones; nothing on "last" or on either stream.
    assert!(!col.is_empty());
    for (id, f) in &col {
        assert_eq!(id.scope, Scope::Group(0), "{id:?}: {f:?}");
        assert_eq!(f.name, FORECAST_ERLANG_B);
    }
    // Without uncertainty the same design has book values.
    let plain = text.replace("uncertainty = \"10%\"\n", "");
    assert!(!textbook::formula_column(&model(&plain)).is_empty());
}

#[test]
fn shared_factors_are_one_draw_and_a_known_rate_runs_as_before() {
    let two = |extra_a: &str, extra_b: &str| {
        format!(
            r#"
[simulation]
length = "1h"
replications = 2
[[group]]
name = "g"
servers = 20
[[stream]]
name = "a"
arrivals = {{ law = "poisson", rate = "300/h" }}
holding = {{ law = "exponential", mean = "2m" }}
route = ["g"]
{extra_a}
[[stream]]
name = "b"
arrivals = {{ law = "poisson", rate = "100/h" }}
holding = {{ law = "exponential", mean = "2m" }}
route = ["g"]
{extra_b}
"#
        )
    };
    let shared = "uncertainty = \"20%\"\nuncertainty_shared = \"weather\"";
    let m = model(&two(shared, shared));
    let own = model(&two("uncertainty = \"20%\"", "uncertainty = \"20%\""));
    for r in 0..50 {
        let f = engine::day_factors(&m, r);
        assert_eq!(f[0], f[1], "one shared factor a day");
        let g = engine::day_factors(&own, r);
        assert_ne!(g[0], g[1], "independent factors");
    }
    // A cv of 0 is a known rate: the same counters as without the key.
    let plain = model(&two("", ""));
    let zero = model(&two("uncertainty = \"0%\"", ""));
    for r in 0..3 {
        let (x, y) = (
            engine::run_replication(&plain, r),
            engine::run_replication(&zero, r),
        );
        assert_eq!(format!("{x:?}"), format!("{y:?}"));
    }
}

/// The least traffic factor f at which Erlang B of `servers` at
/// `traffic * f` exceeds `bound` (bisection: B rises with the load).
fn factor_at_bound(servers: u64, traffic: f64, bound: f64) -> f64 {
    let (mut lo, mut hi) = (1e-6, 10.0);
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if erlang_b_statrs(servers, traffic * mid) <= bound {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    lo
}

#[test]
fn goal_on_share_of_days_sizes_from_the_factor_law() {
    // A day's loss on a long day is close to Erlang B at the day's load
    // (7,200 calls a day: the day's own noise moves its loss as much as a
    // few per cent of the factor would, against a factor cv of 10%). So the
    // share of days with loss <= 1% at N servers is close to
    // P(F <= f*(N)), f*(N) solving B(N, A f*) = 1% (Erlang B from statrs'
    // Poisson law; F gamma with mean 1 and cv 10%: shape 100, rate 100,
    // from statrs). The search must find n, where the long-run goal needs
    // fewer.
    let (traffic, cv, bound) = (20.0, 0.1, 0.01);
    let factor = sd::Gamma::new(1.0 / (cv * cv), 1.0 / (cv * cv)).unwrap();
    let share_at = |n: u64| factor.cdf(factor_at_bound(n, traffic, bound));
    // The size whose share of days first passes 90%, and the goal's share
    // halfway between its share and the share one server fewer, rounded
    // to a per cent: the case is as far from a tie as a whole server
    // allows.
    let n = (1..200u64).find(|&n| share_at(n) >= 0.9).unwrap();
    let (at_n, below) = (share_at(n), share_at(n - 1));
    let share = (50.0 * (at_n + below)).round() / 100.0;
    assert!(
        at_n >= share + 0.03 && below <= share - 0.03,
        "case too close to call: share {at_n} at {n}, {below} at {}",
        n - 1
    );
    let goal = format!("loss<=1% on {}% of days", share * 100.0);
    let text = loss_group(n as u32 - 10, traffic, 300, "6h", r#"uncertainty = "10%""#);
    let m = model(&text);
    let goals = [
        Goal::parse(&goal, &m, 0).unwrap(),
        Goal::parse("loss<=1%", &m, 0).unwrap(),
    ];
    let how = SizeOptions {
        replications: Replications::Fixed(300),
        max_replications: 2400,
    };
    let on_days = size::size(&m, 0, goals[..1].to_vec(), &how, &RunOptions::default()).unwrap();
    assert_eq!(
        on_days.servers,
        Some(n as u32),
        "shares from the factor law: {at_n} at {n}, {below} at {}; tried {:?}",
        n - 1,
        on_days.tried
    );
    // The verdict is on the share of days: at the answer its whole interval
    // (at the look's level) is at least 90%.
    let at = on_days.at_answer.as_ref().unwrap();
    assert!(at.goals[0].1.low >= share, "{:?}", at.goals[0].1);
    assert_eq!(on_days.formula_servers, None);
    // The long-run goal is met with fewer servers (the average day is
    // easier than nine days in ten).
    let long_run = size::size(&m, 0, goals[1..].to_vec(), &how, &RunOptions::default()).unwrap();
    assert!(long_run.servers.unwrap() < n as u32, "{:?}", long_run.tried);
}

#[test]
fn goal_on_share_of_days_refuses_bad_shares() {
    let m = model(&loss_group(10, 5.0, 10, "1h", ""));
    for (goal, says) in [
        ("loss<=1% on 100% of days", "strictly between 0% and 100%"),
        ("loss<=1% on 0% of days", "strictly between 0% and 100%"),
        ("loss<=1% on 90% of weeks", "expected 'on SHARE of days'"),
        ("loss<=1% on most days", "expected 'on SHARE of days'"),
    ] {
        let e = Goal::parse(goal, &m, 0).unwrap_err().to_string();
        assert!(e.contains(says), "{goal}: {e}");
    }
    let g = Goal::parse("loss<=1% on 90% of periods", &m, 0).unwrap();
    assert_eq!(g.days, Some(0.9));
}
