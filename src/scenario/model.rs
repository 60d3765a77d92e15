//! The compiled, validated model: index-based, no strings in the engine's hot
//! path. Built only by `scenario::compile`; the engine reads it, never changes it.

use crate::dist::Law;

/// How many replications to run.
#[derive(Debug, Clone, PartialEq)]
pub enum Replications {
    /// Exactly this many.
    Fixed(u32),
    /// Until every key figure's relative 95% half-width is at most `target`,
    /// but no more than `max`.
    Precision {
        /// Relative half-width, e.g. 0.02.
        target: f64,
        /// Cap on replications.
        max: u32,
    },
}

/// The `[simulation]` section, in seconds.
#[derive(Debug, Clone, PartialEq)]
pub struct RunPlan {
    /// Discarded at the start of each replication (s).
    pub warmup_s: f64,
    /// Measured period per replication (s).
    pub length_s: f64,
    /// Replication count or precision goal.
    pub replications: Replications,
    /// Master seed.
    pub seed: u64,
    /// Optional reporting interval (s).
    pub interval_s: Option<f64>,
}

impl RunPlan {
    /// Number of reporting intervals (0 when none is set). The last may be
    /// shorter than the others when the length is not a multiple.
    pub fn interval_count(&self) -> usize {
        match self.interval_s {
            Some(i) => (self.length_s / i - 1e-9).ceil().max(1.0) as usize,
            None => 0,
        }
    }
}

/// Waiting places of a group.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Queue {
    /// Blocked calls are cleared (loss system).
    None,
    /// At most this many calls wait.
    Limited(u32),
    /// Any number may wait.
    Unlimited,
}

impl Queue {
    /// Waiting places as a number (u32::MAX for unlimited).
    pub fn places(self) -> u32 {
        match self {
            Queue::None => 0,
            Queue::Limited(q) => q,
            Queue::Unlimited => u32::MAX,
        }
    }
}

/// A circuit group or an agent group.
#[derive(Debug, Clone)]
pub struct Group {
    /// Name from the file.
    pub name: String,
    /// Servers (circuits, ports, agents).
    pub servers: u32,
    /// Waiting places.
    pub queue: Queue,
    /// A waiting call moves on along its route after this wait (s).
    pub overflow_after_s: Option<f64>,
    /// Servers kept for the streams in `reserved_for` (0: no reservation).
    pub reserve: u32,
    /// Per stream index: may this stream take the reserved servers?
    pub reserved_for: Vec<bool>,
}

/// How the calls of a stream arrive.
#[derive(Debug, Clone)]
pub enum Arrivals {
    /// Poisson at a constant rate (calls/s).
    Poisson {
        /// Calls per second.
        rate: f64,
    },
    /// Poisson with a piecewise-constant rate: `rates[i]` (calls/s) holds from
    /// `i * interval_s` after the start of the measured period; the warm-up
    /// runs at the first rate and the last rate holds after the profile ends.
    Profile {
        /// Length of each rate's interval (s).
        interval_s: f64,
        /// Calls per second, one per interval.
        rates: Vec<f64>,
    },
    /// A renewal process: independent times between arrivals.
    Renewal {
        /// Law of the time between arrivals.
        between: Law,
    },
    /// Finite sources: each source idles, calls, and idles again when its call
    /// ends (answered and finished, or finally lost).
    Sources {
        /// Number of sources.
        count: u32,
        /// Law of an idle period.
        idle: Law,
    },
}

impl Arrivals {
    /// Mean rate of first attempts in calls/s over the measured period of
    /// length `length_s`, for offered-traffic figures. Finite sources have no
    /// fixed rate: `None`.
    pub fn mean_rate(&self, length_s: f64) -> Option<f64> {
        match self {
            Arrivals::Poisson { rate } => Some(*rate),
            Arrivals::Profile { interval_s, rates } => {
                let mut total = 0.0;
                let mut t = 0.0;
                for (i, r) in rates.iter().enumerate() {
                    if t >= length_s {
                        break;
                    }
                    let end = if i + 1 == rates.len() {
                        length_s
                    } else {
                        (t + interval_s).min(length_s)
                    };
                    total += r * (end - t);
                    t = end;
                }
                Some(total / length_s)
            }
            Arrivals::Renewal { between } => Some(1.0 / between.mean()),
            Arrivals::Sources { .. } => None,
        }
    }
}

/// Redials after a busy signal or an abandoned wait.
#[derive(Debug, Clone)]
pub struct Retry {
    /// Chance of the first, second, ... redial; the last repeats.
    pub chances: Vec<f64>,
    /// Law of the delay before each redial.
    pub delay: Law,
    /// Attempts in all, the first included (>= 1).
    pub max_attempts: u32,
}

impl Retry {
    /// Chance that a caller whose attempt number `attempt` (1-based) failed
    /// tries again.
    pub fn chance_after(&self, attempt: u32) -> f64 {
        if attempt >= self.max_attempts {
            return 0.0;
        }
        let i = (attempt as usize - 1).min(self.chances.len() - 1);
        self.chances[i]
    }
}

/// One traffic stream.
#[derive(Debug, Clone)]
pub struct Stream {
    /// Name from the file.
    pub name: String,
    /// Arrival process.
    pub arrivals: Arrivals,
    /// Holding-time law.
    pub holding: Law,
    /// Group indices, tried in order.
    pub route: Vec<u32>,
    /// Servers one call occupies on each group that carries it.
    pub units: u32,
    /// Redial behaviour.
    pub retry: Option<Retry>,
    /// Patience of a waiting caller (none: waits for ever).
    pub patience: Option<Law>,
    /// Target answer time for the service level (s).
    pub answer_within_s: Option<f64>,
    /// Key for this stream's random numbers, from its name, so that adding,
    /// removing or reordering other streams leaves its numbers unchanged.
    pub seed_key: u64,
}

impl Stream {
    /// Offered traffic of first attempts in erlangs (None for finite sources).
    pub fn offered_traffic(&self, length_s: f64) -> Option<f64> {
        self.arrivals
            .mean_rate(length_s)
            .map(|r| r * self.holding.mean())
    }
}

/// A compiled scenario.
#[derive(Debug, Clone)]
pub struct Model {
    /// Title from the file, or the file name.
    pub title: String,
    /// Run plan.
    pub plan: RunPlan,
    /// Groups, indexed by route entries.
    pub groups: Vec<Group>,
    /// Streams.
    pub streams: Vec<Stream>,
}

impl Model {
    /// Whether any group has waiting places.
    pub fn has_queues(&self) -> bool {
        self.groups.iter().any(|g| g.queue != Queue::None)
    }

    /// Index of the group with this name.
    pub fn group_index(&self, name: &str) -> Option<usize> {
        self.groups.iter().position(|g| g.name == name)
    }

    /// Index of the stream with this name.
    pub fn stream_index(&self, name: &str) -> Option<usize> {
        self.streams.iter().position(|s| s.name == name)
    }

    /// The same model with every stream's arrival rate multiplied by `factor`
    /// (finite sources: idle time divided by it), or only the named stream's.
    pub fn with_load_scaled(&self, factor: f64, only: Option<usize>) -> Model {
        let mut m = self.clone();
        for (i, s) in m.streams.iter_mut().enumerate() {
            if only.is_some_and(|o| o != i) {
                continue;
            }
            s.arrivals = match &s.arrivals {
                Arrivals::Poisson { rate } => Arrivals::Poisson {
                    rate: rate * factor,
                },
                Arrivals::Profile { interval_s, rates } => Arrivals::Profile {
                    interval_s: *interval_s,
                    rates: rates.iter().map(|r| r * factor).collect(),
                },
                Arrivals::Renewal { between } => Arrivals::Renewal {
                    between: between.scaled(1.0 / factor),
                },
                Arrivals::Sources { count, idle } => Arrivals::Sources {
                    count: *count,
                    idle: idle.scaled(1.0 / factor),
                },
            };
        }
        m
    }

    /// The same model with group `group` resized to `servers`.
    pub fn with_servers(&self, group: usize, servers: u32) -> Model {
        let mut m = self.clone();
        m.groups[group].servers = servers;
        m.groups[group].reserve = m.groups[group].reserve.min(servers.saturating_sub(1));
        m
    }
}
