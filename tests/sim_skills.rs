//! Calls seen by several groups (`seen_by`): two groups that see each
//! other's waiting calls at once behave as one group of their total size
//! (Erlang C of the pooled group, computed here from statrs), a delay
//! longer than any wait changes nothing, every call that joined a queue
//! left it once (conservation, with the engine's waiting counts exact), and
//! the same bits whatever the thread count. Tolerances come from each
//! estimate's own 95% interval; seeds are fixed.

mod common;
use busyhour::experiment::{self, RunOptions};
use busyhour::scenario::Replications;
use busyhour::stats::{Figure, FigureId, Scope};
use common::*;

/// Groups "east" (`n1` agents) and "west" (`n2`), unlimited queues; stream
/// "north" waits at east and is seen by west, "south" the other way,
/// both after `after`; traffics `a` in erlangs, mean holding `h` (s).
fn pair(n1: u32, n2: u32, a: [f64; 2], h: f64, after: &str, t: f64) -> String {
    format!(
        r#"
[simulation]
warmup = "2h"
length = "100h"
replications = 20
seed = 23
[[group]]
name = "east"
servers = {n1}
queue = "unlimited"
[[group]]
name = "west"
servers = {n2}
queue = "unlimited"
[[stream]]
name = "north"
arrivals = {{ law = "poisson", rate = "{r0}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["east"]
seen_by = [{{ group = "west", after = "{after}" }}]
answer_within = "{t}s"
[[stream]]
name = "south"
arrivals = {{ law = "poisson", rate = "{r1}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["west"]
seen_by = [{{ group = "east", after = "{after}" }}]
answer_within = "{t}s"
"#,
        r0 = a[0] / h * 3600.0,
        r1 = a[1] / h * 3600.0,
    )
}

#[test]
fn two_groups_that_see_each_others_calls_at_once_are_one_pooled_group() {
    // Every waiting call is in both queues in order of arrival and a call
    // finding an agent free anywhere takes it: M/M/(N1 + N2), first come
    // first served. Erlang C of the pooled group from Erlang B by the
    // identity C = N B / (N - A (1 - B)); mean wait C h / (N - A);
    // P(W <= t) = 1 - C exp(-(N - A) t / h) (any teletraffic handbook).
    let (n1, n2, a, h, t) = (7u32, 5u32, [6.0, 4.0], 180.0, 20.0);
    let m = model(&pair(n1, n2, a, h, "0s", t));
    let o = run(&m);
    let (n, total) = (n1 + n2, a[0] + a[1]);
    let b = erlang_b_statrs(u64::from(n), total);
    let nf = f64::from(n);
    let c = nf * b / (nf - total * (1.0 - b));
    let w = c * h / (nf - total);
    let sl = 1.0 - c * (-(nf - total) * t / h).exp();
    for s in 0..2 {
        let sc = Scope::Stream(s);
        let name = &m.streams[s].name;
        assert_covers(
            &format!("{name}: probability of waiting (pooled Erlang C)"),
            o.get(sc, "wait_probability").unwrap(),
            c,
            4.0,
        );
        let e = o.get(sc, "wait_mean").unwrap();
        assert_covers(&format!("{name}: mean wait (pooled Erlang C)"), e, w, 4.0);
        assert_precise("mean wait", e, 0.15);
        assert_covers(
            &format!("{name}: service level (pooled Erlang C)"),
            o.get(sc, "service_level").unwrap(),
            sl,
            4.0,
        );
    }
    // Two separate groups would wait far longer: Erlang C of east alone.
    let b1 = erlang_b_statrs(u64::from(n1), a[0]);
    let c1 = f64::from(n1) * b1 / (f64::from(n1) - a[0] * (1.0 - b1));
    let w1 = c1 * h / (f64::from(n1) - a[0]);
    let e = o.get(Scope::Stream(0), "wait_mean").unwrap();
    assert!(e.mean + 4.0 * e.half_width < w1, "{e:?} against {w1}");
    // The formula column shows the pooled value.
    let col = busyhour::textbook::formula_column(&m);
    let f = &col[&FigureId {
        scope: Scope::Stream(0),
        figure: Figure::WaitMean,
    }];
    assert_eq!(f.name, busyhour::textbook::POOLED_ERLANG_C);
    assert!((f.value - w).abs() <= 1e-9 * w);
    // With a delay no closed form covers the pair: none is shown.
    let col = busyhour::textbook::formula_column(&model(&pair(n1, n2, a, h, "20s", t)));
    assert!(col.keys().all(|id| !matches!(id.scope, Scope::Stream(_))));
}

#[test]
fn a_delay_longer_than_any_wait_changes_nothing() {
    // The second group sees a call only after its delay; when no call can
    // wait that long (the run ends first) the figures are those of two
    // separate groups, bit for bit (seen_by draws no random numbers).
    let seen = pair(4, 3, [3.0, 2.0], 120.0, "1000h", 30.0).replace("100h", "5h");
    let separate = seen
        .lines()
        .filter(|l| !l.starts_with("seen_by"))
        .collect::<Vec<_>>()
        .join("\n");
    let (a, b) = (run(&model(&seen)), run(&model(&separate)));
    for s in 0..2 {
        for f in ["wait_mean", "wait_probability", "service_level", "loss"] {
            let (x, y) = (
                a.get(Scope::Stream(s), f).unwrap(),
                b.get(Scope::Stream(s), f).unwrap(),
            );
            assert_eq!(x.mean.to_bits(), y.mean.to_bits(), "{f} of stream {s}");
        }
    }
}

/// A mixture of every way to leave a queue: patience, `overflow_after`,
/// calls seen by two other groups after delays, priorities and a
/// preference, limited queues (a full queue does not see the call) and
/// calls pending at the end.
const MIXED: &str = r#"
[simulation]
warmup = "10m"
length = "2h"
replications = 4
seed = 5
[[group]]
name = "first line"
servers = 5
queue = 6
overflow_after = "90s"
[[group]]
name = "second line"
servers = 3
queue = 2
prefer = ["sales", "support"]
[[group]]
name = "experts"
servers = 2
queue = "unlimited"
[[stream]]
name = "support"
arrivals = { law = "poisson", rate = "150/h" }
holding = { law = "exponential", mean = "2m" }
route = ["first line", "experts"]
patience = { law = "exponential", mean = "2m" }
priority = 2
seen_by = [{ group = "second line", after = "20s" }]
[[stream]]
name = "sales"
arrivals = { law = "poisson", rate = "60/h" }
holding = { law = "lognormal", mean = "3m", cv = 0.9 }
route = ["second line"]
patience = { law = "exponential", mean = "4m" }
priority = 1
seen_by = [{ group = "first line", after = "45s" }, { group = "experts", after = "0s" }]
[[stream]]
name = "callback"
arrivals = { law = "poisson", rate = "20/h" }
holding = { law = "exponential", mean = "5m" }
route = ["experts"]
retry = { chance = "50%", delay = { law = "exponential", mean = "1m" }, max_attempts = 3 }
"#;

#[test]
fn every_call_that_joined_a_queue_left_it_once() {
    // Conservation: joined = answered + taken elsewhere + abandoned + moved
    // on + still waiting at the end, in every group's queue; the engine's
    // waiting count at the end equals a scan of the waiting calls. Both
    // heavy load (calls pending at the end) and every route to the exit.
    let m = model(MIXED);
    let mut left = [0u64; 4];
    for r in 0..4 {
        let t = busyhour::engine::run_replication(&m, r);
        for (g, gt) in t.groups.iter().enumerate() {
            let q = gt.queue;
            assert!(q.joined > 0, "group {g} saw no queue");
            assert_eq!(
                q.joined,
                q.answered + q.taken_elsewhere + q.abandoned + q.moved_on + q.pending_end,
                "group {g}, replication {r}: {q:?}"
            );
            assert_eq!(q.waiting_end, q.pending_end, "group {g}: {q:?}");
            left[0] += q.taken_elsewhere;
            left[1] += q.abandoned;
            left[2] += q.moved_on;
            left[3] += q.pending_end;
        }
        // Per stream: every measured call is resolved or pending.
        for st in &t.streams {
            assert_eq!(st.offered, st.answered + st.lost() + st.pending_end);
        }
    }
    // Each way out was taken (the test reaches every branch).
    assert!(left.iter().all(|&n| n > 0), "{left:?}");
}

#[test]
fn calls_seen_by_several_groups_give_the_same_bits_whatever_the_thread_count() {
    let m = model(MIXED);
    let run_with = |threads| {
        experiment::run(
            &m,
            Some(Replications::Fixed(6)),
            &RunOptions {
                threads: Some(threads),
                ..Default::default()
            },
        )
        .unwrap()
    };
    let bits = |o: &experiment::RunResult| -> Vec<u64> {
        (o.per_replication.iter().flatten())
            .flat_map(|o| [o.num.to_bits(), o.den.to_bits()])
            .collect()
    };
    assert_eq!(bits(&run_with(1)), bits(&run_with(2)));
}

/// A call flow with stages (trunk held to the end, then agents with
/// patience) with a priority, beside a stream whose waiting calls the
/// agents see after 10 s and prefer.
const WITH_A_FLOW: &str = r#"
[simulation]
length = "4h"
replications = 6
seed = 3
[[group]]
name = "trunks"
servers = 12
[[group]]
name = "agents"
servers = 6
queue = 10
prefer = ["walk-in"]
[[group]]
name = "desk"
servers = 2
queue = 5
[[stream]]
name = "line"
arrivals = { law = "poisson", rate = "100/h" }
priority = 1
stages = [
  { name = "trunk", route = ["trunks"], hold = "to-end" },
  { name = "talk", route = ["agents"], holding = { law = "exponential", mean = "3m" }, patience = { law = "exponential", mean = "2m" } },
]
[[stream]]
name = "walk-in"
arrivals = { law = "poisson", rate = "30/h" }
holding = { law = "exponential", mean = "3m" }
route = ["desk"]
patience = { law = "exponential", mean = "3m" }
seen_by = [{ group = "agents", after = "10s" }]
"#;

#[test]
fn queues_shared_by_a_call_flow_conserve_their_calls_too() {
    let m = model(WITH_A_FLOW);
    for r in 0..3 {
        let t = busyhour::engine::run_replication(&m, r);
        for (g, gt) in t.groups.iter().enumerate().skip(1) {
            let q = gt.queue;
            assert!(q.joined > 0 && q.abandoned > 0, "group {g}: {q:?}");
            assert_eq!(
                q.joined,
                q.answered + q.taken_elsewhere + q.abandoned + q.moved_on + q.pending_end,
                "group {g}, replication {r}: {q:?}"
            );
            assert_eq!(q.waiting_end, q.pending_end, "group {g}: {q:?}");
        }
        // The agents took some of the desk's calls.
        assert!(t.groups[2].queue.taken_elsewhere > 0);
    }
}
