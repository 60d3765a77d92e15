//! Which days of a call-record file to analyse (`--days`): weekdays, dates
//! and ranges of either. Owns the filter's syntax only.

use super::time::{days_from_civil, weekday};

/// A set of local days, as the user wrote it.
#[derive(Debug, Clone, PartialEq)]
pub struct DayFilter {
    /// The text as given, for reports.
    pub text: String,
    weekdays: [bool; 7],
    ranges: Vec<(i64, i64)>, // inclusive day numbers
}

/// A `--days` text that is not a list of days.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error(
    "--days '{text}': '{item}' is not a day: expected weekdays (\"mon-fri\", \"sat,sun\", \"weekdays\", \"weekend\"), dates (\"2025-03-04\") or date ranges (\"2025-03-03..2025-03-07\"), separated by commas"
)]
pub struct DayFilterError {
    /// The whole text.
    pub text: String,
    /// The item that failed.
    pub item: String,
}

fn weekday_of(name: &str) -> Option<u32> {
    let n = name.to_ascii_lowercase();
    let all = [
        ["mon", "monday"],
        ["tue", "tuesday"],
        ["wed", "wednesday"],
        ["thu", "thursday"],
        ["fri", "friday"],
        ["sat", "saturday"],
        ["sun", "sunday"],
    ];
    all.iter()
        .position(|names| names.contains(&n.as_str()))
        .map(|p| p as u32)
}

fn date_of(text: &str) -> Option<i64> {
    let b = text.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return None;
    }
    let num = |r: std::ops::Range<usize>| text.get(r)?.parse::<u32>().ok();
    let (y, m, d) = (num(0..4)?, num(5..7)?, num(8..10)?);
    if !(1..=12).contains(&m) || d == 0 {
        return None;
    }
    let day = days_from_civil(i64::from(y), m, d);
    // Reject 2025-02-30 and the like: the date must round-trip.
    (super::time::civil_from_days(day) == (i64::from(y), m, d)).then_some(day)
}

impl DayFilter {
    /// Parse a comma-separated list of weekdays (`mon`, `monday`), weekday
    /// ranges (`mon-fri`, wrapping allowed: `fri-mon`), `weekdays`,
    /// `weekend`, dates (`2025-03-04`) and inclusive date ranges
    /// (`2025-03-03..2025-03-07`). A day is selected when any item selects it.
    ///
    /// # Example
    /// ```
    /// use busyhour::records::days::DayFilter;
    /// use busyhour::records::time::days_from_civil;
    /// let f = DayFilter::parse("mon-fri").unwrap();
    /// assert!(f.selects(days_from_civil(2025, 3, 7)));  // a Friday
    /// assert!(!f.selects(days_from_civil(2025, 3, 8))); // a Saturday
    /// ```
    pub fn parse(text: &str) -> Result<DayFilter, DayFilterError> {
        let mut f = DayFilter {
            text: text.to_string(),
            weekdays: [false; 7],
            ranges: Vec::new(),
        };
        let err = |item: &str| DayFilterError {
            text: text.to_string(),
            item: item.to_string(),
        };
        let mut any = false;
        for raw in text.split(',') {
            let item = raw.trim();
            any = true;
            match item.to_ascii_lowercase().as_str() {
                "weekdays" => f.weekdays[..5].fill(true),
                "weekend" | "weekends" => f.weekdays[5..].fill(true),
                _ => {
                    if let Some((a, b)) = item.split_once("..") {
                        let (a, b) = (date_of(a.trim()), date_of(b.trim()));
                        match (a, b) {
                            (Some(a), Some(b)) if a <= b => f.ranges.push((a, b)),
                            _ => return Err(err(item)),
                        }
                    } else if let Some(d) = date_of(item) {
                        f.ranges.push((d, d));
                    } else if let Some(w) = weekday_of(item) {
                        f.weekdays[w as usize] = true;
                    } else if let Some((a, b)) = item.split_once('-') {
                        let (Some(a), Some(b)) = (weekday_of(a.trim()), weekday_of(b.trim()))
                        else {
                            return Err(err(item));
                        };
                        let mut w = a;
                        loop {
                            f.weekdays[w as usize] = true;
                            if w == b {
                                break;
                            }
                            w = (w + 1) % 7;
                        }
                    } else {
                        return Err(err(item));
                    }
                }
            }
        }
        if !any || text.trim().is_empty() {
            return Err(err(text));
        }
        Ok(f)
    }

    /// Whether local day number `day` (days since 1970-01-01) is selected.
    pub fn selects(&self, day: i64) -> bool {
        self.weekdays[weekday(day) as usize]
            || self.ranges.iter().any(|&(a, b)| (a..=b).contains(&day))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn filters() {
        let monday = days_from_civil(2025, 3, 3);
        let f = DayFilter::parse("sat, sun").unwrap();
        assert!(f.selects(monday + 5) && f.selects(monday + 6) && !f.selects(monday));
        let f = DayFilter::parse("fri-mon").unwrap();
        assert!(f.selects(monday) && f.selects(monday + 4) && !f.selects(monday + 1));
        let f = DayFilter::parse("2025-03-04..2025-03-05,2025-03-07").unwrap();
        let sel: Vec<bool> = (0..7).map(|i| f.selects(monday + i)).collect();
        assert_eq!(sel, [false, true, true, false, true, false, false]);
        assert!(DayFilter::parse("weekdays").unwrap().selects(monday));
        for bad in [
            "",
            "funday",
            "2025-02-30",
            "2025-03-05..2025-03-04",
            "mon-xyz",
            "mon,,tue",
        ] {
            let e = DayFilter::parse(bad).unwrap_err();
            assert!(e.to_string().contains("--days"), "{bad:?}");
        }
    }
}
