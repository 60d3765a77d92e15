//! Raw counters of one replication, filled by the engine. Counts of calls
//! refer to calls whose first attempt arrived in the measured period
//! ("measured calls"), followed to their end; time integrals are clipped to
//! the measured period.

use hdrhistogram::Histogram;

/// Waits are recorded in milliseconds up to this bound (1000 hours); a longer
/// wait is clamped to it.
pub const WAIT_MAX_MS: u64 = 3_600_000_000;
/// Significant digits kept by the wait histogram: 2 gives 1% resolution in
/// fixed memory (about 60 KiB per stream).
pub const WAIT_DIGITS: u8 = 2;

/// Counters of one stream.
#[derive(Debug, Clone, Default)]
pub struct StreamTally {
    /// Measured calls (first attempts in the measured period).
    pub offered: u64,
    /// Sum of the holding times of measured calls (s).
    pub offered_holding_s: f64,
    /// Attempts of measured calls, redials included.
    pub attempts: u64,
    /// First attempts that found every group on the route full.
    pub first_blocked: u64,
    /// Attempts that found every group on the route full.
    pub attempts_blocked: u64,
    /// Attempts that abandoned a queue.
    pub attempts_abandoned: u64,
    /// Calls answered.
    pub answered: u64,
    /// Calls answered within the stream's `answer_within`.
    pub answered_within: u64,
    /// Calls that ended blocked on their last allowed attempt.
    pub blocked_final: u64,
    /// Calls that ended by abandoning (and not redialling).
    pub abandoned_final: u64,
    /// Resolved calls that waited in a queue on at least one attempt.
    pub waited: u64,
    /// Measured calls still unresolved when the replication stopped.
    pub pending_end: u64,
    /// Interruptions of measured calls by calls of higher priority
    /// (`preemption`), every one counted.
    pub interruptions: u64,
    /// Sum of the waits of answered calls (s).
    pub wait_sum_s: f64,
    /// Call-seconds carried inside the measured period.
    pub carried_s: f64,
    /// Waits of answered calls (ms), for streams that can wait.
    pub waits: Option<Histogram<u64>>,
}

impl StreamTally {
    /// Calls whose fate is known.
    pub fn resolved(&self) -> u64 {
        self.offered - self.pending_end
    }
    /// Calls never served.
    pub fn lost(&self) -> u64 {
        self.blocked_final + self.abandoned_final
    }
}

/// Counters of one group.
#[derive(Debug, Clone, Default)]
pub struct GroupTally {
    /// Server-seconds busy inside the measured period.
    pub busy_s: f64,
    /// Server-seconds busy in the first half of the measured period,
    /// `[warmup, warmup + length / 2)`: against `busy_s` a check for a
    /// start-up transient (in a steady system both halves carry alike).
    pub busy_first_half_s: f64,
    /// Seconds with every server busy.
    pub full_s: f64,
    /// Calls that found the group full and did not wait there (moved on along
    /// the route or were blocked), counted when it happened in the period.
    pub overflow_calls: u64,
    /// Integral of the virtual overflow group's occupancy (erlang-seconds).
    pub overflow_s: f64,
    /// Integral of its square.
    pub overflow_sq_s: f64,
    /// What happened to the calls that entered the group's queue.
    pub queue: QueueTally,
}

/// The calls that entered one group's queue and how each left it, over the
/// whole replication (warm-up and drain included, measured or not): a
/// conservation check, `joined = answered + taken_elsewhere + abandoned +
/// moved_on + pending_end`. A call seen by several groups (`seen_by`) is in
/// each of their queues and counts in each.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct QueueTally {
    /// Calls that entered the queue (on arrival, moved on from an earlier
    /// group, or seen from another group's queue).
    pub joined: u64,
    /// Answered by a server of this group.
    pub answered: u64,
    /// Left because another group took the call (a call seen by several).
    pub taken_elsewhere: u64,
    /// The caller gave up.
    pub abandoned: u64,
    /// Moved on along the route (`overflow_after`).
    pub moved_on: u64,
    /// Still in the queue when the replication stopped (by a scan of the
    /// waiting calls).
    pub pending_end: u64,
    /// The engine's own count of waiting calls when the replication
    /// stopped: equal to `pending_end` when that count is exact.
    pub waiting_end: u64,
}

/// Counters of one stage of a call flow (measured calls; each attempt that
/// reaches the stage enters it once). Every entry leaves once: `entered =
/// served + abandoned + blocked + pending_end`.
#[derive(Debug, Clone, Copy, Default)]
pub struct StageTally {
    /// Entries into the stage.
    pub entered: u64,
    /// Of them, served to the end of the stage's holding.
    pub served: u64,
    /// Of the served, calls that ended after this stage (the finish share,
    /// or every served call at the last stage).
    pub finished: u64,
    /// Of them, gave up waiting at this stage.
    pub abandoned: u64,
    /// Of them, found no server and no waiting place at this stage.
    pub blocked: u64,
    /// Of them, still waiting or in service at the stage when the
    /// replication stopped.
    pub pending_end: u64,
    /// Sum of the waits at this stage of the served entries (s).
    pub wait_sum_s: f64,
}

/// Counters of one stream in one reporting interval (calls by the interval of
/// their first attempt).
#[derive(Debug, Clone, Copy, Default)]
pub struct StreamIntervalTally {
    /// Measured calls arriving in the interval.
    pub offered: u64,
    /// Sum of their holding times (s).
    pub offered_holding_s: f64,
    /// Of them, resolved.
    pub resolved: u64,
    /// Of them, never served.
    pub lost: u64,
    /// Of them, lost because the caller gave up waiting (on the last attempt).
    pub abandoned: u64,
    /// Of them, waited in a queue on some attempt.
    pub waited: u64,
    /// Of them, answered.
    pub answered: u64,
    /// Of them, answered within `answer_within`.
    pub answered_within: u64,
    /// Sum of waits of the answered ones (s).
    pub wait_sum_s: f64,
    /// Call-seconds carried inside the interval (whatever their arrival).
    pub carried_s: f64,
}

/// Counters of one group in one reporting interval.
#[derive(Debug, Clone, Copy, Default)]
pub struct GroupIntervalTally {
    /// Server-seconds busy inside the interval.
    pub busy_s: f64,
    /// Seconds with every server busy.
    pub full_s: f64,
}

/// Everything one replication measured.
#[derive(Debug, Clone)]
pub struct Tally {
    /// Replication index.
    pub replication: u64,
    /// Per stream.
    pub streams: Vec<StreamTally>,
    /// Per group.
    pub groups: Vec<GroupTally>,
    /// Per interval, per stream.
    pub stream_intervals: Vec<Vec<StreamIntervalTally>>,
    /// Per interval, per group.
    pub group_intervals: Vec<Vec<GroupIntervalTally>>,
    /// Per stream, per stage of its call flow (empty for a stream without
    /// stages).
    pub stages: Vec<Vec<StageTally>>,
    /// Events processed (for throughput figures).
    pub events: u64,
    /// Most calls ever in progress on any group at once (a check of the
    /// engine's invariants: never above the group size).
    pub peak_busy: Vec<u32>,
}
