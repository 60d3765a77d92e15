//! Pre-emptive priority (`preemption` on a group): the highest class
//! against the queue it sees alone, the interruptions against exact
//! results (the M/M/N number in system for pre-emptive resume, the chain
//! of a loss group with pre-emptive loss solved here), work conservation,
//! and the engine's bookkeeping (a group with pre-emption and one rank is
//! the group without it, bit for bit; threads change nothing).
//! Tolerances come from each estimate's own 95% interval; seeds are fixed.

mod common;
use busyhour::experiment::{self, RunOptions};
use busyhour::scenario::Replications;
use busyhour::stats::Scope;
use common::*;

/// Two streams on one group of `n` servers, "urgent" with priority 1 and
/// "routine" with priority 2, traffics `a` (E), exponential holding of
/// mean `h` (s), the group's `queue` and `preemption` as TOML values.
fn two_classes(n: u32, a: [f64; 2], h: f64, queue: &str, rule: &str, seed: u32) -> String {
    format!(
        r#"
[simulation]
warmup = "4h"
length = "100h"
replications = 20
seed = {seed}
[[group]]
name = "crews"
servers = {n}
queue = {queue}
preemption = "{rule}"
[[stream]]
name = "urgent"
arrivals = {{ law = "poisson", rate = "{r0}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["crews"]
priority = 1
[[stream]]
name = "routine"
arrivals = {{ law = "poisson", rate = "{r1}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["crews"]
priority = 2
"#,
        r0 = a[0] / h * 3600.0,
        r1 = a[1] / h * 3600.0,
    )
}

#[test]
fn pre_emptive_resume_matches_the_m_m_n_queue() {
    let (n, a, h) = (4u32, [2.0, 1.2], 120.0);
    let o = run(&model(&two_classes(n, a, h, "\"unlimited\"", "resume", 11)));
    // The urgent class never sees the routine one: it is an M/M/N queue of
    // its own load (pre-emptive priority; Kleinrock, Queueing Systems vol.
    // II, 3.7: the highest class is unaffected by the classes below it).
    let c_urgent = erlang_c_statrs(n, a[0]);
    let w_urgent = c_urgent * h / (f64::from(n) - a[0]);
    let p = o.get(Scope::Stream(0), "wait_probability").unwrap();
    let w = o.get(Scope::Stream(0), "wait_mean").unwrap();
    assert_covers("urgent P(wait), Erlang C of its own load", p, c_urgent, 4.0);
    assert_covers(
        "urgent mean wait, Erlang C of its own load",
        w,
        w_urgent,
        4.0,
    );
    assert_precise("urgent P(wait)", p, 0.1);
    // With one exponential holding mean and resumption, the number of
    // calls in the group is that of M/M/N first come first served (the
    // discipline is work-conserving and memoryless): every server busy
    // with probability Erlang C of the total load.
    let total = a[0] + a[1];
    let c_total = erlang_c_statrs(n, total);
    let full = o.get(Scope::Group(0), "time_congestion").unwrap();
    assert_covers("time congestion, Erlang C of the total", full, c_total, 4.0);
    // So an urgent arrival interrupts a routine call exactly when every
    // server is busy and fewer than N urgent calls are in the group:
    // P(n >= N) - P(urgent >= N) by PASTA, that is C(N, A) - C(N, a_1);
    // per answered routine call, times the ratio of the arrival rates.
    let want = a[0] / a[1] * (c_total - c_urgent);
    let i = o.get(Scope::Stream(1), "interruptions").unwrap();
    assert_covers("routine interruptions per answered call", i, want, 4.0);
    assert_precise("routine interruptions", i, 0.1);
    // Resumption loses no work: the routine stream carries its offered
    // traffic (a stable system), which fails if an interrupted call's rest
    // were dropped or counted twice.
    let carried = o.get(Scope::Stream(1), "carried_traffic").unwrap();
    assert_covers("routine carried traffic", carried, a[1], 4.0);
    assert!(o.get(Scope::Stream(0), "interruptions").is_none());
}

/// The loss group with pre-emptive loss, solved exactly: states (u, r) of
/// urgent and routine calls in service, u + r <= n; returns P(u + r = n),
/// P(u + r = n, r > 0) and the mean of r.
fn loss_chain(n: usize, a: [f64; 2], h: f64) -> (f64, f64, f64) {
    let index = |u: usize, r: usize| u * (n + 1) + r;
    let states = (n + 1) * (n + 1);
    let (l0, l1, mu) = (a[0] / h, a[1] / h, 1.0 / h);
    let mut t = Vec::new();
    for u in 0..=n {
        for r in 0..=n {
            let s = index(u, r);
            if u + r > n {
                // Unreachable: tie it to (0, 0) so that it has no mass.
                t.push((s, index(0, 0), 1.0));
                continue;
            }
            if u + r < n {
                t.push((s, index(u + 1, r), l0));
                t.push((s, index(u, r + 1), l1));
            } else if r > 0 {
                t.push((s, index(u + 1, r - 1), l0)); // an interruption
            }
            if u > 0 {
                t.push((s, index(u - 1, r), u as f64 * mu));
            }
            if r > 0 {
                t.push((s, index(u, r - 1), r as f64 * mu));
            }
        }
    }
    let pi = dense_stationary(states, &t);
    let (mut full, mut full_with_routine, mut mean_r) = (0.0, 0.0, 0.0);
    for u in 0..=n {
        for r in 0..=n - u {
            let p = pi[index(u, r)];
            mean_r += r as f64 * p;
            if u + r == n {
                full += p;
                if r > 0 {
                    full_with_routine += p;
                }
            }
        }
    }
    (full, full_with_routine, mean_r)
}

#[test]
fn pre_emptive_loss_on_a_loss_group_matches_its_chain() {
    let (n, a, h) = (5u32, [1.5, 2.5], 300.0);
    let text = two_classes(n, a, h, "0", "lose", 23);
    let o = run(&model(&text));
    // The urgent class sees Erlang B of its own load.
    let b = erlang_b_statrs(u64::from(n), a[0]);
    let loss = o.get(Scope::Stream(0), "loss").unwrap();
    assert_covers("urgent loss, Erlang B of its own load", loss, b, 4.0);
    let (full, full_with_routine, mean_r) = loss_chain(n as usize, a, h);
    let blocked = o.get(Scope::Stream(1), "first_attempt_blocking").unwrap();
    assert_covers("routine blocking (chain)", blocked, full, 4.0);
    assert_precise("routine blocking", blocked, 0.05);
    // Interruptions per answered routine call: the urgent arrival rate
    // into full states holding a routine call, over the routine calls
    // answered.
    let want = a[0] * full_with_routine / (a[1] * (1.0 - full));
    let i = o.get(Scope::Stream(1), "interruptions").unwrap();
    assert_covers(
        "routine interruptions per answered call (chain)",
        i,
        want,
        4.0,
    );
    assert_precise("routine interruptions", i, 0.1);
    let carried = o.get(Scope::Stream(1), "carried_traffic").unwrap();
    assert_covers("routine carried traffic (chain)", carried, mean_r, 4.0);
}

#[test]
fn the_highest_class_of_a_loss_group_is_insensitive_to_holding_laws() {
    // Erlang B holds for any holding law (insensitivity): with lognormal
    // urgent calls and pre-emptive loss the urgent class still sees
    // Erlang B of its own load, whatever the routine calls do.
    let text = two_classes(4, [1.2, 2.0], 300.0, "0", "lose", 5).replacen(
        r#"holding = { law = "exponential", mean = "300s" }"#,
        r#"holding = { law = "lognormal", mean = "300s", cv = 1.5 }"#,
        1,
    );
    assert!(text.contains("lognormal"));
    let o = run(&model(&text));
    let b = erlang_b_statrs(4, 1.2);
    let loss = o.get(Scope::Stream(0), "loss").unwrap();
    assert_covers("urgent loss, Erlang B of its own load", loss, b, 4.0);
    assert_precise("urgent loss", loss, 0.1);
}

#[test]
fn restarting_repeats_the_work_and_resuming_does_not() {
    // Repeating an interrupted call's whole holding time adds the part
    // already served to the work: the routine stream carries more than it
    // offers, and the urgent class still sees its own queue.
    let (n, a, h) = (4u32, [1.5, 1.5], 120.0);
    let o = run(&model(&two_classes(n, a, h, "\"unlimited\"", "restart", 3)));
    let carried = o.get(Scope::Stream(1), "carried_traffic").unwrap();
    assert!(
        carried.mean - a[1] > 4.0 * carried.half_width,
        "restart carries {carried:?}, offered {}",
        a[1]
    );
    let c_urgent = erlang_c_statrs(n, a[0]);
    let p = o.get(Scope::Stream(0), "wait_probability").unwrap();
    assert_covers("urgent P(wait), Erlang C of its own load", p, c_urgent, 4.0);
    // The same model with resumption carries what it offers.
    let o = run(&model(&two_classes(n, a, h, "\"unlimited\"", "resume", 3)));
    let carried = o.get(Scope::Stream(1), "carried_traffic").unwrap();
    assert_covers("resume carried traffic", carried, a[1], 4.0);
}

#[test]
fn pre_emption_without_ranks_changes_nothing() {
    // Both streams of one priority: nobody may interrupt anybody, and the
    // tracked calls' ends fall in the calendar exactly where the plain
    // departures do, so the figures are the same bit for bit.
    let plain = two_classes(5, [1.5, 2.0], 120.0, "8", "resume", 9)
        .replace("length = \"100h\"", "length = \"5h\"")
        .replace("priority = 2", "priority = 1");
    let without = plain.replace("preemption = \"resume\"\n", "");
    assert_ne!(plain, without);
    let (p, q) = (run(&model(&plain)), run(&model(&without)));
    for s in 0..2 {
        for figure in ["loss", "wait_mean", "carried_traffic", "wait_probability"] {
            let (x, y) = (
                p.get(Scope::Stream(s), figure).unwrap(),
                q.get(Scope::Stream(s), figure).unwrap(),
            );
            assert_eq!(x.mean.to_bits(), y.mean.to_bits(), "{figure}");
        }
    }
}

#[test]
fn threads_change_no_figure() {
    let text = two_classes(4, [1.5, 2.0], 120.0, "6", "resume", 2)
        .replace("length = \"100h\"", "length = \"3h\"");
    let m = model(&text);
    let run_on = |threads: usize| {
        let opts = RunOptions {
            threads: Some(threads),
            ..RunOptions::default()
        };
        experiment::run(&m, Some(Replications::Fixed(12)), &opts).expect("run")
    };
    let (one, four) = (run_on(1), run_on(4));
    for figure in ["interruptions", "wait_mean", "carried_traffic"] {
        let (x, y) = (
            one.get(Scope::Stream(1), figure).unwrap(),
            four.get(Scope::Stream(1), figure).unwrap(),
        );
        assert_eq!(x.mean.to_bits(), y.mean.to_bits(), "{figure}");
        assert_eq!(x.half_width.to_bits(), y.half_width.to_bits(), "{figure}");
    }
}

#[test]
fn every_interrupted_call_is_served_again_or_lost_once() {
    // Conservation in the group's queue, with interrupted calls joining it:
    // joined = answered + taken elsewhere + abandoned + moved on + waiting
    // at the end, in every replication; a measured call interrupted is
    // never counted as unresolved.
    let text = two_classes(3, [1.0, 1.5], 120.0, "4", "resume", 8)
        .replace("length = \"100h\"", "length = \"2h\"")
        + "patience = { law = \"exponential\", mean = \"2m\" }\n";
    let m = model(&text);
    for r in 0..10 {
        let t = busyhour::engine::run_replication(&m, r);
        let q = &t.groups[0].queue;
        assert_eq!(
            q.joined,
            q.answered + q.taken_elsewhere + q.abandoned + q.moved_on + q.pending_end,
            "replication {r}: {q:?}"
        );
        assert_eq!(q.pending_end, q.waiting_end, "replication {r}");
        assert!(t.streams[1].interruptions > 0, "replication {r}");
        let st = &t.streams[1];
        assert!(
            st.answered + st.lost() + st.pending_end == st.offered,
            "{st:?}"
        );
    }
}

#[test]
fn the_formula_column_gives_the_highest_class_its_own_queue() {
    use busyhour::stats::{Figure, FigureId};
    use busyhour::textbook::{
        PREEMPTIVE_ALONE, PREEMPTIVE_ALONE_LOSS, PREEMPTIVE_RESUME, formula_column,
    };
    let (n, a, h) = (4u32, [2.0, 1.2], 120.0);
    let get = |col: &std::collections::HashMap<FigureId, busyhour::textbook::Formula>,
               scope: Scope,
               figure: Figure| {
        col.get(&FigureId { scope, figure })
            .map(|f| (f.name, f.value))
    };
    let col = formula_column(&model(&two_classes(n, a, h, "\"unlimited\"", "resume", 1)));
    let (name, w) = get(&col, Scope::Stream(0), Figure::WaitMean).expect("urgent wait");
    assert_eq!(name, PREEMPTIVE_ALONE);
    let c_urgent = erlang_c_statrs(n, a[0]);
    assert!((w - c_urgent * h / (f64::from(n) - a[0])).abs() < 1e-9);
    let c_total = erlang_c_statrs(n, a[0] + a[1]);
    let (name, i) = get(&col, Scope::Stream(1), Figure::Interruptions).expect("interruptions");
    assert_eq!(name, PREEMPTIVE_RESUME);
    assert!((i - a[0] / a[1] * (c_total - c_urgent)).abs() < 1e-9);
    // No per-class mean wait for the lower class (Cobham's is for
    // non-pre-emptive priority and would mislead).
    assert!(get(&col, Scope::Stream(1), Figure::WaitMean).is_none());
    // Restart: the highest class keeps its queue, the rest has no formula.
    let col = formula_column(&model(&two_classes(n, a, h, "\"unlimited\"", "restart", 1)));
    assert!(get(&col, Scope::Stream(0), Figure::WaitMean).is_some());
    assert!(get(&col, Scope::Stream(1), Figure::WaitProbability).is_none());
    assert!(get(&col, Scope::Group(0), Figure::CarriedTraffic).is_none());
    // A loss group with pre-emptive loss: Erlang B of the class alone.
    let col = formula_column(&model(&two_classes(5, [1.5, 2.5], 300.0, "0", "lose", 1)));
    let (name, b) = get(&col, Scope::Stream(0), Figure::Loss).expect("urgent loss");
    assert_eq!(name, PREEMPTIVE_ALONE_LOSS);
    assert!((b - erlang_b_statrs(5, 1.5)).abs() < 1e-12);
    assert!(get(&col, Scope::Stream(1), Figure::Loss).is_none());
    assert!(get(&col, Scope::Group(0), Figure::TimeCongestion).is_none());
}
