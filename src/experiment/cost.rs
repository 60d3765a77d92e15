//! The expected cost of a design per measured period, from the scenario's
//! `[prices]`, and the size of one group of least expected cost (`size
//! --goal cost`), each size on the same seeds, with the closed-form
//! optimum beside it where Erlang B applies. Must not parse files or
//! print.
//!
//! # Cost of one replication
//!
//! Servers: each group's price per server-hour times its servers (for a
//! schedule, the scheduled agents, shrinkage included: they are paid)
//! times the measured hours. Calls: per stream, the price of a lost call
//! times the calls never served, plus the price of an abandoned call times
//! those who gave up (on top: an abandoned call is lost too), plus the
//! price of a waiting minute times the minutes answered callers waited.
//! The counts are the replication's own (calls resolved in the measured
//! period), so the expected cost is the mean over replications, with a
//! Student-t interval.
//!
//! # Search
//!
//! Sizes step by the group's pack (`module`): from the file's size, the
//! neighbour of lower mean cost is followed until two sizes in a row cost
//! more than the best seen (expected cost is convex in the size for a loss
//! group, Erlang B being convex in N; for other designs this is a local
//! search, said so in the docs). The best size's paired differences with
//! its evaluated neighbours say whether it is decided.

use super::{ExperimentError, RunOptions, RunResult};
use crate::formulas::erlang_b;
use crate::scenario::{Model, Prices, Queue, Replications, TransformError};
use crate::stats::{self, Estimate, Figure, Scope};

/// The parts of a cost: one value per replication each.
#[derive(Debug, Clone, PartialEq)]
pub struct CostSamples {
    /// Servers' cost.
    pub servers: Vec<f64>,
    /// Lost calls' cost.
    pub lost: Vec<f64>,
    /// Abandoned calls' cost.
    pub abandoned: Vec<f64>,
    /// Waiting's cost.
    pub waiting: Vec<f64>,
    /// The priced call counts over all replications, per part (lost,
    /// abandoned): (price, calls), for the exact Poisson bound of rare
    /// events.
    pub counts: [Vec<(f64, f64)>; 2],
}

impl CostSamples {
    /// The total per replication.
    pub fn total(&self) -> Vec<f64> {
        (0..self.servers.len())
            .map(|r| self.servers[r] + self.lost[r] + self.abandoned[r] + self.waiting[r])
            .collect()
    }
}

/// Expected cost per measured period, in parts, with 95% intervals.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CostEstimate {
    /// Everything.
    pub total: Estimate,
    /// Servers (agents).
    pub servers: Estimate,
    /// Lost calls.
    pub lost: Estimate,
    /// Abandoned calls.
    pub abandoned: Estimate,
    /// Waiting.
    pub waiting: Estimate,
}

/// Mean servers scheduled (paid) on group `g` over the measured period.
fn paid_servers(model: &Model, g: usize) -> f64 {
    let grp = &model.groups[g];
    let length = model.plan.length_s;
    match &grp.schedule {
        None => f64::from(grp.servers),
        Some(s) => s.mean_over(&s.scheduled, 0.0, length),
    }
}

/// The cost of every replication of `result`, a run of `model` (whose
/// prices are `prices`).
pub fn samples(model: &Model, prices: &Prices, result: &RunResult) -> CostSamples {
    let n = result.per_replication.len();
    let hours = model.plan.length_s / 3600.0;
    let fixed: f64 = (0..model.groups.len())
        .map(|g| prices.server_hour[g] * paid_servers(model, g) * hours)
        .sum();
    let counts = |s: usize, figure: Figure| -> Vec<f64> {
        match result.index_of(Scope::Stream(s), figure) {
            Some(i) => result.column(i).iter().map(|o| o.num).collect(),
            None => vec![0.0; n],
        }
    };
    let mut out = CostSamples {
        servers: vec![fixed; n],
        lost: vec![0.0; n],
        abandoned: vec![0.0; n],
        waiting: vec![0.0; n],
        counts: [Vec::new(), Vec::new()],
    };
    for s in 0..model.streams.len() {
        let add = |into: &mut Vec<f64>, price: f64, figure: Figure, per: f64| {
            if price > 0.0 {
                for (x, c) in into.iter_mut().zip(counts(s, figure)) {
                    *x += price * c / per;
                }
            }
        };
        add(&mut out.lost, prices.lost_call[s], Figure::Loss, 1.0);
        add(
            &mut out.abandoned,
            prices.abandoned_call[s],
            Figure::Abandonment,
            1.0,
        );
        for (part, price, figure) in [
            (0, prices.lost_call[s], Figure::Loss),
            (1, prices.abandoned_call[s], Figure::Abandonment),
        ] {
            if price > 0.0 {
                out.counts[part].push((price, counts(s, figure).iter().sum()));
            }
        }
        // WaitMean's numerator is the answered calls' waits in seconds.
        add(
            &mut out.waiting,
            prices.wait_minute[s],
            Figure::WaitMean,
            60.0,
        );
    }
    out
}

/// The exact 95% interval of a Poisson mean from `k` events (Garwood
/// 1936): chi-square quantiles `chi2(0.025; 2k) / 2` and
/// `chi2(0.975; 2k + 2) / 2` (statrs).
fn poisson_interval(k: f64) -> (f64, f64) {
    use statrs::distribution::{ChiSquared, ContinuousCDF};
    let q = |p: f64, dof: f64| ChiSquared::new(dof).map_or(f64::NAN, |c| c.inverse_cdf(p) / 2.0);
    let low = if k > 0.0 { q(0.025, 2.0 * k) } else { 0.0 };
    (low, q(0.975, 2.0 * k + 2.0))
}

/// Means and intervals of `samples`: Student-t across replications, each
/// part of priced calls widened to the exact Poisson interval of its
/// pooled counts where that is wider (no interval of zero width from no
/// lost call seen), and the total to the sum of its parts' bounds.
pub fn estimate(samples: &CostSamples) -> CostEstimate {
    let n = samples.servers.len().max(1) as f64;
    let e = |v: &[f64]| stats::estimate(v.iter().copied());
    let widened = |v: &[f64], counts: &[(f64, f64)]| -> Estimate {
        let t = e(v);
        if counts.is_empty() {
            return t;
        }
        let (mut lo, mut hi) = (0.0, 0.0);
        for &(price, k) in counts {
            let (l, h) = poisson_interval(k);
            lo += price * l / n;
            hi += price * h / n;
        }
        let (low, high) = (t.low.min(lo), t.high.max(hi));
        Estimate::between(t.mean, low, high, t.replications)
    };
    let lost = widened(&samples.lost, &samples.counts[0]);
    let abandoned = widened(&samples.abandoned, &samples.counts[1]);
    let servers = e(&samples.servers);
    let waiting = e(&samples.waiting);
    let t = e(&samples.total());
    let parts = [servers, lost, abandoned, waiting];
    let total = Estimate::between(
        t.mean,
        t.low.min(parts.iter().map(|p| p.low).sum()),
        t.high.max(parts.iter().map(|p| p.high).sum()),
        t.replications,
    );
    CostEstimate {
        total,
        servers,
        lost,
        abandoned,
        waiting,
    }
}

/// One size tried.
#[derive(Debug, Clone)]
pub struct CostPoint {
    /// Servers on the group.
    pub servers: u32,
    /// Expected cost per measured period.
    pub cost: CostEstimate,
    /// Per replication, for paired differences.
    pub samples: CostSamples,
    /// The closed-form expected cost, where Erlang B gives it.
    pub formula: Option<f64>,
}

/// The closed-form view: a loss group offered direct Poisson calls, priced
/// by the server-hour and the lost call only.
#[derive(Debug, Clone, PartialEq)]
pub struct ClosedForm {
    /// The size of least cost, `argmin c N T + sum_s p_s lambda_s T B(N, A)`
    /// over the sizes of the pack (Erlang B convex in N: Moe's principle,
    /// Jensen 1950, stops where the next server saves less than it costs).
    pub servers: u32,
    /// Its cost.
    pub cost: f64,
}

/// What the cost search found.
#[derive(Debug, Clone)]
pub struct CostSizing {
    /// The sized group.
    pub group: usize,
    /// Its pack size.
    pub module: u32,
    /// Every size tried, in increasing order.
    pub points: Vec<CostPoint>,
    /// Index in `points` of the least mean cost.
    pub best: usize,
    /// Per evaluated neighbour of the best (below, above): the paired
    /// difference neighbour minus best, when there is one.
    pub against: [Option<(u32, Estimate)>; 2],
    /// The closed-form optimum, where it applies.
    pub closed_form: Option<ClosedForm>,
    /// Replications per size.
    pub replications: u64,
    /// Stopped on request.
    pub partial: bool,
}

impl CostSizing {
    /// Whether every evaluated neighbour costs more than the best at 95%
    /// (each paired difference's interval above 0).
    pub fn decided(&self) -> bool {
        self.against.iter().flatten().all(|(_, d)| d.low > 0.0)
    }
}

/// A cost search that cannot be carried out.
#[derive(Debug, thiserror::Error)]
pub enum CostError {
    /// The scenario has no prices.
    #[error(
        "the scenario has no [prices]: give at least server_hour and lost_call (or abandoned_call, wait_minute) prices"
    )]
    NoPrices,
    /// Only servers are priced: fewest servers is cheapest.
    #[error(
        "[prices] prices servers but no lost call, abandoned call or waiting minute: the cheapest design is no servers at all; price what a lost or waiting call costs"
    )]
    OnlyServers,
    /// A run failed.
    #[error(transparent)]
    Run(#[from] ExperimentError),
}

impl From<TransformError> for CostError {
    fn from(e: TransformError) -> CostError {
        CostError::Run(ExperimentError::Transform(e))
    }
}

/// The closed-form cost curve of `group` when it is a loss group offered
/// only direct Poisson calls priced by the lost call (no abandonment or
/// waiting prices on its streams): `c N T + sum_s p_s lambda_s T B(N, A)`.
fn closed_form_cost(model: &Model, prices: &Prices, group: usize) -> Option<impl Fn(u32) -> f64> {
    let grp = &model.groups[group];
    if grp.queue != Queue::None || grp.reserve > 0 || grp.schedule.is_some() {
        return None;
    }
    let length = model.plan.length_s;
    let mut traffic = 0.0;
    let mut lost_price_calls = 0.0;
    for (s, st) in model.streams.iter().enumerate() {
        if !st.route.contains(&(group as u32)) {
            continue;
        }
        // A known Poisson load: with a forecast spread Erlang B of the mean
        // load is not the expected cost.
        let direct = matches!(st.arrivals, crate::scenario::Arrivals::Poisson { .. })
            && st.forecast.is_none();
        // A call flow's holding of the group is not one law's (stages).
        if st.route.len() != 1 || st.units != 1 || st.retry.is_some() || !direct || st.has_stages()
        {
            return None;
        }
        if prices.abandoned_call[s] > 0.0 || prices.wait_minute[s] > 0.0 {
            return None;
        }
        let rate = st.arrivals.mean_rate(length)?;
        traffic += rate * st.holding.mean();
        lost_price_calls += prices.lost_call[s] * rate * length;
    }
    // Other groups' servers are a constant of the design.
    let others: f64 = (0..model.groups.len())
        .filter(|&g| g != group)
        .map(|g| prices.server_hour[g] * paid_servers(model, g) * length / 3600.0)
        .sum();
    let per_server = prices.server_hour[group] * length / 3600.0;
    (traffic > 0.0).then_some(move |n: u32| {
        others
            + per_server * f64::from(n)
            + lost_price_calls * erlang_b::blocking(n, traffic).unwrap_or(f64::NAN)
    })
}

/// Size group `group` of `model` for least expected cost (see the module's
/// search), `replications` per size.
///
/// # Errors
///
/// No prices, only server prices, a size the group cannot take (a
/// schedule), or a run that fails.
pub fn size_for_cost(
    model: &Model,
    group: usize,
    replications: Replications,
    opts: &RunOptions,
) -> Result<CostSizing, CostError> {
    let prices = model.prices.as_ref().ok_or(CostError::NoPrices)?;
    let priced_calls = (prices.lost_call.iter())
        .chain(&prices.abandoned_call)
        .chain(&prices.wait_minute)
        .any(|&p| p > 0.0);
    if !priced_calls {
        return Err(CostError::OnlyServers);
    }
    let module = prices.module[group].max(1);
    let round = |n: u32| n.div_ceil(module).max(1) * module;
    let cap = round(super::size::size_limit(model, group));
    let closed = closed_form_cost(model, prices, group);
    let mut points: Vec<CostPoint> = Vec::new();
    let partial = std::cell::Cell::new(false);
    let evaluate = |n: u32, points: &mut Vec<CostPoint>| -> Result<usize, CostError> {
        if let Some(i) = points.iter().position(|p| p.servers == n) {
            return Ok(i);
        }
        let m = model.with_servers(group, n)?;
        let result = super::run(&m, Some(replications.clone()), opts)?;
        partial.set(partial.get() || result.partial);
        let samples = samples(&m, prices, &result);
        points.push(CostPoint {
            servers: n,
            cost: estimate(&samples),
            samples,
            formula: closed.as_ref().map(|f| f(n)),
        });
        Ok(points.len() - 1)
    };
    let start = round(model.groups[group].servers);
    let mean = |points: &[CostPoint], i: usize| points[i].cost.total.mean;
    let s = evaluate(start, &mut points)?;
    let up = evaluate((start + module).min(cap), &mut points)?;
    let down = if start > module {
        Some(evaluate(start - module, &mut points)?)
    } else {
        None
    };
    // The direction of falling cost; stop after two sizes in a row above
    // the best seen.
    let step_up = match down {
        Some(d) => mean(&points, d) >= mean(&points, up) || mean(&points, s) > mean(&points, up),
        None => true,
    };
    let mut n = if step_up {
        (start + module).min(cap)
    } else {
        start - module
    };
    let mut worse = 0;
    let mut best_mean = points
        .iter()
        .map(|p| p.cost.total.mean)
        .fold(f64::INFINITY, f64::min);
    while worse < 2 && !partial.get() {
        let next = if step_up {
            if n + module > cap {
                break;
            }
            n + module
        } else {
            if n <= module {
                break;
            }
            n - module
        };
        n = next;
        let i = evaluate(n, &mut points)?;
        let m = mean(&points, i);
        if m < best_mean {
            best_mean = m;
            worse = 0;
        } else {
            worse += 1;
        }
    }
    points.sort_by_key(|p| p.servers);
    let best = (0..points.len())
        .min_by(|&a, &b| {
            points[a]
                .cost
                .total
                .mean
                .total_cmp(&points[b].cost.total.mean)
        })
        .unwrap_or(0);
    // Neighbour minus best, paired; where calls are rare the exact bounds
    // of each side's priced calls widen it (the servers' part is exact).
    let paired = |j: usize| -> (u32, Estimate) {
        let (a, b) = (points[j].samples.total(), points[best].samples.total());
        let d: Vec<f64> = a.iter().zip(&b).map(|(x, y)| x - y).collect();
        let t = stats::estimate(d.iter().copied());
        let (nb, bc) = (&points[j].cost, &points[best].cost);
        let calls_low = |c: &CostEstimate| c.lost.low + c.abandoned.low + c.waiting.low;
        let calls_high = |c: &CostEstimate| c.lost.high + c.abandoned.high + c.waiting.high;
        let fixed = nb.servers.mean - bc.servers.mean;
        let low = t.low.min(fixed + calls_low(nb) - calls_high(bc));
        let high = t.high.max(fixed + calls_high(nb) - calls_low(bc));
        (
            points[j].servers,
            Estimate::between(t.mean, low, high, t.replications),
        )
    };
    let against = [
        best.checked_sub(1).map(paired),
        (best + 1 < points.len()).then(|| paired(best + 1)),
    ];
    let closed_form = closed.map(|f| {
        let mut best = (module, f(module));
        let mut k = module;
        while k <= cap {
            let c = f(k);
            if c < best.1 {
                best = (k, c);
            }
            k += module;
        }
        ClosedForm {
            servers: best.0,
            cost: best.1,
        }
    });
    let replications = points.first().map_or(0, |p| p.samples.servers.len() as u64);
    Ok(CostSizing {
        group,
        module,
        points,
        best,
        against,
        closed_form,
        replications,
        partial: partial.get(),
    })
}
