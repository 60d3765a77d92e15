//! The compiled, validated model: index-based, no strings in the engine's hot
//! path. Built only by `scenario::compile`; the engine reads it, never changes it.

use crate::dist::Law;
use thiserror::Error;

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

/// How each replication starts (`[simulation] start`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Start {
    /// `"steady"` (the default): the calls in progress of every Poisson or
    /// peak-profile stream are seated at time 0, as many as an
    /// infinite-server system holds in equilibrium, each with its residual
    /// holding time (see `engine`).
    Steady,
    /// `"empty"`: every replication opens with no call in progress (a system
    /// that opens in the morning).
    Empty,
}

/// Smallest residual tail the default warm-up waits for, for a stream
/// whose calls in progress are seated at a steady start: they already start
/// in the infinite-server equilibrium, only the calls that did not fit are
/// missing.
pub const WARMUP_TAIL_SEATED: f64 = 1e-2;
/// The same for a stream that starts empty (renewal arrivals, finite
/// sources, or `start = "empty"`).
pub const WARMUP_TAIL_EMPTY: f64 = 1e-4;
/// Fewest mean holding times of default warm-up for a stream whose route
/// has a queue or that redials (queues and redials are not seated).
pub const WARMUP_HOLDINGS_QUEUE: f64 = 10.0;
/// Relaxation times of a queue's transient a default warm-up spans
/// (e^-5: under 1% of the start-up deficit left).
pub const WARMUP_RELAXATIONS: f64 = 5.0;

/// The `[simulation]` section, in seconds.
#[derive(Debug, Clone, PartialEq)]
pub struct RunPlan {
    /// Discarded at the start of each replication (s). When the file gives
    /// none, [`Model::warmup_needed_s`] rounded up to a whole second.
    pub warmup_s: f64,
    /// Whether the file gave `warmup` (false: the default above).
    pub warmup_given: bool,
    /// How each replication starts.
    pub start: Start,
    /// Measured period per replication (s).
    pub length_s: f64,
    /// Replication count or precision goal.
    pub replications: Replications,
    /// Master seed.
    pub seed: u64,
    /// Optional reporting interval (s).
    pub interval_s: Option<f64>,
    /// The clock time of day at which the measured period begins (seconds
    /// after midnight), when the file gives one: intervals and charts are
    /// then labelled with clock times. Labels only: no figure depends on it.
    pub clock_start_s: Option<f64>,
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
    /// Servers (circuits, ports, agents); with a schedule, the most present
    /// at any time.
    pub servers: u32,
    /// Servers that change over the run, or agents scheduled with
    /// shrinkage; `None`: `servers` all the time.
    pub schedule: Option<Schedule>,
    /// Waiting places.
    pub queue: Queue,
    /// A waiting call moves on along its route after this wait (s).
    pub overflow_after_s: Option<f64>,
    /// Servers kept for the streams in `reserved_for` (0: no reservation).
    pub reserve: u32,
    /// Per stream index: may this stream take the reserved servers?
    pub reserved_for: Vec<bool>,
    /// The kinds of shift a shift plan of this group may use, on the grid
    /// of the reporting intervals (planning only: no replication reads it).
    pub shift_types: Vec<crate::shifts::ShiftType>,
    /// The group's order of preference over streams (`prefer`), as stream
    /// indices, most preferred first; empty: no preference.
    pub prefer: Vec<u32>,
    /// Per stream index: the class of the stream's waiting calls in this
    /// group's queue, 0 answered first (from `prefer`, then the streams'
    /// `priority`; see [`Model::queue_classes`]). All 0 for one class.
    pub class_of: Vec<u32>,
    /// Pre-emptive priority (`preemption`): what happens to a call in
    /// service that a call of higher `priority` interrupts; `None`: calls
    /// in service are never interrupted.
    pub preemption: Option<Preemption>,
}

/// What happens to a call interrupted by a call of higher priority
/// (`preemption` on a group; rules in docs/semantics.md, "Pre-emption").
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Preemption {
    /// It waits at the head of its class and is served again for the rest
    /// of its holding time (pre-emptive resume).
    Resume,
    /// It waits at the head of its class and is served again for the whole
    /// of its holding time (pre-emptive repeat, the same work again).
    Restart,
    /// It ends there (pre-emptive loss).
    Lose,
}

impl Preemption {
    /// The names the file uses, in the order of the message.
    pub const NAMES: [&'static str; 3] = ["resume", "restart", "lose"];

    /// The name the file uses.
    pub fn name(self) -> &'static str {
        match self {
            Preemption::Resume => "resume",
            Preemption::Restart => "restart",
            Preemption::Lose => "lose",
        }
    }

    /// From the file's name.
    pub fn parse(text: &str) -> Option<Preemption> {
        match text {
            "resume" => Some(Preemption::Resume),
            "restart" => Some(Preemption::Restart),
            "lose" => Some(Preemption::Lose),
            _ => None,
        }
    }
}

impl Group {
    /// Whether the group's servers change over the run (a schedule whose
    /// entries differ).
    pub fn servers_change(&self) -> bool {
        self.schedule.as_ref().is_some_and(|s| !s.is_constant())
    }

    /// Mean number of servers taking calls from `t0` to `t1` seconds after
    /// the start of the measured period (`t1 > t0`): the denominator of
    /// occupancy.
    pub fn servers_over(&self, t0: f64, t1: f64) -> f64 {
        let Some(s) = &self.schedule else {
            return f64::from(self.servers);
        };
        s.mean_over(&s.present, t0, t1)
    }
}

/// The servers of a group over time: `present[i]` from `i * interval_s`
/// after the start of the measured period, the warm-up at the first and
/// the last holding after the list ends (the convention of peak profiles).
///
/// When the number falls, a busy server finishes the call in progress and
/// takes no new one until the busy count is below the new number (no call
/// is cut short); when it rises, waiting calls are answered at once.
#[derive(Debug, Clone, PartialEq)]
pub struct Schedule {
    /// Length of each entry's interval (s).
    pub interval_s: f64,
    /// Servers scheduled per interval, as the file gives them.
    pub scheduled: Vec<u32>,
    /// Share of the scheduled servers not taking calls (breaks, training,
    /// absence) per interval; 0 when the file gives none.
    pub shrinkage: Vec<f64>,
    /// Servers taking calls per interval: the scheduled number less the
    /// shrinkage, rounded down (a fraction of an agent answers no call).
    pub present: Vec<u32>,
}

impl Schedule {
    /// Servers taking calls `t` seconds after the start of the measured
    /// period (the first entry before it).
    pub fn present_at(&self, t: f64) -> u32 {
        self.present[self.entry_at(t)]
    }

    /// The entry in force `t` seconds after the start of the measured
    /// period: the first before it, the last after the list ends.
    pub fn entry_at(&self, t: f64) -> usize {
        if t <= 0.0 {
            0
        } else {
            ((t / self.interval_s) as usize).min(self.present.len() - 1)
        }
    }

    /// The time average from `t0` to `t1` of a per-entry list of this
    /// schedule (`present` or `scheduled`); the entry in force at `t0` when
    /// the span is empty.
    pub fn mean_over(&self, list: &[u32], t0: f64, t1: f64) -> f64 {
        if !(t1 > t0) {
            return f64::from(list[self.entry_at(t0)]);
        }
        // Server-seconds over the entries the span crosses.
        let mut sum = 0.0;
        let mut t = t0;
        while t < t1 {
            let i = self.entry_at(t);
            let entry_end = if i + 1 >= list.len() {
                t1
            } else {
                ((i + 1) as f64 * self.interval_s).min(t1)
            };
            let entry_end = if entry_end > t { entry_end } else { t1 };
            sum += f64::from(list[i]) * (entry_end - t);
            t = entry_end;
        }
        sum / (t1 - t0)
    }

    /// Whether the number taking calls never changes.
    pub fn is_constant(&self) -> bool {
        self.present.iter().all(|&n| n == self.present[0])
    }

    /// The servers taking calls, `scheduled x (1 - shrinkage)` rounded down.
    pub fn present_of(scheduled: u32, shrinkage: f64) -> u32 {
        // The small allowance keeps 20 x (1 - 0.3) at 14, not 13.999...
        (f64::from(scheduled) * (1.0 - shrinkage) + 1e-9).floor() as u32
    }
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
    /// The rate of first attempts at time 0 in calls/s, for the streams whose
    /// calls in progress are seated at a steady start: Poisson, or a peak
    /// profile's first rate (the warm-up runs at it). `None` for renewal
    /// arrivals and finite sources, which start empty.
    pub fn initial_rate(&self) -> Option<f64> {
        match self {
            Arrivals::Poisson { rate } => Some(*rate),
            Arrivals::Profile { rates, .. } => Some(rates[0]),
            Arrivals::Renewal { .. } | Arrivals::Sources { .. } => None,
        }
    }

    /// Mean rate of first attempts in calls/s over the measured period of
    /// length `length_s`, for offered-traffic figures: [`Arrivals::rate_over`]
    /// from 0 to `length_s`. Finite sources have no fixed rate: `None`.
    pub fn mean_rate(&self, length_s: f64) -> Option<f64> {
        self.rate_over(0.0, length_s)
    }

    /// Mean rate of first attempts in calls/s over the window from `t0_s` to
    /// `t1_s` of simulated time (`t1_s > t0_s`; 0 is the start of the
    /// measured period, a negative time lies in the warm-up): the integral
    /// of the arrival rate over the window divided by its length. A peak
    /// profile's first rate holds before 0 (the warm-up runs at it) and its
    /// last rate after the profile ends; a renewal process runs at
    /// 1 / mean time between arrivals. Finite sources have no fixed rate:
    /// `None`.
    pub fn rate_over(&self, t0_s: f64, t1_s: f64) -> Option<f64> {
        match self {
            Arrivals::Poisson { rate } => Some(*rate),
            Arrivals::Profile { interval_s, rates } => {
                let mut total = 0.0;
                for (i, r) in rates.iter().enumerate() {
                    // Ends from the index, not by repeated addition.
                    let start = if i == 0 {
                        f64::NEG_INFINITY
                    } else {
                        i as f64 * interval_s
                    };
                    let end = if i + 1 == rates.len() {
                        f64::INFINITY
                    } else {
                        (i + 1) as f64 * interval_s
                    };
                    let overlap = end.min(t1_s) - start.max(t0_s);
                    if overlap > 0.0 {
                        total += r * overlap;
                    }
                }
                Some(total / (t1_s - t0_s))
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
    /// Forecast uncertainty of the stream's rate (none: the rate is known).
    pub forecast: Option<Forecast>,
    /// Priority of the stream's waiting calls (`priority`): a lower number
    /// is answered first; none: after every stream that has one.
    pub priority: Option<u32>,
    /// Groups that also see the stream's waiting calls (`seen_by`), each
    /// after its delay, in order of delay (ties in the file's order).
    pub seen_by: Vec<SeenBy>,
    /// The stages of a call flow, in order (empty: the one-stage stream of
    /// `route` and `holding`). For a stream with stages, `route` lists every
    /// group of every stage, stage by stage, and `holding` is a fixed law
    /// at the mean total holding ([`Stream::flow_holding_mean`]), read only
    /// for its mean (offered traffic, drain and warm-up estimates): the
    /// engine draws each stage's own law.
    pub stages: Vec<Stage>,
}

/// A group that sees a stream's waiting call without the call moving
/// there: from `after_s` seconds after the call started waiting, a server
/// of `group` that frees may take it (it keeps its place in the queue it
/// waits in).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeenBy {
    /// The group's index.
    pub group: u32,
    /// Delay from the start of the wait (s), >= 0.
    pub after_s: f64,
}

/// How long a stage's server is held.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Hold {
    /// Until the stage ends (`hold = "stage"`, the default): a self-service
    /// port, an agent.
    Stage,
    /// Until the whole call ends (`hold = "to-end"`): a trunk, held through
    /// the later stages, their waits included.
    ToEnd,
}

/// One stage of a call flow (`stages = [...]`; rules in docs/semantics.md,
/// "Call flows with stages").
#[derive(Debug, Clone)]
pub struct Stage {
    /// Name from the file.
    pub name: String,
    /// Group indices tried in order (route semantics: seize, else wait where
    /// the group has places, else the next group).
    pub route: Vec<u32>,
    /// Time in the stage once its server is seized (none: the stage takes
    /// no time, it only seizes, like a trunk held to the end).
    pub holding: Option<Law>,
    /// Patience of a caller waiting at this stage (none: waits for ever).
    pub patience: Option<Law>,
    /// Share of the callers served here whose call ends after this stage
    /// (0 at the last stage, where every call ends).
    pub finish: f64,
    /// How long the server is held.
    pub hold: Hold,
}

/// The share of a flow's calls that reach each of `stages` when none is
/// lost: 1 for the first, then the product of `1 - finish` of the stages
/// before.
pub fn stage_reach(stages: &[Stage]) -> Vec<f64> {
    let mut reach = 1.0;
    (stages.iter())
        .map(|st| {
            let r = reach;
            reach *= 1.0 - st.finish;
            r
        })
        .collect()
}

/// The mean total holding of a call through `stages` when none waits or is
/// lost: the sum of the stage means, each weighted by the share that
/// reaches it.
pub fn flow_holding_mean(stages: &[Stage]) -> f64 {
    (stages.iter().zip(stage_reach(stages)))
        .map(|(st, r)| r * st.holding_mean())
        .sum()
}

impl Stage {
    /// Mean time in the stage once seized (0 without a holding law).
    pub fn holding_mean(&self) -> f64 {
        self.holding.as_ref().map_or(0.0, Law::mean)
    }
}

/// A stream's forecast uncertainty (`uncertainty`, `uncertainty_law`,
/// `uncertainty_shared`): each replication (one day) the stream's rate, or
/// its whole peak profile, is multiplied by a factor drawn once from `law`
/// (mean 1, cv `cv`), from the random stream keyed by `key`. Poisson and
/// peak-profile arrivals only (the scenario refuses it elsewhere).
#[derive(Debug, Clone)]
pub struct Forecast {
    /// Law of the day's factor: mean 1, cv in (0, 1].
    pub law: Law,
    /// The label of a factor shared with other streams, when one is named.
    pub shared: Option<String>,
    /// Key of the factor's random stream: the stream's own `seed_key`, or
    /// a hash of the shared label (the same for every stream naming it).
    pub key: u64,
}

impl Forecast {
    /// The factor's coefficient of variation.
    pub fn cv(&self) -> f64 {
        self.law.cv()
    }
}

impl Stream {
    /// The groups that can carry or hold the stream's calls: its route,
    /// then its `seen_by` groups.
    pub fn reach(&self) -> impl Iterator<Item = u32> + '_ {
        (self.route.iter().copied()).chain(self.seen_by.iter().map(|s| s.group))
    }

    /// Whether the stream is a call flow with stages.
    pub fn has_stages(&self) -> bool {
        !self.stages.is_empty()
    }

    /// The share of a flow's calls that reach each stage when none is lost:
    /// 1 for the first, then the product of `1 - finish` of the stages
    /// before.
    pub fn stage_reach(&self) -> Vec<f64> {
        stage_reach(&self.stages)
    }

    /// The mean total holding of a flow's call when none waits or is lost
    /// ([`flow_holding_mean`] of its stages; 0 without stages).
    pub fn flow_holding_mean(&self) -> f64 {
        flow_holding_mean(&self.stages)
    }

    /// The positions in `route` of stage `k`'s groups.
    pub fn stage_span(&self, k: usize) -> std::ops::Range<usize> {
        let start: usize = self.stages[..k].iter().map(|st| st.route.len()).sum();
        start..start + self.stages[k].route.len()
    }

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
    /// Data files the scenario read (empirical laws), as resolved against
    /// the scenario's folder: inputs that no output may replace.
    pub data_files: Vec<std::path::PathBuf>,
    /// Prices from `[prices]`, for cost sizing (no replication reads them).
    pub prices: Option<Prices>,
}

/// Prices of a design, by group and stream index (0 where the file gives
/// none; packs of 1).
#[derive(Debug, Clone, PartialEq)]
pub struct Prices {
    /// Per server (agent) and hour present, per group.
    pub server_hour: Vec<f64>,
    /// Servers come in packs of this many, per group.
    pub module: Vec<u32>,
    /// Per call never served, per stream.
    pub lost_call: Vec<f64>,
    /// Per call abandoned while waiting, per stream.
    pub abandoned_call: Vec<f64>,
    /// Per minute answered callers waited, per stream.
    pub wait_minute: Vec<f64>,
}

impl Model {
    /// The classes of group `g`'s queue: per stream index, the class of
    /// its waiting calls there (0 answered first), and the number of
    /// classes among the streams that reach `g` (route or `seen_by`).
    ///
    /// A stream's class is its rank by the key (preference, priority):
    /// first the group's `prefer` order (a stream it does not name after
    /// those it names), then the stream's `priority` (lower first; none
    /// after every number). A group's own stated order wins over the
    /// streams' priorities there. Streams with equal keys share a class,
    /// first come first served among them. A stream that never reaches `g`
    /// gets class 0.
    pub fn queue_classes(&self, g: usize) -> (Vec<u32>, u32) {
        let grp = &self.groups[g];
        let key = |s: usize| {
            let rank = (grp.prefer.iter())
                .position(|&p| p as usize == s)
                .unwrap_or(grp.prefer.len());
            let priority = self.streams[s].priority.unwrap_or(u32::MAX);
            (rank, priority)
        };
        let reaching: Vec<usize> = (0..self.streams.len())
            .filter(|&s| self.streams[s].reach().any(|x| x as usize == g))
            .collect();
        let mut keys: Vec<(usize, u32)> = reaching.iter().map(|&s| key(s)).collect();
        keys.sort_unstable();
        keys.dedup();
        let mut class_of = vec![0; self.streams.len()];
        for &s in &reaching {
            let k = key(s);
            class_of[s] = keys.iter().position(|&x| x == k).unwrap_or(0) as u32;
        }
        (class_of, keys.len().max(1) as u32)
    }

    /// Whether group `g`'s queue holds more than one class (priorities or
    /// preferences that differ among the streams that reach it).
    pub fn has_classes(&self, g: usize) -> bool {
        self.groups[g].class_of.iter().any(|&c| c > 0)
    }

    /// Whether any stream's waiting calls are seen by other groups.
    pub fn has_seen_by(&self) -> bool {
        self.streams.iter().any(|s| !s.seen_by.is_empty())
    }

    /// Whether any group has waiting places.
    pub fn has_queues(&self) -> bool {
        self.groups.iter().any(|g| g.queue != Queue::None)
    }

    /// Whether stream `stream`'s calls in progress are seated at time 0 (a
    /// call flow with stages starts empty).
    pub fn is_seated(&self, stream: usize) -> bool {
        let s = &self.streams[stream];
        self.plan.start == Start::Steady && s.arrivals.initial_rate().is_some() && !s.has_stages()
    }

    /// The warm-up the holding laws ask for (s), before rounding: the largest
    /// over streams of the smallest w with `holding.residual_tail(w) <= eps`,
    /// eps = [`WARMUP_TAIL_SEATED`] for a seated stream and
    /// [`WARMUP_TAIL_EMPTY`] for one that starts empty, and at least
    /// [`WARMUP_HOLDINGS_QUEUE`] mean holding times for a stream whose route
    /// has a queue or that redials.
    ///
    /// Why the residual tail: a call in progress at time w of a stream that
    /// started empty is missing from the equilibrium picture only if it began
    /// before 0, and the share of equilibrium calls in progress that began
    /// more than w ago is residual_tail(w) (the age and the residual of a
    /// call in progress have the same law). So after w the infinite-server
    /// occupancy has reached 1 - eps of its equilibrium mean (exactly so for
    /// Poisson arrivals, the M/G/inf transient). For a seated stream only
    /// the calls that did not fit at time 0 (a loss system's blocked share)
    /// are missing, so a coarser eps is enough.
    ///
    /// Not covered: waiting calls, redials in progress and the virtual
    /// overflow groups start empty (hence the floor of ten holding times);
    /// renewal and finite-source arrival processes start with a fresh
    /// interval, not an equilibrium one (only their holding laws are
    /// looked at); a peak profile is seated at its first rate, which is
    /// exact because the warm-up runs at that rate.
    pub fn warmup_needed_s(&self) -> f64 {
        let mut needed: f64 = 0.0;
        for (si, s) in self.streams.iter().enumerate() {
            let eps = if self.is_seated(si) {
                WARMUP_TAIL_SEATED
            } else {
                WARMUP_TAIL_EMPTY
            };
            // A flow (not seated) waits for each stage's tail in turn.
            let mut w = if s.has_stages() {
                (s.stages.iter())
                    .filter_map(|st| st.holding.as_ref())
                    .map(|l| residual_quantile(l, eps))
                    .sum()
            } else {
                residual_quantile(&s.holding, eps)
            };
            let queued = s
                .route
                .iter()
                .any(|&g| self.groups[g as usize].queue != Queue::None);
            if queued || s.retry.is_some() {
                w = w.max(WARMUP_HOLDINGS_QUEUE * s.holding.mean());
            }
            needed = needed.max(w);
        }
        needed.max(self.queue_relaxation_s())
    }

    /// The warm-up a queue without patience needs (s):
    /// [`WARMUP_RELAXATIONS`] relaxation times of the group's queue, with
    /// the relaxation time of the M/M/c queue, h / (sqrt c - sqrt A)^2
    /// (the decay rate of its transient, mu (sqrt c - sqrt(lambda/mu))^2, for
    /// large c; Morse 1955 for one server, the many-server form is common
    /// practice), A the traffic offered to the group by the streams that
    /// reach it first and h their mean holding time. A queue at 86% load on
    /// 14 agents relaxes in 13 mean holding times, so ten holding times
    /// leave about half of the start-up deficit. Groups whose callers
    /// abandon relax faster (abandonment empties a long queue) and keep the
    /// floor of ten holding times; an overloaded queue has no steady state
    /// and is not looked at.
    pub fn queue_relaxation_s(&self) -> f64 {
        let mut needed: f64 = 0.0;
        for (g, group) in self.groups.iter().enumerate() {
            if group.queue == Queue::None {
                continue;
            }
            let users: Vec<&Stream> = self
                .streams
                .iter()
                .filter(|s| s.route.first().is_some_and(|&x| x as usize == g))
                .collect();
            if users.is_empty() || users.iter().any(|s| s.patience.is_some()) {
                continue;
            }
            let length = self.plan.length_s;
            let traffic: f64 = users
                .iter()
                .filter_map(|s| s.offered_traffic(length).map(|a| a * f64::from(s.units)))
                .sum();
            let calls: f64 = users
                .iter()
                .filter_map(|s| s.arrivals.mean_rate(length))
                .sum();
            let c = f64::from(group.servers);
            if !(calls > 0.0) || !(traffic < c) {
                continue;
            }
            let holding = traffic / calls;
            let gap = c.sqrt() - traffic.sqrt();
            needed = needed.max(WARMUP_RELAXATIONS * holding / (gap * gap));
        }
        needed
    }

    /// When the file gives a warm-up shorter than [`Model::warmup_needed_s`],
    /// the needed warm-up rounded up to a whole second (for a warning);
    /// otherwise `None` (also when the warm-up is the default).
    pub fn warmup_short(&self) -> Option<f64> {
        if !self.plan.warmup_given {
            return None;
        }
        let needed = self.warmup_needed_s().ceil();
        (self.plan.warmup_s < needed).then_some(needed)
    }

    /// Whether some stream's rate is uncertain (`uncertainty`): figures are
    /// then averaged over the forecast's spread.
    pub fn has_forecast_spread(&self) -> bool {
        self.streams.iter().any(|s| s.forecast.is_some())
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
    /// (renewal arrivals and finite sources: the time between arrivals or
    /// the idle time divided by it), or only the named stream's.
    ///
    /// Fails when `factor` is not finite and above zero, or when the scaled
    /// model leaves the range a scenario may have: a rate that is no longer
    /// above zero and finite, a time that no longer fits in a float.
    pub fn with_load_scaled(
        &self,
        factor: f64,
        only: Option<usize>,
    ) -> Result<Model, TransformError> {
        if !(factor > 0.0 && factor.is_finite()) {
            return Err(TransformError::Scale { factor });
        }
        let mut m = self.clone();
        for (i, s) in m.streams.iter_mut().enumerate() {
            if only.is_some_and(|o| o != i) {
                continue;
            }
            let out_of_range = |what: &'static str| TransformError::OutOfRange {
                factor,
                stream: s.name.clone(),
                what,
            };
            // A rate whose mean time between calls is still a float.
            let usable = |rate: f64| rate.is_finite() && (1.0 / rate).is_finite() && rate > 0.0;
            s.arrivals = match &s.arrivals {
                Arrivals::Poisson { rate } if usable(rate * factor) => Arrivals::Poisson {
                    rate: rate * factor,
                },
                Arrivals::Poisson { .. } => return Err(out_of_range("arrival rate")),
                Arrivals::Profile { interval_s, rates } => {
                    let rates: Vec<f64> = rates.iter().map(|r| r * factor).collect();
                    if !rates.iter().all(|r| r.is_finite()) || !rates.iter().any(|&r| usable(r)) {
                        return Err(out_of_range("profile's rates"));
                    }
                    Arrivals::Profile {
                        interval_s: *interval_s,
                        rates,
                    }
                }
                Arrivals::Renewal { between } => Arrivals::Renewal {
                    between: between
                        .scaled(1.0 / factor)
                        .map_err(|_| out_of_range("time between arrivals"))?,
                },
                Arrivals::Sources { count, idle } => Arrivals::Sources {
                    count: *count,
                    idle: idle
                        .scaled(1.0 / factor)
                        .map_err(|_| out_of_range("idle time"))?,
                },
            };
        }
        Ok(m)
    }

    /// The same model with group `group` resized to `servers` (its reserve
    /// cut to leave at least one server for other traffic). Fails for a
    /// group index the model lacks or a size outside 1 to
    /// [`MAX_GROUP_SERVERS`](super::MAX_GROUP_SERVERS).
    pub fn with_servers(&self, group: usize, servers: u32) -> Result<Model, TransformError> {
        let Some(g) = self.groups.get(group) else {
            return Err(TransformError::NoGroup {
                group,
                groups: self.groups.len(),
            });
        };
        if servers == 0 || i64::from(servers) > super::MAX_GROUP_SERVERS {
            return Err(TransformError::Servers {
                servers,
                group: g.name.clone(),
            });
        }
        if g.schedule.is_some() {
            return Err(TransformError::Scheduled {
                group: g.name.clone(),
            });
        }
        let mut m = self.clone();
        m.groups[group].servers = servers;
        m.groups[group].reserve = m.groups[group].reserve.min(servers.saturating_sub(1));
        Ok(m)
    }
}

impl Model {
    /// The model with group `group` taking calls with `present[i]` servers
    /// in reporting interval i (a per-interval staffing probe). A shrinkage
    /// the group has is kept: its scheduled numbers become the fewest that
    /// leave at least that many taking calls, and exactly `present` take
    /// calls.
    pub fn with_schedule(&self, group: usize, present: &[u32]) -> Result<Model, TransformError> {
        let Some(g) = self.groups.get(group) else {
            return Err(TransformError::NoGroup {
                group,
                groups: self.groups.len(),
            });
        };
        let most = present.iter().copied().max().unwrap_or(0);
        let interval_s = self.plan.interval_s.unwrap_or(self.plan.length_s);
        if most == 0 || i64::from(most) > super::MAX_GROUP_SERVERS {
            return Err(TransformError::Servers {
                servers: most,
                group: g.name.clone(),
            });
        }
        let old = g.schedule.as_ref();
        let share_at =
            |i: usize| old.map_or(0.0, |s| s.shrinkage[s.entry_at(i as f64 * interval_s)]);
        let shrinkage: Vec<f64> = (0..present.len()).map(share_at).collect();
        let scheduled = (present.iter().zip(&shrinkage))
            .map(|(&n, &s)| {
                let mut k = (f64::from(n) / (1.0 - s)).floor() as u32;
                while Schedule::present_of(k, s) < n {
                    k += 1;
                }
                k
            })
            .collect();
        let mut m = self.clone();
        let grp = &mut m.groups[group];
        grp.servers = most;
        grp.reserve = grp.reserve.min(most.saturating_sub(1));
        grp.schedule = Some(Schedule {
            interval_s,
            scheduled,
            shrinkage,
            present: present.to_vec(),
        });
        Ok(m)
    }
}

/// A change to a compiled model (a sweep step, a sizing probe) that would
/// leave the range a scenario may have.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum TransformError {
    /// The group follows a schedule (servers per interval or shrinkage):
    /// one number of servers cannot replace it.
    #[error(
        "group \"{group}\" follows a schedule (servers per interval or shrinkage): it cannot be given one number of servers; size or sweep a group with a constant number"
    )]
    Scheduled {
        /// The group's name.
        group: String,
    },
    /// The load scale is NaN, infinite, zero or negative; give a finite factor above zero.
    #[error("load scale {factor}: it must be a finite number above zero")]
    Scale {
        /// The rejected factor.
        factor: f64,
    },
    /// The scaled stream leaves floating-point range; choose a factor nearer 1.
    #[error(
        "load scale {factor:e} takes the {what} of stream \"{stream}\" out of range: choose a scale nearer 1"
    )]
    OutOfRange {
        /// The rejected factor.
        factor: f64,
        /// The stream.
        stream: String,
        /// What left the range, e.g. "time between arrivals".
        what: &'static str,
    },
    /// The model has no group of that index.
    #[error("group {group} does not exist: the model has {groups} groups")]
    NoGroup {
        /// The index asked for (0-based).
        group: usize,
        /// Groups in the model.
        groups: usize,
    },
    /// A group size outside the limits of a scenario file.
    #[error(
        "{servers} servers on group \"{group}\": expected a whole number from 1 to {max}",
        max = super::MAX_GROUP_SERVERS
    )]
    Servers {
        /// The rejected size.
        servers: u32,
        /// The group's name.
        group: String,
    },
}

/// The smallest w with `law.residual_tail(w) <= eps` (0 < eps < 1), by
/// bisection on the monotone tail: double from the mean until the tail is
/// at or below eps, then halve the bracket to 1e-9 relative (or until the
/// midpoint rounds to an end). Returns the upper end of the bracket, so the
/// tail there is at most eps.
pub fn residual_quantile(law: &Law, eps: f64) -> f64 {
    let below = |w: f64| law.residual_tail(w) <= eps;
    if below(0.0) {
        return 0.0;
    }
    let (mut lo, mut hi) = (0.0, law.mean());
    while !below(hi) {
        lo = hi;
        hi *= 2.0;
        if !hi.is_finite() {
            return f64::MAX;
        }
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi || hi - lo <= 1e-9 * hi {
            break;
        }
        if below(mid) {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    hi
}
