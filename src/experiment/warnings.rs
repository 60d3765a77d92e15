//! Warnings about a run's start: a warm-up shorter than the laws need, and a
//! visible transient (the first and second halves of the measured period
//! disagree beyond their intervals). A warning never changes a figure; it
//! says the figures may carry a start-up bias.

use crate::scenario::{Arrivals, Model, Queue};
use crate::stats;
use crate::units;

/// Overall false-alarm rate of the transient check, shared by the groups
/// (Bonferroni): a stationary run warns about once in a hundred runs.
pub const TRANSIENT_FALSE_ALARM: f64 = 0.01;

/// Something the reader of a report should know about the start.
#[derive(Debug, Clone, PartialEq)]
pub enum Warning {
    /// The file's warm-up is shorter than the laws need
    /// ([`Model::warmup_needed_s`]).
    ShortWarmup {
        /// Warm-up given (s).
        given_s: f64,
        /// Warm-up needed (s).
        needed_s: f64,
    },
    /// A group with an unlimited queue whose callers never give up is
    /// offered at least as much traffic as it has servers: the queue has no
    /// steady state and every waiting figure grows with the run's length.
    Overloaded {
        /// Group name.
        group: String,
        /// Traffic offered to it by the streams that reach it first (E),
        /// a lower bound of its load (overflow from elsewhere adds to it).
        offered: f64,
        /// Its servers.
        servers: u32,
    },
    /// A stream's peak profile changes its rate every `interval_s`, and its
    /// mean holding time is longer than a quarter of that: calls in
    /// progress carry the load from one interval into the next, so the
    /// stationary Erlang B of an interval's own load misleads (too high on
    /// a rising load, too low on a falling one). Advisory: `check` shows it
    /// and still passes.
    LongHolding {
        /// Stream name.
        stream: String,
        /// Mean holding time (s).
        holding_s: f64,
        /// The profile's interval (s).
        interval_s: f64,
    },
    /// Carried traffic of a group differs between the two halves of the
    /// measured period beyond the interval of the paired difference.
    Transient {
        /// Group name.
        group: String,
        /// Carried traffic in the first half (E).
        first: f64,
        /// In the second half (E).
        second: f64,
    },
}

impl std::fmt::Display for Warning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Warning::ShortWarmup { given_s, needed_s } => write!(
                f,
                "the warm-up ({}) is shorter than the holding laws and queues need ({}): figures may be biased by the start; lengthen warmup or leave it out to get the derived default",
                units::format_duration(*given_s),
                units::format_duration(*needed_s)
            ),
            Warning::Overloaded {
                group,
                offered,
                servers,
            } => write!(
                f,
                "group \"{group}\" is offered {offered:.3} E on {servers} servers with an unlimited queue and callers who never give up: the queue grows without bound and its waiting figures depend on the run's length; add servers, limit the queue or give the callers a patience"
            ),
            Warning::LongHolding {
                stream,
                holding_s,
                interval_s,
            } => write!(
                f,
                "stream \"{stream}\" holds calls {} on average, more than a quarter of its profile's {} interval: calls in progress carry the load across intervals, so the per-interval Erlang B of the interval's own load misleads; compare with the modified-offered-load reference or the simulation",
                units::format_duration(*holding_s),
                units::format_duration(*interval_s)
            ),
            Warning::Transient {
                group,
                first,
                second,
            } => write!(
                f,
                "group \"{group}\" carried {first:.3} E in the first half of the measured period and {second:.3} E in the second, a difference beyond its interval: a transient is visible; lengthen the warm-up"
            ),
        }
    }
}

/// The warnings that the model alone gives, before any replication: the
/// warm-up check and the overloaded queues. `busyhour check` fails (exit 1)
/// on any of them.
pub fn model_warnings(model: &Model) -> Vec<Warning> {
    let mut out = Vec::new();
    if let Some(needed_s) = model.warmup_short() {
        out.push(Warning::ShortWarmup {
            given_s: model.plan.warmup_s,
            needed_s,
        });
    }
    out.extend(overloaded_queues(model));
    out.extend(long_holding(model));
    out
}

impl Warning {
    /// Whether `busyhour check` fails on this warning (exit 1); an advisory
    /// one is shown and the check passes.
    pub fn fails_check(&self) -> bool {
        !matches!(self, Warning::LongHolding { .. })
    }
}

/// Streams whose peak profile varies and whose mean holding time exceeds a
/// quarter of the profile's interval (the rule of thumb where the
/// stationary per-interval reference stops following the load: with mean
/// holding `h` the calls in progress need about `h` to follow a step;
/// Green, Kolesar and Whitt 2007 on lagged and modified-offered-load
/// references).
fn long_holding(model: &Model) -> Vec<Warning> {
    model
        .streams
        .iter()
        .filter_map(|s| match &s.arrivals {
            Arrivals::Profile { interval_s, rates }
                if rates.windows(2).any(|w| w[0] != w[1])
                    && s.holding.mean() > 0.25 * interval_s =>
            {
                Some(Warning::LongHolding {
                    stream: s.name.clone(),
                    holding_s: s.holding.mean(),
                    interval_s: *interval_s,
                })
            }
            _ => None,
        })
        .collect()
}

/// Groups with an unlimited queue, callers without patience, and at least
/// as much offered traffic (from the streams whose route starts there, over
/// the measured period) as servers: an M/G/c queue with load >= 1 has no
/// steady state (common knowledge of queueing theory; for Erlang C, C = 1
/// at A >= N).
fn overloaded_queues(model: &Model) -> Vec<Warning> {
    let length = model.plan.length_s;
    let mut out = Vec::new();
    for (g, group) in model.groups.iter().enumerate() {
        if group.queue != Queue::Unlimited {
            continue;
        }
        let users: Vec<_> = model
            .streams
            .iter()
            .filter(|s| s.route.first().is_some_and(|&x| x as usize == g))
            .collect();
        if users.is_empty() || users.iter().any(|s| s.patience.is_some()) {
            continue;
        }
        let offered: f64 = users
            .iter()
            .filter_map(|s| s.offered_traffic(length).map(|a| a * f64::from(s.units)))
            .sum();
        if offered >= f64::from(group.servers) {
            out.push(Warning::Overloaded {
                group: group.name.clone(),
                offered,
                servers: group.servers,
            });
        }
    }
    out
}

/// Whether every stream's arrival rate is constant over the measured period
/// (a peak profile changes the load on purpose: halves are not compared).
fn stationary_load(model: &Model) -> bool {
    let steady_servers = !model.groups.iter().any(|g| g.servers_change());
    steady_servers
        && model.streams.iter().all(|s| match &s.arrivals {
            Arrivals::Profile { rates, .. } => rates.windows(2).all(|w| w[0] == w[1]),
            _ => true,
        })
}

/// The warnings of a run: the warm-up check, then, for models with a steady
/// load, the paired comparison of each group's carried traffic in the two
/// halves of the measured period across replications (Student-t at
/// 1 - [`TRANSIENT_FALSE_ALARM`] / groups). `halves` holds, per
/// replication and group, (first-half, second-half) carried traffic.
pub fn warnings(model: &Model, halves: &[Vec<(f64, f64)>]) -> Vec<Warning> {
    let mut out = model_warnings(model);
    if !stationary_load(model) || halves.len() < 2 {
        return out;
    }
    let level = 1.0 - TRANSIENT_FALSE_ALARM / model.groups.len().max(1) as f64;
    for (g, group) in model.groups.iter().enumerate() {
        let pairs: Vec<(f64, f64)> = halves.iter().filter_map(|h| h.get(g).copied()).collect();
        let d = stats::estimate_at(pairs.iter().map(|(a, b)| a - b), level);
        if d.replications >= 2 && d.half_width.is_finite() && !d.contains(0.0) {
            let n = pairs.len() as f64;
            out.push(Warning::Transient {
                group: group.name.clone(),
                first: pairs.iter().map(|p| p.0).sum::<f64>() / n,
                second: pairs.iter().map(|p| p.1).sum::<f64>() / n,
            });
        }
    }
    out
}

/// Per group, (first-half, second-half) carried traffic of one replication.
pub fn halves_of(model: &Model, t: &crate::stats::tally::Tally) -> Vec<(f64, f64)> {
    let half = model.plan.length_s / 2.0;
    t.groups
        .iter()
        .map(|g| {
            (
                g.busy_first_half_s / half,
                (g.busy_s - g.busy_first_half_s) / half,
            )
        })
        .collect()
}
