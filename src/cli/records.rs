//! `busyhour records`: measured call records -> design load. Maps flags to
//! `busyhour::records`, writes the files asked for and prints the records
//! document (`busyhour::report::records`); no analysis here.

use anyhow::{Context, Result};
use busyhour::files::{FilePlan, OutputKind};
use busyhour::records::{self, Columns, DayFilter, Options, scenario_out};
use busyhour::report::records as report;
use busyhour::report::records::{RecordsDocument, ScenarioWritten};
use busyhour::report::{Format, plot, write_atomically};
use busyhour::units;
use clap::Args;
use std::path::{Path, PathBuf};

/// `busyhour records`.
#[derive(Args)]
pub struct RecordsArgs {
    /// The call-record file: CSV with a header line, one row a call (start
    /// time, holding time and, optionally, the outcome).
    pub file: PathBuf,
    /// Interval length for traffic per interval; must divide an hour
    /// ("5m", "15m", "30m", "1h").
    #[arg(long, value_name = "DURATION", default_value = "15m")]
    pub interval: String,
    /// Column with each call's start: RFC 3339 / ISO 8601 (with or without a
    /// zone offset), Unix seconds, or a time of day ("08:15:30") beside a
    /// date column [default: the first of start, start_time, started, time,
    /// timestamp].
    #[arg(long, value_name = "COLUMN")]
    pub start: Option<String>,
    /// Column with each call's date ("2026-03-02"), for records whose start
    /// column holds only the time of day [default: the first of date,
    /// call_date, start_date, if any].
    #[arg(long, value_name = "COLUMN")]
    pub date: Option<String>,
    /// Column with each call's holding time: seconds or h:mm:ss [default:
    /// the first of duration, duration_s, holding, holding_s, holding_time,
    /// talk_s].
    #[arg(long, value_name = "COLUMN")]
    pub duration: Option<String>,
    /// Column with each call's outcome: answered, blocked or abandoned
    /// [default: the first of outcome, result, status, disposition, if any].
    #[arg(long, value_name = "COLUMN")]
    pub outcome: Option<String>,
    /// Column with each call's waiting time in the queue before it was
    /// answered or abandoned: seconds or h:mm:ss, empty when unknown
    /// [default: the first of wait, wait_s, wait_time, waiting_time,
    /// queue_s, queue_time, if any]. With abandoned calls, it lets
    /// --scenario-out fit the callers' patience.
    #[arg(long, value_name = "COLUMN")]
    pub wait: Option<String>,
    /// Map one of the system's outcome words to how the call ended, as
    /// WORD=answered, WORD=blocked or WORD=abandoned ("NO ANSWER=abandoned");
    /// repeatable; tried before the usual words.
    #[arg(long = "outcome-word", value_name = "WORD=KIND", value_parser = outcome_word)]
    pub outcome_words: Vec<(String, busyhour::records::reader::Outcome)>,
    /// Read Unix-second start times at this fixed offset from UTC, like
    /// "+01:00" or "-05:00" [default: UTC]. A fixed offset: a file that
    /// spans a daylight-saving change needs times written with their offset.
    #[arg(long = "unix-offset", value_name = "+HH:MM", value_parser = utc_offset, allow_hyphen_values = true)]
    pub unix_offset: Option<i32>,
    /// Analyse only these local days: weekdays ("mon-fri", "sat,sun",
    /// "weekdays"), dates ("2025-03-04") or date ranges
    /// ("2025-03-03..2025-03-07"), comma-separated.
    #[arg(long, value_name = "DAYS")]
    pub days: Option<String>,
    /// Skip rows that cannot be read, count them and report the first few,
    /// instead of stopping at the first.
    #[arg(long)]
    pub skip_bad: bool,
    /// Write a scenario file for `busyhour run`: the busy hour as a peak
    /// profile, the fitted holding-time law, one group sized by Erlang B (a
    /// queue with the fitted patience when abandoned calls have waits).
    #[arg(long, value_name = "FILE.toml")]
    pub scenario_out: Option<PathBuf>,
    /// Servers installed in the measured system (circuits or agents): drawn
    /// as a line on the chart, and given to the scenario's group
    /// (--scenario-out) instead of sizing it by Erlang B.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=1_000_000))]
    pub servers: Option<u32>,
    /// Grade of service the scenario's group is sized for (blocking share).
    #[arg(
        long,
        value_name = "SHARE",
        default_value = "1%",
        requires = "scenario_out"
    )]
    pub grade: String,
    /// Write the measured holding times (the empirical law) into the
    /// scenario even when a parametric law fits.
    #[arg(long, requires = "scenario_out")]
    pub empirical: bool,
    /// Draw traffic per interval over the days, each day's busy hour shaded, as SVG.
    #[arg(long, value_name = "FILE.svg")]
    pub chart: Option<PathBuf>,
    /// Print JSON instead of the report, every interval included (keys in
    /// docs/json.md).
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print the intervals as CSV instead of the report: local start, date,
    /// time, calls by outcome, carried and offered traffic (erlangs), after
    /// a "# Caution:" comment line.
    #[arg(long)]
    pub csv: bool,
    /// Also write an HTML report of the analysis (its tables and the
    /// traffic chart) to FILE.
    #[arg(long, value_name = "FILE.html")]
    pub report: Option<PathBuf>,
    /// Write the report or JSON to FILE (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Replace an existing output file even when it does not look like an
    /// earlier busyhour output (never the call-record file itself).
    #[arg(long)]
    pub force: bool,
}

/// The holding-time file written beside a scenario: `NAME-holding.csv`.
fn holding_file_name(scenario: &Path) -> String {
    let stem = scenario.file_stem().map_or_else(
        || "scenario".to_string(),
        |s| s.to_string_lossy().into_owned(),
    );
    format!("{stem}-holding.csv")
}

/// `busyhour records`.
pub fn run(a: &RecordsArgs) -> Result<()> {
    // Stage one: parse and check every flag, no I/O.
    let interval_s = records::parse_interval(&a.interval)?;
    let days = a.days.as_deref().map(DayFilter::parse).transpose()?;
    let grade = units::parse_share(&a.grade).with_context(|| "--grade")?;
    if !(grade > 0.0 && grade < 1.0) {
        anyhow::bail!(
            "--grade '{}': expected a blocking share above 0% and below 100%, like \"1%\"",
            a.grade
        );
    }
    let opts = Options {
        interval_s,
        columns: Columns {
            start: a.start.clone(),
            date: a.date.clone(),
            duration: a.duration.clone(),
            outcome: a.outcome.clone(),
            wait: a.wait.clone(),
            outcome_words: a.outcome_words.clone(),
            unix_offset_s: a.unix_offset,
        },
        skip_bad: a.skip_bad,
        days,
        ..Options::default()
    };
    // No output may replace the records or another output (checked before
    // reading them).
    let mut files = FilePlan::new(a.force);
    files.input("the call-record file", &a.file);
    if let Some(out) = &a.out {
        let kind = if a.json {
            OutputKind::Json
        } else if a.csv {
            OutputKind::Csv
        } else {
            OutputKind::Text
        };
        files.output("--out", out, kind);
    }
    if let Some(chart) = &a.chart {
        files.output("--chart", chart, OutputKind::Svg);
    }
    if let Some(report) = &a.report {
        files.output("--report", report, OutputKind::Html);
    }
    if let Some(path) = &a.scenario_out {
        files.output("--scenario-out", path, OutputKind::Scenario);
        let beside = path
            .parent()
            .unwrap_or(Path::new(""))
            .join(holding_file_name(path));
        files.output(
            "the holding-time file beside --scenario-out",
            &beside,
            OutputKind::HoldingCsv,
        );
    }
    files.check()?;
    // Stage two: read, analyse, write.
    let analysis = records::analyse(&a.file, &opts)?;
    let mut doc = RecordsDocument::new(&analysis);
    if let Some(path) = &a.scenario_out {
        let holding_file = holding_file_name(path);
        let out = scenario_out::render(
            &analysis,
            &scenario_out::ScenarioOptions {
                servers: a.servers,
                grade,
                empirical: a.empirical,
                holding_file: holding_file.clone(),
                ..Default::default()
            },
        )?;
        let mut written = vec![path.display().to_string()];
        if let Some(csv) = &out.holding_csv {
            let csv_path = path.parent().unwrap_or(Path::new("")).join(&holding_file);
            write_atomically(&csv_path, csv.as_bytes())
                .with_context(|| format!("cannot write {}", csv_path.display()))?;
            written.push(csv_path.display().to_string());
        }
        write_atomically(path, out.text.as_bytes())
            .with_context(|| format!("cannot write {}", path.display()))?;
        doc.scenario_out = Some(ScenarioWritten::new(
            written,
            &out,
            a.servers.is_some(),
            grade,
        ));
    }
    let svg = if a.chart.is_some() || a.report.is_some() {
        Some(plot::stack(&[plot::render_svg(&report::chart(
            &analysis, a.servers,
        ))?]))
    } else {
        None
    };
    if let (Some(path), Some(svg)) = (&a.chart, &svg) {
        write_atomically(path, svg.as_bytes())
            .with_context(|| format!("cannot write {}", path.display()))?;
        doc.chart = Some(path.display().to_string());
    }
    if let Some(path) = &a.report {
        doc.report = Some(path.display().to_string());
        write_atomically(path, doc.html(svg.as_deref()).as_bytes())
            .with_context(|| format!("cannot write {}", path.display()))?;
    }
    let format = if a.json {
        Format::Json
    } else if a.csv {
        Format::Csv
    } else {
        Format::Table
    };
    super::emit(format, &doc, a.out.as_deref())
}

/// `--outcome-word WORD=KIND`.
fn outcome_word(text: &str) -> Result<(String, busyhour::records::reader::Outcome), String> {
    use busyhour::records::reader::Outcome;
    let (word, kind) = text
        .rsplit_once('=')
        .ok_or_else(|| format!("'{text}': expected WORD=KIND, like \"NO ANSWER=abandoned\""))?;
    if word.trim().is_empty() {
        return Err(format!("'{text}': the word before '=' is empty"));
    }
    let outcome = Outcome::from_kind(kind).ok_or_else(|| {
        format!("'{text}': the kind after '=' must be answered, blocked or abandoned")
    })?;
    Ok((word.trim().to_string(), outcome))
}

/// `--unix-offset +HH:MM` to seconds east of UTC (at most 14 hours).
fn utc_offset(text: &str) -> Result<i32, String> {
    let bad = || format!("'{text}': expected an offset from UTC like \"+01:00\" or \"-05:00\"");
    let t = text.trim();
    let (sign, rest) = match t.as_bytes().first() {
        Some(b'+') => (1, &t[1..]),
        Some(b'-') => (-1, &t[1..]),
        _ => return Err(bad()),
    };
    let (h, m) = rest.split_once(':').ok_or_else(bad)?;
    if h.len() != 2 || m.len() != 2 {
        return Err(bad());
    }
    let (h, m): (i32, i32) = (h.parse().map_err(|_| bad())?, m.parse().map_err(|_| bad())?);
    if h > 14 || m > 59 || h * 60 + m > 14 * 60 {
        return Err(bad());
    }
    Ok(sign * (h * 3600 + m * 60))
}
