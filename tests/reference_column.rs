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

#[test]
fn an_overflow_network_shows_each_parcels_own_loss() {
    // Two first-choice groups (8 E on 10 circuits, 5 E on 7) overflowing to
    // a final group of 8 that also takes 2 E direct; exponential holding.
    // Reference: the exact chain of the network (formulas::chains, itself
    // checked against a chain solved in tests/formulas_overflow.rs): 1.007%,
    // 0.788% and 3.04%. Kuczura's IPP parcels (1973) must be within 15%
    // of every stream (measured within 3.3%), and the final group's time
    // congestion is the direct stream's loss.
    use busyhour::formulas::chains::{FirstChoice, overflow_network};
    let text = r#"
[simulation]
warmup = "1h"
length = "10h"
replications = 2
seed = 3
[[group]]
name = "east"
servers = 10
[[group]]
name = "west"
servers = 7
[[group]]
name = "final"
servers = 8
[[stream]]
name = "east-calls"
arrivals = { law = "poisson", rate = "160/h" }
holding = { law = "exponential", mean = "180s" }
route = ["east", "final"]
[[stream]]
name = "west-calls"
arrivals = { law = "poisson", rate = "100/h" }
holding = { law = "exponential", mean = "180s" }
route = ["west", "final"]
[[stream]]
name = "direct-calls"
arrivals = { law = "poisson", rate = "40/h" }
holding = { law = "exponential", mean = "180s" }
route = ["final"]
"#;
    let m = model(text);
    let col = formula_column(&m);
    let exact = overflow_network(
        &[
            FirstChoice {
                servers: 10,
                traffic: 8.0,
            },
            FirstChoice {
                servers: 7,
                traffic: 5.0,
            },
        ],
        8,
        2.0,
    )
    .unwrap();
    let want = [
        (Scope::Stream(0), exact.first_choice_loss[0]),
        (Scope::Stream(1), exact.first_choice_loss[1]),
        (Scope::Stream(2), exact.direct_loss),
    ];
    for (scope, value) in want {
        let f = col
            .get(&FigureId {
                scope,
                figure: Figure::Loss,
            })
            .unwrap_or_else(|| panic!("{scope:?} has no loss reference"));
        assert!(
            f.name.contains("Kuczura") && f.name.contains("approx."),
            "{}",
            f.name
        );
        assert!(
            (f.value / value - 1.0).abs() < 0.15,
            "{scope:?}: exact {value}, reference {}",
            f.value
        );
    }
    let t = col
        .get(&FigureId {
            scope: Scope::Group(2),
            figure: Figure::TimeCongestion,
        })
        .expect("final group's time congestion");
    assert!((t.value / exact.final_time_congestion - 1.0).abs() < 0.15);
}

#[test]
fn a_limited_queue_shows_the_finite_queue_and_the_simulator_agrees() {
    // M/M/N/K+M: 8 agents, 4 waiting places, 7.5 E, exponential patience of
    // 2 minutes. The formula column must hold formulas::finite_queue's
    // values (checked against the birth-death chain in
    // tests/formulas_finite_queue.rs; Kleinrock 1975, Palm 1943), and the
    // simulator must agree with them within its 95% interval (3 half-widths,
    // fixed seed): this checks that the closed form measures what the
    // simulator's figures measure.
    use busyhour::formulas::finite_queue;
    for patience in ["", r#"patience = { law = "exponential", mean = "2m" }"#] {
        let text = format!(
            r#"
[simulation]
warmup = "5h"
length = "100h"
replications = 10
seed = 21
[[group]]
name = "desk"
servers = 8
queue = 4
[[stream]]
name = "callers"
arrivals = {{ law = "poisson", rate = "150/h" }}
holding = {{ law = "exponential", mean = "3m" }}
route = ["desk"]
answer_within = "20s"
{patience}
"#
        );
        let m = model(&text);
        let col = formula_column(&m);
        let theta = (!patience.is_empty()).then_some(120.0);
        let f = finite_queue::solve(8, 4, 7.5, 180.0, theta).unwrap();
        let o = run(&m);
        let mut want = vec![
            ("first_attempt_blocking", f.blocking),
            ("loss", f.loss()),
            ("wait_probability", f.wait_probability),
            ("wait_mean", f.mean_wait_answered_s),
            ("service_level", f.service_level(20.0)),
            ("carried_traffic", 7.5 * f.answered),
        ];
        if theta.is_some() {
            want.push(("abandonment", f.abandonment));
        }
        for (name, value) in want {
            let figure = Figure::from_name(name).expect("figure");
            let r = col
                .get(&FigureId {
                    scope: Scope::Stream(0),
                    figure,
                })
                .unwrap_or_else(|| panic!("{name} has no reference ({patience})"));
            assert!(r.name.starts_with("M/M/N/K"), "{}", r.name);
            assert!(
                (r.value - value).abs() <= 1e-12 * value.abs().max(1e-300),
                "{name}"
            );
            let e = o.get(Scope::Stream(0), name).expect("estimate");
            assert_precise(name, e, 0.1);
            assert_covers(&format!("{name} ({patience})"), e, value, 3.0);
        }
        let t = col
            .get(&FigureId {
                scope: Scope::Group(0),
                figure: Figure::TimeCongestion,
            })
            .expect("time congestion");
        assert_covers(
            "time congestion",
            o.get(Scope::Group(0), "time_congestion").expect("estimate"),
            t.value,
            3.0,
        );
    }
}

/// Scenario text: one loss group of `servers`, one Poisson stream of
/// 20-minute calls (`law`: "exponential" or "deterministic") following
/// `rates` (per hour) in 15-minute intervals, reported per 15 minutes.
fn profile_scenario(servers: u32, rates: &[f64], replications: u32, law: &str) -> String {
    let list: Vec<String> = rates.iter().map(|r| format!("\"{r}/h\"")).collect();
    format!(
        r#"
[simulation]
warmup = "2h"
length = "{hours}h"
interval = "15m"
replications = {replications}
seed = 5
[[group]]
name = "lines"
servers = {servers}
[[stream]]
name = "callers"
arrivals = {{ law = "poisson", interval = "15m", rates = [{list}] }}
holding = {{ law = "{law}", mean = "20m" }}
route = ["lines"]
"#,
        hours = rates.len() as f64 / 4.0,
        list = list.join(", ")
    )
}

#[test]
fn the_modified_offered_load_follows_the_simulated_peak() {
    // 20-minute calls against 15-minute intervals: the stationary Erlang B
    // of each interval's load ignores the calls still in progress from
    // earlier intervals, and misleads on a ramp (too high going up, too
    // low coming down). The modified offered load (Jagerman 1975; Massey
    // and Whitt 1994), Erlang B of the infinite-server mean m(t) with
    // m' = λ(t) - m/h, follows the simulator: in each interval it must be
    // within the simulated interval (3 half-widths) or at most half as far
    // from the simulated loss as the stationary value; and in at least 3
    // intervals the MOL must be inside the simulated interval where the
    // stationary value is outside it. Measured here (1000 replications):
    // going up, simulated 0.86% against MOL 0.63% and stationary 4.0%;
    // coming down 2.4% against 2.3% and 0.85%; the MOL inside every
    // interval. Not asserted, a limit of the method: with a peak of 30 E on
    // the 30 lines (blocking above 10%) the MOL understates the ramp's top
    // (7.6% against 10.1% simulated) and overstates after it (4.0%
    // against 2.1%): the unlimited-server mean keeps the blocked calls.
    // The same ramp with constant 20-minute calls (the general M_t/G/inf
    // mean, Eick, Massey and Whitt 1993): the MOL inside every simulated
    // interval too (1.7% against 2.6% simulated on the way up, 0.48%
    // against 0.22% after the peak).
    let rates = [
        36.0, 36.0, 48.0, 60.0, 72.0, 72.0, 72.0, 60.0, 48.0, 36.0, 36.0, 36.0,
    ];
    for law in ["exponential", "deterministic"] {
        let m = model(&profile_scenario(30, &rates, 1000, law));
        let col = formula_column(&m);
        let mut compared = 0;
        let o = run(&m);
        for b in 0..rates.len() {
            let mol = col
                .get(&FigureId {
                    scope: Scope::StreamInterval(b, 0),
                    figure: Figure::Loss,
                })
                .expect("MOL reference");
            assert_eq!(mol.name, "Erlang B, modified offered load (approx.)");
            let stationary = col
                .get(&FigureId {
                    scope: Scope::GroupInterval(b, 0),
                    figure: Figure::TimeCongestion,
                })
                .expect("stationary reference");
            assert_eq!(stationary.name, "Erlang B, interval load");
            let e = o
                .get(Scope::StreamInterval(b, 0), "loss")
                .expect("estimate");
            let within = (e.mean - mol.value).abs() <= 3.0 * e.half_width;
            let closer = (e.mean - mol.value).abs() <= 0.5 * (e.mean - stationary.value).abs();
            eprintln!(
                "{law}, interval {b}: simulated {:.4} ± {:.4}, MOL {:.4}, stationary {:.4}",
                e.mean, e.half_width, mol.value, stationary.value
            );
            assert!(
                within || closer,
                "{law}, interval {b}: simulated {:.5} ± {:.5}, MOL {:.5}, stationary {:.5}",
                e.mean,
                e.half_width,
                mol.value,
                stationary.value
            );
            if within && (e.mean - stationary.value).abs() > 3.0 * e.half_width {
                compared += 1;
            }
        }
        // With constant holding the stationary value errs less on this ramp
        // (outside the simulated interval once); the count is asked of the
        // exponential case.
        if law == "exponential" {
            assert!(compared >= 3, "the ramp should separate the references");
        }
    }
}

/// Trunks held to the end of a call flow through a menu and a talk stage,
/// with `agents` agents; `other` adds a one-stage stream on the agents.
fn flow_scenario(agents: u32, other: bool) -> String {
    let mut text = format!(
        r#"
[simulation]
length = "1h"
replications = 2
[[group]]
name = "trunks"
servers = 6
[[group]]
name = "ports"
servers = 6
[[group]]
name = "agents"
servers = {agents}
queue = "unlimited"
[[stream]]
name = "flow"
arrivals = {{ law = "poisson", rate = "90/h" }}
stages = [
    {{ name = "trunk", route = ["trunks"], hold = "to-end" }},
    {{ name = "menu", route = ["ports"], holding = {{ law = "uniform", mean = "1m", cv = 0.5 }}, finish = "50%" }},
    {{ name = "talk", route = ["agents"], holding = {{ law = "weibull", mean = "4m", cv = 1.4 }} }},
]
"#
    );
    if other {
        text.push_str(
            "[[stream]]\nname = \"direct\"\narrivals = { law = \"poisson\", rate = \"10/h\" }\nholding = { law = \"exponential\", mean = \"2m\" }\nroute = [\"agents\"]\n",
        );
    }
    text
}

#[test]
fn a_trunk_group_of_call_flows_shows_erlang_b_of_the_total_holding_only_where_it_holds() {
    // Erlang B (statrs' truncated Poisson law) of 90/h x (1 m + 50% x 4 m)
    // = 4.5 E on 6 trunks: exact by insensitivity (Sevastyanov 1957) when
    // nobody can wait or be blocked after seizing a trunk.
    let exact = erlang_b_statrs(6, 90.0 / 3600.0 * (60.0 + 0.5 * 240.0));
    let col = formula_column(&model(&flow_scenario(6, false)));
    let at = |scope, figure| FigureId { scope, figure };
    for key in [
        at(Scope::Group(0), Figure::TimeCongestion),
        at(Scope::Stream(0), Figure::Loss),
        at(Scope::Stream(0), Figure::FirstAttemptBlocking),
        at(Scope::Stage(0, 0), Figure::StageBlocked),
    ] {
        let f = col.get(&key).unwrap_or_else(|| panic!("{key:?} missing"));
        assert_eq!(f.name, "Erlang B of the total holding (insensitivity)");
        assert!(
            (f.value - exact).abs() < 1e-12,
            "{key:?}: {} vs {exact}",
            f.value
        );
    }
    // Fewer agents than trunks (calls wait after seizing a trunk), or
    // another stream on the agents: no closed form for the flow at all.
    for text in [flow_scenario(5, false), flow_scenario(6, true)] {
        let col = formula_column(&model(&text));
        assert!(
            !col.keys()
                .any(|k| matches!(k.scope, Scope::Stream(0) | Scope::Group(0 | 2))),
            "{col:?}"
        );
    }
}
