//! Servers that change over the run (`servers = [..]` per `interval`, and
//! shrinkage): the rule when the number falls (calls in progress finish, no
//! new call is carried until the busy count is below it) and rises (waiting
//! calls are answered at once), checked against the exact transient of the
//! Markov chain of the same system, solved in the test.
//!
//! Sources:
//! * The Kolmogorov forward equations dp/dt = p Q of a finite continuous-time
//!   Markov chain, integrated with the classical fourth-order Runge-Kutta
//!   method (any numerical-analysis text; `formulas::transient`, whose
//!   constant case is checked against Erlang A); at each change of the
//!   servers the state jumps as the rule says (waiting calls answered).
//! * PASTA (Wolff 1982): Poisson arrivals see time averages, so the share
//!   of an interval's calls that wait is the time average of the chance
//!   that an arrival would wait.
//!
//! Seeds are fixed; tolerances are multiples of the 95% half-width.

mod common;

use busyhour::scenario::Schedule;
use busyhour::stats::{Figure, Scope};
use common::{assert_covers, model, run};

/// An agent group whose servers follow `servers` per 30 minutes, 4 calls a
/// minute of 3 minutes (12 E), exponential patience of mean 2 minutes.
fn agents(servers: &str, extra: &str) -> String {
    format!(
        r#"
[simulation]
warmup = "30m"
length = "2h"
interval = "30m"
replications = 400
seed = 77
start = "empty"

[[group]]
name = "agents"
servers = {servers}
interval = "30m"
queue = "unlimited"
{extra}

[[stream]]
name = "calls"
arrivals = {{ law = "poisson", rate = "4/m" }}
holding = {{ law = "exponential", mean = "3m" }}
route = ["agents"]
patience = {{ law = "exponential", mean = "2m" }}
"#
    )
}

/// The exact transient of the agent group (`formulas::transient`: the
/// forward equations of the (busy, waiting) chain by RK4, waiting up to
/// `q_max`, whose tail is negligible here): per 30-minute interval of the
/// measured period, the time averages of P(busy >= servers now), of
/// P(an arrival would wait) and of the busy count (carried traffic).
fn chain(schedule: &[u32], warmup_min: f64, q_max: usize) -> Vec<(f64, f64, f64)> {
    busyhour::formulas::transient::ScheduledAgents {
        arrival_rate: 4.0 / 60.0,
        holding_s: 180.0,
        patience_s: Some(120.0),
        interval_s: 1800.0,
        servers: schedule.to_vec(),
        warmup_s: warmup_min * 60.0,
        queue_cut: q_max,
        intervals: 4,
    }
    .solve()
    .expect("the chain solves")
    .into_iter()
    .map(|x| (x.all_busy, x.wait, x.carried))
    .collect()
}

/// Falls and rises of the servers on an agent group with abandonment: per
/// interval, the time every server is busy, the share of calls that wait
/// and the carried traffic match the exact transient of the chain.
#[test]
fn changing_servers_follow_the_exact_transient() {
    let schedule = [10, 14, 9, 13];
    let m = model(&agents("[10, 14, 9, 13]", ""));
    let r = run(&m);
    let exact = chain(&schedule, 30.0, 80);
    for (b, &(full, wait, busy)) in exact.iter().enumerate() {
        let g = Scope::GroupInterval(b, 0);
        let s = Scope::StreamInterval(b, 0);
        let est = |scope, figure| {
            r.get_figure(scope, figure)
                .unwrap_or_else(|| panic!("no {figure} in interval {b}"))
        };
        assert_covers(
            &format!("interval {b}: time every server is busy"),
            est(g, Figure::TimeCongestion),
            full,
            3.5,
        );
        assert_covers(
            &format!("interval {b}: carried traffic"),
            est(g, Figure::CarriedTraffic),
            busy,
            3.5,
        );
        assert_covers(
            &format!("interval {b}: calls that wait"),
            est(s, Figure::WaitProbability),
            wait,
            3.5,
        );
    }
}

/// A schedule that never changes is the constant group, figure for figure
/// (the same random numbers: the schedule adds no draw).
#[test]
fn a_constant_schedule_is_the_constant_group() {
    let listed = run(&model(&agents("[12, 12, 12]", "")));
    let text = agents("12", "").replace("interval = \"30m\"\nqueue", "queue");
    let constant = run(&model(&text));
    assert_eq!(listed.layout, constant.layout);
    assert_eq!(listed.estimates, constant.estimates);
}

/// Shrinkage turns scheduled agents into agents taking calls, rounded
/// down: 20 scheduled at 30% are 14, the same run as 14 agents.
#[test]
fn shrinkage_leaves_the_agents_taking_calls() {
    let m =
        model(&agents("20", "shrinkage = \"30%\"").replace("interval = \"30m\"\nqueue", "queue"));
    let s: &Schedule = m.groups[0].schedule.as_ref().expect("a schedule");
    assert_eq!(
        (s.scheduled.clone(), s.present.clone()),
        (vec![20], vec![14])
    );
    assert_eq!(m.groups[0].servers, 14);
    let text = agents("14", "").replace("interval = \"30m\"\nqueue", "queue");
    assert_eq!(run(&m).estimates, run(&model(&text)).estimates);
    assert_eq!(Schedule::present_of(7, 0.35), 4); // 4.55 rounded down
}

/// When the servers fall, calls in progress finish: five one-hour calls
/// seized at once keep five circuits busy after the group drops to one, and
/// every call offered meanwhile is lost (the busy count never drops below
/// the new number before the calls end).
#[test]
fn a_fall_cuts_no_call_short() {
    let text = r#"
[simulation]
warmup = "0s"
length = "1h"
interval = "30m"
replications = 5
seed = 3
start = "empty"

[[group]]
name = "circuits"
servers = [5, 1]
interval = "30m"

[[stream]]
name = "calls"
arrivals = { law = "poisson", rate = "3600/h" }
holding = { law = "deterministic", mean = "2h" }
route = ["circuits"]
"#;
    let r = run(&model(text));
    let second = |scope, figure| r.get_figure(scope, figure).unwrap().mean;
    // The five circuits seized in the first second stay busy all through
    // the second interval, where one circuit is present.
    let carried = second(Scope::GroupInterval(1, 0), Figure::CarriedTraffic);
    assert!((carried - 5.0).abs() < 1e-9, "carried {carried}");
    assert_eq!(second(Scope::StreamInterval(1, 0), Figure::Loss), 1.0);
    assert_eq!(
        second(Scope::GroupInterval(1, 0), Figure::TimeCongestion),
        1.0
    );
}

/// Bad schedules are refused with the field named.
#[test]
fn bad_schedules_name_the_field() {
    let bad = |servers: &str, extra: &str, expect: &str| {
        let text = agents(servers, extra);
        let e = busyhour::scenario::parse(&text, "s.toml", std::path::Path::new("."), "t")
            .err()
            .unwrap_or_else(|| panic!("{servers} {extra} was accepted"))
            .to_string();
        assert!(e.contains(expect), "{servers} {extra}: {e}");
    };
    bad("[]", "", "servers");
    bad("[0, 0]", "", "no server takes calls");
    bad("[3, -1]", "", "servers[2]");
    bad("12", "shrinkage = \"100%\"", "shrinkage");
    bad("[12, 14]", "shrinkage = [\"20%\", \"x\"]", "shrinkage[2]");
    let text = agents("[12, 14]", "").replace("interval = \"30m\"\nqueue", "queue");
    let e = busyhour::scenario::parse(&text, "s.toml", std::path::Path::new("."), "t")
        .expect_err("a list needs its interval")
        .to_string();
    assert!(e.contains("interval"), "{e}");
}

/// Conservation per interval on a schedule that falls and rises: every
/// call that arrives in an interval is answered, lost (abandoned or
/// blocked) or still in the system at the end of the run, never counted
/// twice; the busy count never exceeds the most servers present, and each
/// interval's carried traffic stays within the larger of the servers
/// before and after its change (no call is carried on a server that is
/// not there).
#[test]
fn conservation_holds_per_interval_through_falls_and_rises() {
    let m = model(&agents("[10, 14, 9, 13]", ""));
    let present = &m.groups[0].schedule.as_ref().unwrap().present;
    for replication in 0..20 {
        let t = busyhour::engine::run_replication(&m, replication);
        assert!(t.peak_busy[0] <= 14, "peak {}", t.peak_busy[0]);
        let mut unresolved = 0;
        for (b, s) in t.stream_intervals.iter().map(|v| v[0]).enumerate() {
            assert!(s.offered > 0, "interval {b} has calls");
            assert_eq!(s.resolved, s.answered + s.lost, "interval {b}");
            assert!(s.offered > 60, "interval {b}: {} calls", s.offered);
            assert!(s.resolved <= s.offered && s.abandoned <= s.lost && s.waited <= s.offered);
            unresolved += s.offered - s.resolved;
            let before = present[b.saturating_sub(1)];
            let carried = t.group_intervals[b][0].busy_s / 1800.0;
            assert!(
                carried <= f64::from(before.max(present[b])) + 1e-9,
                "interval {b}: {carried} E on {before} then {} servers",
                present[b]
            );
        }
        // What is still unresolved at the end is at most what the group
        // can hold then: the servers present and the callers waiting
        // (abandonment keeps the queue short: at most 14 + 40 here).
        assert!(
            unresolved <= 54,
            "replication {replication}: {unresolved} unresolved"
        );
    }
}
