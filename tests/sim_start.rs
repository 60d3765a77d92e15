//! How a replication starts: the calls in progress seated at time 0 (a
//! steady start) against the M/G/inf steady state and Erlang B, the old
//! empty start against the M/G/inf transient, the default warm-up rule,
//! and determinism.
//!
//! Sources:
//! * M/G/inf: with Poisson arrivals of rate r and holding law S, the number
//!   in system is Poisson with mean A = r E[S] in equilibrium, and with mean
//!   r times the integral of 1 - F from 0 to t at time t after an empty
//!   start (Takacs 1962; Eick, Massey and Whitt, "The physics of the
//!   Mt/G/inf queue", Operations Research 41(4), 1993).
//! * Erlang B is insensitive to the holding law beyond its mean (Sevastyanov
//!   1957); computed here from statrs' Poisson law (tests/common).
//!
//! Seeds are fixed; tolerances are multiples of the 95% half-width.

mod common;

use busyhour::dist::Law;
use busyhour::engine::run_replication;
use busyhour::experiment::{self, RunOptions};
use busyhour::scenario::{Replications, residual_quantile};
use busyhour::stats::Scope;
use common::{assert_covers, assert_precise, erlang_b_statrs, model, run};
use statrs::distribution::{ContinuousCDF, LogNormal};

/// One group, one Poisson stream of 1800 calls/h (90 E at a mean of 3
/// minutes) with lognormal holding, cv 2.
fn one_group(servers: u32, start: &str, warmup: &str, length: &str, replications: u32) -> String {
    format!(
        r#"
[simulation]
{warmup}
length = "{length}"
replications = {replications}
seed = 2024
start = "{start}"

[[group]]
name = "trunks"
servers = {servers}

[[stream]]
name = "office"
arrivals = {{ law = "poisson", rate = "1800/h" }}
holding = {{ law = "lognormal", mean = "3m", cv = 2.0 }}
route = ["trunks"]
"#
    )
}

/// statrs' lognormal with mean 180 s and cv 2 (JKB vol. 1, ch. 14:
/// sigma^2 = ln(1 + cv^2), mu = ln m - sigma^2 / 2).
fn lognormal_reference() -> LogNormal {
    let s2 = 5f64.ln();
    LogNormal::new(180f64.ln() - s2 / 2.0, s2.sqrt()).unwrap()
}

/// Time-average M/G/inf occupancy over [0, T] after an empty start:
/// (r / T) times the integral over t of the integral of 1 - F from 0 to t,
/// which is (r / T) times the integral of (T - x)(1 - F(x)) over [0, T]
/// (Simpson's rule, 20,000 steps, 1 - F from statrs).
fn mginf_from_empty_mean(rate: f64, period: f64) -> f64 {
    let d = lognormal_reference();
    let steps = 20_000;
    let h = period / steps as f64;
    let f = |x: f64| (period - x) * if x <= 0.0 { 1.0 } else { d.sf(x) };
    let mut sum = f(0.0) + f(period);
    for i in 1..steps {
        sum += if i % 2 == 1 { 4.0 } else { 2.0 } * f(h * i as f64);
    }
    rate / period * sum * h / 3.0
}

#[test]
fn mginf_starts_in_equilibrium_when_steady_and_in_the_transient_when_empty() {
    let rate = 0.5; // calls/s
    let steady = run(&model(&one_group(1000, "steady", "warmup = 0", "10m", 400)));
    let carried = steady.get(Scope::Group(0), "carried_traffic").unwrap();
    println!(
        "M/G/inf steady start: {:.3} ± {:.3} E (equilibrium 90)",
        carried.mean, carried.half_width
    );
    assert_precise("steady carried traffic", carried, 0.02);
    assert_covers("M/G/inf carried traffic, steady start", carried, 90.0, 3.0);

    let empty = run(&model(&one_group(1000, "empty", "warmup = 0", "10m", 400)));
    let carried = empty.get(Scope::Group(0), "carried_traffic").unwrap();
    let exact = mginf_from_empty_mean(rate, 600.0);
    println!(
        "M/G/inf empty start: {:.3} ± {:.3} E (transient mean {exact:.3})",
        carried.mean, carried.half_width
    );
    assert_covers("M/G/inf carried traffic, empty start", carried, exact, 3.0);
    assert!(
        carried.mean + carried.half_width < 90.0 - 5.0,
        "an empty start should carry clearly less than 90 E in its first 10 minutes"
    );
    // The transient from the crate's own residual tail agrees with statrs.
    let law = Law::lognormal(180.0, 2.0).unwrap();
    let steps = 6000;
    let h = 600.0 / steps as f64;
    let g = |t: f64| 1.0 - law.residual_tail(t);
    let mut sum = g(0.0) + g(600.0);
    for i in 1..steps {
        sum += if i % 2 == 1 { 4.0 } else { 2.0 } * g(h * i as f64);
    }
    let from_tail = 90.0 * sum * h / 3.0 / 600.0;
    assert!(
        (from_tail - exact).abs() < 1e-6 * exact,
        "{from_tail} vs {exact}"
    );
}

#[test]
fn loss_with_heavy_tailed_holding_meets_erlang_b_after_a_steady_start() {
    let exact = erlang_b_statrs(107, 90.0);
    let steady = run(&model(&one_group(
        107,
        "steady",
        "warmup = \"30m\"",
        "2h",
        2000,
    )));
    let loss = steady.get(Scope::Stream(0), "loss").unwrap();
    println!(
        "loss, steady start: {:.5} ± {:.5} (Erlang B {exact:.5})",
        loss.mean, loss.half_width
    );
    assert_precise("loss", loss, 0.06);
    assert_covers("loss after a steady start", loss, exact, 3.0);

    // The old empty start with the same warm-up is measurably under-loaded.
    let empty = run(&model(&one_group(
        107,
        "empty",
        "warmup = \"30m\"",
        "2h",
        2000,
    )));
    let loss = empty.get(Scope::Stream(0), "loss").unwrap();
    println!(
        "loss, empty start: {:.5} ± {:.5} (Erlang B {exact:.5})",
        loss.mean, loss.half_width
    );
    assert!(
        loss.mean + loss.half_width < exact,
        "an empty start with 30 minutes of warm-up should stay below Erlang B: {loss:?}"
    );
}

#[test]
fn default_warmup_follows_the_residual_tail() {
    // Exponential holding, mean 180 s: the residual is the same law, so the
    // rule's w solves exp(-w / 180) = eps (memorylessness).
    let text = |start: &str, queue: u32, warmup: &str| {
        format!(
            r#"
[simulation]
{warmup}
length = "1h"
start = "{start}"

[[group]]
name = "agents"
servers = 20
queue = {queue}

[[stream]]
name = "office"
arrivals = {{ law = "poisson", rate = "300/h" }}
holding = {{ law = "exponential", mean = "3m" }}
route = ["agents"]
"#
        )
    };
    let seated = model(&text("steady", 0, ""));
    assert!(!seated.plan.warmup_given);
    assert_eq!(seated.plan.warmup_s, (180.0 * 100f64.ln()).ceil()); // 829 s
    assert_eq!(seated.warmup_short(), None);
    let empty = model(&text("empty", 0, ""));
    assert_eq!(empty.plan.warmup_s, (180.0 * 1e4f64.ln()).ceil()); // 1658 s
    let queued = model(&text("steady", 5, ""));
    // Ten mean holding times (1800 s), or five relaxation times of the
    // M/M/c queue, h / (sqrt c - sqrt A)^2 with c = 20, A = 15 E: 2508 s.
    let relax = 5.0 * 180.0 / (20f64.sqrt() - 15f64.sqrt()).powi(2);
    assert_eq!(queued.plan.warmup_s, relax.max(1800.0).ceil());
    let short = model(&text("empty", 0, "warmup = \"10m\""));
    assert!(short.plan.warmup_given);
    assert_eq!(short.plan.warmup_s, 600.0);
    assert_eq!(short.warmup_short(), Some(1658.0));
    let long = model(&text("empty", 0, "warmup = \"1h\""));
    assert_eq!(long.warmup_short(), None);

    // A constant 90 s: the residual is uniform on (0, 90 s), so w = 90 (1 - eps).
    let law = Law::deterministic(90.0).unwrap();
    assert!((residual_quantile(&law, 1e-2) - 89.1).abs() < 1e-6);
    // Renewal arrivals start empty: the finer eps applies.
    let renewal = model(
        r#"
[simulation]
length = "1h"

[[group]]
name = "trunks"
servers = 20

[[stream]]
name = "office"
arrivals = { law = "renewal", between = { law = "deterministic", mean = "12s" } }
holding = { law = "deterministic", mean = "90s" }
route = ["trunks"]
"#,
    );
    assert_eq!(renewal.plan.warmup_s, 90.0); // 90 (1 - 1e-4) = 89.991, rounded up
}

#[test]
fn default_warmup_gives_erlang_b_without_a_warmup_key() {
    let m = model(&one_group(107, "steady", "", "2h", 1000));
    // The residual 1% point of lognormal(3 min, cv 2).
    let w = residual_quantile(&m.streams[0].holding, 1e-2);
    assert_eq!(m.plan.warmup_s, w.ceil());
    println!("default warm-up {} s", m.plan.warmup_s);
    let o = run(&m);
    let loss = o.get(Scope::Stream(0), "loss").unwrap();
    let exact = erlang_b_statrs(107, 90.0);
    println!(
        "loss, default warm-up: {:.5} ± {:.5} (Erlang B {exact:.5})",
        loss.mean, loss.half_width
    );
    assert_covers("loss with the default warm-up", loss, exact, 3.0);
}

#[test]
fn steady_start_is_deterministic_across_runs_and_threads() {
    // Two streams sharing groups, overflow and a peak profile: the seating
    // order between streams comes from the keys alone.
    let m = model(
        r#"
[simulation]
warmup = "5m"
length = "30m"
replications = 6
seed = 9

[[group]]
name = "first"
servers = 30

[[group]]
name = "final"
servers = 12

[[stream]]
name = "a"
arrivals = { law = "poisson", rate = "600/h" }
holding = { law = "weibull", mean = "3m", cv = 1.5 }
route = ["first", "final"]

[[stream]]
name = "b"
arrivals = { law = "poisson", interval = "10m", rates = ["500/h", "800/h", "300/h"] }
holding = { law = "hyperexponential", mean = "2m", cv = 2.0 }
route = ["first", "final"]
"#,
    );
    for r in 0..3 {
        let (x, y) = (run_replication(&m, r), run_replication(&m, r));
        assert_eq!(format!("{x:?}"), format!("{y:?}"), "replication {r}");
        // The first replication's groups start with calls in progress.
        assert!(x.peak_busy[0] > 0);
    }
    let on = |threads| {
        experiment::run(
            &m,
            Some(Replications::Fixed(6)),
            &RunOptions {
                threads: Some(threads),
                ..RunOptions::default()
            },
        )
        .expect("run")
    };
    let (one, two) = (on(1), on(2));
    let bits = |o: &experiment::RunResult| -> Vec<u64> {
        o.per_replication
            .iter()
            .flatten()
            .flat_map(|o| [o.num.to_bits(), o.den.to_bits()])
            .collect()
    };
    assert_eq!(bits(&one), bits(&two));
    // The seated calls carry traffic from time 0: with no warm-up the first
    // half of the period already carries like the second.
    let t = run_replication(&m, 0);
    assert!(t.groups[0].busy_first_half_s > 0.0);
    assert!(t.groups[0].busy_first_half_s < t.groups[0].busy_s);
}

#[test]
fn first_half_counter_measures_the_transient() {
    // M/G/inf over a 20-minute period with no warm-up: the first half's
    // mean occupancy (busy server-seconds over 600 s) is 90 E at a steady
    // start and the transient mean over [0, 600 s] at an empty start.
    let first_half = |start: &str| {
        let m = model(&one_group(1000, start, "warmup = 0", "20m", 100));
        let erlangs: Vec<f64> = (0..200)
            .map(|r| run_replication(&m, r).groups[0].busy_first_half_s / 600.0)
            .collect();
        let e = busyhour::stats::estimate(erlangs.iter().copied());
        println!("{start}: first half {:.3} ± {:.3} E", e.mean, e.half_width);
        e
    };
    assert_covers("first half, steady start", first_half("steady"), 90.0, 3.0);
    let exact = mginf_from_empty_mean(0.5, 600.0);
    assert_covers("first half, empty start", first_half("empty"), exact, 3.0);
}
