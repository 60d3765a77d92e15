//! A scenario file from measured call records: the time-consistent busy hour
//! as a Poisson peak profile, the recommended holding-time law, and one
//! group sized by Erlang B (a loss group; a queue with the callers' fitted
//! patience when the records give one, [`super::patience`]), ready to edit
//! and to run. Owns the text written;
//! the scenario module validates it like any other file.

use super::busy_hour::ClockHour;
use super::busy_hour::slot_table;
use super::time::{Clock, Date};
use super::{Analysis, RecordsError};
use crate::dist::{Law, LawParams};
use crate::formulas::erlang_b;
use crate::units::trim_float;
use std::fmt::Write as _;

/// Column name of the holding-time file written beside an empirical law.
pub const HOLDING_COLUMN: &str = "holding_s";

/// How to write the scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioOptions {
    /// Servers of the group; `None` sizes it by Erlang B for `grade`.
    pub servers: Option<u32>,
    /// Grade of service for the sizing (blocking share, e.g. 0.01).
    pub grade: f64,
    /// Use the empirical law even when a parametric law fits.
    pub empirical: bool,
    /// File name (relative to the scenario) for the empirical holding times.
    pub holding_file: String,
    /// Replications written into the scenario.
    pub replications: u32,
    /// Seed written into the scenario.
    pub seed: u64,
}

impl Default for ScenarioOptions {
    fn default() -> Self {
        ScenarioOptions {
            servers: None,
            grade: 0.01,
            empirical: false,
            holding_file: "holding-times.csv".into(),
            replications: 40,
            seed: 1,
        }
    }
}

/// One interval of the busy-hour profile.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ProfileStep {
    /// Local clock time of the start (s after midnight).
    pub clock_s: u32,
    /// Mean call attempts per hour over the days analysed.
    pub calls_per_hour: f64,
    /// Mean offered traffic estimate (erlangs).
    pub offered_traffic: f64,
}

/// The scenario text and what went into it.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioOut {
    /// The TOML file.
    pub text: String,
    /// The empirical holding-time CSV to write beside it, when used.
    pub holding_csv: Option<String>,
    /// Servers of the group.
    pub servers: u32,
    /// Busy-hour offered traffic the group was sized for (erlangs).
    pub offered_traffic: f64,
    /// The profile: the busy hour with one interval either side.
    pub profile: Vec<ProfileStep>,
    /// The holding law written.
    pub holding: Law,
    /// The patience written (with a queue), fitted from the waits.
    pub patience: Option<super::PatienceEstimate>,
}

/// The busy-hour profile: the time-consistent busy hour's intervals with
/// one more on either side (where the day has them), each the mean over the
/// analysed days of the calls per hour and the offered traffic at that
/// clock position. Empty without a busy hour.
pub fn busy_hour_profile(a: &Analysis) -> Vec<ProfileStep> {
    let t = &a.timeline;
    let Some(bh) = a.busy_hour.time_consistent else {
        return Vec::new();
    };
    let table = slot_table(t);
    let slots = t.slots_per_day();
    let h = (3600 / t.interval_s) as usize;
    let s0 = (bh.start_clock_s / t.interval_s) as usize;
    let from = s0.saturating_sub(1);
    let to = (s0 + h + 1).min(slots);
    (from..to)
        .filter_map(|s| {
            let (mut calls, mut offered, mut days) = (0.0, 0.0, 0.0);
            for row in &table {
                let x = row[s];
                if x.count > 0 {
                    calls += x.calls / f64::from(x.count);
                    offered += x.offered / f64::from(x.count);
                    days += 1.0;
                }
            }
            (days > 0.0).then(|| ProfileStep {
                clock_s: s as u32 * t.interval_s,
                calls_per_hour: calls / days * 3600.0 / f64::from(t.interval_s),
                offered_traffic: offered / days,
            })
        })
        .collect()
}

/// Seconds for the scenario file: "183.2417s".
fn secs(x: f64) -> String {
    format!("\"{}s\"", trim_float(x, 4))
}

/// Six significant figures, for cvs and shapes.
fn number(x: f64) -> String {
    let digits = (5 - x.abs().log10().floor() as i32).clamp(0, 12) as usize;
    trim_float(x, digits)
}

/// The law as an inline TOML table of the scenario format: its parameters
/// ([`Law::params`]) serialised by serde into TOML values, written in the
/// order of the law's parameter struct, a mean to four decimals of a second
/// with its unit and other numbers to six significant figures, as one would
/// write them by hand. An empirical law names `holding_file`.
pub fn law_toml(law: &Law, holding_file: &str) -> String {
    let mut params = law.params();
    if let LawParams::Empirical(p) = &mut params {
        p.file = Some(holding_file.to_string());
        p.column = Some(HOLDING_COLUMN.to_string());
    }
    let table = toml::Table::try_from(&params)
        .expect("law parameters are options of numbers and text, which TOML holds");
    let mut parts = vec![format!(
        "law = {}",
        toml::Value::String(params.name().to_string())
    )];
    for key in LawParams::keys(params.name()).unwrap_or(&[]) {
        let Some(value) = table.get(*key) else {
            continue;
        };
        let text = match (*key, value) {
            ("mean", toml::Value::Float(x)) => secs(*x),
            (_, toml::Value::Float(x)) => number(*x),
            (_, v) => v.to_string(),
        };
        parts.push(format!("{key} = {text}"));
    }
    format!("{{ {} }}", parts.join(", "))
}

/// What the scenario is written from: the busy hour, its profile, the
/// servers and the holding law, checked.
struct Inputs {
    bh: ClockHour,
    profile: Vec<ProfileStep>,
    servers: u32,
    holding: Law,
    /// The fitted patience as a law, where the records give one.
    patience: Option<Law>,
}

/// Write the scenario (see the module doc). Fails when the records show no
/// busy hour or no traffic to size for.
pub fn render(a: &Analysis, opts: &ScenarioOptions) -> Result<ScenarioOut, RecordsError> {
    let inputs = inputs(a, opts)?;
    let mut text = String::new();
    write_header(&mut text, a, &inputs);
    write_simulation(&mut text, a, opts, &inputs);
    write_group(&mut text, a, opts, &inputs);
    write_stream(&mut text, a, opts, &inputs);
    let Inputs {
        bh,
        profile,
        servers,
        holding,
        patience: _,
    } = inputs;
    Ok(ScenarioOut {
        text,
        holding_csv: holding_csv(&holding),
        servers,
        offered_traffic: bh.offered_traffic,
        profile,
        holding,
        patience: a.patience,
    })
}

/// The busy hour, its profile, the servers (given or sized by Erlang B)
/// and the holding law (the recommended one, or the empirical one when
/// asked for and fitted).
fn inputs(a: &Analysis, opts: &ScenarioOptions) -> Result<Inputs, RecordsError> {
    let err = |reason: String| RecordsError::ScenarioOut {
        file: a.file.clone(),
        reason,
    };
    let bh = a
        .busy_hour
        .time_consistent
        .ok_or_else(|| err("the records hold no busy hour (no analysed day)".into()))?;
    let profile = busy_hour_profile(a);
    if bh.offered_traffic.is_nan()
        || bh.offered_traffic <= 0.0
        || profile.iter().all(|p| p.calls_per_hour == 0.0)
    {
        return Err(err("the busy hour has no traffic to size for".into()));
    }
    let servers = match opts.servers {
        Some(n) => n,
        None => {
            erlang_b::servers_for(bh.offered_traffic, opts.grade).map_err(|e| err(e.to_string()))?
        }
    };
    let holding = if opts.empirical {
        a.holding
            .fits
            .iter()
            .find(|f| matches!(f.law, Law::Empirical(_)))
            .map_or_else(|| a.holding.recommended.clone(), |f| f.law.clone())
    } else {
        a.holding.recommended.clone()
    };
    let patience = (a.patience.as_ref())
        .map(|p| crate::dist::Exponential::new(p.mean_s).map(Law::Exponential))
        .transpose()
        .map_err(|e| err(format!("the fitted patience: {e}")))?;
    Ok(Inputs {
        bh,
        profile,
        servers,
        holding,
        patience,
    })
}

/// The profile's interval as a scenario duration, e.g. `"15m"`.
fn interval_text(a: &Analysis) -> String {
    format!(
        "\"{}m\"",
        trim_float(f64::from(a.timeline.interval_s) / 60.0, 3)
    )
}

/// The comment lines that say where the scenario comes from, and the title.
fn write_header(w: &mut String, a: &Analysis, inputs: &Inputs) {
    let bh = &inputs.bh;
    let days: Vec<_> = a.timeline.selected_days().collect();
    let (first, last) = (days.first().map(|d| d.day), days.last().map(|d| d.day));
    let day_text = match (first, last) {
        (Some(f), Some(l)) => format!("{} to {}", Date(f), Date(l)),
        _ => String::new(),
    };
    let bh_end = bh.start_clock_s + 3600;
    let _ = writeln!(w, "# Measured busy hour of {} (busyhour records).", a.file);
    let _ = writeln!(w, "# Caution: {}", crate::CAUTION);
    let _ = writeln!(
        w,
        "# {} days analysed ({day_text}{}), {} intervals.",
        days.len(),
        a.days
            .as_ref()
            .map_or(String::new(), |d| format!(", --days {}", d.text)),
        crate::units::format_duration(f64::from(a.timeline.interval_s))
    );
    let _ = writeln!(
        w,
        "# Time-consistent busy hour {}-{}: offered traffic {} E (estimate), carried {} E,",
        Clock(i64::from(bh.start_clock_s)),
        Clock(i64::from(bh_end)),
        trim_float(bh.offered_traffic, 3),
        trim_float(bh.carried_traffic, 3)
    );
    let _ = writeln!(
        w,
        "# {} call attempts per hour (mean over days). The rates below are call attempts",
        trim_float(bh.calls_per_hour, 1)
    );
    let _ = writeln!(
        w,
        "# per hour in each interval, mean over days, from one interval before the busy"
    );
    let _ = writeln!(
        w,
        "# hour to one after; redials in the records count as fresh calls. Edit freely."
    );
    let _ = writeln!(
        w,
        "title = \"Measured busy hour of {}\"",
        toml_escape(&a.file)
    );
    let _ = writeln!(w);
}

/// `[simulation]`: a warm-up of ten mean holding times (at least 15
/// minutes, whole minutes), the profile's length and interval.
fn write_simulation(w: &mut String, a: &Analysis, opts: &ScenarioOptions, inputs: &Inputs) {
    let length_s = inputs.profile.len() as f64 * f64::from(a.timeline.interval_s);
    let warmup_min = (f64::max(900.0, 10.0 * inputs.holding.mean()) / 60.0).ceil();
    let _ = writeln!(w, "[simulation]");
    let _ = writeln!(
        w,
        "warmup = \"{}m\"           # runs at the first rate of the profile",
        warmup_min
    );
    let _ = writeln!(
        w,
        "length = \"{}m\"          # the profile below",
        trim_float(length_s / 60.0, 3)
    );
    let _ = writeln!(w, "interval = {}", interval_text(a));
    if let Some(first) = inputs.profile.first() {
        let _ = writeln!(
            w,
            "clock_start = \"{}\"     # the measured clock time the profile starts at",
            crate::units::format_time_of_day(f64::from(first.clock_s))
        );
    }
    let _ = writeln!(w, "replications = {}", opts.replications);
    let _ = writeln!(w, "seed = {}", opts.seed);
    let _ = writeln!(w);
}

/// The group's name: agents where callers queue, circuits otherwise.
fn group_name(a: &Analysis) -> &'static str {
    if a.patience.is_some() {
        "agents"
    } else {
        "circuits"
    }
}

/// `[[group]]`: one group, with how its size was chosen: a loss group, or
/// an unlimited queue when the records give the callers' patience
/// ([`super::patience`]); with abandoned calls but no waits, a comment says
/// why no patience law is written.
fn write_group(w: &mut String, a: &Analysis, opts: &ScenarioOptions, inputs: &Inputs) {
    let _ = writeln!(w, "[[group]]");
    let _ = writeln!(w, "name = \"{}\"", group_name(a));
    match opts.servers {
        None => {
            let _ = writeln!(
                w,
                "# Erlang B: the fewest servers with at most {} blocking at the busy hour's {} E.",
                crate::units::format_share(opts.grade),
                trim_float(inputs.bh.offered_traffic, 3)
            );
            if a.patience.is_some() {
                let _ = writeln!(
                    w,
                    "# Here callers wait instead of being lost; size for a service level with busyhour size."
                );
            }
        }
        Some(_) => {
            let _ = writeln!(w, "# Servers as given (not sized by a formula).");
        }
    }
    let _ = writeln!(w, "servers = {}", inputs.servers);
    if a.patience.is_some() {
        let _ = writeln!(
            w,
            "queue = \"unlimited\"     # callers wait until answered or out of patience (below)"
        );
    } else if a.totals.abandoned > 0 {
        let why = match &a.waits {
            None => "the file has no waiting-time column".to_string(),
            Some((column, _)) => format!("column \"{column}\" gives no abandoned call a wait"),
        };
        let _ = writeln!(
            w,
            "# The records hold {} abandoned calls but no waiting times to fit a patience law to",
            a.totals.abandoned
        );
        let _ = writeln!(
            w,
            "# ({why}; name it with --wait): written as a loss group. Add queue and patience by hand."
        );
    }
    let _ = writeln!(w);
}

/// `[[stream]]`: the profile as Poisson arrivals and the holding law.
fn write_stream(w: &mut String, a: &Analysis, opts: &ScenarioOptions, inputs: &Inputs) {
    let holding = &inputs.holding;
    let _ = writeln!(w, "[[stream]]");
    let _ = writeln!(w, "name = \"measured\"");
    let rates: Vec<String> = inputs
        .profile
        .iter()
        .map(|p| format!("\"{}/h\"", trim_float(p.calls_per_hour, 2)))
        .collect();
    let clocks: Vec<String> = inputs
        .profile
        .iter()
        .map(|p| Clock(i64::from(p.clock_s)).to_string())
        .collect();
    let _ = writeln!(w, "# intervals from {}", clocks.join(", "));
    let _ = writeln!(
        w,
        "arrivals = {{ law = \"poisson\", interval = {}, rates = [{}] }}",
        interval_text(a),
        rates.join(", ")
    );
    let fit_note = if matches!(holding, Law::Empirical(_)) {
        if a.holding.parametric_fits && opts.empirical {
            "the measured holding times themselves (asked for)".to_string()
        } else {
            "the measured holding times themselves: no parametric law fits".to_string()
        }
    } else {
        format!(
            "{}, best fit by Kolmogorov-Smirnov distance among the laws tried",
            holding.describe()
        )
    };
    let _ = writeln!(w, "# holding time: {fit_note}");
    let _ = writeln!(w, "holding = {}", law_toml(holding, &opts.holding_file));
    let _ = writeln!(w, "route = [\"{}\"]", group_name(a));
    if let (Some(p), Some((column, waits))) = (&a.patience, &a.waits) {
        let _ = writeln!(w, "# patience: {}.", super::patience::METHOD);
        let _ = writeln!(
            w,
            "# From column \"{column}\": {} abandoned and {} answered calls with a wait, {} s waited in all;",
            waits.abandoned,
            waits.answered,
            trim_float(waits.total_wait_s, 1)
        );
        let _ = writeln!(
            w,
            "# mean patience {} s, standard error {} s. It assumes patience does not depend on the wait.",
            trim_float(p.mean_s, 1),
            trim_float(p.mean_standard_error_s, 1)
        );
        if let Some(law) = &inputs.patience {
            let _ = writeln!(w, "patience = {}", law_toml(law, ""));
        }
    }
}

/// The data file of an empirical holding law: its values, one a line.
fn holding_csv(holding: &Law) -> Option<String> {
    let Law::Empirical(e) = holding else {
        return None;
    };
    let mut csv = String::with_capacity(e.len() * 8 + 16);
    csv.push_str(HOLDING_COLUMN);
    csv.push('\n');
    for v in e.values() {
        csv.push_str(&trim_float(*v, 3));
        csv.push('\n');
    }
    Some(csv)
}

fn toml_escape(s: &str) -> String {
    s.chars()
        .flat_map(|c| match c {
            '"' => vec!['\\', '"'],
            '\\' => vec!['\\', '\\'],
            c if c.is_control() => vec![' '],
            c => vec![c],
        })
        .collect()
}
