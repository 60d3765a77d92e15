//! Cobham's per-class mean waits (`formulas::priority`) against the exact
//! Markov chain of M/M/N with two non-pre-emptive priority classes, solved
//! here: the state is (busy agents) while some agent is free, and (waiting
//! class-1 calls, waiting class-2 calls) while every agent is busy; a
//! freed agent takes a class-1 call if one waits. Mean waits by Little's
//! law, W_k = E[waiting of class k] / lambda_k.

use busyhour::formulas::priority::class_mean_waits;

/// Stationary mean queue lengths of the two classes on `n` agents (rates
/// per second: arrivals `l1`, `l2`, service `mu` per agent), each queue
/// truncated at `cap` (its tail beyond is negligible at the loads used).
fn chain_mean_queues(n: usize, l1: f64, l2: f64, mu: f64, cap: usize) -> (f64, f64) {
    // States 0..n-1: that many busy, nobody waiting; then (q1, q2) with all
    // n busy, index n + q1 * (cap + 1) + q2.
    let side = cap + 1;
    let states = n + side * side;
    let full = |q1: usize, q2: usize| n + q1 * side + q2;
    // Outgoing transitions of each state: (target, rate).
    let mut out: Vec<Vec<(usize, f64)>> = vec![Vec::new(); states];
    for (b, o) in out.iter_mut().enumerate().take(n) {
        let up = if b + 1 < n { b + 1 } else { full(0, 0) };
        o.push((up, l1 + l2));
        if b > 0 {
            o.push((b - 1, b as f64 * mu));
        }
    }
    for q1 in 0..side {
        for q2 in 0..side {
            let s = full(q1, q2);
            if q1 < cap {
                out[s].push((full(q1 + 1, q2), l1));
            }
            if q2 < cap {
                out[s].push((full(q1, q2 + 1), l2));
            }
            let done = n as f64 * mu;
            let next = if q1 > 0 {
                full(q1 - 1, q2)
            } else if q2 > 0 {
                full(q1, q2 - 1)
            } else {
                n - 1
            };
            out[s].push((next, done));
        }
    }
    // Power iteration of the uniformised chain.
    let rate = l1 + l2 + n as f64 * mu;
    let mut p = vec![1.0 / states as f64; states];
    for _ in 0..200_000 {
        let mut next = vec![0.0; states];
        for (s, (moves, &ps)) in out.iter().zip(&p).enumerate() {
            let mut stay = 1.0;
            for &(t, r) in moves {
                next[t] += ps * r / rate;
                stay -= r / rate;
            }
            next[s] += ps * stay;
        }
        let change: f64 = next.iter().zip(&p).map(|(a, b)| (a - b).abs()).sum();
        p = next;
        if change < 1e-14 {
            break;
        }
    }
    let (mut m1, mut m2) = (0.0, 0.0);
    for q1 in 0..side {
        for q2 in 0..side {
            let pr = p[full(q1, q2)];
            m1 += q1 as f64 * pr;
            m2 += q2 as f64 * pr;
        }
    }
    (m1, m2)
}

#[test]
fn cobham_matches_the_exact_two_class_chain() {
    // Holding 1 s (mu = 1); the per-class waits scale with the holding.
    for (n, l1, l2) in [(1usize, 0.25, 0.35), (2, 0.5, 0.9), (3, 0.9, 1.2)] {
        let (m1, m2) = chain_mean_queues(n, l1, l2, 1.0, 70);
        let (w1, w2) = (m1 / l1, m2 / l2);
        let w = class_mean_waits(n as u32, &[l1, l2], 1.0).unwrap();
        for (k, (got, chain)) in [(w[0], w1), (w[1], w2)].into_iter().enumerate() {
            assert!(
                (got - chain).abs() <= 1e-7 * chain,
                "N = {n}, class {}: Cobham {got} against the chain {chain}",
                k + 1
            );
        }
    }
}
