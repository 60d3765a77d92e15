//! The busy hour, by the definitions of ITU-T Recommendation E.600 (terms and
//! definitions of traffic engineering; recalled from the Recommendation):
//!
//! * **daily peak hour**: on each day, the 60 consecutive minutes (a whole
//!   number of intervals, moved one interval at a time) with the most
//!   traffic;
//! * **time-consistent busy hour**: the same clock hour on every day
//!   analysed, chosen as the one whose traffic, averaged over those days, is
//!   highest;
//! * **average daily peak hour**: the mean over days of each day's own peak
//!   hour traffic (it is never below the time-consistent figure).
//!
//! "Traffic" here is the offered traffic estimate of each interval
//! ([`super::Timeline::set_offered`]), which equals the carried traffic when
//! the file has no outcomes. A window's traffic is the mean of its
//! intervals' traffic (erlang-hours per hour). Owns these choices only.

use super::intervals::Timeline;

/// One day's peak hour.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DailyPeak {
    /// Local day (days since 1970-01-01).
    pub day: i64,
    /// Index of the window's first interval in the timeline.
    pub first: usize,
    /// Local clock time of the start (s after midnight).
    pub start_clock_s: u32,
    /// Offered traffic estimate (erlangs), the ranking figure.
    pub offered_traffic: f64,
    /// Carried traffic (erlangs).
    pub carried_traffic: f64,
    /// Call attempts starting in the hour.
    pub calls: u64,
}

/// The time-consistent busy hour: one clock hour for all days.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClockHour {
    /// Local clock time of the start (s after midnight).
    pub start_clock_s: u32,
    /// Mean over days of the hour's offered traffic estimate (erlangs).
    pub offered_traffic: f64,
    /// Mean over days of the hour's carried traffic (erlangs).
    pub carried_traffic: f64,
    /// Mean over days of the call attempts in the hour (per hour).
    pub calls_per_hour: f64,
    /// Days averaged (days with at least one interval in that clock hour).
    pub days: usize,
}

/// The busy-hour figures of a timeline.
#[derive(Debug, Clone, PartialEq)]
pub struct BusyHour {
    /// Each analysed day's peak hour (days shorter than an hour have none).
    pub daily: Vec<DailyPeak>,
    /// The time-consistent busy hour (None without any analysed day).
    pub time_consistent: Option<ClockHour>,
    /// Average daily peak hour: mean over `daily` of offered traffic (erlangs).
    pub average_daily_peak_offered: Option<f64>,
    /// Mean over `daily` of the carried traffic of each day's peak hour.
    pub average_daily_peak_carried: Option<f64>,
}

/// Per clock slot and day: sums over the intervals with that clock position
/// (two on the day the clocks go back, none in a skipped hour).
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct SlotSums {
    pub(crate) count: u32,
    pub(crate) calls: f64,
    pub(crate) offered: f64,
    pub(crate) carried: f64,
}

/// `[day][slot]` sums for the selected days.
pub(crate) fn slot_table(t: &Timeline) -> Vec<Vec<SlotSums>> {
    let slots = t.slots_per_day();
    t.selected_days()
        .map(|d| {
            let mut row = vec![SlotSums::default(); slots];
            for iv in t.of(d) {
                let s = &mut row[(iv.clock_s / t.interval_s) as usize];
                s.count += 1;
                s.calls += iv.calls as f64;
                s.offered += iv.offered_traffic;
                s.carried += iv.carried_traffic;
            }
            row
        })
        .collect()
}

/// Find the busy hours of the selected days of `t` (see the module doc).
/// Ties go to the earlier hour.
pub fn find(t: &Timeline) -> BusyHour {
    let h = (3600 / t.interval_s) as usize;
    let mut daily = Vec::new();
    for d in t.selected_days() {
        let ivs = t.of(d);
        if ivs.len() < h {
            continue;
        }
        let mut best: Option<DailyPeak> = None;
        for k in 0..=(ivs.len() - h) {
            let w = &ivs[k..k + h];
            let offered = w.iter().map(|iv| iv.offered_traffic).sum::<f64>() / h as f64;
            if best.is_none_or(|b| offered > b.offered_traffic) {
                best = Some(DailyPeak {
                    day: d.day,
                    first: d.first + k,
                    start_clock_s: w[0].clock_s,
                    offered_traffic: offered,
                    carried_traffic: w.iter().map(|iv| iv.carried_traffic).sum::<f64>() / h as f64,
                    calls: w.iter().map(|iv| iv.calls).sum(),
                });
            }
        }
        daily.extend(best);
    }
    let table = slot_table(t);
    let slots = t.slots_per_day();
    let mut time_consistent: Option<ClockHour> = None;
    for s in 0..=(slots - h) {
        let (mut offered, mut carried, mut calls, mut days) = (0.0, 0.0, 0.0, 0usize);
        for row in &table {
            let w = &row[s..s + h];
            let n: u32 = w.iter().map(|x| x.count).sum();
            if n == 0 {
                continue;
            }
            // Mean traffic over the intervals present; calls scaled to an hour.
            let n = f64::from(n);
            offered += w.iter().map(|x| x.offered).sum::<f64>() / n;
            carried += w.iter().map(|x| x.carried).sum::<f64>() / n;
            calls += w.iter().map(|x| x.calls).sum::<f64>() / n * h as f64;
            days += 1;
        }
        if days == 0 {
            continue;
        }
        let dn = days as f64;
        let candidate = ClockHour {
            start_clock_s: s as u32 * t.interval_s,
            offered_traffic: offered / dn,
            carried_traffic: carried / dn,
            calls_per_hour: calls / dn,
            days,
        };
        if time_consistent.is_none_or(|b| candidate.offered_traffic > b.offered_traffic) {
            time_consistent = Some(candidate);
        }
    }
    let mean = |f: fn(&DailyPeak) -> f64| {
        (!daily.is_empty()).then(|| daily.iter().map(f).sum::<f64>() / daily.len() as f64)
    };
    BusyHour {
        average_daily_peak_offered: mean(|p| p.offered_traffic),
        average_daily_peak_carried: mean(|p| p.carried_traffic),
        daily,
        time_consistent,
    }
}
