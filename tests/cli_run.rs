//! The `run` and `check` commands as a user meets them: JSON, CSV and table
//! output, determinism across runs and thread counts, atomic output files,
//! and one-line errors with exit status 2 for bad scenario files.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the binary runs")
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("busyhour-cli-run-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

const SCENARIOS: [&str; 4] = [
    "scenarios/campus-overflow.toml",
    "scenarios/ferry-booking.toml",
    "scenarios/harbour-peak.toml",
    "scenarios/video-link.toml",
];

#[test]
fn every_shipped_scenario_runs_in_every_format() {
    for s in SCENARIOS {
        let table = busyhour(&["run", s, "--replications", "4"]);
        assert!(table.status.success(), "{s}: {}", stderr(&table));
        let text = stdout(&table);
        assert!(
            text.contains("Streams") && text.contains("Groups") && text.contains("Caution"),
            "{text}"
        );

        let json = busyhour(&["run", s, "--replications", "4", "--json"]);
        assert!(json.status.success(), "{s}: {}", stderr(&json));
        let v: Value = serde_json::from_str(&stdout(&json)).expect("valid JSON");
        assert_eq!(v["replications"], 4);
        for stream in v["streams"].as_array().unwrap() {
            for key in [
                "offered_calls",
                "first_attempt_blocking",
                "loss",
                "carried_traffic",
            ] {
                let e = &stream[key];
                assert!(
                    e["mean"].is_number(),
                    "{s}: stream {} lacks {key}",
                    stream["name"]
                );
                assert!(e["half_width"].is_number());
                assert!(e["low"].as_f64().unwrap() <= e["mean"].as_f64().unwrap());
                assert!(e["high"].as_f64().unwrap() >= e["mean"].as_f64().unwrap());
                assert!(e["estimator"].is_string(), "{s}: {key} names no estimator");
                assert_eq!(e["replications"], 4);
            }
        }
        for group in v["groups"].as_array().unwrap() {
            for key in ["carried_traffic", "occupancy", "time_congestion"] {
                assert!(group[key]["mean"].is_number(), "{s}: group lacks {key}");
            }
        }
        assert!(v["caution"].as_str().unwrap().contains("life-safety"));

        let csv = busyhour(&["run", s, "--replications", "4", "--csv"]);
        assert!(csv.status.success());
        let text = stdout(&csv);
        let (caution, text) = text.split_once('\n').unwrap();
        assert!(caution.starts_with("# Caution: ") && caution.contains("life-safety"));
        assert!(text.starts_with(
            "kind,name,interval_start_s,figure,mean,half_width,low,high,estimator,replications,formula,formula_value"
        ));
        assert!(text.lines().count() > 5);
    }
}

#[test]
fn the_formula_column_appears_where_a_formula_applies() {
    let o = busyhour(&[
        "run",
        "scenarios/campus-overflow.toml",
        "--replications",
        "4",
        "--json",
    ]);
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let office = &v["groups"][1];
    assert_eq!(office["name"], "office-trunks");
    assert_eq!(office["time_congestion"]["formula"]["name"], "Erlang B");
    assert_eq!(office["overflow_peakedness"]["formula"]["name"], "Riordan");
    // Lognormal holding on the plant group: no Riordan peakedness there.
    assert!(
        v["groups"][0]["overflow_peakedness"]
            .get("formula")
            .is_none()
    );
}

#[test]
fn same_seed_same_json_and_threads_do_not_matter() {
    let s = "scenarios/ferry-booking.toml";
    let a = busyhour(&["run", s, "--replications", "6", "--json", "--threads", "1"]);
    let b = busyhour(&["run", s, "--replications", "6", "--json", "--threads", "2"]);
    let c = busyhour(&["run", s, "--replications", "6", "--json", "--threads", "2"]);
    assert!(a.status.success() && b.status.success());
    assert_eq!(stdout(&a), stdout(&b));
    assert_eq!(stdout(&b), stdout(&c));
    let d = busyhour(&["run", s, "--replications", "6", "--json", "--seed", "12345"]);
    assert_ne!(
        stdout(&a),
        stdout(&d),
        "a different seed must give different figures"
    );
}

#[test]
fn out_file_is_complete_and_leaves_no_temporary_file() {
    let out = scratch("result.json");
    let o = busyhour(&[
        "run",
        "scenarios/video-link.toml",
        "--replications",
        "3",
        "--json",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).is_empty());
    let v: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(v["replications"], 3);
    let leftovers: Vec<_> = std::fs::read_dir(out.parent().unwrap())
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty());
}

#[test]
fn check_describes_the_model_and_the_formula_view() {
    let o = busyhour(&["check", "scenarios/campus-overflow.toml"]);
    assert!(o.status.success());
    let text = stdout(&o);
    assert!(text.contains("offered traffic 10 erlangs"), "{text}");
    assert!(text.contains("Erlang B"));
    assert!(text.contains("The scenario is valid."));
    let j = busyhour(&["check", "scenarios/campus-overflow.toml", "--json"]);
    let v: Value = serde_json::from_str(&stdout(&j)).unwrap();
    assert_eq!(
        v["groups"][1]["formulas"]["time_congestion"]["name"],
        "Erlang B"
    );
}

/// Write `text` as a scenario and check `run` and `check` refuse it with
/// exit 2 and a single line naming the file and containing `needle`.
fn refused(name: &str, text: &str, needle: &str) {
    let path = scratch(name);
    std::fs::write(&path, text).unwrap();
    for cmd in ["check", "run"] {
        let o = busyhour(&[cmd, path.to_str().unwrap()]);
        assert_eq!(
            o.status.code(),
            Some(2),
            "{name}: {cmd} should exit 2; stderr: {}",
            stderr(&o)
        );
        let err = stderr(&o);
        assert_eq!(
            err.trim_end().lines().count(),
            1,
            "{name}: one line expected, got:\n{err}"
        );
        assert!(
            err.contains(path.to_str().unwrap()),
            "{name}: file not named: {err}"
        );
        assert!(
            err.contains(needle),
            "{name}: expected {needle:?} in: {err}"
        );
        assert!(stdout(&o).is_empty(), "{name}: nothing on stdout");
    }
}

const GOOD: &str = r#"
[simulation]
length = "1h"
replications = 2
[[group]]
name = "g"
servers = 5
[[stream]]
name = "s"
arrivals = { law = "poisson", rate = "100/h" }
holding = { law = "exponential", mean = "2m" }
route = ["g"]
"#;

#[test]
fn bad_scenarios_get_one_line_and_exit_2() {
    refused(
        "unknown-key.toml",
        &GOOD.replace("servers = 5", "servers = 5\nsevers = 3"),
        "unknown field `severs`",
    );
    refused(
        "route.toml",
        &GOOD.replace("route = [\"g\"]", "route = [\"g\", \"nowhere\"]"),
        "stream \"s\".route[2]: no group is named \"nowhere\"",
    );
    refused(
        "dup.toml",
        &format!("{GOOD}\n[[group]]\nname = \"g\"\nservers = 2\n"),
        "used by two groups",
    );
    refused(
        "negative-rate.toml",
        &GOOD.replace("100/h", "-100/h"),
        "stream \"s\".arrivals.rate",
    );
    refused(
        "zero-rate.toml",
        &GOOD.replace("100/h", "0/h"),
        "above zero",
    );
    refused(
        "bad-cv.toml",
        &GOOD.replace(
            "{ law = \"exponential\", mean = \"2m\" }",
            "{ law = \"hyperexponential\", mean = \"2m\", cv = 0.5 }",
        ),
        "cv",
    );
    refused(
        "empty-route.toml",
        &GOOD.replace("route = [\"g\"]", "route = []"),
        "route is empty",
    );
    refused(
        "syntax.toml",
        &GOOD.replace("servers = 5", "servers = = 5"),
        ":7:11:",
    );
    refused(
        "type.toml",
        &GOOD.replace("servers = 5", "servers = \"five\""),
        "invalid type",
    );
    refused(
        "nan.toml",
        &GOOD.replace("mean = \"2m\"", "mean = \"nan\""),
        "not a duration",
    );
    refused(
        "huge.toml",
        &GOOD.replace("servers = 5", "servers = 1000000000000"),
        "out of range",
    );
    refused(
        "long.toml",
        &GOOD.replace("length = \"1h\"", "length = \"1000000000h\""),
        "ten years",
    );
    refused(
        "missing-data.toml",
        &GOOD.replace(
            "{ law = \"exponential\", mean = \"2m\" }",
            "{ law = \"empirical\", file = \"no-such-file.csv\" }",
        ),
        "no-such-file.csv",
    );
    let data = scratch("talk.csv");
    std::fs::write(&data, "talk_s\n12\n30\nabc\n").unwrap();
    refused(
        "bad-data.toml",
        &GOOD.replace(
            "{ law = \"exponential\", mean = \"2m\" }",
            &format!("{{ law = \"empirical\", file = \"{}\" }}", data.display()),
        ),
        "line 4",
    );
    refused(
        "reserve.toml",
        &GOOD.replace(
            "servers = 5",
            "servers = 5\nreserve = { servers = 5, for = [\"s\"] }",
        ),
        "reserve fewer",
    );
    refused(
        "units.toml",
        &GOOD.replace("route = [\"g\"]", "route = [\"g\"]\nunits = 6"),
        "no group on the route has that many",
    );
}

#[test]
fn missing_file_and_directory_are_refused() {
    let o = busyhour(&["run", "no/such/scenario.toml"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("no/such/scenario.toml"));
    let o = busyhour(&["check", "scenarios"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("directory"));
    let _ = Path::new("unused");
}

#[test]
fn bad_flags_exit_2() {
    for args in [
        vec!["run", "scenarios/video-link.toml", "--replications", "1"],
        vec!["run", "scenarios/video-link.toml", "--precision", "150%"],
        vec!["run", "scenarios/video-link.toml", "--threads", "0"],
        vec!["run", "scenarios/video-link.toml", "--json", "--csv"],
        vec!["run"],
        vec!["frobnicate"],
    ] {
        let o = busyhour(&args);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
    }
}

#[test]
fn interrupt_prints_a_partial_result_and_exits_130() {
    let path = scratch("interrupt-me.toml");
    std::fs::write(
        &path,
        GOOD.replace("length = \"1h\"", "length = \"300h\"")
            .replace("replications = 2", "replications = 10000"),
    )
    .unwrap();
    let child = Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args([
            "run",
            path.to_str().unwrap(),
            "--json",
            "--threads",
            "2",
            "--yes",
        ])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    std::thread::sleep(std::time::Duration::from_millis(1500));
    let status = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(130), "{}", stderr(&o));
    let v: Value =
        serde_json::from_str(&stdout(&o)).expect("complete JSON of the finished replications");
    assert_eq!(v["partial"], true);
    let n = v["replications"].as_u64().unwrap();
    assert!(n > 0 && n < 10000, "{n}");
    assert!(stderr(&o).contains("interrupted"));
}

#[test]
fn check_lists_interval_formulas_labelled_and_in_time_order() {
    let a = stdout(&busyhour(&["check", "scenarios/harbour-peak.toml"]));
    let b = stdout(&busyhour(&["check", "scenarios/harbour-peak.toml"]));
    assert_eq!(a, b, "the formula view changes between runs");
    let first = a.find("(06:00-06:15)").expect("first interval labelled");
    let second = a.find("(06:15-06:30)").expect("second interval labelled");
    let last = a.find("(08:45-09:00)").expect("last interval labelled");
    assert!(first < second && second < last);
}

#[test]
fn a_precision_goal_not_met_is_a_failed_goal() {
    let out = scratch("short-precision.csv");
    let o = busyhour(&[
        "run",
        "scenarios/harbour-peak.toml",
        "--precision",
        "0.5%",
        "--max-replications",
        "12",
        "--csv",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("precision goal 0.50% not met after 12 replications"),
        "{err}"
    );
    assert!(err.contains("stream \"public\" loss"), "{err}");
    assert!(out.exists(), "the results are still written");
}

/// `size` speaks of agents where calls queue and of servers where they are
/// lost.
#[test]
fn size_answers_in_agents_or_servers() {
    for (file, group, goal, word) in [
        (
            "scenarios/ferry-booking.toml",
            "booking-agents",
            "service_level>=80%",
            "agents",
        ),
        (
            "scenarios/video-link.toml",
            "site-link",
            "loss<=2%",
            "servers",
        ),
    ] {
        let o = busyhour(&["size", file, "--group", group, "--goal", goal, "-q"]);
        let text = stdout(&o);
        assert!(
            text.lines()
                .any(|l| l.starts_with("Answer: ") && l.contains(&format!(" {word}"))),
            "{file}: {text}"
        );
    }
}

/// A scenario with `clock_start` labels its intervals, busy hour and check
/// lines with clock times, and says so in the JSON.
#[test]
fn clock_start_labels_intervals_with_clock_times() {
    let s = "scenarios/harbour-peak.toml";
    let text = stdout(&busyhour(&["run", s, "--replications", "4"]));
    assert!(text.contains("By interval (clock time)"), "{text}");
    assert!(
        text.contains("06:00-06:15") && text.contains("08:45-09:00"),
        "{text}"
    );
    assert!(text.contains("Busy hour 07:15-08:15"), "{text}");
    let json: serde_json::Value = serde_json::from_str(&stdout(&busyhour(&[
        "run",
        s,
        "--replications",
        "4",
        "--json",
    ])))
    .unwrap();
    assert_eq!(json["clock_start"], "06:00");
    let check = stdout(&busyhour(&["check", s]));
    assert!(check.contains("06:00-06:15"), "{check}");
}
