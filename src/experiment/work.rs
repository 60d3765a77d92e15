//! How much work a run is, before it starts: the expected number of engine
//! events from the arrival rates, redials, simulated time and replications,
//! and the wall-clock time that takes at a measured event rate. Owns only
//! the estimate; asking the user is the binary's job.
//!
//! # Method
//!
//! Per stream, first attempts over the simulated time of one replication
//! (warm-up + length + a drain allowance), times attempts per call, times
//! events per attempt; summed over streams and multiplied by the
//! replications:
//!
//! ```text
//! calls     = rate x (warmup + length + drain)
//! drain     = min(length, 10 x mean holding time)
//! attempts  = 1 + c1 + c1 c2 + ... (max_attempts terms; c_i the redial chances)
//! per try   = 2 (arrival, departure) + 1 if it can abandon + 1 if it can be
//!             passed on by `overflow_after`
//! events    = replications x sum over streams of calls x attempts x per try
//! seconds   = events / (EVENTS_PER_SECOND_PER_CORE x min(cores, replications))
//! ```
//!
//! Rates (`Arrivals::rate_over` the whole span): Poisson its rate; a peak
//! profile its first rate in the warm-up, its mean over the length and its
//! last rate in the drain; renewal
//! 1 / mean time between arrivals; finite sources count / mean idle time
//! (each source calls at most once per idle period: an upper bound).
//! Attempts assume every attempt fails (an upper bound: at most
//! `max_attempts`), so a design with redials is overestimated by up to that
//! factor. The drain allowance mirrors the engine, which follows measured
//! calls past the period for at most one more length. A precision goal
//! counts its `max` replications (the most it may run).
//!
//! The estimate is meant to be on the safe side: it should rather ask once
//! too often than let a run go on for days unannounced.

use crate::scenario::{Arrivals, Model, Queue, Replications};

/// Engine events per second on one core, for the time estimate. A
/// conservative round figure: `busyhour run --threads 1` measured 5.5 to 5.9
/// million events per second (a 520-circuit lognormal loss group and an
/// overflow-to-queue design with redials, 24 h x 4 replications each) on a
/// shared 2-core development machine; see `docs/robustness.md`, "The work
/// guard".
pub const EVENTS_PER_SECOND_PER_CORE: f64 = 4.0e6;

/// The drain allowance in mean holding times (at most one length).
pub const DRAIN_HOLDING_TIMES: f64 = 10.0;

/// The expected work of a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WorkEstimate {
    /// Engine events in all replications.
    pub events: f64,
    /// Wall-clock seconds on the cores used.
    pub seconds: f64,
}

impl WorkEstimate {
    /// No work.
    pub const ZERO: WorkEstimate = WorkEstimate {
        events: 0.0,
        seconds: 0.0,
    };

    /// Two pieces of work done one after the other (sweep steps, sizing
    /// probes).
    pub fn plus(self, other: WorkEstimate) -> WorkEstimate {
        WorkEstimate {
            events: self.events + other.events,
            seconds: self.seconds + other.seconds,
        }
    }

    /// The same work repeated `factor` times.
    pub fn times(self, factor: f64) -> WorkEstimate {
        WorkEstimate {
            events: self.events * factor,
            seconds: self.seconds * factor,
        }
    }
}

/// Replications a plan runs at most.
pub fn planned_replications(plan: &Replications) -> u32 {
    match *plan {
        Replications::Fixed(n) => n,
        Replications::Precision { max, .. } => max,
    }
}

/// Expected engine events of one replication of `model` (see the module doc
/// for the formula).
pub fn events_per_replication(model: &Model) -> f64 {
    let plan = &model.plan;
    let mut events = 0.0;
    for s in &model.streams {
        let drain = plan
            .length_s
            .min(DRAIN_HOLDING_TIMES * s.holding.mean().max(0.0));
        // The warm-up and the drain run at the profile's first and last rates.
        let span_s = plan.warmup_s + plan.length_s + drain;
        let calls = match &s.arrivals {
            Arrivals::Sources { count, idle } => f64::from(*count) * span_s / idle.mean(),
            a => {
                a.rate_over(-plan.warmup_s, plan.length_s + drain)
                    .unwrap_or(0.0)
                    * span_s
            }
        };
        let attempts = match &s.retry {
            None => 1.0,
            Some(r) => {
                let (mut sum, mut reach) = (1.0, 1.0);
                for attempt in 1..r.max_attempts {
                    reach *= r.chance_after(attempt);
                    sum += reach;
                }
                sum
            }
        };
        let queues = s
            .route
            .iter()
            .map(|&g| &model.groups[g as usize])
            .filter(|g| g.queue != Queue::None);
        let (mut can_abandon, mut can_move_on) = (false, false);
        for g in queues {
            can_abandon |= s.patience.is_some();
            can_move_on |= g.overflow_after_s.is_some();
        }
        // A `seen_by` entry with a delay is one more event per waiting call.
        let seen = s.seen_by.iter().filter(|x| x.after_s > 0.0).count() as f64;
        let per_attempt =
            2.0 + f64::from(u8::from(can_abandon)) + f64::from(u8::from(can_move_on)) + seen;
        events += calls * attempts * per_attempt;
    }
    events
}

/// The work of running `model` to `replications` on `cores` worker threads.
pub fn estimate_on(model: &Model, replications: &Replications, cores: usize) -> WorkEstimate {
    let n = planned_replications(replications);
    let events = events_per_replication(model) * f64::from(n);
    let parallel = cores.clamp(1, n.max(1) as usize) as f64;
    WorkEstimate {
        events,
        seconds: events / (EVENTS_PER_SECOND_PER_CORE * parallel),
    }
}

/// The work of running `model` to `replications` on every core of this
/// machine (`std::thread::available_parallelism`).
pub fn estimate(model: &Model, replications: &Replications) -> WorkEstimate {
    estimate_on(model, replications, machine_cores())
}

/// Cores of this machine (1 when unknown).
pub fn machine_cores() -> usize {
    std::thread::available_parallelism().map_or(1, usize::from)
}
