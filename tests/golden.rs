//! Golden files: the exact JSON (and CSV, where the command has one) of
//! every command on short fixed-seed runs of the inputs in
//! `tests/golden/inputs/`, pinned byte for byte in `tests/golden/`. A change
//! to any document shows up here as a diff to read.
//!
//! After an intended change, rewrite them and read the diff:
//!
//! ```sh
//! BUSYHOUR_BLESS=1 cargo test --release --test golden
//! git diff tests/golden/
//! ```
//!
//! Each case copies the inputs to a scratch folder and runs there with
//! relative names, so the files the documents quote are the same on every
//! machine. Wall-clock seconds (`wall_s` of `size`) are the only value
//! masked: they are written as 0.0. The run JSON carries the version, so a
//! version bump is a bless.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Set to rewrite the golden files instead of comparing.
const BLESS: &str = "BUSYHOUR_BLESS";

fn golden(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/golden")
        .join(name)
}

/// A scratch folder holding a copy of every input.
struct Scratch(PathBuf);

impl Scratch {
    fn new(case: &str) -> Scratch {
        let dir =
            std::env::temp_dir().join(format!("busyhour-golden-{}-{case}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        for entry in std::fs::read_dir(golden("inputs")).unwrap() {
            let path = entry.unwrap().path();
            std::fs::copy(&path, dir.join(path.file_name().unwrap())).unwrap();
        }
        Scratch(dir)
    }

    /// Run the binary in the folder; the exit status must be `status`.
    #[track_caller]
    fn run(&self, args: &[&str], status: i32) -> String {
        let o: Output = Command::new(env!("CARGO_BIN_EXE_busyhour"))
            .args(args)
            .current_dir(&self.0)
            .output()
            .expect("the binary runs");
        assert_eq!(
            o.status.code(),
            Some(status),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        String::from_utf8(o.stdout).expect("UTF-8 output")
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// Wall-clock seconds written as 0.0.
fn mask(text: &str) -> String {
    text.lines()
        .map(|line| match line.find("\"wall_s\": ") {
            Some(i) => {
                let rest = &line[i + 10..];
                let end = rest.find(',').unwrap_or(rest.len());
                format!("{}\"wall_s\": 0.0{}", &line[..i], &rest[end..])
            }
            None => line.to_string(),
        })
        .collect::<Vec<_>>()
        .join("\n")
        + if text.ends_with('\n') { "\n" } else { "" }
}

/// Compare `actual` with the golden file `name` (or rewrite it when
/// blessing).
#[track_caller]
fn matches_golden(name: &str, actual: &str) {
    let actual = mask(actual);
    let path = golden(name);
    if std::env::var_os(BLESS).is_some() {
        std::fs::write(&path, &actual).unwrap();
        return;
    }
    let expected = std::fs::read_to_string(&path).unwrap_or_else(|e| {
        panic!(
            "{}: {e}; write it with {BLESS}=1 cargo test --release --test golden",
            path.display()
        )
    });
    same_text(
        &format!("{name} (if the change is intended, rerun with {BLESS}=1 and read the diff)"),
        &expected,
        &actual,
    );
}

/// `actual` is `expected`; else the first line that differs, expected
/// beside actual.
#[track_caller]
fn same_text(what: &str, expected: &str, actual: &str) {
    if expected == actual {
        return;
    }
    let (e, a): (Vec<&str>, Vec<&str>) = (expected.lines().collect(), actual.lines().collect());
    let line = (0..e.len().max(a.len()))
        .find(|&i| e.get(i) != a.get(i))
        .unwrap_or(0);
    panic!(
        "{what}: differs at line {}:\n  expected: {}\n  actual:   {}\n({} lines expected, {} actual)",
        line + 1,
        e.get(line).unwrap_or(&"(end of file)"),
        a.get(line).unwrap_or(&"(end of file)"),
        e.len(),
        a.len()
    );
}

#[test]
fn mask_writes_wall_clock_seconds_as_zero() {
    assert_eq!(
        mask("{\n  \"wall_s\": 0.0123,\n  \"x\": 1\n}\n"),
        "{\n  \"wall_s\": 0.0,\n  \"x\": 1\n}\n"
    );
    assert_eq!(mask("  \"wall_s\": 2.5\n"), "  \"wall_s\": 0.0\n");
}

const RUN: [&str; 4] = ["--seed", "7", "--replications", "4"];

#[test]
fn run_documents() {
    let s = Scratch::new("run");
    for name in ["peak", "queue", "overflow", "flow", "classes"] {
        let file = format!("{name}.toml");
        let mut args = vec!["run", &file, "--quiet"];
        args.extend(RUN);
        let json = s.run(&[&args[..], &["--json"]].concat(), 0);
        matches_golden(&format!("run-{name}.json"), &json);
        let csv = s.run(&[&args[..], &["--csv"]].concat(), 0);
        matches_golden(&format!("run-{name}.csv"), &csv);
    }
}

#[test]
fn compare_documents() {
    let s = Scratch::new("compare");
    let args = [
        "compare",
        "overflow.toml",
        "overflow-b.toml",
        "--quiet",
        "--replications",
        "4",
    ];
    let json = s.run(&[&args[..], &["--json"]].concat(), 0);
    matches_golden("compare-overflow.json", &json);
    let csv = s.run(&[&args[..], &["--csv"]].concat(), 0);
    matches_golden("compare-overflow.csv", &csv);
}

#[test]
fn merge_of_run_parts_prints_the_run_documents() {
    // Pinned through the run's golden files: merge must print the same.
    let s = Scratch::new("merge");
    for name in ["peak", "queue"] {
        let file = format!("{name}.toml");
        let mut run = vec!["run", file.as_str(), "--quiet"];
        run.extend(RUN);
        for i in ["1/2", "2/2"] {
            let part = format!("part-{}.json", &i[..1]);
            s.run(&[&run[..], &["--shard", i, "--out", &part]].concat(), 0);
        }
        for flag in ["--json", "--csv"] {
            let whole = s.run(&[&run[..], &[flag]].concat(), 0);
            let merged = s.run(&["merge", "part-2.json", "part-1.json", flag], 0);
            same_text(&format!("merge {name} {flag}"), &whole, &merged);
        }
    }
}

#[test]
fn check_documents() {
    let s = Scratch::new("check");
    matches_golden(
        "check-overflow.json",
        &s.run(&["check", "overflow.toml", "--json"], 0),
    );
    matches_golden(
        "check-peak.json",
        &s.run(&["check", "peak.toml", "--json"], 0),
    );
    matches_golden(
        "check-classes.json",
        &s.run(&["check", "classes.toml", "--json"], 0),
    );
    // A failed check: exit status 1, the problems in the document.
    matches_golden(
        "check-overloaded.json",
        &s.run(&["check", "overloaded.toml", "--json"], 1),
    );
}

#[test]
fn size_documents() {
    let s = Scratch::new("size");
    let quick = [
        "--seed",
        "7",
        "--replications",
        "4",
        "--decide-within",
        "8",
        "-q",
    ];
    // An answer resting on an undecided neighbour.
    let mut args = vec!["size", "queue.toml", "--group", "agents", "--json"];
    args.extend(["--goal", "service_level>=70%", "--goal", "abandonment<=10%"]);
    args.extend(quick);
    matches_golden("size-queue.json", &s.run(&args, 0));
    // A goal over several streams, decided by one of them.
    let mut args = vec!["size", "overflow.toml", "--group", "shared", "--json"];
    args.extend(["--goal", "loss<=5%"]);
    args.extend(quick);
    matches_golden("size-overflow.json", &s.run(&args, 0));
    // A goal on the share of days: judged on that share, the long-run
    // figure beside it; and its table.
    let mut args = vec!["size", "queue.toml", "--group", "agents"];
    args.extend(["--goal", "service_level>=70% on 40% of days"]);
    args.extend(quick);
    matches_golden(
        "size-days.json",
        &s.run(&[&args[..], &["--json"]].concat(), 0),
    );
    // (The text's "Took" line is wall-clock time: left out.)
    let table = s.run(&args, 0);
    let table: String = (table.lines())
        .filter(|l| !l.starts_with("Took "))
        .map(|l| format!("{l}\n"))
        .collect();
    matches_golden("size-days.txt", &table);
}

#[test]
fn sweep_documents_and_their_merge() {
    let s = Scratch::new("sweep");
    let sweep = [
        "sweep",
        "overflow.toml",
        "--scale",
        "0.8:1.2:0.4",
        "--seed",
        "7",
        "--replications",
        "3",
        "-q",
    ];
    let with = |extra: &[&str]| s.run(&[&sweep[..], extra].concat(), 0);
    matches_golden("sweep-overflow.json", &with(&["--json"]));
    matches_golden("sweep-overflow.csv", &with(&["--csv"]));
    matches_golden(
        "sweep-overflow-loss.csv",
        &with(&["--csv", "--figure", "loss"]),
    );
    matches_golden(
        "sweep-overflow-loss.json",
        &with(&["--json", "--figure", "loss"]),
    );
    for i in ["1/2", "2/2"] {
        let part = format!("sweep-{}.json", &i[..1]);
        with(&["--shard", i, "--out", &part]);
    }
    for flag in ["--json", "--csv"] {
        let merged = s.run(&["merge", "sweep-1.json", "sweep-2.json", flag], 0);
        same_text(
            &format!("merge of the sweep {flag}"),
            &with(&[flag]),
            &merged,
        );
    }
}

#[test]
fn cost_documents() {
    let s = Scratch::new("cost");
    let args = [
        "size",
        "priced.toml",
        "--group",
        "ports",
        "--goal",
        "cost",
        "-q",
    ];
    let with = |extra: &[&str]| s.run(&[&args[..], extra].concat(), 0);
    matches_golden("size-cost.json", &with(&["--json"]));
    matches_golden("size-cost.csv", &with(&["--csv"]));
}

#[test]
fn sweep_settings_documents() {
    let s = Scratch::new("settings");
    let base = [
        "sweep",
        "queue.toml",
        "--seed",
        "7",
        "--replications",
        "3",
        "-q",
    ];
    let with = |extra: &[&str]| s.run(&[&base[..], extra].concat(), 0);
    let two = [
        "--set",
        "stream.callers.patience.mean=30s:90s:60s",
        "--set",
        "group.agents.queue=2:10:8",
    ];
    matches_golden(
        "sweep-settings.json",
        &with(&[&two[..], &["--json"]].concat()),
    );
    matches_golden(
        "sweep-settings.csv",
        &with(&[&two[..], &["--csv"]].concat()),
    );
    matches_golden(
        "sweep-settings-grid.json",
        &with(
            &[
                &two[..],
                &["--grid", "--goal", "service_level>=60%", "--json"],
            ]
            .concat(),
        ),
    );
}

#[test]
fn records_documents() {
    let s = Scratch::new("records");
    let records = ["records", "calls.csv", "--interval", "1h", "--json"];
    matches_golden("records.json", &s.run(&records, 0));
    let written = [
        &records[..],
        &["--scenario-out", "depot.toml", "--chart", "depot.svg"],
    ]
    .concat();
    matches_golden("records-scenario.json", &s.run(&written, 0));
    let empirical = [
        &records[..],
        &[
            "--scenario-out",
            "measured.toml",
            "--empirical",
            "--servers",
            "5",
        ],
    ]
    .concat();
    matches_golden("records-empirical.json", &s.run(&empirical, 0));
}
