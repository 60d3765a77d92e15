//! Warnings about a run's start: a warm-up shorter than the laws need, and a
//! visible transient (the first and second halves of the measured period
//! disagree beyond their intervals), and a mean wait that rests on waits
//! in only a few replications. A warning never changes a figure; it says
//! the figures may carry a start-up bias, or an interval that may not
//! cover.

use crate::scenario::{Arrivals, Model, Queue};
use crate::stats::{self, Figure, FigureId, Obs, Scope};
use crate::units;

/// Overall false-alarm rate of the transient check, shared by the groups
/// (Bonferroni): a stationary run warns about once in a hundred runs.
pub const TRANSIENT_FALSE_ALARM: f64 = 0.01;

/// A stream's or stage's mean wait (or interruptions per answered call)
/// whose events fell in fewer replications than this gets a
/// [`Warning::Sparse`]. Measured with the coverage harness (docs/coverage.md,
/// `rare-urgent-waits`: an urgent class waiting 0.11% of the time, 40
/// one-hour replications): studies with waits in 1 or 2 replications
/// covered about 84%, in 3 or more 99%; 5 leaves a margin.
pub const SPARSE_BELOW: u64 = 5;

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
    /// A mean wait (or interruptions per answered call) of a stream or a
    /// stage whose events fell in fewer than [`SPARSE_BELOW`] replications:
    /// its interval leans on a few congested spells and may not cover; with
    /// none at all the figure is 0 with no interval.
    Sparse {
        /// Where: `stream "urgent"` or `stage "menu" of stream "billing"`.
        place: String,
        /// Which figure and scope.
        figure: FigureId,
        /// Replications in which the events happened.
        seen_in: u64,
        /// Replications run.
        replications: u64,
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
            Warning::Sparse {
                place,
                figure,
                seen_in,
                replications,
            } => {
                let (events, none, zero, share) = if figure.figure == Figure::Interruptions {
                    ("interruptions", "no call was interrupted", "0", "")
                } else {
                    (
                        "waits",
                        "no call waited",
                        "0 s",
                        "; its probability of waiting, with its exact interval, bounds how often calls wait",
                    )
                };
                let label = figure.figure.label();
                if *seen_in == 0 {
                    write!(
                        f,
                        "{place}: {none} in any of the {replications} replications, so its {label} of {zero} has no interval{share}; run more replications to measure it"
                    )
                } else {
                    write!(
                        f,
                        "{place}: its {label} rests on {events} in {seen_in} of the {replications} replications, so its interval leans on a few congested spells and may not cover; run more replications"
                    )
                }
            }
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

/// The [`Warning::Sparse`] warnings of a run: each stream's and stage's
/// mean wait and interruptions per answered call whose numerator (waiting
/// time, interruptions) was non-zero in fewer than [`SPARSE_BELOW`]
/// replications and not in all of them (a run of 4 replications that all
/// saw waits has a wide t interval, not a spike at 0 with a few values),
/// where the figure's denominator was seen at all (a stream with no
/// answered call has no such figure to doubt). Per-interval figures
/// are left out: a quiet interval without waits is the rule, not a doubt.
pub fn sparse(model: &Model, layout: &[FigureId], per_replication: &[Vec<Obs>]) -> Vec<Warning> {
    let n = per_replication.len() as u64;
    if n < 2 {
        return Vec::new();
    }
    layout
        .iter()
        .enumerate()
        .filter(|(_, f)| matches!(f.figure, Figure::WaitMean | Figure::Interruptions))
        .filter_map(|(i, f)| {
            let place = match f.scope {
                Scope::Stream(s) => format!("stream \"{}\"", model.streams.get(s)?.name),
                Scope::Stage(s, k) => {
                    let stream = model.streams.get(s)?;
                    format!(
                        "stage \"{}\" of stream \"{}\"",
                        stream.stages.get(k)?.name,
                        stream.name
                    )
                }
                _ => return None,
            };
            let column = per_replication.iter().filter_map(|v| v.get(i));
            let den: f64 = column.clone().map(|o| o.den).sum();
            let seen_in = column.filter(|o| o.num > 0.0).count() as u64;
            (den > 0.0 && seen_in < SPARSE_BELOW && seen_in < n).then_some(Warning::Sparse {
                place,
                figure: *f,
                seen_in,
                replications: n,
            })
        })
        .collect()
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

#[cfg(test)]
mod tests {
    use super::*;

    fn queue_model() -> Model {
        let text = "[simulation]\nlength = \"1h\"\nreplications = 4\n\n\
                    [[group]]\nname = \"agents\"\nservers = 3\nqueue = \"unlimited\"\n\n\
                    [[stream]]\nname = \"callers\"\n\
                    arrivals = { law = \"poisson\", rate = \"20/h\" }\n\
                    holding = { law = \"exponential\", mean = \"3m\" }\nroute = [\"agents\"]\n";
        crate::scenario::parse(text, "q.toml", std::path::Path::new("."), "q").unwrap()
    }

    /// Replications whose stream mean-wait observation is `waits[i]` over
    /// 50 answered calls (every other figure 1 / 1).
    fn replications(model: &Model, waits: &[f64]) -> (Vec<FigureId>, Vec<Vec<Obs>>) {
        let layout = stats::layout(model);
        let rows = waits
            .iter()
            .map(|&w| {
                layout
                    .iter()
                    .map(|f| {
                        if f.scope == Scope::Stream(0) && f.figure == Figure::WaitMean {
                            Obs::ratio(w, 50.0)
                        } else {
                            Obs::ratio(1.0, 1.0)
                        }
                    })
                    .collect()
            })
            .collect();
        (layout, rows)
    }

    #[test]
    fn mean_waits_from_few_replications_warn() {
        let model = queue_model();
        // No wait in any replication: the figure is 0 with no interval.
        let (layout, rows) = replications(&model, &[0.0; 40]);
        let w = sparse(&model, &layout, &rows);
        assert_eq!(w.len(), 1, "{w:?}");
        let text = w[0].to_string();
        assert!(
            text.starts_with("stream \"callers\": no call waited in any of the 40 replications"),
            "{text}"
        );
        // Waits in 4 of 40: warned; in 5 of 40: not.
        let mut four = vec![0.0; 40];
        four[..4].fill(30.0);
        let (layout, rows) = replications(&model, &four);
        let w = sparse(&model, &layout, &rows);
        assert!(
            w[0].to_string()
                .contains("rests on waits in 4 of the 40 replications"),
            "{w:?}"
        );
        let mut five = vec![0.0; 40];
        five[..5].fill(30.0);
        let (layout, rows) = replications(&model, &five);
        assert!(sparse(&model, &layout, &rows).is_empty());
        // Four replications that all saw waits: a wide t interval, no warning.
        let (layout, rows) = replications(&model, &[30.0, 10.0, 80.0, 5.0]);
        assert!(sparse(&model, &layout, &rows).is_empty());
    }
}
