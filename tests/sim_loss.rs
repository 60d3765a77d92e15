//! The simulator on loss systems against published results: Erlang B for a
//! single group (and its insensitivity to the holding-time law), Riordan's
//! overflow moments, and an exact Markov-chain solution of an overflow chain.
//! Tolerances come from each estimate's own 95% interval; seeds are fixed.

mod common;
use busyhour::stats::Scope;
use common::*;

fn single_group(servers: u32, traffic: f64, holding: &str, reps: u32, length_h: f64) -> String {
    // Mean holding 60 s in every law below, so rate = traffic per minute.
    format!(
        r#"
[simulation]
warmup = "{w}s"
length = "{l}s"
replications = {reps}
seed = 2024
[[group]]
name = "g"
servers = {servers}
[[stream]]
name = "s"
arrivals = {{ law = "poisson", rate = "{rate}/m" }}
holding = {holding}
route = ["g"]
"#,
        w = 60.0 * 20.0,
        l = 3600.0 * length_h,
        rate = traffic,
    )
}

#[test]
fn single_group_loss_matches_erlang_b_from_light_to_heavy_load() {
    // Erlang B (A. K. Erlang, 1917) via the truncated Poisson law from statrs.
    let cases = [
        (1u32, 0.5f64),
        (5, 3.0),
        (10, 7.0),
        (30, 25.0),
        (100, 110.0),
        (500, 480.0),
    ];
    for (n, a) in cases {
        let m = model(&single_group(
            n,
            a,
            r#"{ law = "exponential", mean = "60s" }"#,
            20,
            60.0,
        ));
        let o = run(&m);
        let exact = erlang_b_statrs(u64::from(n), a);
        let loss = o.get(Scope::Stream(0), "loss").unwrap();
        assert_covers(&format!("loss N={n} A={a}"), loss, exact, 4.0);
        assert_precise(&format!("loss N={n} A={a}"), loss, 0.25);
        let tc = o.get(Scope::Group(0), "time_congestion").unwrap();
        assert_covers(
            &format!("time congestion N={n} A={a} (PASTA)"),
            tc,
            exact,
            4.0,
        );
        let carried = o.get(Scope::Group(0), "carried_traffic").unwrap();
        assert_covers(
            &format!("carried N={n} A={a}"),
            carried,
            a * (1.0 - exact),
            4.0,
        );
    }
}

#[test]
fn erlang_b_is_insensitive_to_the_holding_time_law() {
    // Sevastyanov (1957): the stationary distribution of M/G/N/N, hence
    // Erlang B, depends on the holding-time law only through its mean.
    let laws = [
        r#"{ law = "lognormal", mean = "60s", cv = 1.5 }"#,
        r#"{ law = "erlang", mean = "60s", k = 3 }"#,
        r#"{ law = "deterministic", mean = "60s" }"#,
        r#"{ law = "hyperexponential", mean = "60s", cv = 2.0 }"#,
        r#"{ law = "gamma", mean = "60s", cv = 0.5 }"#,
        r#"{ law = "weibull", mean = "60s", cv = 1.3 }"#,
        r#"{ law = "uniform", mean = "60s", cv = 0.5 }"#,
    ];
    let (n, a) = (10u32, 7.0);
    let exact = erlang_b_statrs(u64::from(n), a);
    for law in laws {
        let m = model(&single_group(n, a, law, 20, 100.0));
        let loss = run(&m).get(Scope::Stream(0), "loss").unwrap();
        assert_covers(&format!("loss with holding {law}"), loss, exact, 4.0);
        assert_precise(law, loss, 0.1);
    }
}

#[test]
fn erlang_b_holds_for_an_empirical_holding_law() {
    // Insensitivity again, with the shipped measured talk times: the offered
    // traffic is the call rate times the empirical law's own mean.
    let text = r#"
[simulation]
warmup = "1h"
length = "40h"
replications = 20
seed = 99
[[group]]
name = "g"
servers = 8
[[stream]]
name = "s"
arrivals = { law = "poisson", rate = "100/h" }
holding = { law = "empirical", file = "scenarios/ferry-talk-times.csv", column = "talk_s" }
route = ["g"]
"#;
    let m = model(text);
    let a = m.streams[0].offered_traffic(m.plan.length_s).unwrap();
    let exact = erlang_b_statrs(8, a);
    let loss = run(&m).get(Scope::Stream(0), "loss").unwrap();
    assert_covers("loss with empirical holding", loss, exact, 4.0);
    assert_precise("empirical", loss, 0.1);
}

#[test]
fn overflow_moments_match_riordan() {
    // Riordan's formulas for the traffic overflowing N servers offered A
    // erlangs of Poisson traffic with exponential holding (Wilkinson 1956):
    // M = A B(N, A), V = M (1 - M + A / (N + 1 + M - A)).
    for (n, a) in [(5u32, 4.0f64), (10, 9.0), (20, 15.0)] {
        let text = format!(
            r#"
[simulation]
warmup = "1h"
length = "100h"
replications = 20
seed = 77
[[group]]
name = "first"
servers = {n}
[[group]]
name = "final"
servers = 200
[[stream]]
name = "s"
arrivals = {{ law = "poisson", rate = "{a}/m" }}
holding = {{ law = "exponential", mean = "60s" }}
route = ["first", "final"]
"#
        );
        let o = run(&model(&text));
        let b = erlang_b_statrs(u64::from(n), a);
        let m = a * b;
        let v = m * (1.0 - m + a / (f64::from(n) + 1.0 + m - a));
        let mean = o.get(Scope::Group(0), "overflow_mean").unwrap();
        let peak = o.get(Scope::Group(0), "overflow_peakedness").unwrap();
        assert_covers(&format!("overflow mean N={n} A={a}"), mean, m, 4.0);
        assert_covers(
            &format!("overflow peakedness N={n} A={a}"),
            peak,
            v / m,
            4.0,
        );
        assert_precise("peakedness", peak, 0.05);
        // The final group is large enough to carry all the overflow, so its
        // carried traffic is the overflow mean too.
        let carried = o.get(Scope::Group(1), "carried_traffic").unwrap();
        assert_covers("final group carried traffic", carried, m, 4.0);
    }
}

/// Stationary distribution of the two-group overflow chain with sequential
/// hunting, solved directly: states (i busy on the first group, j on the
/// second), Poisson arrivals at rate `a` (unit mean holding), exponential
/// holding. Returns the probability that both groups are full, which is the
/// call loss by PASTA. Solved by Gauss-Seidel on the balance equations.
fn two_group_chain_loss(n1: usize, n2: usize, a: f64) -> f64 {
    let idx = |i: usize, j: usize| i * (n2 + 1) + j;
    let size = (n1 + 1) * (n2 + 1);
    let mut p = vec![1.0 / size as f64; size];
    for _ in 0..20_000 {
        for i in 0..=n1 {
            for j in 0..=n2 {
                // Outflow rate of (i, j).
                let arrive = if i < n1 || j < n2 { a } else { 0.0 };
                let out = arrive + i as f64 + j as f64;
                // Inflow: arrivals from (i-1, j) [first group had room],
                // arrivals from (n1, j-1) when i == n1 [overflow], and
                // departures from (i+1, j), (i, j+1).
                let mut inflow = 0.0;
                if i > 0 {
                    inflow += a * p[idx(i - 1, j)];
                }
                if i == n1 && j > 0 {
                    inflow += a * p[idx(n1, j - 1)];
                }
                if i < n1 {
                    inflow += (i + 1) as f64 * p[idx(i + 1, j)];
                }
                if j < n2 {
                    inflow += (j + 1) as f64 * p[idx(i, j + 1)];
                }
                p[idx(i, j)] = inflow / out;
            }
        }
        let total: f64 = p.iter().sum();
        p.iter_mut().for_each(|x| *x /= total);
    }
    p[idx(n1, n2)]
}

#[test]
fn overflow_chain_loss_matches_the_exact_markov_chain() {
    let (n1, n2, a) = (3usize, 2usize, 3.0f64);
    let exact = two_group_chain_loss(n1, n2, a);
    // Sanity of the solver against the full-availability identity: with
    // sequential hunting and exponential holding the total is M/M/5/5.
    assert!((exact - erlang_b_statrs(5, a)).abs() < 1e-9, "chain solver");
    let text = format!(
        r#"
[simulation]
warmup = "1h"
length = "100h"
replications = 20
seed = 5
[[group]]
name = "first"
servers = {n1}
[[group]]
name = "second"
servers = {n2}
[[stream]]
name = "s"
arrivals = {{ law = "poisson", rate = "{a}/m" }}
holding = {{ law = "exponential", mean = "60s" }}
route = ["first", "second"]
"#
    );
    let o = run(&model(&text));
    let loss = o.get(Scope::Stream(0), "loss").unwrap();
    assert_covers("two-group chain loss", loss, exact, 4.0);
    assert_precise("chain loss", loss, 0.05);
    let first_block = o.get(Scope::Stream(0), "first_attempt_blocking").unwrap();
    assert_covers(
        "blocked on every group of the route",
        first_block,
        exact,
        4.0,
    );
}

#[test]
fn overflow_peakedness_from_short_replications_is_unbiased() {
    // Many short replications (20 holding times each): a variance measured
    // inside each window around its own mean would fall short of Riordan's
    // value; the pooled estimate must not. Riordan (Wilkinson 1956) as above.
    let (n, a) = (10u32, 9.0f64);
    let text = format!(
        r#"
[simulation]
warmup = "10m"
length = "20m"
replications = 400
seed = 13
[[group]]
name = "first"
servers = {n}
[[group]]
name = "final"
servers = 200
[[stream]]
name = "s"
arrivals = {{ law = "poisson", rate = "{a}/m" }}
holding = {{ law = "exponential", mean = "60s" }}
route = ["first", "final"]
"#
    );
    let o = run(&model(&text));
    let b = erlang_b_statrs(u64::from(n), a);
    let m = a * b;
    let z = 1.0 - m + a / (f64::from(n) + 1.0 + m - a);
    let peak = o.get(Scope::Group(0), "overflow_peakedness").unwrap();
    assert_covers("pooled overflow peakedness, short windows", peak, z, 4.0);
    assert_precise("pooled peakedness", peak, 0.06);
}
