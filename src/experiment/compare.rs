//! Paired comparison of two designs (`compare`): both models run on one plan
//! with the same seed and replication numbers, so replication r of A and of
//! B draw the same random numbers for every stream of the same name (common
//! random numbers, [`crate::engine::seeds`]). Every figure the two report in
//! common gets its difference B - A with a 95% interval from the paired
//! replications, beside the half-width an unpaired comparison would have had.
//! Must not parse files or print.

use super::{Accumulated, Completion, ExperimentError, RunOptions, RunResult, Runner};
use crate::scenario::{Model, Replications, Start};
use crate::stats::{self, Estimate, Estimator, Figure, FigureId, Obs, Scope};
use std::time::Instant;
use thiserror::Error;

/// Two designs that cannot be compared on one plan.
#[derive(Debug, Error, PartialEq)]
pub enum PlanError {
    /// The measured periods differ: the replications would not line up.
    #[error(
        "[simulation] length is {b} in B but {a} in A: compare measures both designs over one period, make them equal"
    )]
    Length {
        /// A's length, in words.
        a: String,
        /// B's length, in words.
        b: String,
    },
    /// The reporting intervals differ: per-interval figures would not match.
    #[error(
        "[simulation] interval is {b} in B but {a} in A: compare reports both designs on the same intervals, make them equal"
    )]
    Interval {
        /// A's interval, in words ("none" when unset).
        a: String,
        /// B's interval, in words.
        b: String,
    },
    /// One design starts empty, the other steady.
    #[error(
        "[simulation] start is \"{b}\" in B but \"{a}\" in A: both designs must start the same way, make them equal"
    )]
    Start {
        /// A's start.
        a: &'static str,
        /// B's start.
        b: &'static str,
    },
    /// No stream or group of B has the name of one of A's.
    #[error(
        "B has no stream or group named as one of A's: compare matches figures by the names of streams and groups, so there is nothing to compare"
    )]
    NothingInCommon,
    /// A precision goal without a replication count.
    #[error(
        "A's [simulation] asks for a precision goal; compare runs a fixed number of paired replications: give --replications N (or replications = N in A)"
    )]
    Precision,
}

/// The plan both designs run on: A's measured period, intervals, start,
/// seed and replication count; the longer of the two warm-ups.
#[derive(Debug, Clone, PartialEq)]
pub struct ComparePlan {
    /// Paired replications.
    pub replications: u32,
    /// Master seed (A's, or the flag's).
    pub seed: u64,
    /// Warm-up of every replication of both designs (s).
    pub warmup_s: f64,
    /// What of B's file the plan does not use, in words (B's own seed,
    /// replication count or shorter warm-up).
    pub notes: Vec<String>,
}

fn start_word(s: Start) -> &'static str {
    match s {
        Start::Steady => "steady",
        Start::Empty => "empty",
    }
}

/// The plan on which `a` and `b` are compared, with `replications` from a
/// flag overriding A's; refused when the measured periods, intervals or
/// starts differ, or when A asks for a precision goal and no count is given.
pub fn plan(a: &Model, b: &Model, replications: Option<u32>) -> Result<ComparePlan, PlanError> {
    use crate::units::format_duration;
    let (pa, pb) = (&a.plan, &b.plan);
    if pa.length_s != pb.length_s {
        return Err(PlanError::Length {
            a: format_duration(pa.length_s),
            b: format_duration(pb.length_s),
        });
    }
    if pa.interval_s != pb.interval_s {
        let words = |i: Option<f64>| i.map_or("not set".to_string(), format_duration);
        return Err(PlanError::Interval {
            a: words(pa.interval_s),
            b: words(pb.interval_s),
        });
    }
    if pa.start != pb.start {
        return Err(PlanError::Start {
            a: start_word(pa.start),
            b: start_word(pb.start),
        });
    }
    let shared = a.streams.iter().any(|s| b.stream_index(&s.name).is_some())
        || a.groups.iter().any(|g| b.group_index(&g.name).is_some());
    if !shared {
        return Err(PlanError::NothingInCommon);
    }
    let n = match (replications, &pa.replications) {
        (Some(n), _) | (None, &Replications::Fixed(n)) => n,
        (None, Replications::Precision { .. }) => return Err(PlanError::Precision),
    };
    let mut notes = Vec::new();
    if pb.seed != pa.seed {
        notes.push(format!(
            "B's seed {} is not used: both designs run on A's seed {}",
            pb.seed, pa.seed
        ));
    }
    if replications.is_none() && pb.replications != pa.replications {
        notes.push(format!(
            "B's replication plan is not used: both designs run A's {n} replications"
        ));
    }
    let warmup_s = pa.warmup_s.max(pb.warmup_s);
    if pa.warmup_s != pb.warmup_s {
        let (shorter, which) = if pa.warmup_s < pb.warmup_s {
            (pa.warmup_s, "A")
        } else {
            (pb.warmup_s, "B")
        };
        notes.push(format!(
            "{which}'s warm-up of {} is lengthened to {}, the longer of the two, so that both are measured over the same period",
            format_duration(shorter),
            format_duration(warmup_s)
        ));
    }
    Ok(ComparePlan {
        replications: n,
        seed: pa.seed,
        warmup_s,
        notes,
    })
}

/// Whose a figure is, by name, so that the two designs' figures can be
/// matched (scope indices differ when the files list streams or groups in
/// another order).
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Owner {
    /// The reporting interval, counted from 0; None for the whole period.
    pub interval: Option<usize>,
    /// Whether a stream's (else a group's).
    pub stream: bool,
    /// The stream's or group's name.
    pub name: String,
}

impl Owner {
    /// The owner of a figure of `model` in `scope`.
    pub fn of(model: &Model, scope: Scope) -> Owner {
        let (interval, stream, name) = match scope {
            Scope::Stream(s) => (None, true, &model.streams[s].name),
            Scope::Group(g) => (None, false, &model.groups[g].name),
            Scope::StreamInterval(b, s) => (Some(b), true, &model.streams[s].name),
            Scope::GroupInterval(b, g) => (Some(b), false, &model.groups[g].name),
            Scope::Stage(s, k) => {
                let st = &model.streams[s];
                return Owner {
                    interval: None,
                    stream: true,
                    name: format!("{}/{}", st.name, st.stages[k].name),
                };
            }
        };
        Owner {
            interval,
            stream,
            name: name.clone(),
        }
    }

    /// "stream", or "group".
    pub fn kind(&self) -> &'static str {
        if self.stream { "stream" } else { "group" }
    }
}

/// One figure both designs report: each design's estimate and the paired
/// difference B - A.
#[derive(Debug, Clone, PartialEq)]
pub struct Compared {
    /// Whose figure.
    pub owner: Owner,
    /// Which figure.
    pub figure: Figure,
    /// A's estimate, by the figure's own estimator.
    pub a: Estimate,
    /// B's estimate.
    pub b: Estimate,
    /// B - A with its 95% interval from the paired replications.
    pub difference: Estimate,
    /// The 95% half-width of B - A had the two designs been run on
    /// independent random numbers with as many replications each.
    pub unpaired_half_width: f64,
}

impl Compared {
    /// Whether the paired interval excludes 0 (the sign of the difference
    /// is settled at 95%).
    pub fn decided(&self) -> bool {
        self.difference.low > 0.0 || self.difference.high < 0.0
    }
}

/// A figure only one design reports.
#[derive(Debug, Clone, PartialEq)]
pub struct Unmatched {
    /// Whose figure.
    pub owner: Owner,
    /// Which figure.
    pub figure: Figure,
    /// Its estimate in the design that reports it.
    pub estimate: Estimate,
}

/// Replications of each design run before the other's next batch.
pub const COMPARE_BATCH: u64 = 50;

/// The result of a comparison.
#[derive(Debug, Clone)]
pub struct Comparison {
    /// The plan both ran on.
    pub plan: ComparePlan,
    /// A's run (truncated to the paired replications).
    pub a: RunResult,
    /// B's run.
    pub b: RunResult,
    /// Every figure both report, in A's report order.
    pub common: Vec<Compared>,
    /// Figures only A reports.
    pub only_a: Vec<Unmatched>,
    /// Figures only B reports.
    pub only_b: Vec<Unmatched>,
    /// Stopped early on request: fewer replications than planned.
    pub partial: bool,
}

/// Run `a` and `b` on `plan` (from [`plan`]) and compare every figure they
/// have in common. Replications run in batches of [`COMPARE_BATCH`], A's
/// then B's, on one pool of workers; progress counts both. When stopped
/// early, both keep the replications both finished.
pub fn compare(
    a: &Model,
    b: &Model,
    plan: ComparePlan,
    opts: &RunOptions,
) -> Result<Comparison, ExperimentError> {
    let started = Instant::now();
    let runner = Runner::new(opts)?;
    let on_plan = |m: &Model| {
        let mut m = m.clone();
        m.plan.seed = plan.seed;
        m.plan.warmup_s = plan.warmup_s;
        m.plan.replications = Replications::Fixed(plan.replications);
        m
    };
    let (ma, mb) = (on_plan(a), on_plan(b));
    let n = u64::from(plan.replications);
    let (la, lb) = (stats::layout(&ma), stats::layout(&mb));
    let (mut acc_a, mut acc_b) = (Accumulated::default(), Accumulated::default());
    // Batches of A then B, so that an interrupted comparison keeps pairs;
    // each replication's numbers depend on its index only, so the batch
    // size changes nothing in the result.
    let mut partial = false;
    let mut to = 0;
    while to < n && !partial {
        to = (to + COMPARE_BATCH).min(n);
        partial = runner.extend(&ma, &la, &mut acc_a, to, 2 * n).stopped()
            || runner.extend(&mb, &lb, &mut acc_b, to, 2 * n).stopped();
    }
    let paired = acc_a.per_replication.len().min(acc_b.per_replication.len());
    for acc in [&mut acc_a, &mut acc_b] {
        acc.per_replication.truncate(paired);
        acc.halves.truncate(paired);
    }
    let completion = if partial {
        Completion::Stopped
    } else {
        Completion::Complete
    };
    let wall_s = started.elapsed().as_secs_f64();
    let ra = super::outcome_of(&ma, acc_a, wall_s, None, completion);
    let rb = super::outcome_of(&mb, acc_b, wall_s, None, completion);
    let (common, only_a, only_b) = match_figures(&ma, &ra, &mb, &rb);
    Ok(Comparison {
        plan,
        a: ra,
        b: rb,
        common,
        only_a,
        only_b,
        partial,
    })
}

/// The figures of the two runs matched by owner name and figure: the
/// common ones compared, the others listed by design.
pub fn match_figures(
    ma: &Model,
    ra: &RunResult,
    mb: &Model,
    rb: &RunResult,
) -> (Vec<Compared>, Vec<Unmatched>, Vec<Unmatched>) {
    let key = |m: &Model, f: &FigureId| (Owner::of(m, f.scope), f.figure);
    let keys_b: Vec<(Owner, Figure)> = rb.layout.iter().map(|f| key(mb, f)).collect();
    let keys_a: Vec<(Owner, Figure)> = ra.layout.iter().map(|f| key(ma, f)).collect();
    let mut common = Vec::new();
    let mut only_a = Vec::new();
    for (ia, k) in keys_a.iter().enumerate() {
        match keys_b.iter().position(|kb| kb == k) {
            Some(ib) => {
                let (difference, unpaired_half_width) = difference(ra, rb, ia, ib);
                common.push(Compared {
                    owner: k.0.clone(),
                    figure: k.1,
                    a: ra.estimates[ia],
                    b: rb.estimates[ib],
                    difference,
                    unpaired_half_width,
                });
            }
            None => only_a.push(Unmatched {
                owner: k.0.clone(),
                figure: k.1,
                estimate: ra.estimates[ia],
            }),
        }
    }
    let only_b = (keys_b.iter().enumerate())
        .filter(|(_, k)| !keys_a.contains(k))
        .map(|(ib, k)| Unmatched {
            owner: k.0.clone(),
            figure: k.1,
            estimate: rb.estimates[ib],
        })
        .collect();
    (common, only_a, only_b)
}

/// The paired difference B - A of figure `ia` of A and `ib` of B, and the
/// half-width an unpaired comparison would have had.
fn difference(ra: &RunResult, rb: &RunResult, ia: usize, ib: usize) -> (Estimate, f64) {
    let figure = ra.layout[ia].figure;
    if figure == Figure::OverflowPeakedness {
        let columns = |r: &RunResult, i: usize| {
            let find = |f: Figure| r.index_of(r.layout[i].scope, f);
            match (find(Figure::OverflowMean), find(Figure::OverflowMeanSquare)) {
                (Some(m1), Some(m2)) => Some((own(&r.column(m1)), own(&r.column(m2)))),
                _ => None,
            }
        };
        if let (Some(a), Some(b)) = (columns(ra, ia), columns(rb, ib)) {
            return peakedness_difference(&a, &b, stats::LEVEL);
        }
        return (Estimate::UNDEFINED, f64::NAN);
    }
    let (ca, cb) = (ra.column(ia), rb.column(ib));
    let paired = stats::paired_difference(figure, &ca, &cb, stats::LEVEL);
    (paired, unpaired_half_width(figure, &ca, &cb, stats::LEVEL))
}

fn own(c: &[Obs]) -> Vec<f64> {
    c.iter().map(Obs::own).collect()
}

/// The 95% half-width of B - A had A and B been run on independent random
/// numbers: each design's own variance (of the linearised residuals
/// (y_i - R x_i) / x̄ for a ratio of sums, of the replication values
/// otherwise) over its replications, summed, with Welch-Satterthwaite's
/// degrees of freedom (rounded down). The same observations as the paired
/// interval, less their covariance: what pairing buys is the gap.
pub fn unpaired_half_width(figure: Figure, a: &[Obs], b: &[Obs], level: f64) -> f64 {
    let residuals = |c: &[Obs]| -> Vec<f64> {
        let c: Vec<Obs> = c.iter().copied().filter(|o| !o.num.is_nan()).collect();
        if figure.estimator() != Estimator::RatioOfSums {
            return c.iter().map(Obs::own).filter(|x| !x.is_nan()).collect();
        }
        let (y, x) = c.iter().fold((0.0, 0.0), |s, o| (s.0 + o.num, s.1 + o.den));
        if !(x > 0.0) {
            return Vec::new();
        }
        let (r, mean_den) = (y / x, x / c.len() as f64);
        c.iter().map(|o| (o.num - r * o.den) / mean_den).collect()
    };
    // Variance of the mean of the values, and their count.
    let variance_of_mean = |v: &[f64]| -> Option<(f64, f64)> {
        let n = v.len() as f64;
        if v.len() < 2 {
            return None;
        }
        let m = v.iter().sum::<f64>() / n;
        let s2 = v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (n - 1.0);
        Some((s2 / n, n))
    };
    let (Some((va, na)), Some((vb, nb))) = (
        variance_of_mean(&residuals(a)),
        variance_of_mean(&residuals(b)),
    ) else {
        return f64::NAN;
    };
    let total = va + vb;
    if total == 0.0 {
        return 0.0;
    }
    let df = total * total / (va * va / (na - 1.0) + vb * vb / (nb - 1.0));
    stats::t_quantile(df.floor().max(1.0) as u64, 1.0 - (1.0 - level) / 2.0) * total.sqrt()
}

/// The pooled peakedness (variance over mean, [`stats::pooled_peakedness`])
/// of B minus A's, from each replication's time averages of the overflow
/// occupancy (`.0`) and its square (`.1`): the difference of the pooled
/// values, its interval from the paired jackknife (leave one replication
/// of both designs out; Efron and Tibshirani 1993, ch. 11), and the
/// unpaired half-width from the two separate jackknife variances.
pub fn peakedness_difference(
    a: &(Vec<f64>, Vec<f64>),
    b: &(Vec<f64>, Vec<f64>),
    level: f64,
) -> (Estimate, f64) {
    let rows: Vec<[f64; 4]> = (0..a.0.len().min(b.0.len()))
        .map(|i| [a.0[i], a.1[i], b.0[i], b.1[i]])
        .filter(|r| r.iter().all(|x| x.is_finite()))
        .collect();
    let n = rows.len();
    if n < 2 {
        return (Estimate::UNDEFINED, f64::NAN);
    }
    let theta = |s1: f64, s2: f64, k: f64| {
        let (m1, m2) = (s1 / k, s2 / k);
        if m1 > 0.0 {
            ((m2 - m1 * m1) / m1).max(0.0)
        } else {
            f64::NAN
        }
    };
    let sums = rows.iter().fold([0.0; 4], |s, r| {
        [s[0] + r[0], s[1] + r[1], s[2] + r[2], s[3] + r[3]]
    });
    let nf = n as f64;
    let (ta, tb) = (theta(sums[0], sums[1], nf), theta(sums[2], sums[3], nf));
    let out: Vec<(f64, f64)> = rows
        .iter()
        .map(|r| {
            (
                theta(sums[0] - r[0], sums[1] - r[1], nf - 1.0),
                theta(sums[2] - r[2], sums[3] - r[3], nf - 1.0),
            )
        })
        .collect();
    if !(ta.is_finite() && tb.is_finite())
        || out.iter().any(|(x, y)| !x.is_finite() || !y.is_finite())
    {
        return (
            Estimate::symmetric(tb - ta, f64::INFINITY, n as u64),
            f64::INFINITY,
        );
    }
    let jackknife = |v: &[f64]| {
        let m = v.iter().sum::<f64>() / nf;
        (nf - 1.0) / nf * v.iter().map(|x| (x - m) * (x - m)).sum::<f64>()
    };
    let diffs: Vec<f64> = out.iter().map(|(x, y)| y - x).collect();
    let va = jackknife(&out.iter().map(|p| p.0).collect::<Vec<_>>());
    let vb = jackknife(&out.iter().map(|p| p.1).collect::<Vec<_>>());
    let t = stats::t_quantile(n as u64 - 1, 1.0 - (1.0 - level) / 2.0);
    (
        Estimate::symmetric(tb - ta, t * jackknife(&diffs).sqrt(), n as u64),
        t * (va + vb).sqrt(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unpaired_half_width_of_known_values() {
        // Values 1, 2, 3 in both: variance of the mean 1/3 each, total 2/3,
        // Welch df = (2/3)^2 / (2 (1/3)^2 / 2) = 4; t(4) 0.975 = 2.776
        // (recalled from tables).
        let v: Vec<Obs> = [1.0, 2.0, 3.0].map(Obs::value).to_vec();
        let h = unpaired_half_width(Figure::OfferedCalls, &v, &v, 0.95);
        assert!((h - 2.776_445 * (2.0f64 / 3.0).sqrt()).abs() < 1e-5, "{h}");
        // The paired difference of a design with itself has zero width.
        let d = stats::paired_difference(Figure::OfferedCalls, &v, &v, 0.95);
        assert_eq!((d.mean, d.half_width), (0.0, 0.0));
    }

    #[test]
    fn peakedness_difference_of_one_design_with_itself_is_zero() {
        let a = (vec![1.0, 1.2, 0.8, 1.1], vec![2.0, 2.6, 1.5, 2.4]);
        let (d, unpaired) = peakedness_difference(&a, &a, 0.95);
        assert_eq!((d.mean, d.half_width), (0.0, 0.0));
        assert!(unpaired > 0.0);
    }
}
