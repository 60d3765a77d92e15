//! Synthetic call records from known parameters, for demonstrations, tests
//! and benchmarks: Poisson arrivals with a daily profile repeated over
//! several days, a known holding-time law, and a loss group of N servers
//! that answers or blocks each call. Deterministic for a given seed. Owns
//! the generation only; writes CSV that [`super::reader`] reads.
//!
//! Arrivals are a non-homogeneous Poisson process with a piecewise-constant
//! rate: within a profile step of rate r the gaps are exponential with mean
//! 1/r; at the step's end the draw is restarted with the next rate, which is
//! exact by the memoryless property (Cinlar, *Introduction to Stochastic
//! Processes*, 1975, ch. 4). The group is an Erlang loss system: a call
//! that finds all N servers busy is blocked and cleared.

use super::reader::Outcome;
use super::time::{DAY_S, Offset, civil_from_days};
use crate::dist::Law;
use rand::{RngExt, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use std::cmp::Reverse;
use std::collections::BinaryHeap;
use std::io::{self, Write};

/// How start times are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeStyle {
    /// RFC 3339 with this zone offset (s): `2025-03-03T10:15:02+01:00`.
    Zoned(i32),
    /// Naive local time: `2025-03-03 10:15:02`.
    Naive,
    /// Unix seconds.
    Unix,
}

/// What to generate.
#[derive(Debug, Clone)]
pub struct SyntheticSpec {
    /// First local day (days since 1970-01-01; see `time::days_from_civil`).
    pub first_day: i64,
    /// Number of days.
    pub days: u32,
    /// Length of each step of the daily profile (s); the steps cover 24 h.
    pub step_s: f64,
    /// Calls per second in each step of the day (repeated every day).
    pub day_rates: Vec<f64>,
    /// Factor on the rates for each weekday, Monday first.
    pub weekday_factors: [f64; 7],
    /// Holding-time law of every call.
    pub holding: Law,
    /// Servers of the loss group (`u32::MAX`: never blocks).
    pub servers: u32,
    /// How start times are written.
    pub time_style: TimeStyle,
    /// Master seed.
    pub seed: u64,
}

impl SyntheticSpec {
    /// A constant rate (calls/s) all day, every day.
    pub fn constant(
        first_day: i64,
        days: u32,
        rate: f64,
        holding: Law,
        servers: u32,
        seed: u64,
    ) -> Self {
        SyntheticSpec {
            first_day,
            days,
            step_s: 3600.0,
            day_rates: vec![rate; 24],
            weekday_factors: [1.0; 7],
            holding,
            servers,
            time_style: TimeStyle::Zoned(0),
            seed,
        }
    }

    /// The demo setting: a parcel depot's customer line (invented), open
    /// 07:00-19:00 on weekdays with a morning peak from 10:00 and a smaller
    /// one after lunch, half the calls on Saturday, closed on Sunday;
    /// lognormal holding times (mean 3 min 20 s, cv 0.9); 10 lines.
    pub fn depot(first_day: i64, days: u32, seed: u64) -> Self {
        // Calls per hour by quarter hour of the day.
        let mut per_hour = vec![0.0; 96];
        let shape: [(usize, f64); 12] = [
            (7, 25.0),
            (8, 60.0),
            (9, 95.0),
            (10, 150.0),
            (11, 110.0),
            (12, 70.0),
            (13, 80.0),
            (14, 105.0),
            (15, 85.0),
            (16, 65.0),
            (17, 45.0),
            (18, 20.0),
        ];
        for (hour, rate) in shape {
            for q in 0..4 {
                per_hour[hour * 4 + q] = rate;
            }
        }
        SyntheticSpec {
            first_day,
            days,
            step_s: 900.0,
            day_rates: per_hour.iter().map(|r| r / 3600.0).collect(),
            weekday_factors: [1.0, 1.0, 1.0, 1.0, 1.0, 0.5, 0.0],
            // Constants: valid by construction (mean > 0, cv > 0).
            holding: Law::lognormal(200.0, 0.9).unwrap_or_else(|_| unreachable!()),
            servers: 10,
            time_style: TimeStyle::Zoned(3600),
            seed,
        }
    }

    /// Rate (calls/s) at local time `t` seconds after the first day's midnight.
    pub fn rate_at(&self, t: f64) -> f64 {
        let day = (t / DAY_S as f64).floor();
        let within = t - day * DAY_S as f64;
        let step = ((within / self.step_s) as usize).min(self.day_rates.len().saturating_sub(1));
        let weekday = super::time::weekday(self.first_day + day as i64) as usize;
        self.day_rates.get(step).copied().unwrap_or(0.0) * self.weekday_factors[weekday]
    }
}

/// One generated call.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SyntheticCall {
    /// Local clock seconds since the first day's midnight.
    pub start_s: f64,
    /// Holding time (s); 0 for a blocked call.
    pub duration_s: f64,
    /// Answered or blocked.
    pub outcome: Outcome,
}

/// Counts of what was generated.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct SyntheticTotals {
    /// Calls generated.
    pub calls: u64,
    /// Of which blocked.
    pub blocked: u64,
}

/// Generate the calls in time order, handing each to `sink`; stops early
/// when `sink` returns an error, or after `max_calls` calls.
pub fn generate<E>(
    spec: &SyntheticSpec,
    max_calls: u64,
    mut sink: impl FnMut(&SyntheticCall) -> Result<(), E>,
) -> Result<SyntheticTotals, E> {
    // Separate generators for arrivals and holding times (splitmix-style
    // offsets of the seed), so changing one law leaves the other's draws.
    let mut arrivals = Xoshiro256PlusPlus::seed_from_u64(spec.seed);
    let mut holding = Xoshiro256PlusPlus::seed_from_u64(spec.seed ^ 0x9E37_79B9_7F4A_7C15);
    let mut busy: BinaryHeap<Reverse<u64>> = BinaryHeap::new(); // end times as f64 bits (>= 0, so ordered)
    let mut totals = SyntheticTotals::default();
    let end = f64::from(spec.days) * DAY_S as f64;
    let mut t = 0.0f64;
    while t < end && totals.calls < max_calls {
        let rate = spec.rate_at(t);
        let step_end = ((t / spec.step_s).floor() + 1.0) * spec.step_s;
        if rate.is_nan() || rate <= 0.0 {
            t = step_end;
            continue;
        }
        let u: f64 = arrivals.random();
        let next = t - (1.0 - u).ln() / rate;
        if next >= step_end {
            t = step_end;
            continue;
        }
        t = next;
        if t >= end {
            break;
        }
        while busy
            .peek()
            .is_some_and(|Reverse(b)| f64::from_bits(*b) <= t)
        {
            busy.pop();
        }
        let duration = spec.holding.sample(&mut holding);
        let answered = (busy.len() as u64) < u64::from(spec.servers);
        if answered {
            busy.push(Reverse((t + duration).to_bits()));
        } else {
            totals.blocked += 1;
        }
        totals.calls += 1;
        sink(&SyntheticCall {
            start_s: t,
            duration_s: if answered { duration } else { 0.0 },
            outcome: if answered {
                Outcome::Answered
            } else {
                Outcome::Blocked
            },
        })?;
    }
    Ok(totals)
}

/// Write the calls as CSV with the header `call_id,start,duration_s,outcome`:
/// start times to the tenth of a second in the spec's style, holding times
/// to the tenth of a second.
pub fn write_csv<W: Write>(
    spec: &SyntheticSpec,
    max_calls: u64,
    out: W,
) -> io::Result<SyntheticTotals> {
    let mut w = io::BufWriter::with_capacity(1 << 16, out);
    writeln!(w, "call_id,start,duration_s,outcome")?;
    let base = spec.first_day * DAY_S;
    let mut id = 0u64;
    let totals = generate(spec, max_calls, |c| {
        id += 1;
        // Tenths of a second, rounded down so a call never starts later
        // than generated.
        let tenths = (c.start_s * 10.0).floor() as i64;
        let (whole, tenth) = (tenths.div_euclid(10), tenths.rem_euclid(10));
        let local = base + whole;
        write!(w, "C{id},")?;
        match spec.time_style {
            TimeStyle::Unix => {
                // Unix time is UTC; the profile's local clock is taken as UTC.
                write!(w, "{local}.{tenth}")?;
            }
            style => {
                let day = local.div_euclid(DAY_S);
                let clock = local.rem_euclid(DAY_S);
                let (y, m, d) = civil_from_days(day);
                let sep = if style == TimeStyle::Naive { ' ' } else { 'T' };
                write!(
                    w,
                    "{y:04}-{m:02}-{d:02}{sep}{:02}:{:02}:{:02}.{tenth}",
                    clock / 3600,
                    (clock / 60) % 60,
                    clock % 60
                )?;
                if let TimeStyle::Zoned(o) = style {
                    write!(w, "{}", Offset(o))?;
                }
            }
        }
        writeln!(w, ",{:.1},{}", c.duration_s, c.outcome.word())
    })?;
    w.flush()?;
    Ok(totals)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn depot_rates() {
        let s = SyntheticSpec::depot(super::super::time::days_from_civil(2025, 3, 3), 7, 1);
        assert_eq!(s.rate_at(10.5 * 3600.0) * 3600.0, 150.0);
        assert_eq!(s.rate_at(3.0 * 3600.0), 0.0);
        assert_eq!(s.rate_at(5.0 * 86400.0 + 10.5 * 3600.0) * 3600.0, 75.0); // Saturday
        assert_eq!(s.rate_at(6.0 * 86400.0 + 10.5 * 3600.0), 0.0); // Sunday
    }

    #[test]
    fn deterministic_and_counted() {
        let spec = SyntheticSpec::constant(0, 1, 0.05, Law::exponential(100.0).unwrap(), 3, 9);
        let mut a = Vec::new();
        let ta = write_csv(&spec, u64::MAX, &mut a).unwrap();
        let mut b = Vec::new();
        write_csv(&spec, u64::MAX, &mut b).unwrap();
        assert_eq!(a, b);
        let text = String::from_utf8(a).unwrap();
        assert_eq!(text.lines().count() as u64, ta.calls + 1);
        assert_eq!(text.matches(",blocked").count() as u64, ta.blocked);
        // 0.05/s for a day: 4320 calls expected, Poisson sd 65.7.
        assert!(
            (ta.calls as f64 - 4320.0).abs() < 4.0 * 65.7,
            "{}",
            ta.calls
        );
        let limited = write_csv(&spec, 10, io::sink()).unwrap();
        assert_eq!(limited.calls, 10);
    }
}
