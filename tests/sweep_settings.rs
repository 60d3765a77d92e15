//! `sweep --set`: any setting of the scenario by its key path. Checked
//! against Erlang B (by statrs' truncated Poisson, `tests/common`) at every
//! step of a holding-time sweep, against `--servers` figure for figure
//! (the same seeds make the same calls), and end to end: one-at-a-time
//! effects largest first, a grid of two settings, one-line refusals.

mod common;
use busyhour::experiment::sweep::{self, Sweep};
use busyhour::experiment::{RunOptions, RunResult};
use busyhour::scenario::setting::{Editable, SettingRange};
use busyhour::scenario::{self, Replications};
use busyhour::stats::{Figure, Scope};
use common::{assert_covers, erlang_b_statrs};
use std::path::PathBuf;
use std::process::{Command, Output};

const TRUNKS: &str = r#"
title = "Trunks for a setting sweep"
[simulation]
warmup = "30m"
length = "2h"
replications = 60
seed = 5
[[group]]
name = "trunks"
servers = 10
[[stream]]
name = "office"
arrivals = { law = "poisson", rate = "150/h" }
holding = { law = "lognormal", mean = "3m", cv = 1.2 }
route = ["trunks"]
"#;

fn scenario_file(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("busyhour-set-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("trunks.toml");
    std::fs::write(&path, TRUNKS).unwrap();
    path
}

fn run_sweep(spec: &Sweep, model: &scenario::Model) -> Vec<RunResult> {
    let (steps, _) = sweep::run(
        model,
        spec,
        &Replications::Fixed(60),
        &RunOptions::default(),
    )
    .unwrap();
    steps.into_iter().map(|s| s.outcome).collect()
}

#[test]
fn a_holding_time_sweep_follows_erlang_b_at_every_step() {
    let path = scenario_file("holding");
    let file = Editable::load(&path, None).unwrap();
    let model = scenario::load(&path).unwrap();
    let range = SettingRange::parse("stream.office.holding.mean=2m:4m:1m").unwrap();
    let spec = Sweep::setting(range, &file, |_| {}).unwrap();
    let results = run_sweep(&spec, &model);
    assert_eq!(results.len(), 3);
    for (k, r) in results.iter().enumerate() {
        let h = 120.0 + 60.0 * k as f64;
        // 150 calls an hour of mean h: Erlang B for any holding law
        // (insensitivity, Sevastyanov 1957).
        let exact = erlang_b_statrs(10, 150.0 / 3600.0 * h);
        let loss = r.get_figure(Scope::Stream(0), Figure::Loss).unwrap();
        assert_covers(&format!("loss at {h} s"), loss, exact, 3.0);
    }
}

#[test]
fn setting_the_servers_is_the_servers_sweep() {
    let path = scenario_file("servers");
    let file = Editable::load(&path, None).unwrap();
    let model = scenario::load(&path).unwrap();
    let by_key = Sweep::setting(
        SettingRange::parse("group.trunks.servers=8:12:2").unwrap(),
        &file,
        |_| {},
    )
    .unwrap();
    let by_flag = Sweep::parse_servers("trunks=8:12:2", &model).unwrap();
    let (a, b) = (run_sweep(&by_key, &model), run_sweep(&by_flag, &model));
    for (x, y) in a.iter().zip(&b) {
        for scope in [Scope::Stream(0), Scope::Group(0)] {
            for figure in [Figure::Loss, Figure::CarriedTraffic, Figure::Occupancy] {
                assert_eq!(
                    x.get_figure(scope, figure).map(|e| e.mean),
                    y.get_figure(scope, figure).map(|e| e.mean),
                    "{scope:?} {figure:?}"
                );
            }
        }
    }
}

#[test]
fn a_grid_sets_both_settings_at_every_point() {
    let path = scenario_file("grid");
    let file = Editable::load(&path, None).unwrap();
    let spec = Sweep::setting_grid(
        SettingRange::parse("group.trunks.servers=8:10:2").unwrap(),
        SettingRange::parse("stream.office.arrivals.rate=100/h:200/h:50/h").unwrap(),
        &file,
        |_| {},
    )
    .unwrap();
    let Sweep::SettingGrid { models, .. } = &spec else {
        panic!("a grid")
    };
    let points: Vec<(u32, f64)> = models
        .iter()
        .map(|m| {
            (
                m.groups[0].servers,
                (m.streams[0].arrivals.initial_rate().unwrap() * 3600.0 * 1e6).round() / 1e6,
            )
        })
        .collect();
    assert_eq!(
        points,
        vec![
            (8, 100.0),
            (8, 150.0),
            (8, 200.0),
            (10, 100.0),
            (10, 150.0),
            (10, 200.0)
        ]
    );
}

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .output()
        .expect("the binary runs")
}

#[test]
fn effects_come_largest_first_and_refusals_are_one_line() {
    let path = scenario_file("effects");
    let p = path.to_str().unwrap();
    let out = busyhour(&[
        "sweep",
        p,
        "--set",
        "stream.office.holding.cv=0.5:2:0.5",
        "--set",
        "group.trunks.servers=8:12:2",
        "--set",
        "stream.office.holding.mean=2m:4m:1m",
        "--replications",
        "20",
        "--json",
        "-q",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["sweeps"].as_array().unwrap().len(), 3);
    let effects = doc["effects"].as_array().unwrap();
    let loss: Vec<&serde_json::Value> = effects
        .iter()
        .filter(|e| e["figure"] == "office loss")
        .collect();
    assert_eq!(loss.len(), 3);
    let spreads: Vec<f64> = loss.iter().map(|e| e["spread"].as_f64().unwrap()).collect();
    assert!(spreads.windows(2).all(|w| w[0] >= w[1]), "{spreads:?}");
    // The holding-time law's shape moves Erlang B's loss not at all
    // (insensitivity): the smallest effect, and within the noise.
    let last = loss.last().unwrap();
    assert_eq!(last["setting"], "stream.office.holding.cv");
    assert_eq!(last["decided"], false);
    // The other two move it beyond the noise of the paired difference over
    // the common seeds (20 replications: servers 8 to 12 and holding 2 to
    // 4 minutes change the loss by many times its half-width), and the
    // change is the difference of the two ends' figures.
    for e in &loss[..2] {
        assert_eq!(e["decided"], true, "{e}");
        let ends = e["at_to"].as_f64().unwrap() - e["at_from"].as_f64().unwrap();
        let change = e["change"]["mean"].as_f64().unwrap();
        assert!((ends - change).abs() < 1e-12, "{ends} vs {change}");
        assert!(e["change"]["low"].as_f64().unwrap() <= change);
    }
    assert!(doc["caution"].as_str().unwrap().contains("Estimates"));

    let refused = |set: &str, quoted: &str| {
        let out = busyhour(&["sweep", p, "--set", set, "-q"]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{set}: {err}");
        assert_eq!(err.trim_end().lines().count(), 1, "{set}: {err}");
        assert!(err.contains(quoted), "{set}: {err}");
    };
    refused(
        "stream.nobody.holding.mean=1m:2m:1m",
        "no [[stream]] is named \"nobody\"",
    );
    refused("group.trunks.servers=0:2", "group.trunks.servers = 0");
    refused("stream.office.holding.mean=1m:2:1", "same kind of value");
    refused("stream.office=1:2", "names a whole [[stream]]");
    let grid = busyhour(&[
        "sweep",
        p,
        "--set",
        "group.trunks.servers=8:10:2",
        "--grid",
        "-q",
    ]);
    assert_eq!(grid.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&grid.stderr).contains("exactly two --set"));
}
