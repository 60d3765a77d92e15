//! The exact Markov-chain references (`formulas::chains`) against published
//! results and an independent solver.
//!
//! Sources: Erlang B (A. K. Erlang, 1917), computed here by statrs' Poisson
//! distribution (`common::erlang_b_statrs`) and by `formulas::erlang_b`;
//! Riordan's overflow mean `A E_N(A)` (J. Riordan, 1956, as given by
//! R. I. Wilkinson, BSTJ 35, 1956) by `formulas::overflow::riordan`; the
//! retrial queue M/M/1 with persistent callers (G. I. Falin and
//! J. G. C. Templeton, "Retrial Queues", 1997); and dense Gaussian
//! elimination with partial pivoting written in this file.

mod common;

use busyhour::formulas::chains::{self, Chain, FirstChoice};
use busyhour::formulas::{erlang_b, overflow};
use common::{dense_stationary, erlang_b_statrs};

#[track_caller]
fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = if expected == 0.0 {
        actual.abs()
    } else {
        ((actual - expected) / expected).abs()
    };
    assert!(
        error <= tolerance,
        "{what}\n  expected {expected:.15e}\n  actual   {actual:.15e}\n  relative error {error:.2e} > {tolerance:.0e}"
    );
}

#[test]
fn birth_death_chain_is_the_truncated_poisson() {
    // M/M/N/N as a generic chain: π_k is Poisson(A) truncated at N (Erlang
    // 1917), every state checked against statrs, and the sum is 1.
    use statrs::distribution::{Discrete, DiscreteCDF, Poisson};
    for (n, a) in [(1usize, 0.3), (10, 5.0), (40, 38.0), (30, 60.0)] {
        let mut c = Chain::new(n + 1).unwrap();
        for k in 0..n {
            c.add(k, k + 1, a).unwrap();
            c.add(k + 1, k, (k + 1) as f64).unwrap();
        }
        let s = c.solve().unwrap();
        assert!(s.residual <= chains::RESIDUAL_TOLERANCE);
        let poisson = Poisson::new(a).unwrap();
        let cdf = poisson.cdf(n as u64);
        for (k, &p) in s.probabilities.iter().enumerate() {
            assert_close(
                &format!("N = {n}, A = {a}: π_{k}"),
                p,
                poisson.pmf(k as u64) / cdf,
                1e-12,
            );
        }
        let total: f64 = s.probabilities.iter().sum();
        assert_close("probabilities sum to 1", total, 1.0, 1e-14);
    }
}

#[test]
fn redials_that_never_happen_are_erlang_b() {
    // With redial chance 0 every blocked call is cleared: the group is
    // Erlang's (1917), whatever the delay.
    for (n, a) in [(1u32, 0.5), (4, 2.0), (10, 5.0), (30, 20.3), (14, 20.0)] {
        let r = chains::redials(n, a, 180.0, 0.0, 60.0).unwrap();
        let b = erlang_b_statrs(u64::from(n), a);
        let what = format!("N = {n}, A = {a}");
        assert_close(
            &format!("{what}: vs statrs"),
            r.first_attempt_blocking,
            b,
            1e-11,
        );
        let b = erlang_b::blocking(n, a).unwrap();
        assert_close(
            &format!("{what}: first attempts"),
            r.first_attempt_blocking,
            b,
            1e-12,
        );
        assert_close(&format!("{what}: attempts"), r.attempt_blocking, b, 1e-12);
        assert_close(&format!("{what}: loss"), r.loss, b, 1e-12);
        assert_close(
            &format!("{what}: attempts/call"),
            r.attempts_per_call,
            1.0,
            1e-15,
        );
        assert_close(
            &format!("{what}: carried"),
            r.carried_traffic,
            a * (1.0 - b),
            1e-12,
        );
        assert_eq!(r.mean_orbit, 0.0);
    }
}

#[test]
fn redials_conserve_calls_and_attempts() {
    for (n, a, p, delay_s) in [
        (10u32, 5.0, 0.5, 60.0),
        (4, 2.0, 0.8, 30.0),
        (30, 25.0, 0.7, 120.0),
        (5, 8.0, 0.9, 10.0),
    ] {
        let r = chains::redials(n, a, 180.0, p, delay_s).unwrap();
        let what = format!("N = {n}, A = {a}, p = {p}, delay {delay_s} s");
        assert!(r.tail_estimate <= chains::TAIL_TOLERANCE, "{what}: {r:?}");
        // Calls: every fresh call is answered or lost, so the carried
        // traffic is the answered share of the offered traffic (Little).
        assert_close(
            &format!("{what}: carried = A (1 - loss)"),
            r.carried_traffic,
            a * (1.0 - r.loss),
            1e-10,
        );
        // Attempts: each blocked attempt is followed by another with chance
        // p, so attempts per call = 1 / (1 - p x attempt blocking) (the
        // orbit's inflow equals its outflow).
        assert_close(
            &format!("{what}: attempts per call"),
            r.attempts_per_call,
            1.0 / (1.0 - p * r.attempt_blocking),
            1e-10,
        );
        // Redials add load: more blocking than Erlang B at the first
        // attempt (the servers are busier), less loss than a first attempt.
        let b = erlang_b::blocking(n, a).unwrap();
        assert!(r.first_attempt_blocking > b, "{what}: {r:?}");
        assert!(r.loss < r.first_attempt_blocking, "{what}: {r:?}");
    }
}

#[test]
fn persistent_redials_on_one_server_match_the_retrial_queue() {
    // M/M/1 retrial queue, every blocked caller redials (classical retrial
    // rate j ν): the server is busy a share ρ of the time and the mean orbit
    // is ρ (ρ + λ/ν) / (1 - ρ) (Falin and Templeton 1997, the M/M/1 retrial
    // queue; the formula recalled from memory: the M/M/1 mean queue plus
    // λ ρ / (ν (1 - ρ))).
    for (rho, holding_s, delay_s) in [(0.5, 180.0, 60.0), (0.8, 100.0, 250.0), (0.3, 60.0, 5.0)] {
        let r = chains::redials(1, rho, holding_s, 1.0, delay_s).unwrap();
        let lambda = rho / holding_s;
        let nu = 1.0 / delay_s;
        let what = format!("ρ = {rho}, h = {holding_s} s, delay {delay_s} s");
        assert_close(&format!("{what}: busy"), r.time_congestion, rho, 1e-10);
        assert_close(
            &format!("{what}: mean orbit"),
            r.mean_orbit,
            rho * (rho + lambda / nu) / (1.0 - rho),
            1e-9,
        );
        assert_close(&format!("{what}: loss"), r.loss, 0.0, 0.0);
    }
}

#[test]
fn redial_chain_agrees_with_an_independent_solver() {
    // The same model written out here and solved densely, at the orbit cut
    // the library chose.
    let (n, a, holding_s, p, delay_s) = (10usize, 5.0, 180.0, 0.5, 60.0);
    let r = chains::redials(n as u32, a, holding_s, p, delay_s).unwrap();
    let cut = r.orbit_cut as usize;
    let (lambda, mu, nu) = (a / holding_s, 1.0 / holding_s, 1.0 / delay_s);
    let w = n + 1;
    let id = |i: usize, j: usize| j * w + i;
    let mut t = Vec::new();
    for j in 0..=cut {
        for i in 0..=n {
            if i < n {
                t.push((id(i, j), id(i + 1, j), lambda));
                if j > 0 {
                    t.push((id(i, j), id(i + 1, j - 1), j as f64 * nu));
                }
            } else {
                if j < cut {
                    t.push((id(i, j), id(i, j + 1), lambda * p));
                }
                if j > 0 {
                    t.push((id(i, j), id(i, j - 1), j as f64 * nu * (1.0 - p)));
                }
            }
            if i > 0 {
                t.push((id(i, j), id(i - 1, j), i as f64 * mu));
            }
        }
    }
    let pi = dense_stationary(w * (cut + 1), &t);
    let full: f64 = (0..=cut).map(|j| pi[id(n, j)]).sum();
    let blocked: f64 = (0..=cut)
        .map(|j| pi[id(n, j)] * (lambda + j as f64 * nu))
        .sum();
    let orbit: f64 = (0..=cut)
        .flat_map(|j| (0..=n).map(move |i| (i, j)))
        .map(|(i, j)| pi[id(i, j)] * j as f64)
        .sum();
    assert_close("first attempts", r.first_attempt_blocking, full, 1e-10);
    assert_close(
        "attempts",
        r.attempt_blocking,
        blocked / (lambda + nu * orbit),
        1e-10,
    );
    assert_close("loss", r.loss, (1.0 - p) * blocked / lambda, 1e-10);
    assert_close(
        "attempts per call",
        r.attempts_per_call,
        1.0 + nu * orbit / lambda,
        1e-10,
    );
}

#[test]
fn a_final_group_of_no_servers_leaves_erlang_b_per_first_choice_group() {
    let groups = [
        FirstChoice {
            servers: 10,
            traffic: 8.0,
        },
        FirstChoice {
            servers: 7,
            traffic: 5.0,
        },
        FirstChoice {
            servers: 3,
            traffic: 0.4,
        },
    ];
    let net = chains::overflow_network(&groups, 0, 2.0).unwrap();
    for (i, g) in groups.iter().enumerate() {
        let b = erlang_b_statrs(u64::from(g.servers), g.traffic);
        assert_close(
            &format!("group {i}: loss"),
            net.first_choice_loss[i],
            b,
            1e-11,
        );
        assert_close(
            &format!("group {i}: carried"),
            net.first_choice_carried[i],
            g.traffic * (1.0 - b),
            1e-11,
        );
    }
    assert_close("direct loss", net.direct_loss, 1.0, 1e-14);
    assert_eq!(net.final_carried, 0.0);
}

#[test]
fn one_first_choice_group_and_its_final_group_are_one_erlang_group() {
    // With a common exponential holding, a first-choice group of N1 and its
    // final group of F together hold calls exactly like one group of N1 + F
    // hunted in order: the total busy is Erlang's (1917), so calls are lost
    // with B(N1 + F, A) and the two carry A (1 - B(N1 + F, A)) together.
    for (n1, f, a) in [(10u32, 8u32, 8.0), (5, 5, 9.0), (1, 1, 0.5), (20, 3, 15.0)] {
        let net = chains::overflow_network(
            &[FirstChoice {
                servers: n1,
                traffic: a,
            }],
            f,
            0.0,
        )
        .unwrap();
        let b = erlang_b_statrs(u64::from(n1 + f), a);
        let what = format!("N1 = {n1}, F = {f}, A = {a}");
        assert_close(&format!("{what}: loss"), net.first_choice_loss[0], b, 1e-11);
        assert_close(
            &format!("{what}: total carried"),
            net.first_choice_carried[0] + net.final_carried,
            a * (1.0 - b),
            1e-11,
        );
        // The final group is offered the overflow, Riordan's mean.
        let m = overflow::riordan(n1, a).unwrap().mean;
        assert_close(
            &format!("{what}: overflow mean"),
            net.overflow_mean[0],
            m,
            1e-11,
        );
    }
}

/// The reference network of the coverage harness: two first-choice groups
/// (10 circuits, 8 E; 7 circuits, 5 E) and a direct stream of 2 E onto a
/// final group of 8 circuits.
fn reference_groups() -> [FirstChoice; 2] {
    [
        FirstChoice {
            servers: 10,
            traffic: 8.0,
        },
        FirstChoice {
            servers: 7,
            traffic: 5.0,
        },
    ]
}

#[test]
fn reference_network_conserves_traffic_and_overflows_as_riordan() {
    let groups = reference_groups();
    let net = chains::overflow_network(&groups, 8, 2.0).unwrap();
    // Overflow mean of each first-choice group: Riordan's A E_N(A).
    for (i, g) in groups.iter().enumerate() {
        let m = overflow::riordan(g.servers, g.traffic).unwrap().mean;
        assert_close(
            &format!("group {i}: overflow mean"),
            net.overflow_mean[i],
            m,
            1e-11,
        );
        let b = erlang_b::blocking(g.servers, g.traffic).unwrap();
        assert_close(
            &format!("group {i}: carried"),
            net.first_choice_carried[i],
            g.traffic * (1.0 - b),
            1e-11,
        );
    }
    // Carried + lost = offered, over the whole network.
    let offered = 8.0 + 5.0 + 2.0;
    let lost =
        8.0 * net.first_choice_loss[0] + 5.0 * net.first_choice_loss[1] + 2.0 * net.direct_loss;
    let carried = net.first_choice_carried.iter().sum::<f64>() + net.final_carried;
    assert_close("carried + lost", carried + lost, offered, 1e-12);
    // And on the final group alone: what it is offered (overflow + direct)
    // is carried or lost there.
    let final_offered = net.overflow_mean.iter().sum::<f64>() + 2.0;
    let final_lost = lost;
    assert_close(
        "final group: carried + lost",
        net.final_carried + final_lost,
        final_offered,
        1e-12,
    );
    // A first-choice stream is lost only when the final group is full and
    // its own group too: P(n_i = N_i, m = F) < P(m = F).
    assert!(net.direct_loss > net.first_choice_loss[0]);
    assert!(net.direct_loss > net.first_choice_loss[1]);
}

#[test]
fn reference_network_agrees_with_an_independent_solver() {
    // The network's chain written out here, state (n1, n2, m) numbered
    // n1 + 11 n2 + 88 m, solved densely.
    let (s1, s2, f) = (10usize, 7usize, 8usize);
    let (a1, a2, ad) = (8.0, 5.0, 2.0);
    let id = |n1: usize, n2: usize, m: usize| n1 + (s1 + 1) * (n2 + (s2 + 1) * m);
    let states = (s1 + 1) * (s2 + 1) * (f + 1);
    let mut t = Vec::new();
    for m in 0..=f {
        for n2 in 0..=s2 {
            for n1 in 0..=s1 {
                let here = id(n1, n2, m);
                if n1 < s1 {
                    t.push((here, id(n1 + 1, n2, m), a1));
                } else if m < f {
                    t.push((here, id(n1, n2, m + 1), a1));
                }
                if n2 < s2 {
                    t.push((here, id(n1, n2 + 1, m), a2));
                } else if m < f {
                    t.push((here, id(n1, n2, m + 1), a2));
                }
                if m < f {
                    t.push((here, id(n1, n2, m + 1), ad));
                }
                if n1 > 0 {
                    t.push((here, id(n1 - 1, n2, m), n1 as f64));
                }
                if n2 > 0 {
                    t.push((here, id(n1, n2 - 1, m), n2 as f64));
                }
                if m > 0 {
                    t.push((here, id(n1, n2, m - 1), m as f64));
                }
            }
        }
    }
    let pi = dense_stationary(states, &t);
    let share = |keep: &dyn Fn(usize, usize, usize) -> bool| -> f64 {
        let mut s = 0.0;
        for m in 0..=f {
            for n2 in 0..=s2 {
                for n1 in 0..=s1 {
                    if keep(n1, n2, m) {
                        s += pi[id(n1, n2, m)];
                    }
                }
            }
        }
        s
    };
    let net = chains::overflow_network(&reference_groups(), 8, 2.0).unwrap();
    assert_eq!(net.states, states);
    assert_close(
        "stream 1 loss",
        net.first_choice_loss[0],
        share(&|n1, _, m| n1 == s1 && m == f),
        1e-10,
    );
    assert_close(
        "stream 2 loss",
        net.first_choice_loss[1],
        share(&|_, n2, m| n2 == s2 && m == f),
        1e-10,
    );
    assert_close(
        "direct loss",
        net.direct_loss,
        share(&|_, _, m| m == f),
        1e-10,
    );
    // An earlier computation of this network (recalled, three digits) gave
    // about 1.007%, 0.788% and 3.04%.
    assert!(
        (net.first_choice_loss[0] - 0.01007).abs() < 0.00001,
        "{net:?}"
    );
    assert!(
        (net.first_choice_loss[1] - 0.00788).abs() < 0.00001,
        "{net:?}"
    );
    assert!((net.direct_loss - 0.0304).abs() < 0.0001, "{net:?}");
}

#[test]
fn solver_limits_are_errors_not_panics() {
    // A network too big for the chain.
    let big = FirstChoice {
        servers: 1000,
        traffic: 900.0,
    };
    assert!(matches!(
        chains::overflow_network(&[big, big, big], 1000, 0.0),
        Err(busyhour::formulas::FormulaError::OutOfRange { .. })
    ));
}
