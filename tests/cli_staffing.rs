//! `busyhour size --per-interval` end to end: the staffing table's exit
//! status, its CSV with the caution line, the chart and the HTML report,
//! and the one-line refusals of what it cannot do. (The method is checked against outside references in
//! `tests/staffing.rs`.)

use std::path::PathBuf;
use std::process::{Command, Output};

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the busyhour binary runs")
}

const CLINIC: &str = "scenarios/clinic-day.toml";

/// A fresh folder for one test's files.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("busyhour-staffing-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// The points of an SVG polyline element.
fn points(line: &str) -> Vec<(f64, f64)> {
    let start = line.find("points=\"").unwrap() + 8;
    let end = start + line[start..].find('"').unwrap();
    line[start..end]
        .split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect()
}

/// Whether `pts` is a staircase over `intervals` intervals: a level step
/// across each interval (left to right), joined by vertical risers.
fn is_staircase(pts: &[(f64, f64)], intervals: usize) -> bool {
    pts.len() == 2 * intervals
        && pts
            .chunks(2)
            .all(|step| step[0].1 == step[1].1 && step[0].0 < step[1].0)
        && pts
            .windows(2)
            .skip(1)
            .step_by(2)
            .all(|riser| riser[0].0 == riser[1].0)
}

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
fn the_chart_and_report_show_the_plans_over_the_day() {
    let dir = scratch("chart");
    let (svg_path, html_path, csv_path) = (
        dir.join("day.svg"),
        dir.join("day.html"),
        dir.join("day.csv"),
    );
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
        "-q",
        "--csv",
        "--out",
        csv_path.to_str().unwrap(),
        "--chart",
        svg_path.to_str().unwrap(),
        "--report",
        html_path.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    let lines: Vec<&str> = (svg.lines())
        .filter(|l| l.starts_with("<polyline") && l.contains("stroke-width=\"2.5\""))
        .collect();
    // Panel 1: the forecast, the simulated plan (servers taking calls, then
    // to schedule: the clinic has shrinkage) and the shift plan's agents on
    // duty, all solid; the stationary and the modified-offered-load plans
    // dashed; each a staircase over the 18 half hours.
    let solid: Vec<&&str> = lines.iter().filter(|l| !l.contains("dasharray")).collect();
    let dashed: Vec<&&str> = (lines.iter())
        .filter(|l| l.contains("stroke-dasharray=\"9 5\""))
        .collect();
    let goal_lines = (lines.iter())
        .filter(|l| l.contains("stroke-dasharray=\"14 5 3 5\""))
        .count();
    assert!(
        solid.iter().take(4).all(|l| is_staircase(&points(l), 18)),
        "{solid:?}"
    );
    assert_eq!(dashed.len(), 2, "{dashed:?}");
    assert!(dashed.iter().all(|l| is_staircase(&points(l), 18)));
    // Panel 2: the goal's bound, and the figure under each plan (the
    // simulated, the stationary and the shift plan) at the 18 interval
    // midpoints.
    assert_eq!(goal_lines, 1);
    assert_eq!(solid.len(), 7, "{solid:?}");
    assert!(solid[4..].iter().all(|l| points(l).len() == 18));
    // The shift plan's staircase is never below the simulated plan's
    // servers to schedule (it covers them).
    let to_schedule: Vec<f64> = points(solid[2]).iter().map(|p| p.1).collect();
    let on_duty: Vec<f64> = points(solid[3]).iter().map(|p| p.1).collect();
    assert!(to_schedule.iter().zip(&on_duty).all(|(a, b)| b <= a));
    // The servers-taking-calls staircase steps where the CSV's plan steps:
    // equal plans in two intervals are drawn at one height.
    let csv = std::fs::read_to_string(&csv_path).unwrap();
    let servers: Vec<u32> = (csv.lines().skip(2))
        .map(|l| l.split(',').nth(6).unwrap().parse().unwrap())
        .collect();
    let heights: Vec<f64> = points(solid[1]).chunks(2).map(|s| s[0].1).collect();
    for b in 1..servers.len() {
        assert_eq!(
            servers[b] == servers[b - 1],
            heights[b] == heights[b - 1],
            "interval {b}: {servers:?} against {heights:?}"
        );
        // A larger plan is drawn higher (SVG y grows downwards).
        assert_eq!(servers[b] > servers[b - 1], heights[b] < heights[b - 1]);
    }
    for label in [
        "08:00",
        "17:00",
        "stationary plan",
        "goal service_level&gt;=80%",
    ] {
        assert!(svg.contains(label), "{label}");
    }
    let html = std::fs::read_to_string(&html_path).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(html.contains("<svg"), "the page carries the chart");
    assert!(html.contains("08:00-08:30") && html.contains("16:30-17:00"));
    assert!(html.contains("to schedule"));
    assert!(html.contains("Shift plan") && html.contains("paid agent-hours"));
    assert!(html.contains("Estimates under the stated model assumptions"));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Round trip: the scenario `--scenario-out` writes compiles, gives the
/// group the plan as its schedule, and the plan holds there: every
/// interval's goal, judged as the staffing judges it
/// (`staffing::interval_verdicts`), with the file's seed and replications.
#[test]
fn the_written_scenario_carries_the_plan_and_meets_the_goal() {
    written_scenario_carries_the_plan(false);
}

#[test]
fn the_written_scenario_carries_the_shift_plan_and_meets_the_goal() {
    written_scenario_carries_the_plan(true);
}

/// `--scenario-out` of the clinic day: with its shift types the group
/// works the shift plan's shifts, without them it gets the staffing's
/// servers per interval; either way the written scenario compiles,
/// schedules what the CSV says, and meets the goal in every interval when
/// run on its own.
fn written_scenario_carries_the_plan(with_shifts: bool) {
    use busyhour::experiment::size::{Goal, Verdict};
    use busyhour::experiment::{self, RunOptions, staffing};
    let dir = scratch(if with_shifts {
        "shifts-out"
    } else {
        "scenario-out"
    });
    let (toml_path, csv_path) = (dir.join("staffed.toml"), dir.join("plan.csv"));
    let scenario = if with_shifts {
        PathBuf::from(CLINIC)
    } else {
        let mut table: toml::Table = std::fs::read_to_string(CLINIC).unwrap().parse().unwrap();
        let groups = table.get_mut("group").unwrap().as_array_mut().unwrap();
        let agents = groups[0].as_table_mut().unwrap();
        assert!(agents.remove("shift_types").is_some());
        let path = dir.join("clinic-no-shifts.toml");
        std::fs::write(&path, toml::to_string(&table).unwrap()).unwrap();
        path
    };
    let run = |extra: &[&str]| {
        let mut args = vec![
            "size",
            scenario.to_str().unwrap(),
            "--group",
            "agents",
            "--goal",
            "service_level>=80%",
            "--per-interval",
            "-q",
            "--csv",
            "--out",
            csv_path.to_str().unwrap(),
            "--scenario-out",
            toml_path.to_str().unwrap(),
        ];
        args.extend_from_slice(extra);
        busyhour(&args)
    };
    let out = run(&[]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = std::fs::read_to_string(&toml_path).unwrap();
    assert!(text.starts_with("# "), "{text}");
    assert!(text.contains("# Caution: Estimates under the stated model assumptions"));
    let staffed = busyhour::scenario::load(&toml_path)
        .unwrap_or_else(|e| panic!("the written scenario does not compile: {e}\n{text}"));
    let original = busyhour::scenario::load(std::path::Path::new(CLINIC)).unwrap();
    let csv = std::fs::read_to_string(&csv_path).unwrap();
    let column = |k: usize| -> Vec<u32> {
        (csv.lines().skip(2))
            .map(|l| l.split(',').nth(k).unwrap().parse().unwrap())
            .collect()
    };
    let (servers, scheduled) = (column(6), column(7));
    let g = staffed.group_index("agents").unwrap();
    let schedule = staffed.groups[g].schedule.as_ref().expect("a schedule");
    assert_eq!(schedule.interval_s, 1800.0);
    if with_shifts {
        assert!(text.contains("[[group.shifts]]"), "{text}");
        assert!(!text.contains("servers ="), "{text}");
        let (on_duty, taking_calls) = (column(14), column(15));
        // The shifts run to 17:00; one entry of nobody holds after them.
        assert_eq!(schedule.scheduled[..18], on_duty[..]);
        assert_eq!(schedule.present[..18], taking_calls[..]);
        assert_eq!(schedule.present[18..], [0]);
        for b in 0..18 {
            assert!(
                on_duty[b] >= scheduled[b],
                "interval {b}: shifts under-cover"
            );
            // 25% shrinkage: floor(on duty x 0.75).
            assert_eq!(taking_calls[b], on_duty[b] * 3 / 4, "interval {b}");
        }
        assert!(
            (0..18).any(|b| on_duty[b] > scheduled[b]),
            "a shift plan of whole shifts over-covers somewhere"
        );
    } else {
        assert_eq!(schedule.scheduled, scheduled);
        assert_eq!(schedule.present, servers, "25% shrinkage kept");
    }
    assert_eq!(staffed.plan.seed, original.plan.seed);
    assert_eq!(staffed.plan.replications, original.plan.replications);
    let goal = Goal::parse("service_level>=80%", &staffed, g).unwrap();
    let result = experiment::run(&staffed, None, &RunOptions::default()).unwrap();
    let verdicts = staffing::interval_verdicts(&staffed, &[goal], &result);
    assert_eq!(verdicts.len(), 18);
    assert!(
        verdicts.iter().all(|&v| v == Verdict::Holds),
        "{verdicts:?}"
    );
    // An earlier written scenario is replaced without --force; the original
    // scenario never is.
    let again = run(&["--replications", "20"]);
    assert!(
        again.status.success(),
        "{}",
        String::from_utf8_lossy(&again.stderr)
    );
    if with_shifts {
        let _ = std::fs::remove_dir_all(&dir);
        return;
    }
    let onto_input = busyhour(&[
        "size",
        CLINIC,
        "--group",
        "agents",
        "--goal",
        "service_level>=80%",
        "--per-interval",
        "--scenario-out",
        CLINIC,
    ]);
    assert_eq!(onto_input.status.code(), Some(2));
    let other = dir.join("mine.toml");
    std::fs::write(&other, "# my own notes\n").unwrap();
    let onto_other = busyhour(&[
        "size",
        CLINIC,
        "--group",
        "agents",
        "--goal",
        "service_level>=80%",
        "--per-interval",
        "--scenario-out",
        other.to_str().unwrap(),
    ]);
    assert_eq!(onto_other.status.code(), Some(2));
    assert_eq!(std::fs::read_to_string(&other).unwrap(), "# my own notes\n");
    let _ = std::fs::remove_dir_all(&dir);
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
    // Writing the plan back needs a plan per interval.
    refused(
        &[
            "size",
            CLINIC,
            "--group",
            "agents",
            "--goal",
            "service_level>=80%",
            "--scenario-out",
            "never-written.toml",
        ],
        "--per-interval",
    );
    assert!(!std::path::Path::new("never-written.toml").exists());
    // Charts and reports are named for what they hold.
    let dir = scratch("names");
    let wrong_chart = dir.join("day.png");
    let wrong_report = dir.join("day.txt");
    for (flag, path, quoted) in [
        ("--chart", &wrong_chart, ".svg"),
        ("--report", &wrong_report, ".html"),
    ] {
        refused(
            &[
                "size",
                CLINIC,
                "--group",
                "agents",
                "--goal",
                "service_level>=80%",
                "--per-interval",
                flag,
                path.to_str().unwrap(),
            ],
            quoted,
        );
        assert!(!path.exists(), "{flag}: nothing written");
    }
    let _ = std::fs::remove_dir_all(&dir);
}
