//! Erlang B over the whole claimed range (up to 10,000 servers and 10,000
//! erlangs): finite, monotone, and equal to an independent high-precision
//! sum.
//!
//! Sources: monotonicity of Erlang B (strictly decreasing in servers,
//! increasing in traffic: ITU-T Teletraffic Engineering Handbook); the
//! direct sum `1/B = Σ_{m=0}^{N} Π_{i<m} (N - i)/A`, evaluated here in the
//! log domain with compensated summation.

use busyhour::formulas::erlang_b;

/// `ln B(N, A)` by the direct sum in the log domain: every term's logarithm
/// is accumulated (compensated), then the sum is taken relative to the
/// largest term.
fn reference_ln_blocking(servers: u32, traffic: f64) -> f64 {
    let mut logs = Vec::with_capacity(servers as usize + 1);
    let (mut log, mut compensation) = (0.0f64, 0.0f64);
    logs.push(0.0);
    for i in 0..servers {
        // Kahan-compensated running sum of ln((N - i)/A).
        let y = (f64::from(servers - i) / traffic).ln() - compensation;
        let t = log + y;
        compensation = (t - log) - y;
        log = t;
        logs.push(log);
    }
    let top = logs.iter().cloned().fold(f64::MIN, f64::max);
    let (mut sum, mut c) = (0.0f64, 0.0f64);
    for l in &logs {
        let y = (l - top).exp() - c;
        let t = sum + y;
        c = (t - sum) - y;
        sum = t;
    }
    -(top + sum.ln())
}

const TRAFFIC: [f64; 9] = [
    0.001, 1.0, 10.0, 100.0, 1000.0, 5000.0, 9000.0, 9999.5, 10_000.0,
];
const SERVERS: [u32; 8] = [1, 10, 100, 1000, 5000, 9000, 9999, 10_000];

#[test]
fn finite_and_equal_to_the_reference_everywhere() {
    for &a in &TRAFFIC {
        for &n in &SERVERS {
            let ln_b = erlang_b::ln_blocking(n, a).unwrap();
            let b = erlang_b::blocking(n, a).unwrap();
            assert!(ln_b.is_finite() && ln_b <= 0.0, "ln B({n}, {a}) = {ln_b}");
            assert!(
                b.is_finite() && (0.0..=1.0).contains(&b),
                "B({n}, {a}) = {b}"
            );
            let expected = reference_ln_blocking(n, a);
            // An absolute error in ln B is the relative error in B; the
            // reference itself carries about |ln B| × 1e-16.
            let tolerance = 1e-9_f64.max(4e-16 * expected.abs());
            assert!(
                (ln_b - expected).abs() <= tolerance,
                "ln B({n}, {a}): expected {expected}, got {ln_b}"
            );
            if expected > -700.0 {
                assert!(((b - expected.exp()) / expected.exp()).abs() < 1e-9);
            }
        }
    }
}

#[test]
fn monotone_in_servers_and_traffic() {
    for &a in &[1.0, 700.0, 10_000.0] {
        let mut previous = 0.0;
        for n in (0..=10_000u32).step_by(97) {
            let ln_b = erlang_b::ln_blocking(n, a).unwrap();
            if n > 0 {
                assert!(ln_b < previous, "ln B not decreasing at N = {n}, A = {a}");
            }
            previous = ln_b;
        }
    }
    for &n in &[1u32, 500, 10_000] {
        let mut previous = f64::NEG_INFINITY;
        for i in 1..=200 {
            let a = 50.0 * f64::from(i);
            let ln_b = erlang_b::ln_blocking(n, a).unwrap();
            assert!(ln_b > previous, "ln B not increasing at N = {n}, A = {a}");
            previous = ln_b;
        }
    }
}

#[test]
fn inverses_at_the_top_of_the_range() {
    for target in [0.5, 0.01, 1e-6] {
        let n = erlang_b::servers_for(10_000.0, target).unwrap();
        assert!(erlang_b::blocking(n, 10_000.0).unwrap() <= target);
        assert!(erlang_b::blocking(n - 1, 10_000.0).unwrap() > target);
        let a = erlang_b::traffic_for(10_000, target).unwrap();
        assert!(a.is_finite() && a > 0.0);
        let ln_b = reference_ln_blocking(10_000, a);
        assert!(
            (ln_b - target.ln()).abs() < 1e-9,
            "target {target}: ln B = {ln_b}"
        );
    }
}

#[test]
fn tiny_targets_and_tiny_traffic_do_not_underflow() {
    // B(N, A) far below f64's range: the inverse still answers.
    let a = erlang_b::traffic_for(10_000, 1e-300).unwrap();
    assert!(a > 0.0 && a < 10_000.0);
    assert!(erlang_b::servers_for(1e-3, 1e-300).unwrap() > 1);
    assert_eq!(erlang_b::blocking(10_000, 0.001).unwrap(), 0.0);
    assert!(erlang_b::ln_blocking(10_000, 0.001).unwrap() < -100_000.0);
}
