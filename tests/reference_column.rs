//! The formula column for redialing loss groups: every figure the redial
//! fixed point gives is shown, named as an approximation, with the value of
//! `formulas::redial_fixed_point` recomputed here from its closed form
//! (constant chance: `B = E_N(A / (1 - p B))`, Erlang B from statrs).

mod common;
use busyhour::report::formula_column;
use busyhour::stats::{Figure, FigureId, Scope};
use common::*;

const LABEL: &str = "Erlang B with redials, fixed point (approx.)";

#[test]
fn a_redialing_group_shows_the_fixed_point() {
    let (n, a, h, p) = (10u32, 7.0f64, 180.0f64, 0.5f64);
    let text = format!(
        r#"
[simulation]
warmup = "1h"
length = "10h"
replications = 2
seed = 3
[[group]]
name = "trunks"
servers = {n}
[[stream]]
name = "callers"
arrivals = {{ law = "poisson", rate = "{rate}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["trunks"]
retry = {{ chance = "{pc}%", delay = {{ law = "exponential", mean = "1h" }}, max_attempts = 1000 }}
"#,
        rate = a / h * 3600.0,
        pc = p * 100.0
    );
    let m = model(&text);
    let col = formula_column(&m);
    // The fixed point by plain iteration, Erlang B from statrs; with 1000
    // attempts allowed the limit is beyond f64's reach ((p B)^999).
    let mut b = 0.0;
    for _ in 0..200 {
        b = erlang_b_statrs(u64::from(n), a / (1.0 - p * b));
    }
    let want = [
        (Scope::Stream(0), Figure::FirstAttemptBlocking, b),
        (Scope::Stream(0), Figure::AttemptBlocking, b),
        (
            Scope::Stream(0),
            Figure::AttemptsPerCall,
            1.0 / (1.0 - p * b),
        ),
        (
            Scope::Stream(0),
            Figure::Loss,
            (1.0 - p) * b / (1.0 - p * b),
        ),
        (Scope::Group(0), Figure::TimeCongestion, b),
        (
            Scope::Group(0),
            Figure::CarriedTraffic,
            a * (1.0 - b) / (1.0 - p * b),
        ),
    ];
    for (scope, figure, value) in want {
        let f = col
            .get(&FigureId { scope, figure })
            .unwrap_or_else(|| panic!("{figure:?} has no reference"));
        assert_eq!(f.name, LABEL, "{figure:?}");
        assert!(
            (f.value - value).abs() <= 1e-9 * value,
            "{figure:?}: expected {value}, got {}",
            f.value
        );
    }
    // Nothing still claims plain Erlang B for this group.
    assert!(
        col.values()
            .all(|f| !f.name.starts_with("Erlang B,") && f.name != "Erlang B")
    );
}

#[test]
fn the_simulated_redial_group_with_long_delays_is_near_the_fixed_point() {
    // Redials an hour after the blocking: the exact chain is within 2% of
    // the fixed point (tests/formulas_redial_fixed_point.rs), so the
    // simulated loss must lie within 2% of it plus its 95% interval.
    let text = r#"
[simulation]
warmup = "5h"
length = "200h"
replications = 10
seed = 77
[[group]]
name = "trunks"
servers = 10
[[stream]]
name = "callers"
arrivals = { law = "poisson", rate = "140/h" }
holding = { law = "exponential", mean = "180s" }
route = ["trunks"]
retry = { chance = "50%", delay = { law = "exponential", mean = "1h" }, max_attempts = 1000 }
"#;
    let m = model(text);
    let col = formula_column(&m);
    let o = run(&m);
    for name in ["loss", "first_attempt_blocking", "attempts_per_call"] {
        let figure = Figure::from_name(name).expect("figure");
        let f = col
            .get(&FigureId {
                scope: Scope::Stream(0),
                figure,
            })
            .expect("reference");
        let e = o.get(Scope::Stream(0), name).expect("estimate");
        let slack = 0.02 * f.value;
        assert!(
            e.low - slack <= f.value && f.value <= e.high + slack,
            "{name}: simulated {:.5} [{:.5}, {:.5}], fixed point {:.5}",
            e.mean,
            e.low,
            e.high,
            f.value
        );
    }
}
