//! The finite queue M/M/N/K and M/M/N/K+M (formulas::finite_queue) against
//! references outside its closed form:
//! - the birth-death chain of the group, its balance equations solved here
//!   by Gaussian elimination (Kleinrock 1975; Gross and Harris 1998 for
//!   M/M/c/K), for blocking, waiting, queue length and abandonment;
//! - a tagged caller's absorbing chain (answered or abandoned), solved
//!   here step by step and by uniformization in time, for the answered
//!   mean wait and the service level; without patience its wait law is
//!   Erlang (statrs Gamma cdf);
//! - Erlang B (no waiting room), Erlang C and Erlang A as the waiting room
//!   grows (Palm 1943; Gans, Koole and Mandelbaum 2003).

mod common;
use busyhour::formulas::{erlang_a, erlang_b, erlang_c, finite_queue};

#[track_caller]
fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = if expected == 0.0 {
        actual.abs()
    } else {
        ((actual - expected) / expected).abs()
    };
    assert!(
        error <= tolerance,
        "{what}: expected {expected:e}, got {actual:e} (relative error {error:e})"
    );
}

/// Stationary law of the birth-death chain on `0..=n+q`: births `a` below
/// `n + q`, deaths `min(k, n) + max(k - n, 0) gamma` (time in holding
/// times), solved as a general linear system `π Q = 0`, `Σ π = 1` by
/// Gaussian elimination with partial pivoting (tests/common).
fn chain(n: usize, q: usize, a: f64, gamma: f64) -> Vec<f64> {
    let states = n + q + 1;
    let mut t = Vec::new();
    for k in 0..states {
        if k + 1 < states {
            t.push((k, k + 1, a));
        }
        if k > 0 {
            t.push((
                k,
                k - 1,
                k.min(n) as f64 + k.saturating_sub(n) as f64 * gamma,
            ));
        }
    }
    common::dense_stationary(states, &t)
}

/// A tagged caller who finds `ahead` callers waiting (every agent busy):
/// from `i` ahead it moves on at rate `n + i gamma` (a service completion
/// or an abandonment ahead; at 0 ahead that is being answered) and gives
/// up at rate `gamma`. Returns P(answered) and E[wait; answered] (holding
/// times) by first-step analysis.
fn tagged(n: f64, ahead: usize, gamma: f64) -> (f64, f64) {
    // From i = 0 up: answered share f_i, answered wait g_i.
    let (mut f, mut g) = (1.0, 0.0);
    for i in 0..=ahead {
        let on = n + i as f64 * gamma;
        let total = on + gamma;
        // Spend Exp(total), then continue from i - 1 (or answered).
        let (f_prev, g_prev) = (f, g);
        f = on / total * f_prev;
        g = on / total * (g_prev + f_prev / total);
    }
    (f, g)
}

/// P(answered within `t` holding times) for the tagged caller, by
/// uniformization of its absorbing chain (states: i ahead, answered,
/// abandoned).
fn tagged_within(n: f64, ahead: usize, gamma: f64, t: f64) -> f64 {
    let rate = n + (ahead as f64 + 1.0) * gamma;
    // Probability vector over i = 0..=ahead ahead, plus answered.
    let mut p = vec![0.0; ahead + 2];
    p[ahead] = 1.0;
    let answered = ahead + 1;
    let mut weight = (-rate * t).exp();
    let mut result = 0.0;
    let mut k = 0u32;
    loop {
        result += weight * p[answered];
        k += 1;
        let next_weight = weight * rate * t / f64::from(k);
        if f64::from(k) > rate * t && next_weight < 1e-18 {
            break;
        }
        weight = next_weight;
        let mut q = vec![0.0; ahead + 2];
        q[answered] = p[answered];
        for i in 0..=ahead {
            let on = n + i as f64 * gamma;
            let target = if i == 0 { answered } else { i - 1 };
            q[target] += p[i] * on / rate;
            q[i] += p[i] * (1.0 - (on + gamma) / rate);
        }
        p = q;
    }
    result
}

#[test]
fn matches_the_birth_death_chain() {
    for &(n, q, a, patience) in &[
        (5u32, 3u32, 4.0, None),
        (10, 5, 9.5, None),
        (10, 5, 14.0, None),
        (8, 6, 7.0, Some(90.0)),
        (12, 10, 15.0, Some(40.0)),
        (3, 1, 2.5, Some(300.0)),
    ] {
        let h = 180.0;
        let gamma = patience.map_or(0.0, |p: f64| h / p);
        let f = finite_queue::solve(n, q, a, h, patience).unwrap();
        let pi = chain(n as usize, q as usize, a, gamma);
        let n_ = n as usize;
        let q_ = q as usize;
        let blocking = pi[n_ + q_];
        let waiting: f64 = pi[n_..n_ + q_].iter().sum();
        let mean_queue: f64 = (0..=q_).map(|j| j as f64 * pi[n_ + j]).sum();
        let what = format!("N={n} q={q} A={a} patience={patience:?}");
        assert_close(&format!("{what} blocking"), f.blocking, blocking, 1e-10);
        assert_close(
            &format!("{what} P(wait)"),
            f.wait_probability,
            waiting,
            1e-10,
        );
        assert_close(&format!("{what} E[Q]"), f.mean_queue, mean_queue, 1e-10);
        assert_close(
            &format!("{what} abandonment"),
            f.abandonment,
            gamma * mean_queue / a,
            1e-10,
        );
        // Shares add up: blocked + abandoned + answered = 1.
        assert!((f.blocking + f.abandonment + f.answered - 1.0).abs() < 1e-12);
        // Answered mean wait from the tagged caller's chain.
        let (mut answered, mut wait) = (pi[..n_].iter().sum::<f64>(), 0.0);
        for j in 0..q_ {
            let (s, w) = tagged(n as f64, j, gamma);
            answered += pi[n_ + j] * s;
            wait += pi[n_ + j] * w;
        }
        assert_close(&format!("{what} answered"), f.answered, answered, 1e-10);
        assert_close(
            &format!("{what} answered mean wait"),
            f.mean_wait_answered_s,
            wait * h / answered,
            1e-10,
        );
        // Service level at 20 s and 3 min, by uniformization.
        for t in [20.0, 180.0] {
            let mut sl = pi[..n_].iter().sum::<f64>();
            for j in 0..q_ {
                sl += pi[n_ + j] * tagged_within(n as f64, j, gamma, t / h);
            }
            assert_close(
                &format!("{what} service level {t} s"),
                f.service_level(t),
                sl,
                1e-9,
            );
        }
    }
}

#[test]
fn without_patience_the_wait_is_erlang() {
    // Kleinrock (1975): a caller finding j waiting in M/M/N/K waits
    // Erlang(j + 1, N/h); the service level from statrs' Gamma cdf.
    use statrs::distribution::{ContinuousCDF, Gamma};
    let (n, q, a, h, t) = (6u32, 4u32, 5.5, 120.0, 30.0);
    let f = finite_queue::solve(n, q, a, h, None).unwrap();
    let pi = chain(n as usize, q as usize, a, 0.0);
    let mut sl = pi[..n as usize].iter().sum::<f64>();
    for j in 0..q as usize {
        let g = Gamma::new(j as f64 + 1.0, f64::from(n) / h).unwrap();
        sl += pi[n as usize + j] * g.cdf(t);
    }
    assert_close("service level", f.service_level(t), sl, 1e-12);
}

#[test]
fn no_waiting_room_is_erlang_b() {
    for (n, a) in [(10u32, 8.0), (30, 25.0), (1, 0.3)] {
        let f = finite_queue::solve(n, 0, a, 60.0, None).unwrap();
        assert_close(
            "blocking",
            f.blocking,
            erlang_b::blocking(n, a).unwrap(),
            1e-12,
        );
        assert_eq!(f.wait_probability, 0.0);
    }
}

#[test]
fn a_long_waiting_room_tends_to_erlang_c_and_erlang_a() {
    // Erlang C: M/M/N with an unlimited queue, A < N.
    let (n, a, h) = (10u32, 8.0, 180.0);
    let c = erlang_c::wait_probability(n, a).unwrap();
    let w = erlang_c::mean_wait(n, a, h).unwrap();
    let mut previous_gap = f64::INFINITY;
    for q in [5u32, 20, 80, 400] {
        let f = finite_queue::solve(n, q, a, h, None).unwrap();
        let gap = (f.wait_probability - c).abs();
        assert!(
            gap < previous_gap,
            "q={q}: P(wait) gap {gap} did not shrink"
        );
        previous_gap = gap;
    }
    let f = finite_queue::solve(n, 400, a, h, None).unwrap();
    assert_close("P(wait)", f.wait_probability, c, 1e-12);
    assert_close("mean wait", f.mean_wait_answered_s, w, 1e-10);
    assert_close(
        "service level",
        f.service_level(20.0),
        erlang_c::service_level(n, a, h, 20.0).unwrap(),
        1e-10,
    );
    assert!(f.blocking < 1e-30);
    // Erlang A: exponential patience, here overloaded (A > N).
    let (n, a, h, p) = (10u32, 12.0, 180.0, 120.0);
    let e = erlang_a::solve(n, a, h, p).unwrap();
    let f = finite_queue::solve(n, 200, a, h, Some(p)).unwrap();
    assert_close("P(wait)", f.wait_probability, e.wait_probability, 1e-10);
    assert_close("abandonment", f.abandonment, e.abandonment, 1e-10);
    assert_close(
        "answered mean wait",
        f.mean_wait_answered_s,
        e.mean_wait_answered_s,
        1e-10,
    );
    assert_close(
        "service level",
        f.service_level(20.0),
        e.service_level(20.0),
        1e-10,
    );
}

#[test]
fn large_groups_stay_finite() {
    // 5,000 agents at 98% load with 2,000 places, and patience.
    let f = finite_queue::solve(5000, 2000, 4900.0, 180.0, Some(60.0)).unwrap();
    assert!((f.blocking + f.abandonment + f.answered - 1.0).abs() < 1e-9);
    let sl = f.service_level(20.0);
    assert!(sl > 0.0 && sl <= f.answered);
}
