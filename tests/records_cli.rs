//! `busyhour records` end to end: the demo file to a scenario that `run`
//! accepts, JSON keys, the chart, and exit status 2 with one line for bad
//! input.

use busyhour::scenario;
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const DEMO: &str = "scenarios/depot-calls.csv";

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run busyhour")
}

fn temp_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("busyhour-cli-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn text(p: &Path) -> String {
    p.to_str().expect("UTF-8 temp path").to_string()
}

/// Checks that `svg` is well-formed XML as far as elements go: every start
/// tag closed in order, comments and the declaration skipped, and every `&`
/// starting an entity.
fn assert_well_formed(svg: &str) {
    let mut stack: Vec<&str> = Vec::new();
    let mut rest = svg;
    while let Some(open) = rest.find('<') {
        let text_part = &rest[..open];
        for (i, _) in text_part.match_indices('&') {
            let tail = &text_part[i..];
            assert!(
                tail.find(';').is_some_and(|j| j < 8),
                "bare & in {:?}",
                &tail[..tail.len().min(20)]
            );
        }
        rest = &rest[open..];
        if rest.starts_with("<!--") {
            let end = rest.find("-->").expect("comment closed");
            rest = &rest[end + 3..];
            continue;
        }
        let end = rest.find('>').expect("tag closed");
        let tag = &rest[1..end];
        rest = &rest[end + 1..];
        if tag.starts_with('?') || tag.starts_with('!') {
            continue;
        }
        if let Some(name) = tag.strip_prefix('/') {
            assert_eq!(stack.pop(), Some(name.trim()), "mismatched </{name}>");
        } else if !tag.ends_with('/') {
            stack.push(tag.split_whitespace().next().expect("tag name"));
        }
    }
    assert!(stack.is_empty(), "unclosed elements: {stack:?}");
}

#[test]
fn the_demo_turns_into_a_scenario_with_one_command() {
    let dir = temp_dir("demo");
    let toml = dir.join("depot.toml");
    let svg = dir.join("depot.svg");
    let out = busyhour(&[
        "records",
        DEMO,
        "--days",
        "mon-fri",
        "--scenario-out",
        &text(&toml),
        "--chart",
        &text(&svg),
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let j: Value = serde_json::from_slice(&out.stdout).expect("JSON");
    let tc = &j["busy_hour"]["time_consistent"];
    // The depot's invented profile peaks at 10:00-11:00 on weekdays.
    assert_eq!(tc["start"], "10:00");
    assert!(
        tc["definition"]
            .as_str()
            .unwrap()
            .contains("same clock hour")
    );
    assert!(
        j["busy_hour"]["average_daily_peak"]["definition"]
            .as_str()
            .unwrap()
            .contains("each day's own")
    );
    assert_eq!(j["busy_hour"]["daily"].as_array().unwrap().len(), 5);
    assert_eq!(j["holding"]["recommended"]["law"], "lognormal");
    assert!(j["peakedness"]["value"].as_f64().is_some());
    assert_eq!(j["calls"]["outcomes_given"], true);
    // Monday 2025-03-03 to Saturday 2025-03-08 (closed on Sunday): 6 days of 96.
    assert_eq!(j["intervals"].as_array().unwrap().len(), 6 * 96);
    assert_eq!(j["intervals"][40]["start"], "2025-03-03T10:00:00+01:00");
    let servers = j["scenario_out"]["servers"].as_u64().unwrap();
    assert_eq!(j["scenario_out"]["sized_by"], "Erlang B");

    let model = scenario::load(&toml).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(u64::from(model.groups[0].servers), servers);
    // The profile keeps the busy hour's clock times: one interval before
    // the 10:00 busy hour of the demo.
    assert_eq!(model.plan.clock_start_s, Some(9.75 * 3600.0));
    // The scenario goes around on its own: it carries the caution.
    let written = std::fs::read_to_string(&toml).unwrap();
    assert!(
        written
            .lines()
            .any(|l| l.starts_with("# Caution:") && l.contains("life-safety")),
        "no caution in the scenario written"
    );
    let run = busyhour(&[
        "run",
        &text(&toml),
        "--replications",
        "4",
        "--json",
        "--quiet",
    ]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );

    let chart = std::fs::read_to_string(&svg).unwrap();
    assert!(chart.starts_with("<svg"));
    assert_well_formed(&chart);
    for name in [
        "carried traffic",
        "offered traffic (estimate)",
        "busy hour of the day",
        "traffic (erlangs)",
    ] {
        assert!(chart.contains(name), "the chart lacks {name:?}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_report_says_which_definition_each_figure_uses() {
    let out = busyhour(&["records", DEMO]);
    assert!(out.status.success());
    let report = String::from_utf8(out.stdout).unwrap();
    for needle in [
        "Time-consistent busy hour",
        "Average daily peak hour",
        "Offered traffic estimate",
        "Kolmogorov-Smirnov",
        "Peakedness",
        "busyhour calc servers --traffic",
    ] {
        assert!(
            report.contains(needle),
            "report lacks {needle:?}:\n{report}"
        );
    }
}

#[test]
fn bad_input_exits_2_with_one_line() {
    let dir = temp_dir("bad");
    let file = dir.join("calls.csv");
    std::fs::write(
        &file,
        "start,duration\n2025-03-03T10:00:00Z,60\n2025-03-03T10:01:00Z,soon\n",
    )
    .unwrap();
    let out = busyhour(&["records", &text(&file)]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with("busyhour: ") && err.contains("calls.csv:3:") && err.contains("'soon'"),
        "{err}"
    );

    let skipped = busyhour(&["records", &text(&file), "--skip-bad"]);
    assert!(skipped.status.success());
    let report = String::from_utf8(skipped.stdout).unwrap();
    assert!(
        report.contains("1 bad rows skipped") && report.contains("calls.csv:3:"),
        "{report}"
    );

    for args in [
        vec!["records", DEMO, "--interval", "7m"],
        vec!["records", DEMO, "--days", "someday"],
        vec!["records", "no-such-file.csv"],
        vec!["records", DEMO, "--start", "begin"],
    ] {
        let out = busyhour(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        let err = String::from_utf8(out.stderr).unwrap();
        assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// A system's own outcome words: "NO ANSWER" is refused with a message
/// naming --outcome-word, and mapped with it the calls count as abandoned
/// (and "BUSY SIGNAL" as blocked), so no unanswered demand is dropped.
#[test]
fn outcome_words_of_the_system_are_mapped() {
    let dir = temp_dir("outcome-words");
    let file = dir.join("calls.csv");
    std::fs::write(
        &file,
        "start,duration,outcome\n\
         2025-03-03T10:00:00Z,100,ANSWERED\n\
         2025-03-03T10:01:00Z,0,NO ANSWER\n\
         2025-03-03T10:02:00Z,0,busy signal\n\
         2025-03-03T10:03:00Z,200,answered\n",
    )
    .unwrap();
    let o = busyhour(&["records", &text(&file), "--json"]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("NO ANSWER") && err.contains("--outcome-word"),
        "{err}"
    );
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    let o = busyhour(&[
        "records",
        &text(&file),
        "--json",
        "--outcome-word",
        "no answer=abandoned",
        "--outcome-word",
        "BUSY SIGNAL=blocked",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let j: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(j["calls"]["answered"], 2);
    assert_eq!(j["calls"]["abandoned"], 1);
    assert_eq!(j["calls"]["blocked"], 1);
    // Skipped instead, the rows are counted by kind and the report says
    // that their demand is missing.
    let o = busyhour(&["records", &text(&file), "--json", "--skip-bad"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let j: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(j["rows"]["skipped_by_kind"]["outcome"], 2);
    let o = busyhour(&["records", &text(&file), "--skip-bad"]);
    let report = String::from_utf8_lossy(&o.stdout);
    assert!(
        report.contains("2 bad rows skipped (2 outcome)")
            && report.contains("missing from the offered traffic"),
        "{report}"
    );
    // A bad mapping is a flag error.
    let o = busyhour(&["records", &text(&file), "--outcome-word", "NO ANSWER=gone"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("answered, blocked or abandoned"));
}

/// Unix seconds are UTC unless --unix-offset says at which fixed offset the
/// local clock runs: the busy hour moves with it, and the report says so.
#[test]
fn unix_times_are_read_at_the_offset_given() {
    let dir = temp_dir("unix-offset");
    let file = dir.join("calls.csv");
    // 09:00 UTC on 2025-03-03 (1740992400), one call a minute for an hour.
    let mut text = String::from("start,duration\n");
    for i in 0..60 {
        text.push_str(&format!("{},120\n", 1_740_992_400 + 60 * i));
    }
    std::fs::write(&file, text).unwrap();
    let busy = |extra: &[&str]| -> (String, Value) {
        let mut args = vec!["records", file.to_str().unwrap(), "--json"];
        args.extend_from_slice(extra);
        let o = busyhour(&args);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let j: Value = serde_json::from_slice(&o.stdout).unwrap();
        (
            j["busy_hour"]["daily"][0]["start"]
                .as_str()
                .unwrap()
                .to_string(),
            j,
        )
    };
    assert_eq!(busy(&[]).0, "09:00");
    let (start, j) = busy(&["--unix-offset", "+01:00"]);
    assert_eq!(start, "10:00");
    assert_eq!(j["unix_offset"], "+01:00");
    assert_eq!(busy(&["--unix-offset", "-05:30"]).0, "03:30");
    let o = busyhour(&["records", file.to_str().unwrap(), "--unix-offset", "+15:00"]);
    assert_eq!(o.status.code(), Some(2));
}

/// `--csv`: the intervals after the caution comment line, every interval
/// of the JSON with the same counts and traffic, written atomically with
/// `--out` (and an earlier CSV of ours replaced without --force).
#[test]
fn the_intervals_as_csv() {
    let dir = temp_dir("csv");
    let path = dir.join("intervals.csv");
    let out = busyhour(&["records", DEMO, "--csv", "--out", &text(&path)]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(out.stdout.is_empty());
    let csv = std::fs::read_to_string(&path).unwrap();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next().unwrap(),
        format!("# Caution: {}", busyhour::report::CAUTION)
    );
    assert_eq!(
        lines.next().unwrap(),
        "start,date,time,calls,answered,blocked,abandoned,carried_traffic,offered_traffic"
    );
    let json: Value =
        serde_json::from_slice(&busyhour(&["records", DEMO, "--json"]).stdout).unwrap();
    let intervals = json["intervals"].as_array().unwrap();
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), intervals.len());
    for (row, iv) in rows.iter().zip(intervals) {
        assert_eq!(row[0], iv["start"].as_str().unwrap());
        assert_eq!(format!("{}T{}:00", row[1], row[2]), row[0][..19]);
        assert_eq!(row[3], iv["calls"].to_string());
        assert_eq!(row[4], iv["answered"].to_string());
        assert_eq!(row[5], iv["blocked"].to_string());
        assert_eq!(row[6], iv["abandoned"].to_string());
        for (cell, key) in [(row[7], "carried_traffic"), (row[8], "offered_traffic")] {
            let x: f64 = cell.parse().unwrap();
            assert!((x - iv[key].as_f64().unwrap()).abs() < 1e-9, "{cell} {key}");
        }
    }
    // Calls by outcome add up to the report's totals.
    let sum = |c: usize| {
        rows.iter()
            .map(|r| r[c].parse::<u64>().unwrap())
            .sum::<u64>()
    };
    assert_eq!(sum(3), json["calls"]["attempts"].as_u64().unwrap());
    assert_eq!(sum(5), json["calls"]["blocked"].as_u64().unwrap());
    // Written again over our own CSV: no --force needed; no temporary file left.
    let again = busyhour(&["records", DEMO, "--csv", "--out", &text(&path)]);
    assert!(again.status.success());
    let left: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
    assert_eq!(left.len(), 1, "{left:?}");
    // Without outcomes, the outcome cells are empty, not zeros.
    let bare = dir.join("bare.csv");
    std::fs::write(&bare, "start,duration\n2025-03-03T10:00:00Z,60\n").unwrap();
    let out = busyhour(&["records", &text(&bare), "--csv"]);
    let csv = String::from_utf8(out.stdout).unwrap();
    assert!(
        csv.contains("\n2025-03-03T10:00:00Z,2025-03-03,10:00,1,,,,0.0667,0.0667\n")
            || csv.contains("\n2025-03-03T10:00:00+00:00,2025-03-03,10:00,1,,,,0.0667,0.0667\n"),
        "{csv}"
    );
    // --csv with --json is refused.
    let out = busyhour(&["records", DEMO, "--csv", "--json"]);
    assert_eq!(out.status.code(), Some(2));
    let _ = std::fs::remove_dir_all(&dir);
}

/// `--report`: an HTML page with the caution, the chart inline and the
/// report's tables; a name that is not .html or .htm is refused before any
/// work, as for the other commands.
#[test]
fn the_html_report() {
    let dir = temp_dir("html");
    let page = dir.join("depot.html");
    let out = busyhour(&["records", DEMO, "--report", &text(&page)]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert!(stdout.contains(&format!("Report written: {}", text(&page))));
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(html.contains("<title>Call records: depot-calls.csv</title>"));
    assert!(html.contains(&busyhour::report::html::escape(busyhour::report::CAUTION)));
    assert!(html.contains("<div class=\"chart\"><svg"));
    let json: Value =
        serde_json::from_slice(&busyhour(&["records", DEMO, "--json"]).stdout).unwrap();
    // Each day's busiest hour is a table row, as in the terminal report.
    for d in json["busy_hour"]["daily"].as_array().unwrap() {
        let row = format!(
            "<tr><td>{}</td><td>{}</td><td>{}-{}</td><td>{}</td>",
            d["date"].as_str().unwrap(),
            d["weekday"].as_str().unwrap(),
            d["start"].as_str().unwrap(),
            d["end"].as_str().unwrap(),
            d["calls"]
        );
        assert!(html.contains(&row), "{row}");
    }
    // The fits table names the recommended law.
    let recommended = json["holding"]["recommended"]["description"]
        .as_str()
        .unwrap();
    assert!(
        html.contains(&format!("<tr><td>{recommended}</td>")),
        "{recommended}"
    );
    for name in ["report.pdf", "report.svg", "report"] {
        let bad = dir.join(name);
        let out = busyhour(&["records", DEMO, "--report", &text(&bad)]);
        assert_eq!(out.status.code(), Some(2), "{name}");
        let err = String::from_utf8(out.stderr).unwrap();
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(err.contains("--report") && err.contains(".html"), "{err}");
        assert!(!bad.exists());
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// The traffic chart: only the days analysed (`--days`), the hours without
/// traffic between days cut, the installed servers (`--servers`) as a line,
/// and the file's name (not its path) in the title.
#[test]
fn the_chart_cuts_nights_keeps_the_days_chosen_and_draws_the_installed_servers() {
    use busyhour::records::{DayFilter, Options};
    use busyhour::report::records::chart;
    let opts = Options {
        days: Some(DayFilter::parse("mon-wed").unwrap()),
        ..Options::default()
    };
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join(DEMO);
    let a = busyhour::records::analyse(&path, &opts).unwrap();
    let c = chart(&a, Some(10));
    assert_eq!(c.title, "Traffic per 15 min interval: depot-calls.csv");
    // The demo's calls start from 07:00 and end before 20:00 (checked on
    // the intervals themselves): 13 hours of 4 quarter hours a day drawn.
    let busy: Vec<u32> = (a.timeline.selected_days())
        .flat_map(|d| a.timeline.of(d))
        .filter(|iv| iv.calls > 0 || iv.carried_traffic > 0.0)
        .map(|iv| iv.clock_s)
        .collect();
    let (first, last) = (busy.iter().min().unwrap(), busy.iter().max().unwrap());
    assert!(*first >= 7 * 3600 && *first < 8 * 3600, "{first}");
    assert!(*last >= 19 * 3600 && *last < 20 * 3600, "{last}");
    assert!(c.x_label.contains("07:00-20:00"), "{}", c.x_label);
    let carried: Vec<_> = (c.series.iter())
        .filter(|s| s.name == "carried traffic")
        .collect();
    assert_eq!(carried.len(), 3, "one line for each of Mon, Tue, Wed");
    for (k, s) in carried.iter().enumerate() {
        assert_eq!(s.points.len(), 13 * 4);
        assert!(
            (s.points.iter()).all(|p| p.0 > k as f64 && p.0 < k as f64 + 1.0),
            "day {k} inside its unit of the x axis"
        );
    }
    // Every carried interval of the chosen days is drawn: nothing cut but zeros.
    let drawn: f64 = carried.iter().flat_map(|s| &s.points).map(|p| p.1).sum();
    let all: f64 = (a.timeline.selected_days())
        .flat_map(|d| a.timeline.of(d))
        .map(|iv| iv.carried_traffic)
        .sum();
    assert!((drawn - all).abs() < 1e-9, "{drawn} vs {all}");
    let line = c
        .series
        .iter()
        .find(|s| s.name == "installed servers (10)")
        .expect("the installed servers' line");
    assert_eq!(line.points, vec![(0.0, 10.0), (3.0, 10.0)]);
    // The busy hours shaded are the three days' own, inside the axis.
    assert_eq!(c.markers[0].spans.len(), 3);
    assert!(c.markers[0].spans.iter().all(|s| s.0 >= 0.0 && s.1 <= 3.0));
    // End to end: --servers stands alone and the SVG carries its line.
    let dir = temp_dir("chart-servers");
    let svg = dir.join("depot.svg");
    let out = busyhour(&["records", DEMO, "--chart", &text(&svg), "--servers", "10"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&svg).unwrap();
    assert_well_formed(&svg);
    assert!(svg.contains("installed servers (10)") && !svg.contains("scenarios/depot"));
    let _ = std::fs::remove_dir_all(&dir);
}
