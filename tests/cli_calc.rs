//! `busyhour calc` end to end: each subcommand's JSON keys and values,
//! checked against the library formulas (whose own accuracy is tested
//! against outside references in the `formulas_*` tests) and, where a
//! figure is known in closed form, against that; and the exit status and
//! one-line message of bad input.

use std::process::{Command, Output};

use busyhour::formulas::{engset, erlang_a, erlang_b, erlang_c, multirate, overflow};
use serde_json::Value;

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .output()
        .expect("the busyhour binary runs")
}

/// Runs `busyhour calc ... --json`, checks success and the exact key set.
fn calc_json(args: &[&str], keys: &[&str]) -> Value {
    let mut all = vec!["calc"];
    all.extend_from_slice(args);
    all.push("--json");
    let out = busyhour(&all);
    assert!(
        out.status.success(),
        "busyhour {all:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let json: Value = serde_json::from_slice(&out.stdout).expect("stdout is JSON");
    let object = json.as_object().expect("a JSON object");
    let mut found: Vec<&str> = object.keys().map(String::as_str).collect();
    found.sort_unstable();
    // Every calc answer carries the safety caution.
    assert!(
        json["caution"]
            .as_str()
            .is_some_and(|c| c.contains("life-safety")),
        "no caution in busyhour {all:?}"
    );
    let mut wanted = keys.to_vec();
    // ... and the title line of its text block.
    wanted.push("caution");
    wanted.push("title");
    wanted.sort_unstable();
    assert_eq!(found, wanted, "keys of busyhour {all:?}");
    json
}

fn number(json: &Value, key: &str) -> f64 {
    json[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {json}"))
}

fn assert_close(what: &str, actual: f64, expected: f64, tolerance: f64) {
    let error = if expected == 0.0 {
        actual.abs()
    } else {
        ((actual - expected) / expected).abs()
    };
    assert!(
        error <= tolerance,
        "{what}: expected {expected:e}, got {actual:e}"
    );
}

#[test]
fn loss() {
    let json = calc_json(
        &["loss", "--traffic", "10", "--servers", "18"],
        &[
            "traffic",
            "servers",
            "blocking",
            "carried_traffic",
            "lost_traffic",
        ],
    );
    assert_close(
        "blocking",
        number(&json, "blocking"),
        erlang_b::blocking(18, 10.0).unwrap(),
        1e-15,
    );
    // 420 calls per hour of 3 minutes each: 21 erlangs.
    let json = calc_json(
        &[
            "loss",
            "--calls",
            "420/h",
            "--holding",
            "3m",
            "--servers",
            "25",
        ],
        &[
            "traffic",
            "servers",
            "blocking",
            "carried_traffic",
            "lost_traffic",
        ],
    );
    assert_close(
        "blocking",
        number(&json, "blocking"),
        erlang_b::blocking(25, 21.0).unwrap(),
        1e-12,
    );
    // One server: B = A / (1 + A), in closed form.
    let json = calc_json(
        &["loss", "--traffic", "0.25", "--servers", "1"],
        &[
            "traffic",
            "servers",
            "blocking",
            "carried_traffic",
            "lost_traffic",
        ],
    );
    assert_close("B(1, 0.25)", number(&json, "blocking"), 0.2, 1e-15);
}

#[test]
fn servers() {
    let json = calc_json(
        &["servers", "--traffic", "10", "--loss", "1%"],
        &["traffic", "loss_goal", "servers", "blocking", "occupancy"],
    );
    // Recalled from handbook tables: 10 erlangs at 1% need 18 circuits.
    assert_eq!(json["servers"].as_u64(), Some(18));
    assert_close(
        "blocking",
        number(&json, "blocking"),
        erlang_b::blocking(18, 10.0).unwrap(),
        1e-15,
    );
    let json = calc_json(
        &[
            "servers",
            "--calls",
            "7/m",
            "--holding",
            "90s",
            "--loss",
            "0.001",
        ],
        &["traffic", "loss_goal", "servers", "blocking", "occupancy"],
    );
    assert_eq!(
        json["servers"].as_u64(),
        Some(u64::from(erlang_b::servers_for(10.5, 0.001).unwrap()))
    );
}

#[test]
fn traffic() {
    let json = calc_json(
        &["traffic", "--servers", "10", "--loss", "1%"],
        &[
            "servers",
            "loss_goal",
            "traffic",
            "carried_traffic",
            "occupancy",
        ],
    );
    // Recalled from handbook tables: 10 circuits carry 4.46 erlangs at 1%.
    assert!((number(&json, "traffic") - 4.46).abs() < 0.005);
    assert_close(
        "traffic",
        number(&json, "traffic"),
        erlang_b::traffic_for(10, 0.01).unwrap(),
        1e-15,
    );
}

#[test]
fn queue() {
    let keys = [
        "traffic",
        "holding_s",
        "agents",
        "answer_within_s",
        "wait_probability",
        "mean_wait_s",
        "service_level",
        "occupancy",
    ];
    let json = calc_json(
        &[
            "queue",
            "--traffic",
            "10",
            "--agents",
            "12",
            "--holding",
            "3m",
            "--answer-within",
            "20s",
        ],
        &keys,
    );
    assert_close(
        "C",
        number(&json, "wait_probability"),
        erlang_c::wait_probability(12, 10.0).unwrap(),
        1e-15,
    );
    assert_close(
        "W",
        number(&json, "mean_wait_s"),
        erlang_c::mean_wait(12, 10.0, 180.0).unwrap(),
        1e-15,
    );
    assert_close(
        "SL",
        number(&json, "service_level"),
        erlang_c::service_level(12, 10.0, 180.0, 20.0).unwrap(),
        1e-15,
    );
    assert_close("occupancy", number(&json, "occupancy"), 10.0 / 12.0, 1e-15);
    // M/M/1 in closed form: C = ρ, W = ρ h / (1 - ρ).
    let json = calc_json(
        &[
            "queue",
            "--calls",
            "0.005/s",
            "--holding",
            "100",
            "--agents",
            "1",
            "--answer-within",
            "0",
        ],
        &keys,
    );
    assert_close("M/M/1 C", number(&json, "wait_probability"), 0.5, 1e-15);
    assert_close("M/M/1 W", number(&json, "mean_wait_s"), 100.0, 1e-13);
    assert_close("M/M/1 SL(0)", number(&json, "service_level"), 0.5, 1e-15);
}

/// The keys of a delay system's answer: its figures and the goals asked.
fn delay_keys(extra: &[&'static str]) -> Vec<&'static str> {
    let mut keys = vec![
        "agents",
        "traffic",
        "holding_s",
        "mean_wait_s",
        "wait_probability",
        "occupancy",
    ];
    keys.extend_from_slice(extra);
    keys
}

/// The keys a service-level goal adds: its time, its share and the figure.
const SERVICE_LEVEL_KEYS: [&str; 3] = ["answer_within_s", "service_level_goal", "service_level"];

#[test]
fn agents() {
    let keys = delay_keys(&SERVICE_LEVEL_KEYS);
    let json = calc_json(
        &[
            "agents",
            "--traffic",
            "10",
            "--holding",
            "3m",
            "--answer-within",
            "20s",
            "--service-level",
            "80%",
        ],
        &keys,
    );
    let n = erlang_c::agents_for_service_level(10.0, 180.0, 20.0, 0.8).unwrap();
    assert_eq!(json["agents"].as_u64(), Some(u64::from(n)));
    // The goals asked are in the answer beside the figures.
    assert_eq!(number(&json, "service_level_goal"), 0.8);
    assert_eq!(number(&json, "answer_within_s"), 20.0);
    let sl = number(&json, "service_level");
    assert!(sl >= 0.8);
    assert_close(
        "SL",
        sl,
        erlang_c::service_level(n, 10.0, 180.0, 20.0).unwrap(),
        1e-15,
    );
    assert_close(
        "C",
        number(&json, "wait_probability"),
        erlang_c::wait_probability(n, 10.0).unwrap(),
        1e-15,
    );

    // Mean-wait goal alone: no answer time, so no service level.
    let json = calc_json(
        &[
            "agents",
            "--traffic",
            "10",
            "--holding",
            "3m",
            "--mean-wait",
            "15s",
        ],
        &delay_keys(&["mean_wait_goal_s"]),
    );
    let n = erlang_c::agents_for_mean_wait(10.0, 180.0, 15.0).unwrap();
    assert_eq!(json["agents"].as_u64(), Some(u64::from(n)));
    assert!(json["service_level"].is_null());
    assert!(number(&json, "mean_wait_s") <= 15.0);

    // Both goals: the larger answer.
    let json = calc_json(
        &[
            "agents",
            "--traffic",
            "10",
            "--holding",
            "3m",
            "--answer-within",
            "20s",
            "--service-level",
            "50%",
            "--mean-wait",
            "2s",
        ],
        &[keys.as_slice(), &["mean_wait_goal_s"]].concat(),
    );
    let both = erlang_c::agents_for_service_level(10.0, 180.0, 20.0, 0.5)
        .unwrap()
        .max(erlang_c::agents_for_mean_wait(10.0, 180.0, 2.0).unwrap());
    assert_eq!(json["agents"].as_u64(), Some(u64::from(both)));
}

/// Sizing with abandonment (Erlang A, M/M/N+M; Palm 1943, as solved by
/// `erlang_a::solve`, itself checked against the birth-death chain in
/// `formulas_erlang_a`): the answer is the fewest agents whose figures meet
/// every goal, so one agent fewer must miss one of them; and callers who give
/// up never need more agents than the same goal by Erlang C.
#[test]
fn agents_with_patience() {
    let keys = delay_keys(&[&SERVICE_LEVEL_KEYS[..], &["patience_s", "abandonment"]].concat());
    let json = calc_json(
        &[
            "agents",
            "--traffic",
            "20",
            "--holding",
            "3m",
            "--answer-within",
            "20s",
            "--service-level",
            "80%",
            "--patience",
            "1m",
        ],
        &keys,
    );
    let n = json["agents"].as_u64().unwrap() as u32;
    let sl = |n: u32| {
        erlang_a::solve(n, 20.0, 180.0, 60.0)
            .unwrap()
            .service_level(20.0)
    };
    assert!(sl(n) >= 0.8, "{n} agents: {}", sl(n));
    assert!(sl(n - 1) < 0.8, "{} agents already meet it", n - 1);
    assert_close("SL", number(&json, "service_level"), sl(n), 1e-12);
    let q = erlang_a::solve(n, 20.0, 180.0, 60.0).unwrap();
    assert_close(
        "abandonment",
        number(&json, "abandonment"),
        q.abandonment,
        1e-12,
    );
    let by_c = erlang_c::agents_for_service_level(20.0, 180.0, 20.0, 0.8).unwrap();
    assert!(n <= by_c, "Erlang A {n} > Erlang C {by_c}");

    // An abandonment goal alone.
    let json = calc_json(
        &[
            "agents",
            "--traffic",
            "20",
            "--holding",
            "3m",
            "--patience",
            "1m",
            "--abandon",
            "3%",
        ],
        &delay_keys(&["patience_s", "abandonment", "abandonment_goal"]),
    );
    let n = json["agents"].as_u64().unwrap() as u32;
    let ab = |n: u32| erlang_a::solve(n, 20.0, 180.0, 60.0).unwrap().abandonment;
    assert!(
        ab(n) <= 0.03 && ab(n - 1) > 0.03,
        "{n}: {} / {}",
        ab(n),
        ab(n - 1)
    );
    assert!(json["service_level"].is_null());
}

/// The capacity of an agent group inverts the sizing: at the returned load
/// the goal holds with equality (a continuous figure), and the same number of
/// agents sized for that load by Erlang C gives back the same number.
#[test]
fn traffic_of_an_agent_group() {
    let keys = delay_keys(&[&SERVICE_LEVEL_KEYS[..], &["calls_per_hour"]].concat());
    let json = calc_json(
        &[
            "traffic",
            "--agents",
            "27",
            "--holding",
            "3m",
            "--answer-within",
            "20s",
            "--service-level",
            "80%",
        ],
        &keys,
    );
    let a = number(&json, "traffic");
    assert_close(
        "SL at capacity",
        erlang_c::service_level(27, a, 180.0, 20.0).unwrap(),
        0.8,
        1e-6,
    );
    assert_eq!(
        erlang_c::agents_for_service_level(a * 0.999, 180.0, 20.0, 0.8).unwrap(),
        27
    );
    assert!(erlang_c::service_level(27, a * 1.001, 180.0, 20.0).unwrap() < 0.8);

    // Mean-wait goal with patience (Erlang A): the wait at capacity is the goal.
    let with_patience = delay_keys(&[
        "calls_per_hour",
        "mean_wait_goal_s",
        "patience_s",
        "abandonment",
    ]);
    let json = calc_json(
        &[
            "traffic",
            "--agents",
            "27",
            "--holding",
            "3m",
            "--mean-wait",
            "10s",
            "--patience",
            "1m",
        ],
        &with_patience,
    );
    let a = number(&json, "traffic");
    let q = erlang_a::solve(27, a, 180.0, 60.0).unwrap();
    assert_close("mean wait at capacity", q.mean_wait_s, 10.0, 1e-6);
    assert_close(
        "abandonment",
        number(&json, "abandonment"),
        q.abandonment,
        1e-9,
    );
}

#[test]
fn abandon() {
    let keys = [
        "traffic",
        "holding_s",
        "patience_s",
        "agents",
        "answer_within_s",
        "wait_probability",
        "abandonment",
        "mean_wait_s",
        "mean_wait_answered_s",
        "service_level",
        "carried_traffic",
        "occupancy",
    ];
    let json = calc_json(
        &[
            "abandon",
            "--traffic",
            "10",
            "--agents",
            "10",
            "--holding",
            "3m",
            "--patience",
            "1m",
            "--answer-within",
            "20s",
        ],
        &keys,
    );
    let q = erlang_a::solve(10, 10.0, 180.0, 60.0).unwrap();
    assert_close(
        "P(wait)",
        number(&json, "wait_probability"),
        q.wait_probability,
        1e-15,
    );
    assert_close(
        "abandonment",
        number(&json, "abandonment"),
        q.abandonment,
        1e-15,
    );
    assert_close("wait", number(&json, "mean_wait_s"), q.mean_wait_s, 1e-15);
    assert_close(
        "SL",
        number(&json, "service_level"),
        q.service_level(20.0),
        1e-15,
    );
    let json = calc_json(
        &[
            "abandon",
            "--traffic",
            "10",
            "--agents",
            "10",
            "--holding",
            "3m",
            "--patience",
            "1m",
        ],
        &keys[..]
            .iter()
            .copied()
            .filter(|k| !["answer_within_s", "service_level"].contains(k))
            .collect::<Vec<_>>(),
    );
    assert!(json["service_level"].is_null());
}

#[test]
fn finite() {
    let keys = [
        "sources",
        "servers",
        "idle_traffic",
        "offered_traffic",
        "time_congestion",
        "call_congestion",
        "carried_traffic",
    ];
    let json = calc_json(
        &[
            "finite",
            "--sources",
            "30",
            "--servers",
            "10",
            "--idle-traffic",
            "0.2",
        ],
        &keys,
    );
    let g = engset::solve(30, 10, 0.2).unwrap();
    assert_close(
        "time",
        number(&json, "time_congestion"),
        g.time_congestion,
        1e-15,
    );
    assert_close(
        "call",
        number(&json, "call_congestion"),
        g.call_congestion,
        1e-15,
    );
    assert_close(
        "carried",
        number(&json, "carried_traffic"),
        g.carried_traffic,
        1e-15,
    );
    // Fewer sources than servers: nothing blocked, each source busy β/(1+β).
    let json = calc_json(
        &[
            "finite",
            "--sources",
            "4",
            "--servers",
            "10",
            "--idle-traffic",
            "1",
        ],
        &[&keys[..], &["notes"]].concat(),
    );
    assert_eq!(number(&json, "time_congestion"), 0.0);
    assert_close("carried", number(&json, "carried_traffic"), 2.0, 1e-15);
}

#[test]
fn overflow_single_and_shared_final_group() {
    // The first-choice groups and their overflow; a final group adds its
    // equivalent random group, blocking, loss and each stream's own loss.
    let keys = [
        "first_choice_groups",
        "overflow_mean",
        "overflow_variance",
        "peakedness",
    ];
    let final_keys = [
        &keys[..],
        &[
            "equivalent_random_group",
            "final_servers",
            "final_blocking",
            "lost_traffic",
            "total_loss",
            "parcel_method",
            "parcels",
        ],
    ]
    .concat();
    let json = calc_json(&["overflow", "--traffic", "10", "--servers", "12"], &keys);
    let m = overflow::riordan(12, 10.0).unwrap();
    assert_close("mean", number(&json, "overflow_mean"), m.mean, 1e-15);
    assert_close(
        "variance",
        number(&json, "overflow_variance"),
        m.variance,
        1e-15,
    );
    assert_close(
        "peakedness",
        number(&json, "peakedness"),
        m.peakedness(),
        1e-15,
    );
    assert!(json["final_blocking"].is_null());
    assert!(json["parcel_method"].is_null() && json["direct_loss"].is_null());
    assert!(json["parcels"].is_null());

    // One first-choice group hunting into a final group: the lost traffic is
    // exactly A B(N1 + N2, A) (one group of 17 servers).
    let json = calc_json(
        &[
            "overflow",
            "--traffic",
            "10",
            "--servers",
            "12",
            "--final",
            "5",
        ],
        &final_keys,
    );
    let expected = 10.0 * erlang_b::blocking(17, 10.0).unwrap() / m.mean;
    assert_close(
        "lost traffic",
        number(&json, "lost_traffic"),
        10.0 * erlang_b::blocking(17, 10.0).unwrap(),
        1e-7,
    );
    assert_eq!(json["final_servers"].as_u64(), Some(5));
    assert_eq!(json["first_choice_groups"][0]["servers"].as_u64(), Some(12));
    assert_close(
        "final blocking",
        number(&json, "final_blocking"),
        expected,
        1e-7,
    );

    let json = calc_json(
        &[
            "overflow",
            "--primary",
            "10:12",
            "--primary",
            "8:10",
            "--direct",
            "2",
            "--final",
            "8",
        ],
        &[&final_keys[..], &["direct_traffic", "direct_loss"]].concat(),
    );
    let f = overflow::final_group(&[(10.0, 12), (8.0, 10)], 2.0, 8).unwrap();
    // Each stream's own loss: Kuczura's IPP parcels (approx.), within 15% of
    // the network's exact chain (formulas::chains, Wilkinson's setting).
    assert_eq!(
        json["parcel_method"].as_str(),
        Some("IPP overflow parcels, Kuczura (approx.)")
    );
    let exact = busyhour::formulas::chains::overflow_network(
        &[
            busyhour::formulas::chains::FirstChoice {
                servers: 12,
                traffic: 10.0,
            },
            busyhour::formulas::chains::FirstChoice {
                servers: 10,
                traffic: 8.0,
            },
        ],
        8,
        2.0,
    )
    .unwrap();
    for i in 0..2 {
        assert_close(
            "parcel loss",
            number(&json["parcels"][i], "loss"),
            exact.first_choice_loss[i],
            0.15,
        );
    }
    assert_close(
        "direct loss",
        number(&json, "direct_loss"),
        exact.direct_loss,
        0.15,
    );
    assert_close(
        "mean",
        number(&json, "overflow_mean"),
        f.overflow_mean,
        1e-15,
    );
    assert_close(
        "variance",
        number(&json, "overflow_variance"),
        f.overflow_variance,
        1e-15,
    );
    assert_close(
        "peakedness",
        number(&json, "peakedness"),
        f.peakedness,
        1e-15,
    );
    assert_close(
        "final blocking",
        number(&json, "final_blocking"),
        f.final_blocking,
        1e-15,
    );
}

#[test]
fn multirate() {
    let json = calc_json(
        &[
            "multirate",
            "--capacity",
            "30",
            "--class",
            "10:1",
            "--class",
            "2:6",
        ],
        &["capacity", "classes"],
    );
    let expected = multirate::kaufman_roberts(30, &[(10.0, 1), (2.0, 6)]).unwrap();
    let classes = json["classes"].as_array().expect("classes is an array");
    assert_eq!(classes.len(), 2);
    for (class, (b, (a, u))) in classes
        .iter()
        .zip(expected.iter().zip([(10.0, 1u64), (2.0, 6)]))
    {
        let mut keys: Vec<&str> = class
            .as_object()
            .unwrap()
            .keys()
            .map(String::as_str)
            .collect();
        keys.sort_unstable();
        assert_eq!(keys, ["blocking", "traffic", "units"]);
        assert_close("blocking", number(class, "blocking"), *b, 1e-15);
        assert_eq!(number(class, "traffic"), a);
        assert_eq!(class["units"].as_u64(), Some(u));
    }
}

#[test]
fn text_output_is_a_labelled_block() {
    let out = busyhour(&["calc", "loss", "--traffic", "10", "--servers", "18"]);
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.lines().count() >= 3, "{text}");
    assert!(text.contains("erlangs") && text.contains('%'), "{text}");
    assert!(
        text.lines().any(|l| l.trim_start().starts_with("blocking")),
        "{text}"
    );
    assert!(
        text.lines()
            .last()
            .is_some_and(|l| l.starts_with("Caution:")),
        "the caution ends the answer: {text}"
    );
}

/// Bad input: exit status 2, nothing on stdout, one line on stderr that
/// quotes the offending value.
fn assert_refused(args: &[&str], quoted: &str) {
    let mut all = vec!["calc"];
    all.extend_from_slice(args);
    let out = busyhour(&all);
    assert_eq!(out.status.code(), Some(2), "busyhour {all:?}");
    assert!(out.stdout.is_empty(), "busyhour {all:?} printed to stdout");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(
        stderr.trim_end().lines().count(),
        1,
        "busyhour {all:?}: {stderr}"
    );
    assert!(
        stderr.contains(quoted),
        "busyhour {all:?}: {stderr} does not quote {quoted}"
    );
}

#[test]
fn bad_values_exit_2_with_one_line() {
    assert_refused(&["loss", "--traffic", "-5", "--servers", "3"], "-5");
    assert_refused(&["loss", "--traffic", "5", "--servers", "0"], "0");
    assert_refused(&["servers", "--traffic", "5", "--loss", "0"], "'0'");
    assert_refused(&["servers", "--traffic", "5", "--loss", "100%"], "100%");
    assert_refused(&["traffic", "--servers", "0", "--loss", "1%"], "0");
    assert_refused(
        &[
            "queue",
            "--traffic",
            "12",
            "--agents",
            "10",
            "--holding",
            "3m",
            "--answer-within",
            "20s",
        ],
        "unstable",
    );
    assert_refused(
        &[
            "agents",
            "--traffic",
            "5",
            "--holding",
            "3m",
            "--answer-within",
            "20s",
            "--service-level",
            "100%",
        ],
        "100%",
    );
    // A bare number is not read as calls per second (30 calls an hour once
    // became 5,400 erlangs).
    assert_refused(
        &[
            "servers",
            "--calls",
            "30",
            "--holding",
            "3m",
            "--loss",
            "1%",
        ],
        "'30' has no time unit",
    );
    assert_refused(
        &[
            "loss",
            "--calls",
            "4x/h",
            "--holding",
            "3m",
            "--servers",
            "3",
        ],
        "4x/h",
    );
    assert_refused(
        &[
            "loss",
            "--calls",
            "40/h",
            "--holding",
            "3q",
            "--servers",
            "3",
        ],
        "3q",
    );
    assert_refused(
        &[
            "abandon",
            "--traffic",
            "5",
            "--agents",
            "3",
            "--holding",
            "3m",
            "--patience",
            "0",
        ],
        "patience",
    );
    assert_refused(
        &[
            "finite",
            "--sources",
            "10",
            "--servers",
            "3",
            "--idle-traffic",
            "-1",
        ],
        "-1",
    );
    assert_refused(&["overflow", "--primary", "5:x", "--final", "3"], "5:x");
    assert_refused(&["overflow", "--final", "3"], "--primary");
    assert_refused(&["multirate", "--capacity", "10", "--class", "1:0"], "1:0");
}

#[test]
fn usage_errors_exit_2() {
    for args in [
        vec!["calc", "loss", "--servers", "3"],
        vec![
            "calc",
            "loss",
            "--traffic",
            "3",
            "--calls",
            "5/h",
            "--holding",
            "1m",
            "--servers",
            "3",
        ],
        vec!["calc", "nonsense"],
        // A delay-system capacity needs a goal; abandonment needs patience;
        // a loss group and an agent group are not asked at once.
        vec!["calc", "traffic", "--agents", "5", "--holding", "3m"],
        vec![
            "calc",
            "agents",
            "--traffic",
            "5",
            "--holding",
            "3m",
            "--abandon",
            "3%",
        ],
        vec![
            "calc",
            "traffic",
            "--servers",
            "5",
            "--loss",
            "1%",
            "--agents",
            "5",
            "--holding",
            "3m",
            "--mean-wait",
            "5s",
        ],
        vec![
            "calc",
            "agents",
            "--traffic",
            "5",
            "--holding",
            "3m",
            "--service-level",
            "80%",
        ],
    ] {
        assert_eq!(busyhour(&args).status.code(), Some(2), "busyhour {args:?}");
    }
}

#[test]
fn queue_with_general_holding() {
    // M/D/1: Pollaczek-Khinchine is exact, W = rho h / (2 (1 - rho)) (any
    // queueing text); 0.5 E of 120 s calls waits 60 s on average.
    let out = busyhour(&[
        "calc",
        "queue",
        "--traffic",
        "0.5",
        "--agents",
        "1",
        "--holding",
        "120s",
        "--answer-within",
        "20s",
        "--holding-cv",
        "0",
        "--json",
    ]);
    assert!(out.status.success());
    let json: Value = serde_json::from_slice(&out.stdout).unwrap();
    let g = &json["general_holding"];
    assert_close(
        "M/D/1 wait",
        g["mean_wait_s"].as_f64().unwrap(),
        60.0,
        1e-12,
    );
    assert_eq!(g["exact"], Value::Bool(true));
    // Erlang C beside it: the M/M/1 wait, twice as long.
    assert_close("M/M/1 wait", number(&json, "mean_wait_s"), 120.0, 1e-12);
    // M/D/10 at 80% load: Cosmetatos' approximation, about half of Erlang C
    // (Cosmetatos 1976; the simulator gives 19.86 +- 0.2 s for this queue,
    // issue 15), and marked as an approximation.
    let out = busyhour(&[
        "calc",
        "queue",
        "--traffic",
        "8",
        "--agents",
        "10",
        "--holding",
        "3m",
        "--answer-within",
        "20s",
        "--holding-cv",
        "0",
    ]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("Cosmetatos (approx.)"), "{text}");
    let out = busyhour(&[
        "calc",
        "queue",
        "--traffic",
        "8",
        "--agents",
        "10",
        "--holding",
        "3m",
        "--answer-within",
        "20s",
        "--holding-cv",
        "0",
        "--json",
    ]);
    let json: Value = serde_json::from_slice(&out.stdout).unwrap();
    let w = json["general_holding"]["mean_wait_s"].as_f64().unwrap();
    assert!((w - 19.86).abs() < 0.02 * 19.86, "{w}");
    // A bad cv is refused with the flag named.
    let out = busyhour(&[
        "calc",
        "queue",
        "--traffic",
        "8",
        "--agents",
        "10",
        "--holding",
        "3m",
        "--answer-within",
        "20s",
        "--holding-cv",
        "-1",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--holding-cv"));
}

#[test]
fn redial_fixed_point_against_the_exact_chain() {
    use busyhour::formulas::chains;
    // 10 E fresh on 12 servers, 70% of blocked callers redial after an
    // exponential delay: the exact two-dimensional chain (formulas::chains,
    // checked against its own balance equations there) gives the reference;
    // the fixed point assumes Poisson attempts and is an approximation,
    // within 30% here (issue 15's bound). The redial delay does not enter
    // the fixed point; a delay of one holding time is a common case.
    let keys = [
        "method",
        "traffic",
        "servers",
        "redial_chances",
        "max_attempts",
        "blocking",
        "attempt_traffic",
        "attempts_per_call",
        "loss",
        "carried_traffic",
        "erlang_b_without_redials",
        "notes",
    ];
    let json = calc_json(
        &[
            "redial",
            "--traffic",
            "10",
            "--servers",
            "12",
            "--redial",
            "70%",
        ],
        &keys,
    );
    let exact = chains::redials(12, 10.0, 180.0, 0.7, 180.0).unwrap();
    let b = number(&json, "blocking");
    let rel = (b / exact.first_attempt_blocking - 1.0).abs();
    assert!(
        rel < 0.30,
        "fixed point {b} vs exact {}",
        exact.first_attempt_blocking
    );
    let loss = number(&json, "loss");
    assert!(
        (loss / exact.loss - 1.0).abs() < 0.30,
        "{loss} vs {}",
        exact.loss
    );
    let apc = number(&json, "attempts_per_call");
    assert!((apc / exact.attempts_per_call - 1.0).abs() < 0.05, "{apc}");
    // Redials add load: blocking above plain Erlang B.
    assert!(b > erlang_b::blocking(12, 10.0).unwrap());
    assert_close(
        "plain",
        number(&json, "erlang_b_without_redials"),
        erlang_b::blocking(12, 10.0).unwrap(),
        1e-15,
    );
}
