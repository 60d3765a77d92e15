//! Output flags are honoured or refused, never ignored: a combination a
//! command cannot honour exits with status 2 and one line naming the flags,
//! before any work and without writing a file; `--figure` picks the figures
//! of every format of `sweep`.

use serde_json::Value;
use std::path::PathBuf;
use std::process::{Command, Output};

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the binary runs")
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("busyhour-flags-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

fn text(p: &std::path::Path) -> String {
    p.display().to_string()
}

/// The command exits 2 with one line on stderr that names every one of
/// `flags`, prints nothing and writes none of `files`.
#[track_caller]
fn refused(args: &[&str], flags: &[&str], files: &[&PathBuf]) {
    let o = busyhour(args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?} was not refused: {err}");
    assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
    for flag in flags {
        assert!(
            err.contains(flag),
            "{args:?}: the message lacks {flag}: {err}"
        );
    }
    assert!(o.stdout.is_empty(), "{args:?} printed something");
    for f in files {
        assert!(!f.exists(), "{args:?} wrote {}", f.display());
    }
}

#[test]
fn a_shard_writes_its_part_and_nothing_else() {
    let part = scratch("part.json");
    let html = scratch("shard.html");
    let svg = scratch("shard.svg");
    let (p, h, c) = (text(&part), text(&html), text(&svg));
    let s = "scenarios/harbour-peak.toml";
    let run = [
        "run",
        s,
        "--replications",
        "4",
        "--shard",
        "1/2",
        "--out",
        &p,
    ];
    let sweep = [
        "sweep",
        s,
        "--scale",
        "1:1.2:0.2",
        "--replications",
        "4",
        "--shard",
        "1/2",
        "--out",
        &p,
    ];
    // Every output flag beside --shard, on run and on sweep; --figure and
    // --goal on sweep.
    let outputs = [
        (vec!["--report", h.as_str()], "--report"),
        (vec!["--chart", c.as_str()], "--chart"),
        (vec!["--json"], "--json"),
        (vec!["--csv"], "--csv"),
    ];
    let sweep_only = [
        (vec!["--figure", "loss"], "--figure"),
        (vec!["--goal", "loss<=1%"], "--goal"),
    ];
    let cases = (outputs.iter().map(|o| (&run[..], o)))
        .chain(outputs.iter().chain(&sweep_only).map(|o| (&sweep[..], o)));
    for (command, (extra, flag)) in cases {
        let args = [command, &extra[..]].concat();
        refused(&args, &["--shard", flag], &[&part, &html, &svg]);
    }
    // Alone, the shard writes its part.
    let o = busyhour(&run);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(part.exists());
    std::fs::remove_file(&part).unwrap();
}

#[test]
fn a_sweep_goal_is_judged_in_the_table_and_drawn_on_the_chart() {
    let s = "scenarios/video-link.toml";
    let sweep = ["sweep", s, "--scale", "1:1.2:0.2", "--replications", "3"];
    let mut args = sweep.to_vec();
    args.extend(["--goal", "loss<=1%"]);
    let o = busyhour(&args);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let table = String::from_utf8_lossy(&o.stdout);
    assert!(table.contains("goals"), "no goals column:\n{table}");
    assert!(
        table.contains("Every goal is met") || table.contains("not all met"),
        "no summary:\n{table}"
    );
    let svg = scratch("goal.svg");
    args.extend(["--chart", svg.to_str().unwrap(), "-q"]);
    let o = busyhour(&args);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let chart = std::fs::read_to_string(&svg).unwrap();
    assert!(
        chart.contains("goal loss&lt;=1%"),
        "the goal line is missing"
    );
}

/// CSV rows (header first) as cells.
fn csv_rows(text: &str) -> Vec<Vec<String>> {
    csv::ReaderBuilder::new()
        .has_headers(false)
        .comment(Some(b'#'))
        .from_reader(text.as_bytes())
        .records()
        .map(|r| r.unwrap().iter().map(str::to_string).collect())
        .collect()
}

#[test]
fn sweep_csv_and_json_carry_only_the_chosen_figures() {
    let sweep = [
        "sweep",
        "scenarios/campus-overflow.toml",
        "--scale",
        "0.8:1.2:0.4",
        "--replications",
        "3",
        "-q",
    ];
    let with = |extra: &[&str]| {
        let mut args = sweep.to_vec();
        args.extend(extra);
        let o = busyhour(&args);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        String::from_utf8(o.stdout).unwrap()
    };
    // CSV: the rows of the chosen figures, exactly as the full CSV has them.
    let all = csv_rows(&with(&["--csv"]));
    let chosen = csv_rows(&with(&[
        "--csv",
        "--figure",
        "loss",
        "--figure",
        "occupancy",
    ]));
    let figure = all[0].iter().position(|c| c == "figure").unwrap();
    let expected: Vec<Vec<String>> = (all.iter().enumerate())
        .filter(|(i, r)| *i == 0 || r[figure] == "loss" || r[figure] == "occupancy")
        .map(|(_, r)| r.clone())
        .collect();
    assert!(expected.len() < all.len(), "the filter must drop rows");
    // 2 steps x (3 stream losses + 3 group occupancies), and the header.
    assert_eq!(expected.len(), 1 + 2 * 6);
    assert_eq!(chosen, expected);

    // JSON: every step's figures are the chosen ones, with the same values.
    let all: Value = serde_json::from_str(&with(&["--json"])).unwrap();
    let chosen: Value = serde_json::from_str(&with(&["--json", "--figure", "loss"])).unwrap();
    assert_eq!(chosen["figures"], serde_json::json!(["loss"]));
    assert!(all.get("figures").is_none());
    let steps = chosen["steps"].as_array().unwrap();
    assert_eq!(steps.len(), 2);
    for (i, step) in steps.iter().enumerate() {
        for (s, stream) in step["result"]["streams"]
            .as_array()
            .unwrap()
            .iter()
            .enumerate()
        {
            let keys: Vec<&str> = stream
                .as_object()
                .unwrap()
                .keys()
                .map(String::as_str)
                .collect();
            assert_eq!(keys, ["loss", "name"]);
            assert_eq!(
                stream["loss"],
                all["steps"][i]["result"]["streams"][s]["loss"]
            );
        }
        for group in step["result"]["groups"].as_array().unwrap() {
            let keys: Vec<&str> = group
                .as_object()
                .unwrap()
                .keys()
                .map(String::as_str)
                .collect();
            assert_eq!(keys, ["name", "servers"], "groups report no loss");
        }
    }
}

#[test]
fn merge_warns_as_the_run_does_unless_quiet() {
    // A one-minute warm-up on a queue that needs far longer: the run warns.
    let scenario = scratch("short-warmup.toml");
    std::fs::write(
        &scenario,
        r#"
title = "desk"
[simulation]
length = "1h"
warmup = "1m"
[[group]]
name = "desk"
servers = 5
queue = "unlimited"
[[stream]]
name = "callers"
arrivals = { law = "poisson", rate = "90/h" }
holding = { law = "exponential", mean = "3m" }
route = ["desk"]
"#,
    )
    .unwrap();
    let s = text(&scenario);
    let stderr = |args: &[&str]| {
        let o = busyhour(args);
        assert!(
            o.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        String::from_utf8(o.stderr).unwrap()
    };
    let run = stderr(&["run", &s, "--replications", "4", "--json"]);
    assert!(
        run.contains("busyhour: warning: the warm-up (60 s)"),
        "{run}"
    );
    let parts: Vec<String> = (1..=2)
        .map(|i| {
            let p = text(&scratch(&format!("warm-{i}.json")));
            stderr(&[
                "run",
                &s,
                "--replications",
                "4",
                "--shard",
                &format!("{i}/2"),
                "--out",
                &p,
            ]);
            p
        })
        .collect();
    let merge = ["merge", &parts[0], &parts[1], "--json"];
    assert_eq!(stderr(&merge), run, "merge warns as the run does");
    assert_eq!(stderr(&[&merge[..], &["--quiet"]].concat()), "");
}
