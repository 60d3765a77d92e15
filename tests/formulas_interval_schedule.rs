//! The per-interval formula of a group whose servers follow a schedule:
//! the stationary formula of each interval's load on that interval's
//! servers (Green, Kolesar and Soares 2001, the stationary independent
//! period-by-period approximation). Values are recomputed here from
//! Erlang B by statrs' truncated Poisson and the textbook identities
//! C = N B / (N - A (1 - B)) (Erlang C from Erlang B; Kleinrock 1975, vol. 1,
//! ch. 3) and P(W > t) = C exp(-(N - A) t / h); with four-hour intervals
//! and three-minute calls the simulation settles in each interval and must
//! agree.

mod common;
use busyhour::report::formula_column;
use busyhour::stats::{Figure, FigureId, Scope};
use common::*;

const SERVERS: [u32; 3] = [8, 12, 6];
const RATES_PER_H: [f64; 3] = [120.0, 200.0, 90.0];
const HOLDING_S: f64 = 180.0;

fn scheduled(queue: bool) -> busyhour::scenario::Model {
    model(&format!(
        r#"
[simulation]
warmup = "1h"
length = "12h"
interval = "4h"
replications = 40
seed = 11
[[group]]
name = "agents"
servers = [{}, {}, {}]
interval = "4h"
{}
[[stream]]
name = "calls"
arrivals = {{ law = "poisson", interval = "4h", rates = ["{}/h", "{}/h", "{}/h"] }}
holding = {{ law = "exponential", mean = "{HOLDING_S}s" }}
route = ["agents"]
answer_within = "20s"
"#,
        SERVERS[0],
        SERVERS[1],
        SERVERS[2],
        if queue { "queue = \"unlimited\"" } else { "" },
        RATES_PER_H[0],
        RATES_PER_H[1],
        RATES_PER_H[2],
    ))
}

fn formula(m: &busyhour::scenario::Model, scope: Scope, figure: Figure) -> (String, f64) {
    let col = formula_column(m);
    let f = col
        .get(&FigureId { scope, figure })
        .unwrap_or_else(|| panic!("no formula for {scope:?} {figure:?}"));
    (f.name.to_string(), f.value)
}

#[test]
fn a_scheduled_queue_has_erlang_c_of_each_interval_on_its_servers() {
    let m = scheduled(true);
    let result = run(&m);
    for b in 0..3 {
        let (n, a) = (SERVERS[b], RATES_PER_H[b] / 3600.0 * HOLDING_S);
        let blocking = erlang_b_statrs(u64::from(n), a);
        let n_f = f64::from(n);
        let c = n_f * blocking / (n_f - a * (1.0 - blocking));
        let sl = 1.0 - c * (-(n_f - a) * 20.0 / HOLDING_S).exp();
        let wait = c * HOLDING_S / (n_f - a);
        for (figure, exact) in [
            (Figure::WaitProbability, c),
            (Figure::ServiceLevel, sl),
            (Figure::WaitMean, wait),
        ] {
            let (name, value) = formula(&m, Scope::StreamInterval(b, 0), figure);
            assert_eq!(name, "Erlang C, interval load and servers (approx.)");
            assert!(
                (value - exact).abs() < 1e-9 * exact.max(1.0),
                "interval {b} {figure:?}: {value} vs {exact}"
            );
            let e = result
                .get_figure(Scope::StreamInterval(b, 0), figure)
                .unwrap();
            assert_covers(&format!("interval {b} {figure:?}"), e, exact, 1.5);
        }
    }
    // The whole-run column stays empty: one number of servers does not
    // describe the group.
    let col = formula_column(&m);
    assert!(
        !col.keys().any(|id| id.scope == Scope::Stream(0)),
        "{:?}",
        col.keys().collect::<Vec<_>>()
    );
}

#[test]
fn a_scheduled_loss_group_has_erlang_b_of_each_interval_on_its_servers() {
    let m = scheduled(false);
    let result = run(&m);
    for b in 0..3 {
        let exact = erlang_b_statrs(u64::from(SERVERS[b]), RATES_PER_H[b] / 3600.0 * HOLDING_S);
        for scope in [Scope::StreamInterval(b, 0), Scope::GroupInterval(b, 0)] {
            let figure = if scope.is_stream() {
                Figure::Loss
            } else {
                Figure::TimeCongestion
            };
            let (name, value) = formula(&m, scope, figure);
            assert_eq!(name, "Erlang B, interval load and servers (approx.)");
            assert!((value - exact).abs() < 1e-9, "{value} vs {exact}");
            let e = result.get_figure(scope, figure).unwrap();
            assert_covers(&format!("interval {b} {figure:?}"), e, exact, 1.5);
        }
    }
}
