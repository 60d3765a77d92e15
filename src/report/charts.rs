//! The charts of `run` (figures per interval of a peak profile) and `sweep`
//! (figures against the swept value), built on [`super::chart`].

use super::chart::{LineChart, Series, render_svg, stack};
use super::{Kind, RunReport, column_name};
use crate::experiment::size::Goal;
use crate::experiment::sweep::Step;
use crate::report::formula_column;
use crate::scenario::Model;
use crate::stats::{self, Estimate, Figure, FigureId, Scope};

pub use super::chart::ChartError;

fn clock_label(hours: f64) -> String {
    let m = (hours * 60.0).round() as i64;
    format!("{}:{:02}", m / 60, m % 60)
}

fn band(points: &[(f64, Estimate)], scale: f64) -> Option<Vec<(f64, f64, f64)>> {
    let b: Vec<(f64, f64, f64)> = points
        .iter()
        .filter(|(_, e)| e.mean.is_finite() && e.half_width.is_finite())
        .map(|(x, e)| {
            (
                *x,
                (e.mean - e.half_width) * scale,
                (e.mean + e.half_width) * scale,
            )
        })
        .collect();
    (!b.is_empty()).then_some(b)
}

fn series(name: String, points: &[(f64, Estimate)], scale: f64) -> Series {
    Series {
        name,
        points: points
            .iter()
            .filter(|(_, e)| e.mean.is_finite())
            .map(|(x, e)| (*x, e.mean * scale))
            .collect(),
        band: band(points, scale),
    }
}

/// Sum of an interval figure over every stream, as an estimate whose
/// half-width is taken from the per-replication sums.
fn summed(r: &RunReport, b: usize, name: Figure) -> Estimate {
    let idx: Vec<usize> = r
        .outcome
        .layout
        .iter()
        .enumerate()
        .filter(|(_, f)| {
            matches!(f.scope, Scope::StreamInterval(bb, _) if bb == b) && f.figure == name
        })
        .map(|(i, _)| i)
        .collect();
    stats::estimate(
        r.outcome
            .per_replication
            .iter()
            .map(|v| idx.iter().map(|&i| v[i].own()).sum::<f64>()),
    )
}

/// The per-interval chart of a run: offered and carried traffic (all
/// streams) with their 95% bands, and each stream's loss with its band and
/// the Erlang B of the interval load where it applies.
pub fn run_chart(r: &RunReport) -> Result<String, ChartError> {
    let model = r.model;
    let bins = model.plan.interval_count();
    if bins == 0 {
        return Err(ChartError::NoData);
    }
    let width_h = model.plan.interval_s.unwrap_or(model.plan.length_s) / 3600.0;
    let mid = |b: usize| (b as f64 + 0.5) * width_h;
    let mut traffic = LineChart::new(
        format!("{}: traffic per interval", model.title),
        "time from the end of the warm-up (h:mm, interval midpoints)",
        "traffic (erlangs)",
    );
    traffic.x_ticks = Some(Box::new(clock_label));
    for (name, fig) in [
        ("offered traffic", Figure::OfferedTraffic),
        ("carried traffic", Figure::CarriedTraffic),
    ] {
        let pts: Vec<(f64, Estimate)> = (0..bins).map(|b| (mid(b), summed(r, b, fig))).collect();
        traffic
            .series
            .push(series(format!("{name}, all streams (95% band)"), &pts, 1.0));
    }
    let mut loss = LineChart::new(
        format!("{}: loss per interval", model.title),
        "time from the end of the warm-up (h:mm, interval midpoints)",
        "loss (% of calls)",
    );
    loss.x_ticks = Some(Box::new(clock_label));
    for (s, st) in model.streams.iter().enumerate() {
        let pts: Vec<(f64, Estimate)> = (0..bins)
            .filter_map(|b| {
                r.outcome
                    .get_figure(Scope::StreamInterval(b, s), Figure::Loss)
                    .map(|e| (mid(b), e))
            })
            .collect();
        loss.series
            .push(series(format!("{} loss (95% band)", st.name), &pts, 100.0));
        let formula: Vec<(f64, f64)> = (0..bins)
            .filter_map(|b| {
                r.formulas
                    .get(&FigureId {
                        scope: Scope::StreamInterval(b, s),
                        figure: Figure::Loss,
                    })
                    .map(|f| (mid(b), f.value * 100.0))
            })
            .collect();
        if !formula.is_empty() {
            loss.series.push(Series {
                name: format!("{} loss, Erlang B of the interval load", st.name),
                points: formula,
                band: None,
            });
        }
    }
    Ok(stack(&[render_svg(&traffic)?, render_svg(&loss)?]))
}

fn unit_of(k: Kind) -> (&'static str, f64) {
    match k {
        Kind::Share => ("%", 100.0),
        Kind::Erlangs => ("erlangs", 1.0),
        Kind::Seconds => ("seconds", 1.0),
        Kind::Count => ("calls", 1.0),
        Kind::Ratio => ("ratio", 1.0),
    }
}

/// The chart of a sweep: the chosen figures against the swept value, with
/// their 95% bands, the closed-form curve where one applies, and goal lines;
/// one panel per figure.
pub fn sweep_chart(
    model: &Model,
    label_x: &str,
    steps: &[Step],
    columns: &[FigureId],
    goals: &[Goal],
) -> Result<String, ChartError> {
    let mut figures: Vec<Figure> = Vec::new();
    for f in columns {
        if !figures.contains(&f.figure) {
            figures.push(f.figure);
        }
    }
    let mut panels = Vec::new();
    for name in figures {
        let (unit, scale) = unit_of(name.unit());
        let mut c = LineChart::new(
            format!("{}: {}", model.title, name.label()),
            label_x.to_string(),
            format!("{} ({unit})", name.label()),
        );
        for f in columns.iter().filter(|f| f.figure == name) {
            let pts: Vec<(f64, Estimate)> = steps
                .iter()
                .filter_map(|st| {
                    st.outcome
                        .get_figure(f.scope, f.figure)
                        .map(|e| (st.value, e))
                })
                .collect();
            c.series.push(series(
                format!("{} (95% band)", column_name(model, f)),
                &pts,
                scale,
            ));
            let formula: Vec<(f64, f64, &str)> = steps
                .iter()
                .filter_map(|st| {
                    formula_column(&st.model)
                        .get(f)
                        .map(|fo| (st.value, fo.value * scale, fo.name))
                })
                .collect();
            if formula.len() >= 2 {
                c.series.push(Series {
                    name: format!("{}, {}", column_name(model, f), formula[0].2),
                    points: formula.iter().map(|p| (p.0, p.1)).collect(),
                    band: None,
                });
            }
        }
        let (x0, x1) = (
            steps.first().map_or(0.0, |s| s.value),
            steps.last().map_or(1.0, |s| s.value),
        );
        for g in goals.iter().filter(|g| g.figure == name) {
            c.series.push(Series {
                name: format!("goal {}", g.text),
                points: vec![(x0, g.bound * scale), (x1, g.bound * scale)],
                band: None,
            });
        }
        panels.push(render_svg(&c)?);
    }
    if panels.is_empty() {
        return Err(ChartError::NoData);
    }
    Ok(stack(&panels))
}
