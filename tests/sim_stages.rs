//! Call flows with stages against published results and against their own
//! bookkeeping: trunks held through menu, queue and talk lose calls as
//! Erlang B of the total holding time whatever the stage laws
//! (insensitivity), every stage's entries leave it exactly once, and the
//! formula column says when that closed form applies. Tolerances come from
//! each estimate's own 95% interval; seeds are fixed.

mod common;
use busyhour::engine::run_replication;
use busyhour::stats::Scope;
use busyhour::textbook::{FLOW_ERLANG_B, formula_column};
use common::*;

/// Trunks held to the end through an announcement, a menu (a share
/// finishes there) and an agent stage with a queue. `agents` below the
/// trunks' number makes the agents a second place of waiting and loss.
fn flow(trunks: u32, agents: u32, rate_per_h: f64, laws: [&str; 3], reps: u32) -> String {
    format!(
        r#"
[simulation]
warmup = "1h"
length = "40h"
replications = {reps}
seed = 1919
[[group]]
name = "trunks"
servers = {trunks}
[[group]]
name = "ports"
servers = {trunks}
[[group]]
name = "agents"
servers = {agents}
queue = "unlimited"
[[stream]]
name = "callers"
arrivals = {{ law = "poisson", rate = "{rate_per_h}/h" }}
stages = [
    {{ name = "trunk", route = ["trunks"], hold = "to-end", holding = {a} }},
    {{ name = "menu", route = ["ports"], holding = {b}, finish = "30%" }},
    {{ name = "agent", route = ["agents"], holding = {c}, patience = {{ law = "exponential", mean = "2m" }} }},
]
"#,
        a = laws[0],
        b = laws[1],
        c = laws[2],
    )
}

const DETERMINISTIC_5S: &str = r#"{ law = "deterministic", mean = "5s" }"#;
const LOGNORMAL_40S: &str = r#"{ law = "lognormal", mean = "40s", cv = 1.5 }"#;
const EXPONENTIAL_3M: &str = r#"{ law = "exponential", mean = "3m" }"#;

/// Mean total holding of the flow above: 5 s + 40 s + 70% x 180 s.
const TOTAL_MEAN_S: f64 = 5.0 + 40.0 + 0.7 * 180.0;

#[test]
fn trunks_held_through_menu_queue_and_talk_block_as_erlang_b_of_the_total_holding() {
    // Insensitivity of the Erlang loss formula (Sevastyanov 1957): an
    // M/G/N/N group blocks with Erlang B of rate x mean holding whatever
    // the holding law. Here a call's holding of its trunk is the sum of an
    // announcement (deterministic), a menu (lognormal, cv 1.5) and, for the
    // 70% who do not finish in the menu, a talk (exponential): agents as
    // many as trunks, so that nobody waits downstream. Erlang B from statrs
    // (truncated Poisson law), computed in the test.
    let laws = [
        [DETERMINISTIC_5S, LOGNORMAL_40S, EXPONENTIAL_3M],
        // The same means with the laws swapped around.
        [
            r#"{ law = "exponential", mean = "5s" }"#,
            r#"{ law = "deterministic", mean = "40s" }"#,
            r#"{ law = "lognormal", mean = "3m", cv = 2.0 }"#,
        ],
    ];
    let (n, a) = (10u32, 8.0);
    let rate_per_h = a / TOTAL_MEAN_S * 3600.0;
    let exact = erlang_b_statrs(u64::from(n), a);
    for law in laws {
        let m = model(&flow(n, n, rate_per_h, law, 20));
        let o = run(&m);
        for (scope, name) in [
            (Scope::Stream(0), "first_attempt_blocking"),
            (Scope::Stream(0), "loss"),
            (Scope::Stage(0, 0), "stage_blocked"),
            (Scope::Group(0), "time_congestion"),
        ] {
            let e = o.get(scope, name).unwrap();
            assert_covers(&format!("{name} with {law:?}"), e, exact, 4.0);
            assert_precise(&format!("{name} with {law:?}"), e, 0.1);
        }
        // Carried traffic of the trunks: A (1 - B), the flow's occupancy.
        let carried = o.get(Scope::Group(0), "carried_traffic").unwrap();
        assert_covers("trunk carried traffic", carried, a * (1.0 - exact), 4.0);
        // Nobody waits downstream, so nobody abandons.
        let abandoned = o.get(Scope::Stage(0, 2), "stage_abandoned").unwrap();
        assert_eq!(abandoned.mean, 0.0, "{law:?}");
        // The formula column shows the same Erlang B, and the model's own
        // total holding mean is the one above.
        assert!((m.streams[0].flow_holding_mean() - TOTAL_MEAN_S).abs() < 1e-9);
        let col = formula_column(&m);
        let key = busyhour::stats::FigureId {
            scope: Scope::Group(0),
            figure: busyhour::stats::Figure::TimeCongestion,
        };
        let f = col.get(&key).expect("the trunk's Erlang B");
        assert_eq!(f.name, FLOW_ERLANG_B);
        assert!((f.value - exact).abs() < 1e-12, "{} vs {exact}", f.value);
    }
}

#[test]
fn trunks_sized_on_talk_time_alone_would_be_wrong() {
    // The same flow: Erlang B of the talk time alone (the common sizing
    // mistake) lies far outside the interval, so the test above can fail.
    let (n, a) = (10u32, 8.0);
    let rate_per_h = a / TOTAL_MEAN_S * 3600.0;
    let m = model(&flow(
        n,
        n,
        rate_per_h,
        [DETERMINISTIC_5S, LOGNORMAL_40S, EXPONENTIAL_3M],
        20,
    ));
    let o = run(&m);
    let talk_only = erlang_b_statrs(u64::from(n), rate_per_h / 3600.0 * 0.7 * 180.0);
    let e = o.get(Scope::Group(0), "time_congestion").unwrap();
    assert!(
        (e.mean - talk_only).abs() > 10.0 * e.half_width,
        "{e:?} vs {talk_only}"
    );
}

#[test]
fn every_entry_into_a_stage_leaves_it_once() {
    // Conservation, per stage and replication, in a flow that blocks at the
    // trunks, waits, abandons and blocks at a small agent group with a
    // limited queue, and redials from the first stage: entered = served +
    // abandoned + blocked + pending at the end; the calls that go on from
    // a stage are the next stage's entries; the stream's calls resolve as
    // the last stages' ends say.
    let text = flow(8, 3, 200.0, [DETERMINISTIC_5S, LOGNORMAL_40S, EXPONENTIAL_3M], 2)
        .replace(
            "queue = \"unlimited\"",
            "queue = 2\noverflow_after = \"20s\"\n[[group]]\nname = \"backup\"\nservers = 1\nqueue = 1",
        )
        .replace(r#"route = ["agents"]"#, r#"route = ["agents", "backup"]"#)
        .replace(
            "stages = [",
            "retry = { chance = \"50%\", delay = { law = \"exponential\", mean = \"1m\" }, max_attempts = 3 }\nstages = [",
        );
    let m = model(&text);
    for r in 0..4 {
        let t = run_replication(&m, r);
        let stages = &t.stages[0];
        let mut seen = [0u64; 3];
        for (k, st) in stages.iter().enumerate() {
            assert_eq!(
                st.entered,
                st.served + st.abandoned + st.blocked + st.pending_end,
                "replication {r} stage {k}: {st:?}"
            );
            assert!(st.finished <= st.served);
            if k + 1 < stages.len() {
                assert_eq!(st.served - st.finished, stages[k + 1].entered, "stage {k}");
            } else {
                assert_eq!(st.finished, st.served);
            }
            seen[0] += st.blocked;
            seen[1] += st.abandoned;
            seen[2] += st.pending_end;
        }
        // The case exercises what it claims: blocking and abandonment.
        assert!(seen[0] > 0 && seen[1] > 0, "{seen:?}");
        let s = &t.streams[0];
        // Attempts: every attempt enters the first stage.
        assert_eq!(s.attempts, stages[0].entered);
        assert_eq!(s.attempts_blocked, seen[0]);
        assert_eq!(s.attempts_abandoned, seen[1]);
        // Every call answered ended after some stage.
        let finished: u64 = stages.iter().map(|st| st.finished).sum();
        assert_eq!(s.answered, finished);
        assert_eq!(s.offered, s.answered + s.lost() + s.pending_end);
    }
}

#[test]
fn a_flow_is_the_same_for_any_thread_count() {
    let m = model(&flow(
        8,
        3,
        200.0,
        [DETERMINISTIC_5S, LOGNORMAL_40S, EXPONENTIAL_3M],
        6,
    ));
    let opts = |threads| busyhour::experiment::RunOptions {
        threads: Some(threads),
        ..Default::default()
    };
    let one = busyhour::experiment::run(&m, None, &opts(1)).unwrap();
    let three = busyhour::experiment::run(&m, None, &opts(3)).unwrap();
    let bits = |o: &busyhour::experiment::RunResult| {
        (o.estimates.iter())
            .map(|e| (e.mean.to_bits(), e.half_width.to_bits()))
            .collect::<Vec<_>>()
    };
    assert_eq!(bits(&one), bits(&three));
}

#[test]
fn no_closed_form_covers_a_flow_that_waits_downstream() {
    // Three agents behind eight trunks: calls wait (and abandon) after
    // seizing a trunk, so the trunk's holding is no longer the sum of the
    // stage laws alone and Erlang B does not apply: the column has no entry
    // for the flow's groups or stream.
    let m = model(&flow(
        8,
        3,
        200.0,
        [DETERMINISTIC_5S, LOGNORMAL_40S, EXPONENTIAL_3M],
        2,
    ));
    let col = formula_column(&m);
    assert!(col.is_empty(), "{col:?}");
}

#[test]
fn finite_sources_calling_through_stages_block_as_engset_of_the_total_holding() {
    // Engset's loss formula is insensitive to the holding law (Cohen 1957):
    // with S sources idle for exponential times of mean 1/gamma and calls
    // of mean total holding h, the call congestion is
    // C(S-1, N) b^N / sum_k C(S-1, k) b^k with b = gamma h, computed here
    // term by term. The holding is a deterministic menu and a lognormal
    // talk, on trunks held to the end with agents as many as trunks.
    let (sources, n) = (20u32, 5u32);
    let (idle_s, total_s) = (600.0f64, 30.0 + 90.0);
    let b = total_s / idle_s;
    let term = |k: u32| {
        let mut c = 1.0;
        for i in 0..k {
            c *= f64::from(sources - 1 - i) / f64::from(i + 1);
        }
        c * b.powi(k as i32)
    };
    let exact = term(n) / (0..=n).map(term).sum::<f64>();
    let text = format!(
        r#"
[simulation]
warmup = "1h"
length = "40h"
replications = 20
seed = 57
[[group]]
name = "trunks"
servers = {n}
[[group]]
name = "ports"
servers = {n}
[[group]]
name = "agents"
servers = {n}
queue = "unlimited"
[[stream]]
name = "terminals"
arrivals = {{ law = "sources", count = {sources}, idle = {{ law = "exponential", mean = "{idle_s}s" }} }}
stages = [
    {{ name = "trunk", route = ["trunks"], hold = "to-end" }},
    {{ name = "menu", route = ["ports"], holding = {{ law = "deterministic", mean = "30s" }} }},
    {{ name = "talk", route = ["agents"], holding = {{ law = "lognormal", mean = "90s", cv = 1.5 }} }},
]
"#
    );
    let o = run(&model(&text));
    let e = o.get(Scope::Stream(0), "first_attempt_blocking").unwrap();
    assert_covers("Engset call congestion", e, exact, 4.0);
    assert_precise("Engset call congestion", e, 0.15);
}

#[test]
fn trunks_overflowing_at_the_first_stage_carry_the_rest_of_the_call() {
    // The overflow of a loss group has mean A B(N, A) whatever the holding
    // law (the carried traffic of an M/G/N/N group is insensitive, and the
    // overflow holds for the same holding: Riordan's mean, here with the
    // total holding). First-stage route: 6 local trunks, then 10 carrier
    // trunks, both held to the end; 5 E offered by 5 s + 40 s + 70% of 3 min.
    let (n, a) = (6u32, 5.0);
    let rate_per_h = a / TOTAL_MEAN_S * 3600.0;
    let text = flow(
        n,
        16,
        rate_per_h,
        [DETERMINISTIC_5S, LOGNORMAL_40S, EXPONENTIAL_3M],
        20,
    )
    .replace(
        "[[group]]\nname = \"ports\"",
        "[[group]]\nname = \"carrier\"\nservers = 10\n[[group]]\nname = \"ports\"",
    )
    .replace(r#"route = ["trunks"]"#, r#"route = ["trunks", "carrier"]"#)
    .replace(
        "servers = 6\n[[group]]\nname = \"agents\"",
        "servers = 16\n[[group]]\nname = \"agents\"",
    );
    let m = model(&text);
    let o = run(&m);
    let b = erlang_b_statrs(u64::from(n), a);
    let e = o.get(Scope::Group(0), "overflow_mean").unwrap();
    assert_covers("overflow mean of the local trunks", e, a * b, 4.0);
    assert_precise("overflow mean of the local trunks", e, 0.1);
}
