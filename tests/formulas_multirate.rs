//! Kaufman-Roberts against brute-force enumeration of the product form.
//!
//! Source: the multi-rate loss system has the product-form distribution
//! `π(n) ∝ Π_k a_k^{n_k} / n_k!` over `Σ_k n_k b_k <= C` (Kaufman 1981;
//! Roberts 1981; ITU-T Teletraffic Engineering Handbook); class `k` is
//! blocked in the states with fewer than `b_k` free channels. Enumerated
//! here state by state.

use busyhour::formulas::{erlang_b, multirate};

fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = ((actual - expected) / expected).abs();
    assert!(
        error <= tolerance,
        "{what}: expected {expected:e}, got {actual:e} (relative error {error:e} > {tolerance:e})"
    );
}

/// Blocking per class by enumerating every state `(n_1, .., n_K)`.
fn enumerate(capacity: u32, classes: &[(f64, u32)]) -> Vec<f64> {
    fn walk(
        k: usize,
        used: u32,
        weight: f64,
        capacity: u32,
        classes: &[(f64, u32)],
        states: &mut Vec<(u32, f64)>,
    ) {
        if k == classes.len() {
            states.push((used, weight));
            return;
        }
        let (a, b) = classes[k];
        let mut n = 0u32;
        let mut w = weight;
        while used + n * b <= capacity {
            walk(k + 1, used + n * b, w, capacity, classes, states);
            n += 1;
            w *= a / f64::from(n);
        }
    }
    let mut states = Vec::new();
    walk(0, 0, 1.0, capacity, classes, &mut states);
    let total: f64 = states.iter().map(|s| s.1).sum();
    classes
        .iter()
        .map(|&(_, b)| {
            states
                .iter()
                .filter(|(used, _)| capacity - used < b)
                .map(|s| s.1)
                .sum::<f64>()
                / total
        })
        .collect()
}

#[test]
fn matches_enumeration() {
    let cases: Vec<(u32, Vec<(f64, u32)>)> = vec![
        (5, vec![(1.0, 1), (0.5, 2)]),
        (10, vec![(3.0, 1), (1.0, 3)]),
        (16, vec![(6.0, 1), (1.5, 2), (0.4, 6)]),
        (24, vec![(10.0, 1), (2.0, 4), (0.5, 8)]),
        (30, vec![(2.0, 2), (2.0, 3), (1.0, 5)]),
        (7, vec![(0.3, 1), (0.2, 7)]),
    ];
    for (capacity, classes) in cases {
        let expected = enumerate(capacity, &classes);
        let actual = multirate::kaufman_roberts(capacity, &classes).unwrap();
        for (k, (x, e)) in actual.iter().zip(&expected).enumerate() {
            assert_close(&format!("C={capacity} class {k}"), *x, *e, 1e-12);
        }
    }
}

#[test]
fn one_narrow_class_is_erlang_b() {
    for (c, a) in [(1u32, 0.7), (30, 25.0), (1000, 950.0), (10_000, 10_000.0)] {
        let b = multirate::kaufman_roberts(c, &[(a, 1)]).unwrap();
        assert_close(
            "KR = Erlang B",
            b[0],
            erlang_b::blocking(c, a).unwrap(),
            1e-12,
        );
    }
}

#[test]
fn wider_calls_are_blocked_more() {
    let b = multirate::kaufman_roberts(60, &[(20.0, 1), (3.0, 2), (1.0, 6), (0.5, 10)]).unwrap();
    for pair in b.windows(2) {
        assert!(pair[0] < pair[1], "{b:?}");
    }
}

#[test]
fn extreme_capacity_is_finite_and_monotone() {
    let classes = [(6000.0, 1), (500.0, 4), (100.0, 20)];
    let mut previous = vec![1.0; 3];
    for c in [9_000u32, 9_500, 10_000] {
        let b = multirate::kaufman_roberts(c, &classes).unwrap();
        for (k, x) in b.iter().enumerate() {
            assert!(x.is_finite() && (0.0..=1.0).contains(x), "C={c}: {b:?}");
            assert!(*x <= previous[k]);
        }
        previous = b;
    }
    // Light load on a big group: tiny but positive, no underflow to NaN.
    let b = multirate::kaufman_roberts(10_000, &[(1.0, 1), (1.0, 50)]).unwrap();
    assert!(b.iter().all(|x| x.is_finite() && *x >= 0.0));
    // Heavy load: the recursion passes f64's range and is rescaled.
    let b = multirate::kaufman_roberts(10_000, &[(10_000.0, 1), (2_000.0, 3)]).unwrap();
    assert!(
        b.iter().all(|x| x.is_finite() && *x > 0.0 && *x < 1.0),
        "{b:?}"
    );
}
