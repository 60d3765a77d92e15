//! Erlang A (M/M/N+M) against independent computations.
//!
//! Sources: the birth-death balance equations of M/M/N+M (Palm's model;
//! Gans, Koole and Mandelbaum, M&SOM 2003), summed directly here; the
//! waiting time of a tagged caller as an absorbing Markov chain, solved by
//! uniformization (Jensen's method); the limits of the model: Erlang C as
//! patience grows without bound, and the Erlang B loss system as patience
//! shrinks to 0 (a caller who must wait leaves at once); rate balance and
//! Little's law.

use busyhour::formulas::erlang_a::{self, TRUNCATION_TOLERANCE};
use busyhour::formulas::{erlang_b, erlang_c};
use statrs::distribution::{Discrete, Poisson};

fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = ((actual - expected) / expected).abs();
    assert!(
        error <= tolerance,
        "{what}: expected {expected:e}, got {actual:e} (relative error {error:e} > {tolerance:e})"
    );
}

/// Normalised state probabilities `π_0 .. π_{N+J}` of M/M/N+M from the
/// balance equations `π_{k+1} d_{k+1} = π_k λ`, walked up from state 0 in
/// plain `f64` (fine for the moderate cases used here), to where the terms
/// are below 1e-22 of the sum and falling.
fn direct_states(n: u32, a: f64, holding: f64, patience: f64) -> Vec<f64> {
    let gamma = holding / patience;
    let mut weights = vec![1.0];
    let mut k = 0u32;
    loop {
        k += 1;
        let death = if k <= n {
            f64::from(k)
        } else {
            f64::from(n) + f64::from(k - n) * gamma
        };
        let w = weights[weights.len() - 1] * a / death;
        weights.push(w);
        let sum: f64 = weights.iter().sum();
        if k > n && w < 1e-22 * sum && a < death {
            break;
        }
    }
    let sum: f64 = weights.iter().sum();
    weights.iter().map(|w| w / sum).collect()
}

struct Direct {
    wait: f64,
    queue: f64,
    answered: f64,
}

fn direct_figures(n: u32, a: f64, holding: f64, patience: f64) -> (Direct, Vec<f64>) {
    let pi = direct_states(n, a, holding, patience);
    let gamma = holding / patience;
    let nf = f64::from(n);
    let mut figures = Direct {
        wait: 0.0,
        queue: 0.0,
        answered: 0.0,
    };
    for (k, p) in pi.iter().enumerate() {
        let k = k as u32;
        if k < n {
            figures.answered += p;
        } else {
            let j = f64::from(k - n);
            figures.wait += p;
            figures.queue += j * p;
            // Answered unless its patience ends first: the stages ahead have
            // rates N μ + i θ, i = j..0, against its own θ (product
            // telescopes to N / (N + (j+1) γ)).
            let mut reach = 1.0;
            for i in 0..=(k - n) {
                let stage = nf + f64::from(i) * gamma;
                reach *= stage / (stage + gamma);
            }
            figures.answered += p * reach;
        }
    }
    (figures, pi)
}

const CASES: [(u32, f64, f64, f64); 8] = [
    // (agents, erlangs, holding s, patience s)
    (1, 0.5, 60.0, 30.0),
    (3, 2.5, 60.0, 120.0),
    (5, 8.0, 180.0, 60.0),
    (10, 9.0, 180.0, 300.0),
    (10, 14.0, 200.0, 50.0),
    (20, 18.0, 240.0, 600.0),
    (50, 45.0, 180.0, 90.0),
    (2, 0.1, 100.0, 1.0),
];

#[test]
fn matches_the_balance_equations() {
    for (n, a, h, p) in CASES {
        let q = erlang_a::solve(n, a, h, p).unwrap();
        let (direct, _) = direct_figures(n, a, h, p);
        let what = format!("N={n} A={a} h={h} patience={p}");
        assert_close(
            &format!("{what} P(wait)"),
            q.wait_probability,
            direct.wait,
            1e-12,
        );
        assert_close(&format!("{what} E[Q]"), q.mean_queue, direct.queue, 1e-12);
        assert_close(
            &format!("{what} answered"),
            q.answered,
            direct.answered,
            1e-12,
        );
        // Rate balance: abandonments per second θ E[Q] = λ P(abandon).
        assert_close(
            &format!("{what} abandonment"),
            q.abandonment,
            (h / p) * direct.queue / a,
            1e-12,
        );
        // Every call is answered or abandons (two independent sums).
        assert!((q.abandonment + q.answered - 1.0).abs() < 1e-13, "{what}");
        // Little's law for the queue.
        assert_close(
            &format!("{what} wait"),
            q.mean_wait_s,
            direct.queue * h / a,
            1e-12,
        );
    }
}

#[test]
fn mean_wait_of_all_calls_is_the_mean_of_min_service_patience() {
    // A caller who finds j waiting stays min(V, τ); E[min(V, τ)] =
    // (1 - E[e^{-θV}]) / θ = patience × (1 - N/(N + (j+1)γ)). Summed over the
    // states, it must equal Little's E[Q] / λ.
    for (n, a, h, p) in CASES {
        let q = erlang_a::solve(n, a, h, p).unwrap();
        let pi = direct_states(n, a, h, p);
        let gamma = h / p;
        let nf = f64::from(n);
        let mut expected = 0.0;
        for (k, prob) in pi.iter().enumerate().skip(n as usize) {
            let j1 = (k - n as usize + 1) as f64;
            expected += prob * p * (j1 * gamma / (nf + j1 * gamma));
        }
        assert_close(&format!("N={n} A={a}"), q.mean_wait_s, expected, 1e-12);
    }
}

/// P(a caller who finds `j` waiting is answered within `t`), by
/// uniformization of its absorbing chain: with `i` callers ahead it moves to
/// `i - 1` at rate `N μ + i θ` (to an agent from `i = 0` at `N μ`) and
/// abandons at rate `θ`.
fn answered_within_uniformized(j: usize, n: f64, mu: f64, theta: f64, t: f64) -> f64 {
    let rate = n * mu + (j as f64 + 1.0) * theta;
    // dist[i] = P(i callers ahead after this many uniformized steps)
    let mut dist = vec![0.0; j + 1];
    dist[j] = 1.0;
    let mut served = 0.0;
    let steps = Poisson::new((rate * t).max(1e-300)).unwrap();
    let mut total = steps.pmf(0) * served;
    let last = (rate * t + 40.0 * (rate * t).sqrt() + 60.0) as u64;
    for step in 1..=last {
        let mut next = vec![0.0; j + 1];
        for i in 0..=j {
            let p = dist[i];
            if p == 0.0 {
                continue;
            }
            let forward = (n * mu + i as f64 * theta) / rate;
            let stay = 1.0 - forward - theta / rate;
            if i == 0 {
                served += p * forward;
            } else {
                next[i - 1] += p * forward;
            }
            next[i] += p * stay;
        }
        dist = next;
        total += steps.pmf(step) * served;
    }
    total
}

#[test]
fn service_level_matches_uniformization() {
    for (n, a, h, p) in [
        (1u32, 0.5, 60.0, 30.0),
        (3, 2.5, 60.0, 120.0),
        (5, 8.0, 180.0, 60.0),
        (4, 3.0, 100.0, 250.0),
    ] {
        let q = erlang_a::solve(n, a, h, p).unwrap();
        let pi = direct_states(n, a, h, p);
        let no_wait: f64 = pi[..n as usize].iter().sum();
        for t in [1.0, 10.0, 45.0, 200.0] {
            let mut expected = no_wait;
            for (k, prob) in pi.iter().enumerate().skip(n as usize) {
                if *prob < 1e-18 {
                    break;
                }
                expected += prob
                    * answered_within_uniformized(
                        k - n as usize,
                        f64::from(n),
                        1.0 / h,
                        1.0 / p,
                        t,
                    );
            }
            assert_close(
                &format!("SL(N={n}, A={a}, t={t})"),
                q.service_level(t),
                expected,
                1e-10,
            );
        }
    }
}

#[test]
fn service_level_ends_are_no_wait_and_answered() {
    for (n, a, h, p) in CASES {
        let q = erlang_a::solve(n, a, h, p).unwrap();
        assert_close(
            "SL(0)",
            q.service_level(0.0),
            1.0 - q.wait_probability,
            1e-12,
        );
        assert_close("SL(huge)", q.service_level(1e9), q.answered, 1e-12);
        let mut previous = 0.0;
        for t in [0.0, 1.0, 5.0, 20.0, 60.0, 600.0] {
            let sl = q.service_level(t);
            assert!(sl >= previous, "SL not increasing at t = {t}");
            previous = sl;
        }
    }
}

#[test]
fn mean_wait_of_answered_calls_integrates_the_service_level() {
    // E[W 1{answered}] = ∫_0^∞ (P(answered) - SL(t)) dt, integrated by
    // composite Simpson on a stretched grid (SL from the library, the
    // identity from the definition of the mean).
    for (n, a, h, p) in [
        (3u32, 2.5, 60.0, 120.0),
        (5, 8.0, 180.0, 60.0),
        (10, 9.0, 180.0, 300.0),
    ] {
        let q = erlang_a::solve(n, a, h, p).unwrap();
        let end = 60.0 * h.max(p);
        let steps = 20_000;
        let f = |s: f64| {
            // t = end s², dt = 2 end s ds
            let t = end * s * s;
            (q.answered - q.service_level(t)) * 2.0 * end * s
        };
        let step = 1.0 / f64::from(steps);
        let mut integral = f(0.0) + f(1.0);
        for i in 1..steps {
            let weight = if i % 2 == 1 { 4.0 } else { 2.0 };
            integral += weight * f(f64::from(i) * step);
        }
        integral *= step / 3.0;
        assert_close(
            &format!("N={n} A={a}"),
            q.mean_wait_answered_s,
            integral / q.answered,
            1e-8,
        );
    }
}

#[test]
fn long_patience_tends_to_erlang_c() {
    // As patience grows, M/M/N+M tends to M/M/N: the differences are of
    // order γ = h / patience, so each factor 100 in patience must shrink
    // them about 100-fold.
    for (n, a) in [(5u32, 4.0), (20, 17.0), (100, 95.0), (10_000, 9_950.0)] {
        let h = 180.0;
        let c = erlang_c::wait_probability(n, a).unwrap();
        let w = erlang_c::mean_wait(n, a, h).unwrap();
        let sl = erlang_c::service_level(n, a, h, 20.0).unwrap();
        let mut previous_gap = f64::INFINITY;
        for patience in [1e4 * h, 1e6 * h, 1e8 * h] {
            let q = erlang_a::solve(n, a, h, patience).unwrap();
            let gap = ((q.wait_probability - c) / c).abs();
            assert!(
                gap < previous_gap / 50.0 || gap < 1e-12,
                "N={n}: gap {gap} after {previous_gap}"
            );
            previous_gap = gap;
            // Abandonment θ E[Q] / λ with the Erlang C queue
            // E[Q] = C A / (N - A), to first order in γ (the second-order
            // terms are below 1e-3 from γ = 1e-6 on).
            if patience >= 1e6 * h {
                let queue_c = c * a / (f64::from(n) - a);
                assert_close(
                    "abandonment",
                    q.abandonment,
                    (h / patience) * queue_c / a,
                    1e-3,
                );
            }
            if patience == 1e8 * h {
                assert_close("P(wait)", q.wait_probability, c, 1e-5);
                assert_close("mean wait", q.mean_wait_s, w, 1e-5);
                assert_close("service level", q.service_level(20.0), sl, 1e-5);
            }
        }
    }
}

#[test]
fn short_patience_tends_to_erlang_b() {
    // With patience near 0 a caller who finds all agents busy leaves at
    // once: the state process is the loss system M/M/N/N, so the share that
    // waits (briefly) and the share that abandons both tend to B(N, A),
    // and the mean wait to 0. The first queue state has weight
    // A / (N + γ) relative to state N, and a waiting caller is still
    // answered with probability N / (N + γ), so the relative errors are of
    // order (A + N) / γ = (A + N) × patience / h.
    for (n, a) in [(1u32, 0.5), (5, 4.0), (20, 25.0), (100, 95.0)] {
        let h = 180.0;
        let b = erlang_b::blocking(n, a).unwrap();
        let ratio = 1e-6;
        let q = erlang_a::solve(n, a, h, ratio * h).unwrap();
        let tolerance = 2.0 * (a + f64::from(n)) * ratio;
        assert_close("P(wait) -> B", q.wait_probability, b, tolerance);
        assert_close("P(abandon) -> B", q.abandonment, b, tolerance);
        assert!(q.mean_wait_s < 1e-5 * h);
    }
}

#[test]
fn truncation_bound_holds() {
    // Continue the queue-state terms far beyond where the library stopped
    // and measure what it neglected: mass and first moment must be below
    // TRUNCATION_TOLERANCE of the totals, and the mass below the reported
    // bound.
    let cases = [
        (10u32, 9.0, 180.0, 300.0),
        (10, 30.0, 180.0, 60.0),  // heavy overload, long queue
        (200, 199.0, 180.0, 1e5), // long patience, slow decay
        (1, 50.0, 60.0, 60.0),    // one agent, huge overload
        (3, 0.01, 60.0, 0.5),     // short queue
    ];
    for (n, a, h, p) in cases {
        let q = erlang_a::solve(n, a, h, p).unwrap();
        let gamma = h / p;
        let nf = f64::from(n);
        // Terms relative to state N, in log form to stay in range.
        let mut ln_term = 0.0f64;
        let mut kept: Vec<f64> = vec![0.0];
        let mut j = 0u64;
        let mut neglected_ln = Vec::new();
        loop {
            j += 1;
            ln_term += (a / (nf + j as f64 * gamma)).ln();
            if j <= q.truncated_at {
                kept.push(ln_term);
            } else {
                neglected_ln.push((j, ln_term));
                if ln_term < kept.iter().cloned().fold(f64::MIN, f64::max) - 80.0
                    && a < nf + j as f64 * gamma
                {
                    break;
                }
            }
        }
        let top = kept.iter().cloned().fold(f64::MIN, f64::max);
        let kept_mass: f64 = kept.iter().map(|l| (l - top).exp()).sum();
        let kept_moment: f64 = kept
            .iter()
            .enumerate()
            .map(|(i, l)| i as f64 * (l - top).exp())
            .sum();
        let lost_mass: f64 = neglected_ln.iter().map(|(_, l)| (l - top).exp()).sum();
        let lost_moment: f64 = neglected_ln
            .iter()
            .map(|(i, l)| *i as f64 * (l - top).exp())
            .sum();
        let what = format!("N={n} A={a} patience={p} (stopped at {})", q.truncated_at);
        assert!(
            lost_mass <= TRUNCATION_TOLERANCE * kept_mass,
            "{what}: mass {lost_mass:e} of {kept_mass:e}"
        );
        assert!(
            lost_mass / kept_mass <= q.tail_bound * (1.0 + 1e-9),
            "{what}: bound {}",
            q.tail_bound
        );
        assert!(
            lost_moment <= TRUNCATION_TOLERANCE * kept_moment,
            "{what}: moment"
        );
        // And the bound is not vacuous: the truncation is not wildly late.
        assert!(q.tail_bound > 0.0);
    }
}

#[test]
fn extreme_range_is_finite_and_consistent() {
    for a in [1.0, 2500.0, 9000.0, 10_000.0, 10_500.0] {
        let mut previous_wait = 1.0;
        for n in [9_000u32, 9_900, 10_000, 10_200] {
            for patience in [1.0, 180.0, 1e5] {
                let q = erlang_a::solve(n, a, 180.0, patience).unwrap();
                let what = format!("N={n} A={a} patience={patience}");
                for x in [
                    q.wait_probability,
                    q.abandonment,
                    q.answered,
                    q.service_level(20.0),
                ] {
                    assert!(x.is_finite() && (0.0..=1.0).contains(&x), "{what}: {x}");
                }
                assert!(
                    q.mean_wait_s.is_finite() && q.mean_wait_answered_s.is_finite(),
                    "{what}"
                );
                assert!((q.abandonment + q.answered - 1.0).abs() < 1e-12, "{what}");
                assert!(q.carried_traffic <= f64::from(n) * (1.0 + 1e-12), "{what}");
            }
            let q = erlang_a::solve(n, a, 180.0, 180.0).unwrap();
            assert!(
                q.wait_probability <= previous_wait,
                "P(wait) rose with agents at N={n} A={a}"
            );
            previous_wait = q.wait_probability;
        }
    }
}

#[test]
fn absurd_overload_with_endless_patience_is_refused_not_hung() {
    let e = erlang_a::solve(1, 10_000.0, 60.0, 1e12);
    assert!(e.is_err());
}
