//! Engset against the truncated binomial computed directly.
//!
//! Sources: the Engset distribution `p_k ∝ C(S, k) β^k`, `k = 0..N`
//! (ITU-T Teletraffic Engineering Handbook); the arrival theorem (a call
//! sees the state of the system with its own source removed); the limit of
//! infinitely many sources with `S β` fixed, which is Erlang B.

use busyhour::formulas::{engset, erlang_b};

fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = if expected == 0.0 {
        actual.abs()
    } else {
        ((actual - expected) / expected).abs()
    };
    assert!(
        error <= tolerance,
        "{what}: expected {expected:e}, got {actual:e} (error {error:e} > {tolerance:e})"
    );
}

/// Truncated binomial `p_k = C(S, k) β^k / Σ` for `k = 0..min(N, S)`, with
/// binomial coefficients built by multiplication; returns the distribution.
fn truncated_binomial(sources: u32, servers: u32, beta: f64) -> Vec<f64> {
    let top = servers.min(sources);
    let mut weights = vec![1.0f64];
    for k in 1..=top {
        let w = weights[weights.len() - 1] * f64::from(sources - k + 1) / f64::from(k) * beta;
        weights.push(w);
    }
    let sum: f64 = weights.iter().sum();
    weights.iter().map(|w| w / sum).collect()
}

#[test]
fn matches_the_truncated_binomial() {
    for (s, n, beta) in [
        (2u32, 1u32, 0.5),
        (10, 4, 0.1),
        (30, 10, 0.2),
        (50, 20, 0.6),
        (100, 30, 0.05),
        (200, 60, 1.5),
        (12, 12, 0.3),
        (13, 12, 0.3),
    ] {
        let g = engset::solve(s, n, beta).unwrap();
        let what = format!("S={s} N={n} beta={beta}");
        let p = truncated_binomial(s, n, beta);
        let time = if n <= s { p[n as usize] } else { 0.0 };
        assert_close(
            &format!("{what} time congestion"),
            g.time_congestion,
            time,
            1e-12,
        );
        // Arrival theorem: a call from one source sees the other S - 1.
        let seen = truncated_binomial(s - 1, n, beta);
        let call = if n < s { seen[n as usize] } else { 0.0 };
        assert_close(
            &format!("{what} call congestion"),
            g.call_congestion,
            call,
            1e-12,
        );
        // Call congestion from its definition: attempts in state k arrive at
        // rate (S - k) β; blocked ones are those in state N.
        let attempts: f64 = p
            .iter()
            .enumerate()
            .map(|(k, pk)| pk * (f64::from(s) - k as f64))
            .sum();
        let blocked = if n <= s {
            p[n as usize] * f64::from(s - n)
        } else {
            0.0
        };
        assert_close(
            &format!("{what} call congestion (definition)"),
            g.call_congestion,
            blocked / attempts,
            1e-12,
        );
        let carried: f64 = p.iter().enumerate().map(|(k, pk)| k as f64 * pk).sum();
        assert_close(
            &format!("{what} carried"),
            g.carried_traffic,
            carried,
            1e-12,
        );
        assert_close(
            &format!("{what} offered"),
            g.offered_traffic,
            beta * (f64::from(s) - carried),
            1e-12,
        );
    }
}

#[test]
fn fewer_sources_than_servers_never_block() {
    let g = engset::solve(7, 10, 2.0).unwrap();
    assert_eq!(g.time_congestion, 0.0);
    assert_eq!(g.call_congestion, 0.0);
    // Each source is busy a share β/(1+β).
    assert_close("carried", g.carried_traffic, 7.0 * 2.0 / 3.0, 1e-15);
    // As many sources as servers: all busy (β/(1+β))^S of the time, but a
    // calling source is never blocked.
    let g = engset::solve(4, 4, 1.0).unwrap();
    assert_close("time congestion", g.time_congestion, 1.0 / 16.0, 1e-15);
    assert_eq!(g.call_congestion, 0.0);
}

#[test]
fn many_sources_tend_to_erlang_b() {
    // S β -> A with S -> ∞: the Engset distribution tends to the truncated
    // Poisson; the relative difference is of order N / S.
    for (n, a) in [(5u32, 3.0), (20, 15.0), (60, 55.0)] {
        let b = erlang_b::blocking(n, a).unwrap();
        for s in [10_000u32, 1_000_000] {
            let g = engset::solve(s, n, a / f64::from(s)).unwrap();
            let tolerance = 2.0 * f64::from(n) * f64::from(n) / f64::from(s);
            assert_close(
                &format!("N={n} A={a} S={s}"),
                g.time_congestion,
                b,
                tolerance,
            );
        }
    }
}

#[test]
fn extreme_range_is_finite_and_monotone() {
    let mut previous = 1.0;
    for n in [1000u32, 5000, 9000, 10_000] {
        let g = engset::solve(1_000_000, n, 0.01).unwrap();
        assert!(g.time_congestion.is_finite() && g.time_congestion <= previous);
        assert!(g.call_congestion <= g.time_congestion);
        previous = g.time_congestion;
    }
    let g = engset::solve(20_000, 10_000, 5.0).unwrap();
    assert!(g.time_congestion > 0.0 && g.time_congestion < 1.0);
    assert!(g.carried_traffic <= 10_000.0);
}
