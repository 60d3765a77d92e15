//! Human units: durations ("20s", "3m", "1h30m"), rates ("1800/h", "30/m",
//! "0.5/s") and shares ("1%", "0.01"), parsed to seconds, calls per second and
//! plain fractions, and printed back the same way.
//!
//! Owns only text <-> number conversion; knows nothing of scenarios or models.

use thiserror::Error;

/// A piece of text that is not the unit it should be.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum UnitError {
    /// Durations are a number of seconds, or numbers with h, m, s and ms
    /// suffixes in that order ("1h30m", "90s", "2.5m").
    #[error("'{0}' is not a duration: expected seconds or a time like \"45s\", \"3m\", \"1h30m\"")]
    Duration(String),
    /// Rates are a count over a unit of time ("420/h", "7/m", "0.5/s").
    #[error(
        "'{0}' is not a rate: expected calls per unit of time like \"420/h\", \"7/m\", \"0.5/s\""
    )]
    Rate(String),
    /// A bare number where a rate is needed: calls per what?
    #[error(
        "'{0}' has no time unit: write calls per hour like \"{0}/h\" (or /m, /s), so that a rate is never read per second by accident"
    )]
    RateUnit(String),
    /// Shares are a percentage ("1%") or a fraction ("0.01") between 0 and 1.
    #[error(
        "'{0}' is not a share: expected a percentage like \"1%\" or a fraction from 0 to 1 like \"0.01\""
    )]
    Share(String),
    /// A plain number above 1 where a share is needed: a percentage without
    /// its sign, most likely.
    #[error(
        "'{0}' is not a share: write \"{0}%\" for a percentage, or a fraction from 0 to 1 like 0.8"
    )]
    SharePercent(String),
    /// The text parsed but the value is out of its allowed range.
    #[error("'{text}' is out of range: {expected}")]
    Range {
        /// The text as given.
        text: String,
        /// What was expected, in plain words.
        expected: &'static str,
    },
}

fn parse_number(text: &str) -> Option<f64> {
    let t = text.trim();
    // Reject words such as "inf", "nan", "infinity" that f64::from_str accepts.
    if t.is_empty()
        || !t
            .bytes()
            .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'-' | b'+' | b'e' | b'E'))
    {
        return None;
    }
    t.parse::<f64>().ok().filter(|x| x.is_finite())
}

/// Parse a duration to seconds: a plain number is seconds; a clock form
/// "m:ss" or "h:mm:ss" ("3:00" is three minutes); otherwise one or more
/// `<number><unit>` parts, largest unit first, with units `h` (`hr`, `hour`,
/// `hours`), `m` (`min`, `mins`, `minute`, `minutes`), `s` (`sec`, `secs`,
/// `second`, `seconds`) and `ms` (e.g. "1h30m", "2.5min", "90s", "250ms").
/// The result is finite and not negative.
///
/// # Example
/// ```
/// use busyhour::units::parse_duration;
/// assert_eq!(parse_duration("1h30m").unwrap(), 5400.0);
/// assert_eq!(parse_duration("3min").unwrap(), 180.0);
/// assert_eq!(parse_duration("3:00").unwrap(), 180.0);
/// assert_eq!(parse_duration("45").unwrap(), 45.0);
/// ```
pub fn parse_duration(text: &str) -> Result<f64, UnitError> {
    let err = || UnitError::Duration(text.to_string());
    let t = text.trim();
    if let Some(x) = parse_number(t) {
        return if x >= 0.0 { Ok(x) } else { Err(err()) };
    }
    if t.contains(':') {
        return parse_clock_duration(t).ok_or_else(err);
    }
    let mut total = 0.0;
    let mut rest = t;
    let mut parts = 0;
    let mut last_rank = 0u8; // units must come in decreasing size: h, m, s, ms
    while !rest.is_empty() {
        let num_len = rest
            .find(|c: char| !(c.is_ascii_digit() || c == '.'))
            .ok_or_else(err)?;
        if num_len == 0 {
            return Err(err());
        }
        let value: f64 = rest[..num_len].parse().map_err(|_| err())?;
        rest = &rest[num_len..];
        let word_len = rest
            .find(|c: char| !c.is_ascii_alphabetic())
            .unwrap_or(rest.len());
        let (factor, rank) = time_unit(&rest[..word_len]).ok_or_else(err)?;
        if rank <= last_rank {
            return Err(err());
        }
        last_rank = rank;
        rest = rest[word_len..].trim_start();
        total += value * factor;
        parts += 1;
    }
    if parts == 0 || !total.is_finite() {
        return Err(err());
    }
    Ok(total)
}

/// A unit of time by its word: seconds per unit and its rank (1 for the
/// largest), so that parts come largest first.
fn time_unit(word: &str) -> Option<(f64, u8)> {
    Some(match word {
        "h" | "hr" | "hrs" | "hour" | "hours" => (3600.0, 1),
        "m" | "min" | "mins" | "minute" | "minutes" => (60.0, 2),
        "s" | "sec" | "secs" | "second" | "seconds" => (1.0, 3),
        "ms" => (0.001, 4),
        _ => return None,
    })
}

/// "m:ss" or "h:mm:ss": every field digits (the last may have a fraction),
/// the fields after the first below 60.
fn parse_clock_duration(t: &str) -> Option<f64> {
    let fields: Vec<&str> = t.split(':').collect();
    if !(2..=3).contains(&fields.len()) {
        return None;
    }
    let mut total = 0.0;
    for (i, f) in fields.iter().enumerate() {
        let last = i + 1 == fields.len();
        let ok = !f.is_empty()
            && f.bytes().all(|b| b.is_ascii_digit() || (last && b == b'.'))
            && f.as_bytes()[0].is_ascii_digit();
        if !ok {
            return None;
        }
        let v: f64 = f.parse().ok()?;
        if i > 0 && (v >= 60.0 || f.split('.').next()?.len() != 2) {
            return None;
        }
        total = total * 60.0 + v;
    }
    total.is_finite().then_some(total)
}

/// Parse a time of day "HH:MM" or "HH:MM:SS" (24-hour clock, 00:00 to
/// 23:59:59) to seconds after midnight.
///
/// # Example
/// ```
/// use busyhour::units::parse_time_of_day;
/// assert_eq!(parse_time_of_day("08:00"), Some(28800.0));
/// assert_eq!(parse_time_of_day("24:00"), None);
/// ```
pub fn parse_time_of_day(text: &str) -> Option<f64> {
    let fields: Vec<&str> = text.trim().split(':').collect();
    if !(2..=3).contains(&fields.len())
        || fields
            .iter()
            .any(|f| f.is_empty() || f.len() > 2 || !f.bytes().all(|b| b.is_ascii_digit()))
        || fields[1..].iter().any(|f| f.len() != 2)
    {
        return None;
    }
    let v: Vec<u32> = fields
        .iter()
        .map(|f| f.parse().ok())
        .collect::<Option<_>>()?;
    let (h, m, s) = (v[0], v[1], v.get(2).copied().unwrap_or(0));
    (h < 24 && m < 60 && s < 60).then(|| f64::from(h * 3600 + m * 60 + s))
}

/// Print seconds after midnight as a clock time: "08:15" (wrapping past
/// midnight; seconds shown only when not whole minutes).
pub fn format_time_of_day(seconds: f64) -> String {
    format_clock((seconds.round() as i64).rem_euclid(86_400))
}

/// Whole seconds as "HH:MM", or "HH:MM:SS" when not on a whole minute,
/// without wrapping (86400 is "24:00", the end of a day).
pub fn format_clock(s: i64) -> String {
    let (h, m, sec) = (s / 3600, (s / 60) % 60, s % 60);
    if sec == 0 {
        format!("{h:02}:{m:02}")
    } else {
        format!("{h:02}:{m:02}:{sec:02}")
    }
}

/// Parse a rate to events per second: `<count>/<unit>` with unit `h`, `m`,
/// `s` or `d` (also "/hour", "/min", "/sec", "/day"), or a count over a
/// duration with its unit ("200/30m": 200 calls per half hour; "90/15min"). A plain number is
/// refused ([`UnitError::RateUnit`]): "30" read as per second once sized
/// 5,400 erlangs where 30 calls an hour were meant. The result is finite and
/// not negative.
///
/// # Example
/// ```
/// use busyhour::units::parse_rate;
/// assert_eq!(parse_rate("1800/h").unwrap(), 0.5);
/// assert_eq!(parse_rate("30/m").unwrap(), 0.5);
/// assert!(parse_rate("30").unwrap_err().to_string().contains("no time unit"));
/// ```
pub fn parse_rate(text: &str) -> Result<f64, UnitError> {
    let err = || UnitError::Rate(text.to_string());
    let t = text.trim();
    let (count, per) = match t.split_once('/') {
        Some((c, u)) => {
            let u = u.trim();
            let per = match u {
                "s" | "sec" | "second" => 1.0,
                "m" | "min" | "minute" => 60.0,
                "h" | "hr" | "hour" => 3600.0,
                "d" | "day" => 86400.0,
                // A bare number under the slash ("200/30") says no unit.
                _ if u.bytes().any(|b| b.is_ascii_alphabetic()) => match parse_duration(u) {
                    Ok(d) if d > 0.0 => d,
                    _ => return Err(err()),
                },
                _ => return Err(err()),
            };
            (parse_number(c).ok_or_else(err)?, per)
        }
        None => {
            return Err(match parse_number(t) {
                Some(_) => UnitError::RateUnit(t.to_string()),
                None => err(),
            });
        }
    };
    if count < 0.0 {
        return Err(err());
    }
    Ok(count / per)
}

/// Parse a share: "1%" is 0.01; a plain number must lie in [0, 1].
///
/// # Example
/// ```
/// use busyhour::units::parse_share;
/// assert_eq!(parse_share("2.5%").unwrap(), 0.025);
/// assert_eq!(parse_share("0.8").unwrap(), 0.8);
/// ```
pub fn parse_share(text: &str) -> Result<f64, UnitError> {
    let err = || UnitError::Share(text.to_string());
    let t = text.trim();
    let value = match t.strip_suffix('%') {
        Some(p) => parse_number(p).ok_or_else(err)? / 100.0,
        None => match parse_number(t).ok_or_else(err)? {
            x if x > 1.0 && x <= 100.0 => return Err(UnitError::SharePercent(t.to_string())),
            x => x,
        },
    };
    if !(0.0..=1.0).contains(&value) {
        return Err(UnitError::Range {
            text: text.to_string(),
            expected: "a share from 0% to 100%",
        });
    }
    Ok(value)
}

/// Print seconds as a short human duration: "45 s", "3.5 min", "2 h".
pub fn format_duration(seconds: f64) -> String {
    if !seconds.is_finite() {
        return format!("{seconds}");
    }
    let a = seconds.abs();
    if a >= 3600.0 && (seconds / 3600.0).fract().abs() < 1e-9 {
        format!("{} h", seconds / 3600.0)
    } else if a >= 120.0 {
        format!("{} min", trim_float(seconds / 60.0, 2))
    } else {
        format!("{} s", trim_float(seconds, 2))
    }
}

/// Print a rate given per second as calls per hour: "420/h".
pub fn format_rate(per_second: f64) -> String {
    format!("{}/h", trim_float(per_second * 3600.0, 2))
}

/// Print a share as a percentage with enough digits for small grades of
/// service: "1.23%", "0.0412%".
pub fn format_share(share: f64) -> String {
    let pct = share * 100.0;
    if pct == 0.0 {
        "0%".to_string()
    } else if pct.abs() >= 10.0 {
        format!("{pct:.1}%")
    } else if pct.abs() >= 0.1 {
        format!("{pct:.2}%")
    } else if pct.abs() >= 1e-6 {
        // Two significant digits, written out: "0.085%", "0.00040%", never
        // an exponent in a table.
        let decimals = (1.0 - pct.abs().log10().floor()) as usize;
        format!("{pct:.decimals$}%")
    } else {
        // Below a millionth of a percent nobody reads the digits.
        format!("{}0.000001%", if pct < 0.0 { "> -" } else { "< " })
    }
}

/// A number with at most `digits` decimals and no trailing zeros.
pub fn trim_float(x: f64, digits: usize) -> String {
    let s = format!("{x:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A number or a text with a unit, as the user wrote it ("3m" or 180) in a
/// scenario file; serialised back the same way.
#[derive(Debug, Clone, PartialEq)]
pub enum Amount {
    /// A bare number.
    Number(f64),
    /// A text such as "3m", "420/h" or "1%".
    Text(String),
}

impl std::fmt::Display for Amount {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            // Scientific notation for huge or tiny numbers, so that 1e300
            // does not print as 301 digits.
            Amount::Number(x) if *x != 0.0 && !(1e-6..1e15).contains(&x.abs()) => {
                write!(f, "{x:e}")
            }
            Amount::Number(x) => write!(f, "{x}"),
            Amount::Text(t) => write!(f, "\"{t}\""),
        }
    }
}

impl<'de> serde::Deserialize<'de> for Amount {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl serde::de::Visitor<'_> for V {
            type Value = Amount;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a number or a text with a unit such as \"3m\", \"420/h\" or \"1%\"")
            }
            fn visit_i64<E: serde::de::Error>(self, v: i64) -> Result<Amount, E> {
                Ok(Amount::Number(v as f64))
            }
            fn visit_u64<E: serde::de::Error>(self, v: u64) -> Result<Amount, E> {
                Ok(Amount::Number(v as f64))
            }
            fn visit_f64<E: serde::de::Error>(self, v: f64) -> Result<Amount, E> {
                Ok(Amount::Number(v))
            }
            fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<Amount, E> {
                Ok(Amount::Text(v.to_string()))
            }
        }
        d.deserialize_any(V)
    }
}

impl serde::Serialize for Amount {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        match self {
            Amount::Number(x) => s.serialize_f64(*x),
            Amount::Text(t) => s.serialize_str(t),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durations() {
        assert_eq!(parse_duration("20s"), Ok(20.0));
        assert_eq!(parse_duration("3m"), Ok(180.0));
        assert_eq!(parse_duration("1h30m"), Ok(5400.0));
        assert_eq!(parse_duration("1h 30m 15s"), Ok(5415.0));
        assert_eq!(parse_duration("2.5m"), Ok(150.0));
        assert_eq!(parse_duration("250ms"), Ok(0.25));
        assert_eq!(parse_duration(" 90 "), Ok(90.0));
        assert_eq!(parse_duration("0"), Ok(0.0));
        // Words people write, and clock forms.
        assert_eq!(parse_duration("3min"), Ok(180.0));
        assert_eq!(
            parse_duration("2 hours 15 minutes"),
            Err(UnitError::Duration("2 hours 15 minutes".into()))
        );
        assert_eq!(parse_duration("2hours 15minutes"), Ok(8100.0));
        assert_eq!(parse_duration("45sec"), Ok(45.0));
        assert_eq!(parse_duration("3:00"), Ok(180.0));
        assert_eq!(parse_duration("1:30:00"), Ok(5400.0));
        assert_eq!(parse_duration("0:45.5"), Ok(45.5));
        for bad in [
            "", "m", "3x", "-5s", "-5", "1m1h", "3mm", "nan", "inf", "1e999", "s3", "3 m", "3minm",
            "1:60", "1:5", ":30", "1:30:", "1:2:3:4", "1.5:00", "-1:00", "3: 00",
        ] {
            assert!(parse_duration(bad).is_err(), "{bad:?} should fail");
        }
        let e = parse_duration("3x").unwrap_err().to_string();
        assert!(e.contains("'3x'") && e.contains("expected"), "{e}");
    }

    #[test]
    fn rates() {
        assert_eq!(parse_rate("1800/h"), Ok(0.5));
        assert_eq!(parse_rate("30/m"), Ok(0.5));
        assert_eq!(parse_rate("0.5/s"), Ok(0.5));
        // A bare number has no unit: refused, never read per second.
        assert_eq!(parse_rate("0.5"), Err(UnitError::RateUnit("0.5".into())));
        assert_eq!(parse_rate("86400/day"), Ok(1.0));
        // Per a multiple of a unit: per half hour, per quarter hour.
        assert_eq!(parse_rate("200/30m"), Ok(200.0 / 1800.0));
        assert_eq!(parse_rate("90/15min"), Ok(0.1));
        for bad in [
            "", "/h", "3/x", "-3/h", "NaN/h", "inf", "3/h/h", "200/30", "5/0m", "5/-3m",
        ] {
            assert!(parse_rate(bad).is_err(), "{bad:?} should fail");
        }
    }

    #[test]
    fn shares() {
        assert_eq!(parse_share("1%"), Ok(0.01));
        assert_eq!(parse_share("0.01"), Ok(0.01));
        assert_eq!(parse_share("100%"), Ok(1.0));
        for bad in ["", "%", "101%", "1.5", "-1%", "nan", "x%", "101"] {
            assert!(parse_share(bad).is_err(), "{bad:?} should fail");
        }
        // A percentage without its sign gets a message that says so.
        let e = parse_share("80").unwrap_err().to_string();
        assert!(e.contains("\"80%\"") && e.contains("0.8"), "{e}");
    }

    #[test]
    fn times_of_day() {
        assert_eq!(parse_time_of_day("08:00"), Some(28_800.0));
        assert_eq!(parse_time_of_day("8:30"), Some(30_600.0));
        assert_eq!(parse_time_of_day("23:59:59"), Some(86_399.0));
        for bad in [
            "",
            "8",
            "24:00",
            "12:60",
            "12:5",
            "x:00",
            "12:00:00:00",
            "-1:00",
            "123:00",
        ] {
            assert_eq!(parse_time_of_day(bad), None, "{bad:?}");
        }
        assert_eq!(format_time_of_day(28_800.0), "08:00");
        assert_eq!(format_time_of_day(86_400.0 + 900.0), "00:15");
        assert_eq!(format_time_of_day(30.0), "00:00:30");
    }

    #[test]
    fn printing() {
        assert_eq!(format_duration(45.0), "45 s");
        assert_eq!(format_duration(180.0), "3 min");
        assert_eq!(format_duration(7200.0), "2 h");
        assert_eq!(format_rate(0.5), "1800/h");
        assert_eq!(format_share(0.0123), "1.23%");
        assert_eq!(format_share(0.25), "25.0%");
        assert_eq!(format_share(0.0), "0%");
        assert_eq!(format_share(0.00085), "0.085%");
        assert_eq!(format_share(0.00032), "0.032%");
        assert_eq!(format_share(4.01e-6), "0.00040%");
        assert_eq!(format_share(1e-12), "< 0.000001%");
        assert_eq!(trim_float(2.50, 2), "2.5");
    }
}
