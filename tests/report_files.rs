//! Charts and HTML reports: the SVG files are well-formed and carry the
//! expected series; the HTML page is self-contained and, where Chromium is
//! installed, loads in a real headless browser with no console errors and
//! shows its main figures in the rendered text.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the binary runs")
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("busyhour-report-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

/// A light well-formedness check of SVG/XML text: every element opened is
/// closed in order (self-closing tags allowed), and the root is <svg>.
fn assert_well_formed(xml: &str) {
    let body = xml.find("<svg").map(|i| &xml[i..]).expect("an <svg> root");
    let mut stack: Vec<String> = Vec::new();
    let mut rest = body;
    while let Some(i) = rest.find('<') {
        rest = &rest[i + 1..];
        let end = rest.find('>').expect("unterminated tag");
        let tag = &rest[..end];
        rest = &rest[end + 1..];
        if tag.starts_with('!') || tag.starts_with('?') {
            continue;
        }
        if let Some(name) = tag.strip_prefix('/') {
            let open = stack.pop().expect("a closing tag without an opening one");
            assert_eq!(open, name.trim(), "mismatched tags");
        } else if !tag.ends_with('/') {
            let name = tag.split_whitespace().next().unwrap().to_string();
            stack.push(name);
        }
    }
    assert!(stack.is_empty(), "unclosed elements: {stack:?}");
}

#[test]
fn run_chart_shows_the_interval_figures() {
    let svg = scratch("peak.svg");
    let o = busyhour(&[
        "run",
        "scenarios/harbour-peak.toml",
        "--replications",
        "6",
        "--chart",
        svg.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert_well_formed(&text);
    for series in [
        "offered traffic, all streams",
        "carried traffic, all streams",
        "public loss (95% band)",
        // harbour-peak: per-interval loss against the modified offered
        // load (any holding law).
        "public loss, Erlang B, modified offered load (approx.)",
    ] {
        assert!(text.contains(series), "missing series {series}");
    }
    // A chart is pasted into documents on its own: it carries the caution.
    assert!(
        text.contains("life-safety calls keep margin"),
        "no caution footnote"
    );
    // Formula curves are dashed, simulated ones solid.
    assert!(
        text.contains("stroke-dasharray=\"9 5\""),
        "no dashed formula line"
    );
}

#[test]
fn run_chart_without_intervals_is_a_dot_and_whisker_per_stream() {
    let svg = scratch("video.svg");
    let o = busyhour(&[
        "run",
        "scenarios/video-link.toml",
        "--replications",
        "6",
        "--chart",
        svg.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert_well_formed(&text);
    assert!(text.contains("loss (calls never served) by stream"));
    assert!(text.contains("<circle"), "no dots");
    assert!(text.contains("simulated (95% interval)"));
    assert!(text.contains("life-safety calls keep margin"));
}

#[test]
fn sweep_chart_has_bands_formula_and_goal_lines() {
    let svg = scratch("sweep.svg");
    let o = busyhour(&[
        "sweep",
        "scenarios/campus-overflow.toml",
        "--scale",
        "0.8:1.4:0.2",
        "--replications",
        "5",
        "--goal",
        "loss<=1%",
        "--chart",
        svg.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert_well_formed(&text);
    for series in [
        "plant loss (95% band)",
        "goal loss&lt;=1%",
        "office-trunks occupancy, Erlang B",
        "load scale",
    ] {
        assert!(text.contains(series), "missing {series}");
    }
}

/// What keeps an HTML page from opening on its own, offline: scripts, and
/// any reference to the network (the SVG namespace name is not one: it is
/// never fetched).
fn not_self_contained(html: &str) -> Vec<String> {
    let mut problems = Vec::new();
    if html.contains("<script") {
        problems.push("it has a script".to_string());
    }
    let without_namespace = html.replace("http://www.w3.org/2000/svg", "");
    for scheme in ["http://", "https://"] {
        if without_namespace.contains(scheme) {
            problems.push(format!("it refers to the network ({scheme})"));
        }
    }
    problems
}

#[test]
fn the_self_containment_check_can_fail() {
    // The check once read `!script && !http || svg`: any page with an inline
    // SVG passed, scripts and links included.
    let svg = "<svg xmlns=\"http://www.w3.org/2000/svg\"></svg>";
    assert!(not_self_contained(&format!("<p>ok</p>{svg}")).is_empty());
    for bad in [
        format!("<script>alert(1)</script>{svg}"),
        format!("<img src=\"http://example.com/a.png\">{svg}"),
        format!("<link href=\"https://example.com/a.css\">{svg}"),
    ] {
        assert!(!not_self_contained(&bad).is_empty(), "{bad} passed");
    }
}

fn chromium() -> Option<&'static str> {
    ["/usr/bin/chromium", "/usr/bin/chromium-browser"]
        .into_iter()
        .find(|p| Path::new(p).exists())
}

#[test]
fn html_reports_are_self_contained_and_render() {
    let pages = [
        (
            "run.html",
            vec!["run", "scenarios/harbour-peak.toml", "--replications", "6"],
        ),
        (
            "size.html",
            vec![
                "size",
                "scenarios/campus-overflow.toml",
                "--group",
                "carrier-shared",
                "--goal",
                "loss<=1%",
                "--replications",
                "10",
            ],
        ),
        (
            "sweep.html",
            vec![
                "sweep",
                "scenarios/video-link.toml",
                "--scale",
                "0.8:1.2:0.2",
                "--replications",
                "4",
            ],
        ),
    ];
    for (name, mut args) in pages {
        let path = scratch(name);
        let p = path.to_str().unwrap().to_string();
        args.extend(["--report", &p, "-q"]);
        let o = busyhour(&args);
        assert!(
            o.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let html = std::fs::read_to_string(&path).unwrap();
        assert!(html.starts_with("<!DOCTYPE html>"));
        assert!(
            html.contains("life-safety"),
            "{name}: the caution is missing"
        );
        assert!(html.contains("Assumptions"));
        let problems = not_self_contained(&html);
        assert!(problems.is_empty(), "{name}: {problems:?}");
        let expected = match name {
            "run.html" => "loss (calls never served)",
            "size.html" => "servers on carrier-shared",
            _ => "video loss",
        };
        assert!(
            html.contains(expected),
            "{name}: the page lacks {expected:?}"
        );
        let Some(browser) = chromium() else {
            eprintln!("Chromium is not installed: skipping the browser check of {name}");
            continue;
        };
        let profile = scratch(&format!("profile-{name}"));
        let out = Command::new(browser)
            .args([
                "--headless",
                "--no-sandbox",
                "--disable-gpu",
                "--disable-quic",
                "--no-first-run",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
                "--enable-logging=stderr",
                "--v=0",
                &format!("--user-data-dir={}", profile.display()),
                "--dump-dom",
                &format!("file://{p}"),
            ])
            .output()
            .expect("chromium runs");
        let dom = String::from_utf8_lossy(&out.stdout);
        let log = String::from_utf8_lossy(&out.stderr);
        assert!(dom.contains("</html>"), "{name}: the page did not render");
        let console_errors: Vec<&str> = log
            .lines()
            .filter(|l| l.contains("CONSOLE") || l.contains("Uncaught"))
            .collect();
        assert!(
            console_errors.is_empty(),
            "{name}: console errors: {console_errors:?}"
        );
        assert!(
            dom.contains(expected),
            "{name}: rendered page lacks {expected:?}"
        );
    }
}

fn busyhour_env(args: &[&str], env: &[(&str, &str)]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .envs(env.iter().copied())
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the binary runs")
}

/// The text of every `<text>` element of an SVG (axis labels, titles,
/// legend entries, ticks).
fn svg_texts(svg: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut rest = svg;
    while let Some(i) = rest.find("<text") {
        rest = &rest[i..];
        let Some(open_end) = rest.find('>') else {
            break;
        };
        let Some(close) = rest.find("</text>") else {
            break;
        };
        out.push(rest[open_end + 1..close].trim().to_string());
        rest = &rest[close..];
    }
    out
}

/// The stroke colours of the data lines and dots (2.5 px wide; grid and
/// axes are thinner).
fn data_strokes(svg: &str) -> Vec<String> {
    svg.lines()
        .filter(|l| {
            (l.starts_with("<polyline") || l.starts_with("<circle"))
                && l.contains("stroke-width=\"2.5\"")
        })
        .filter_map(|l| {
            let i = l.find("stroke=\"#")? + 8;
            Some(l[i..i + 7].to_string())
        })
        .collect()
}

fn palette() -> Vec<String> {
    use busyhour::report::plot::{CARRIED, GOAL, OFFERED, PALETTE};
    PALETTE
        .iter()
        .chain([&OFFERED, &CARRIED, &GOAL])
        .map(|c| format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2))
        .collect()
}

#[test]
fn shipped_scenarios_charts_have_plain_labels_and_our_palette() {
    let palette = palette();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let mut scenarios: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    scenarios.sort();
    assert!(scenarios.len() >= 4, "{scenarios:?}");
    for s in &scenarios {
        let stem = s.file_stem().unwrap().to_string_lossy().to_string();
        let file = s.to_str().unwrap();
        for (kind, args) in [
            ("run", vec!["run", file, "--replications", "3"]),
            (
                "sweep",
                vec![
                    "sweep",
                    file,
                    "--scale",
                    "0.9:1.1:0.1",
                    "--replications",
                    "3",
                ],
            ),
        ] {
            let svg = scratch(&format!("{kind}-{stem}.svg"));
            let mut args = args.clone();
            args.extend(["--chart", svg.to_str().unwrap(), "-q"]);
            let o = busyhour(&args);
            assert!(
                o.status.success(),
                "{kind} {stem}: {}",
                String::from_utf8_lossy(&o.stderr)
            );
            let text = std::fs::read_to_string(&svg).unwrap();
            assert_well_formed(&text);
            for t in svg_texts(&text) {
                assert!(
                    !t.contains("((") && !t.contains("))") && !t.contains(") ("),
                    "{kind} {stem}: doubled brackets in {t:?}"
                );
            }
            let strokes = data_strokes(&text);
            assert!(!strokes.is_empty(), "{kind} {stem}: no data lines");
            for c in strokes {
                assert!(palette.contains(&c), "{kind} {stem}: {c} is not ours");
            }
        }
    }
}

#[test]
fn size_chart_shows_each_goal_against_the_sizes_tried_with_its_bound() {
    let svg = scratch("size.svg");
    let html = scratch("size-chart.html");
    let o = busyhour(&[
        "size",
        "scenarios/harbour-peak.toml",
        "--group",
        "switchboard-lines",
        "--goal",
        "loss<=1%",
        "--replications",
        "10",
        "--chart",
        svg.to_str().unwrap(),
        "--report",
        html.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert_well_formed(&text);
    let answer = String::from_utf8_lossy(&o.stdout)
        .lines()
        .find_map(|l| {
            l.strip_prefix("Answer: ")?
                .split(' ')
                .next()
                .map(String::from)
        })
        .expect("an answer line");
    for want in [
        "goal loss&lt;=1% (bound 1.00%)",
        "servers on switchboard-lines",
        "as judged)",
        &format!("the answer: {answer} servers"),
    ] {
        assert!(text.contains(want), "the size chart lacks {want:?}");
    }
    // The goal line is a dash-dotted near-black line; each size a dot.
    let goal = palette()[8].clone();
    assert!(
        text.lines()
            .any(|l| l.starts_with("<polyline") && l.contains(&goal) && l.contains("14 5 3 5")),
        "no goal line"
    );
    assert!(
        text.matches("<circle").count() >= 2,
        "fewer than two sizes drawn"
    );
    let page = std::fs::read_to_string(&html).unwrap();
    assert!(page.contains("<svg"), "the report lacks the chart");
    // A chart named for another format is refused before any work, and
    // nothing is written.
    let png = scratch("size.png");
    let o = busyhour(&[
        "size",
        "scenarios/harbour-peak.toml",
        "--group",
        "switchboard-lines",
        "--goal",
        "loss<=1%",
        "--chart",
        png.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("charts are written as SVG"), "{err}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(!png.exists());
}

#[test]
fn queue_intervals_are_charted_with_service_level_wait_and_occupancy() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let talk = root.join("ferry-talk-times.csv");
    let text = std::fs::read_to_string(root.join("ferry-booking.toml"))
        .unwrap()
        .replace(
            "length = \"4h\"",
            "length = \"4h\"\ninterval = \"1h\"\nclock_start = \"08:00\"",
        )
        .replace(
            "\"ferry-talk-times.csv\"",
            &format!("{:?}", talk.to_str().unwrap()),
        );
    assert!(text.contains("interval = \"1h\""));
    let scenario = scratch("ferry-intervals.toml");
    std::fs::write(&scenario, text).unwrap();
    let svg = scratch("ferry-intervals.svg");
    let o = busyhour(&[
        "run",
        scenario.to_str().unwrap(),
        "--replications",
        "4",
        "--chart",
        svg.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let chart = std::fs::read_to_string(&svg).unwrap();
    assert_well_formed(&chart);
    for want in [
        "traffic per interval, 08:00-12:00",
        "Service level per interval",
        "bookings service level (95% band)",
        "Mean wait (answered) per interval",
        "booking-agents occupancy (95% band)",
        "clock time, interval midpoints",
    ] {
        assert!(chart.contains(want), "the chart lacks {want:?}");
    }
    assert!(
        svg_texts(&chart).iter().any(|t| t == "09:00"),
        "no clock ticks"
    );
    assert!(chart.contains("Abandonment per interval"));
}

#[test]
fn scheduled_servers_are_charted_as_a_staircase_beside_the_busy_ones() {
    let scenario = scratch("schedule.toml");
    std::fs::write(
        &scenario,
        r#"title = "Agents by the half hour"
[simulation]
warmup = "30m"
length = "2h"
interval = "30m"
replications = 4
seed = 5

[[group]]
name = "agents"
servers = [8, 12, 11, 9]
interval = "30m"
queue = 30

[[stream]]
name = "callers"
arrivals = { law = "poisson", rate = "120/h" }
holding = { law = "exponential", mean = "4m" }
route = ["agents"]
answer_within = "20s"
"#,
    )
    .unwrap();
    let svg = scratch("schedule.svg");
    let o = busyhour(&[
        "run",
        scenario.to_str().unwrap(),
        "--chart",
        svg.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let chart = std::fs::read_to_string(&svg).unwrap();
    assert_well_formed(&chart);
    assert!(chart.contains("agents servers present (schedule)"));
    assert!(chart.contains("agents servers busy (95% band)"));
    // The staircase: two points per interval, dash-dotted like a bound.
    let stair = (chart.lines())
        .find(|l| l.starts_with("<polyline") && l.contains("14 5 3 5"))
        .expect("a dash-dotted staircase");
    let points = stair
        .split("points=\"")
        .nth(1)
        .unwrap()
        .split('"')
        .next()
        .unwrap();
    assert_eq!(points.split(' ').count(), 8, "{points}");
}

#[test]
fn reports_carry_the_date_and_the_command_line() {
    let epoch = [("SOURCE_DATE_EPOCH", "1764763200")];
    let cases: [(&str, Vec<&str>); 3] = [
        (
            "origin-run.html",
            vec!["run", "scenarios/video-link.toml", "--replications", "3"],
        ),
        (
            "origin-size.html",
            vec![
                "size",
                "scenarios/harbour-peak.toml",
                "--group",
                "switchboard-lines",
                "--goal",
                "loss<=1%",
                "--replications",
                "10",
            ],
        ),
        (
            "origin-sweep.html",
            vec![
                "sweep",
                "scenarios/video-link.toml",
                "--scale",
                "0.9:1.1:0.1",
                "--replications",
                "3",
            ],
        ),
    ];
    for (name, mut args) in cases {
        let path = scratch(name);
        let p = path.to_str().unwrap().to_string();
        args.extend(["--report", &p, "-q"]);
        let o = busyhour_env(&args, &epoch);
        assert!(
            o.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let html = std::fs::read_to_string(&path).unwrap();
        // 1764763200 s after 1970-01-01 is 2025-12-03 12:00 UTC (20,425
        // days: Python's datetime.fromtimestamp(1764763200, timezone.utc)).
        let quoted: Vec<String> = args
            .iter()
            .map(|a| {
                if a.contains('<') {
                    format!("&#39;{}&#39;", a.replace('<', "&lt;"))
                } else {
                    a.to_string()
                }
            })
            .collect();
        let want = format!(
            "Made 2025-12-03T12:00:00Z (UTC) by <code>busyhour {}</code>",
            quoted.join(" ")
        );
        assert!(html.contains(&want), "{name}: lacks {want:?}");
    }
    // A bad date is refused with one line.
    let o = busyhour_env(
        &["check", "scenarios/video-link.toml"],
        &[("SOURCE_DATE_EPOCH", "soon")],
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("SOURCE_DATE_EPOCH=soon"));
}
