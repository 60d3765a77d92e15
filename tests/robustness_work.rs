//! The work guard: the estimate of engine events against the engine's own
//! count, and the command line refusing a huge run without `--yes`.

mod common;
use busyhour::engine::run_replication;
use busyhour::experiment::work::{self, EVENTS_PER_SECOND_PER_CORE};
use busyhour::scenario::{self, Replications};
use common::model;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

/// Mean engine events per replication over `n` replications.
fn measured_events(m: &scenario::Model, n: u64) -> f64 {
    (0..n)
        .map(|r| run_replication(m, r).events as f64)
        .sum::<f64>()
        / n as f64
}

#[test]
fn a_loss_group_costs_two_events_per_call() {
    // A single loss group: each call is one arrival event and one departure
    // (carried) or one end on the virtual overflow group (blocked); the run
    // stops at the end of the period (no call is left waiting), dropping
    // the ends of the ~rate x holding calls still in progress. So the
    // events are 2 x arrivals - rate x holding, and the arrivals are Poisson
    // with mean rate x length = 30,000 (sd 173, so 4 replications stay
    // within 0.3% of it at 1 sd). The estimate adds a drain allowance of 10
    // holding times (1.7% of the length): it must lie 0% to 5% above.
    let m = model(
        r#"
[simulation]
warmup = 0
length = "10h"
replications = 4
[[group]]
name = "g"
servers = 50
[[stream]]
name = "s"
arrivals = { law = "poisson", rate = "3000/h" }
holding = { law = "exponential", mean = "60s" }
route = ["g"]
"#,
    );
    let per_replication = work::events_per_replication(&m);
    assert!((per_replication - 2.0 * 3000.0 * (10.0 + 1.0 / 6.0)).abs() < 1e-6);
    let actual = measured_events(&m, 4);
    let ratio = per_replication / actual;
    assert!((1.0..1.05).contains(&ratio), "estimate / actual = {ratio}");
}

#[test]
fn the_estimate_bounds_the_shipped_scenarios_from_above() {
    // Redials are counted as if every attempt failed and finite sources as
    // if always idle, so the estimate lies above the engine's count; by at
    // most a factor of 4 for these designs.
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    for name in [
        "campus-overflow",
        "ferry-booking",
        "harbour-peak",
        "video-link",
    ] {
        let m = scenario::load(&dir.join(format!("{name}.toml"))).expect("shipped scenario");
        let estimate = work::events_per_replication(&m);
        let actual = measured_events(&m, 4);
        let ratio = estimate / actual;
        assert!(
            (1.0..4.0).contains(&ratio),
            "{name}: estimate {estimate:.0}, engine {actual:.0} events per replication"
        );
        let w = work::estimate_on(&m, &Replications::Fixed(40), 2);
        assert_eq!(w.events, estimate * 40.0);
        assert_eq!(w.seconds, w.events / (2.0 * EVENTS_PER_SECOND_PER_CORE));
        // No more cores than replications work at once.
        let w3 = work::estimate_on(&m, &Replications::Fixed(3), 64);
        assert_eq!(w3.seconds, w3.events / (3.0 * EVENTS_PER_SECOND_PER_CORE));
    }
}

/// 3000/h x (1 h + 10 holding times of drain allowance) x 2 events x
/// 1,000,000 replications = 7e9 events: 29 minutes on one thread at the
/// guard's rate, yet each replication takes about a millisecond, so an
/// interrupted run stops at once.
const HUGE: &str = r#"
[simulation]
warmup = 0
length = "1h"
replications = 1000000
[[group]]
name = "trunks"
servers = 60
[[stream]]
name = "office"
arrivals = { law = "poisson", rate = "3000/h" }
holding = { law = "exponential", mean = "60s" }
route = ["trunks"]
"#;

fn huge_file() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("busyhour-work-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch folder");
    let path = dir.join("huge.toml");
    std::fs::write(&path, HUGE).expect("write scenario");
    path
}

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .output()
        .expect("run busyhour")
}

#[test]
fn a_huge_run_is_refused_without_yes() {
    let path = huge_file();
    let file = path.to_str().expect("UTF-8 temp path");
    let commands: [&[&str]; 3] = [
        &["run", file, "--threads", "1"],
        &[
            "size",
            file,
            "--group",
            "trunks",
            "--goal",
            "loss<=1%",
            "--threads",
            "1",
        ],
        &["sweep", file, "--scale", "1:2:0.5", "--threads", "1"],
    ];
    for args in commands {
        let o = busyhour(args);
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
        assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
        assert!(err.contains("add --yes to run anyway"), "{err}");
        assert!(err.contains("simulation events"), "{err}");
        assert!(o.stdout.is_empty());
    }
}

#[test]
fn with_yes_the_huge_run_starts_and_says_how_long() {
    let path = huge_file();
    let child = Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args([
            "run",
            path.to_str().expect("UTF-8 temp path"),
            "--yes",
            "--json",
            "--threads",
            "2",
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start busyhour");
    std::thread::sleep(std::time::Duration::from_millis(1500));
    let status = Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status()
        .expect("kill");
    assert!(status.success());
    let o = child.wait_with_output().expect("wait");
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(130), "{err}");
    let first = err.lines().next().unwrap_or_default();
    assert!(
        first.starts_with("busyhour: about 7.00e9 simulation events, up to"),
        "{err}"
    );
}
