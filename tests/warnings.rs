//! Warnings about the start of a run: a warm-up shorter than the laws need,
//! and a transient visible between the two halves of the measured period.

mod common;

use busyhour::experiment::warnings::Warning;
use common::{model, run_n};

fn text(start: &str, warmup: &str) -> String {
    format!(
        r#"
[simulation]
{warmup}
length = "1h"
start = "{start}"
seed = 3

[[group]]
name = "trunks"
servers = 60

[[stream]]
name = "office"
arrivals = {{ law = "poisson", rate = "900/h" }}
holding = {{ law = "lognormal", mean = "3m", cv = 2 }}
route = ["trunks"]
"#
    )
}

#[test]
fn an_empty_start_without_warm_up_shows_a_transient() {
    // From empty, the M/G/inf occupancy at time t is A (1 - residual_tail(t))
    // (Eick, Massey and Whitt 1993): with lognormal cv 2 holding the first
    // half hour carries clearly less than the second.
    let m = model(&text("empty", "warmup = \"0s\""));
    let o = run_n(&m, 100);
    assert!(
        o.warnings
            .iter()
            .any(|w| matches!(w, Warning::ShortWarmup { .. })),
        "{:?}",
        o.warnings
    );
    let transient = o
        .warnings
        .iter()
        .find_map(|w| match w {
            Warning::Transient { first, second, .. } => Some((*first, *second)),
            _ => None,
        })
        .unwrap_or_else(|| panic!("no transient warning: {:?}", o.warnings));
    assert!(transient.0 < transient.1, "{transient:?}");
    let line = o.warnings.iter().map(|w| w.to_string()).collect::<Vec<_>>();
    assert!(line.iter().all(|l| !l.contains('\n')));
}

#[test]
fn a_steady_start_with_the_derived_warm_up_warns_of_nothing() {
    let m = model(&text("steady", ""));
    let o = run_n(&m, 100);
    assert!(o.warnings.is_empty(), "{:?}", o.warnings);
}

/// An unlimited queue without patience at `rate` calls an hour of 3-minute
/// calls on 5 agents (offered traffic rate * 0.05 E).
fn queue_text(rate: u32, warmup: &str) -> String {
    format!(
        r#"
title = "desk"
[simulation]
length = "1h"
{warmup}

[[group]]
name = "desk"
servers = 5
queue = "unlimited"

[[stream]]
name = "callers"
arrivals = {{ law = "poisson", rate = "{rate}/h" }}
holding = {{ law = "exponential", mean = "3m" }}
route = ["desk"]
"#
    )
}

#[test]
fn an_overloaded_queue_and_a_short_warm_up_fail_the_check() {
    use busyhour::experiment::warnings::model_warnings;
    // 6 E on 5 agents: Erlang C has no steady state at A >= N (the M/M/c
    // stability condition, any queueing text).
    let w = model_warnings(&model(&queue_text(120, "")));
    assert!(
        matches!(&w[..], [Warning::Overloaded { offered, servers: 5, .. }] if (offered - 6.0).abs() < 1e-9),
        "{w:?}"
    );
    // Exactly at the boundary (5 E on 5) it is still unstable.
    assert_eq!(model_warnings(&model(&queue_text(100, ""))).len(), 1);
    // 4.5 E is stable, and the derived warm-up leaves nothing to say.
    assert!(model_warnings(&model(&queue_text(90, ""))).is_empty());
    // ... but a one-minute warm-up is far short of its relaxation time.
    let w = model_warnings(&model(&queue_text(90, "warmup = \"1m\"")));
    assert!(matches!(&w[..], [Warning::ShortWarmup { .. }]), "{w:?}");

    // The binary: exit 1, the reasons listed under the model.
    let dir = std::env::temp_dir().join(format!("busyhour-check-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("overloaded.toml");
    std::fs::write(&file, queue_text(120, "warmup = \"1m\"")).unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .arg("check")
        .arg(&file)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(1), "{stdout}");
    assert!(stdout.contains("the check failed"), "{stdout}");
    assert!(stdout.contains("grows without bound"), "{stdout}");
    assert!(stdout.contains("warm-up (60 s) is shorter"), "{stdout}");
    std::fs::write(&file, queue_text(90, "")).unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .arg("check")
        .arg(&file)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    std::fs::remove_dir_all(&dir).ok();
}

/// A loss group offered a rising and falling peak profile in 15-minute
/// intervals, with `holding` mean holding time.
fn profile_text(holding: &str) -> String {
    format!(
        r#"
[simulation]
warmup = "2h"
length = "1h"
interval = "15m"
replications = 2
seed = 1
[[group]]
name = "lines"
servers = 30
[[stream]]
name = "callers"
arrivals = {{ law = "poisson", interval = "15m", rates = ["36/h", "60/h", "72/h", "48/h"] }}
holding = {{ law = "exponential", mean = "{holding}" }}
route = ["lines"]
"#
    )
}

#[test]
fn long_calls_against_the_profile_interval_warn_without_failing_the_check() {
    use busyhour::experiment::warnings::model_warnings;
    // Mean holding above a quarter of the interval (20 min against 15 min;
    // the rule of the lagged-reference literature, Green, Kolesar and Whitt
    // 2007): the stationary per-interval Erlang B misleads.
    let w = model_warnings(&model(&profile_text("20m")));
    assert!(
        matches!(&w[..], [Warning::LongHolding { holding_s, interval_s, .. }]
            if *holding_s == 1200.0 && *interval_s == 900.0),
        "{w:?}"
    );
    assert!(!w[0].fails_check());
    // Just below the quarter (3 min against 3 min 45 s): nothing.
    assert!(model_warnings(&model(&profile_text("3m"))).is_empty());
    assert_eq!(model_warnings(&model(&profile_text("4m"))).len(), 1);

    // The binary shows it and passes.
    let dir = std::env::temp_dir().join(format!("busyhour-long-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("ramp.toml");
    std::fs::write(&file, profile_text("20m")).unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .arg("check")
        .arg(&file)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{stdout}");
    assert!(stdout.contains("more than a quarter"), "{stdout}");
    assert!(stdout.contains("The scenario is valid."), "{stdout}");
    std::fs::remove_dir_all(&dir).ok();
}

/// `size` reports the warnings of the runs it judged: an empty start
/// without warm-up shows its transient at the answer, in the table and the
/// JSON (before, a size answer said nothing of it).
#[test]
fn size_reports_the_warnings_of_the_runs_it_judged() {
    let dir = std::env::temp_dir().join(format!("busyhour-size-warn-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("empty.toml");
    std::fs::write(
        &file,
        "[simulation]\nlength = \"1h\"\nwarmup = \"0s\"\nstart = \"empty\"\nreplications = 40\nseed = 3\n\n\
         [[group]]\nname = \"crews\"\nservers = 8\nqueue = \"unlimited\"\n\n\
         [[stream]]\nname = \"calls\"\narrivals = { law = \"poisson\", rate = \"64/h\" }\n\
         holding = { law = \"exponential\", mean = \"3m\" }\nroute = [\"crews\"]\n",
    )
    .unwrap();
    let run = |json: bool| {
        let mut c = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"));
        c.arg("size")
            .arg(&file)
            .args(["--group", "crews", "--goal", "wait_mean<=10s", "--quiet"]);
        if json {
            c.arg("--json");
        }
        c.output().expect("the binary runs")
    };
    let table = String::from_utf8(run(false).stdout).unwrap();
    assert!(
        table.contains("Warning at ") && table.contains("a transient is visible"),
        "{table}"
    );
    let doc: serde_json::Value = serde_json::from_slice(&run(true).stdout).unwrap();
    let warnings = doc["at_answer"]["warnings"]
        .as_array()
        .expect("warnings at the answer");
    assert!(
        warnings.iter().any(|w| w
            .as_str()
            .is_some_and(|w| w.contains("warm-up (0 s) is shorter"))),
        "{warnings:?}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
