//! Erlang B and its inverses against independent computations.
//!
//! Sources: Erlang's loss formula `B(N, A) = (A^N/N!) / Σ_{k<=N} A^k/k!`
//! (ITU-T Teletraffic Engineering Handbook), evaluated here (1) with the
//! Poisson law of the `statrs` crate, `B = pmf(N) / cdf(N)`, and (2) as a
//! direct, compensated sum of the terms in extended range; handbook tables
//! (recalled values, marked); the integral representation of Erlang B for
//! non-integer servers, integrated numerically.

use busyhour::formulas::erlang_b;
use statrs::distribution::{Discrete, DiscreteCDF, Poisson};

/// Prints both values when a relative comparison fails.
fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = ((actual - expected) / expected).abs();
    assert!(
        error <= tolerance,
        "{what}: expected {expected:e}, got {actual:e} (relative error {error:e} > {tolerance:e})"
    );
}

/// Neumaier's compensated sum.
#[derive(Default)]
struct Sum {
    sum: f64,
    compensation: f64,
}

impl Sum {
    fn add(&mut self, x: f64) {
        let t = self.sum + x;
        if self.sum.abs() >= x.abs() {
            self.compensation += (self.sum - t) + x;
        } else {
            self.compensation += (x - t) + self.sum;
        }
        self.sum = t;
    }
    fn value(&self) -> f64 {
        self.sum + self.compensation
    }
}

/// Reference `ln B(N, A)` by the direct sum
/// `1/B = Σ_{m=0}^{N} Π_{i<m} (N - i)/A` (terms relative to state N, walking
/// down from N), with the terms rescaled by `e^-600` whenever they pass
/// `e^600` and added with compensated summation. Independent of the
/// recursion the library uses.
fn reference_ln_blocking(servers: u32, traffic: f64) -> f64 {
    let big = 600f64.exp();
    let mut term = 1.0;
    let mut sum = Sum::default();
    sum.add(1.0);
    let mut scale = 0.0; // terms and sum are in units of e^scale
    for i in 0..servers {
        term *= f64::from(servers - i) / traffic;
        sum.add(term);
        if term > big {
            term /= big;
            let s = sum.value() / big;
            sum = Sum::default();
            sum.add(s);
            scale += 600.0;
        }
    }
    -(sum.value().ln() + scale)
}

fn grid() -> Vec<(u32, f64)> {
    let mut cases = Vec::new();
    for n in [1u32, 2, 3, 5, 10, 20, 50, 100, 200, 500, 1000, 2000, 5000] {
        for f in [0.05, 0.3, 0.7, 0.9, 1.0, 1.1, 1.5, 3.0, 10.0] {
            cases.push((n, f * f64::from(n)));
        }
        cases.push((n, 0.01));
        cases.push((n, 1.0));
    }
    cases
}

#[test]
fn matches_the_compensated_direct_sum_to_1e_9() {
    for (n, a) in grid() {
        let expected = reference_ln_blocking(n, a);
        let ln_b = erlang_b::ln_blocking(n, a).unwrap();
        // |Δ ln B| is the relative error of B.
        assert!(
            (ln_b - expected).abs() <= 1e-9,
            "ln B({n}, {a}): expected {expected}, got {ln_b}"
        );
        if expected > -700.0 {
            assert_close(
                &format!("B({n}, {a})"),
                erlang_b::blocking(n, a).unwrap(),
                expected.exp(),
                1e-9,
            );
        }
    }
}

/// statrs's Poisson cdf is the regularised incomplete gamma function; on this
/// grid its `pmf / cdf` is within about 7e-12 of the direct sum (checked in
/// `statrs_is_accurate_enough_to_judge_by`), so the comparison with statrs
/// uses 1e-10; the 1e-9 claim itself rests on the direct sum above.
const STATRS_TOLERANCE: f64 = 1e-10;

#[test]
fn statrs_is_accurate_enough_to_judge_by() {
    let mut worst: f64 = 0.0;
    for (n, a) in grid() {
        let poisson = Poisson::new(a).unwrap();
        let statrs_b = poisson.pmf(u64::from(n)) / poisson.cdf(u64::from(n));
        let expected = reference_ln_blocking(n, a).exp();
        if expected > 1e-250 && statrs_b > 0.0 {
            worst = worst.max(((statrs_b - expected) / expected).abs());
        }
    }
    assert!(worst < STATRS_TOLERANCE, "statrs relative error {worst:e}");
}

#[test]
fn matches_statrs_poisson_pmf_over_cdf() {
    let mut compared = 0;
    for (n, a) in grid() {
        let poisson = Poisson::new(a).unwrap();
        let expected = poisson.pmf(u64::from(n)) / poisson.cdf(u64::from(n));
        if expected > 1e-250 {
            assert_close(
                &format!("B({n}, {a}) against statrs"),
                erlang_b::blocking(n, a).unwrap(),
                expected,
                STATRS_TOLERANCE,
            );
            compared += 1;
        }
    }
    assert!(compared > 100);
}

#[test]
fn small_cases_by_hand() {
    // B(1, A) = A / (1 + A); B(3, 2) = (8/6) / (1 + 2 + 2 + 8/6) = 4/19.
    assert_close(
        "B(1, 0.25)",
        erlang_b::blocking(1, 0.25).unwrap(),
        0.2,
        1e-15,
    );
    assert_close(
        "B(3, 2)",
        erlang_b::blocking(3, 2.0).unwrap(),
        4.0 / 19.0,
        1e-15,
    );
}

#[test]
fn handbook_table_entries() {
    // Recalled from handbook tables (Erlang B, traffic carried at a given
    // grade of service, to the two or three decimals the tables print):
    // 1% loss: 5 servers 1.36 E, 10 servers 4.46 E, 20 servers 12.03 E,
    // 30 servers 20.34 E, 100 servers 84.06 E; 0.1% loss: 10 servers 3.09 E,
    // 20 servers 9.41 E.
    let table = [
        (5u32, 0.01, 1.36),
        (10, 0.01, 4.46),
        (20, 0.01, 12.03),
        (30, 0.01, 20.34),
        (100, 0.01, 84.06),
        (10, 0.001, 3.09),
        (20, 0.001, 9.41),
    ];
    for (n, grade, traffic) in table {
        let a = erlang_b::traffic_for(n, grade).unwrap();
        assert!(
            (a - traffic).abs() <= 0.005,
            "{n} servers at {grade}: table {traffic}, computed {a}"
        );
    }
    // Recalled from handbook tables: 10 erlangs at 1% loss need 18 circuits
    // (17 circuits carry only about 9.65 E at 1%).
    assert_eq!(erlang_b::servers_for(10.0, 0.01).unwrap(), 18);
}

#[test]
fn servers_for_is_the_fewest_that_meet_the_target() {
    for a in [0.01, 0.5, 3.0, 17.5, 120.0, 999.0, 4321.0] {
        for target in [0.5, 0.05, 0.01, 0.001, 1e-6] {
            let n = erlang_b::servers_for(a, target).unwrap();
            assert!(erlang_b::blocking(n, a).unwrap() <= target);
            assert!(
                erlang_b::blocking(n - 1, a).unwrap() > target,
                "A = {a}, target = {target}"
            );
        }
    }
}

#[test]
fn traffic_for_inverts_blocking_to_1e_12() {
    for n in [1u32, 2, 7, 30, 250, 1000, 10_000] {
        for target in [0.9, 0.2, 0.02, 0.01, 1e-3, 1e-6, 1e-12] {
            let a = erlang_b::traffic_for(n, target).unwrap();
            // The relative change of B per relative change of A is the
            // slope N - A(1-B) (up to N), so a root to 1e-14 in A gives B
            // to about N × 1e-14 plus B's own error.
            let b = erlang_b::blocking(n, a).unwrap();
            assert_close(
                &format!("B({n}, traffic_for({n}, {target}))"),
                b,
                target,
                1e-12 * f64::from(n).max(10.0),
            );
            // Independent check of the root with the direct sum.
            let ln_b = reference_ln_blocking(n, a);
            assert!(
                (ln_b - target.ln()).abs() < 1e-9,
                "n = {n}, target = {target}"
            );
        }
    }
}

#[test]
fn one_server_inverse_in_closed_form() {
    // B(1, A) = A/(1 + A) = g  =>  A = g / (1 - g).
    for g in [0.001, 0.3, 0.75] {
        assert_close(
            "traffic_for(1, g)",
            erlang_b::traffic_for(1, g).unwrap(),
            g / (1.0 - g),
            1e-13,
        );
    }
}

/// Gauss-Legendre nodes and weights on [-1, 1] (Newton's method on the
/// Legendre polynomial, the textbook construction).
fn gauss_legendre(points: usize) -> Vec<(f64, f64)> {
    let n = points as f64;
    (1..=points)
        .map(|i| {
            let mut z = (std::f64::consts::PI * (i as f64 - 0.25) / (n + 0.5)).cos();
            loop {
                let (mut p1, mut p2) = (1.0, 0.0);
                for j in 1..=points {
                    let p3 = p2;
                    p2 = p1;
                    p1 = ((2.0 * j as f64 - 1.0) * z * p2 - (j as f64 - 1.0) * p3) / j as f64;
                }
                let dp = n * (z * p1 - p2) / (z * z - 1.0);
                let step = p1 / dp;
                z -= step;
                if step.abs() < 1e-16 {
                    return (z, 2.0 / ((1.0 - z * z) * dp * dp));
                }
            }
        })
        .collect()
}

/// `1/B(x, A) = ∫_0^∞ e^{-u} (1 + u/A)^x du` (the integral representation of
/// Erlang B), integrated after the change of variable `u = A (e^w - 1)` by
/// composite 20-point Gauss-Legendre over 400 panels.
fn reference_continuous(x: f64, a: f64) -> f64 {
    let rule = gauss_legendre(20);
    let end = (1.0 + (120.0 + 4.0 * x) / a).ln();
    let panels = 400;
    let mut total = Sum::default();
    for i in 0..panels {
        let lo = end * f64::from(i) / f64::from(panels);
        let hi = end * f64::from(i + 1) / f64::from(panels);
        let (mid, half) = (0.5 * (lo + hi), 0.5 * (hi - lo));
        for &(z, weight) in &rule {
            let w = mid + half * z;
            // e^{-u} (1+u/A)^x du/dw with u = A(e^w - 1), du/dw = A e^w.
            let u = a * w.exp_m1();
            total.add(half * weight * (-u + x * w + w).exp() * a);
        }
    }
    1.0 / total.value()
}

#[test]
fn continuous_servers_match_the_integral() {
    for a in [0.05, 0.7, 1.99, 2.0, 2.01, 6.0, 25.0] {
        for x in [0.25, 0.5, 0.999, 1.5, 3.3, 7.75, 12.5] {
            assert_close(
                &format!("B({x}, {a})"),
                erlang_b::blocking_continuous(x, a).unwrap(),
                reference_continuous(x, a),
                1e-10,
            );
        }
    }
}

#[test]
fn continuous_servers_agree_at_integers_and_decrease_between() {
    for a in [0.3, 1.0, 2.5, 40.0, 900.0] {
        for n in [0u32, 1, 2, 5, 33, 800] {
            let whole = erlang_b::blocking(n, a).unwrap();
            if whole < 1e-290 {
                continue; // the neighbours below would leave f64's range
            }
            let cont = erlang_b::blocking_continuous(f64::from(n), a).unwrap();
            assert_close(&format!("B({n}, {a}) continued"), cont, whole, 1e-12);
            let mut previous = cont;
            for step in 1..10 {
                let x = f64::from(n) + f64::from(step) / 10.0;
                let b = erlang_b::blocking_continuous(x, a).unwrap();
                assert!(b < previous, "B({x}, {a}) = {b} not below {previous}");
                previous = b;
            }
            assert!(previous > erlang_b::blocking(n + 1, a).unwrap());
        }
    }
}
