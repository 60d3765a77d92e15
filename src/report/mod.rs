//! Output people can use: the terminal table, JSON with the design's figure
//! names, long-format CSV, and atomic file writing. Reads a finished
//! [`Outcome`]; must not run the engine.

pub mod chart;
pub mod charts;
pub mod html;

use crate::experiment::Outcome;
use crate::scenario::{Arrivals, Model, Queue, Replications};
use crate::stats::{self, Estimate, Figure, FigureId, Scope};
use crate::units::{format_duration, format_share, trim_float};
use serde_json::{Map, Value, json};
use std::collections::HashMap;
use std::io::Write;
use std::path::Path;

pub use crate::textbook::{Formula, formula_column, formula_view};

/// The caution printed under every report.
pub const CAUTION: &str = "Estimates under the stated model assumptions, not guarantees. \
Where the design carries emergency or life-safety calls, keep margin, validate against \
measured traffic, and defer to local regulation and licensed practice.";

/// Everything a report needs.
pub struct RunReport<'a> {
    /// The model that was run.
    pub model: &'a Model,
    /// Its results.
    pub outcome: &'a Outcome,
    /// The scenario file, as the user named it.
    pub file: &'a str,
    /// Closed-form values beside the estimates.
    pub formulas: HashMap<FigureId, Formula>,
}

impl<'a> RunReport<'a> {
    /// Assemble a report, computing the formula column.
    pub fn new(model: &'a Model, outcome: &'a Outcome, file: &'a str) -> Self {
        RunReport {
            model,
            outcome,
            file,
            formulas: formula_column(model),
        }
    }
}

/// How a figure is printed: its unit ([`Figure::unit`]).
pub(crate) use crate::stats::Unit as Kind;

fn fmt_value(k: Kind, x: f64) -> String {
    if x.is_nan() {
        return "-".into();
    }
    match k {
        Kind::Share => format_share(x),
        Kind::Erlangs => format!("{} E", trim_float(x, 3)),
        Kind::Seconds => format!("{} s", trim_float(x, 2)),
        Kind::Count => trim_float(x, 1),
        Kind::Ratio => trim_float(x, 3),
    }
}

fn fmt_bare(k: Kind, x: f64) -> String {
    match k {
        Kind::Share => format_share(x),
        Kind::Erlangs => trim_float(x, 3),
        Kind::Seconds => trim_float(x, 2),
        Kind::Count => trim_float(x, 1),
        Kind::Ratio => trim_float(x, 3),
    }
}

/// The interval beside an estimate: "± h" when it is symmetric, otherwise
/// its two ends (cut to the figure's range, or widened by an exact bound
/// for rare events): "[0% to 0.031%]".
fn fmt_interval(k: Kind, e: &Estimate) -> String {
    if !e.half_width.is_finite() || !e.low.is_finite() || !e.high.is_finite() {
        return "± ?".into();
    }
    if e.is_symmetric() {
        format!("± {}", fmt_bare(k, e.half_width))
    } else {
        format!("[{} to {}]", fmt_bare(k, e.low), fmt_bare(k, e.high))
    }
}

fn estimate_json(e: &Estimate, figure: Option<Figure>, formula: Option<&Formula>) -> Value {
    let mut m = Map::new();
    m.insert("mean".into(), json!(finite_or_null(e.mean)));
    m.insert("half_width".into(), json!(finite_or_null(e.half_width)));
    m.insert("low".into(), json!(finite_or_null(e.low)));
    m.insert("high".into(), json!(finite_or_null(e.high)));
    m.insert("replications".into(), json!(e.replications));
    if let Some(f) = figure {
        m.insert("estimator".into(), json!(f.estimator().name()));
    }
    if let Some(f) = formula {
        m.insert(
            "formula".into(),
            json!({ "name": f.name, "value": finite_or_null(f.value) }),
        );
    }
    Value::Object(m)
}

fn finite_or_null(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// How the warm-up was chosen and how replications start, for the run line.
fn warmup_origin(model: &Model) -> &'static str {
    match (model.plan.warmup_given, model.plan.start) {
        (false, crate::scenario::Start::Steady) => " (derived from the laws), steady start",
        (false, crate::scenario::Start::Empty) => " (derived from the laws), empty start",
        (true, crate::scenario::Start::Steady) => ", steady start",
        (true, crate::scenario::Start::Empty) => ", empty start",
    }
}

/// Describe how the run was made, in one line.
fn run_line(r: &RunReport) -> String {
    let p = &r.model.plan;
    let mut s = format!(
        "{} replications of {} measured after {} warm-up{}, seed {}",
        r.outcome.replications,
        format_duration(p.length_s),
        format_duration(p.warmup_s),
        warmup_origin(r.model),
        p.seed
    );
    if let Some(pr) = r.outcome.precision {
        s.push_str(&format!(
            "; precision goal {} {} (worst key figure {})",
            format_share(pr.target),
            if pr.met {
                "met"
            } else {
                "NOT met: replication cap reached"
            },
            format_share(pr.achieved)
        ));
    }
    s
}

/// The figures of one scope as a JSON object, with the owner's name.
fn take_named(
    by_scope: &mut HashMap<Scope, Map<String, Value>>,
    scope: Scope,
    name: &str,
) -> Map<String, Value> {
    let mut m = by_scope.remove(&scope).unwrap_or_default();
    m.insert("name".into(), json!(name));
    m
}

/// The JSON document of a run.
pub fn to_json(r: &RunReport) -> Value {
    let model = r.model;
    let o = r.outcome;
    let mut by_scope: HashMap<Scope, Map<String, Value>> = HashMap::new();
    for (i, f) in o.layout.iter().enumerate() {
        by_scope.entry(f.scope).or_default().insert(
            f.name().to_string(),
            estimate_json(&o.estimates[i], Some(f.figure), r.formulas.get(f)),
        );
    }
    let streams: Vec<Value> = (model.streams.iter().enumerate())
        .map(|(s, st)| Value::Object(take_named(&mut by_scope, Scope::Stream(s), &st.name)))
        .collect();
    let groups: Vec<Value> = (model.groups.iter().enumerate())
        .map(|(g, gr)| {
            let mut m = take_named(&mut by_scope, Scope::Group(g), &gr.name);
            m.insert("servers".into(), json!(gr.servers));
            Value::Object(m)
        })
        .collect();
    let mut doc = json!({
        "scenario": model.title,
        "file": r.file,
        "version": env!("CARGO_PKG_VERSION"),
        "seed": model.plan.seed,
        "replications": o.replications,
        "warmup_s": model.plan.warmup_s,
        "warmup_derived": !model.plan.warmup_given,
        "start": match model.plan.start {
            crate::scenario::Start::Steady => "steady",
            crate::scenario::Start::Empty => "empty",
        },
        "length_s": model.plan.length_s,
        "partial": o.partial,
        "streams": streams,
        "groups": groups,
    });
    if let Some(p) = o.precision {
        doc["precision"] =
            json!({ "target": p.target, "achieved": finite_or_null(p.achieved), "met": p.met });
    }
    let bins = model.plan.interval_count();
    if bins > 0 {
        let width = model.plan.interval_s.unwrap_or(model.plan.length_s);
        let intervals: Vec<Value> = (0..bins)
            .map(|b| {
                let streams: Vec<Value> = (model.streams.iter().enumerate())
                    .map(|(s, st)| {
                        Value::Object(take_named(
                            &mut by_scope,
                            Scope::StreamInterval(b, s),
                            &st.name,
                        ))
                    })
                    .collect();
                let groups: Vec<Value> = (model.groups.iter().enumerate())
                    .map(|(g, gr)| {
                        Value::Object(take_named(
                            &mut by_scope,
                            Scope::GroupInterval(b, g),
                            &gr.name,
                        ))
                    })
                    .collect();
                json!({
                    "start_s": b as f64 * width,
                    "end_s": b as f64 * width + stats::interval_length(model, b),
                    "streams": streams,
                    "groups": groups,
                })
            })
            .collect();
        doc["intervals"] = Value::Array(intervals);
        if let Some(w) = worst_interval(r) {
            doc["worst_interval"] = json!(w);
        }
    }
    doc["warnings"] = json!(
        r.outcome
            .warnings
            .iter()
            .map(|w| w.to_string())
            .collect::<Vec<_>>()
    );
    doc["caution"] = json!(CAUTION);
    doc
}

/// The interval with the highest loss of any stream (ties: the highest time
/// congestion of any group); None without intervals.
pub fn worst_interval(r: &RunReport) -> Option<usize> {
    let bins = r.model.plan.interval_count();
    if bins == 0 {
        return None;
    }
    let mut score = vec![(0.0f64, 0.0f64); bins];
    for (i, f) in r.outcome.layout.iter().enumerate() {
        let m = r.outcome.estimates[i].mean;
        if m.is_nan() {
            continue;
        }
        match (f.scope, f.figure) {
            (Scope::StreamInterval(b, _), Figure::Loss) => score[b].0 = score[b].0.max(m),
            (Scope::GroupInterval(b, _), Figure::TimeCongestion) => score[b].1 = score[b].1.max(m),
            _ => {}
        }
    }
    (0..bins).max_by(|&a, &b| {
        score[a]
            .partial_cmp(&score[b])
            .unwrap_or(std::cmp::Ordering::Equal)
            .then(b.cmp(&a))
    })
}

/// Long-format CSV: one row per figure.
pub fn to_csv(r: &RunReport) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    let width = r.model.plan.interval_s.unwrap_or(r.model.plan.length_s);
    let _ = w.write_record([
        "kind",
        "name",
        "interval_start_s",
        "figure",
        "mean",
        "half_width",
        "low",
        "high",
        "estimator",
        "replications",
        "formula",
        "formula_value",
    ]);
    for (i, f) in r.outcome.layout.iter().enumerate() {
        let e = &r.outcome.estimates[i];
        let (kind, name, start) = match f.scope {
            Scope::Stream(s) => ("stream", &r.model.streams[s].name, String::new()),
            Scope::Group(g) => ("group", &r.model.groups[g].name, String::new()),
            Scope::StreamInterval(b, s) => (
                "stream",
                &r.model.streams[s].name,
                trim_float(b as f64 * width, 3),
            ),
            Scope::GroupInterval(b, g) => (
                "group",
                &r.model.groups[g].name,
                trim_float(b as f64 * width, 3),
            ),
        };
        let num = |x: f64| {
            if x.is_finite() {
                format!("{x}")
            } else {
                String::new()
            }
        };
        let (fname, fval) = r
            .formulas
            .get(f)
            .map_or((String::new(), String::new()), |fo| {
                (fo.name.to_string(), num(fo.value))
            });
        let _ = w.write_record([
            kind,
            name,
            &start,
            f.name(),
            &num(e.mean),
            &num(e.half_width),
            &num(e.low),
            &num(e.high),
            f.figure.estimator().name(),
            &e.replications.to_string(),
            &fname,
            &fval,
        ]);
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// Column-aligned text with a header row.
fn align(rows: &[Vec<String>], indent: &str) -> String {
    let cols = rows.iter().map(Vec::len).max().unwrap_or(0);
    let widths: Vec<usize> = (0..cols)
        .map(|c| {
            rows.iter()
                .filter_map(|r| r.get(c))
                .map(|s| s.chars().count())
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut out = String::new();
    for row in rows {
        let mut line = String::from(indent);
        for (c, cell) in row.iter().enumerate() {
            let pad = widths[c] - cell.chars().count();
            line.push_str(cell);
            if c + 1 < row.len() {
                line.push_str(&" ".repeat(pad + 2));
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

fn figure_rows(r: &RunReport, scope: Scope, first: &str) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    for (i, f) in r.outcome.layout.iter().enumerate() {
        // The mean square is a building block of the peakedness, kept in
        // the JSON and CSV for merging and checking, not shown in the table.
        if f.scope != scope || f.figure == Figure::OverflowMeanSquare {
            continue;
        }
        let e = &r.outcome.estimates[i];
        let k = f.figure.unit();
        let formula = r.formulas.get(f).map_or(String::new(), |fo| {
            format!("{} ({})", fmt_value(k, fo.value), fo.name)
        });
        rows.push(vec![
            if rows.is_empty() {
                first.to_string()
            } else {
                String::new()
            },
            f.figure.label().to_string(),
            fmt_value(k, e.mean),
            if e.mean.is_nan() {
                String::new()
            } else {
                fmt_interval(k, e)
            },
            formula,
        ]);
    }
    rows
}

/// A titled table: the first row is the header.
pub struct Table {
    /// Heading above the table.
    pub title: String,
    /// Header row, then data rows.
    pub rows: Vec<Vec<String>>,
}

/// The tables of a run report, shared by the terminal and HTML outputs.
pub fn run_tables(r: &RunReport) -> Vec<Table> {
    let model = r.model;
    let mut tables = Vec::new();
    let header = |first: &str| {
        vec![
            first.to_string(),
            "figure".into(),
            "simulated".into(),
            "95% ±".into(),
            "formula".into(),
        ]
    };
    let mut rows = vec![header("stream")];
    for (s, st) in model.streams.iter().enumerate() {
        rows.extend(figure_rows(r, Scope::Stream(s), &st.name));
    }
    tables.push(Table {
        title: "Streams".into(),
        rows,
    });
    let mut rows = vec![header("group")];
    for (g, gr) in model.groups.iter().enumerate() {
        rows.extend(figure_rows(
            r,
            Scope::Group(g),
            &format!("{} ({})", gr.name, gr.servers),
        ));
    }
    tables.push(Table {
        title: "Groups".into(),
        rows,
    });
    let bins = model.plan.interval_count();
    if bins > 0 {
        let width = model.plan.interval_s.unwrap_or(model.plan.length_s);
        let worst = worst_interval(r);
        let mut head = vec!["interval".to_string()];
        let interval_formula = |s: usize| {
            (0..bins).find_map(|b| {
                r.formulas.get(&FigureId {
                    scope: Scope::StreamInterval(b, s),
                    figure: Figure::Loss,
                })
            })
        };
        for (s, st) in model.streams.iter().enumerate() {
            head.push(format!("{} offered", st.name));
            head.push(format!("{} loss", st.name));
            if let Some(f) = interval_formula(s) {
                head.push(format!("[{}]", f.name));
            }
        }
        for gr in &model.groups {
            head.push(format!("{} occupancy", gr.name));
        }
        let mut rows = vec![head];
        let get =
            |scope: Scope, name: &str| r.outcome.get(scope, name).map_or(f64::NAN, |e| e.mean);
        for b in 0..bins {
            let start = b as f64 * width;
            let mut row = vec![format!(
                "{}-{}{}",
                clock(start),
                clock(start + stats::interval_length(model, b)),
                if worst == Some(b) { " worst" } else { "" }
            )];
            for s in 0..model.streams.len() {
                row.push(fmt_value(
                    Kind::Erlangs,
                    get(Scope::StreamInterval(b, s), "offered_traffic"),
                ));
                row.push(fmt_value(
                    Kind::Share,
                    get(Scope::StreamInterval(b, s), "loss"),
                ));
                if interval_formula(s).is_some() {
                    let f = r.formulas.get(&FigureId {
                        scope: Scope::StreamInterval(b, s),
                        figure: Figure::Loss,
                    });
                    row.push(f.map_or("-".into(), |f| fmt_value(Kind::Share, f.value)));
                }
            }
            for g in 0..model.groups.len() {
                row.push(fmt_value(
                    Kind::Share,
                    get(Scope::GroupInterval(b, g), "occupancy"),
                ));
            }
            rows.push(row);
        }
        tables.push(Table {
            title: "By interval (from the end of the warm-up)".into(),
            rows,
        });
    }
    tables
}

/// The terminal table of a run.
pub fn to_table(r: &RunReport) -> String {
    let model = r.model;
    let mut out = String::new();
    out.push_str(&format!("{}  ({})\n", model.title, r.file));
    out.push_str(&run_line(r));
    out.push_str("\nShares, mean waits and attempts per call are pooled over all replications (total over total);\nother figures are means across replications. \"±\" is the 95% half-width; \"[a to b]\" a 95% interval\ncut to the figure's range or widened to the exact binomial bound when events are few.\n");
    if r.outcome.partial {
        out.push_str(
            "PARTIAL RESULT: the run was interrupted; only the finished replications are shown.\n",
        );
    }
    for t in run_tables(r) {
        out.push_str(&format!("\n{}\n", t.title));
        out.push_str(&align(&t.rows, "  "));
    }
    for w in &r.outcome.warnings {
        out.push_str(&format!("\nWarning: {w}"));
    }
    if !r.outcome.warnings.is_empty() {
        out.push('\n');
    }
    out.push_str(&format!(
        "\n{} events in {:.2} s\n",
        r.outcome.events, r.outcome.wall_s
    ));
    out.push_str(&format!("Caution: {CAUTION}\n"));
    out
}

fn clock(seconds: f64) -> String {
    let m = (seconds / 60.0).round() as u64;
    format!("{}:{:02}", m / 60, m % 60)
}

/// The compiled model in plain words, for `check`.
pub fn describe_model(model: &Model, file: &str) -> String {
    let p = &model.plan;
    let mut out = format!("{}  ({file})\n", model.title);
    let reps = match &p.replications {
        Replications::Fixed(n) => format!("{n} replications"),
        Replications::Precision { target, max } => {
            format!(
                "replications until key figures are within {} (at most {max})",
                format_share(*target)
            )
        }
    };
    out.push_str(&format!(
        "Run: {reps}, each {} measured after {} warm-up{}, seed {}{}\n",
        format_duration(p.length_s),
        format_duration(p.warmup_s),
        warmup_origin(model),
        p.seed,
        p.interval_s.map_or(String::new(), |i| format!(
            ", figures per {}",
            format_duration(i)
        ))
    ));
    out.push_str("\nGroups\n");
    for g in &model.groups {
        let queue = match g.queue {
            Queue::None => "no queue (blocked calls overflow or are cleared)".to_string(),
            Queue::Limited(q) => format!("queue of {q} places"),
            Queue::Unlimited => "unlimited queue".to_string(),
        };
        out.push_str(&format!("  {}: {} servers, {queue}", g.name, g.servers));
        if let Some(a) = g.overflow_after_s {
            out.push_str(&format!(
                ", waiting calls move on after {}",
                format_duration(a)
            ));
        }
        if g.reserve > 0 {
            let names: Vec<&str> = model
                .streams
                .iter()
                .enumerate()
                .filter(|(s, _)| g.reserved_for[*s])
                .map(|(_, s)| s.name.as_str())
                .collect();
            out.push_str(&format!(
                ", last {} servers reserved for {}",
                g.reserve,
                names.join(", ")
            ));
        }
        out.push('\n');
    }
    out.push_str("\nStreams\n");
    for s in &model.streams {
        let arrivals = match &s.arrivals {
            Arrivals::Poisson { rate } => format!("Poisson, {}/h", trim_float(rate * 3600.0, 2)),
            Arrivals::Profile { interval_s, rates } => format!(
                "Poisson peak profile of {} intervals of {}, {}/h to {}/h",
                rates.len(),
                format_duration(*interval_s),
                trim_float(
                    rates.iter().cloned().fold(f64::INFINITY, f64::min) * 3600.0,
                    1
                ),
                trim_float(rates.iter().cloned().fold(0.0, f64::max) * 3600.0, 1)
            ),
            Arrivals::Renewal { between } => {
                format!("renewal, time between calls {}", between.describe())
            }
            Arrivals::Sources { count, idle } => {
                format!("{count} sources, idle time {}", idle.describe())
            }
        };
        let route: Vec<&str> = s
            .route
            .iter()
            .map(|&g| model.groups[g as usize].name.as_str())
            .collect();
        out.push_str(&format!("  {}: {arrivals}\n", s.name));
        match s.offered_traffic(p.length_s) {
            Some(a) => out.push_str(&format!(
                "    offered traffic {} erlangs (first attempts)\n",
                trim_float(a, 3)
            )),
            None => out.push_str("    offered traffic depends on how many sources are idle\n"),
        }
        out.push_str(&format!("    holding {}\n", s.holding.describe()));
        out.push_str(&format!("    route {}", route.join(" -> ")));
        if s.units > 1 {
            out.push_str(&format!(", {} servers per call", s.units));
        }
        out.push('\n');
        if let Some(rt) = &s.retry {
            let chances: Vec<String> = rt.chances.iter().map(|c| format_share(*c)).collect();
            out.push_str(&format!(
                "    redials: chance {}, delay {}, at most {} attempts\n",
                chances.join(" then "),
                rt.delay.describe(),
                rt.max_attempts
            ));
        }
        if let Some(pt) = &s.patience {
            out.push_str(&format!("    patience {}\n", pt.describe()));
        }
        if let Some(aw) = s.answer_within_s {
            out.push_str(&format!(
                "    service level: answered within {}\n",
                format_duration(aw)
            ));
        }
    }
    out
}

/// Write `contents` to `path` through a temporary file in the same folder
/// and a rename, so a crash never leaves a half-written file and an existing
/// file is replaced only by a complete new one.
pub fn write_atomically(path: &Path, contents: &[u8]) -> std::io::Result<()> {
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path.file_name().ok_or_else(|| {
        std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            "the output path names no file",
        )
    })?;
    let tmp = dir.join(format!(
        ".{}.{}.tmp",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(contents)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// The formula view of `check` as text: what the closed forms say for this
/// model, and where none applies.
pub fn formula_view_text(model: &Model, view: &HashMap<FigureId, Formula>) -> String {
    let mut out = String::from("\nFormula view (closed forms where their assumptions hold)\n");
    let mut rows = Vec::new();
    let mut entries: Vec<(&FigureId, &Formula)> = view.iter().collect();
    entries.sort_by_key(|(f, _)| {
        // A fixed order: streams, groups, then intervals in time order.
        let (kind, i, b) = match f.scope {
            Scope::Stream(s) => (0, s, 0),
            Scope::Group(g) => (1, g, 0),
            Scope::StreamInterval(b, s) => (2, s, b),
            Scope::GroupInterval(b, g) => (3, g, b),
        };
        (kind, i, b, f.figure.compact_order(), f.figure)
    });
    let width = model.plan.interval_s.unwrap_or(model.plan.length_s);
    let clock = |b: usize| {
        let t = |x: f64| {
            let m = (x / 60.0).round() as u64;
            format!("{}:{:02}", m / 60, m % 60)
        };
        let start = b as f64 * width;
        let end = (start + width).min(model.plan.length_s);
        format!("{}-{}", t(start), t(end))
    };
    for (f, fo) in entries {
        let label_of = |b: usize| format!("{} ({})", f.figure.label(), clock(b));
        let who = match f.scope {
            Scope::Stream(s) | Scope::StreamInterval(_, s) => {
                format!("stream {}", model.streams[s].name)
            }
            Scope::Group(g) | Scope::GroupInterval(_, g) => {
                format!("group {}", model.groups[g].name)
            }
        };
        let what = match f.scope {
            Scope::StreamInterval(b, _) | Scope::GroupInterval(b, _) => label_of(b),
            _ => f.figure.label().to_string(),
        };
        rows.push(vec![
            who,
            what,
            fmt_value(f.figure.unit(), fo.value),
            fo.name.to_string(),
        ]);
    }
    // Mark repeated names once.
    for i in (1..rows.len()).rev() {
        if rows[i][0] == rows[i - 1][0] {
            rows[i][0] = String::new();
        }
    }
    if rows.is_empty() {
        out.push_str(
            "  No closed form applies to this design: the simulation is the only answer.\n",
        );
    } else {
        out.push_str(&align(&rows, "  "));
    }
    let covered = |scope: Scope| view.keys().any(|f| f.scope == scope);
    let bare: Vec<&str> = model
        .streams
        .iter()
        .enumerate()
        .filter(|(s, _)| !covered(Scope::Stream(*s)))
        .map(|(_, st)| st.name.as_str())
        .collect();
    if !rows.is_empty() && !bare.is_empty() {
        out.push_str(&format!(
            "  No closed form for stream(s) {}: simulation only.\n",
            bare.join(", ")
        ));
    }
    out
}

/// The formula view of `check` as JSON.
pub fn formula_view_json(model: &Model, view: &HashMap<FigureId, Formula>) -> Value {
    let pick = |scope: Scope| -> Value {
        let mut m = Map::new();
        for (f, fo) in view.iter().filter(|(f, _)| f.scope == scope) {
            m.insert(
                f.name().to_string(),
                json!({ "name": fo.name, "value": finite_or_null(fo.value) }),
            );
        }
        Value::Object(m)
    };
    json!({
        "scenario": model.title,
        "streams": model.streams.iter().enumerate().map(|(s, st)| json!({
            "name": st.name,
            "offered_traffic": st.offered_traffic(model.plan.length_s),
            "formulas": pick(Scope::Stream(s)),
        })).collect::<Vec<_>>(),
        "groups": model.groups.iter().enumerate().map(|(g, gr)| json!({
            "name": gr.name,
            "servers": gr.servers,
            "formulas": pick(Scope::Group(g)),
        })).collect::<Vec<_>>(),
    })
}

/// Print a goal's bound in the figure's unit.
fn goal_value(figure: Figure, x: f64) -> String {
    fmt_value(figure.unit(), x)
}

/// The goal table of a sizing: each goal at the answer and one fewer.
pub fn size_rows(model: &Model, r: &crate::experiment::size::SizeResult) -> Vec<Vec<String>> {
    use crate::experiment::size::Verdict;
    let mut rows = vec![vec!["goal".to_string()]];
    let cols: Vec<&crate::experiment::size::Evaluation> =
        [r.at_answer.as_ref(), r.one_fewer.as_ref()]
            .into_iter()
            .flatten()
            .collect();
    for e in &cols {
        rows[0].push(format!("at {} servers", e.servers));
        rows[0].push(String::new());
    }
    for (i, goal) in r.goals.iter().enumerate() {
        let mut row = vec![format!(
            "{} (bound {})",
            goal.text,
            goal_value(goal.figure, goal.bound)
        )];
        for e in &cols {
            let (v, est) = e.goals[i];
            let k = goal.figure.unit();
            // Name the stream or group whose figure decides, when the goal
            // covers several.
            let whose = match (goal.targets.len() > 1, e.deciding[i].map(|f| f.scope)) {
                (true, Some(Scope::Stream(s))) => format!(" ({})", model.streams[s].name),
                (true, Some(Scope::Group(g))) => format!(" ({})", model.groups[g].name),
                _ => String::new(),
            };
            row.push(format!(
                "{} {}{whose}",
                fmt_value(k, est.mean),
                fmt_interval(k, &est)
            ));
            row.push(match v {
                Verdict::Holds => "holds".into(),
                Verdict::Fails => "FAILS".into(),
                Verdict::Undecided => "undecided".into(),
            });
        }
        rows.push(row);
        let mut row = vec!["  periods meeting it (one per replication)".to_string()];
        for e in &cols {
            let p = e.periods[i];
            row.push(format!(
                "{} {}",
                fmt_value(Kind::Share, p.mean),
                fmt_interval(Kind::Share, &p)
            ));
            row.push(String::new());
        }
        rows.push(row);
    }
    rows
}

/// The sizing report as text.
pub fn size_table(model: &Model, file: &str, r: &crate::experiment::size::SizeResult) -> String {
    let g = &model.groups[r.group];
    let mut out = format!("Sizing group \"{}\" of {}  ({file})\n", g.name, model.title);
    let goals: Vec<&str> = r.goals.iter().map(|g| g.text.as_str()).collect();
    out.push_str(&format!("Goals: {}\n", goals.join(", ")));
    out.push_str(&format!(
        "A goal holds at a size when its whole interval lies on the right side of the bound; with up to {} looks \
at one size the intervals are {:.2}% (Bonferroni), 95% overall. The goal is judged on the long-run figure \
(shares pooled over all calls); \"periods meeting it\" is the share of replications, each one measured period long, \
whose own figure met the bound (95% exact interval).\n\n",
        r.looks,
        100.0 - 5.0 / f64::from(r.looks)
    ));
    match r.servers {
        Some(n) => out.push_str(&format!("Answer: {n} servers")),
        None if r.partial => out.push_str("No answer: the search was interrupted"),
        None if r.tried.last().is_some_and(|t| t.2 == crate::experiment::size::Verdict::Undecided) => out.push_str(&format!(
            "No answer: up to {} servers the goals could not be decided within the replication cap \
(raise --decide-within)",
            r.limit
        )),
        None => out.push_str(&format!(
            "No answer: no size up to {} servers meets every goal",
            r.limit
        )),
    }
    match r.formula_servers {
        Some(f) => out.push_str(&format!("   (closed form alone: {f})\n")),
        None => out.push_str("   (no closed form covers these goals)\n"),
    }
    if r.uncertain {
        out.push_str(
            "Note: at one server fewer the goals could not be decided within the replication cap; \
the answer is the smallest size shown to meet them, and may be one more than needed.\n",
        );
    }
    let rows = size_rows(model, r);
    if rows.len() > 1 {
        out.push('\n');
        out.push_str(&align(&rows, "  "));
    }
    let tried: Vec<String> = r
        .tried
        .iter()
        .map(|(n, reps, v)| format!("{n} ({reps} reps, {})", v.word()))
        .collect();
    out.push_str(&format!("\nSizes tried: {}\n", tried.join(", ")));
    out.push_str(&format!("Took {:.2} s.\nCaution: {CAUTION}\n", r.wall_s));
    out
}

/// The sizing report as JSON.
pub fn size_json(model: &Model, file: &str, r: &crate::experiment::size::SizeResult) -> Value {
    let eval_json = |e: &crate::experiment::size::Evaluation| {
        json!({
            "servers": e.servers,
            "replications": e.outcome.replications,
            "verdict": e.verdict().word(),
            "goals": r.goals.iter().zip(&e.goals).zip(&e.periods).zip(&e.deciding).map(|(((g, (v, est)), p), d)| json!({
                "goal": g.text,
                "verdict": v.word(),
                "estimate": estimate_json(est, Some(g.figure), None),
                "decided_by": d.map(|f| match f.scope {
                    Scope::Stream(s) => json!({ "stream": model.streams[s].name }),
                    Scope::Group(g) => json!({ "group": model.groups[g].name }),
                    _ => Value::Null,
                }),
                "periods_meeting": estimate_json(p, None, None),
            })).collect::<Vec<_>>(),
        })
    };
    json!({
        "scenario": model.title,
        "file": file,
        "group": model.groups[r.group].name,
        "goals": r.goals.iter().map(|g| json!({
            "goal": g.text, "figure": g.figure.name(), "at_most": g.at_most, "bound": g.bound,
        })).collect::<Vec<_>>(),
        "servers": r.servers,
        "formula_servers": r.formula_servers,
        "uncertain": r.uncertain,
        "looks": r.looks,
        "partial": r.partial,
        "at_answer": r.at_answer.as_ref().map(eval_json),
        "one_fewer": r.one_fewer.as_ref().map(eval_json),
        "tried": r.tried.iter().map(|(n, reps, v)| json!({"servers": n, "replications": reps, "verdict": v.word()})).collect::<Vec<_>>(),
        "wall_s": r.wall_s,
        "caution": CAUTION,
    })
}

/// The figures a sweep shows: the chosen names, or by default every
/// stream's loss (and service level where reported) and every group's
/// occupancy. Returns (scope, figure) pairs present in the first step.
pub fn sweep_columns(model: &Model, outcome: &Outcome, chosen: &[String]) -> Vec<FigureId> {
    let wanted = |f: &FigureId| -> bool {
        if chosen.is_empty() {
            matches!(
                (f.scope, f.name()),
                (Scope::Stream(_), "loss")
                    | (Scope::Stream(_), "service_level")
                    | (Scope::Group(_), "occupancy")
            )
        } else {
            matches!(f.scope, Scope::Stream(_) | Scope::Group(_))
                && chosen.iter().any(|c| c == f.name())
        }
    };
    let _ = model;
    outcome
        .layout
        .iter()
        .filter(|f| wanted(f))
        .copied()
        .collect()
}

pub(crate) fn column_name(model: &Model, f: &FigureId) -> String {
    match f.scope {
        Scope::Stream(s) | Scope::StreamInterval(_, s) => {
            format!("{} {}", model.streams[s].name, f.name())
        }
        Scope::Group(g) | Scope::GroupInterval(_, g) => {
            format!("{} {}", model.groups[g].name, f.name())
        }
    }
}

/// The sweep table: one row per step.
pub fn sweep_rows(
    model: &Model,
    label: &str,
    steps: &[crate::experiment::sweep::Step],
    columns: &[FigureId],
) -> Vec<Vec<String>> {
    let mut head = vec![label.to_string(), "offered traffic".to_string()];
    head.extend(columns.iter().map(|f| column_name(model, f)));
    let mut rows = vec![head];
    for st in steps {
        let formulas = formula_column(&st.model);
        let offered: f64 = st
            .model
            .streams
            .iter()
            .filter_map(|s| s.offered_traffic(st.model.plan.length_s))
            .sum();
        let mut row = vec![trim_float(st.value, 3), fmt_value(Kind::Erlangs, offered)];
        for f in columns {
            let k = f.figure.unit();
            let cell = match st.outcome.get(f.scope, f.name()) {
                Some(e) if !e.mean.is_nan() => {
                    let mut c = format!("{} {}", fmt_value(k, e.mean), fmt_interval(k, &e));
                    if let Some(fo) = formulas.get(f) {
                        c.push_str(&format!(" [{}]", fmt_value(k, fo.value)));
                    }
                    c
                }
                _ => "-".into(),
            };
            row.push(cell);
        }
        rows.push(row);
    }
    rows
}

/// The sweep as a table: one row per step.
pub fn sweep_table(
    model: &Model,
    file: &str,
    label: &str,
    steps: &[crate::experiment::sweep::Step],
    columns: &[FigureId],
    partial: bool,
) -> String {
    let mut out = format!("Load sweep of {}  ({file})\n", model.title);
    if let Some(first) = steps.first() {
        out.push_str(&format!(
            "{} replications per step, the same seeds at every step; [formula] where a closed form applies.\n",
            first.outcome.replications
        ));
    }
    if partial {
        out.push_str("PARTIAL RESULT: interrupted; only the finished steps are shown.\n");
    }
    let rows = sweep_rows(model, label, steps, columns);
    out.push('\n');
    out.push_str(&align(&rows, "  "));
    out.push_str(&format!("\nCaution: {CAUTION}\n"));
    out
}

/// The sweep as long-format CSV.
pub fn sweep_csv(model: &Model, steps: &[crate::experiment::sweep::Step]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    let _ = w.write_record([
        "value",
        "kind",
        "name",
        "figure",
        "mean",
        "half_width",
        "low",
        "high",
        "estimator",
        "replications",
        "formula",
        "formula_value",
    ]);
    let num = |x: f64| {
        if x.is_finite() {
            format!("{x}")
        } else {
            String::new()
        }
    };
    for st in steps {
        let formulas = formula_column(&st.model);
        for (i, f) in st.outcome.layout.iter().enumerate() {
            let (kind, name) = match f.scope {
                Scope::Stream(s) => ("stream", &model.streams[s].name),
                Scope::Group(g) => ("group", &model.groups[g].name),
                _ => continue,
            };
            let e = &st.outcome.estimates[i];
            let (fname, fval) = formulas
                .get(f)
                .map_or((String::new(), String::new()), |fo| {
                    (fo.name.to_string(), num(fo.value))
                });
            let _ = w.write_record([
                &num(st.value),
                kind,
                name,
                f.name(),
                &num(e.mean),
                &num(e.half_width),
                &num(e.low),
                &num(e.high),
                f.figure.estimator().name(),
                &e.replications.to_string(),
                &fname,
                &fval,
            ]);
        }
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// The sweep as JSON: one run document per step.
pub fn sweep_json(
    file: &str,
    label: &str,
    steps: &[crate::experiment::sweep::Step],
    partial: bool,
) -> Value {
    json!({
        "file": file,
        "swept": label,
        "partial": partial,
        "steps": steps.iter().map(|st| {
            let r = RunReport::new(&st.model, &st.outcome, file);
            json!({ "value": st.value, "result": to_json(&r) })
        }).collect::<Vec<_>>(),
        "caution": CAUTION,
    })
}

/// The run as one self-contained HTML page.
pub fn run_html(r: &RunReport, chart: Option<&str>) -> String {
    use html::Block;
    let mut blocks = vec![
        Block::Heading("The scenario in plain words".into()),
        Block::Pre(describe_model(r.model, r.file)),
        Block::Heading("Results".into()),
        Block::Paragraph(format!(
            "{}. Shares, mean waits and attempts per call are pooled over all replications (total over total); \
other figures are means across replications. Intervals are 95%; an interval shown by its two ends is cut to the \
figure's range or widened to the exact binomial bound when events are few. The formula column \
shows the closed-form value where its assumptions hold.",
            run_line(r)
        )),
    ];
    if r.outcome.partial {
        blocks.push(Block::Paragraph(
            "PARTIAL RESULT: the run was interrupted; only the finished replications are shown."
                .into(),
        ));
    }
    for w in &r.outcome.warnings {
        blocks.push(Block::Paragraph(format!("Warning: {w}.")));
    }
    blocks.extend(run_tables(r).into_iter().map(Block::Table));
    if let Some(svg) = chart {
        blocks.push(Block::Heading("Per interval".into()));
        blocks.push(Block::Svg(svg.to_string()));
    }
    blocks.push(Block::Heading("Textbook view".into()));
    blocks.push(Block::Pre(formula_view_text(r.model, &r.formulas)));
    blocks.push(Block::Heading("Assumptions".into()));
    blocks.push(Block::List(html::assumptions()));
    html::page(
        &r.model.title,
        &format!("busyhour run of {}", r.file),
        &blocks,
    )
}

/// The sizing as one self-contained HTML page.
pub fn size_html(model: &Model, file: &str, r: &crate::experiment::size::SizeResult) -> String {
    use html::Block;
    let g = &model.groups[r.group];
    let answer = match r.servers {
        Some(n) => format!("Answer: {n} servers on {}.", g.name),
        None => format!(
            "No size of {} up to {} servers meets every goal.",
            g.name, r.limit
        ),
    };
    let formula = match r.formula_servers {
        Some(f) => format!("The closed form alone says {f}."),
        None => "No closed form covers these goals.".into(),
    };
    let mut blocks = vec![
        Block::Heading("The scenario in plain words".into()),
        Block::Pre(describe_model(model, file)),
        Block::Heading("Answer".into()),
        Block::Paragraph(format!("{answer} {formula}")),
    ];
    if r.uncertain {
        blocks.push(Block::Paragraph(
            "At one server fewer the goals could not be decided within the replication cap: the answer is the \
smallest size shown to meet them and may be one more than needed."
                .into(),
        ));
    }
    blocks.push(Block::Table(Table {
        title: "Goals at the answer and at one server fewer".into(),
        rows: size_rows(model, r),
    }));
    let mut tried = vec![vec![
        "servers".to_string(),
        "replications".into(),
        "verdict".into(),
    ]];
    tried.extend(
        r.tried
            .iter()
            .map(|(n, reps, v)| vec![n.to_string(), reps.to_string(), v.word().to_string()]),
    );
    blocks.push(Block::Table(Table {
        title: "Sizes tried".into(),
        rows: tried,
    }));
    blocks.push(Block::Paragraph(format!(
        "A goal holds at a size when its whole interval lies on the right side of the bound; with up to {} looks \
at one size each verdict uses a {:.2}% interval (Bonferroni), so the chance of any wrong verdict stays at most 5%.",
        r.looks,
        100.0 - 5.0 / f64::from(r.looks)
    )));
    blocks.push(Block::Heading("Assumptions".into()));
    blocks.push(Block::List(html::assumptions()));
    html::page(
        &model.title,
        &format!("busyhour size of {} in {file}", g.name),
        &blocks,
    )
}

/// The sweep as one self-contained HTML page.
pub fn sweep_html(
    model: &Model,
    file: &str,
    label: &str,
    steps: &[crate::experiment::sweep::Step],
    columns: &[FigureId],
    chart: Option<&str>,
    partial: bool,
) -> String {
    use html::Block;
    let mut blocks = vec![
        Block::Heading("The scenario in plain words".into()),
        Block::Pre(describe_model(model, file)),
        Block::Heading("Sweep".into()),
        Block::Paragraph(format!(
            "Each step runs the same seeds (common random numbers); values are means ± 95% half-widths, \
[formula] where a closed form applies.{}",
            if partial {
                " PARTIAL RESULT: interrupted; only the finished steps are shown."
            } else {
                ""
            }
        )),
        Block::Table(Table {
            title: String::new(),
            rows: sweep_rows(model, label, steps, columns),
        }),
    ];
    if let Some(svg) = chart {
        blocks.push(Block::Svg(svg.to_string()));
    }
    blocks.push(Block::Heading("Assumptions".into()));
    blocks.push(Block::List(html::assumptions()));
    html::page(
        &model.title,
        &format!("busyhour sweep of {file}: {label}"),
        &blocks,
    )
}
