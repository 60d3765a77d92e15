//! Cost sizing against the closed-form optimum of a loss group, computed
//! here: the expected cost per hour of N circuits is c N + p lambda B(N, A),
//! Erlang B from statrs' truncated Poisson (`tests/common`); Erlang B is
//! convex in N, so the optimum is where the next circuit saves less than
//! it costs (Moe's principle; Jensen 1950). Packs round the sizes.

mod common;
use busyhour::experiment::RunOptions;
use busyhour::experiment::cost;
use busyhour::scenario::Replications;
use common::{assert_covers, erlang_b_statrs, model};

fn gateway(module: u32, lost_call: f64) -> String {
    format!(
        r#"
[simulation]
warmup = "20m"
length = "1h"
replications = 400
seed = 8
[[group]]
name = "ports"
servers = 12
[[stream]]
name = "public"
arrivals = {{ law = "poisson", rate = "240/h" }}
holding = {{ law = "lognormal", mean = "3m", cv = 1.3 }}
route = ["ports"]
[prices]
server_hour = 0.5
module = {{ ports = {module} }}
lost_call = {lost_call}
"#
    )
}

/// argmin over multiples of `module` of c N + p lambda B(N, A), per hour.
fn optimum(module: u32, c: f64, p: f64, lambda: f64, a: f64) -> (u32, Vec<(u32, f64)>) {
    let cost = |n: u32| c * f64::from(n) + p * lambda * erlang_b_statrs(u64::from(n), a);
    let curve: Vec<(u32, f64)> = (1..=60).map(|k| k * module).map(|n| (n, cost(n))).collect();
    let best = curve.iter().min_by(|x, y| x.1.total_cmp(&y.1)).unwrap().0;
    (best, curve)
}

#[test]
fn the_least_cost_size_is_the_erlang_b_optimum() {
    for (module, lost_call) in [(1, 3.0), (4, 3.0), (1, 0.4)] {
        let m = model(&gateway(module, lost_call));
        let sizing =
            cost::size_for_cost(&m, 0, Replications::Fixed(400), &RunOptions::default()).unwrap();
        // 240 calls an hour of 3 minutes: 12 E.
        let (exact, curve) = optimum(module, 0.5, lost_call, 240.0, 12.0);
        let best = &sizing.points[sizing.best];
        assert_eq!(
            best.servers, exact,
            "module {module}, lost call {lost_call}"
        );
        assert_eq!(sizing.closed_form.as_ref().unwrap().servers, exact);
        assert!(sizing.points.iter().all(|p| p.servers % module == 0));
        for p in &sizing.points {
            let book = curve.iter().find(|x| x.0 == p.servers).unwrap().1;
            assert!((p.formula.unwrap() - book).abs() < 1e-9 * book.max(1.0));
            assert_covers(
                &format!("total cost at {} ports", p.servers),
                p.cost.total,
                book,
                3.0,
            );
        }
    }
}

#[test]
fn prices_are_checked_and_needed() {
    let m = model(&gateway(1, 3.0).replace("lost_call = 3", "lost_call = 0"));
    let e = cost::size_for_cost(&m, 0, Replications::Fixed(10), &RunOptions::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("no lost call"), "{e}");
    let bad = |from: &str, to: &str, quoted: &str| {
        let text = gateway(1, 3.0).replace(from, to);
        let err = busyhour::scenario::parse(&text, "g.toml", ".".as_ref(), "g")
            .unwrap_err()
            .to_string();
        assert!(err.contains(quoted), "{err}");
    };
    bad(
        "module = { ports = 1 }",
        "module = { ports = 2.5 }",
        "prices.module.ports",
    );
    bad(
        "module = { ports = 1 }",
        "module = { trunks = 2 }",
        "no group is named \"trunks\"",
    );
    bad(
        "server_hour = 0.5",
        "server_hour = -1",
        "prices.server_hour",
    );
}
