//! Typed flag values: clap value parsers that turn the text of a flag into
//! the number it means (seconds, calls per second, a share, erlangs), with
//! the units' own messages. A handler receives numbers, never text to parse
//! later; clap names the flag in the one-line error.

use busyhour::units;

/// A duration in seconds ("3m", "180s", "180"), finite and not negative.
pub fn duration(text: &str) -> Result<f64, String> {
    units::parse_duration(text).map_err(|e| e.to_string())
}

/// A duration in seconds that is above zero (a holding time, a patience).
pub fn positive_duration(text: &str) -> Result<f64, String> {
    let s = duration(text)?;
    if s > 0.0 {
        Ok(s)
    } else {
        Err(format!(
            "'{text}' is not valid: expected a duration above zero, such as \"3m\""
        ))
    }
}

/// A call rate in calls per second ("420/h", "7/m", "0.5/s"); a bare number
/// is refused (calls per what?).
pub fn rate(text: &str) -> Result<f64, String> {
    units::parse_rate(text).map_err(|e| e.to_string())
}

/// A share from 0 to 1 ("1%", "0.01").
pub fn share(text: &str) -> Result<f64, String> {
    units::parse_share(text).map_err(|e| e.to_string())
}

/// A share strictly between 0 and 100% (a grade of service, a service-level
/// goal, a precision).
pub fn open_share(text: &str) -> Result<f64, String> {
    let s = share(text)?;
    if s > 0.0 && s < 1.0 {
        Ok(s)
    } else {
        Err(format!(
            "'{text}' is not valid: expected a share above 0 and below 100%, such as \"1%\""
        ))
    }
}

/// Offered traffic in erlangs: a finite number, not negative.
pub fn erlangs(text: &str) -> Result<f64, String> {
    let x: f64 = text
        .trim()
        .parse()
        .map_err(|_| format!("'{text}' is not a number of erlangs, such as \"12.5\""))?;
    if x >= 0.0 && x.is_finite() {
        Ok(x)
    } else {
        Err(format!(
            "offered traffic {x} erlangs is not valid: expected a finite number >= 0"
        ))
    }
}

/// A count of at least one (servers, agents, sources, channels).
pub fn at_least_one(text: &str) -> Result<u32, String> {
    let n: u32 = text
        .trim()
        .parse()
        .map_err(|_| format!("'{text}' is not a whole number from 1 to {}", u32::MAX))?;
    if n >= 1 {
        Ok(n)
    } else {
        Err(format!("'{text}' is not valid: expected at least 1"))
    }
}

/// A number of replications: at least two, for a confidence interval.
pub fn replications(text: &str) -> Result<u32, String> {
    let n: u32 = text
        .trim()
        .parse()
        .map_err(|_| format!("'{text}' is not a whole number of replications"))?;
    if n >= 2 {
        Ok(n)
    } else {
        Err(format!(
            "'{text}': at least 2 replications are needed for a confidence interval"
        ))
    }
}

/// A precision goal: a relative 95% half-width above 0% and below 100%.
pub fn precision(text: &str) -> Result<f64, String> {
    match share(text) {
        Ok(p) if p > 0.0 && p < 1.0 => Ok(p),
        Ok(_) => Err(format!(
            "'{text}': expected a relative half-width above 0% and below 100%, like \"2%\""
        )),
        Err(e) => Err(e),
    }
}

/// A shard "I/N": the I-th of N slices of the replications.
pub fn shard(text: &str) -> Result<busyhour::experiment::shard::ShardSpec, String> {
    busyhour::experiment::shard::ShardSpec::parse(text).map_err(|e| e.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_and_refusals() {
        assert_eq!(duration("3m"), Ok(180.0));
        assert!(positive_duration("0").is_err());
        assert_eq!(rate("1800/h"), Ok(0.5));
        assert!(rate("30").unwrap_err().contains("no time unit"));
        assert_eq!(open_share("80%"), Ok(0.8));
        assert!(open_share("100%").is_err() && open_share("0").is_err());
        assert_eq!(erlangs("12.5"), Ok(12.5));
        for bad in ["-1", "nan", "inf", "x"] {
            assert!(erlangs(bad).is_err(), "{bad}");
        }
        assert_eq!(at_least_one("3"), Ok(3));
        assert!(at_least_one("0").is_err() && at_least_one("-3").is_err());
    }
}
