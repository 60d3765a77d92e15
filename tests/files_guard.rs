//! Outputs never destroy inputs: every command refuses, before any work, an
//! output that is a file it reads (through symbolic and hard links), two
//! outputs on one file, and an existing file that is not an earlier busyhour
//! output (unless `--force`); the inputs stay byte-identical.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn busyhour(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("the binary runs")
}

/// A scratch folder with copies of a scenario, its measured talk times and
/// the demo call records.
fn folder(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("busyhour-files-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    for f in [
        "ferry-booking.toml",
        "ferry-talk-times.csv",
        "depot-calls.csv",
    ] {
        std::fs::copy(root.join(f), dir.join(f)).unwrap();
    }
    dir
}

fn contents(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<(String, Vec<u8>)> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| {
            let e = e.unwrap();
            (
                e.file_name().to_string_lossy().into_owned(),
                std::fs::read(e.path()).unwrap_or_default(),
            )
        })
        .collect();
    v.sort();
    v
}

/// The command is refused with exit 2 and one line holding `needle`, and
/// nothing in the folder changes.
#[track_caller]
fn refused(dir: &Path, args: &[&str], needle: &str) {
    let before = contents(dir);
    let o = busyhour(dir, args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains(needle), "expected {needle:?} in {err}");
    assert_eq!(before, contents(dir), "{args:?} changed the folder");
}

#[test]
fn outputs_that_are_inputs_are_refused() {
    let d = folder("inputs");
    let csv = "depot-calls.csv";
    refused(
        &d,
        &["records", csv, "--scenario-out", csv],
        "--scenario-out depot-calls.csv: that is the call-record file",
    );
    refused(
        &d,
        &["records", csv, "--chart", csv],
        "that is the call-record file",
    );
    refused(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--json",
            "--out",
            "ferry-booking.toml",
        ],
        "that is the scenario this command reads",
    );
    refused(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--json",
            "--out",
            "ferry-talk-times.csv",
        ],
        "that is the data file ferry-talk-times.csv of the scenario",
    );
    // The holding-time file written beside a scenario may not be the records.
    std::fs::copy(d.join(csv), d.join("x-holding.csv")).unwrap();
    refused(
        &d,
        &[
            "records",
            "x-holding.csv",
            "--scenario-out",
            "x.toml",
            "--empirical",
        ],
        "the holding-time file beside --scenario-out",
    );
    std::fs::remove_file(d.join("x-holding.csv")).unwrap();
    // Through a symbolic link and a hard link.
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(d.join(csv), d.join("soft.csv")).unwrap();
        refused(
            &d,
            &["records", csv, "--out", "soft.csv"],
            "that is the call-record file",
        );
        std::fs::hard_link(d.join("ferry-booking.toml"), d.join("hard.toml")).unwrap();
        refused(
            &d,
            &[
                "size",
                "ferry-booking.toml",
                "--group",
                "booking-agents",
                "--goal",
                "service_level>=80%",
                "--out",
                "hard.toml",
            ],
            "that is the scenario",
        );
        refused(
            &d,
            &[
                "sweep",
                "hard.toml",
                "--scale",
                "1:1.2:0.2",
                "--out",
                "ferry-booking.toml",
            ],
            "that is the scenario",
        );
    }
}

#[test]
fn two_outputs_on_one_file_are_refused() {
    let d = folder("twice");
    refused(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--chart",
            "same.out",
            "--report",
            "same.out",
            "--out",
            "same.out",
        ],
        "name the same file same.out",
    );
    refused(
        &d,
        &[
            "records",
            "depot-calls.csv",
            "--chart",
            "a.svg",
            "--out",
            "./a.svg",
        ],
        "--out and --chart name the same file",
    );
}

#[test]
fn a_foreign_file_is_replaced_only_with_force() {
    let d = folder("foreign");
    std::fs::write(d.join("notes.txt"), "my own notes\n").unwrap();
    refused(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--replications",
            "2",
            "--out",
            "notes.txt",
        ],
        "--out notes.txt: the file exists and does not look like a busyhour report",
    );
    let o = busyhour(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--replications",
            "2",
            "-q",
            "--out",
            "notes.txt",
            "--force",
        ],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    // An earlier output of the same kind is replaced without asking, an
    // output of another kind is not.
    for _ in 0..2 {
        let o = busyhour(
            &d,
            &[
                "run",
                "ferry-booking.toml",
                "--replications",
                "2",
                "-q",
                "--json",
                "--out",
                "r.json",
            ],
        );
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let o = busyhour(
            &d,
            &[
                "records",
                "depot-calls.csv",
                "--scenario-out",
                "depot.toml",
                "--empirical",
                "--out",
                "rec.txt",
            ],
        );
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    }
    refused(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--replications",
            "2",
            "--csv",
            "--out",
            "r.json",
        ],
        "does not look like a busyhour CSV table",
    );
    // --force never lets an output replace an input.
    refused(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--force",
            "--out",
            "ferry-talk-times.csv",
        ],
        "that is the data file",
    );
}

#[test]
fn data_files_outside_the_data_folder_are_refused_before_reading() {
    let d = folder("confined");
    std::fs::create_dir_all(d.join("data")).unwrap();
    refused(
        &d,
        &["check", "ferry-booking.toml", "--data-dir", "data"],
        "is not a readable file inside the data folder data (--data-dir)",
    );
    refused(
        &d,
        &["run", "ferry-booking.toml", "--data-dir", "data"],
        "(--data-dir)",
    );
    let o = busyhour(&d, &["check", "ferry-booking.toml", "--data-dir", "."]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}

#[test]
fn a_data_file_is_quoted_in_short_excerpts_only() {
    // A file that is not a CSV of measured values (here: a long single line)
    // named as a data file: the message quotes at most 40 characters of it.
    let d = folder("excerpt");
    let secret = format!("{},other", "x".repeat(500));
    std::fs::write(d.join("long.csv"), format!("{secret}\n1,2\n")).unwrap();
    let text = std::fs::read_to_string(d.join("ferry-booking.toml"))
        .unwrap()
        .replace("ferry-talk-times.csv", "long.csv");
    std::fs::write(d.join("bad.toml"), text).unwrap();
    let o = busyhour(&d, &["check", "bad.toml"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("has no column"), "{err}");
    assert!(!err.contains(&"x".repeat(41)), "quotes too much: {err}");
}

/// A chart is SVG and a report HTML: a name promising another format
/// (`out.png`, `report.pdf`) is refused before any work, rather than an SVG
/// written under a `.png` name.
#[test]
fn a_chart_or_report_named_for_another_format_is_refused() {
    let d = folder("endings");
    refused(
        &d,
        &["run", "ferry-booking.toml", "--chart", "out.png"],
        "--chart out.png: charts are written as SVG; name the file with a .svg ending",
    );
    refused(
        &d,
        &["run", "ferry-booking.toml", "--report", "report.pdf"],
        "--report report.pdf: reports are written as HTML",
    );
    refused(
        &d,
        &["records", "depot-calls.csv", "--chart", "traffic"],
        "--chart traffic: charts are written as SVG",
    );
    // Upper-case endings and .htm are fine.
    let o = busyhour(
        &d,
        &[
            "run",
            "ferry-booking.toml",
            "--replications",
            "2",
            "-q",
            "--report",
            "R.HTM",
        ],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}

/// A CSV written by busyhour (caution comment line first) is an earlier
/// output: writing it again replaces it without --force.
#[test]
fn a_csv_output_is_replaced_by_the_next_run() {
    let d = folder("csv-again");
    for _ in 0..2 {
        let o = busyhour(
            &d,
            &[
                "run",
                "ferry-booking.toml",
                "--replications",
                "2",
                "-q",
                "--csv",
                "--out",
                "r.csv",
            ],
        );
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    }
}
