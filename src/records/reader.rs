//! Streaming reader of call-record CSV files: one row a call, a header naming
//! the columns. Holds one row at a time; owns column lookup and row checks.

use super::RecordsError;
use super::time::{self, Timestamp};
use std::io::Read;

/// Longest holding time accepted for one call (s): seven days. A longer
/// one is surely a broken record, and splitting it over intervals would cost
/// time for nothing.
pub const MAX_HOLDING_S: f64 = 7.0 * 86_400.0;

/// Longest physical line accepted (bytes): 1 MiB. A call record is a few
/// dozen bytes; a longer line is not a call-record file (or a quote left
/// open), and the CSV reader would otherwise hold it whole in memory.
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// Longest field read as a start time, holding time or outcome (bytes).
const MAX_FIELD_BYTES: usize = 100;

/// Column names tried, in order, when the user names no start column.
pub const START_NAMES: [&str; 5] = ["start", "start_time", "started", "time", "timestamp"];
/// Column names tried when the user names no date column. The date column
/// is used only for rows whose start holds a time of day without a date
/// (`08:15:30`); it is optional, like the outcome.
pub const DATE_NAMES: [&str; 3] = ["date", "call_date", "start_date"];
/// Column names tried when the user names no duration column.
pub const DURATION_NAMES: [&str; 6] = [
    "duration",
    "duration_s",
    "holding",
    "holding_s",
    "holding_time",
    "talk_s",
];
/// Column names tried when the user names no waiting-time column (the wait
/// is optional: without one, no patience law can be fitted).
pub const WAIT_NAMES: [&str; 6] = [
    "wait",
    "wait_s",
    "wait_time",
    "waiting_time",
    "queue_s",
    "queue_time",
];
/// Column names tried when the user names no outcome column (the outcome is
/// optional: without one, every call is taken as answered).
pub const OUTCOME_NAMES: [&str; 4] = ["outcome", "result", "status", "disposition"];

/// How a call attempt ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outcome {
    /// Answered (carried): `answered`, `completed`, `connected`, `carried`, `served`, `ok`.
    Answered,
    /// Blocked: found no free server (`blocked`, `busy`, `congestion`, `lost`, `rejected`).
    Blocked,
    /// Abandoned while waiting (`abandoned`, `abandon`, `reneged`).
    Abandoned,
}

impl Outcome {
    /// Read an outcome word (case and surrounding spaces ignored).
    pub fn parse(text: &[u8]) -> Option<Outcome> {
        let t = text.trim_ascii();
        let is = |words: &[&str]| words.iter().any(|w| t.eq_ignore_ascii_case(w.as_bytes()));
        if is(&[
            "answered",
            "completed",
            "connected",
            "carried",
            "served",
            "ok",
        ]) {
            Some(Outcome::Answered)
        } else if is(&["blocked", "busy", "congestion", "lost", "rejected"]) {
            Some(Outcome::Blocked)
        } else if is(&["abandoned", "abandon", "reneged"]) {
            Some(Outcome::Abandoned)
        } else {
            None
        }
    }

    /// Read a kind of ending by its name: "answered", "blocked" or
    /// "abandoned" (for a mapping of the system's own words).
    pub fn from_kind(text: &str) -> Option<Outcome> {
        match text.trim().to_ascii_lowercase().as_str() {
            "answered" => Some(Outcome::Answered),
            "blocked" => Some(Outcome::Blocked),
            "abandoned" => Some(Outcome::Abandoned),
            _ => None,
        }
    }

    /// The word written by [`super::synthetic`] and in reports.
    pub fn word(self) -> &'static str {
        match self {
            Outcome::Answered => "answered",
            Outcome::Blocked => "blocked",
            Outcome::Abandoned => "abandoned",
        }
    }
}

/// Which columns to read; `None` tries the usual names ([`START_NAMES`],
/// [`DURATION_NAMES`], [`OUTCOME_NAMES`]).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Columns {
    /// Start time column.
    pub start: Option<String>,
    /// Date column, for a start written as a date column and a time-of-day
    /// column; when named it must exist.
    pub date: Option<String>,
    /// Holding time (duration) column.
    pub duration: Option<String>,
    /// Outcome column; when named it must exist.
    pub outcome: Option<String>,
    /// Waiting-time column (time in the queue before the call was answered
    /// or abandoned); when named it must exist.
    pub wait: Option<String>,
    /// The system's own outcome words, each mapped to how the call ended
    /// ("NO ANSWER" to abandoned); tried before the usual words, case and
    /// surrounding spaces ignored.
    pub outcome_words: Vec<(String, Outcome)>,
    /// The fixed offset from UTC (s) of the local clock that Unix-second
    /// start times are read at (None: UTC). Times written with their own
    /// offset or as naive local times are not changed.
    pub unix_offset_s: Option<i32>,
}

/// One call from the file.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CallRecord {
    /// 1-based line of the row in the file.
    pub line: u64,
    /// When the call started.
    pub start: Timestamp,
    /// How long it held (s), >= 0.
    pub duration_s: f64,
    /// How it ended; `None` when the file has no outcome column.
    pub outcome: Option<Outcome>,
    /// Time waited before being answered or abandoning (s, >= 0); `None`
    /// without a wait column or when the row's wait field is empty.
    pub wait_s: Option<f64>,
}

/// Reads calls one at a time; memory does not depend on the file's length.
pub struct RecordReader<R: Read> {
    csv: csv::Reader<LineCap<R>>,
    row: csv::ByteRecord,
    file: String,
    start: usize,
    date: Option<usize>,
    date_name: String,
    duration: usize,
    outcome: Option<usize>,
    wait: Option<usize>,
    wait_name: String,
    outcome_words: Vec<(String, Outcome)>,
    unix_offset_s: Option<i32>,
    names: [String; 3],
    done: bool,
}

fn quote_list(names: &[&str]) -> String {
    names
        .iter()
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Cut a field for a message: at most 40 characters, lossy UTF-8, control
/// characters escaped (so that a message stays one line).
fn shown(field: &[u8]) -> String {
    let s = String::from_utf8_lossy(field);
    let s = s.trim();
    let cut = match s.char_indices().nth(40) {
        Some((i, _)) => format!("{}...", &s[..i]),
        None => s.to_string(),
    };
    cut.chars()
        .flat_map(|c| {
            if c.is_control() {
                c.escape_default().collect::<Vec<_>>()
            } else {
                vec![c]
            }
        })
        .collect()
}

/// A physical line longer than [`MAX_LINE_BYTES`], raised by [`LineCap`]
/// through the CSV reader as an I/O error.
#[derive(Debug)]
struct LongLine;

impl std::fmt::Display for LongLine {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "a line is longer than 1 MiB: not a call-record file (or a quote left open)"
        )
    }
}

impl std::error::Error for LongLine {}

/// Passes bytes through, failing once a line runs past [`MAX_LINE_BYTES`]
/// without a line break, so a hostile file cannot make the CSV reader
/// buffer gigabytes. Scans each chunk backwards to its last line break only.
struct LineCap<R> {
    inner: R,
    since_newline: usize,
}

impl<R: Read> Read for LineCap<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        match buf[..n].iter().rposition(|&b| b == b'\n') {
            Some(i) => self.since_newline = n - i - 1,
            None => self.since_newline += n,
        }
        if self.since_newline > MAX_LINE_BYTES {
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                LongLine,
            ));
        }
        Ok(n)
    }
}

/// The reader's error as a message, and whether it is a [`LongLine`].
fn csv_reason(e: &csv::Error) -> (String, bool) {
    if let csv::ErrorKind::Io(io) = e.kind()
        && let Some(long) = io.get_ref().and_then(|r| r.downcast_ref::<LongLine>())
    {
        return (long.to_string(), true);
    }
    (e.to_string().replace(['\n', '\r'], " "), false)
}

impl<R: Read> RecordReader<R> {
    /// Read the header and find the columns. `file` names the input in errors.
    pub fn new(input: R, file: &str, columns: &Columns) -> Result<Self, RecordsError> {
        let mut csv = csv::ReaderBuilder::new()
            .has_headers(true)
            .flexible(true)
            .from_reader(LineCap {
                inner: input,
                since_newline: 0,
            });
        let header = csv
            .byte_headers()
            .map_err(|e| RecordsError::Csv {
                file: file.to_string(),
                line: 1,
                reason: csv_reason(&e).0,
            })?
            .clone();
        let names: Vec<String> = header
            .iter()
            .map(|h| {
                let name = String::from_utf8_lossy(h);
                shown(name.trim_start_matches('\u{feff}').as_bytes())
            })
            .collect();
        if names.iter().all(String::is_empty) {
            return Err(RecordsError::NoRecords {
                file: file.to_string(),
                detail: "the file is empty: expected a header line naming the columns, then one row a call".into(),
            });
        }
        let available = quote_list(&names.iter().map(String::as_str).collect::<Vec<_>>());
        let find = |role: &'static str,
                    given: &Option<String>,
                    defaults: &[&str]|
         -> Result<Option<usize>, RecordsError> {
            let wanted: Vec<&str> = match given {
                Some(g) => vec![g.as_str()],
                None => defaults.to_vec(),
            };
            for w in &wanted {
                if let Some(i) = names.iter().position(|n| n == w) {
                    return Ok(Some(i));
                }
            }
            for w in &wanted {
                if let Some(i) = names.iter().position(|n| n.eq_ignore_ascii_case(w)) {
                    return Ok(Some(i));
                }
            }
            if matches!(role, "outcome" | "date" | "wait") && given.is_none() {
                return Ok(None);
            }
            Err(RecordsError::NoColumn {
                file: file.to_string(),
                role,
                wanted: quote_list(&wanted),
                available: available.clone(),
            })
        };
        let start = find("start", &columns.start, &START_NAMES)?.unwrap_or_default();
        let date = find("date", &columns.date, &DATE_NAMES)?;
        let duration = find("duration", &columns.duration, &DURATION_NAMES)?.unwrap_or_default();
        let outcome = find("outcome", &columns.outcome, &OUTCOME_NAMES)?;
        let wait = find("wait", &columns.wait, &WAIT_NAMES)?;
        let column_names = [
            names[start].clone(),
            names[duration].clone(),
            outcome.map(|i| names[i].clone()).unwrap_or_default(),
        ];
        Ok(RecordReader {
            csv,
            row: csv::ByteRecord::new(),
            file: file.to_string(),
            start,
            date,
            date_name: date.map(|i| names[i].clone()).unwrap_or_default(),
            duration,
            outcome,
            wait,
            wait_name: wait.map(|i| names[i].clone()).unwrap_or_default(),
            outcome_words: columns.outcome_words.clone(),
            unix_offset_s: columns.unix_offset_s,
            names: column_names,
            done: false,
        })
    }

    /// The name of the date column used for time-of-day starts, if any.
    pub fn date_column(&self) -> Option<&str> {
        self.date.map(|_| self.date_name.as_str())
    }

    /// Whether the file has an outcome column.
    pub fn has_outcomes(&self) -> bool {
        self.outcome.is_some()
    }

    /// The name of the waiting-time column, if any.
    pub fn wait_column(&self) -> Option<&str> {
        self.wait.map(|_| self.wait_name.as_str())
    }

    /// The names of the start, duration and outcome columns used (the
    /// outcome's is empty when there is none).
    pub fn column_names(&self) -> &[String; 3] {
        &self.names
    }

    /// The next call: `None` at the end of the file, an error for a row that
    /// cannot be used ([`RecordsError::BadRow`], which a caller may skip) or
    /// for a file that cannot be read on ([`RecordsError::Csv`]). Blank lines
    /// are skipped.
    pub fn next_record(&mut self) -> Option<Result<CallRecord, RecordsError>> {
        if self.done {
            return None;
        }
        loop {
            match self.csv.read_byte_record(&mut self.row) {
                Ok(false) => {
                    self.done = true;
                    return None;
                }
                Ok(true) => {}
                Err(e) => {
                    self.done = true;
                    let (reason, long) = csv_reason(&e);
                    // A long line fails mid-record: the line it began on is
                    // where the last complete record ended.
                    let line = match e.position() {
                        Some(p) if !long => p.line(),
                        _ => self.csv.position().line().max(1),
                    };
                    return Some(Err(RecordsError::Csv {
                        file: self.file.clone(),
                        line,
                        reason,
                    }));
                }
            }
            // The csv reader already skips empty lines; a line of only
            // spaces or commas is skipped here too.
            if self.row.iter().all(|f| f.trim_ascii().is_empty()) {
                continue;
            }
            // The csv reader dates a record from where it began looking,
            // before any blank lines; the line after the record's end, less
            // its terminator and any line breaks inside quoted fields, is
            // exact (except for blank lines before a last row that has no
            // line break at its end).
            let before = self.row.position().map_or(1, |p| p.line());
            let inner = self.row.as_slice().iter().filter(|&&b| b == b'\n').count() as u64;
            let after = self.csv.position().line();
            let line = before.max(after.saturating_sub(1 + inner));
            return Some(self.parse_row(line));
        }
    }

    fn parse_row(&self, line: u64) -> Result<CallRecord, RecordsError> {
        let bad = |reason: String| RecordsError::BadRow {
            file: self.file.clone(),
            line,
            reason,
        };
        let field = |i: usize, name: &str| -> Result<&[u8], RecordsError> {
            match self.row.get(i) {
                Some(f) if f.len() > MAX_FIELD_BYTES => Err(bad(format!(
                    "column \"{name}\" holds {} bytes ('{}'): too long for a start time, holding time or outcome (a quote left open?)",
                    f.len(),
                    shown(f)
                ))),
                Some(f) if f.iter().any(|&b| b.is_ascii_control() && b != b'\t') => {
                    Err(bad(format!(
                        "column \"{name}\" holds a line break or control character ('{}'): a quote left open, or not a text file?",
                        shown(f)
                    )))
                }
                Some(f) if !f.trim_ascii().is_empty() => Ok(f),
                Some(_) => Err(bad(format!("column \"{name}\" is empty"))),
                None => Err(bad(format!(
                    "the row has {} columns, too few for \"{name}\" (column {})",
                    self.row.len(),
                    i + 1
                ))),
            }
        };
        let [start_name, duration_name, outcome_name] = &self.names;
        let start_field = field(self.start, start_name)?;
        let start_text = std::str::from_utf8(start_field)
            .map_err(|_| bad(format!("column \"{start_name}\" is not UTF-8 text")))?;
        let mut start = if time::is_time_of_day(start_text) {
            let Some(date) = self.date else {
                return Err(bad(format!(
                    "start time '{}' in column \"{start_name}\" is a time of day without a date: name the date column with --date (looked for {})",
                    shown(start_field),
                    quote_list(&DATE_NAMES)
                )));
            };
            let date_name = &self.date_name;
            let date_field = field(date, date_name)?;
            let date_text = std::str::from_utf8(date_field)
                .map_err(|_| bad(format!("column \"{date_name}\" is not UTF-8 text")))?;
            time::parse_date(date_text)
                .map_err(|e| bad(format!("start date in column \"{date_name}\": {e}")))?;
            time::parse_date_and_time(date_text, start_text)
                .map_err(|e| bad(format!("start time in column \"{start_name}\": {e}")))?
        } else {
            time::parse_timestamp(start_text).map_err(|e| match e {
                // Beside a date column a time of day is the likely intent.
                time::TimeError::Timestamp(_) if self.date.is_some() => bad(format!(
                    "start time in column \"{start_name}\": {}",
                    time::TimeError::TimeOfDay(start_text.to_string())
                )),
                e => bad(format!("start time: {e}")),
            })?
        };
        if let (time::TimeKind::Unix, Some(offset)) = (start.kind, self.unix_offset_s) {
            start.offset_s = offset;
        }
        let duration_field = field(self.duration, duration_name)?;
        let duration_text = std::str::from_utf8(duration_field)
            .map_err(|_| bad(format!("column \"{duration_name}\" is not UTF-8 text")))?;
        let duration_s =
            time::parse_holding(duration_text).map_err(|e| bad(format!("duration: {e}")))?;
        if duration_s > MAX_HOLDING_S {
            return Err(bad(format!(
                "duration '{}' is longer than the 7-day limit for one call",
                shown(duration_field)
            )));
        }
        let outcome = match self.outcome {
            None => None,
            Some(i) => {
                let f = field(i, outcome_name)?;
                let word = f.trim_ascii();
                let mapped = (self.outcome_words.iter())
                    .find(|(w, _)| word.eq_ignore_ascii_case(w.trim().as_bytes()))
                    .map(|&(_, o)| o);
                Some(mapped.or_else(|| Outcome::parse(f)).ok_or_else(|| {
                    bad(format!(
                        "outcome '{}' is not known: expected answered (or completed, connected), blocked (or busy, congestion, lost, rejected) or abandoned, or map the word with --outcome-word \"{}=abandoned\"",
                        shown(f),
                        shown(f)
                    ))
                })?)
            }
        };
        // An empty wait is unknown (some systems leave it blank): the row
        // counts, but not in the patience estimate.
        let wait_s = match self.wait.map(|i| (i, self.row.get(i))) {
            None | Some((_, None)) => None,
            Some((_, Some(f))) if f.trim_ascii().is_empty() => None,
            Some((i, Some(_))) => {
                let name = &self.wait_name;
                let f = field(i, name)?;
                let text = std::str::from_utf8(f)
                    .map_err(|_| bad(format!("column \"{name}\" is not UTF-8 text")))?;
                let w = time::parse_holding(text).map_err(|_| {
                    bad(format!(
                        "waiting time in column \"{name}\": '{}' is not a time: expected seconds (\"42\"), a clock duration (\"0:00:42\", \"0:42\") or a time like \"42s\"",
                        shown(f)
                    ))
                })?;
                if w > MAX_HOLDING_S {
                    return Err(bad(format!(
                        "waiting time '{}' in column \"{name}\" is longer than the 7-day limit",
                        shown(f)
                    )));
                }
                Some(w)
            }
        };
        Ok(CallRecord {
            line,
            start,
            duration_s,
            outcome,
            wait_s,
        })
    }
}
