//! Queue classes on one agent group (`priority`, `prefer`): per-class mean
//! waits of non-pre-emptive priority on M/M/N against Cobham's formula,
//! computed here from Erlang B (statrs), the conservation law, how
//! priorities and preferences combine into classes, the formula column,
//! and thread identity. Tolerances come from each estimate's own 95%
//! interval; seeds are fixed.

mod common;
use busyhour::experiment::{self, RunOptions};
use busyhour::scenario::Replications;
use busyhour::stats::{Figure, FigureId, Scope};
use common::*;

/// Two classes on one M/M/N group: `n` agents, class traffics `a`, mean
/// holding `h` (s); the first stream has priority 1, the second 2.
fn two_classes(n: u32, a: [f64; 2], h: f64, seed: u32) -> String {
    format!(
        r#"
[simulation]
warmup = "2h"
length = "100h"
replications = 20
seed = {seed}
[[group]]
name = "agents"
servers = {n}
queue = "unlimited"
[[stream]]
name = "urgent"
arrivals = {{ law = "poisson", rate = "{r0}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["agents"]
priority = 1
[[stream]]
name = "routine"
arrivals = {{ law = "poisson", rate = "{r1}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["agents"]
priority = 2
"#,
        r0 = a[0] / h * 3600.0,
        r1 = a[1] / h * 3600.0,
    )
}

fn erlang_c(n: u32, a: f64) -> f64 {
    erlang_c_statrs(n, a)
}

/// Cobham (1954), non-pre-emptive priority on M/M/N with one exponential
/// holding mean h: W_k = C(N, A) h / N / ((1 - s_{k-1})(1 - s_k)), s_k the
/// cumulative traffic of classes 1..k over N (as in Gross and Harris,
/// Fundamentals of Queueing Theory, the multi-server non-pre-emptive
/// priority queue; recalled from memory, and for N = 1 the M/G/1 form
/// W_0 / ((1 - s_{k-1})(1 - s_k)) of Kleinrock vol. II, 3.6).
fn cobham(n: u32, a: &[f64], h: f64) -> Vec<f64> {
    let total: f64 = a.iter().sum();
    let c = erlang_c(n, total);
    let nf = f64::from(n);
    let mut s = 0.0;
    a.iter()
        .map(|ak| {
            let before = s;
            s += ak / nf;
            c * h / nf / ((1.0 - before) * (1.0 - s))
        })
        .collect()
}

#[test]
fn two_priority_classes_match_cobham_and_conserve_erlang_c() {
    let (n, a, h) = (10u32, [3.0, 5.5], 180.0);
    let o = run(&model(&two_classes(n, a, h, 41)));
    let want = cobham(n, &a, h);
    let w0 = o.get(Scope::Stream(0), "wait_mean").unwrap();
    let w1 = o.get(Scope::Stream(1), "wait_mean").unwrap();
    assert_covers("class 1 mean wait (Cobham)", w0, want[0], 4.0);
    assert_covers("class 2 mean wait (Cobham)", w1, want[1], 4.0);
    assert_precise("class 1 mean wait", w0, 0.15);
    assert_precise("class 2 mean wait", w1, 0.1);
    // The classes differ by far more than their intervals: the order is
    // real, not an artefact of one queue.
    assert!(w1.mean - w0.mean > 4.0 * (w0.half_width + w1.half_width));
    // Conservation law (Kleinrock): the load-weighted mean of the class
    // waits is Erlang C's mean wait C h / (N - A), whatever the order. The
    // tolerance adds the classes' half-widths (a bound on the combined one).
    let total = a[0] + a[1];
    let erlang_c_wait = erlang_c(n, total) * h / (f64::from(n) - total);
    let mixed = (a[0] * w0.mean + a[1] * w1.mean) / total;
    let hw = (a[0] * w0.half_width + a[1] * w1.half_width) / total;
    assert!(
        (mixed - erlang_c_wait).abs() <= 4.0 * hw,
        "load-weighted mean wait {mixed:.3} ± {hw:.3} vs Erlang C {erlang_c_wait:.3}"
    );
    // P(wait) is Erlang C's for both classes (an arrival waits when every
    // agent is busy, whatever its class; PASTA).
    let c = erlang_c(n, total);
    for s in 0..2 {
        let p = o.get(Scope::Stream(s), "wait_probability").unwrap();
        assert_covers("probability of waiting", p, c, 4.0);
    }
}

#[test]
fn one_agent_and_three_classes_match_cobham() {
    // The M/G/1 case of the formula with exponential holding.
    let text = two_classes(1, [0.2, 0.3], 60.0, 7).replace("100h", "300h")
        + r#"
[[stream]]
name = "later"
arrivals = { law = "poisson", rate = "15/h" }
holding = { law = "exponential", mean = "60s" }
route = ["agents"]
priority = 3
"#;
    let o = run(&model(&text));
    let want = cobham(1, &[0.2, 0.3, 0.25], 60.0);
    for (s, w) in want.iter().enumerate() {
        let e = o.get(Scope::Stream(s), "wait_mean").unwrap();
        assert_covers(&format!("class {} mean wait (Cobham)", s + 1), e, *w, 4.0);
        assert_precise("mean wait", e, 0.15);
    }
}

#[test]
fn a_preference_orders_classes_like_a_priority() {
    // The same two classes made by the group's `prefer` instead of the
    // streams' priorities: the same model, hence the same numbers bit for
    // bit (the class is all the engine reads).
    let by_priority = two_classes(6, [2.0, 2.5], 120.0, 5).replace("100h", "5h");
    let by_preference = by_priority
        .replace("priority = 1\n", "")
        .replace("priority = 2\n", "")
        .replace(
            "queue = \"unlimited\"\n",
            "queue = \"unlimited\"\nprefer = [\"urgent\", \"routine\"]\n",
        );
    let (p, q) = (model(&by_priority), model(&by_preference));
    assert_eq!(p.groups[0].class_of, vec![0, 1]);
    assert_eq!(q.groups[0].class_of, vec![0, 1]);
    let (op, oq) = (run(&p), run(&q));
    for s in 0..2 {
        let (a, b) = (
            op.get(Scope::Stream(s), "wait_mean").unwrap(),
            oq.get(Scope::Stream(s), "wait_mean").unwrap(),
        );
        assert_eq!(a.mean.to_bits(), b.mean.to_bits());
    }
}

#[test]
fn preference_comes_before_priority_and_equal_keys_share_a_class() {
    // prefer = [c]: c first; then a and b by priority (1 before none);
    // d has no priority either and shares b's class.
    let text = r#"
[simulation]
length = "1h"
[[group]]
name = "g"
servers = 4
queue = 10
prefer = ["c"]
[[stream]]
name = "a"
arrivals = { law = "poisson", rate = "10/h" }
holding = { law = "exponential", mean = "2m" }
route = ["g"]
priority = 1
[[stream]]
name = "b"
arrivals = { law = "poisson", rate = "10/h" }
holding = { law = "exponential", mean = "2m" }
route = ["g"]
[[stream]]
name = "c"
arrivals = { law = "poisson", rate = "10/h" }
holding = { law = "exponential", mean = "2m" }
route = ["g"]
priority = 5
[[stream]]
name = "d"
arrivals = { law = "poisson", rate = "10/h" }
holding = { law = "exponential", mean = "2m" }
route = ["g"]
"#;
    assert_eq!(model(text).groups[0].class_of, vec![1, 2, 0, 2]);
    // Without the preference, priority alone: a, then c, then b and d.
    let plain = text.replace("prefer = [\"c\"]\n", "");
    assert_eq!(model(&plain).groups[0].class_of, vec![0, 2, 1, 2]);
    // Equal priorities share a class: a and c, then b and d.
    let equal = plain.replace("priority = 5", "priority = 1");
    assert_eq!(model(&equal).groups[0].class_of, vec![0, 1, 0, 1]);
}

#[test]
fn the_formula_column_shows_cobham_per_class() {
    let (n, a, h) = (10u32, [3.0, 5.5], 180.0);
    let m = model(&two_classes(n, a, h, 1));
    let col = busyhour::textbook::formula_column(&m);
    let want = cobham(n, &a, h);
    for (s, w) in want.iter().enumerate() {
        let f = &col[&FigureId {
            scope: Scope::Stream(s),
            figure: Figure::WaitMean,
        }];
        assert_eq!(f.name, busyhour::textbook::COBHAM);
        assert!((f.value - w).abs() <= 1e-9 * w, "{} vs {w}", f.value);
        // No closed form for a class's service level.
        assert!(!col.contains_key(&FigureId {
            scope: Scope::Stream(s),
            figure: Figure::ServiceLevel,
        }));
    }
    // With patience no per-class form applies: none is shown.
    let patient = two_classes(n, a, h, 1).replace(
        "priority = 2\n",
        "priority = 2\npatience = { law = \"exponential\", mean = \"3m\" }\n",
    );
    let col = busyhour::textbook::formula_column(&model(&patient));
    for s in 0..2 {
        assert!(!col.contains_key(&FigureId {
            scope: Scope::Stream(s),
            figure: Figure::WaitMean,
        }));
    }
}

#[test]
fn classes_give_the_same_bits_whatever_the_thread_count() {
    let m = model(&two_classes(8, [2.0, 4.5], 120.0, 3).replace("100h", "3h"));
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
