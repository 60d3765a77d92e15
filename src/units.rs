//! Human units: durations, rates and shares.
//!
//! A minimal version with the agreed signatures, so that `busyhour calc`
//! builds and is tested on this branch; the full module replaces it.

use thiserror::Error;

/// Text that is not the unit it should be.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum UnitError {
    /// Durations are seconds, or parts with h, m, s suffixes ("1h30m").
    #[error("'{0}' is not a duration: expected seconds or a time like \"45s\", \"3m\", \"1h30m\"")]
    Duration(String),
    /// Rates are a count over a unit of time ("420/h").
    #[error(
        "'{0}' is not a rate: expected calls per unit of time like \"420/h\", \"7/m\", \"0.5/s\""
    )]
    Rate(String),
    /// Shares are a percentage ("1%") or a fraction ("0.01") from 0 to 1.
    #[error("'{0}' is not a share: expected a percentage like \"1%\" or a fraction like \"0.01\"")]
    Share(String),
}

fn number(text: &str) -> Option<f64> {
    let t = text.trim();
    if t.is_empty()
        || !t
            .bytes()
            .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'-' | b'+' | b'e' | b'E'))
    {
        return None;
    }
    t.parse::<f64>().ok().filter(|x| x.is_finite())
}

/// Parses a duration to seconds: a plain number, or parts such as "1h30m".
pub fn parse_duration(text: &str) -> Result<f64, UnitError> {
    let err = || UnitError::Duration(text.to_string());
    if let Some(x) = number(text) {
        return if x >= 0.0 { Ok(x) } else { Err(err()) };
    }
    let mut total = 0.0;
    let mut rest = text.trim();
    if rest.is_empty() {
        return Err(err());
    }
    while !rest.is_empty() {
        let split = rest
            .find(|c: char| c.is_ascii_alphabetic())
            .ok_or_else(err)?;
        let value = number(&rest[..split])
            .filter(|x| *x >= 0.0)
            .ok_or_else(err)?;
        let tail = &rest[split..];
        let unit_len = tail
            .find(|c: char| !c.is_ascii_alphabetic())
            .unwrap_or(tail.len());
        let factor = match &tail[..unit_len] {
            "h" => 3600.0,
            "m" => 60.0,
            "s" => 1.0,
            "ms" => 0.001,
            _ => return Err(err()),
        };
        total += value * factor;
        rest = tail[unit_len..].trim_start();
    }
    Ok(total)
}

/// Parses a rate such as "420/h" to calls per second.
pub fn parse_rate(text: &str) -> Result<f64, UnitError> {
    let err = || UnitError::Rate(text.to_string());
    let (count, unit) = text.split_once('/').ok_or_else(err)?;
    let count = number(count).filter(|x| *x >= 0.0).ok_or_else(err)?;
    let per = match unit.trim() {
        "h" => 3600.0,
        "m" => 60.0,
        "s" => 1.0,
        _ => return Err(err()),
    };
    Ok(count / per)
}

/// Parses a share: "1%" or "0.01", from 0 to 1.
pub fn parse_share(text: &str) -> Result<f64, UnitError> {
    let err = || UnitError::Share(text.to_string());
    let t = text.trim();
    let value = match t.strip_suffix('%') {
        Some(p) => number(p).ok_or_else(err)? / 100.0,
        None => number(t).ok_or_else(err)?,
    };
    if (0.0..=1.0).contains(&value) {
        Ok(value)
    } else {
        Err(err())
    }
}

/// Prints seconds as a short duration ("45 s", "3.5 min").
pub fn format_duration(seconds: f64) -> String {
    if seconds.abs() >= 120.0 {
        format!("{:.2} min", seconds / 60.0)
    } else {
        format!("{seconds:.2} s")
    }
}

/// Prints a share as a percentage ("1.23%").
pub fn format_share(share: f64) -> String {
    format!("{:.3}%", share * 100.0)
}
