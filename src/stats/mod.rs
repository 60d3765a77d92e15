//! Statistics: the raw counters of one replication ([`tally`]), the figures
//! derived from them (named as in the design), and 95% Student-t intervals
//! across replications. Must not run the engine or print.

pub mod tally;

use crate::scenario::{Model, Queue};
use serde::Serialize;
use statrs::distribution::{ContinuousCDF, StudentsT};
use tally::Tally;

/// Where a figure belongs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Scope {
    /// A stream, by index.
    Stream(usize),
    /// A group, by index.
    Group(usize),
    /// A stream in a reporting interval: (interval, stream).
    StreamInterval(usize, usize),
    /// A group in a reporting interval: (interval, group).
    GroupInterval(usize, usize),
}

/// One figure of the layout.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct FigureId {
    /// Stream, group or interval.
    pub scope: Scope,
    /// The design's name, e.g. "loss".
    pub name: &'static str,
}

/// Whether stream `s` can ever wait in a queue.
pub fn stream_can_wait(model: &Model, s: usize) -> bool {
    model.streams[s]
        .route
        .iter()
        .any(|&g| model.groups[g as usize].queue != Queue::None)
}

/// Whether group `g` passes calls on to another group on some route.
pub fn group_overflows(model: &Model, g: usize) -> bool {
    model.streams.iter().any(|s| {
        s.route
            .iter()
            .position(|&x| x as usize == g)
            .is_some_and(|p| p + 1 < s.route.len())
    })
}

/// The figures a model reports, in a fixed order: streams, groups, then
/// interval figures. Figures that cannot apply (waits where nothing queues,
/// redial figures without redials) are left out.
pub fn layout(model: &Model) -> Vec<FigureId> {
    let mut out = Vec::new();
    for (s, stream) in model.streams.iter().enumerate() {
        for name in stream_figures(model, s) {
            out.push(FigureId {
                scope: Scope::Stream(s),
                name,
            });
        }
        let _ = stream;
    }
    for g in 0..model.groups.len() {
        for name in group_figures(model, g) {
            out.push(FigureId {
                scope: Scope::Group(g),
                name,
            });
        }
    }
    for b in 0..model.plan.interval_count() {
        for s in 0..model.streams.len() {
            for name in stream_interval_figures(model, s) {
                out.push(FigureId {
                    scope: Scope::StreamInterval(b, s),
                    name,
                });
            }
        }
        for g in 0..model.groups.len() {
            for name in ["carried_traffic", "occupancy", "time_congestion"] {
                out.push(FigureId {
                    scope: Scope::GroupInterval(b, g),
                    name,
                });
            }
        }
    }
    out
}

/// Names of the figures reported for stream `s`.
pub fn stream_figures(model: &Model, s: usize) -> Vec<&'static str> {
    let stream = &model.streams[s];
    let mut v = vec!["offered_calls", "offered_traffic"];
    if stream.retry.is_some() {
        v.push("attempts_per_call");
    }
    v.push("first_attempt_blocking");
    if stream.retry.is_some() {
        v.push("attempt_blocking");
    }
    v.push("loss");
    let can_wait = stream_can_wait(model, s);
    if can_wait && stream.patience.is_some() {
        v.push("abandonment");
    }
    if can_wait {
        v.push("wait_probability");
    }
    v.push("carried_traffic");
    if can_wait {
        v.extend(["wait_mean", "wait_p50", "wait_p90", "wait_p99"]);
    }
    if stream.answer_within_s.is_some() {
        v.push("service_level");
    }
    v
}

/// Names of the figures reported for group `g`.
pub fn group_figures(model: &Model, g: usize) -> Vec<&'static str> {
    let mut v = vec!["carried_traffic", "occupancy", "time_congestion"];
    if group_overflows(model, g) {
        v.extend([
            "overflow_calls",
            "overflow_mean",
            "overflow_mean_square",
            "overflow_peakedness",
        ]);
    }
    v
}

/// Names of the per-interval figures of stream `s`.
pub fn stream_interval_figures(model: &Model, s: usize) -> Vec<&'static str> {
    let mut v = vec![
        "offered_calls",
        "offered_traffic",
        "loss",
        "carried_traffic",
    ];
    if stream_can_wait(model, s) {
        v.push("wait_mean");
    }
    if model.streams[s].answer_within_s.is_some() {
        v.push("service_level");
    }
    v
}

fn ratio(num: f64, den: f64) -> f64 {
    if den > 0.0 { num / den } else { f64::NAN }
}

/// Length of reporting interval `b` (the last may be shorter).
pub fn interval_length(model: &Model, b: usize) -> f64 {
    let width = model.plan.interval_s.unwrap_or(model.plan.length_s);
    (model.plan.length_s - b as f64 * width).min(width)
}

/// The value of every figure of `layout` in one replication; NaN where the
/// figure is undefined in it (for example a mean wait with no answered call).
pub fn figures(model: &Model, layout: &[FigureId], t: &Tally) -> Vec<f64> {
    let length = model.plan.length_s;
    layout
        .iter()
        .map(|f| match f.scope {
            Scope::Stream(s) => {
                let st = &t.streams[s];
                let resolved = st.resolved() as f64;
                let quantile = |q: f64| {
                    st.waits
                        .as_ref()
                        .filter(|h| !h.is_empty())
                        .map_or(f64::NAN, |h| h.value_at_quantile(q) as f64 / 1000.0)
                };
                match f.name {
                    "offered_calls" => st.offered as f64,
                    "offered_traffic" => st.offered_holding_s / length,
                    "attempts_per_call" => ratio(st.attempts as f64, st.offered as f64),
                    "first_attempt_blocking" => ratio(st.first_blocked as f64, st.offered as f64),
                    "attempt_blocking" => ratio(st.attempts_blocked as f64, st.attempts as f64),
                    "loss" => ratio(st.lost() as f64, resolved),
                    "abandonment" => ratio(st.abandoned_final as f64, resolved),
                    "wait_probability" => ratio(st.waited as f64, resolved),
                    "carried_traffic" => st.carried_s / length,
                    "wait_mean" => ratio(st.wait_sum_s, st.answered as f64),
                    "wait_p50" => quantile(0.5),
                    "wait_p90" => quantile(0.9),
                    "wait_p99" => quantile(0.99),
                    "service_level" => ratio(st.answered_within as f64, resolved),
                    other => unreachable!("unknown stream figure {other}"),
                }
            }
            Scope::Group(g) => {
                let gt = &t.groups[g];
                let servers = f64::from(model.groups[g].servers);
                match f.name {
                    "carried_traffic" => gt.busy_s / length,
                    // Time integrals summed piece by piece can pass their
                    // bound by rounding (1 ulp): a share is capped at 1.
                    "occupancy" => (gt.busy_s / length / servers).min(1.0),
                    "time_congestion" => (gt.full_s / length).min(1.0),
                    "overflow_calls" => gt.overflow_calls as f64,
                    "overflow_mean" => gt.overflow_s / length,
                    "overflow_mean_square" => gt.overflow_sq_s / length,
                    "overflow_peakedness" => {
                        let m = gt.overflow_s / length;
                        // A variance is >= 0; rounding may leave -1e-16.
                        let v = (gt.overflow_sq_s / length - m * m).max(0.0);
                        ratio(v, m)
                    }
                    other => unreachable!("unknown group figure {other}"),
                }
            }
            Scope::StreamInterval(b, s) => {
                let it = &t.stream_intervals[b][s];
                let len = interval_length(model, b);
                match f.name {
                    "offered_calls" => it.offered as f64,
                    "offered_traffic" => it.offered_holding_s / len,
                    "loss" => ratio(it.lost as f64, it.resolved as f64),
                    "carried_traffic" => it.carried_s / len,
                    "wait_mean" => ratio(it.wait_sum_s, it.answered as f64),
                    "service_level" => ratio(it.answered_within as f64, it.resolved as f64),
                    other => unreachable!("unknown interval figure {other}"),
                }
            }
            Scope::GroupInterval(b, g) => {
                let it = &t.group_intervals[b][g];
                let len = interval_length(model, b);
                match f.name {
                    "carried_traffic" => it.busy_s / len,
                    "occupancy" => (it.busy_s / len / f64::from(model.groups[g].servers)).min(1.0),
                    "time_congestion" => (it.full_s / len).min(1.0),
                    other => unreachable!("unknown interval figure {other}"),
                }
            }
        })
        .collect()
}

/// A simulated figure: the mean across replications with its 95% Student-t
/// half-width.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Estimate {
    /// Mean across replications.
    pub mean: f64,
    /// Half-width of the 95% interval (infinite with fewer than two values).
    pub half_width: f64,
    /// Lower end of the 95% interval (within the figure's range).
    pub low: f64,
    /// Upper end of the 95% interval (within the figure's range).
    pub high: f64,
    /// Replications in which the figure was defined.
    pub replications: u64,
}

impl Estimate {
    /// A symmetric interval `mean +- half_width`.
    pub fn symmetric(mean: f64, half_width: f64, replications: u64) -> Estimate {
        Estimate {
            mean,
            half_width,
            low: mean - half_width,
            high: mean + half_width,
            replications,
        }
    }

    /// Whether `x` lies inside the 95% interval `[low, high]`.
    pub fn contains(&self, x: f64) -> bool {
        self.low <= x && x <= self.high
    }

    /// Whether `x` lies inside the interval widened by `factor` half-widths.
    pub fn covers(&self, x: f64, factor: f64) -> bool {
        (self.mean - x).abs() <= factor * self.half_width
    }

    /// Relative half-width (half-width / |mean|); 0 when both are 0.
    pub fn relative_half_width(&self) -> f64 {
        if self.half_width == 0.0 {
            0.0
        } else {
            self.half_width / self.mean.abs()
        }
    }
}

/// The 0.975 quantile of Student's t with `df` degrees of freedom.
pub fn t_quantile_975(df: u64) -> f64 {
    t_quantile(df, 0.975)
}

/// The `p` quantile of Student's t with `df` degrees of freedom (statrs).
pub fn t_quantile(df: u64, p: f64) -> f64 {
    StudentsT::new(0.0, 1.0, df as f64)
        .map(|t| t.inverse_cdf(p))
        .unwrap_or(f64::INFINITY)
}

/// The 95% Student-t estimate of the values (NaN values skipped). Sums run in
/// the order given, so callers pass replications in index order and get the
/// same bits whatever the thread count or shard split.
pub fn estimate(values: impl Iterator<Item = f64> + Clone) -> Estimate {
    let (mut n, mut sum) = (0u64, 0.0);
    for x in values.clone().filter(|x| !x.is_nan()) {
        n += 1;
        sum += x;
    }
    if n == 0 {
        return Estimate::symmetric(f64::NAN, f64::NAN, 0);
    }
    let mean = sum / n as f64;
    if n == 1 {
        return Estimate::symmetric(mean, f64::INFINITY, 1);
    }
    let ss: f64 = values
        .filter(|x| !x.is_nan())
        .map(|x| (x - mean) * (x - mean))
        .sum();
    let sd = (ss / (n - 1) as f64).sqrt();
    Estimate::symmetric(mean, t_quantile_975(n - 1) * sd / (n as f64).sqrt(), n)
}

/// The peakedness (variance / mean) of a stationary process from
/// per-replication time averages of the process (`m1`) and of its square
/// (`m2`), pooled across replications: (mean m2 - (mean m1)^2) / mean m1,
/// with a jackknife (leave one replication out) 95% interval.
///
/// Pooling avoids the bias of a variance measured inside each replication's
/// own window around that window's own mean, which is short when the window
/// is a few holding times long (the variance of the window mean is lost).
/// Replications where either value is undefined are skipped.
pub fn pooled_peakedness(m1: &[f64], m2: &[f64]) -> Estimate {
    let pairs: Vec<(f64, f64)> = m1
        .iter()
        .zip(m2)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(a, b)| (*a, *b))
        .collect();
    let n = pairs.len();
    let theta = |s1: f64, s2: f64, k: f64| {
        let (a, b) = (s1 / k, s2 / k);
        if a > 0.0 { (b - a * a) / a } else { f64::NAN }
    };
    let (s1, s2) = pairs
        .iter()
        .fold((0.0, 0.0), |acc, p| (acc.0 + p.0, acc.1 + p.1));
    if n < 2 {
        return Estimate::symmetric(
            if n == 1 { theta(s1, s2, 1.0) } else { f64::NAN },
            if n == 1 { f64::INFINITY } else { f64::NAN },
            n as u64,
        );
    }
    let all = theta(s1, s2, n as f64);
    let nf = n as f64;
    let pseudo = pairs
        .iter()
        .map(move |p| nf * all - (nf - 1.0) * theta(s1 - p.0, s2 - p.1, nf - 1.0));
    estimate(pseudo)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn t_quantiles_match_tables() {
        // Student t 0.975 quantiles, recalled from standard statistical tables.
        assert!((t_quantile_975(1) - 12.706).abs() < 1e-3);
        assert!((t_quantile_975(9) - 2.262).abs() < 1e-3);
        assert!((t_quantile_975(29) - 2.045).abs() < 1e-3);
    }

    #[test]
    fn pooled_peakedness_of_a_known_process() {
        // Two replications of a process taking values 0 and 2 half the time
        // each: mean 1, mean square 2, variance 1, peakedness 1.
        let e = pooled_peakedness(&[1.0, 1.0, 1.0], &[2.0, 2.0, 2.0]);
        assert!((e.mean - 1.0).abs() < 1e-12);
        assert!(e.half_width.abs() < 1e-12);
        // Windows with different means: the spread between them counts too.
        let e = pooled_peakedness(&[0.5, 1.5], &[0.5, 3.5]);
        // pooled mean 1, mean square 2 -> variance 1 -> peakedness 1
        assert!(e.mean.is_finite());
    }

    #[test]
    fn estimate_of_known_values() {
        let e = estimate([1.0, 2.0, 3.0, f64::NAN].into_iter());
        assert_eq!(e.replications, 3);
        assert_eq!(e.mean, 2.0);
        // sd = 1, t(2) = 4.303 (tables): hw = 4.303 / sqrt(3)
        assert!((e.half_width - 4.302_652_7 / 3f64.sqrt()).abs() < 1e-6);
    }
}
