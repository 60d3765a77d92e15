//! Times in call records: RFC 3339 / ISO 8601 timestamps (with a zone offset
//! or naive local time) and Unix seconds; holding times in seconds or as
//! `h:mm:ss`; civil-date arithmetic. Owns text <-> time only.
//!
//! Civil dates use Howard Hinnant's algorithms "days_from_civil" and
//! "civil_from_days" (proleptic Gregorian calendar, 1970-01-01 is day 0),
//! from "chrono-Compatible Low-Level Date Algorithms" (2013).

use crate::units;
use std::fmt;

/// Seconds in a civil day.
pub const DAY_S: i64 = 86_400;

/// Largest zone offset accepted (s): ±18:00, the RFC 3339 / ISO 8601 range
/// used in practice (recalled from the ISO 8601 standard's time-offset range).
pub const MAX_OFFSET_S: i32 = 18 * 3600;

/// How a timestamp was written; a file must use one kind throughout, since
/// local clocks of different kinds cannot be compared.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeKind {
    /// RFC 3339 / ISO 8601 with an offset (`Z`, `+02:00`, `-0500`, `+01`).
    Zoned,
    /// ISO 8601 without an offset: a local clock time of an unnamed zone.
    Naive,
    /// Seconds since 1970-01-01T00:00:00Z.
    Unix,
}

impl TimeKind {
    /// The kind in plain words.
    pub fn describe(self) -> &'static str {
        match self {
            TimeKind::Zoned => "date and time with a zone offset",
            TimeKind::Naive => "date and time without a zone offset",
            TimeKind::Unix => "Unix seconds",
        }
    }
}

/// A call's start: an instant plus the zone offset of the clock it was
/// written in. The *local clock* time is `utc_s + offset_s`; intervals and
/// busy hours are placed on it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Timestamp {
    /// Seconds since 1970-01-01T00:00:00Z (for naive times: since local
    /// midnight of 1970-01-01, the offset being 0).
    pub utc_s: f64,
    /// Offset of the local clock from UTC (s); 0 for naive and Unix times.
    pub offset_s: i32,
    /// How it was written.
    pub kind: TimeKind,
}

impl Timestamp {
    /// Local clock time in seconds since local midnight of 1970-01-01.
    pub fn local_s(&self) -> f64 {
        self.utc_s + f64::from(self.offset_s)
    }
}

/// Why a time field could not be read. Messages quote the text.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TimeError {
    /// Not a timestamp of any accepted form.
    #[error(
        "'{0}' is not a start time: expected RFC 3339 / ISO 8601 like \"2025-03-03T10:15:00+01:00\" or \"2025-03-03 10:15:00\", or Unix seconds"
    )]
    Timestamp(String),
    /// The form is right but a part is out of range (month 13, 25:00, offset beyond ±18:00).
    #[error("'{text}': {part} is out of range ({expected})")]
    Range {
        /// The text as given.
        text: String,
        /// Which part.
        part: &'static str,
        /// The allowed range.
        expected: &'static str,
    },
    /// Not a date (in a date column beside a time-of-day column).
    #[error("'{0}' is not a date: expected year-month-day like \"2026-03-02\" or \"2026/03/02\"")]
    Date(String),
    /// Not a time of day (in a start column beside a date column).
    #[error(
        "'{0}' is not a time of day: expected hh:mm, hh:mm:ss or hh:mm:ss.fff, like \"08:15:30\", optionally with a zone offset (\"08:15:30+01:00\")"
    )]
    TimeOfDay(String),
    /// Not a holding time.
    #[error(
        "'{0}' is not a holding time: expected seconds (\"182.5\"), a clock duration (\"0:03:02\", \"3:02\") or a time like \"3m2s\""
    )]
    Holding(String),
}

/// Days since 1970-01-01 of a proleptic Gregorian date (Hinnant's
/// `days_from_civil`). `month` is 1..=12, `day` 1..=31 (not checked here).
///
/// # Example
/// ```
/// use busyhour::records::time::days_from_civil;
/// assert_eq!(days_from_civil(1970, 1, 1), 0);
/// assert_eq!(days_from_civil(2000, 3, 1), 11017);
/// ```
pub fn days_from_civil(year: i64, month: u32, day: u32) -> i64 {
    let y = if month <= 2 { year - 1 } else { year };
    let era = y.div_euclid(400);
    let yoe = y - era * 400; // [0, 399]
    let m = i64::from(month);
    let mp = if m > 2 { m - 3 } else { m + 9 }; // March = 0
    let doy = (153 * mp + 2) / 5 + i64::from(day) - 1; // [0, 365]
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy; // [0, 146096]
    era * 146_097 + doe - 719_468
}

/// The proleptic Gregorian date (year, month, day) of a day number
/// (Hinnant's `civil_from_days`); the inverse of [`days_from_civil`].
pub fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097; // [0, 146096]
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365; // [0, 399]
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100); // [0, 365]
    let mp = (5 * doy + 2) / 153; // [0, 11]
    let day = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let month = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let year = yoe + era * 400 + i64::from(month <= 2);
    (year, month, day)
}

/// Day of the week of a day number: 0 = Monday ... 6 = Sunday
/// (1970-01-01 was a Thursday).
pub fn weekday(days: i64) -> u32 {
    (days + 3).rem_euclid(7) as u32
}

/// Short English name of a weekday number (0 = Monday).
pub fn weekday_name(weekday: u32) -> &'static str {
    ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"][(weekday % 7) as usize]
}

fn is_leap(year: i64) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

fn days_in_month(year: i64, month: u32) -> u32 {
    match month {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        _ if is_leap(year) => 29,
        _ => 28,
    }
}

/// A day number written as `2025-03-03`.
pub struct Date(pub i64);

impl fmt::Display for Date {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let (y, m, d) = civil_from_days(self.0);
        write!(f, "{y:04}-{m:02}-{d:02}")
    }
}

/// A time of day in seconds after midnight written as `10:15` (or
/// `10:15:30` when not on a whole minute); 86400 is written `24:00`.
pub struct Clock(pub i64);

impl fmt::Display for Clock {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&crate::units::format_clock(self.0))
    }
}

/// A zone offset written as `+01:00` (`Z` is written `+00:00`).
pub struct Offset(pub i32);

impl fmt::Display for Offset {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sign = if self.0 < 0 { '-' } else { '+' };
        let a = self.0.unsigned_abs();
        write!(f, "{sign}{:02}:{:02}", a / 3600, (a / 60) % 60)
    }
}

/// Local clock seconds (whole) written as RFC 3339 with the offset, or naive
/// ISO 8601 when `offset` is `None`: `2025-03-03T10:15:00+01:00`.
pub fn format_local(local_s: i64, offset: Option<i32>) -> String {
    let day = local_s.div_euclid(DAY_S);
    let clock = local_s.rem_euclid(DAY_S);
    let (h, m, s) = (clock / 3600, (clock / 60) % 60, clock % 60);
    let date = Date(day);
    match offset {
        Some(o) => format!("{date}T{h:02}:{m:02}:{s:02}{}", Offset(o)),
        None => format!("{date}T{h:02}:{m:02}:{s:02}"),
    }
}

/// Reads `n` ASCII digits at `pos` as a number.
fn digits(b: &[u8], pos: usize, n: usize) -> Option<u32> {
    let part = b.get(pos..pos + n)?;
    let mut v = 0u32;
    for &c in part {
        if !c.is_ascii_digit() {
            return None;
        }
        v = v * 10 + u32::from(c - b'0');
    }
    Some(v)
}

/// Parse a call's start time.
///
/// Accepted forms:
/// * RFC 3339 / ISO 8601 extended: `YYYY-MM-DD`, then `T`, `t` or a space,
///   then `hh:mm`, `hh:mm:ss` or `hh:mm:ss.fff`, then optionally a zone:
///   `Z`, `+hh:mm`, `+hhmm` or `+hh` (or `-`). Without a zone the time is a
///   naive local clock time ([`TimeKind::Naive`], offset 0).
/// * Unix seconds: a number, optionally with a fraction (`1741000000.5`),
///   taken as UTC ([`TimeKind::Unix`], offset 0).
///
/// A leap second (`:60`) is read as the next second's start.
///
/// # Example
/// ```
/// use busyhour::records::time::{parse_timestamp, TimeKind};
/// let t = parse_timestamp("2025-03-03T10:15:00+01:00").unwrap();
/// assert_eq!((t.utc_s, t.offset_s, t.kind), (1740993300.0, 3600, TimeKind::Zoned));
/// assert_eq!(t.local_s(), 1740996900.0);
/// assert_eq!(parse_timestamp("1740993300").unwrap().utc_s, 1740993300.0);
/// ```
pub fn parse_timestamp(text: &str) -> Result<Timestamp, TimeError> {
    let t = text.trim();
    let b = t.as_bytes();
    let bad = || TimeError::Timestamp(text.to_string());
    let range = |part, expected| TimeError::Range {
        text: text.to_string(),
        part,
        expected,
    };
    // Unix seconds: digits with at most one '.', no date separators.
    if !b.is_empty()
        && b.iter().all(|c| c.is_ascii_digit() || *c == b'.')
        && b.iter().filter(|c| **c == b'.').count() <= 1
        && b[0] != b'.'
        && !(b.len() >= 5 && b[4] == b'-')
    {
        let v: f64 = t.parse().map_err(|_| bad())?;
        // Up to year 9999: 253,402,300,800 s.
        if !(v.is_finite() && v < 253_402_300_800.0) {
            return Err(range("Unix seconds", "0 to 253402300799"));
        }
        return Ok(Timestamp {
            utc_s: v,
            offset_s: 0,
            kind: TimeKind::Unix,
        });
    }
    if b.len() < 16
        || b[4] != b'-'
        || b[7] != b'-'
        || !matches!(b[10], b'T' | b't' | b' ')
        || b[13] != b':'
    {
        return Err(bad());
    }
    let year = digits(b, 0, 4).ok_or_else(bad)?;
    let month = digits(b, 5, 2).ok_or_else(bad)?;
    let day = digits(b, 8, 2).ok_or_else(bad)?;
    let hour = digits(b, 11, 2).ok_or_else(bad)?;
    let minute = digits(b, 14, 2).ok_or_else(bad)?;
    let mut pos = 16;
    let mut second = 0.0f64;
    if b.get(pos) == Some(&b':') {
        let whole = digits(b, pos + 1, 2).ok_or_else(bad)?;
        pos += 3;
        let mut frac = 0.0;
        if b.get(pos) == Some(&b'.') || b.get(pos) == Some(&b',') {
            let start = pos + 1;
            let mut end = start;
            while end < b.len() && b[end].is_ascii_digit() {
                end += 1;
            }
            if end == start || end - start > 9 {
                return Err(bad());
            }
            let mut scale = 0.1;
            for &c in &b[start..end] {
                frac += f64::from(c - b'0') * scale;
                scale /= 10.0;
            }
            pos = end;
        }
        if whole > 60 {
            return Err(range("second", "00 to 59 (60 for a leap second)"));
        }
        second = f64::from(whole) + frac;
    }
    if !(1..=12).contains(&month) {
        return Err(range("month", "01 to 12"));
    }
    if day < 1 || day > days_in_month(i64::from(year), month) {
        return Err(range("day", "1 to the last day of the month"));
    }
    if hour > 23 {
        return Err(range("hour", "00 to 23"));
    }
    if minute > 59 {
        return Err(range("minute", "00 to 59"));
    }
    let rest = &b[pos..];
    let (offset_s, kind) = match rest {
        [] => (0, TimeKind::Naive),
        [b'Z' | b'z'] => (0, TimeKind::Zoned),
        [sign @ (b'+' | b'-'), tail @ ..] => {
            let (oh, om) = match tail {
                [_, _] => (digits(tail, 0, 2).ok_or_else(bad)?, 0),
                [_, _, _, _] => (
                    digits(tail, 0, 2).ok_or_else(bad)?,
                    digits(tail, 2, 2).ok_or_else(bad)?,
                ),
                [_, _, b':', _, _] => (
                    digits(tail, 0, 2).ok_or_else(bad)?,
                    digits(tail, 3, 2).ok_or_else(bad)?,
                ),
                _ => return Err(bad()),
            };
            if om > 59 {
                return Err(range("offset minutes", "00 to 59"));
            }
            let o = (oh * 3600 + om * 60) as i32;
            if o > MAX_OFFSET_S {
                return Err(range("zone offset", "-18:00 to +18:00"));
            }
            (if *sign == b'-' { -o } else { o }, TimeKind::Zoned)
        }
        _ => return Err(bad()),
    };
    let days = days_from_civil(i64::from(year), month, day);
    let local = days * DAY_S + i64::from(hour * 3600 + minute * 60);
    Ok(Timestamp {
        utc_s: (local - i64::from(offset_s)) as f64 + second,
        offset_s,
        kind,
    })
}

/// Whether a start field is a time of day without a date (`8:15`,
/// `08:15:30.5`, `08:15+01:00`): one or two digits, then a colon. Such a
/// start needs a date column ([`parse_date_and_time`]); a full timestamp or
/// Unix seconds never starts that way.
pub fn is_time_of_day(text: &str) -> bool {
    let b = text.trim().as_bytes();
    let digits = b.iter().take_while(|c| c.is_ascii_digit()).count();
    (1..=2).contains(&digits) && b.get(digits) == Some(&b':')
}

/// Parse a date written year first: `2026-03-02` or `2026/03/02` (month
/// and day with one or two digits), to a day number ([`days_from_civil`]).
///
/// # Example
/// ```
/// use busyhour::records::time::{days_from_civil, parse_date};
/// assert_eq!(parse_date("2026-03-02").unwrap(), days_from_civil(2026, 3, 2));
/// assert_eq!(parse_date("2026/3/2").unwrap(), days_from_civil(2026, 3, 2));
/// assert!(parse_date("02/03/2026").is_err());
/// ```
pub fn parse_date(text: &str) -> Result<i64, TimeError> {
    let t = text.trim();
    let bad = || TimeError::Date(text.to_string());
    let sep = if t.contains('-') { '-' } else { '/' };
    let parts: Vec<&str> = t.split(sep).collect();
    let [y, m, d] = parts.as_slice() else {
        return Err(bad());
    };
    let number = |p: &str, len: std::ops::RangeInclusive<usize>| -> Option<u32> {
        (len.contains(&p.len()) && p.bytes().all(|c| c.is_ascii_digit()))
            .then(|| p.parse().ok())
            .flatten()
    };
    let year = number(y, 4..=4).ok_or_else(bad)?;
    let month = number(m, 1..=2).ok_or_else(bad)?;
    let day = number(d, 1..=2).ok_or_else(bad)?;
    if !(1..=12).contains(&month) {
        return Err(TimeError::Range {
            text: text.to_string(),
            part: "month",
            expected: "01 to 12",
        });
    }
    if day < 1 || day > days_in_month(i64::from(year), month) {
        return Err(TimeError::Range {
            text: text.to_string(),
            part: "day",
            expected: "1 to the last day of the month",
        });
    }
    Ok(days_from_civil(i64::from(year), month, day))
}

/// A start split into a date (`2026-03-02`, [`parse_date`]) and a time of
/// day (`08:15:30`, `8:15`, `08:15:30.25`, optionally with a zone offset
/// as in [`parse_timestamp`]): the same [`Timestamp`] as the joined
/// `2026-03-02T08:15:30`. The error names the part that is wrong.
///
/// # Example
/// ```
/// use busyhour::records::time::{parse_date_and_time, parse_timestamp};
/// let t = parse_date_and_time("2026-03-02", "8:15:30").unwrap();
/// assert_eq!(t, parse_timestamp("2026-03-02T08:15:30").unwrap());
/// ```
pub fn parse_date_and_time(date: &str, time_of_day: &str) -> Result<Timestamp, TimeError> {
    let day = parse_date(date)?;
    let t = time_of_day.trim();
    let bad = || TimeError::TimeOfDay(time_of_day.to_string());
    if !is_time_of_day(t) {
        return Err(bad());
    }
    let padded = if t.as_bytes()[1] == b':' {
        format!("0{t}")
    } else {
        t.to_string()
    };
    let joined = format!("{}T{padded}", Date(day));
    match parse_timestamp(&joined) {
        Ok(ts) => Ok(ts),
        Err(TimeError::Range { part, expected, .. }) => Err(TimeError::Range {
            text: time_of_day.to_string(),
            part,
            expected,
        }),
        Err(_) => Err(bad()),
    }
}

/// Parse a holding time to seconds: a number of seconds (`182.5`), a clock
/// duration `h:mm:ss` or `mm:ss` (each with an optional fraction on the
/// seconds), or a duration with units as in the scenario file (`3m2s`).
/// The result is finite and >= 0.
///
/// # Example
/// ```
/// use busyhour::records::time::parse_holding;
/// assert_eq!(parse_holding("182.5").unwrap(), 182.5);
/// assert_eq!(parse_holding("0:03:02").unwrap(), 182.0);
/// assert_eq!(parse_holding("3:02.5").unwrap(), 182.5);
/// assert_eq!(parse_holding("1:00:00").unwrap(), 3600.0);
/// ```
pub fn parse_holding(text: &str) -> Result<f64, TimeError> {
    let t = text.trim();
    let bad = || TimeError::Holding(text.to_string());
    if t.contains(':') {
        let parts: Vec<&str> = t.split(':').collect();
        let (h, m, s) = match parts.as_slice() {
            [h, m, s] => (*h, *m, *s),
            [m, s] => ("0", *m, *s),
            _ => return Err(bad()),
        };
        let int = |p: &str| -> Option<f64> {
            (!p.is_empty() && p.len() <= 9 && p.bytes().all(|c| c.is_ascii_digit()))
                .then(|| p.parse::<f64>().ok())
                .flatten()
        };
        let hours = int(h).ok_or_else(bad)?;
        let minutes = int(m).ok_or_else(bad)?;
        // Seconds: two digits, optionally a fraction.
        let (whole, frac) = s.split_once('.').unwrap_or((s, ""));
        if whole.len() != 2
            || !frac.bytes().all(|c| c.is_ascii_digit())
            || (s.contains('.') && frac.is_empty())
        {
            return Err(bad());
        }
        let seconds: f64 = s.parse().map_err(|_| bad())?;
        if seconds >= 60.0 || (parts.len() == 3 && minutes >= 60.0) {
            return Err(bad());
        }
        return Ok(hours * 3600.0 + minutes * 60.0 + seconds);
    }
    units::parse_duration(t).map_err(|_| bad())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn civil_round_trip() {
        // Hinnant's algorithms are exact inverses over any range.
        for d in (-800_000..800_000).step_by(997) {
            let (y, m, dd) = civil_from_days(d);
            assert_eq!(days_from_civil(y, m, dd), d);
        }
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(civil_from_days(days_from_civil(2024, 2, 29)), (2024, 2, 29));
        // 2025-03-03 was a Monday (checked against a printed calendar).
        assert_eq!(weekday(days_from_civil(2025, 3, 3)), 0);
        assert_eq!(weekday(0), 3); // 1970-01-01, a Thursday
    }

    #[test]
    fn timestamps() {
        let z = parse_timestamp("2025-03-03T09:15:00Z").unwrap();
        for text in [
            "2025-03-03T10:15:00+01:00",
            "2025-03-03 10:15:00+0100",
            "2025-03-03t10:15+01",
            "2025-03-03T04:15:00-05:00",
        ] {
            let t = parse_timestamp(text).unwrap();
            assert_eq!(t.utc_s, z.utc_s, "{text}");
            assert_eq!(t.kind, TimeKind::Zoned);
        }
        let n = parse_timestamp("2025-03-03 09:15:00.25").unwrap();
        assert_eq!((n.utc_s, n.kind), (z.utc_s + 0.25, TimeKind::Naive));
        assert_eq!(parse_timestamp("1740993300.5").unwrap().utc_s, 1740993300.5);
        assert_eq!(
            format_local(1740996900, Some(3600)),
            "2025-03-03T10:15:00+01:00"
        );
        assert_eq!(format_local(1740996900, None), "2025-03-03T10:15:00");
        for bad in [
            "",
            "yesterday",
            "2025-03-03",
            "2025-3-3T10:00",
            "2025-03-03T10:00:00+1",
            "2025-03-03T10:00:00 +01:00",
            "2025-03-03T10:00:00.Z",
            "1.2.3",
            "-5",
            "nan",
        ] {
            assert!(
                matches!(parse_timestamp(bad), Err(TimeError::Timestamp(_))),
                "{bad:?}"
            );
        }
        for bad in [
            "2025-13-01T00:00",
            "2025-02-29T00:00",
            "2025-03-03T24:00",
            "2025-03-03T10:60",
            "2025-03-03T10:00:61",
            "2025-03-03T10:00+19:00",
            "2025-03-03T10:00+01:75",
        ] {
            assert!(
                matches!(parse_timestamp(bad), Err(TimeError::Range { .. })),
                "{bad:?}"
            );
        }
        let e = parse_timestamp("2025-13-01T00:00").unwrap_err().to_string();
        assert!(
            e.contains("'2025-13-01T00:00'") && e.contains("month"),
            "{e}"
        );
    }

    #[test]
    fn holding_times() {
        assert_eq!(parse_holding("0"), Ok(0.0));
        assert_eq!(parse_holding("90s"), Ok(90.0));
        assert_eq!(parse_holding("3m2s"), Ok(182.0));
        assert_eq!(parse_holding("26:00:00"), Ok(93600.0));
        for bad in [
            "", "-3", "1:2:3", "1:60:00", "0:61", "1:00:", "abc", "inf", "0:03:02.", "1:2",
        ] {
            assert!(parse_holding(bad).is_err(), "{bad:?}");
        }
    }

    #[test]
    fn dates_and_times_of_day() {
        let joined = |d, t| parse_date_and_time(d, t).unwrap();
        assert_eq!(
            joined("2026-03-02", "08:15:30"),
            parse_timestamp("2026-03-02T08:15:30").unwrap()
        );
        assert_eq!(
            joined("2026/3/2", "8:15"),
            parse_timestamp("2026-03-02T08:15").unwrap()
        );
        assert_eq!(
            joined("2026-03-02", "23:59:59.5+01:00"),
            parse_timestamp("2026-03-02T23:59:59.5+01:00").unwrap()
        );
        // 2024 was a leap year; 2026 is not.
        assert!(parse_date("2024-02-29").is_ok());
        for bad in ["2026-02-29", "2026-13-01", "2026-00-10"] {
            assert!(
                matches!(parse_date(bad), Err(TimeError::Range { .. })),
                "{bad}"
            );
        }
        for bad in [
            "",
            "02/03/2026",
            "2026-03",
            "26-03-02",
            "2026-03-02T08:00",
            "2026.03.02",
        ] {
            assert!(matches!(parse_date(bad), Err(TimeError::Date(_))), "{bad}");
        }
        for bad in [
            "",
            "815",
            "08h15",
            "2026-03-02T08:15",
            "1741000000",
            "123:00",
        ] {
            assert!(
                matches!(
                    parse_date_and_time("2026-03-02", bad),
                    Err(TimeError::TimeOfDay(_))
                ),
                "{bad}"
            );
        }
        let e = parse_date_and_time("2026-03-02", "25:00")
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("'25:00'") && e.contains("hour"), "{e}");
    }

    #[test]
    fn printing() {
        assert_eq!(Clock(36900).to_string(), "10:15");
        assert_eq!(Clock(86400).to_string(), "24:00");
        assert_eq!(Offset(-19800).to_string(), "-05:30");
        assert_eq!(Date(0).to_string(), "1970-01-01");
    }
}
