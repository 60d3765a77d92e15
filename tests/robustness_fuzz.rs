//! Fuzzing on the stable toolchain, with proptest: scenario parsing and
//! validation, the call-record reader, and shard part files (read and
//! merged), over random and mutated input. Every input must give `Ok` or an
//! error whose message is one line; none may panic, hang or allocate
//! without bound.
//!
//! The number of cases per target is `PROPTEST_CASES` (default 256 here, a
//! few seconds in release). A long run, as described in docs/robustness.md,
//! "Fuzzing and property tests":
//!
//! ```text
//! PROPTEST_CASES=200000 cargo test --release --test robustness_fuzz -- --nocapture
//! ```
//!
//! Each target prints how many inputs it ran.

use busyhour::experiment::RunOptions;
use busyhour::experiment::shard::{self, ShardSpec};
use busyhour::records::{self, DayFilter, Options};
use busyhour::scenario;
use proptest::prelude::*;
use proptest::test_runner::{Config, TestRunner};
use std::io::Cursor;
use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};

/// Cases per target: `PROPTEST_CASES`, or `default`.
fn cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

fn config() -> Config {
    Config {
        cases: cases(256),
        // Failures are reported with their minimal input; a long fuzz run
        // should not leave regression files in the tree.
        failure_persistence: None,
        ..Config::default()
    }
}

/// Runs `strategy` through `check` (which says whether the input was
/// accepted), counting the inputs, and reports the counts.
fn fuzz<S: Strategy>(name: &str, strategy: S, check: impl Fn(S::Value) -> bool) {
    let count = AtomicU64::new(0);
    let accepted = AtomicU64::new(0);
    let started = std::time::Instant::now();
    let mut runner = TestRunner::new(config());
    let result = runner.run(&strategy, |v| {
        count.fetch_add(1, Ordering::Relaxed);
        if check(v) {
            accepted.fetch_add(1, Ordering::Relaxed);
        }
        Ok(())
    });
    println!(
        "{name}: {} inputs ({} past the syntax) in {:.1} s",
        count.load(Ordering::Relaxed),
        accepted.load(Ordering::Relaxed),
        started.elapsed().as_secs_f64()
    );
    if let Err(e) = result {
        panic!("{name}: {e}");
    }
}

/// A valid scenario using most of the format: every arrival kind, queues,
/// overflow, reservation, multi-unit calls, redials, patience, intervals and
/// an empirical law read from a shipped file.
const VALID: &str = r#"title = "fuzz base"
[simulation]
warmup = "10m"
length = "1h"
interval = "20m"
replications = 4
seed = 3
[[group]]
name = "a"
servers = 4
queue = 3
overflow_after = "20s"
reserve = { servers = 1, for = ["vip"] }
[[group]]
name = "b"
servers = 3
queue = "unlimited"
[[stream]]
name = "vip"
arrivals = { law = "renewal", between = { law = "gamma", mean = "40s", cv = 0.5 } }
holding = { law = "empirical", file = "scenarios/ferry-talk-times.csv", column = "talk_s", scale = 1.5 }
route = ["a", "b"]
patience = { law = "lognormal", mean = "1m", cv = 1.0 }
retry = { chance = ["80%", "40%"], delay = { law = "deterministic", mean = "30s" }, max_attempts = 3 }
answer_within = "15s"
[[stream]]
name = "bulk"
arrivals = { law = "poisson", interval = "15m", rates = ["60/h", "150/h", "90/h"] }
holding = { law = "hyperexponential", mean = "90s", cv = 1.8 }
route = ["a", "b"]
units = 2
retry = { chance = "50%", delay = { law = "weibull", mean = "1m", shape = 1.5 }, max_attempts = 5 }
[[stream]]
name = "kiosks"
arrivals = { law = "sources", count = 15, idle = { law = "erlang", mean = "10m", k = 3 } }
holding = { law = "uniform", mean = "1m", cv = 0.3 }
route = ["b"]
patience = { law = "exponential", mean = "45s" }
"#;

/// Pieces of scenario text: keys, values (extreme, negative, NaN, infinite,
/// unit-bearing), punctuation and stray characters.
const TOKENS: &[&str] = &[
    "[simulation]",
    "[[group]]",
    "[[stream]]",
    "[group]",
    "[[simulation]]",
    "\n",
    "\n\n",
    " ",
    "=",
    "==",
    ",",
    "{",
    "}",
    "[",
    "]",
    "\"",
    "'",
    "#",
    ".",
    "\r\n",
    "\t",
    "\u{feff}",
    "\u{0}",
    "é",
    "名",
    "name",
    "servers",
    "queue",
    "reserve",
    "for",
    "overflow_after",
    "arrivals",
    "holding",
    "route",
    "units",
    "retry",
    "chance",
    "delay",
    "max_attempts",
    "patience",
    "answer_within",
    "law",
    "rate",
    "rates",
    "interval",
    "between",
    "count",
    "idle",
    "mean",
    "cv",
    "shape",
    "k",
    "file",
    "column",
    "scale",
    "warmup",
    "length",
    "replications",
    "precision",
    "max_replications",
    "seed",
    "title",
    "\"poisson\"",
    "\"renewal\"",
    "\"sources\"",
    "\"exponential\"",
    "\"erlang\"",
    "\"gamma\"",
    "\"lognormal\"",
    "\"hyperexponential\"",
    "\"deterministic\"",
    "\"uniform\"",
    "\"weibull\"",
    "\"empirical\"",
    "\"unlimited\"",
    "\"a\"",
    "\"b\"",
    "\"vip\"",
    "\"bulk\"",
    "0",
    "1",
    "2",
    "-1",
    "1e308",
    "-1e308",
    "1e-308",
    "9223372036854775807",
    "-9223372036854775808",
    "99999999999999999999",
    "nan",
    "inf",
    "-inf",
    "+inf",
    "0.0",
    "-0.0",
    "1.5",
    "\"nan\"",
    "\"inf\"",
    "\"-inf\"",
    "\"0s\"",
    "\"-5m\"",
    "\"3m\"",
    "\"1e400s\"",
    "\"1h30m\"",
    "\"600/h\"",
    "\"0/h\"",
    "\"-1/h\"",
    "\"1e300/s\"",
    "\"nan/h\"",
    "\"70%\"",
    "\"150%\"",
    "\"-1%\"",
    "\"nan%\"",
    "\"1ms\"",
    "\"1000000000h\"",
    "[]",
    "[\"a\", \"a\"]",
    "{}",
    "\"scenarios\"",
    "\"scenarios/ferry-talk-times.csv\"",
    "\"scenarios/depot-calls.csv\"",
    "\"no-such-file.csv\"",
    "\"talk_s\"",
    "\"\"",
    "true",
    "1979-05-27T07:32:00Z",
    "\"\"\"",
    "'''",
];

/// Values only (numbers, texts, lists, inline tables), for value edits.
const VALUES: &[&str] = &[
    "0",
    "1",
    "2",
    "3",
    "-1",
    "1e308",
    "-1e308",
    "1e-308",
    "9223372036854775807",
    "-9223372036854775808",
    "nan",
    "inf",
    "-inf",
    "0.0",
    "-0.0",
    "1.5",
    "0.5",
    "\"nan\"",
    "\"inf\"",
    "\"0s\"",
    "\"-5m\"",
    "\"3m\"",
    "\"1e400s\"",
    "\"1h30m\"",
    "\"600/h\"",
    "\"0/h\"",
    "\"-1/h\"",
    "\"1e300/s\"",
    "\"nan/h\"",
    "\"70%\"",
    "\"150%\"",
    "\"-1%\"",
    "\"nan%\"",
    "\"1ms\"",
    "\"1000000000h\"",
    "[]",
    "[\"a\", \"a\"]",
    "[\"b\"]",
    "{}",
    "\"scenarios\"",
    "\"scenarios/ferry-talk-times.csv\"",
    "\"scenarios/depot-calls.csv\"",
    "\"no-such-file.csv\"",
    "\"talk_s\"",
    "\"\"",
    "true",
    "\"unlimited\"",
    "\"a\"",
    "\"b\"",
    "\"vip\"",
    "\"poisson\"",
    "\"renewal\"",
    "\"sources\"",
    "\"exponential\"",
    "\"erlang\"",
    "\"gamma\"",
    "\"lognormal\"",
    "\"hyperexponential\"",
    "\"deterministic\"",
    "\"uniform\"",
    "\"weibull\"",
    "\"empirical\"",
    "1000000",
    "10000001",
    "4294967296",
    "{ law = \"exponential\", mean = \"1s\" }",
    "[\"0/h\", \"0/h\"]",
];

fn value() -> impl Strategy<Value = String> {
    prop_oneof![
        9 => proptest::sample::select(VALUES).prop_map(str::to_string),
        1 => token(),
    ]
}

fn token() -> impl Strategy<Value = String> {
    prop_oneof![
        8 => proptest::sample::select(TOKENS).prop_map(str::to_string),
        1 => any::<char>().prop_map(|c| c.to_string()),
        1 => (0u64..10_000_000).prop_map(|n| n.to_string()),
    ]
}

/// One edit of a text.
#[derive(Debug, Clone)]
enum Edit {
    /// Replace bytes [at, at + len) with the token.
    Replace(usize, usize, String),
    /// Insert the token at `at`.
    Insert(usize, String),
    /// Delete bytes [at, at + len).
    Delete(usize, usize),
    /// Repeat line `i` after itself.
    DuplicateLine(usize),
    /// Swap lines `i` and `j`.
    SwapLines(usize, usize),
    /// Replace the `k`-th value (after ` = `, up to `,`, ` }` or the end of
    /// the line) on the `i`-th line that has one.
    Value(usize, usize, String),
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        1 => (any::<usize>(), 0usize..12, token()).prop_map(|(a, l, t)| Edit::Replace(a, l, t)),
        1 => (any::<usize>(), token()).prop_map(|(a, t)| Edit::Insert(a, t)),
        1 => (any::<usize>(), 1usize..40).prop_map(|(a, l)| Edit::Delete(a, l)),
        1 => any::<usize>().prop_map(Edit::DuplicateLine),
        1 => (any::<usize>(), any::<usize>()).prop_map(|(i, j)| Edit::SwapLines(i, j)),
        6 => (any::<usize>(), any::<usize>(), value()).prop_map(|(i, k, t)| Edit::Value(i, k, t)),
    ]
}

/// The largest character boundary of `s` at or below `at`.
fn boundary(s: &str, at: usize) -> usize {
    let mut i = at.min(s.len());
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

fn apply(text: &str, edits: &[Edit]) -> String {
    let mut s = text.to_string();
    for e in edits {
        let pos = |a: usize, s: &str| boundary(s, if s.is_empty() { 0 } else { a % (s.len() + 1) });
        match e {
            Edit::Replace(a, l, t) => {
                let from = pos(*a, &s);
                let to = boundary(&s, from + l);
                s.replace_range(from..to, t);
            }
            Edit::Insert(a, t) => {
                let at = pos(*a, &s);
                s.insert_str(at, t);
            }
            Edit::Delete(a, l) => {
                let from = pos(*a, &s);
                let to = boundary(&s, from + l);
                s.replace_range(from..to, "");
            }
            Edit::DuplicateLine(i) => {
                let mut lines: Vec<&str> = s.split('\n').collect();
                let i = i % lines.len();
                lines.insert(i, lines[i]);
                s = lines.join("\n");
            }
            Edit::SwapLines(i, j) => {
                let mut lines: Vec<&str> = s.split('\n').collect();
                let n = lines.len();
                lines.swap(i % n, j % n);
                s = lines.join("\n");
            }
            Edit::Value(i, k, t) => {
                let mut lines: Vec<String> = s.split('\n').map(str::to_string).collect();
                let with: Vec<usize> = (0..lines.len())
                    .filter(|&n| lines[n].contains(" = "))
                    .collect();
                if with.is_empty() {
                    continue;
                }
                let line = &mut lines[with[i % with.len()]];
                // Whole values only: a list to its `]`, a scalar to the next
                // `,` or ` }`; inline tables are entered, not replaced.
                let starts: Vec<usize> = line
                    .match_indices(" = ")
                    .map(|(p, _)| p + 3)
                    .filter(|&p| !line[p..].starts_with('{'))
                    .collect();
                if starts.is_empty() {
                    continue;
                }
                let from = starts[k % starts.len()];
                let rest = &line[from..];
                let len = if rest.starts_with('[') {
                    rest.find(']').map_or(rest.len(), |e| e + 1)
                } else {
                    [rest.find(','), rest.find(" }")]
                        .into_iter()
                        .flatten()
                        .min()
                        .unwrap_or(rest.len())
                };
                line.replace_range(from..from + len, t);
                s = lines.join("\n");
            }
        }
    }
    s
}

/// Parse and validate `text`; an error must be one line naming the file.
/// Returns whether the text got past the TOML parser (accepted, or refused
/// by a rule of the design rather than by its syntax or types).
fn parse_is_clean(text: &str) -> bool {
    let base = Path::new(env!("CARGO_MANIFEST_DIR"));
    match scenario::parse(text, "fuzz.toml", base, "fuzz") {
        Ok(_) => true,
        Err(e) => {
            let m = e.to_string();
            assert!(!m.contains('\n') && !m.contains('\r'), "two lines: {m:?}");
            assert!(m.starts_with("fuzz.toml"), "file not named: {m}");
            matches!(e, scenario::ScenarioError::Invalid { .. })
        }
    }
}

#[test]
fn the_valid_base_scenario_compiles() {
    let base = Path::new(env!("CARGO_MANIFEST_DIR"));
    scenario::parse(VALID, "base.toml", base, "base").expect("the fuzz base is valid");
}

#[test]
fn fuzz_scenario_parse_with_random_token_text() {
    fuzz(
        "scenario, token text",
        proptest::collection::vec(token(), 0..120),
        |tokens| parse_is_clean(&tokens.concat()),
    );
}

#[test]
fn fuzz_scenario_parse_with_random_characters() {
    fuzz(
        "scenario, random characters",
        proptest::collection::vec(any::<char>(), 0..400),
        |chars| parse_is_clean(&chars.into_iter().collect::<String>()),
    );
}

#[test]
fn fuzz_scenario_parse_with_mutations_of_a_valid_scenario() {
    fuzz(
        "scenario, mutations",
        proptest::collection::vec(edit(), 1..4),
        |edits| parse_is_clean(&apply(VALID, &edits)),
    );
}

/// Pieces of call-record files.
const RECORD_TOKENS: &[&str] = &[
    "start",
    "duration",
    "outcome",
    "start_time",
    "duration_s",
    "status",
    ",",
    "\n",
    "\r\n",
    "\r",
    "\"",
    "\"\"",
    " ",
    "\t",
    "\u{feff}",
    "\u{0}",
    "\u{ff}",
    "é",
    "2025-03-03T10:15:02+01:00",
    "2025-03-03T10:15:02Z",
    "2025-03-03 10:15:02",
    "2025-03-03T23:59:59-05:30",
    "2025-03-30T02:30:00+02:00",
    "2025-02-29T10:00:00Z",
    "2024-02-29T10:00:00Z",
    "9999-12-31T23:59:59+14:00",
    "0000-01-01T00:00:00Z",
    "1741000000",
    "-1741000000",
    "253402300799",
    "253402300800",
    "1e30",
    "185",
    "0",
    "-5",
    "3:02",
    "0:03:02",
    "99:99",
    "3m20s",
    "nan",
    "inf",
    "1e308",
    "604800",
    "604801",
    "answered",
    "blocked",
    "abandoned",
    "BUSY",
    "voicemail",
    "+18:00",
    "+25:00",
    "T",
    "Z",
];

fn record_text() -> impl Strategy<Value = Vec<u8>> {
    let piece = prop_oneof![
        8 => proptest::sample::select(RECORD_TOKENS).prop_map(|t| t.as_bytes().to_vec()),
        1 => any::<u8>().prop_map(|b| vec![b]),
        1 => (0u64..10_000_000).prop_map(|n| n.to_string().into_bytes()),
    ];
    proptest::collection::vec(piece, 0..150).prop_map(|v| v.concat())
}

/// A plausible file: header, then rows built from the pieces.
fn record_rows() -> impl Strategy<Value = Vec<u8>> {
    // Mostly valid fields (zoned starts on three days, usual durations and
    // outcomes), sometimes any piece.
    let field = |valid: &'static [&'static str]| {
        prop_oneof![
            12 => proptest::sample::select(valid),
            1 => proptest::sample::select(RECORD_TOKENS),
        ]
    };
    let start = (
        field(&["2025-03-03T10:", "2025-03-04T09:", "2025-03-08T23:"]),
        0u32..60,
        0u32..60,
        field(&["+01:00", "Z", "+01:00"]),
    )
        .prop_map(|(d, m, s, z)| format!("{d}{m:02}:{s:02}{z}"));
    let row = (
        start,
        field(&["185", "0", "3:02", "0:03:02", "3m20s", "42.5", "604800"]),
        field(&["answered", "blocked", "abandoned", "Answered"]),
    )
        .prop_map(|(s, d, o)| format!("{s},{d},{o}\n"));
    (
        proptest::collection::vec(row, 0..40),
        proptest::collection::vec(edit(), 0..3),
    )
        .prop_map(|(rows, edits)| {
            let text = format!("start,duration,outcome\n{}", rows.concat());
            apply(&text, &edits).into_bytes()
        })
}

/// Analyse `bytes` under several option sets; an error must be one line
/// naming the file. Returns whether some option set accepted the file.
fn records_are_clean(bytes: &[u8]) -> bool {
    let mut accepted = false;
    let days = DayFilter::parse("mon-fri").expect("valid filter");
    let option_sets = [
        Options::default(),
        Options {
            interval_s: 3600,
            skip_bad: true,
            ..Options::default()
        },
        Options {
            interval_s: 300,
            skip_bad: true,
            days: Some(days),
            reservoir: 50,
            ..Options::default()
        },
    ];
    for opts in &option_sets {
        let result = records::analyse_reader(Cursor::new(bytes), "fuzz.csv", opts);
        accepted |= result.is_ok();
        match result {
            Ok(a) => {
                assert!(
                    a.totals.calls >= a.totals.answered + a.totals.blocked + a.totals.abandoned
                );
                assert!(a.holding.mean_s.is_finite() && a.holding.mean_s >= 0.0);
            }
            Err(e) => {
                let m = e.to_string();
                assert!(!m.contains('\n') && !m.contains('\r'), "two lines: {m:?}");
                assert!(m.contains("fuzz.csv"), "file not named: {m}");
            }
        }
    }
    accepted
}

#[test]
fn fuzz_call_records_with_random_bytes() {
    fuzz(
        "records, random bytes",
        proptest::collection::vec(any::<u8>(), 0..600),
        |bytes| records_are_clean(&bytes),
    );
}

#[test]
fn fuzz_call_records_with_token_text() {
    fuzz("records, token text", record_text(), |bytes| {
        records_are_clean(&bytes)
    });
}

#[test]
fn fuzz_call_records_with_plausible_rows() {
    fuzz("records, plausible rows", record_rows(), |bytes| {
        records_are_clean(&bytes)
    });
}

/// A small run for the part-file target: a queue with patience, reporting
/// intervals (interval figures in the parts) and two groups (halves).
const PART_SCENARIO: &str = r#"[simulation]
warmup = "5m"
length = "20m"
interval = "10m"
replications = 6
seed = 11
[[group]]
name = "desk"
servers = 3
queue = 4
[[group]]
name = "spill"
servers = 2
[[stream]]
name = "visitors"
arrivals = { law = "poisson", rate = "90/h" }
holding = { law = "exponential", mean = "2m" }
route = ["desk", "spill"]
patience = { law = "exponential", mean = "1m" }
"#;

/// The model of [`PART_SCENARIO`] and its three parts (shards of 6
/// replications) as JSON values, made once.
fn part_run() -> &'static (scenario::Model, Vec<serde_json::Value>) {
    static RUN: std::sync::OnceLock<(scenario::Model, Vec<serde_json::Value>)> =
        std::sync::OnceLock::new();
    RUN.get_or_init(|| {
        let base = Path::new(env!("CARGO_MANIFEST_DIR"));
        let model = scenario::parse(PART_SCENARIO, "desk.toml", base, "desk").expect("valid");
        let opts = RunOptions {
            threads: Some(1),
            ..RunOptions::default()
        };
        let steps = [(None, model.clone())];
        let parts = (1..=3)
            .map(|index| {
                let spec = ShardSpec { index, count: 3 };
                let part = shard::run_shard(&steps, "desk.toml", None, 6, spec, &opts)
                    .expect("threads start")
                    .expect("a valid shard");
                serde_json::to_value(&part).expect("serialisable")
            })
            .collect();
        (model, parts)
    })
}

const PART_FIELDS: &[&str] = &[
    "format",
    "format_version",
    "program_version",
    "file",
    "seed",
    "sweep",
    "replications_total",
    "shard_index",
    "shard_count",
    "first_replication",
    "steps",
    "events",
    "partial",
    "extra",
];
const PART_STEP_FIELDS: &[&str] = &["value", "fingerprint", "figures", "values", "halves"];
const PART_VALUES: &[&str] = &[
    "0",
    "1",
    "2",
    "3",
    "4",
    "6",
    "-1",
    "4294967295",
    "4294967296",
    "8589934590",
    "18446744073709551615",
    "1e308",
    "-0.0",
    "0.5",
    "null",
    "true",
    "\"x\"",
    "\"busyhour-part\"",
    "[]",
    "{}",
    "[[]]",
    "[[1.0, 2.0]]",
    "[[null, null]]",
    "[[[1.0, 2.0]]]",
    "[[[null, 1.0], [0.0, null]]]",
];

/// One edit of a set of part files.
#[derive(Debug, Clone)]
enum PartEdit {
    /// Set a top-level field of part `k` to a value.
    Field(usize, usize, usize),
    /// Set a field of step 0 of part `k`.
    StepField(usize, usize, usize),
    /// Set element `i` (of a row of values or halves) in part `k`.
    Row(usize, bool, usize, usize),
    /// Leave part `k` out.
    Drop(usize),
    /// Give part `k` twice.
    Twice(usize),
    /// Edit part `k`'s text (it may stop being JSON).
    Text(usize, Edit),
}

fn part_edit() -> impl Strategy<Value = PartEdit> {
    let k = 0usize..3;
    let v = 0..PART_VALUES.len();
    prop_oneof![
        4 => (k.clone(), 0..PART_FIELDS.len(), v.clone()).prop_map(|(k, f, v)| PartEdit::Field(k, f, v)),
        2 => (k.clone(), 0..PART_STEP_FIELDS.len(), v.clone())
            .prop_map(|(k, f, v)| PartEdit::StepField(k, f, v)),
        2 => (k.clone(), any::<bool>(), any::<usize>(), v).prop_map(|(k, h, i, v)| PartEdit::Row(k, h, i, v)),
        1 => k.clone().prop_map(PartEdit::Drop),
        1 => k.clone().prop_map(PartEdit::Twice),
        1 => (k, edit()).prop_map(|(k, e)| PartEdit::Text(k, e)),
    ]
}

fn json(text: &str) -> serde_json::Value {
    serde_json::from_str(text).expect("the value table is JSON")
}

/// The part files after `edits`, as (name, text).
fn edited_parts(edits: &[PartEdit]) -> Vec<(String, String)> {
    let (_, parts) = part_run();
    let mut docs: Vec<serde_json::Value> = parts.clone();
    let mut texts: Vec<Option<String>> = vec![None; docs.len()];
    let mut given: Vec<usize> = (0..docs.len()).collect();
    for e in edits {
        match e {
            PartEdit::Field(k, f, v) => docs[*k][PART_FIELDS[*f]] = json(PART_VALUES[*v]),
            PartEdit::StepField(k, f, v) => {
                // (Only while steps is still a list of objects.)
                if let Some(step) = docs[*k]
                    .pointer_mut("/steps/0")
                    .and_then(|s| s.as_object_mut())
                {
                    step.insert(PART_STEP_FIELDS[*f].into(), json(PART_VALUES[*v]));
                }
            }
            PartEdit::Row(k, halves, i, v) => {
                let key = if *halves { "halves" } else { "values" };
                let rows = docs[*k].pointer_mut(&format!("/steps/0/{key}"));
                if let Some(rows) = rows.and_then(|r| r.as_array_mut())
                    && !rows.is_empty()
                {
                    let n = rows.len();
                    rows[i % n] = json(PART_VALUES[*v]);
                }
            }
            PartEdit::Drop(k) => given.retain(|g| g != k),
            PartEdit::Twice(k) => given.push(*k),
            PartEdit::Text(k, edit) => {
                let text = texts[*k].take().unwrap_or_else(|| docs[*k].to_string());
                texts[*k] = Some(apply(&text, std::slice::from_ref(edit)));
            }
        }
    }
    given
        .into_iter()
        .map(|k| {
            let text = texts[k].clone().unwrap_or_else(|| docs[k].to_string());
            (format!("part-{k}.json"), text)
        })
        .collect()
}

/// Read and merge part files; every error must be one line, and a refused
/// part must be named. Returns whether the parts merged.
fn parts_are_clean(files: &[(String, String)]) -> bool {
    let one_line = |m: &str| {
        assert!(!m.contains('\n') && !m.contains('\r'), "two lines: {m:?}");
    };
    let mut parts = Vec::new();
    for (name, text) in files {
        match shard::read_part(text, name) {
            Ok(p) => parts.push((name.clone(), p)),
            Err(e) => {
                let m = e.to_string();
                one_line(&m);
                assert!(m.contains(name.as_str()), "file not named: {m}");
                return false;
            }
        }
    }
    if parts.is_empty() {
        return false;
    }
    let (model, _) = part_run();
    let m = shard::model_for(model, &parts);
    match shard::merge(&[(None, m)], "desk.toml", &parts) {
        Ok(outcomes) => {
            assert_eq!(outcomes.len(), 1);
            assert_eq!(outcomes[0].replications, 6);
            true
        }
        Err(e) => {
            one_line(&e.to_string());
            false
        }
    }
}

#[test]
fn the_unedited_parts_merge() {
    assert!(parts_are_clean(&edited_parts(&[])));
}

#[test]
fn fuzz_part_files_with_edited_fields() {
    fuzz(
        "parts, edited fields",
        proptest::collection::vec(part_edit(), 1..4),
        |edits| parts_are_clean(&edited_parts(&edits)),
    );
}
