//! `busyhour size --per-interval` end to end: the staffing table's exit
//! status, its CSV with the caution line, and the one-line refusals of what
//! it cannot do. (The method is checked against outside references in
//! `tests/staffing.rs`.)

use std::process::{Command, Output};

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the busyhour binary runs")
}

const CLINIC: &str = "scenarios/clinic-day.toml";

#[test]
fn the_clinic_day_is_staffed_per_half_hour() {
    let out = busyhour(&[
        "size",
        CLINIC,
        "--group",
        "agents",
        "--goal",
        "service_level>=80%",
        "--per-interval",
        "--replications",
        "20",
        "--csv",
        "-q",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let csv = String::from_utf8(out.stdout).unwrap();
    let mut lines = csv.lines();
    assert!(lines.next().unwrap().starts_with("# Caution:"));
    assert!(
        lines
            .next()
            .unwrap()
            .starts_with("start_s,end_s,offered_traffic,stationary")
    );
    // One row per half hour of the nine-hour day.
    assert_eq!(lines.count(), 18);
}

#[test]
fn refusals_are_one_line_with_exit_2() {
    let refused = |args: &[&str], quoted: &str| {
        let out = busyhour(args);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert_eq!(err.trim_end().lines().count(), 1, "{args:?}: {err}");
        assert!(err.contains(quoted), "{args:?}: {err}");
    };
    refused(
        &[
            "size",
            CLINIC,
            "--group",
            "agents",
            "--goal",
            "wait_p90<=30s",
            "--per-interval",
        ],
        "not reported per interval",
    );
    refused(
        &[
            "size",
            "scenarios/ferry-booking.toml",
            "--group",
            "booking-agents",
            "--goal",
            "service_level>=80%",
            "--per-interval",
        ],
        "interval",
    );
    // The whole-run sizing refuses a group that follows a schedule.
    refused(
        &[
            "size",
            CLINIC,
            "--group",
            "agents",
            "--goal",
            "service_level>=80%",
            "--replications",
            "5",
        ],
        "schedule",
    );
}
