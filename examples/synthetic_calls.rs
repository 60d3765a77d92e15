//! Writes synthetic call records (CSV) from known parameters, for trying
//! `busyhour records` and for its tests and benchmark.
//!
//! ```sh
//! # the demo file: an invented parcel depot's customer line, one week
//! cargo run --release --example synthetic_calls -- --preset depot --out scenarios/depot-calls.csv
//! # ten million rows at a flat 36,000 calls/h through 400 servers
//! cargo run --release --example synthetic_calls -- --preset flat --rate 36000/h \
//!     --servers 400 --days 30 --max-rows 10000000 --out /tmp/calls.csv
//! ```

use anyhow::{Context, Result, bail};
use busyhour::dist::Law;
use busyhour::records::synthetic::{self, SyntheticSpec, TimeStyle};
use busyhour::records::time::days_from_civil;
use busyhour::units;
use clap::{Parser, ValueEnum};
use std::path::PathBuf;

#[derive(Clone, Copy, ValueEnum)]
enum Preset {
    /// A parcel depot's customer line: weekday peaks at 10:00 and 14:00,
    /// half the calls on Saturday, closed on Sunday; 10 lines.
    Depot,
    /// A constant rate all day (--rate), lognormal holding (--mean, --cv).
    Flat,
}

#[derive(Clone, Copy, ValueEnum)]
enum Style {
    /// RFC 3339 with the --offset zone.
    Zoned,
    /// Local time without a zone.
    Naive,
    /// Unix seconds.
    Unix,
}

/// Write synthetic call records (call_id,start,duration_s,outcome).
#[derive(Parser)]
struct Args {
    /// Which setting.
    #[arg(long, value_enum, default_value = "depot")]
    preset: Preset,
    /// First day (local), YYYY-MM-DD.
    #[arg(long, default_value = "2025-03-03")]
    first_day: String,
    /// Number of days.
    #[arg(long, default_value_t = 7)]
    days: u32,
    /// Flat preset: calls per unit of time ("600/h").
    #[arg(long, default_value = "600/h")]
    rate: String,
    /// Flat preset: mean holding time.
    #[arg(long, default_value = "3m")]
    mean: String,
    /// Flat preset: cv of the lognormal holding time.
    #[arg(long, default_value_t = 1.0)]
    cv: f64,
    /// Servers of the loss group (default: the preset's; flat: no blocking).
    #[arg(long)]
    servers: Option<u32>,
    /// Stop after this many rows.
    #[arg(long)]
    max_rows: Option<u64>,
    /// How start times are written.
    #[arg(long, value_enum, default_value = "zoned")]
    time: Style,
    /// Zone offset for --time zoned, in minutes east of UTC.
    #[arg(long, default_value_t = 60, allow_hyphen_values = true)]
    offset_min: i32,
    /// Seed.
    #[arg(long, default_value_t = 2025)]
    seed: u64,
    /// Output file (default: standard output).
    #[arg(long)]
    out: Option<PathBuf>,
}

fn main() -> Result<()> {
    let a = Args::parse();
    let d = a.first_day.as_bytes();
    let part = |r: std::ops::Range<usize>| -> Result<u32> {
        a.first_day
            .get(r)
            .and_then(|p| p.parse().ok())
            .with_context(|| format!("--first-day '{}': expected YYYY-MM-DD", a.first_day))
    };
    if d.len() != 10 {
        bail!("--first-day '{}': expected YYYY-MM-DD", a.first_day);
    }
    let first_day = days_from_civil(i64::from(part(0..4)?), part(5..7)?, part(8..10)?);
    let mut spec = match a.preset {
        Preset::Depot => SyntheticSpec::depot(first_day, a.days, a.seed),
        Preset::Flat => {
            let rate = units::parse_rate(&a.rate)?;
            let mean = units::parse_duration(&a.mean)?;
            let law = Law::lognormal(mean, a.cv)?;
            SyntheticSpec::constant(first_day, a.days, rate, law, u32::MAX, a.seed)
        }
    };
    if let Some(n) = a.servers {
        spec.servers = n;
    }
    if !(-18 * 60..=18 * 60).contains(&a.offset_min) {
        bail!("--offset-min {}: expected -1080 to 1080", a.offset_min);
    }
    spec.time_style = match a.time {
        Style::Zoned => TimeStyle::Zoned(a.offset_min * 60),
        Style::Naive => TimeStyle::Naive,
        Style::Unix => TimeStyle::Unix,
    };
    let max = a.max_rows.unwrap_or(u64::MAX);
    let totals = match &a.out {
        Some(path) => {
            let f = std::fs::File::create(path)
                .with_context(|| format!("cannot write {}", path.display()))?;
            synthetic::write_csv(&spec, max, f)?
        }
        None => synthetic::write_csv(&spec, max, std::io::stdout().lock())?,
    };
    eprintln!("{} calls written, {} blocked", totals.calls, totals.blocked);
    Ok(())
}
