//! The redial fixed point (`formulas::redial_fixed_point`) against the exact
//! two-dimensional Markov chain of the same group (`formulas::chains::redials`,
//! itself checked against the simulator in `tests/coverage.rs` and
//! `tests/sim_behaviour.rs`), and against the closed forms of the fixed point
//! recomputed here. The errors are recorded, not hidden: the fixed point is
//! close when redials come long after the blocking and is not when they
//! come soon.

use busyhour::formulas::redial_fixed_point::{self, RedialingStream};
use busyhour::formulas::{chains, erlang_b};

/// Relative error of an approximation against an exact value.
fn rel(approx: f64, exact: f64) -> f64 {
    (approx - exact).abs() / exact
}

#[test]
fn the_fixed_point_satisfies_its_own_equations() {
    // B = E_N(A / (1 - p B)), Erlang B recomputed here by its recursion
    // E_0 = 1, E_k = A E_{k-1} / (k + A E_{k-1}) (any teletraffic handbook).
    for (n, a, p) in [(10u32, 7.0, 0.5), (30, 28.0, 0.9), (5, 2.0, 0.2)] {
        let f = redial_fixed_point::fixed_point(n, a, p).unwrap();
        let b = f.blocking;
        let offered = a / (1.0 - p * b);
        let mut e = 1.0;
        for k in 1..=n {
            e = offered * e / (f64::from(k) + offered * e);
        }
        assert!(rel(b, e) < 1e-11, "fixed point {b} vs E_N {e}");
        let s = f.streams[0];
        assert!(rel(s.attempts_per_call, 1.0 / (1.0 - p * b)) < 1e-12);
        assert!(rel(s.loss, (1.0 - p) * b / (1.0 - p * b)) < 1e-10);
        assert!(rel(f.attempt_traffic, offered) < 1e-12);
        // Redials add load, and lose fewer calls than attempts.
        assert!(b >= erlang_b::blocking(n, a).unwrap());
        assert!(s.loss <= b);
    }
}

/// One comparison of the fixed point with the exact chain, printed, with
/// the largest relative error over the four shares returned.
fn compare(n: u32, a: f64, h: f64, p: f64, delay: f64) -> f64 {
    let exact = chains::redials(n, a, h, p, delay).unwrap();
    let f = redial_fixed_point::fixed_point(n, a, p).unwrap();
    let s = f.streams[0];
    let errors = [
        rel(f.blocking, exact.first_attempt_blocking),
        rel(f.blocking, exact.attempt_blocking),
        rel(s.attempts_per_call, exact.attempts_per_call),
        rel(s.loss, exact.loss),
    ];
    eprintln!(
        "N {n}, A {a}, p {p}, delay/holding {:.3}: first attempt {:.5} (exact {:.5}, {:+.1}%), \
         attempt {:.5} (exact {:.5}, {:+.1}%), attempts/call {:.5} (exact {:.5}, {:+.2}%), \
         loss {:.5} (exact {:.5}, {:+.1}%)",
        delay / h,
        f.blocking,
        exact.first_attempt_blocking,
        100.0 * (f.blocking / exact.first_attempt_blocking - 1.0),
        f.blocking,
        exact.attempt_blocking,
        100.0 * (f.blocking / exact.attempt_blocking - 1.0),
        s.attempts_per_call,
        exact.attempts_per_call,
        100.0 * (s.attempts_per_call / exact.attempts_per_call - 1.0),
        s.loss,
        exact.loss,
        100.0 * (s.loss / exact.loss - 1.0),
    );
    errors.into_iter().fold(0.0, f64::max)
}

#[test]
fn long_redial_delays_bring_the_fixed_point_close_to_the_exact_chain() {
    // Redials 20 holding times after the blocking see the group close to
    // its time average, as the fixed point assumes.
    let h = 180.0;
    for (n, a, p) in [(10u32, 7.0, 0.5), (10, 7.0, 0.8), (20, 15.0, 0.7)] {
        let worst = compare(n, a, h, p, 20.0 * h);
        assert!(worst < 0.02, "worst relative error {worst:.4}");
    }
}

#[test]
fn short_redial_delays_move_the_exact_chain_away_from_the_fixed_point() {
    // Redials soon after the blocking find the group still full far more
    // often than the time average says, so the exact attempt blocking and
    // loss rise above the fixed point. Issue 15 expects the fixed point
    // within 30%; measured here (N 10, A 7, 3-minute calls): the error falls
    // as the delay grows, stays within 30% from a delay of one holding time
    // on, and passes 30% for redials 5 s after the blocking (about 34% on
    // loss at p = 0.5 and 63% at p = 0.8, computed by this test and
    // printed).
    let h = 180.0;
    for p in [0.5, 0.8] {
        let mut previous = f64::INFINITY;
        for delay in [5.0, 30.0, 180.0, 900.0, 3600.0] {
            let worst = compare(10, 7.0, h, p, delay);
            assert!(
                worst < previous,
                "error should fall with the delay: {worst:.4}"
            );
            if delay >= h {
                assert!(
                    worst < 0.30,
                    "delay {delay} s: worst relative error {worst:.4}"
                );
            }
            previous = worst;
        }
        let short = compare(10, 7.0, h, p, 5.0);
        assert!(short > 0.25, "5 s redials: worst relative error {short:.4}");
    }
}

#[test]
fn several_streams_and_attempt_limits() {
    // Two streams, one with no redials: the fixed point's blocking is
    // Erlang B of the total attempt traffic, and the silent stream's loss
    // is that blocking itself.
    let streams = [
        RedialingStream {
            traffic: 4.0,
            chances: vec![0.8, 0.4],
            max_attempts: Some(3),
        },
        RedialingStream {
            traffic: 3.0,
            chances: vec![],
            max_attempts: Some(1),
        },
    ];
    let f = redial_fixed_point::solve(10, &streams).unwrap();
    let b = f.blocking;
    let first = 1.0 + 0.8 * b + 0.8 * b * 0.4 * b; // three attempts at most
    assert!(rel(f.streams[0].attempts_per_call, first) < 1e-12);
    assert_eq!(f.streams[1].attempts_per_call, 1.0);
    assert!(rel(f.streams[1].loss, b) < 1e-12);
    let total = 4.0 * first + 3.0;
    assert!(rel(b, erlang_b::blocking(10, total).unwrap()) < 1e-11);
    // The first stream loses a call only when its last attempt fails.
    assert!(rel(f.streams[0].loss, 1.0 - (1.0 - b) * first) < 1e-12);
}
