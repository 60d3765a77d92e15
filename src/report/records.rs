//! The document of `records`: what the analysis found (traffic per
//! interval, busy hours, holding-time fits, peakedness) and what the command
//! wrote (the scenario, the chart), built once; its JSON (snake_case keys)
//! and the terminal report render it. Also the traffic chart. Builds values
//! only; the command prints or writes them.

use super::json::{Rounded, round, round_opt};
use super::plot::{LineChart, Markers, Paint, Series};
use super::{CAUTION, Document};
use crate::dist::Law;
use crate::records::busy_hour::{ClockHour, DailyPeak};
use crate::records::intervals::Interval;
use crate::records::peakedness::Peakedness;
use crate::records::scenario_out::{ProfileStep, ScenarioOut, busy_hour_profile};
use crate::records::time::{self, Clock, DAY_S, Date, TimeKind};
use crate::records::{Analysis, Fit};
use crate::units::{format_duration, format_share, trim_float};
use serde::Serialize;
use serde::ser::{SerializeMap, Serializer};
use std::fmt::Write as _;

/// How the busy-hour figures rank windows, in one sentence.
pub const BASIS: &str = "windows are ranked by the offered traffic estimate (the carried traffic where the file has no outcomes)";

/// The time-consistent busy hour's definition.
pub const TCBH_DEFINITION: &str = "time-consistent busy hour: the same clock hour on every day analysed, the one with the highest mean traffic over those days (ITU-T E.600)";

/// The average daily peak hour's definition.
pub const ADPH_DEFINITION: &str = "average daily peak hour: each day's own busiest 60 minutes, traffic averaged over the days (ITU-T E.600)";

/// The offered traffic estimator, in words.
pub const OFFERED_ESTIMATOR: &str = "offered = carried + (blocked + abandoned attempts) x mean holding time of answered calls / interval; it assumes unanswered callers would have held as long as answered ones and that every attempt is a fresh call: redials are counted again, so where callers redial it overstates the fresh demand";

fn kind_name<S: Serializer>(k: &TimeKind, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(match k {
        TimeKind::Zoned => "zoned",
        TimeKind::Naive => "naive",
        TimeKind::Unix => "unix",
    })
}

fn clock(s: u32) -> String {
    Clock(i64::from(s)).to_string()
}

/// Rows of the file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Rows {
    /// Data rows read (header excluded).
    pub read: u64,
    /// Bad rows skipped (`--skip-bad`).
    pub skipped: u64,
    /// The first few skipped rows' messages (`file:line: reason`).
    pub skipped_examples: Vec<String>,
    /// Skipped rows by what was wrong ("start time", "holding time",
    /// "outcome", "other").
    pub skipped_by_kind: std::collections::BTreeMap<&'static str, u64>,
    /// Rows on days `--days` leaves out.
    pub outside_days: u64,
}

/// Calls by outcome on the analysed days.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Calls {
    /// Call attempts (rows).
    pub attempts: u64,
    /// Answered (every call, without an outcome column).
    pub answered: u64,
    /// Blocked: found no free server.
    pub blocked: u64,
    /// Abandoned before being answered.
    pub abandoned: u64,
    /// Whether the file has an outcome column.
    pub outcomes_given: bool,
}

/// The time-consistent busy hour.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TimeConsistent {
    /// Its definition.
    pub definition: &'static str,
    /// Local clock at its start ("09:15").
    pub start: String,
    /// Local clock at its end.
    pub end: String,
    /// Mean offered traffic over the days (E; 4 decimals in the JSON).
    #[serde(serialize_with = "round::<4, _>")]
    pub offered_traffic: f64,
    /// Mean carried traffic over the days (E).
    #[serde(serialize_with = "round::<4, _>")]
    pub carried_traffic: f64,
    /// Mean calls per hour over the days (2 decimals).
    #[serde(serialize_with = "round::<2, _>")]
    pub calls_per_hour: f64,
    /// Days averaged.
    pub days: usize,
}

impl From<&ClockHour> for TimeConsistent {
    fn from(b: &ClockHour) -> TimeConsistent {
        TimeConsistent {
            definition: TCBH_DEFINITION,
            start: clock(b.start_clock_s),
            end: clock(b.start_clock_s + 3600),
            offered_traffic: b.offered_traffic,
            carried_traffic: b.carried_traffic,
            calls_per_hour: b.calls_per_hour,
            days: b.days,
        }
    }
}

/// The average daily peak hour.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AverageDailyPeak {
    /// Its definition.
    pub definition: &'static str,
    /// Offered traffic of each day's own busiest hour, averaged (E); null
    /// without a day.
    #[serde(serialize_with = "round_opt::<4, _>")]
    pub offered_traffic: Option<f64>,
    /// Carried traffic likewise (E).
    #[serde(serialize_with = "round_opt::<4, _>")]
    pub carried_traffic: Option<f64>,
    /// Days averaged.
    pub days: usize,
}

/// One day's own busiest hour.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DailyBusyHour {
    /// The local date ("2025-03-03").
    pub date: String,
    /// Its weekday ("Mon").
    pub weekday: &'static str,
    /// Local clock at the start.
    pub start: String,
    /// Local clock at the end.
    pub end: String,
    /// Offered traffic (E).
    #[serde(serialize_with = "round::<4, _>")]
    pub offered_traffic: f64,
    /// Carried traffic (E).
    #[serde(serialize_with = "round::<4, _>")]
    pub carried_traffic: f64,
    /// Calls in the hour.
    pub calls: u64,
}

impl From<&DailyPeak> for DailyBusyHour {
    fn from(p: &DailyPeak) -> DailyBusyHour {
        DailyBusyHour {
            date: Date(p.day).to_string(),
            weekday: time::weekday_name(time::weekday(p.day)),
            start: clock(p.start_clock_s),
            end: clock((p.start_clock_s + 3600) % DAY_S as u32),
            offered_traffic: p.offered_traffic,
            carried_traffic: p.carried_traffic,
            calls: p.calls,
        }
    }
}

/// One interval of the busy-hour profile.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProfileInterval {
    /// Local clock at the start.
    pub start: String,
    /// Local clock at the end.
    pub end: String,
    /// Mean calls per hour over the days analysed.
    #[serde(serialize_with = "round::<2, _>")]
    pub calls_per_hour: f64,
    /// Mean offered traffic (E).
    #[serde(serialize_with = "round::<4, _>")]
    pub offered_traffic: f64,
}

impl ProfileInterval {
    fn new(p: &ProfileStep, interval_s: u32) -> ProfileInterval {
        ProfileInterval {
            start: clock(p.clock_s),
            end: clock(p.clock_s + interval_s),
            calls_per_hour: p.calls_per_hour,
            offered_traffic: p.offered_traffic,
        }
    }
}

/// The busy hours.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BusyHours {
    /// How windows are ranked.
    pub basis: &'static str,
    /// The time-consistent busy hour; null without a day.
    pub time_consistent: Option<TimeConsistent>,
    /// The average daily peak hour.
    pub average_daily_peak: AverageDailyPeak,
    /// Each day's own busiest hour.
    pub daily: Vec<DailyBusyHour>,
    /// The time-consistent busy hour with one interval either side.
    pub profile: Vec<ProfileInterval>,
}

/// A holding-time law as written in the JSON: its name, mean, cv, words
/// and shape parameter.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LawSummary {
    /// The law's name in scenario files ("lognormal").
    pub law: &'static str,
    /// Mean (s).
    #[serde(serialize_with = "round::<4, _>")]
    pub mean_s: f64,
    /// Coefficient of variation.
    #[serde(serialize_with = "round::<6, _>")]
    pub cv: f64,
    /// The law in words.
    pub description: String,
    /// Erlang phases.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub k: Option<u32>,
    /// Gamma shape.
    #[serde(
        skip_serializing_if = "Option::is_none",
        serialize_with = "round_opt::<6, _>"
    )]
    pub shape: Option<f64>,
    /// Lognormal mu (of the log, seconds).
    #[serde(
        skip_serializing_if = "Option::is_none",
        serialize_with = "round_opt::<6, _>"
    )]
    pub mu: Option<f64>,
    /// Lognormal sigma.
    #[serde(
        skip_serializing_if = "Option::is_none",
        serialize_with = "round_opt::<6, _>"
    )]
    pub sigma: Option<f64>,
    /// Values of the empirical law.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub values: Option<usize>,
    /// Whether it is the empirical law (the measured times themselves).
    #[serde(skip)]
    pub measured: bool,
}

impl From<&Law> for LawSummary {
    fn from(law: &Law) -> LawSummary {
        let mut s = LawSummary {
            law: law.name(),
            mean_s: law.mean(),
            cv: law.cv(),
            description: law.describe(),
            k: None,
            shape: None,
            mu: None,
            sigma: None,
            values: None,
            measured: false,
        };
        match law {
            Law::Erlang(l) => s.k = Some(l.k()),
            Law::Gamma(l) => s.shape = Some(l.shape()),
            Law::Lognormal(l) => {
                s.mu = Some(l.mu());
                s.sigma = Some(l.sigma());
            }
            Law::Empirical(l) => {
                s.values = Some(l.len());
                s.measured = true;
            }
            _ => {}
        }
        s
    }
}

/// A fitted law and how well it fits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LawFit {
    /// The law.
    #[serde(flatten)]
    pub law: LawSummary,
    /// How its parameters were found.
    pub method: &'static str,
    /// Kolmogorov-Smirnov distance to the sample.
    #[serde(serialize_with = "round::<6, _>")]
    pub ks_distance: f64,
    /// Below the 1% critical value (always true for the empirical law).
    pub fits: bool,
}

impl From<&Fit> for LawFit {
    fn from(f: &Fit) -> LawFit {
        LawFit {
            law: LawSummary::from(&f.law),
            method: f.method,
            ks_distance: f.ks_distance,
            fits: f.acceptable,
        }
    }
}

/// (share, seconds) pairs, written as `{"p50": seconds, ...}`.
#[derive(Debug, Clone, PartialEq)]
pub struct Percentiles(pub Vec<(f64, f64)>);

impl Serialize for Percentiles {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut map = s.serialize_map(Some(self.0.len()))?;
        for (p, v) in &self.0 {
            map.serialize_entry(&format!("p{}", trim_float(p * 100.0, 1)), &Rounded::<3>(*v))?;
        }
        map.end()
    }
}

/// Holding times of answered calls.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Holding {
    /// Values measured.
    pub count: u64,
    /// Of which exactly 0 s.
    pub zeros: u64,
    /// Mean (s).
    #[serde(serialize_with = "round::<4, _>")]
    pub mean_s: f64,
    /// Coefficient of variation.
    #[serde(serialize_with = "round::<6, _>")]
    pub cv: f64,
    /// Shortest (s).
    #[serde(serialize_with = "round::<3, _>")]
    pub min_s: f64,
    /// Longest (s).
    #[serde(serialize_with = "round::<3, _>")]
    pub max_s: f64,
    /// Percentiles (s).
    pub percentiles_s: Percentiles,
    /// Values the fits were tested on.
    pub sample_size: usize,
    /// The 1% critical Kolmogorov-Smirnov distance.
    #[serde(serialize_with = "round::<6, _>")]
    pub ks_critical: f64,
    /// Laws from best to worst fit, then the empirical law.
    pub fits: Vec<LawFit>,
    /// Whether some parametric law fits.
    pub parametric_fits: bool,
    /// The law to use.
    pub recommended: LawSummary,
}

/// The peakedness of arrivals.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PeakednessSummary {
    /// Variance over mean of calls per interval.
    #[serde(serialize_with = "round::<4, _>")]
    pub value: f64,
    /// Its standard error.
    #[serde(serialize_with = "round::<4, _>")]
    pub standard_error: f64,
    /// How it was measured, in words.
    pub method: String,
    /// Intervals it rests on.
    pub intervals: usize,
    /// Within two standard errors of 1.
    pub poisson_fair: bool,
}

impl From<&Peakedness> for PeakednessSummary {
    fn from(p: &Peakedness) -> PeakednessSummary {
        PeakednessSummary {
            value: p.value,
            standard_error: p.standard_error,
            method: p.method.describe(),
            intervals: p.intervals,
            poisson_fair: p.poisson_fair(),
        }
    }
}

/// Waiting times and the callers' patience fitted to them
/// ([`crate::records::patience`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PatienceSummary {
    /// The waiting-time column.
    pub wait_column: String,
    /// How the patience is estimated, in words.
    pub method: &'static str,
    /// Abandoned calls with a known wait (the events).
    pub abandoned_with_wait: u64,
    /// Answered calls with a known wait (censored observations).
    pub answered_with_wait: u64,
    /// Answered or abandoned calls whose wait field was empty (left out).
    pub wait_unknown: u64,
    /// Total wait of the calls with a known wait (s).
    #[serde(serialize_with = "round::<3, _>")]
    pub total_wait_s: f64,
    /// Mean patience (s); null without an abandoned call with a wait.
    #[serde(serialize_with = "round_opt::<4, _>")]
    pub mean_s: Option<f64>,
    /// Its standard error (s).
    #[serde(serialize_with = "round_opt::<4, _>")]
    pub standard_error_s: Option<f64>,
    /// The life table: the share of callers still willing to wait after
    /// a few waits, beside the fitted exponential's.
    pub still_waiting: Vec<StillWaiting>,
}

/// One row of the patience life table ([`crate::records::patience`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StillWaiting {
    /// The wait (s).
    pub after_s: f64,
    /// Life-table share still willing to wait.
    #[serde(serialize_with = "round::<4, _>")]
    pub share: f64,
    /// Greenwood's standard error.
    #[serde(serialize_with = "round::<4, _>")]
    pub standard_error: f64,
    /// The fitted exponential's share, exp(-t / mean); null without a fit.
    #[serde(serialize_with = "round_opt::<4, _>")]
    pub exponential: Option<f64>,
}

/// One local day of the file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DaySummary {
    /// The local date.
    pub date: String,
    /// Its weekday.
    pub weekday: &'static str,
    /// Its intervals (more or fewer on a day the clocks change).
    pub intervals: usize,
    /// Whether `--days` keeps it.
    pub analysed: bool,
    /// Calls that day.
    pub calls: u64,
    /// Mean carried traffic over its intervals (E).
    #[serde(serialize_with = "round::<4, _>")]
    pub carried_traffic_mean: f64,
}

/// Traffic in one interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct IntervalTraffic {
    /// Local start ("2025-03-03T09:15", with the offset where the file has one).
    pub start: String,
    /// Calls starting in it.
    pub calls: u64,
    /// Carried traffic (E).
    #[serde(serialize_with = "round::<4, _>")]
    pub carried_traffic: f64,
    /// Offered traffic estimate (E).
    #[serde(serialize_with = "round::<4, _>")]
    pub offered_traffic: f64,
    /// Answered calls (with an outcome column).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub answered: Option<u64>,
    /// Blocked calls (with an outcome column).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub blocked: Option<u64>,
    /// Abandoned calls (with an outcome column).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub abandoned: Option<u64>,
}

/// The scenario `--scenario-out` wrote.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioWritten {
    /// The files written: the scenario, and the holding-time file beside it
    /// for the empirical law.
    pub files: Vec<String>,
    /// Servers of its group.
    pub servers: u32,
    /// "given" (`--servers`) or "Erlang B" (sized for the grade).
    pub sized_by: &'static str,
    /// The grade of service asked for (a blocking share).
    pub grade: f64,
    /// The busy-hour offered traffic it was sized for (E).
    pub offered_traffic: f64,
    /// The holding law written.
    pub holding: &'static str,
    /// The mean of the exponential patience written (s), with a queue.
    #[serde(
        skip_serializing_if = "Option::is_none",
        serialize_with = "round_opt::<4, _>"
    )]
    pub patience_mean_s: Option<f64>,
}

impl ScenarioWritten {
    /// What was written: `files` from `out`, its servers `given` or sized
    /// by Erlang B for `grade`.
    pub fn new(files: Vec<String>, out: &ScenarioOut, given: bool, grade: f64) -> Self {
        ScenarioWritten {
            files,
            servers: out.servers,
            sized_by: if given { "given" } else { "Erlang B" },
            grade,
            offered_traffic: out.offered_traffic,
            holding: out.holding.name(),
            patience_mean_s: out.patience.map(|p| p.mean_s),
        }
    }
}

/// What `records` found and wrote.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RecordsDocument {
    /// The call-record file, as named.
    pub file: String,
    /// Interval length (s).
    pub interval_s: u32,
    /// How start times were written: "zoned", "naive" or "unix".
    #[serde(serialize_with = "kind_name")]
    pub time_kind: TimeKind,
    /// Unix times read at this offset from UTC ("+01:00"), when given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unix_offset: Option<String>,
    /// `--days` as given; null without it.
    pub days_filter: Option<String>,
    /// Rows read and skipped.
    pub rows: Rows,
    /// Calls by outcome.
    pub calls: Calls,
    /// The offered traffic estimator, in words.
    pub offered_traffic_estimator: &'static str,
    /// The busy hours.
    pub busy_hour: BusyHours,
    /// Holding times and fitted laws.
    pub holding: Holding,
    /// Peakedness of arrivals; null with too few intervals.
    pub peakedness: Option<PeakednessSummary>,
    /// Waits and patience; absent without a waiting-time column.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub patience: Option<PatienceSummary>,
    /// Every local day of the file.
    pub days: Vec<DaySummary>,
    /// Every interval, in time order.
    pub intervals: Vec<IntervalTraffic>,
    /// The safety caution.
    pub caution: &'static str,
    /// The scenario written, with `--scenario-out`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub scenario_out: Option<ScenarioWritten>,
    /// The chart written, with `--chart`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub chart: Option<String>,
    /// The HTML report written, with `--report`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub report: Option<String>,
}

impl RecordsDocument {
    /// The document of an analysis (nothing written yet).
    pub fn new(a: &Analysis) -> RecordsDocument {
        let h = &a.holding;
        let t = &a.timeline;
        let bh = &a.busy_hour;
        let zoned = a.time_kind == TimeKind::Zoned;
        let interval_label =
            |iv: &Interval| time::format_local(iv.local_start_s(), zoned.then_some(iv.offset_s));
        RecordsDocument {
            file: a.file.clone(),
            interval_s: a.interval_s,
            time_kind: a.time_kind,
            unix_offset: a.unix_offset_s.map(|o| time::Offset(o).to_string()),
            days_filter: a.days.as_ref().map(|d| d.text.clone()),
            rows: Rows {
                read: a.rows.read,
                skipped: a.rows.skipped,
                skipped_examples: a.rows.skipped_examples.clone(),
                skipped_by_kind: a.rows.skipped_by_kind.clone(),
                outside_days: a.rows.outside_days,
            },
            calls: Calls {
                attempts: a.totals.calls,
                answered: a.totals.answered,
                blocked: a.totals.blocked,
                abandoned: a.totals.abandoned,
                outcomes_given: a.has_outcomes,
            },
            offered_traffic_estimator: OFFERED_ESTIMATOR,
            busy_hour: BusyHours {
                basis: BASIS,
                time_consistent: bh.time_consistent.as_ref().map(TimeConsistent::from),
                average_daily_peak: AverageDailyPeak {
                    definition: ADPH_DEFINITION,
                    offered_traffic: bh.average_daily_peak_offered,
                    carried_traffic: bh.average_daily_peak_carried,
                    days: bh.daily.len(),
                },
                daily: bh.daily.iter().map(DailyBusyHour::from).collect(),
                profile: (busy_hour_profile(a).iter())
                    .map(|p| ProfileInterval::new(p, a.interval_s))
                    .collect(),
            },
            holding: Holding {
                count: h.count,
                zeros: h.zeros,
                mean_s: h.mean_s,
                cv: h.cv,
                min_s: h.min_s,
                max_s: h.max_s,
                percentiles_s: Percentiles(h.percentiles.clone()),
                sample_size: h.sample_size,
                ks_critical: h.ks_critical,
                fits: h.fits.iter().map(LawFit::from).collect(),
                parametric_fits: h.parametric_fits,
                recommended: LawSummary::from(&h.recommended),
            },
            peakedness: a.peakedness.as_ref().map(PeakednessSummary::from),
            patience: a.waits.as_ref().map(|(column, w)| PatienceSummary {
                wait_column: column.clone(),
                method: crate::records::patience::METHOD,
                abandoned_with_wait: w.abandoned,
                answered_with_wait: w.answered,
                wait_unknown: w.unknown,
                total_wait_s: w.total_wait_s,
                mean_s: a.patience.map(|p| p.mean_s),
                standard_error_s: a.patience.map(|p| p.mean_standard_error_s),
                still_waiting: (crate::records::patience::SURVIVAL_AT_S.iter())
                    .filter_map(|&t| {
                        let (share, standard_error) = w.survival(t)?;
                        Some(StillWaiting {
                            after_s: t,
                            share,
                            standard_error,
                            exponential: a.patience.map(|p| (-t / p.mean_s).exp()),
                        })
                    })
                    .collect(),
            }),
            days: (t.days.iter())
                .map(|d| {
                    let ivs = t.of(d);
                    DaySummary {
                        date: Date(d.day).to_string(),
                        weekday: time::weekday_name(time::weekday(d.day)),
                        intervals: d.len,
                        analysed: d.selected,
                        calls: ivs.iter().map(|iv| iv.calls).sum(),
                        carried_traffic_mean: ivs.iter().map(|iv| iv.carried_traffic).sum::<f64>()
                            / d.len as f64,
                    }
                })
                .collect(),
            intervals: (t.intervals.iter())
                .map(|iv| {
                    let outcome = |n: u64| a.has_outcomes.then_some(n);
                    IntervalTraffic {
                        start: interval_label(iv),
                        calls: iv.calls,
                        carried_traffic: iv.carried_traffic,
                        offered_traffic: iv.offered_traffic,
                        answered: outcome(iv.answered),
                        blocked: outcome(iv.blocked),
                        abandoned: outcome(iv.abandoned),
                    }
                })
                .collect(),
            caution: CAUTION,
            scenario_out: None,
            chart: None,
            report: None,
        }
    }
}

fn e(x: f64) -> String {
    format!("{:.2}", x)
}

impl RecordsDocument {
    /// The file, its rows, days and call counts.
    fn write_rows_and_calls(&self, w: &mut String) {
        let _ = writeln!(w, "Call records: {}", self.file);
        let _ = writeln!(
            w,
            "  {} rows read{}; start times as {}; intervals of {}",
            self.rows.read,
            if self.rows.skipped > 0 {
                let kinds: Vec<String> = (self.rows.skipped_by_kind.iter())
                    .map(|(k, n)| format!("{n} {k}"))
                    .collect();
                format!(
                    ", {} bad rows skipped ({})",
                    self.rows.skipped,
                    kinds.join(", ")
                )
            } else {
                String::new()
            },
            match &self.unix_offset {
                Some(o) => format!("{} read at UTC{o}", self.time_kind.describe()),
                None => self.time_kind.describe().to_string(),
            },
            format_duration(f64::from(self.interval_s))
        );
        if let Some(n) = self.rows.skipped_by_kind.get("outcome") {
            let _ = writeln!(
                w,
                "  {n} rows with an unknown outcome word were skipped: their calls are missing from the offered traffic; map the words with --outcome-word WORD=KIND"
            );
        }
        for m in &self.rows.skipped_examples {
            let _ = writeln!(w, "    skipped: {m}");
        }
        if let (Some(f), Some(l)) = (self.days.first(), self.days.last()) {
            let analysed = self.days.iter().filter(|d| d.analysed).count();
            let _ = writeln!(
                w,
                "  {} days, {} to {}; {} analysed{}",
                self.days.len(),
                f.date,
                l.date,
                analysed,
                self.days_filter
                    .as_ref()
                    .map_or(String::new(), |d| format!(" (--days {d})"))
            );
        }
        let c = &self.calls;
        if c.outcomes_given {
            let share = |n: u64| format_share(n as f64 / c.attempts.max(1) as f64);
            let _ = writeln!(
                w,
                "  {} call attempts: {} answered, {} blocked ({}), {} abandoned ({})",
                c.attempts,
                c.answered,
                c.blocked,
                share(c.blocked),
                c.abandoned,
                share(c.abandoned)
            );
        } else {
            let _ = writeln!(
                w,
                "  {} calls (no outcome column: every call taken as answered)",
                c.attempts
            );
        }
    }

    /// Each day's peak hour, the time-consistent busy hour, the average daily peak and the busy-hour profile.
    fn write_busy_hours(&self, w: &mut String) {
        let bh = &self.busy_hour;
        let _ = writeln!(w, "\nBusy hour, traffic in erlangs: {BASIS}");
        let _ = writeln!(
            w,
            "  day              hour           calls   carried   offered"
        );
        for p in &bh.daily {
            let _ = writeln!(
                w,
                "  {} {}   {}-{}   {:>6}   {:>7}   {:>7}",
                p.date,
                p.weekday,
                p.start,
                p.end,
                p.calls,
                e(p.carried_traffic),
                e(p.offered_traffic)
            );
        }
        if let Some(b) = &bh.time_consistent {
            let _ = writeln!(
                w,
                "  Time-consistent busy hour {}-{}: offered {} E, carried {} E, {} calls/h (mean of {} days)",
                b.start,
                b.end,
                e(b.offered_traffic),
                e(b.carried_traffic),
                trim_float(b.calls_per_hour, 1),
                b.days
            );
            let _ = writeln!(w, "    = {TCBH_DEFINITION}");
        }
        let adp = &bh.average_daily_peak;
        if let (Some(o), Some(c)) = (adp.offered_traffic, adp.carried_traffic) {
            let _ = writeln!(
                w,
                "  Average daily peak hour: offered {} E, carried {} E",
                e(o),
                e(c)
            );
            let _ = writeln!(w, "    = {ADPH_DEFINITION}");
        }
        if self.calls.outcomes_given {
            let _ = writeln!(w, "  Offered traffic estimate: {OFFERED_ESTIMATOR}");
        }
        if !bh.profile.is_empty() {
            let _ = writeln!(
                w,
                "\nBusy-hour profile (mean over the days analysed; one interval either side)"
            );
            let _ = writeln!(w, "  interval        calls/h   offered");
            for p in &bh.profile {
                let _ = writeln!(
                    w,
                    "  {}-{}   {:>8}   {:>7}",
                    p.start,
                    p.end,
                    trim_float(p.calls_per_hour, 1),
                    e(p.offered_traffic)
                );
            }
        }
    }

    /// The holding-time summary and the fitted laws, ranked.
    fn write_holding(&self, w: &mut String) {
        let h = &self.holding;
        let _ = writeln!(
            w,
            "\nHolding time of answered calls: {} calls{}, mean {} s, cv {:.2}",
            h.count,
            if h.zeros > 0 {
                format!(" ({} of 0 s)", h.zeros)
            } else {
                String::new()
            },
            trim_float(h.mean_s, 1),
            h.cv
        );
        let pct: Vec<String> = (h.percentiles_s.0.iter())
            .map(|(p, v)| format!("{}% {} s", trim_float(p * 100.0, 1), trim_float(*v, 1)))
            .collect();
        let _ = writeln!(w, "  percentiles: {}", pct.join(", "));
        let _ = writeln!(
            w,
            "  fits ranked by Kolmogorov-Smirnov distance D on {} values; a law fits when D < {:.4} (1% critical value)",
            h.sample_size, h.ks_critical
        );
        for f in &h.fits {
            let verdict = match (f.law.measured, f.fits) {
                (true, _) => "the data itself",
                (_, true) => "fits",
                (_, false) => "does not fit",
            };
            let _ = writeln!(
                w,
                "  {:<62} D = {:.4}  {verdict}",
                f.law.description, f.ks_distance
            );
        }
        if h.parametric_fits {
            let _ = writeln!(w, "  => use {}", h.recommended.description);
        } else {
            let _ = writeln!(
                w,
                "  => no parametric law fits these holding times: use the empirical law (the measured times themselves)"
            );
        }
    }

    /// The waits and the patience fitted to them; with abandoned calls but
    /// no waiting-time column, a line saying so.
    fn write_patience(&self, w: &mut String) {
        match &self.patience {
            Some(p) => {
                let _ = writeln!(
                    w,
                    "\nPatience of waiting callers (column \"{}\"): {} abandoned and {} answered calls with a wait, {} s waited in all{}",
                    p.wait_column,
                    p.abandoned_with_wait,
                    p.answered_with_wait,
                    trim_float(p.total_wait_s, 1),
                    if p.wait_unknown > 0 {
                        format!(" ({} calls without a wait left out)", p.wait_unknown)
                    } else {
                        String::new()
                    }
                );
                match (p.mean_s, p.standard_error_s) {
                    (Some(m), Some(se)) => {
                        let _ = writeln!(
                            w,
                            "  mean patience {} s ± {} s (standard error)",
                            trim_float(m, 1),
                            trim_float(se, 1)
                        );
                        let _ = writeln!(w, "  method: {}", p.method);
                    }
                    _ => {
                        let _ = writeln!(
                            w,
                            "  no abandoned call with a wait: no patience law can be fitted"
                        );
                    }
                }
                if !p.still_waiting.is_empty() {
                    let cells: Vec<String> = (p.still_waiting.iter())
                        .map(|r| {
                            format!(
                                "{} s {} ± {}{}",
                                r.after_s,
                                format_share(r.share),
                                format_share(r.standard_error),
                                r.exponential.map_or(String::new(), |x| format!(
                                    " (exp. {})",
                                    format_share(x)
                                ))
                            )
                        })
                        .collect();
                    let _ = writeln!(
                        w,
                        "  still willing to wait (life table, Cutler-Ederer; the exponential fit beside): {}",
                        cells.join(", ")
                    );
                }
            }
            None if self.calls.abandoned > 0 => {
                let _ = writeln!(
                    w,
                    "\nPatience: {} abandoned calls, but the file has no waiting-time column (name it with --wait): no patience law is fitted",
                    self.calls.abandoned
                );
            }
            None => {}
        }
    }

    /// The peakedness of the arrivals and what it means.
    fn write_peakedness(&self, w: &mut String) {
        match &self.peakedness {
            Some(p) => {
                let _ = writeln!(
                    w,
                    "\nPeakedness of arrivals (variance/mean of calls per interval): Z = {:.3} ± {:.3}",
                    p.value, p.standard_error
                );
                let _ = writeln!(w, "  method: {}", p.method);
                let verdict = if p.poisson_fair {
                    "within two standard errors of 1: Poisson arrivals are a fair assumption"
                } else if p.value > 1.0 {
                    "above 1 by more than two standard errors: the arrivals are peakier than Poisson (redials? days unlike each other? choose them with --days)"
                } else {
                    "below 1 by more than two standard errors: the arrivals are smoother than Poisson"
                };
                let _ = writeln!(w, "  {verdict}");
            }
            None => {
                let _ = writeln!(w, "\nPeakedness: too few intervals with calls to measure");
            }
        }
    }

    /// The next step, the caution and the files written.
    fn write_next_and_files(&self, w: &mut String) {
        if let Some(b) = &self.busy_hour.time_consistent {
            let _ = writeln!(
                w,
                "\nNext: busyhour calc servers --traffic {} --loss 1%   (or --scenario-out FILE.toml, then busyhour run FILE.toml)",
                trim_float(b.offered_traffic, 2)
            );
        }
        let _ = writeln!(w, "\n{CAUTION}");
        if let Some(sc) = &self.scenario_out {
            let _ = writeln!(
                w,
                "Scenario written: {} ({} servers for {} E; run it with: busyhour run {})",
                sc.files.join(" and "),
                sc.servers,
                trim_float(sc.offered_traffic, 2),
                sc.files.first().map_or("", String::as_str)
            );
        }
        if let Some(path) = &self.chart {
            let _ = writeln!(w, "Chart written: {path}");
        }
        if let Some(path) = &self.report {
            let _ = writeln!(w, "Report written: {path}");
        }
    }
}

/// The header of the records CSV (`records --csv`): one row an interval.
pub const CSV_HEADER: [&str; 9] = [
    "start",
    "date",
    "time",
    "calls",
    "answered",
    "blocked",
    "abandoned",
    "carried_traffic",
    "offered_traffic",
];

impl Document for RecordsDocument {
    /// The intervals, one row each in time order: the local start (with the
    /// offset where the file has one), its date and clock time, the calls
    /// starting in it by outcome (empty without an outcome column), carried
    /// and offered traffic (E, 4 decimals as in the JSON).
    fn csv(&self) -> Option<String> {
        let header = CSV_HEADER.iter().map(|h| h.to_string()).collect();
        let count = |n: Option<u64>| n.map_or(String::new(), |n| n.to_string());
        let rows = self.intervals.iter().map(|iv| {
            vec![
                iv.start.clone(),
                iv.start.get(..10).unwrap_or_default().to_string(),
                iv.start.get(11..16).unwrap_or_default().to_string(),
                iv.calls.to_string(),
                count(iv.answered),
                count(iv.blocked),
                count(iv.abandoned),
                trim_float(iv.carried_traffic, 4),
                trim_float(iv.offered_traffic, 4),
            ]
        });
        Some(super::text::csv(std::iter::once(header).chain(rows)))
    }

    /// The terminal report, with a line for each file written.
    fn table(&self) -> String {
        let mut s = String::new();
        self.write_rows_and_calls(&mut s);
        self.write_busy_hours(&mut s);
        self.write_holding(&mut s);
        self.write_patience(&mut s);
        self.write_peakedness(&mut s);
        self.write_next_and_files(&mut s);
        s
    }
}

/// A section of the terminal report as paragraphs, one a line, its
/// indentation and leading blank line dropped.
fn paragraphs(text: &str) -> Vec<super::html::Block> {
    (text.lines())
        .map(str::trim)
        .filter(|l| !l.is_empty())
        .map(|l| super::html::Block::Paragraph(l.to_string()))
        .collect()
}

impl RecordsDocument {
    /// The HTML report (`records --report`): the terminal report's
    /// sections, its tables as tables, and the traffic chart where given.
    /// The page carries the caution ([`super::html::page`]).
    pub fn html(&self, chart: Option<&str>) -> String {
        use super::html::Block;
        let section = |write: fn(&RecordsDocument, &mut String)| {
            let mut s = String::new();
            write(self, &mut s);
            s
        };
        let mut blocks = vec![Block::Heading("The records".into())];
        // The first line names the file, which the page's title does.
        blocks.extend(
            paragraphs(&section(Self::write_rows_and_calls))
                .into_iter()
                .skip(1),
        );
        if let Some(svg) = chart {
            blocks.push(Block::Svg(svg.to_string()));
        }
        let bh = &self.busy_hour;
        blocks.push(Block::Heading("Busy hour".into()));
        blocks.push(Block::Paragraph(format!("Traffic in erlangs; {BASIS}.")));
        let mut daily = vec![
            [
                "day",
                "weekday",
                "busiest hour",
                "calls",
                "carried (E)",
                "offered (E)",
            ]
            .map(String::from)
            .to_vec(),
        ];
        daily.extend(bh.daily.iter().map(|p| {
            vec![
                p.date.clone(),
                p.weekday.to_string(),
                format!("{}-{}", p.start, p.end),
                p.calls.to_string(),
                e(p.carried_traffic),
                e(p.offered_traffic),
            ]
        }));
        blocks.push(Block::Table(super::Table {
            title: "Each day's busiest hour".into(),
            rows: daily,
        }));
        if let Some(b) = &bh.time_consistent {
            blocks.push(Block::Paragraph(format!(
                "Time-consistent busy hour {}-{}: offered {} E, carried {} E, {} calls/h (mean of {} days); {TCBH_DEFINITION}.",
                b.start,
                b.end,
                e(b.offered_traffic),
                e(b.carried_traffic),
                trim_float(b.calls_per_hour, 1),
                b.days
            )));
        }
        let adp = &bh.average_daily_peak;
        if let (Some(o), Some(c)) = (adp.offered_traffic, adp.carried_traffic) {
            blocks.push(Block::Paragraph(format!(
                "Average daily peak hour: offered {} E, carried {} E; {ADPH_DEFINITION}.",
                e(o),
                e(c)
            )));
        }
        if self.calls.outcomes_given {
            blocks.push(Block::Paragraph(format!(
                "Offered traffic estimate: {OFFERED_ESTIMATOR}."
            )));
        }
        if !bh.profile.is_empty() {
            let mut rows = vec![
                ["interval", "calls/h", "offered (E)"]
                    .map(String::from)
                    .to_vec(),
            ];
            rows.extend(bh.profile.iter().map(|p| {
                vec![
                    format!("{}-{}", p.start, p.end),
                    trim_float(p.calls_per_hour, 1),
                    e(p.offered_traffic),
                ]
            }));
            blocks.push(Block::Table(super::Table {
                title: "Busy-hour profile (mean over the days analysed; one interval either side)"
                    .into(),
                rows,
            }));
        }
        let h = &self.holding;
        blocks.push(Block::Heading("Holding time of answered calls".into()));
        let holding = section(Self::write_holding);
        // The summary and percentile lines; the fits go in a table.
        blocks.extend(paragraphs(&holding).into_iter().take(3));
        let mut fits = vec![
            ["law", "Kolmogorov-Smirnov D", "verdict"]
                .map(String::from)
                .to_vec(),
        ];
        fits.extend(h.fits.iter().map(|f| {
            let verdict = match (f.law.measured, f.fits) {
                (true, _) => "the data itself",
                (_, true) => "fits",
                (_, false) => "does not fit",
            };
            vec![
                f.law.description.clone(),
                format!("{:.4}", f.ks_distance),
                verdict.to_string(),
            ]
        }));
        blocks.push(Block::Table(super::Table {
            title: String::new(),
            rows: fits,
        }));
        if let Some(last) = holding.lines().last() {
            blocks.push(Block::Paragraph(
                last.trim().trim_start_matches("=> ").to_string(),
            ));
        }
        let patience = section(Self::write_patience);
        if !patience.is_empty() {
            blocks.push(Block::Heading("Patience".into()));
            blocks.extend(paragraphs(&patience));
        }
        blocks.push(Block::Heading("Peakedness".into()));
        blocks.extend(paragraphs(&section(Self::write_peakedness)));
        let next = section(Self::write_next_and_files);
        let next: Vec<_> = (next.lines())
            .filter(|l| {
                let l = l.trim();
                !l.is_empty() && l != CAUTION && !l.starts_with("Report written:")
            })
            .map(|l| Block::Paragraph(l.trim().to_string()))
            .collect();
        if !next.is_empty() {
            blocks.push(Block::Heading("Next".into()));
            blocks.extend(next);
        }
        let name = short_name(&self.file);
        super::html::page(
            &format!("Call records: {name}"),
            &format!("busyhour records of {}", self.file),
            &blocks,
        )
    }
}

/// The file name of a path, for titles ("depot-calls.csv").
fn short_name(file: &str) -> &str {
    std::path::Path::new(file)
        .file_name()
        .and_then(|n| n.to_str())
        .unwrap_or(file)
}

/// The analysis alone as a terminal report (nothing written).
pub fn to_text(a: &Analysis) -> String {
    RecordsDocument::new(a).table()
}

/// The hours of the day the chart draws: from the first whole hour to the
/// end of the last hour in which some shown day carries or offers traffic
/// or has a call starting (s after midnight); the whole day when that
/// leaves out less than four hours, so that a line open day and night is
/// drawn as it is.
fn drawn_hours(a: &Analysis) -> (u32, u32) {
    let t = &a.timeline;
    let busy = (t.selected_days())
        .flat_map(|d| t.of(d))
        .filter(|iv| iv.calls > 0 || iv.carried_traffic > 0.0 || iv.offered_traffic > 0.0);
    let (mut from, mut to) = (u32::MAX, 0);
    for iv in busy {
        from = from.min(iv.clock_s);
        to = to.max(iv.clock_s + a.interval_s);
    }
    let (from, to) = (from / 3600 * 3600, to.div_ceil(3600) * 3600);
    if from >= to || to - from > 20 * 3600 {
        (0, DAY_S as u32)
    } else {
        (from, to)
    }
}

/// The traffic chart: carried traffic (and the offered estimate, with
/// outcomes) per interval on the days analysed (`--days`), each day's busy
/// hour shaded, and the installed servers as a line when known. The hours
/// without traffic between days are cut (`drawn_hours`): each day takes
/// one unit of the x axis, its traffic hours only, and its line stops at
/// the day's end, so nights do not take most of the width. Titled with the
/// file's name, not its path.
pub fn chart(a: &Analysis, installed: Option<u32>) -> LineChart {
    let t = &a.timeline;
    let days: Vec<i64> = t.selected_days().map(|d| d.day).collect();
    let (from_s, to_s) = drawn_hours(a);
    let width_s = f64::from(to_s - from_s);
    let whole_day = (from_s, to_s) == (0, DAY_S as u32);
    // x: the day's place among the days drawn, plus the share of its drawn
    // hours before the interval's middle.
    let place = |day: i64| days.iter().position(|&d| d == day);
    let x_at = move |k: usize, clock_s: f64| k as f64 + (clock_s - f64::from(from_s)) / width_s;
    let mid = f64::from(a.interval_s) / 2.0;
    let name = std::path::Path::new(&a.file)
        .file_name()
        .and_then(|n| n.to_str())
        .unwrap_or(&a.file);
    let x_label = if whole_day {
        "local day and time".to_string()
    } else {
        format!(
            "local day and time, {}-{} of each day (hours without traffic left out)",
            Clock(i64::from(from_s)),
            Clock(i64::from(to_s))
        )
    };
    let mut c = LineChart::new(
        format!(
            "Traffic per {} interval: {name}",
            format_duration(f64::from(a.interval_s))
        ),
        x_label,
        "traffic (erlangs)",
    );
    let tick_days = days.clone();
    c.x_ticks = Some(Box::new(move |x: f64| {
        let Some(&last) = tick_days.last() else {
            return String::new();
        };
        // The end of the last day is the end of its drawn hours.
        let (day, within) = match tick_days.get(x.floor().max(0.0) as usize) {
            Some(&d) => (d, (x - x.floor()).clamp(0.0, 1.0)),
            None => (last, 1.0),
        };
        let wd = time::weekday_name(time::weekday(day));
        if within < 1e-9 {
            format!("{wd} {}", &Date(day).to_string()[5..])
        } else {
            let clock = f64::from(from_s) + within * width_s;
            format!("{wd} {}", Clock((clock / 60.0).round() as i64 * 60))
        }
    }));
    // One line a day (a shared name: one legend entry), so that no line
    // crosses the cut between days; the offered estimate first, so the
    // carried line is drawn over it.
    let per_day = |name: &str, paint: Paint, value: fn(&Interval) -> f64| -> Vec<Series> {
        (t.selected_days())
            .enumerate()
            .map(|(k, d)| {
                let points = (t.of(d).iter())
                    .filter(|iv| iv.clock_s >= from_s && iv.clock_s < to_s)
                    .map(|iv| (x_at(k, f64::from(iv.clock_s) + mid), value(iv)))
                    .collect();
                Series::new(name, points).painted(paint)
            })
            .collect::<Vec<_>>()
    };
    // Drawn whole, the days follow one another: one unbroken line.
    let joined = |mut lines: Vec<Series>| -> Vec<Series> {
        if whole_day && let Some(first) = lines.first().cloned() {
            let points = lines.drain(..).flat_map(|s| s.points).collect();
            vec![Series { points, ..first }]
        } else {
            lines
        }
    };
    if a.has_outcomes {
        c.series.extend(joined(per_day(
            "offered traffic (estimate)",
            Paint::Offered,
            |iv| iv.offered_traffic,
        )));
    }
    c.series
        .extend(joined(per_day("carried traffic", Paint::Carried, |iv| {
            iv.carried_traffic
        })));
    if let Some(n) = installed {
        c.series.push(Series::goal(
            format!("installed servers ({n})"),
            f64::from(n),
            (0.0, days.len() as f64),
        ));
    }
    c.markers.push(Markers {
        name: "busy hour of the day".into(),
        spans: (a.busy_hour.daily.iter())
            .filter_map(|p| {
                let iv = &t.intervals[p.first];
                let x = x_at(place(iv.day)?, f64::from(iv.clock_s));
                Some((x, x + 3600.0 / width_s))
            })
            .collect(),
    });
    c.size = (1200, 500);
    c
}
