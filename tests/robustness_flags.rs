//! Bad flags of every command: exit status 2, exactly one line on stderr,
//! nothing on stdout. Covers what clap refuses (unknown flags, missing or
//! malformed values, out-of-range numbers) and what the library refuses
//! after parsing (shares over 100%, goals, ranges, shards, intervals, days,
//! part files, NaN and infinite numbers).

use std::path::PathBuf;
use std::process::{Command, Output};

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run busyhour")
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("busyhour-flags-{}", std::process::id()));
    std::fs::create_dir_all(&d).expect("scratch folder");
    d.join(name)
}

const SCENARIO: &str = "scenarios/video-link.toml";
const CALLS: &str = "scenarios/depot-calls.csv";

/// What is wrong with the refusal of `args`, if anything: it must exit 2
/// with one line starting "busyhour: " and holding `fragment`, and print
/// nothing on stdout.
fn problem(args: &[&str], fragment: &str) -> Option<String> {
    let o = busyhour(args);
    let err = String::from_utf8_lossy(&o.stderr);
    let wrong = if o.status.code() != Some(2) {
        format!("exit status {:?}", o.status.code())
    } else if err.lines().count() != 1 {
        "not exactly one line on stderr".to_string()
    } else if !err.starts_with("busyhour: ") || !err.contains(fragment) {
        format!("expected fragment {fragment:?}")
    } else if !o.stdout.is_empty() {
        "stdout not empty".to_string()
    } else {
        return None;
    };
    Some(format!("{args:?}: {wrong}; stderr:\n{}", err.trim_end()))
}

/// Checks every case and lists all that fail.
#[track_caller]
fn assert_all_refused(cases: &[(Vec<&str>, &str)]) {
    let problems: Vec<String> = cases.iter().filter_map(|(a, f)| problem(a, f)).collect();
    assert!(problems.is_empty(), "{}", problems.join("\n\n"));
}

#[test]
fn bad_flags_of_run_check_size_and_sweep() {
    let s = SCENARIO;
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec![], "'busyhour' needs a command"),
        (vec!["frobnicate"], "unrecognized subcommand 'frobnicate'"),
        (vec!["run"], "<SCENARIO> (see 'busyhour run --help')"),
        (vec!["run", s, "--frob"], "unexpected argument '--frob'"),
        (vec!["run", s, "--replications", "1"], "--replications"),
        (vec!["run", s, "--replications", "-4"], "'-4'"),
        (
            vec!["run", s, "--replications", "ten"],
            "invalid value 'ten'",
        ),
        (
            vec!["run", s, "--replications", "99999999999"],
            "invalid value '99999999999'",
        ),
        (vec!["run", s, "--precision", "150%"], "150%"),
        (vec!["run", s, "--precision", "nan%"], "nan%"),
        (vec!["run", s, "--precision", "0%"], "0%"),
        (vec!["run", s, "--max-replications", "9"], "--precision"),
        (vec!["run", s, "--seed", "-1"], "'-1'"),
        (vec!["run", s, "--threads", "0"], "0 is not in 1..=1024"),
        (vec!["run", s, "--threads", "100000"], "is not in 1..=1024"),
        (vec!["run", s, "--json", "--csv"], "cannot be used with"),
        (vec!["run", s, "--shard", "1/2"], "--out"),
        (
            vec![
                "run",
                s,
                "--shard",
                "3/2",
                "--out",
                "/nonexistent/part.json",
            ],
            "3/2",
        ),
        (
            vec!["run", s, "--shard", "x", "--out", "/nonexistent/part.json"],
            "'x'",
        ),
        (
            vec![
                "run",
                s,
                "--out",
                "/nonexistent-folder/out.txt",
                "--replications",
                "2",
            ],
            "/nonexistent-folder/out.txt",
        ),
        (vec!["check"], "<SCENARIO> (see 'busyhour check --help')"),
        (vec!["check", s, "--csv"], "unexpected argument '--csv'"),
        (vec!["check", "no/such/file.toml"], "no/such/file.toml"),
        (vec!["size", s, "--goal", "loss<=1%"], "--group"),
        (vec!["size", s, "--group", "site-link"], "--goal"),
        (
            vec!["size", s, "--group", "nowhere", "--goal", "loss<=1%"],
            "--group nowhere",
        ),
        (
            vec!["size", s, "--group", "site-link", "--goal", "loss<<1%"],
            "loss<<1%",
        ),
        (
            vec!["size", s, "--group", "site-link", "--goal", "happiness>=1"],
            "happiness",
        ),
        (
            vec!["size", s, "--group", "site-link", "--goal", "loss<=nan%"],
            "nan%",
        ),
        (
            vec![
                "size",
                s,
                "--group",
                "site-link",
                "--goal",
                "loss<=1%",
                "--decide-within",
                "1",
            ],
            "at least 2 replications",
        ),
        (vec!["sweep", s], "--scale"),
        (vec!["sweep", s, "--scale", "2:1:0.1"], "--scale"),
        (vec!["sweep", s, "--scale", "1:2:0"], "--scale"),
        (vec!["sweep", s, "--scale", "1:2:nan"], "--scale"),
        (vec!["sweep", s, "--scale", "0:1e9:1e-9"], "--scale"),
        (vec!["sweep", s, "--scale", "nobody=1:2:0.5"], "--scale"),
        (vec!["sweep", s, "--servers", "site-link=x"], "--servers"),
        (vec!["sweep", s, "--servers", "nowhere=1:5"], "--servers"),
        (
            vec![
                "sweep",
                s,
                "--scale",
                "1:2:0.5",
                "--servers",
                "site-link=1:5",
                "--chart",
                "/nonexistent/grid.svg",
            ],
            "--chart draws one axis",
        ),
        (
            vec!["sweep", s, "--scale", "1:2:0.5", "--figure", "happiness"],
            "--figure happiness",
        ),
    ];
    assert_all_refused(&cases);
}

#[test]
fn bad_flags_of_calc() {
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["calc"], "'busyhour calc' needs a command"),
        (vec!["calc", "erlang"], "unrecognized subcommand 'erlang'"),
        (
            vec!["calc", "loss", "--servers", "3"],
            "busyhour calc loss --help",
        ),
        (
            vec!["calc", "loss", "--traffic", "x", "--servers", "3"],
            "invalid value 'x'",
        ),
        (
            vec!["calc", "loss", "--traffic", "nan", "--servers", "3"],
            "NaN",
        ),
        (
            vec!["calc", "loss", "--traffic", "inf", "--servers", "3"],
            "inf",
        ),
        (
            vec!["calc", "loss", "--traffic", "-1", "--servers", "3"],
            "-1",
        ),
        (
            vec!["calc", "loss", "--traffic", "5", "--servers", "-3"],
            "'-3'",
        ),
        (
            vec![
                "calc",
                "loss",
                "--traffic",
                "5",
                "--servers",
                "1000000000000",
            ],
            "1000000000000",
        ),
        (
            vec!["calc", "loss", "--calls", "600/h", "--servers", "3"],
            "--holding",
        ),
        (
            vec![
                "calc",
                "loss",
                "--calls=-600/h",
                "--holding",
                "3m",
                "--servers",
                "3",
            ],
            "-600/h",
        ),
        (
            vec![
                "calc",
                "loss",
                "--traffic",
                "5",
                "--calls",
                "600/h",
                "--holding",
                "3m",
                "--servers",
                "3",
            ],
            "cannot be used with",
        ),
        (
            vec!["calc", "servers", "--traffic", "5", "--loss", "150%"],
            "150%",
        ),
        (
            vec!["calc", "servers", "--traffic", "5", "--loss", "0%"],
            "0%",
        ),
        (
            vec!["calc", "traffic", "--servers", "0", "--loss", "1%"],
            "0",
        ),
        (
            vec![
                "calc",
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
            "12",
        ),
        (
            vec![
                "calc",
                "queue",
                "--traffic",
                "12",
                "--agents",
                "14",
                "--holding=-3m",
                "--answer-within",
                "20s",
            ],
            "-3m",
        ),
        (
            vec![
                "calc",
                "agents",
                "--traffic",
                "12",
                "--holding",
                "3m",
                "--service-level",
                "80%",
            ],
            "--answer-within",
        ),
        (
            vec![
                "calc",
                "abandon",
                "--traffic",
                "12",
                "--agents",
                "13",
                "--holding",
                "3m",
                "--patience",
                "0s",
            ],
            "'--patience <DURATION>': '0s' is not valid: expected a duration above zero",
        ),
        (
            vec![
                "calc",
                "finite",
                "--sources",
                "0",
                "--servers",
                "8",
                "--idle-traffic",
                "0.2",
            ],
            "0",
        ),
        (
            vec![
                "calc",
                "finite",
                "--sources",
                "40",
                "--servers",
                "8",
                "--idle-traffic",
                "nan",
            ],
            "NaN",
        ),
        (
            vec!["calc", "overflow", "--primary", "8", "--final", "8"],
            "'8'",
        ),
        (
            vec!["calc", "overflow", "--primary", "8:x", "--final", "8"],
            "8:x",
        ),
        (vec!["calc", "multirate", "--capacity", "60"], "--class"),
        (
            vec!["calc", "multirate", "--capacity", "60", "--class", "26:0"],
            "26:0",
        ),
        (
            vec!["calc", "multirate", "--capacity", "60", "--class", "nan:1"],
            "nan:1",
        ),
    ];
    assert_all_refused(&cases);
}

#[test]
fn bad_flags_of_records_and_merge() {
    let not_json = scratch("not-a-part.json");
    std::fs::write(&not_json, "this is not a part file\n").expect("write");
    let not_json = not_json.to_str().expect("UTF-8 temp path");
    let empty = scratch("empty-part.json");
    std::fs::write(&empty, "").expect("write");
    let empty = empty.to_str().expect("UTF-8 temp path");
    let c = CALLS;
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["records"], "<FILE> (see 'busyhour records --help')"),
        (vec!["records", "no/such/calls.csv"], "no/such/calls.csv"),
        (vec!["records", "scenarios"], "it is a directory"),
        (vec!["records", c, "--interval", "7m"], "--interval '7m'"),
        (vec!["records", c, "--interval", "nan"], "--interval 'nan'"),
        (vec!["records", c, "--days", "funday"], "funday"),
        (vec!["records", c, "--days", "2025-02-30"], "2025-02-30"),
        (vec!["records", c, "--start", "begins"], "begins"),
        // --servers stands alone (the installed servers, drawn on the chart).
        (vec!["records", c, "--servers", "0"], "'0'"),
        (vec!["records", c, "--date", "day"], "no date column"),
        (
            vec!["records", c, "--wait", "queue"],
            "name the column with --wait",
        ),
        (vec!["records", c, "--csv", "--json"], "--csv"),
        (
            vec!["records", c, "--report", "records.pdf"],
            ".html ending",
        ),
        (
            vec![
                "records",
                c,
                "--scenario-out",
                "/nonexistent/x.toml",
                "--servers",
                "0",
            ],
            "'0'",
        ),
        (
            vec![
                "records",
                c,
                "--scenario-out",
                "/nonexistent/x.toml",
                "--grade",
                "150%",
            ],
            "150%",
        ),
        (vec!["merge"], "<PART>... (see 'busyhour merge --help')"),
        (vec!["merge", "no/such/part.json"], "no/such/part.json"),
        (vec!["merge", not_json], not_json),
        (vec!["merge", empty], empty),
        (vec!["merge", "scenarios"], "scenarios"),
    ];
    assert_all_refused(&cases);
}

#[test]
fn bad_flags_of_compare() {
    let a = "scenarios/campus-overflow.toml";
    let b = "scenarios/compare-b.toml";
    let out = scratch("compare-out.json").display().to_string();
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["compare"], "<A>"),
        (vec!["compare", a], "<B>"),
        (
            vec!["compare", a, b, "--replications", "1"],
            "--replications",
        ),
        (vec!["compare", a, b, "--precision", "5%"], "--precision"),
        (
            vec!["compare", a, b, "--json", "--csv"],
            "cannot be used with",
        ),
        (
            vec!["compare", a, b, "--threads", "0"],
            "0 is not in 1..=1024",
        ),
        (vec!["compare", a, b, "--chart", "c.png"], "--chart"),
        (vec!["compare", a, b, "--out", a], "design A"),
        (
            vec!["compare", a, b, "--out", &out, "--report", &out],
            "--report",
        ),
        (vec!["compare", a, "nope.toml"], "nope.toml"),
        (vec!["compare", a, SCENARIO], "nothing to compare"),
        (
            vec!["compare", a, "scenarios/harbour-peak.toml"],
            "length is 3 h in B but 2 h in A",
        ),
    ];
    assert_all_refused(&cases);
}
