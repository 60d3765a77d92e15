//! The analysis as people read it: a terminal report, JSON with snake_case
//! keys, and the traffic chart. Builds text and values only; the command
//! prints or writes them.

use super::busy_hour::{ClockHour, DailyPeak};
use super::intervals::Interval;
use super::peakedness::Peakedness;
use super::scenario_out::{ProfileStep, busy_hour_profile};
use super::time::{self, Clock, DAY_S, Date, TimeKind};
use super::{Analysis, Fit};
use crate::dist::Law;
use crate::report::chart::{LineChart, Markers, Series};
use crate::units::{format_share, trim_float};
use serde_json::{Value, json};
use std::fmt::Write as _;

/// How the busy-hour figures rank windows, in one sentence.
pub const BASIS: &str = "windows are ranked by the offered traffic estimate (the carried traffic where the file has no outcomes)";

/// The time-consistent busy hour's definition.
pub const TCBH_DEFINITION: &str = "time-consistent busy hour: the same clock hour on every day analysed, the one with the highest mean traffic over those days (ITU-T E.600)";

/// The average daily peak hour's definition.
pub const ADPH_DEFINITION: &str = "average daily peak hour: each day's own busiest 60 minutes, traffic averaged over the days (ITU-T E.600)";

/// The offered traffic estimator, in words.
pub const OFFERED_ESTIMATOR: &str = "offered = carried + (blocked + abandoned attempts) x mean holding time of answered calls / interval; it assumes unanswered callers would have held as long as answered ones and that every attempt is a fresh call: redials are counted again, so where callers redial it overstates the fresh demand";

fn kind_name(k: TimeKind) -> &'static str {
    match k {
        TimeKind::Zoned => "zoned",
        TimeKind::Naive => "naive",
        TimeKind::Unix => "unix",
    }
}

fn round(x: f64, digits: i32) -> Value {
    if !x.is_finite() {
        return Value::Null;
    }
    let f = 10f64.powi(digits);
    json!((x * f).round() / f)
}

fn interval_label(a: &Analysis, iv: &Interval) -> String {
    let offset = (a.time_kind == TimeKind::Zoned).then_some(iv.offset_s);
    time::format_local(iv.local_start_s(), offset)
}

/// Parameters of a law for JSON: mean, cv and its shape parameter.
fn law_json(law: &Law) -> Value {
    let mut v = json!({
        "law": law.name(),
        "mean_s": round(law.mean(), 4),
        "cv": round(law.cv(), 6),
        "description": law.describe(),
    });
    match law {
        Law::Erlang(l) => v["k"] = json!(l.k()),
        Law::Gamma(l) => v["shape"] = round(l.shape(), 6),
        Law::Lognormal(l) => {
            v["mu"] = round(l.mu(), 6);
            v["sigma"] = round(l.sigma(), 6);
        }
        Law::Empirical(l) => v["values"] = json!(l.len()),
        _ => {}
    }
    v
}

fn fit_json(f: &Fit) -> Value {
    let mut v = law_json(&f.law);
    v["method"] = json!(f.method);
    v["ks_distance"] = round(f.ks_distance, 6);
    v["fits"] = json!(f.acceptable);
    v
}

fn clock(s: u32) -> String {
    Clock(i64::from(s)).to_string()
}

fn tcbh_json(b: &ClockHour) -> Value {
    json!({
        "definition": TCBH_DEFINITION,
        "start": clock(b.start_clock_s),
        "end": clock(b.start_clock_s + 3600),
        "offered_traffic": round(b.offered_traffic, 4),
        "carried_traffic": round(b.carried_traffic, 4),
        "calls_per_hour": round(b.calls_per_hour, 2),
        "days": b.days,
    })
}

fn daily_json(p: &DailyPeak) -> Value {
    json!({
        "date": Date(p.day).to_string(),
        "weekday": time::weekday_name(time::weekday(p.day)),
        "start": clock(p.start_clock_s),
        "end": clock((p.start_clock_s + 3600) % DAY_S as u32),
        "offered_traffic": round(p.offered_traffic, 4),
        "carried_traffic": round(p.carried_traffic, 4),
        "calls": p.calls,
    })
}

fn peakedness_json(p: &Peakedness) -> Value {
    json!({
        "value": round(p.value, 4),
        "standard_error": round(p.standard_error, 4),
        "method": p.method.describe(),
        "intervals": p.intervals,
        "poisson_fair": p.poisson_fair(),
    })
}

fn profile_json(p: &[ProfileStep], interval_s: u32) -> Value {
    Value::Array(
        p.iter()
            .map(|s| {
                json!({
                    "start": clock(s.clock_s),
                    "end": clock(s.clock_s + interval_s),
                    "calls_per_hour": round(s.calls_per_hour, 2),
                    "offered_traffic": round(s.offered_traffic, 4),
                })
            })
            .collect(),
    )
}

/// The analysis as JSON (keys documented in the README's "Call records").
pub fn to_json(a: &Analysis) -> Value {
    let h = &a.holding;
    let t = &a.timeline;
    let percentiles: serde_json::Map<String, Value> = h
        .percentiles
        .iter()
        .map(|(p, v)| (format!("p{}", trim_float(p * 100.0, 1)), round(*v, 3)))
        .collect();
    let days: Vec<Value> = t
        .days
        .iter()
        .map(|d| {
            let ivs = t.of(d);
            json!({
                "date": Date(d.day).to_string(),
                "weekday": time::weekday_name(time::weekday(d.day)),
                "intervals": d.len,
                "analysed": d.selected,
                "calls": ivs.iter().map(|iv| iv.calls).sum::<u64>(),
                "carried_traffic_mean": round(ivs.iter().map(|iv| iv.carried_traffic).sum::<f64>() / d.len as f64, 4),
            })
        })
        .collect();
    let intervals: Vec<Value> = t
        .intervals
        .iter()
        .map(|iv| {
            let mut v = json!({
                "start": interval_label(a, iv),
                "calls": iv.calls,
                "carried_traffic": round(iv.carried_traffic, 4),
                "offered_traffic": round(iv.offered_traffic, 4),
            });
            if a.has_outcomes {
                v["answered"] = json!(iv.answered);
                v["blocked"] = json!(iv.blocked);
                v["abandoned"] = json!(iv.abandoned);
            }
            v
        })
        .collect();
    let bh = &a.busy_hour;
    json!({
        "file": a.file,
        "interval_s": a.interval_s,
        "time_kind": kind_name(a.time_kind),
        "days_filter": a.days.as_ref().map(|d| d.text.clone()),
        "rows": {
            "read": a.rows.read,
            "skipped": a.rows.skipped,
            "skipped_examples": a.rows.skipped_examples,
            "outside_days": a.rows.outside_days,
        },
        "calls": {
            "attempts": a.totals.calls,
            "answered": a.totals.answered,
            "blocked": a.totals.blocked,
            "abandoned": a.totals.abandoned,
            "outcomes_given": a.has_outcomes,
        },
        "offered_traffic_estimator": OFFERED_ESTIMATOR,
        "busy_hour": {
            "basis": BASIS,
            "time_consistent": bh.time_consistent.as_ref().map(tcbh_json),
            "average_daily_peak": {
                "definition": ADPH_DEFINITION,
                "offered_traffic": bh.average_daily_peak_offered.map_or(Value::Null, |x| round(x, 4)),
                "carried_traffic": bh.average_daily_peak_carried.map_or(Value::Null, |x| round(x, 4)),
                "days": bh.daily.len(),
            },
            "daily": bh.daily.iter().map(daily_json).collect::<Vec<_>>(),
            "profile": profile_json(&busy_hour_profile(a), a.interval_s),
        },
        "holding": {
            "count": h.count,
            "zeros": h.zeros,
            "mean_s": round(h.mean_s, 4),
            "cv": round(h.cv, 6),
            "min_s": round(h.min_s, 3),
            "max_s": round(h.max_s, 3),
            "percentiles_s": percentiles,
            "sample_size": h.sample_size,
            "ks_critical": round(h.ks_critical, 6),
            "fits": h.fits.iter().map(fit_json).collect::<Vec<_>>(),
            "parametric_fits": h.parametric_fits,
            "recommended": law_json(&h.recommended),
        },
        "peakedness": a.peakedness.as_ref().map(peakedness_json),
        "days": days,
        "intervals": intervals,
        "caution": crate::report::CAUTION,
    })
}

fn e(x: f64) -> String {
    format!("{:.2}", x)
}

/// The analysis as a terminal report.
pub fn to_text(a: &Analysis) -> String {
    let mut s = String::new();
    let w = &mut s;
    let t = &a.timeline;
    let all_days: Vec<_> = t.days.iter().collect();
    let _ = writeln!(w, "Call records: {}", a.file);
    let _ = writeln!(
        w,
        "  {} rows read{}; start times as {}; intervals of {}",
        a.rows.read,
        if a.rows.skipped > 0 {
            format!(", {} bad rows skipped", a.rows.skipped)
        } else {
            String::new()
        },
        a.time_kind.describe(),
        crate::units::format_duration(f64::from(a.interval_s))
    );
    for m in &a.rows.skipped_examples {
        let _ = writeln!(w, "    skipped: {m}");
    }
    if let (Some(f), Some(l)) = (all_days.first(), all_days.last()) {
        let analysed = t.selected_days().count();
        let _ = writeln!(
            w,
            "  {} days, {} to {}; {} analysed{}",
            all_days.len(),
            Date(f.day),
            Date(l.day),
            analysed,
            a.days
                .as_ref()
                .map_or(String::new(), |d| format!(" (--days {})", d.text))
        );
    }
    let tot = a.totals;
    if a.has_outcomes {
        let share = |n: u64| format_share(n as f64 / tot.calls.max(1) as f64);
        let _ = writeln!(
            w,
            "  {} call attempts: {} answered, {} blocked ({}), {} abandoned ({})",
            tot.calls,
            tot.answered,
            tot.blocked,
            share(tot.blocked),
            tot.abandoned,
            share(tot.abandoned)
        );
    } else {
        let _ = writeln!(
            w,
            "  {} calls (no outcome column: every call taken as answered)",
            tot.calls
        );
    }

    let bh = &a.busy_hour;
    let _ = writeln!(w, "\nBusy hour, traffic in erlangs: {BASIS}");
    let _ = writeln!(
        w,
        "  day              hour           calls   carried   offered"
    );
    for p in &bh.daily {
        let _ = writeln!(
            w,
            "  {} {}   {}-{}   {:>6}   {:>7}   {:>7}",
            Date(p.day),
            time::weekday_name(time::weekday(p.day)),
            clock(p.start_clock_s),
            clock((p.start_clock_s + 3600) % DAY_S as u32),
            p.calls,
            e(p.carried_traffic),
            e(p.offered_traffic)
        );
    }
    if let Some(b) = &bh.time_consistent {
        let _ = writeln!(
            w,
            "  Time-consistent busy hour {}-{}: offered {} E, carried {} E, {} calls/h (mean of {} days)",
            clock(b.start_clock_s),
            clock(b.start_clock_s + 3600),
            e(b.offered_traffic),
            e(b.carried_traffic),
            trim_float(b.calls_per_hour, 1),
            b.days
        );
        let _ = writeln!(w, "    = {TCBH_DEFINITION}");
    }
    if let (Some(o), Some(c)) = (bh.average_daily_peak_offered, bh.average_daily_peak_carried) {
        let _ = writeln!(
            w,
            "  Average daily peak hour: offered {} E, carried {} E",
            e(o),
            e(c)
        );
        let _ = writeln!(w, "    = {ADPH_DEFINITION}");
    }
    if a.has_outcomes {
        let _ = writeln!(w, "  Offered traffic estimate: {OFFERED_ESTIMATOR}");
    }
    let profile = busy_hour_profile(a);
    if !profile.is_empty() {
        let _ = writeln!(
            w,
            "\nBusy-hour profile (mean over the days analysed; one interval either side)"
        );
        let _ = writeln!(w, "  interval        calls/h   offered");
        for p in &profile {
            let _ = writeln!(
                w,
                "  {}-{}   {:>8}   {:>7}",
                clock(p.clock_s),
                clock(p.clock_s + a.interval_s),
                trim_float(p.calls_per_hour, 1),
                e(p.offered_traffic)
            );
        }
    }

    let h = &a.holding;
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
    let pct: Vec<String> = h
        .percentiles
        .iter()
        .map(|(p, v)| format!("{}% {} s", trim_float(p * 100.0, 1), trim_float(*v, 1)))
        .collect();
    let _ = writeln!(w, "  percentiles: {}", pct.join(", "));
    let _ = writeln!(
        w,
        "  fits ranked by Kolmogorov-Smirnov distance D on {} values; a law fits when D < {:.4} (1% critical value)",
        h.sample_size, h.ks_critical
    );
    for f in &h.fits {
        let verdict = match (&f.law, f.acceptable) {
            (Law::Empirical(_), _) => "the data itself",
            (_, true) => "fits",
            (_, false) => "does not fit",
        };
        let _ = writeln!(
            w,
            "  {:<62} D = {:.4}  {verdict}",
            f.law.describe(),
            f.ks_distance
        );
    }
    if h.parametric_fits {
        let _ = writeln!(w, "  => use {}", h.recommended.describe());
    } else {
        let _ = writeln!(
            w,
            "  => no parametric law fits these holding times: use the empirical law (the measured times themselves)"
        );
    }

    match &a.peakedness {
        Some(p) => {
            let _ = writeln!(
                w,
                "\nPeakedness of arrivals (variance/mean of calls per interval): Z = {:.3} ± {:.3}",
                p.value, p.standard_error
            );
            let _ = writeln!(w, "  method: {}", p.method.describe());
            let verdict = if p.poisson_fair() {
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
    if let Some(b) = &bh.time_consistent {
        let _ = writeln!(
            w,
            "\nNext: busyhour calc servers --traffic {} --loss 1%   (or --scenario-out FILE.toml, then busyhour run FILE.toml)",
            trim_float(b.offered_traffic, 2)
        );
    }
    let _ = writeln!(w, "\n{}", crate::report::CAUTION);
    s
}

/// The traffic chart: carried traffic (and the offered estimate, with
/// outcomes) per interval over the days, each day's busy hour shaded.
pub fn chart(a: &Analysis) -> LineChart {
    let t = &a.timeline;
    let first_day = t.days.first().map_or(0, |d| d.day);
    let interval = f64::from(a.interval_s);
    // x: local days since the first day's midnight, at the interval's middle.
    let x_of = |iv: &Interval| (iv.local_start_s() - first_day * DAY_S) as f64 / DAY_S as f64;
    let mid = interval / 2.0 / DAY_S as f64;
    let mut c = LineChart::new(
        format!(
            "Traffic per {} interval: {}",
            crate::units::format_duration(interval),
            a.file
        ),
        format!("local day and time (from {})", Date(first_day)),
        "traffic (erlangs)",
    );
    c.x_ticks = Some(Box::new(move |x: f64| {
        let d = first_day + x.floor() as i64;
        let within = ((x - x.floor()) * DAY_S as f64).round() as i64;
        if within == 0 || within == DAY_S {
            let d = if within == DAY_S { d + 1 } else { d };
            format!(
                "{} {}",
                time::weekday_name(time::weekday(d)),
                &Date(d).to_string()[5..]
            )
        } else {
            format!(
                "{} {}",
                time::weekday_name(time::weekday(d)),
                Clock(within / 60 * 60)
            )
        }
    }));
    // The offered estimate first, so the carried line is drawn over it.
    if a.has_outcomes {
        c.series.push(Series {
            name: "offered traffic (estimate)".into(),
            points: t
                .intervals
                .iter()
                .map(|iv| (x_of(iv) + mid, iv.offered_traffic))
                .collect(),
            band: None,
        });
    }
    c.series.push(Series {
        name: "carried traffic".into(),
        points: t
            .intervals
            .iter()
            .map(|iv| (x_of(iv) + mid, iv.carried_traffic))
            .collect(),
        band: None,
    });
    c.markers.push(Markers {
        name: "busy hour of the day".into(),
        spans: a
            .busy_hour
            .daily
            .iter()
            .map(|p| {
                let x = x_of(&t.intervals[p.first]);
                (x, x + 3600.0 / DAY_S as f64)
            })
            .collect(),
    });
    c.size = (1200, 500);
    c
}
