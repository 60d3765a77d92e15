//! `size` against the closed forms: the fewest servers for a loss goal is the
//! Erlang B answer, the fewest agents for a service-level goal the Erlang C
//! answer; a goal within a hair of the truth is reported as uncertain; and
//! common random numbers make neighbouring sizes' difference sharper.

mod common;
use busyhour::experiment::size::{self, Goal, SizeOptions, Verdict};
use busyhour::experiment::{self, RunOptions};
use busyhour::scenario::Replications;
use busyhour::stats::Scope;
use common::*;

fn loss_group(servers: u32, per_minute: f64, reps: u32, hours: u32) -> String {
    format!(
        r#"
[simulation]
warmup = "30m"
length = "{hours}h"
replications = {reps}
seed = 17
[[group]]
name = "trunks"
servers = {servers}
[[stream]]
name = "calls"
arrivals = {{ law = "poisson", rate = "{per_minute}/m" }}
holding = {{ law = "lognormal", mean = "60s", cv = 1.2 }}
route = ["trunks"]
"#
    )
}

/// Fewest N with B(N, A) <= target, from the statrs truncated Poisson.
fn erlang_b_servers(a: f64, target: f64) -> u32 {
    (1..)
        .find(|&n| erlang_b_statrs(u64::from(n), a) <= target)
        .unwrap()
}

fn size_with(text: &str, goals: &[&str], reps: u32, cap: u32) -> size::SizeResult {
    let m = model(text);
    let g = m
        .group_index("trunks")
        .or_else(|| m.group_index("agents"))
        .unwrap();
    let goals = goals
        .iter()
        .map(|t| Goal::parse(t, &m, g).unwrap())
        .collect();
    let how = SizeOptions {
        replications: Replications::Fixed(reps),
        max_replications: cap,
    };
    size::size(&m, g, goals, &how, &RunOptions::default()).unwrap()
}

#[test]
fn loss_goal_gives_the_erlang_b_answer() {
    // Loads chosen so that B at the answer and at one fewer are both well
    // away from 1% (the simulation can then decide both sides).
    for a in [3.0f64, 5.0, 20.0] {
        let expected = erlang_b_servers(a, 0.01);
        let below = erlang_b_statrs(u64::from(expected - 1), a);
        let at = erlang_b_statrs(u64::from(expected), a);
        assert!(
            below > 0.0115 && at < 0.009,
            "case A={a} is too close to the goal: {below} {at}"
        );
        let r = size_with(&loss_group(expected + 7, a, 10, 40), &["loss<=1%"], 10, 400);
        assert_eq!(r.servers, Some(expected), "A = {a}: {:?}", r.tried);
        assert_eq!(r.formula_servers, Some(expected), "closed form beside it");
        assert!(!r.uncertain);
        let fewer = r.one_fewer.unwrap();
        assert_eq!(
            fewer.goals[0].0,
            Verdict::Fails,
            "the goal visibly fails at one fewer"
        );
    }
}

#[test]
fn a_goal_within_a_hair_is_reported_as_uncertain() {
    // Set the goal a hair above the true loss at N - 1: no finite number of
    // replications can show N - 1 meets it, so the tool must say it could
    // not decide rather than claim N - 1 fails or holds.
    let a = 20.0;
    let n = erlang_b_servers(a, 0.01);
    let hair = erlang_b_statrs(u64::from(n - 1), a) * 1.001;
    let goal = format!("loss<={}%", hair * 100.0);
    let r = size_with(&loss_group(n + 5, a, 10, 20), &[&goal], 10, 80);
    assert!(r.uncertain, "expected an uncertain answer: {:?}", r.tried);
    assert_eq!(r.servers, Some(n));
    assert_eq!(r.one_fewer.unwrap().verdict(), Verdict::Undecided);
}

#[test]
fn service_level_goal_gives_the_erlang_c_answer() {
    // Erlang C service level P(W <= t) = 1 - C e^{-(N - A) t / h}, C from
    // Erlang B by C = N B / (N - A (1 - B)).
    let (a, h, t, goal) = (10.0f64, 120.0f64, 20.0f64, 0.8f64);
    let sl = |n: u32| {
        let nf = f64::from(n);
        let b = erlang_b_statrs(u64::from(n), a);
        let c = nf * b / (nf - a * (1.0 - b));
        1.0 - c * (-(nf - a) * t / h).exp()
    };
    let expected = (11..).find(|&n| sl(n) >= goal).unwrap();
    assert!(
        sl(expected - 1) < goal - 0.05 && sl(expected) > goal + 0.02,
        "case too close to call"
    );
    let text = format!(
        r#"
[simulation]
warmup = "1h"
length = "20h"
replications = 10
seed = 23
[[group]]
name = "agents"
servers = 30
queue = "unlimited"
[[stream]]
name = "callers"
arrivals = {{ law = "poisson", rate = "{rate}/h" }}
holding = {{ law = "exponential", mean = "{h}s" }}
route = ["agents"]
answer_within = "{t}s"
"#,
        rate = a / h * 3600.0
    );
    let r = size_with(&text, &["service_level>=80%"], 10, 320);
    assert_eq!(r.servers, Some(expected), "{:?}", r.tried);
    assert_eq!(r.formula_servers, Some(expected));
}

#[test]
fn common_random_numbers_sharpen_the_difference_of_adjacent_sizes() {
    let m = model(&loss_group(22, 20.0, 30, 10));
    let g = 0;
    let run_at = |n: u32| {
        experiment::run(
            &m.with_servers(g, n).expect("a size within the limits"),
            Some(Replications::Fixed(30)),
            &RunOptions::default(),
        )
        .unwrap()
    };
    let (a, b) = (run_at(28), run_at(29));
    let ia = a
        .layout
        .iter()
        .position(|f| f.scope == Scope::Stream(0) && f.name() == "loss")
        .unwrap();
    let ib = b
        .layout
        .iter()
        .position(|f| f.scope == Scope::Stream(0) && f.name() == "loss")
        .unwrap();
    let paired = size::paired_difference(&a, &b, ia, ib);
    let (ea, eb) = (a.estimates[ia], b.estimates[ib]);
    let independent = (ea.half_width.powi(2) + eb.half_width.powi(2)).sqrt();
    assert!(paired.mean < 0.0, "one more server lowers loss: {paired:?}");
    assert!(
        paired.half_width < 0.5 * independent,
        "paired half-width {} should be well under the independent {}",
        paired.half_width,
        independent
    );
}

#[test]
fn the_deciding_target_is_the_worst_stream() {
    // A goal over every stream is decided by the stream with the worst
    // estimate; the sizing table and JSON name it.
    let m = busyhour::scenario::load(std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/campus-overflow.toml"
    )))
    .unwrap();
    let g = m.group_index("carrier-shared").unwrap();
    let goal = Goal::parse("loss<=1%", &m, g).unwrap();
    assert!(goal.targets.len() > 1);
    let o = run_n(&m, 40);
    let (_, worst, deciding) = goal.judge_targets(&o, 1);
    let deciding = deciding.expect("a target decides");
    let means: Vec<f64> = goal
        .targets
        .iter()
        .map(|f| o.get_figure(f.scope, f.figure).unwrap().mean)
        .collect();
    let top = means.iter().copied().fold(f64::MIN, f64::max);
    assert_eq!(
        o.get_figure(deciding.scope, deciding.figure).unwrap().mean,
        top
    );
    assert_eq!(worst.mean, top);
}

/// The default decision cap is chosen by the work it costs: a cheap model
/// gets what about 1e7 engine events buy (far above 10 times the starting
/// count); a costly one, where 15 s of engine work does not buy more, only
/// the starting count.
#[test]
fn the_default_cap_follows_the_work() {
    let goals = |m: &busyhour::scenario::Model| vec![Goal::parse("loss<=5%", m, 0).unwrap()];
    let cheap = model(&loss_group(5, 2.0, 30, 1));
    let per_rep = busyhour::experiment::work::events_per_replication(&cheap);
    let cap = size::default_cap(&cheap, &goals(&cheap), 30);
    let affordable = (size::DEFAULT_CAP_BASE_EVENTS / per_rep).floor() as u32;
    assert!(cap > 300, "a cheap model gets more than 10 x 30: {cap}");
    assert_eq!(cap, affordable.clamp(300, size::DEFAULT_CAP_MAX));
    // Thousands of calls a minute for 50 hours: millions of events a
    // replication, so the work bound leaves the starting count.
    let costly = model(&loss_group(3000, 3000.0, 30, 50));
    assert!(
        busyhour::experiment::work::events_per_replication(&costly) * 31.0
            > size::DEFAULT_CAP_EVENTS
    );
    assert_eq!(size::default_cap(&costly, &goals(&costly), 30), 30);
}
