//! Shards of a setting sweep (`sweep --set KEY=RANGE --shard I/N`): the
//! merged document equals the unsharded `sweep --set` JSON byte for byte
//! for 1, 2 and 3 shards (the same seeds make the same calls, so identity
//! is the check, not a tolerance); several --set and --grid refused on one
//! line; a part of another setting, of an edited scenario or a missing
//! shard refused by name.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const TRUNKS: &str = r#"
title = "Trunks for a sharded setting sweep"
[simulation]
warmup = "10m"
length = "1h"
replications = 6
seed = 11
[[group]]
name = "trunks"
servers = 8
[[stream]]
name = "office"
arrivals = { law = "poisson", rate = "120/h" }
holding = { law = "exponential", mean = "3m" }
route = ["trunks"]
"#;

const SET: &str = "stream.office.holding.mean=2m:4m:1m";

fn busyhour(args: &[&str]) -> Output {
    // A fixed "made" time: two reports written a second apart would differ.
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .env("SOURCE_DATE_EPOCH", "0")
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the binary runs")
}

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("busyhour-setshard-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn scenario(d: &Path, text: &str) -> String {
    let p = d.join("trunks.toml");
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

fn refused(args: &[&str], needle: &str) {
    let o = busyhour(args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains(needle), "expected {needle:?} in {err}");
}

fn parts(s: &str, set: &str, n: u32, d: &Path, tag: &str) -> Vec<String> {
    (1..=n)
        .map(|i| {
            let out = d
                .join(format!("{tag}-{i}-of-{n}.json"))
                .display()
                .to_string();
            let o = busyhour(&[
                "sweep",
                s,
                "--set",
                set,
                "--replications",
                "6",
                "--shard",
                &format!("{i}/{n}"),
                "--out",
                &out,
                "-q",
            ]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            out
        })
        .collect()
}

#[test]
fn a_sharded_setting_sweep_merges_to_the_unsharded_one() {
    let d = dir("merge");
    let s = scenario(&d, TRUNKS);
    for format in ["--json", "--csv"] {
        let whole = busyhour(&[
            "sweep",
            &s,
            "--set",
            SET,
            "--replications",
            "6",
            format,
            "-q",
        ]);
        assert!(
            whole.status.success(),
            "{}",
            String::from_utf8_lossy(&whole.stderr)
        );
        for n in 1..=3 {
            let mut p = parts(&s, SET, n, &d, "part");
            p.reverse();
            let mut args = vec!["merge", format];
            args.extend(p.iter().map(String::as_str));
            let merged = busyhour(&args);
            assert!(
                merged.status.success(),
                "{}",
                String::from_utf8_lossy(&merged.stderr)
            );
            assert_eq!(
                String::from_utf8_lossy(&whole.stdout),
                String::from_utf8_lossy(&merged.stdout),
                "{n} shards, {format}"
            );
        }
    }
    // The table too.
    let whole = busyhour(&["sweep", &s, "--set", SET, "--replications", "6", "-q"]);
    let p = parts(&s, SET, 2, &d, "table");
    let merged = busyhour(&["merge", &p[0], &p[1]]);
    assert_eq!(whole.stdout, merged.stdout);
    // And the report, but for the command line it records.
    let (wr, mr) = (d.join("whole.html"), d.join("merged.html"));
    let (wr, mr) = (wr.display().to_string(), mr.display().to_string());
    let whole_args = [
        "sweep",
        &s,
        "--set",
        SET,
        "--replications",
        "6",
        "-q",
        "--report",
        &wr,
    ];
    assert!(busyhour(&whole_args).status.success());
    let merge_args = ["merge", &p[1], &p[0], "-q", "--report", &mr];
    assert!(busyhour(&merge_args).status.success());
    let w = std::fs::read_to_string(&wr).unwrap();
    let m = std::fs::read_to_string(&mr).unwrap();
    let w = w.replace(&format!("busyhour {}", whole_args.join(" ")), "COMMAND");
    let m = m.replace(&format!("busyhour {}", merge_args.join(" ")), "COMMAND");
    assert!(w.contains("COMMAND"), "the report records its command line");
    assert_eq!(w, m);
}

#[test]
fn several_settings_and_grids_are_refused_with_shards() {
    let d = dir("several");
    let s = scenario(&d, TRUNKS);
    let out = d.join("p.json").display().to_string();
    let base = [
        "sweep",
        s.as_str(),
        "--replications",
        "6",
        "--shard",
        "1/2",
        "--out",
        out.as_str(),
    ];
    let mut two = base.to_vec();
    two.extend(["--set", SET, "--set", "group.trunks.servers=6:10:2"]);
    refused(&two, "one --set at a time");
    let mut grid = two.clone();
    grid.push("--grid");
    refused(&grid, "one --set at a time");
    assert!(!Path::new(&out).exists(), "no part is written on a refusal");
}

#[test]
fn parts_of_another_setting_or_scenario_or_a_missing_shard_are_refused() {
    let d = dir("foreign");
    let s = scenario(&d, TRUNKS);
    let p = parts(&s, SET, 3, &d, "mean");
    // Another range of the same setting.
    let other = parts(&s, "stream.office.holding.mean=2m:5m:1m", 3, &d, "range");
    refused(&["merge", &p[0], &p[1], &other[2]], &other[2]);
    // Another setting.
    let servers = parts(&s, "group.trunks.servers=6:10:2", 3, &d, "servers");
    refused(&["merge", &p[0], &servers[1], &p[2]], &servers[1]);
    // A missing shard is named.
    refused(&["merge", &p[0], &p[2]], "rerun shard 2 of 3");
    // The scenario edited between shards: the step models' fingerprints differ.
    let e = dir("edited");
    let edited = scenario(&e, &TRUNKS.replace("servers = 8", "servers = 9"));
    let late = parts(&edited, SET, 3, &e, "late");
    refused(&["merge", &p[0], &p[1], &late[2]], &late[2]);
}
