//! Shards and merge: a run split into 1, 2, 3 and 7 shards, each a separate
//! process, merges to the unsharded JSON bit for bit, in any order; broken,
//! foreign, duplicated, missing and other-version parts are refused.

use busyhour::experiment::shard::PART_FORMAT_VERSION;
use std::path::PathBuf;
use std::process::{Command, Output};

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the binary runs")
}

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("busyhour-shard-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn shards(scenario: &str, reps: &str, n: u32, d: &std::path::Path) -> Vec<String> {
    (1..=n)
        .map(|i| {
            let out = d
                .join(format!("part-{i}-of-{n}.json"))
                .display()
                .to_string();
            let o = busyhour(&[
                "run",
                scenario,
                "--replications",
                reps,
                "--shard",
                &format!("{i}/{n}"),
                "--out",
                &out,
            ]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            out
        })
        .collect()
}

#[test]
fn any_shard_split_merges_to_the_unsharded_json() {
    for scenario in [
        "scenarios/ferry-booking.toml",
        "scenarios/harbour-peak.toml",
        // Call flows with stages: the per-stage figures merge too.
        "scenarios/utility-line.toml",
        // Priorities, a preference and calls seen by two groups.
        "scenarios/transport-desk.toml",
    ] {
        let whole = busyhour(&["run", scenario, "--replications", "14", "--json"]);
        assert!(whole.status.success());
        let d = dir("split");
        for n in [1u32, 2, 3, 7] {
            let mut parts = shards(scenario, "14", n, &d);
            parts.reverse(); // order must not matter
            let mut args = vec!["merge", "--json"];
            args.extend(parts.iter().map(String::as_str));
            let merged = busyhour(&args);
            assert!(
                merged.status.success(),
                "{}",
                String::from_utf8_lossy(&merged.stderr)
            );
            assert_eq!(
                String::from_utf8_lossy(&whole.stdout),
                String::from_utf8_lossy(&merged.stdout),
                "{scenario} in {n} shards"
            );
        }
    }
}

fn refused(args: &[&str], needle: &str) {
    let o = busyhour(args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains(needle), "expected {needle:?} in {err}");
}

#[test]
fn broken_parts_are_refused_by_name() {
    let d = dir("broken");
    let s = "scenarios/video-link.toml";
    let p = shards(s, "6", 3, &d);
    // Missing.
    refused(&["merge", &p[0], &p[2]], "rerun shard 2 of 3");
    // Duplicated.
    refused(&["merge", &p[0], &p[1], &p[1], &p[2]], "also in");
    // Truncated.
    let text = std::fs::read_to_string(&p[1]).unwrap();
    let cut = d.join("cut.json");
    std::fs::write(&cut, &text[..text.len() / 2]).unwrap();
    refused(
        &["merge", &p[0], cut.to_str().unwrap(), &p[2]],
        "cut.json: not a complete busyhour part file",
    );
    // Foreign: another seed.
    let other = d.join("other-seed.json").display().to_string();
    let o = busyhour(&[
        "run",
        s,
        "--replications",
        "6",
        "--seed",
        "99",
        "--shard",
        "2/3",
        "--out",
        &other,
    ]);
    assert!(o.status.success());
    refused(&["merge", &p[0], &other, &p[2]], "different run");
    // Foreign: another scenario.
    let q = shards("scenarios/campus-overflow.toml", "6", 3, &dir("campus"));
    refused(&["merge", &p[0], &q[1], &p[2]], "different run");
    // Another part-format version.
    let old = d.join("old.json");
    let ours = format!("\"format_version\":{PART_FORMAT_VERSION}");
    assert!(text.contains(&ours), "{text}");
    std::fs::write(&old, text.replacen(&ours, "\"format_version\":0", 1)).unwrap();
    refused(
        &["merge", &p[0], old.to_str().unwrap(), &p[2]],
        "part format 0",
    );
    // Not a part at all.
    refused(
        &["merge", "scenarios/video-link.toml"],
        "not a complete busyhour part file",
    );
    // Shards need a fixed count.
    let prec = d.join("prec.json").display().to_string();
    refused(
        &[
            "run",
            s,
            "--precision",
            "5%",
            "--shard",
            "1/2",
            "--out",
            &prec,
        ],
        "fixed number of replications",
    );
    refused(
        &[
            "run",
            s,
            "--replications",
            "2",
            "--shard",
            "1/3",
            "--out",
            &prec,
        ],
        "at most that many shards",
    );
}

#[test]
fn a_sharded_sweep_merges_to_the_unsharded_sweep() {
    let s = "scenarios/campus-overflow.toml";
    let whole = busyhour(&[
        "sweep",
        s,
        "--scale",
        "0.8:1.4:0.2",
        "--replications",
        "6",
        "--json",
    ]);
    assert!(whole.status.success());
    let d = dir("sweep");
    let parts: Vec<String> = (1..=3)
        .map(|i| {
            let out = d.join(format!("sweep-{i}.json")).display().to_string();
            let o = busyhour(&[
                "sweep",
                s,
                "--scale",
                "0.8:1.4:0.2",
                "--replications",
                "6",
                "--shard",
                &format!("{i}/3"),
                "--out",
                &out,
            ]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            out
        })
        .collect();
    let merged = busyhour(&["merge", "--json", &parts[2], &parts[0], &parts[1]]);
    assert!(
        merged.status.success(),
        "{}",
        String::from_utf8_lossy(&merged.stderr)
    );
    assert_eq!(
        String::from_utf8_lossy(&whole.stdout),
        String::from_utf8_lossy(&merged.stdout)
    );
    // A sweep part does not mix with a run part.
    let run_part = d.join("run.json").display().to_string();
    assert!(
        busyhour(&[
            "run",
            s,
            "--replications",
            "6",
            "--shard",
            "2/3",
            "--out",
            &run_part
        ])
        .status
        .success()
    );
    refused(&["merge", &parts[0], &run_part, &parts[2]], "different run");
}

/// `text` with the JSON number field `key` set to `value`.
fn with_field(text: &str, key: &str, value: &str) -> String {
    let mut doc: serde_json::Value = serde_json::from_str(text).unwrap();
    doc[key] = serde_json::from_str(value).unwrap();
    doc.to_string()
}

#[test]
fn edited_counts_in_a_part_are_refused_on_one_line() {
    let d = dir("counts");
    let s = "scenarios/video-link.toml";
    let whole = shards(s, "2", 1, &d).remove(0);
    let text = std::fs::read_to_string(&whole).unwrap();
    // Shard 1 of 2^32 - 1 of a run of twice that: its two replications are
    // the part's own, so the shard check passes; merge once allocated an
    // owner per replication (137 GB) and aborted.
    let huge = d.join("huge.json");
    let edited = with_field(&text, "shard_count", "4294967295");
    std::fs::write(
        &huge,
        with_field(&edited, "replications_total", "8589934590"),
    )
    .unwrap();
    refused(
        &["merge", huge.to_str().unwrap()],
        "huge.json: not a complete busyhour part file: replications_total 8589934590",
    );
    for (key, value, needle) in [
        ("shard_count", "0", "shard_count 0"),
        ("shard_count", "3", "shard_count 3"),
        ("shard_index", "2", "shard_index 2"),
        ("replications_total", "0", "replications_total 0"),
        ("first_replication", "1", "do not match its shard number"),
        (
            "shard_count",
            "4294967296",
            "not a complete busyhour part file",
        ),
        ("events", "18446744073709551615", ""),
    ] {
        let f = d.join(format!("{key}-{value}.json"));
        std::fs::write(&f, with_field(&text, key, value)).unwrap();
        if needle.is_empty() {
            // A count that sizes nothing is taken as it is.
            let o = busyhour(&["merge", "--json", f.to_str().unwrap()]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        } else {
            refused(&["merge", f.to_str().unwrap()], needle);
        }
    }
}
