//! `explain`: the assumption ladder. The book rung is the textbook model,
//! so its loss covers Erlang B of the mean load (statrs' truncated
//! Poisson, `tests/common`); adding the holding-time law moves nothing in
//! truth (insensitivity of Erlang B, Sevastyanov 1957), so its paired step
//! covers 0; the top rung is the scenario itself, figure for figure.

mod common;
use busyhour::experiment::explain::{self, Effect};
use busyhour::experiment::{self, RunOptions};
use busyhour::scenario::Replications;
use busyhour::stats::{Figure, Scope};
use common::{assert_covers, erlang_b_statrs, model};

const PEAK: &str = r#"
title = "A loss group through a peak"
[simulation]
warmup = "1h"
length = "2h"
replications = 200
seed = 9
[[group]]
name = "trunks"
servers = 8
[[stream]]
name = "office"
arrivals = { law = "poisson", interval = "30m", rates = ["60/h", "150/h", "150/h", "60/h"] }
holding = { law = "lognormal", mean = "3m", cv = 1.5 }
route = ["trunks"]
"#;

#[test]
fn the_ladder_runs_from_erlang_b_to_the_scenario() {
    let m = model(PEAK);
    let ladder = explain::explain(&m, 200, &RunOptions::default()).unwrap();
    assert_eq!(
        ladder.effects,
        vec![Effect::HoldingLaw, Effect::PeakProfile]
    );
    assert_eq!(ladder.rungs.len(), 3);
    // The book: Poisson at the mean rate (105/h) of 3-minute calls, 5.25 E
    // on 8 trunks.
    let book = ladder.rungs[0]
        .result
        .get_figure(Scope::Stream(0), Figure::Loss)
        .unwrap();
    assert_covers("book loss", book, erlang_b_statrs(8, 5.25), 1.0);
    // The holding-time law alone changes nothing in truth.
    let step = (ladder.steps[0].iter())
        .find(|c| c.owner.stream && c.figure == Figure::Loss && c.owner.interval.is_none())
        .unwrap();
    assert!(
        step.difference.low <= 0.0 && 0.0 <= step.difference.high,
        "{:?}",
        step.difference
    );
    // The peak profile raises the loss clearly above the book.
    let gap = (ladder.gap.iter())
        .find(|c| c.owner.stream && c.figure == Figure::Loss && c.owner.interval.is_none())
        .unwrap();
    assert!(gap.difference.low > 0.01, "{:?}", gap.difference);
    // The top rung is the scenario as written, figure for figure.
    let direct =
        experiment::run(&m, Some(Replications::Fixed(200)), &RunOptions::default()).unwrap();
    let top = &ladder.rungs[2].result;
    assert_eq!(top.layout, direct.layout);
    for (a, b) in top.estimates.iter().zip(&direct.estimates) {
        assert_eq!(a.mean.to_bits(), b.mean.to_bits());
    }
}

#[test]
fn an_overloaded_queue_keeps_its_patience_in_the_book() {
    let m = model(
        r#"
[simulation]
warmup = "30m"
length = "1h"
replications = 20
seed = 2
[[group]]
name = "agents"
servers = 5
queue = "unlimited"
[[stream]]
name = "callers"
arrivals = { law = "poisson", rate = "120/h" }
holding = { law = "exponential", mean = "3m" }
route = ["agents"]
patience = { law = "exponential", mean = "1m" }
retry = { chance = "50%", delay = { law = "exponential", mean = "2m" }, max_attempts = 3 }
"#,
    );
    let ladder = explain::explain(&m, 20, &RunOptions::default()).unwrap();
    assert!(ladder.patience_kept);
    assert_eq!(ladder.effects, vec![Effect::Redials]);
    assert!(ladder.rungs[0].model.streams[0].patience.is_some());
    assert!(ladder.rungs[0].model.streams[0].retry.is_none());
}

#[test]
fn explain_from_the_command_line() {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args([
            "explain",
            "scenarios/harbour-peak.toml",
            "--replications",
            "10",
            "--json",
            "-q",
        ])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        doc["order"],
        serde_json::json!(["holding_law", "peak_profile"])
    );
    assert_eq!(doc["rungs"].as_array().unwrap().len(), 3);
    assert!(doc["caution"].as_str().unwrap().contains("Estimates"));
    let bad = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args([
            "explain",
            "scenarios/harbour-peak.toml",
            "--figure",
            "nonsense",
        ])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert_eq!(bad.status.code(), Some(2));
    assert_eq!(
        String::from_utf8_lossy(&bad.stderr)
            .trim_end()
            .lines()
            .count(),
        1
    );
}
