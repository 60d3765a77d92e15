//! Erlang C against independent computations.
//!
//! Sources: the identity `C = N B / (N - A (1 - B))` linking Erlang C to
//! Erlang B (ITU-T Teletraffic Engineering Handbook), with `B` from the
//! `statrs` Poisson law; the M/M/N balance equations solved directly (state
//! weights `A^k/k!` below N, geometric above); the M/M/N waiting-time law
//! `P(W > t) = Σ_j π_{N+j} P(Erlang(j+1, Nμ) > t)` with the Erlang survival
//! function taken from `statrs`'s Poisson cdf.

use busyhour::formulas::{FormulaError, erlang_c};
use statrs::distribution::{Discrete, DiscreteCDF, Poisson};

fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = ((actual - expected) / expected).abs();
    assert!(
        error <= tolerance,
        "{what}: expected {expected:e}, got {actual:e} (relative error {error:e} > {tolerance:e})"
    );
}

/// statrs's Poisson pmf/cdf are good to about 1e-11 here (see the Erlang B
/// tests); comparisons through statrs use 1e-10.
const STATRS_TOLERANCE: f64 = 1e-10;

fn cases() -> Vec<(u32, f64)> {
    let mut cases = Vec::new();
    for n in [1u32, 2, 5, 12, 40, 100, 400, 1500] {
        for f in [0.01, 0.3, 0.7, 0.9, 0.97, 0.999] {
            cases.push((n, f * f64::from(n)));
        }
    }
    cases
}

#[test]
fn matches_the_identity_with_statrs_erlang_b() {
    for (n, a) in cases() {
        let poisson = Poisson::new(a).unwrap();
        let b = poisson.pmf(u64::from(n)) / poisson.cdf(u64::from(n));
        let nf = f64::from(n);
        let expected = nf * b / (nf - a * (1.0 - b));
        if expected > 1e-250 {
            assert_close(
                &format!("C({n}, {a})"),
                erlang_c::wait_probability(n, a).unwrap(),
                expected,
                STATRS_TOLERANCE,
            );
        }
    }
}

/// M/M/N by its balance equations: weights relative to state N are
/// `Π_{i<m} (N - i)/A` for state `N - m` and `(A/N)^j` for state `N + j`.
/// Returns (P(wait), E[Q]) from direct sums (valid where nothing overflows).
fn direct_mmn(n: u32, a: f64) -> (f64, f64) {
    let nf = f64::from(n);
    let mut below = 0.0;
    let mut term = 1.0;
    for i in 0..n {
        term *= f64::from(n - i) / a;
        below += term;
    }
    let rho = a / nf;
    let queue_mass = 1.0 / (1.0 - rho); // Σ_j ρ^j
    let queue_moment = rho / ((1.0 - rho) * (1.0 - rho)); // Σ_j j ρ^j
    let total = below + queue_mass;
    (queue_mass / total, queue_moment / total)
}

#[test]
fn matches_the_balance_equations() {
    for (n, a) in cases().into_iter().filter(|&(n, _)| n <= 100) {
        let (wait, queue) = direct_mmn(n, a);
        if wait < 1e-250 {
            continue;
        }
        assert_close(
            &format!("C({n}, {a})"),
            erlang_c::wait_probability(n, a).unwrap(),
            wait,
            1e-12,
        );
        // Little's law: W = E[Q] / λ = E[Q] h / A.
        let holding = 180.0;
        assert_close(
            &format!("W({n}, {a})"),
            erlang_c::mean_wait(n, a, holding).unwrap(),
            queue * holding / a,
            1e-12,
        );
    }
}

#[test]
fn service_level_matches_the_waiting_time_law() {
    // P(W > t) = Σ_j π_{N+j} P(Poisson(N t / h) <= j): the caller who finds
    // j waiting needs j + 1 service completions at rate N/h.
    let holding = 120.0;
    for (n, a) in [(1u32, 0.6), (3, 2.2), (10, 8.5), (25, 24.0), (60, 50.0)] {
        let (wait, _) = direct_mmn(n, a);
        let rho = a / f64::from(n);
        for t in [0.0, 5.0, 20.0, 60.0, 300.0] {
            let completions = Poisson::new((f64::from(n) * t / holding).max(1e-300)).unwrap();
            let mut late = 0.0;
            let mut state = wait * (1.0 - rho); // π_N = P(wait)(1 - ρ)
            let mut j = 0u64;
            while state > 1e-20 * wait {
                late += state * if t == 0.0 { 1.0 } else { completions.cdf(j) };
                state *= rho;
                j += 1;
            }
            assert_close(
                &format!("SL({n}, {a}, t = {t})"),
                erlang_c::service_level(n, a, holding, t).unwrap(),
                1.0 - late,
                STATRS_TOLERANCE,
            );
        }
    }
}

#[test]
fn occupancy_is_traffic_per_agent() {
    assert_eq!(erlang_c::occupancy(20, 15.0).unwrap(), 0.75);
}

#[test]
fn unstable_queues_are_refused() {
    for (n, a) in [(5u32, 5.0), (5, 7.5), (1, 1.0)] {
        assert_eq!(
            erlang_c::wait_probability(n, a),
            Err(FormulaError::Unstable {
                traffic: a,
                agents: n
            })
        );
        assert!(erlang_c::service_level(n, a, 60.0, 20.0).is_err());
    }
    let message = erlang_c::mean_wait(4, 6.0, 60.0).unwrap_err().to_string();
    assert!(message.contains("6 erlangs on 4 agents"), "{message}");
}

#[test]
fn sizing_gives_the_fewest_agents() {
    for a in [0.2, 2.0, 9.5, 48.0, 333.0, 2500.0] {
        for (within, target) in [(20.0, 0.8), (0.0, 0.5), (60.0, 0.95), (15.0, 0.999)] {
            let n = erlang_c::agents_for_service_level(a, 180.0, within, target).unwrap();
            assert!(erlang_c::service_level(n, a, 180.0, within).unwrap() >= target);
            if f64::from(n - 1) > a {
                assert!(
                    erlang_c::service_level(n - 1, a, 180.0, within).unwrap() < target,
                    "A = {a}, t = {within}, target = {target}: {n} is not the fewest"
                );
            }
        }
        for max_wait in [1.0, 10.0, 60.0] {
            let n = erlang_c::agents_for_mean_wait(a, 180.0, max_wait).unwrap();
            assert!(erlang_c::mean_wait(n, a, 180.0).unwrap() <= max_wait);
            if f64::from(n - 1) > a {
                assert!(erlang_c::mean_wait(n - 1, a, 180.0).unwrap() > max_wait);
            }
        }
    }
}

#[test]
fn extreme_range_is_finite_and_monotone() {
    for a in [1.0, 500.0, 5000.0, 9999.0, 9999.999] {
        let mut previous = f64::INFINITY;
        for n in [10_000u32, 10_001, 10_010, 10_100, 12_000] {
            if f64::from(n) <= a {
                continue;
            }
            let c = erlang_c::wait_probability(n, a).unwrap();
            let sl = erlang_c::service_level(n, a, 180.0, 20.0).unwrap();
            assert!(
                c.is_finite() && (0.0..=1.0).contains(&c),
                "C({n}, {a}) = {c}"
            );
            assert!(sl.is_finite() && (0.0..=1.0).contains(&sl));
            assert!(c <= previous);
            previous = c;
        }
    }
    // Near saturation almost everyone waits.
    let c = erlang_c::wait_probability(10_000, 9_999.999).unwrap();
    assert!(c > 0.999, "{c}");
}
