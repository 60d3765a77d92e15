//! Measured call records -> design load: traffic per interval, the busy hour,
//! the holding-time law and the peakedness of the arrivals, and a scenario
//! file to simulate the measured busy hour. Owns the reading and analysis of
//! call-record files; must not run the engine or print.
//!
//! # The path through a file
//!
//! [`analyse`] streams the CSV once ([`reader`]), adding each call to
//! per-interval accumulators ([`intervals`]) and to the holding-time sample
//! ([`fit`]); then it builds the timeline of whole local days, finds the busy
//! hours ([`busy_hour`]), fits the holding-time laws and measures the
//! peakedness ([`peakedness`]). [`scenario_out`] turns the result into a
//! scenario file; [`synthetic`] writes call records from known parameters.
//!
//! # Memory
//!
//! Memory does not grow with the number of rows: one accumulator per
//! interval that saw traffic (bounded by days x intervals per day), a
//! fixed-size reservoir sample of holding times ([`fit::RESERVOIR_SIZE`]
//! values, Algorithm R) and running sums for the fits.
//!
//! # Clocks
//!
//! Intervals and busy hours are placed on the *local clock* of each record
//! (its own zone offset), so a day on which the offset changes (daylight
//! saving time) has 23 or 25 hours of intervals. See [`intervals`].

pub mod busy_hour;
pub mod days;
pub mod fit;
pub mod intervals;
pub mod patience;
pub mod peakedness;
pub mod reader;
pub mod scenario_out;
pub mod synthetic;
pub mod time;

use std::io::Read;
use std::path::Path;

pub use busy_hour::{BusyHour, ClockHour, DailyPeak};
pub use days::DayFilter;
pub use fit::{Fit, HoldingSample, HoldingSummary};
pub use intervals::{Day, Interval, Timeline};
pub use patience::{PatienceEstimate, WaitTally};
pub use peakedness::{Peakedness, PeakednessMethod};
pub use reader::{CallRecord, Columns, Outcome, RecordReader};
pub use time::{TimeKind, Timestamp};

/// Default interval length (s): a quarter hour.
pub const DEFAULT_INTERVAL_S: u32 = 900;

/// At most this many skipped-row messages are kept for the report.
pub const SKIPPED_EXAMPLES: usize = 5;

/// Why a call-record file could not be analysed. Every message is one line
/// naming the file (and the line, for a bad row) and saying what was expected.
#[derive(Debug, thiserror::Error)]
pub enum RecordsError {
    /// The file cannot be opened or read (missing, a directory, no permission).
    #[error("{file}: cannot read the call records: {reason}")]
    Open {
        /// The file.
        file: String,
        /// What the operating system said.
        reason: String,
    },
    /// The CSV itself is broken at this line (an I/O fault mid-file).
    #[error("{file}:{line}: cannot read the CSV: {reason}")]
    Csv {
        /// The file.
        file: String,
        /// 1-based line.
        line: u64,
        /// The reader's message.
        reason: String,
    },
    /// A needed column is not in the header; name it with the column flag.
    #[error(
        "{file}: no {role} column: looked for {wanted}; the header has {available} (name the column with --{role})"
    )]
    NoColumn {
        /// The file.
        file: String,
        /// Which column: "start", "duration" or "outcome".
        role: &'static str,
        /// The name(s) looked for, quoted.
        wanted: String,
        /// The header's column names, quoted and comma-separated.
        available: String,
    },
    /// A row cannot be used; fix it or pass --skip-bad to count and skip such rows.
    #[error("{file}:{line}: {reason} (fix the row, or pass --skip-bad to skip and count bad rows)")]
    BadRow {
        /// The file.
        file: String,
        /// 1-based line.
        line: u64,
        /// What is wrong with it, quoting the field.
        reason: String,
    },
    /// The file holds no usable call.
    #[error("{file}: no call records to analyse ({detail})")]
    NoRecords {
        /// The file.
        file: String,
        /// Why: empty, all rows skipped, or no row on the chosen days.
        detail: String,
    },
    /// The interval length does not divide an hour into whole seconds.
    #[error("--interval '{text}': {reason}")]
    Interval {
        /// The text as given.
        text: String,
        /// What is expected.
        reason: String,
    },
    /// Zone offsets that do not fall on the same interval grid.
    #[error(
        "{file}:{line}: zone offset {offset} does not fall on the same {interval_min}-minute grid as the first row's offset {first}: choose an interval that divides both offsets"
    )]
    Grid {
        /// The file.
        file: String,
        /// 1-based line.
        line: u64,
        /// The row's offset, written `+05:30`.
        offset: String,
        /// The first row's offset.
        first: String,
        /// Interval length in minutes.
        interval_min: f64,
    },
    /// The records span more intervals than the limit (a stray year in a timestamp?).
    #[error(
        "{file}: the calls run from {first} to {last}, {intervals} intervals, beyond the limit of {limit}: check for a wrong year, or use a longer interval"
    )]
    Span {
        /// The file.
        file: String,
        /// First day, `2025-03-03`.
        first: String,
        /// Last day.
        last: String,
        /// Intervals needed.
        intervals: u64,
        /// The limit.
        limit: u64,
    },
    /// The holding times allow no law (every answered call lasted 0 s).
    #[error("{file}: cannot fit a holding-time law: {reason}")]
    Holding {
        /// The file.
        file: String,
        /// Why.
        reason: String,
    },
    /// A scenario could not be written from the analysis.
    #[error("cannot write a scenario from {file}: {reason}")]
    ScenarioOut {
        /// The call-record file.
        file: String,
        /// Why.
        reason: String,
    },
}

/// How to read and analyse a file.
#[derive(Debug, Clone)]
pub struct Options {
    /// Interval length (s); must divide an hour ([`parse_interval`]).
    pub interval_s: u32,
    /// Which columns hold the start, the holding time and the outcome.
    pub columns: Columns,
    /// Skip and count bad rows instead of stopping at the first.
    pub skip_bad: bool,
    /// Analyse only these local days (the timeline keeps every day).
    pub days: Option<DayFilter>,
    /// Size of the holding-time reservoir sample.
    pub reservoir: usize,
    /// Seed of the reservoir sampling (fixed, so results are reproducible).
    pub seed: u64,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            interval_s: DEFAULT_INTERVAL_S,
            columns: Columns::default(),
            skip_bad: false,
            days: None,
            reservoir: fit::RESERVOIR_SIZE,
            seed: fit::RESERVOIR_SEED,
        }
    }
}

/// Parse an interval length: a duration ("15m", "900") that is a whole
/// number of seconds, divides an hour and is at least one minute, so that
/// an hour is a whole number of intervals and intervals fall on the same
/// clock positions every day.
///
/// # Example
/// ```
/// use busyhour::records::parse_interval;
/// assert_eq!(parse_interval("15m").unwrap(), 900);
/// assert!(parse_interval("7m").is_err());
/// ```
pub fn parse_interval(text: &str) -> Result<u32, RecordsError> {
    let err = |reason: &str| RecordsError::Interval {
        text: text.to_string(),
        reason: reason.to_string(),
    };
    let s = crate::units::parse_duration(text).map_err(|e| err(&e.to_string()))?;
    if s.fract() != 0.0 || !(60.0..=3600.0).contains(&s) || 3600 % (s as u32) != 0 {
        return Err(err(
            "expected a whole number of seconds from 1 minute to 1 hour that divides an hour, like \"5m\", \"15m\", \"30m\" or \"1h\"",
        ));
    }
    Ok(s as u32)
}

/// Rows read, used and skipped.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RowCounts {
    /// Data rows read (header excluded).
    pub read: u64,
    /// Rows that were bad and skipped (`skip_bad`).
    pub skipped: u64,
    /// The first few skipped rows' messages (`file:line: reason`).
    pub skipped_examples: Vec<String>,
    /// Skipped rows by what was wrong: "start time" (its date too), "holding time",
    /// "waiting time", "outcome" or "other".
    pub skipped_by_kind: std::collections::BTreeMap<&'static str, u64>,
    /// Rows whose start falls on a day the filter leaves out.
    pub outside_days: u64,
}

/// What was wrong with a bad row, from its reason.
fn bad_row_kind(reason: &str) -> &'static str {
    if reason.starts_with("start time") || reason.starts_with("start date") {
        "start time"
    } else if reason.starts_with("duration") {
        "holding time"
    } else if reason.starts_with("waiting time") {
        "waiting time"
    } else if reason.starts_with("outcome") {
        "outcome"
    } else {
        "other"
    }
}

/// Calls by outcome on the analysed days.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Totals {
    /// Call attempts (rows).
    pub calls: u64,
    /// Answered (or no outcome given: taken as answered).
    pub answered: u64,
    /// Blocked: found no free server.
    pub blocked: u64,
    /// Abandoned before being answered.
    pub abandoned: u64,
}

/// Everything `busyhour records` finds in a file.
#[derive(Debug, Clone)]
pub struct Analysis {
    /// The file as named.
    pub file: String,
    /// Interval length (s).
    pub interval_s: u32,
    /// How the start times were written.
    pub time_kind: TimeKind,
    /// The offset from UTC (s) Unix-second times were read at, when given.
    pub unix_offset_s: Option<i32>,
    /// Whether the file has an outcome column.
    pub has_outcomes: bool,
    /// The day filter, if any.
    pub days: Option<DayFilter>,
    /// Rows read and skipped.
    pub rows: RowCounts,
    /// Calls by outcome on the analysed days.
    pub totals: Totals,
    /// Intervals and days.
    pub timeline: Timeline,
    /// Busy hours.
    pub busy_hour: BusyHour,
    /// Holding-time statistics and fitted laws.
    pub holding: HoldingSummary,
    /// Peakedness of the calls per interval (None with too few intervals).
    pub peakedness: Option<Peakedness>,
    /// The waiting-time column's name and the waits of answered and
    /// abandoned calls on the analysed days; None without a wait column.
    pub waits: Option<(String, WaitTally)>,
    /// Exponential patience fitted to the censored waits
    /// ([`patience`]); None without abandoned calls with a known wait.
    pub patience: Option<PatienceEstimate>,
}

/// Analyse a call-record file (see the module doc).
pub fn analyse(path: &Path, opts: &Options) -> Result<Analysis, RecordsError> {
    let file = path.display().to_string();
    let open_err = |reason: String| RecordsError::Open {
        file: file.clone(),
        reason,
    };
    if path.is_dir() {
        return Err(open_err("it is a directory, not a file".into()));
    }
    let f = std::fs::File::open(path).map_err(|e| open_err(e.to_string()))?;
    analyse_reader(std::io::BufReader::with_capacity(1 << 16, f), &file, opts)
}

/// Analyse call records from any reader; `file` names it in messages.
pub fn analyse_reader<R: Read>(
    input: R,
    file: &str,
    opts: &Options,
) -> Result<Analysis, RecordsError> {
    let mut reader = RecordReader::new(input, file, &opts.columns)?;
    let has_outcomes = reader.has_outcomes();
    let wait_column = reader.wait_column().map(str::to_string);
    let mut waits = WaitTally::default();
    let mut acc = intervals::Accumulator::new(opts.interval_s);
    let mut holding = HoldingSample::new(opts.reservoir, opts.seed);
    let mut rows = RowCounts::default();
    let mut time_kind: Option<(TimeKind, u64)> = None;
    while let Some(next) = reader.next_record() {
        rows.read += 1;
        let rec = match next.and_then(|r| check_kind(&mut time_kind, r, file)) {
            Ok(r) => r,
            Err(e @ RecordsError::BadRow { .. }) if opts.skip_bad => {
                rows.skipped += 1;
                if let RecordsError::BadRow { reason, .. } = &e {
                    *rows
                        .skipped_by_kind
                        .entry(bad_row_kind(reason))
                        .or_default() += 1;
                }
                if rows.skipped_examples.len() < SKIPPED_EXAMPLES {
                    rows.skipped_examples.push(e.to_string().replace(
                        " (fix the row, or pass --skip-bad to skip and count bad rows)",
                        "",
                    ));
                }
                continue;
            }
            Err(e) => return Err(e),
        };
        acc.add(&rec).map_err(|first| RecordsError::Grid {
            file: file.to_string(),
            line: rec.line,
            offset: time::Offset(rec.start.offset_s).to_string(),
            first: time::Offset(first).to_string(),
            interval_min: f64::from(opts.interval_s) / 60.0,
        })?;
        let day = rec.start.local_s().div_euclid(time::DAY_S as f64) as i64;
        if opts.days.as_ref().is_some_and(|f| !f.selects(day)) {
            rows.outside_days += 1;
            continue;
        }
        if rec.outcome.is_none_or(|o| o == Outcome::Answered) {
            holding.add(rec.duration_s);
        }
        if wait_column.is_some() && rec.outcome != Some(Outcome::Blocked) {
            waits.add(rec.outcome == Some(Outcome::Abandoned), rec.wait_s);
        }
    }
    let Some((time_kind, _)) = time_kind else {
        let detail = if rows.read == 0 {
            "the file has a header but no rows".to_string()
        } else {
            format!("all {} rows were bad and skipped", rows.read)
        };
        return Err(RecordsError::NoRecords {
            file: file.to_string(),
            detail,
        });
    };
    let mut timeline = acc.finish(opts.days.as_ref(), file)?;
    let totals = timeline.totals();
    if totals.calls == 0 {
        return Err(RecordsError::NoRecords {
            file: file.to_string(),
            detail: format!(
                "no call starts on the days chosen by --days '{}'",
                opts.days.as_ref().map_or("", |d| d.text.as_str())
            ),
        });
    }
    let holding = holding
        .summarise()
        .map_err(|reason| RecordsError::Holding {
            file: file.to_string(),
            reason,
        })?;
    timeline.set_offered(holding.mean_s);
    let busy_hour = busy_hour::find(&timeline);
    let peakedness = peakedness::measure(&timeline);
    Ok(Analysis {
        file: file.to_string(),
        interval_s: opts.interval_s,
        time_kind,
        unix_offset_s: opts
            .columns
            .unix_offset_s
            .filter(|_| time_kind == TimeKind::Unix),
        has_outcomes,
        days: opts.days.clone(),
        rows,
        totals,
        timeline,
        busy_hour,
        holding,
        peakedness,
        patience: wait_column.as_ref().and_then(|_| waits.exponential()),
        waits: wait_column.map(|c| (c, waits)),
    })
}

/// A file must write every start time the same way (zoned, naive or Unix):
/// local clocks of different kinds cannot be compared.
fn check_kind(
    kind: &mut Option<(TimeKind, u64)>,
    rec: CallRecord,
    file: &str,
) -> Result<CallRecord, RecordsError> {
    match *kind {
        None => {
            *kind = Some((rec.start.kind, rec.line));
            Ok(rec)
        }
        Some((k, _)) if k == rec.start.kind => Ok(rec),
        Some((k, line)) => Err(RecordsError::BadRow {
            file: file.to_string(),
            line: rec.line,
            reason: format!(
                "the start time is written as {}, but line {line} wrote {}: a file must write every start time the same way",
                rec.start.kind.describe(),
                k.describe()
            ),
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn intervals_must_divide_an_hour() {
        for (text, s) in [
            ("1m", 60),
            ("5m", 300),
            ("15m", 900),
            ("20m", 1200),
            ("1h", 3600),
            ("900", 900),
        ] {
            assert_eq!(parse_interval(text).unwrap(), s, "{text}");
        }
        for bad in ["7m", "30s", "2h", "15.5m", "0", "x", "61m"] {
            let e = parse_interval(bad).unwrap_err().to_string();
            assert!(e.contains(&format!("'{bad}'")), "{e}");
        }
    }
}
