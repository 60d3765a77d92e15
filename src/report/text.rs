//! How numbers, intervals and tables are written, for every command's
//! table, CSV and HTML page. The one place that knows how a share, an
//! erlang figure or a 95% interval looks on the page.

use crate::stats::{Estimate, Unit};
use crate::units::{format_share, trim_float};

/// A value with its unit: "1.84%", "4.2 E", "12.5 s"; "-" when undefined.
pub(crate) fn value(unit: Unit, x: f64) -> String {
    if x.is_nan() {
        return "-".into();
    }
    match unit {
        Unit::Share => format_share(x),
        Unit::Erlangs => format!("{} E", trim_float(x, 3)),
        Unit::Seconds => format!("{} s", trim_float(x, 2)),
        Unit::Count => trim_float(x, 1),
        Unit::Ratio => trim_float(x, 3),
    }
}

/// A value without its unit word (shares keep their "%"), for the ends of
/// an interval.
fn bare(unit: Unit, x: f64) -> String {
    match unit {
        Unit::Share => format_share(x),
        Unit::Erlangs => trim_float(x, 3),
        Unit::Seconds => trim_float(x, 2),
        Unit::Count => trim_float(x, 1),
        Unit::Ratio => trim_float(x, 3),
    }
}

/// The interval beside an estimate: "± h" when it is symmetric, otherwise
/// its two ends (cut to the figure's range, or widened by an exact bound
/// for rare events): "[0% to 0.031%]".
pub(crate) fn interval(unit: Unit, e: &Estimate) -> String {
    if !e.half_width.is_finite() || !e.low.is_finite() || !e.high.is_finite() {
        return "± ?".into();
    }
    // The unit stands beside every half-width and at the end of an
    // interval: "± 0.15 E", "[2.1 to 3.4 s]", "[0% to 0.031%]".
    if e.is_symmetric() {
        format!("± {}", value(unit, e.half_width))
    } else {
        format!("[{} to {}]", bare(unit, e.low), value(unit, e.high))
    }
}

/// An estimate and its interval in one cell: "1.84% ± 0.21%".
pub(crate) fn estimate(unit: Unit, e: &Estimate) -> String {
    format!("{} {}", value(unit, e.mean), interval(unit, e))
}

/// A number in a CSV cell: shortest round-trip form, empty when undefined.
pub(crate) fn csv_number(x: f64) -> String {
    if x.is_finite() {
        format!("{x}")
    } else {
        String::new()
    }
}

/// Seconds into the measured period as a label: the clock time of day when
/// the scenario gives `clock_start` ("09:45"), otherwise the time from the
/// end of the warm-up ("1:45").
pub(crate) fn clock_at(clock_start_s: Option<f64>, seconds: f64) -> String {
    match clock_start_s {
        Some(c) => crate::units::format_time_of_day(c + seconds),
        None => clock(seconds),
    }
}

/// Seconds as a clock from the end of the warm-up: "1:45".
pub(crate) fn clock(seconds: f64) -> String {
    let m = (seconds / 60.0).round() as u64;
    format!("{}:{:02}", m / 60, m % 60)
}

/// A titled table: the first row is the header.
pub struct Table {
    /// Heading above the table.
    pub title: String,
    /// Header row, then data rows.
    pub rows: Vec<Vec<String>>,
}

/// Column-aligned text, each line indented.
pub(crate) fn align(rows: &[Vec<String>], indent: &str) -> String {
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

/// Rows written as CSV (the header first).
pub(crate) fn csv<I, R, S>(rows: I) -> String
where
    I: IntoIterator<Item = R>,
    R: IntoIterator<Item = S>,
    S: AsRef<[u8]>,
{
    let mut w = csv::Writer::from_writer(Vec::new());
    for row in rows {
        // Writing to memory cannot fail.
        let _ = w.write_record(row);
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}
