//! One replication of a [`Model`]: the event calendar, the state of every
//! group and the random streams. Single-threaded and deterministic: the same
//! model, seed and replication index give the same [`Tally`] bit for bit.
//! Must not know about files, reports or other replications.
//!
//! # Life of a call
//!
//! A call is created by its stream's arrival process (Poisson, peak profile,
//! renewal, or one of a finite set of sources) and draws its holding time once.
//! Each attempt tries the groups of the route in order. On a group with a free
//! server (beyond any reserved ones it may not use) and nobody waiting, it is
//! carried and leaves at the end of its holding time. A group with every server
//! busy but a free waiting place holds it in order of arrival; it is answered
//! when a server frees, abandons when its patience runs out, or moves on along
//! the route after `overflow_after`. A group that can neither serve nor hold it
//! is overflowed, and the next group is tried. Full on every group, the attempt
//! is blocked. A group's queue is a short ordered list of class queues
//! (`priority`, `prefer`), first come first served within a class; a
//! freed server takes the head of the first class with a waiting call. A
//! waiting call may also be seen by other groups (`seen_by`), each from a
//! delay after it started waiting: it keeps its place where it waits, is in
//! each of their queues too, and leaves them all when one group takes it
//! (rules in docs/semantics.md, "Queue classes and calls seen by several
//! groups"). On a group with `preemption`, an arriving call of higher
//! priority that finds every server busy interrupts calls of lower
//! priority (see `preempt`): an interrupted call waits at the head of its
//! class to be served again, for the rest of its holding time or the whole
//! of it, or is lost. A blocked or abandoned attempt may redial after a delay (the
//! stream's `retry`), up to `max_attempts`; otherwise the call is lost. A
//! finite source whose call has ended idles, then calls again.
//!
//! # Measurement
//!
//! Calls whose first attempt arrives in the measured period
//! `[warmup, warmup + length)` are followed to their end; after the period the
//! replication keeps running (arrivals included, unmeasured) until every such
//! call is resolved, or for at most one more `length`. Time integrals are
//! clipped to the period.
//!
//! # Start
//!
//! At a steady start (`[simulation] start = "steady"`, the default) every
//! stream with Poisson or peak-profile arrivals (at its first rate: the
//! warm-up runs at it) begins with its calls in progress: as an
//! infinite-server system holds them in equilibrium, their number is
//! Poisson with mean rate x mean holding time and each has an independent
//! residual holding time (`Law::sample_residual`; the M/G/inf steady state).
//! Each call gets a uniform key, and all streams' calls are seated in key
//! order, so that streams sharing groups share them fairly while each
//! stream's draws come from its own `seeds::INITIAL` generator alone. A call
//! takes the first group on its route with `need` free servers and departs
//! at its residual time (a normal `Departure`); a call that fits nowhere is
//! dropped: no queueing, no overflow counting, no redial. Seated calls are
//! never measured; they add to the time integrals like any other call.
//!
//! The keys of a stream are drawn as a Poisson process of rate
//! A = rate x mean holding on (0, 1) (partial sums of Exp(1) / A): given
//! their number, such points are independent uniforms in increasing order,
//! so this is the same law as a Poisson(A) count of uniform keys, and it
//! lets a stream stop after as many calls as its route can hold (calls
//! beyond that can never be seated: once a stream's call is dropped, its
//! route stays full for it, since nothing leaves during seating). A stream
//! of a million erlangs costs no more than its route's servers.
//!
//! Renewal arrivals and finite sources are not seated; they start empty.
//! For them the number of calls in progress in equilibrium is not the
//! Poisson law above (a renewal input's count depends on the whole
//! inter-arrival law, and finite sources hold an Engset-like state that
//! depends on the servers), and their arrival processes would have to start
//! in equilibrium too. The default warm-up (`Model::warmup_needed_s`) is
//! longer for them.

pub mod calendar;
mod flow;
mod preempt;
pub mod seeds;

use crate::dist::Law;
use crate::scenario::{Arrivals, Model, Preemption, Start};
use crate::stats::tally::{
    GroupIntervalTally, GroupTally, QueueTally, StageTally, StreamIntervalTally, StreamTally,
    Tally, WAIT_DIGITS, WAIT_MAX_MS,
};
use calendar::{Lanes, Next};
use hdrhistogram::Histogram;
use rand::RngExt;
use rand_xoshiro::Xoshiro256PlusPlus;
use std::collections::VecDeque;

/// Marks a call whose first attempt fell outside the measured period.
const NOT_MEASURED: u32 = u32::MAX;

/// A call between attempts or in service; small and `Copy`.
#[derive(Debug, Clone, Copy)]
struct Call {
    stream: u32,
    /// 1-based attempt number.
    attempt: u32,
    /// Interval of the first attempt (0 when intervals are off), or
    /// `NOT_MEASURED`.
    bin: u32,
    /// Waited in a queue on some attempt.
    waited: bool,
    /// Holding time, drawn once per call (s).
    holding: f64,
    /// Arrival time of the current attempt (s).
    attempt_at: f64,
    /// Interrupted by a call of higher priority (`preemption`) and waiting
    /// to be served again, or served again: answered and counted already.
    interrupted: bool,
}

impl Call {
    #[inline]
    fn measured(&self) -> bool {
        self.bin != NOT_MEASURED
    }
}

#[derive(Debug, Clone, Copy)]
enum Event {
    /// A finite source calls.
    SourceCall { stream: u32 },
    /// A redial of the call parked in `redials[slot]` (kept out of the event
    /// so that events stay small: a deliberate shortcut for heap speed).
    Redial { slot: u32 },
    /// A carried call ends.
    Departure { group: u32, stream: u32 },
    /// A call carried on a group with `preemption` ends: the call in
    /// `service[slot]` (skipped if it was interrupted meanwhile).
    TrackedEnd { slot: u32, generation: u32 },
    /// An overflowed call leaves the virtual overflow group of `group`.
    VirtualEnd { group: u32 },
    /// A waiting call's patience runs out (skipped if it is no longer waiting).
    Abandon { slot: u32, generation: u32 },
    /// A waiting call may move on along its route.
    OverflowTimer { slot: u32, generation: u32 },
    /// The delay of a waiting call's next `seen_by` group has run out.
    SeenBy { slot: u32, generation: u32 },
    /// The middle of the measured period: read off each group's busy
    /// integral so far (changes no state; not counted in `Tally::events`).
    HalfPeriod,
    /// Entry `step` of group `group`'s schedule begins: its servers change
    /// (not counted in `Tally::events`, so that a constant schedule gives
    /// the tally of a constant group).
    Capacity { group: u32, step: u32 },
    /// The current stage of the call flow in `flows[flow]` ends (see
    /// `flow`).
    StageEnd { flow: u32 },
    /// A redial of the call flow in `flows[flow]`, from its first stage.
    FlowRedial { flow: u32 },
    /// A new call of stream `stream`, a flow with stages (its open arrivals
    /// run here rather than in the arrival lane, see `flow`).
    FlowCall { stream: u32 },
}

/// A call waiting in a queue, kept in a slab so that abandonment and overflow
/// timers can find it; stale references are skipped lazily.
#[derive(Debug, Clone, Copy)]
struct Waiting {
    call: Call,
    group: u32,
    /// Position of `group` in the stream's route.
    position: u32,
    generation: u32,
    active: bool,
    /// Bit j set: the stream's `seen_by[j]` group holds the call in its
    /// queue now (0 for every stream without `seen_by`).
    seen: u32,
    /// The next `seen_by` entry whose delay has not run out.
    next_seen: u32,
}

/// One `seen_by` entry, precompiled.
#[derive(Debug, Clone, Copy)]
struct SeenStep {
    group: u32,
    /// As in `Step`.
    need: u32,
    /// Delay from the start of the wait (s).
    after_s: f64,
}

/// One route entry, precompiled.
#[derive(Debug, Clone, Copy)]
struct Step {
    group: u32,
    /// Free servers needed to seize: units, plus the reserve for streams that
    /// may not use reserved servers.
    need: u32,
}

struct GroupState {
    /// Servers taking calls now (see `Schedule`).
    servers: u32,
    /// Busy servers: at most `servers`, except after the schedule lowered
    /// `servers` while calls were in progress (they finish; no new call is
    /// carried until `busy` is below `servers`).
    busy: u32,
    queue_places: u32,
    waiting: u32,                // live entries in `queue` and `more_classes`
    queue: VecDeque<(u32, u32)>, // class 0: (slot, generation), may hold stale entries
    /// The queues of classes 1, 2, ... (answered after class 0, in order);
    /// empty for a group with one class, the case of every group without
    /// priorities or preferences, which then runs the code of one queue.
    more_classes: Vec<VecDeque<(u32, u32)>>,
    /// Per stream: the class of its waiting calls (empty with one class).
    class_of: Vec<u32>,
    /// Pre-emptive priority (`preemption`); `None` for every other group,
    /// whose calls in service are anonymous departures.
    preemption: Option<Preemption>,
    /// With `preemption`: the `service` slots of the calls in service here.
    in_service: Vec<u32>,
    /// How calls left the queue (a conservation check).
    counts: QueueTally,
    overflow_after_s: Option<f64>,
    last_change: f64,
    virtual_busy: u32,
    virtual_last_change: f64,
    // Time integrals and the peak, kept here beside the state they follow
    // (one cache line, no extra indexing) and copied into the tally at the
    // end of the replication: the same sums in the same order.
    busy_s: f64,
    busy_first_half_s: f64,
    full_s: f64,
    overflow_s: f64,
    overflow_sq_s: f64,
    peak_busy: u32,
}

impl GroupState {
    /// Whether `need` servers are free (waiting calls aside).
    #[inline(always)]
    fn has_free(&self, need: u32) -> bool {
        self.servers.saturating_sub(self.busy) >= need
    }

    /// The admission test: a call needing `need` free servers is carried
    /// here now when enough are free and nobody waits (waiting calls are
    /// answered in order of arrival, so a newcomer may not pass them).
    #[inline(always)]
    fn admits(&self, need: u32) -> bool {
        self.waiting == 0 && self.has_free(need)
    }

    /// Whether a waiting place is free.
    #[inline(always)]
    fn has_waiting_place(&self) -> bool {
        self.waiting < self.queue_places
    }
}

/// A stream's random generators and the settings read on every call
/// (copied from the model so that the hot path reads one small struct).
struct StreamState {
    arrivals: Xoshiro256PlusPlus,
    holding: Xoshiro256PlusPlus,
    retry: Xoshiro256PlusPlus,
    patience: Xoshiro256PlusPlus,
    units: u32,
    /// Finite sources: a source idles when its call ends.
    sources: bool,
    answer_within_s: Option<f64>,
    /// A call flow with stages: its calls take the `flow` path.
    staged: bool,
}

struct Sim<'m> {
    model: &'m Model,
    calendar: Lanes<Event>,
    streams: Vec<StreamState>,
    routes: Vec<Vec<Step>>,
    /// Per stream: its `seen_by` entries (empty for most streams).
    seen_steps: Vec<Vec<SeenStep>>,
    groups: Vec<GroupState>,
    slab: Vec<Waiting>,
    free_slots: Vec<u32>,
    /// Calls waiting to redial, referenced by `Event::Redial`.
    redials: Vec<Call>,
    free_redials: Vec<u32>,
    start: f64,
    /// Middle of the measured period: `start + length / 2`.
    half: f64,
    end: f64,
    interval_s: f64,
    bins: usize,
    pending: u64,
    /// Schedule changes handled (left out of `Tally::events`).
    capacity_events: u64,
    tally: Tally,
    /// Call flows in progress (see `flow`), reused through `free_flows`.
    flows: Vec<flow::Flow>,
    free_flows: Vec<u32>,
    /// The flow of each `slab` entry a flow's call waits in (read only for
    /// streams with stages).
    slab_flow: Vec<u32>,
    /// Per stream with stages, per position of its route: the end of the
    /// stage's span of positions (empty for other streams).
    stage_span_end: Vec<Vec<u32>>,
    /// Per stream with stages, per stage: its first position in the route.
    stage_start: Vec<Vec<u32>>,
    /// Per stream: its rank for pre-emption, its `priority` (none: last).
    rank: Vec<u32>,
    /// Calls in service on groups with `preemption` (see `preempt`),
    /// reused through `free_service`.
    service: Vec<preempt::InService>,
    free_service: Vec<u32>,
    /// Scratch list of a pre-emption's candidate victims.
    victims: Vec<u32>,
}

/// Simulate replication `replication` of `model` and return its counters.
///
/// A model with forecast uncertainty runs as the day's model
/// ([`day_model`]): the rates are scaled once here, before the replication
/// starts, so that the event loop is the same code either way.
pub fn run_replication(model: &Model, replication: u64) -> Tally {
    let day = day_model(model, replication);
    let mut sim = Sim::new(day.as_ref().unwrap_or(model), replication);
    sim.run();
    sim.tally
}

/// The day's factor of every stream of `model` in replication
/// `replication`: 1 for a stream whose rate is known, else one draw of its
/// [`Forecast`](crate::scenario::Forecast) law from the stream
/// `seeds::FORECAST` of its key (streams sharing a label share the key and
/// so the draw).
pub fn day_factors(model: &Model, replication: u64) -> Vec<f64> {
    (model.streams.iter())
        .map(|s| match &s.forecast {
            None => 1.0,
            Some(f) => {
                let mut rng =
                    seeds::generator(model.plan.seed, replication, f.key, seeds::FORECAST);
                f.law.sample(&mut rng)
            }
        })
        .collect()
}

/// The model of replication `replication`'s day: every uncertain stream's
/// rate, or its whole peak profile, times the day's factor
/// ([`day_factors`]); `None` when no stream is uncertain (the model runs as
/// it is). The warm-up and everything else stay as compiled; a steady start
/// seats the calls in progress at the day's rate.
pub fn day_model(model: &Model, replication: u64) -> Option<Model> {
    if !model.has_forecast_spread() {
        return None;
    }
    let factors = day_factors(model, replication);
    let mut day = model.clone();
    for (s, f) in day.streams.iter_mut().zip(factors) {
        if s.forecast.is_none() {
            continue;
        }
        match &mut s.arrivals {
            Arrivals::Poisson { rate } => *rate *= f,
            Arrivals::Profile { rates, .. } => rates.iter_mut().for_each(|r| *r *= f),
            Arrivals::Renewal { .. } | Arrivals::Sources { .. } => {
                unreachable!("the scenario refuses uncertainty on renewal and finite sources")
            }
        }
    }
    Some(day)
}

impl<'m> Sim<'m> {
    fn new(model: &'m Model, replication: u64) -> Self {
        let plan = &model.plan;
        let stream_states = model
            .streams
            .iter()
            .map(|s| StreamState {
                arrivals: seeds::generator(plan.seed, replication, s.seed_key, seeds::ARRIVALS),
                holding: seeds::generator(plan.seed, replication, s.seed_key, seeds::HOLDING),
                retry: seeds::generator(plan.seed, replication, s.seed_key, seeds::RETRY),
                patience: seeds::generator(plan.seed, replication, s.seed_key, seeds::PATIENCE),
                units: s.units,
                sources: matches!(s.arrivals, Arrivals::Sources { .. }),
                answer_within_s: s.answer_within_s,
                staged: s.has_stages(),
            })
            .collect();
        let routes = model
            .streams
            .iter()
            .enumerate()
            .map(|(si, s)| {
                s.route
                    .iter()
                    .map(|&g| {
                        let grp = &model.groups[g as usize];
                        let reserve = if grp.reserved_for[si] { 0 } else { grp.reserve };
                        Step {
                            group: g,
                            need: s.units.saturating_add(reserve),
                        }
                    })
                    .collect()
            })
            .collect();
        let seen_steps = model
            .streams
            .iter()
            .enumerate()
            .map(|(si, s)| {
                (s.seen_by.iter())
                    .map(|seen| {
                        let grp = &model.groups[seen.group as usize];
                        let reserve = if grp.reserved_for[si] { 0 } else { grp.reserve };
                        SeenStep {
                            group: seen.group,
                            need: s.units.saturating_add(reserve),
                            after_s: seen.after_s,
                        }
                    })
                    .collect()
            })
            .collect();
        let groups = model
            .groups
            .iter()
            .map(|g| GroupState {
                servers: g.schedule.as_ref().map_or(g.servers, |s| s.present[0]),
                busy: 0,
                queue_places: g.queue.places(),
                waiting: 0,
                queue: VecDeque::new(),
                more_classes: {
                    let classes = g.class_of.iter().max().map_or(0, |&c| c as usize);
                    vec![VecDeque::new(); classes]
                },
                class_of: if g.class_of.iter().any(|&c| c > 0) {
                    g.class_of.clone()
                } else {
                    Vec::new()
                },
                preemption: g.preemption,
                in_service: Vec::new(),
                counts: QueueTally::default(),
                overflow_after_s: g.overflow_after_s,
                last_change: 0.0,
                virtual_busy: 0,
                virtual_last_change: 0.0,
                busy_s: 0.0,
                busy_first_half_s: 0.0,
                full_s: 0.0,
                overflow_s: 0.0,
                overflow_sq_s: 0.0,
                peak_busy: 0,
            })
            .collect();
        let bins = plan.interval_count();
        let streams = model
            .streams
            .iter()
            .map(|s| StreamTally {
                waits: s
                    .route
                    .iter()
                    .any(|&g| model.groups[g as usize].queue.places() > 0)
                    .then(|| {
                        Histogram::new_with_bounds(1, WAIT_MAX_MS, WAIT_DIGITS)
                            .expect("fixed, valid histogram bounds")
                    }),
                ..StreamTally::default()
            })
            .collect();
        let n_streams = model.streams.len();
        let n_groups = model.groups.len();
        let tally = Tally {
            replication,
            streams,
            groups: vec![GroupTally::default(); n_groups],
            stream_intervals: vec![vec![StreamIntervalTally::default(); n_streams]; bins],
            group_intervals: vec![vec![GroupIntervalTally::default(); n_groups]; bins],
            events: 0,
            peak_busy: vec![0; n_groups],
            stages: (model.streams.iter())
                .map(|s| vec![StageTally::default(); s.stages.len()])
                .collect(),
        };
        let (stage_start, stage_span_end) = flow::spans(model);
        Sim {
            model,
            calendar: Lanes::new(),
            streams: stream_states,
            routes,
            seen_steps,
            groups,
            slab: Vec::new(),
            free_slots: Vec::new(),
            redials: Vec::new(),
            free_redials: Vec::new(),
            start: plan.warmup_s,
            half: plan.warmup_s + 0.5 * plan.length_s,
            end: plan.warmup_s + plan.length_s,
            interval_s: plan.interval_s.unwrap_or(plan.length_s),
            bins,
            pending: 0,
            capacity_events: 0,
            tally,
            flows: Vec::new(),
            free_flows: Vec::new(),
            slab_flow: Vec::new(),
            stage_span_end,
            stage_start,
            rank: (model.streams.iter())
                .map(|s| s.priority.unwrap_or(u32::MAX))
                .collect(),
            service: Vec::new(),
            free_service: Vec::new(),
            victims: Vec::new(),
        }
    }

    fn run(&mut self) {
        // One event per replication instead of a test in every integral
        // piece (a deliberate shortcut: `touch` is on the hot path).
        self.calendar.schedule(self.half, Event::HalfPeriod);
        for g in 0..self.groups.len() {
            self.schedule_capacity(g, 0);
        }
        if self.model.plan.start == Start::Steady {
            self.seat_calls_in_progress();
        }
        for si in 0..self.model.streams.len() {
            let stream = &self.model.streams[si];
            match &stream.arrivals {
                Arrivals::Sources { count, idle } => {
                    let call = self.source_call(si);
                    for _ in 0..*count {
                        let t = idle.sample(&mut self.streams[si].arrivals);
                        self.calendar.schedule(t, call);
                    }
                }
                _ => {
                    if let Some(t) = self.next_arrival(si, 0.0) {
                        if self.streams[si].staged {
                            let stream = si as u32;
                            self.calendar.schedule(t, Event::FlowCall { stream });
                        } else {
                            self.calendar.schedule_arrival(t, si as u32);
                        }
                    }
                }
            }
        }
        let drain_until = self.end + self.model.plan.length_s;
        let mut events = 0u64;
        while let Some((t, lane)) = self.calendar.peek() {
            if t >= self.end && (self.pending == 0 || t >= drain_until) {
                break;
            }
            let Some((now, next)) = self.calendar.take(lane) else {
                break;
            };
            events += 1;
            match next {
                Next::Arrival(stream) => {
                    let si = stream as usize;
                    if let Some(t) = self.next_arrival(si, now) {
                        self.calendar.schedule_arrival(t, stream);
                    }
                    self.new_call(si, now);
                }
                Next::Event(event) => self.handle(now, event),
            }
        }
        // The half-period event always runs: the loop goes on to `end`.
        self.tally.events = events - 1 - self.capacity_events;
        for g in 0..self.groups.len() {
            self.touch(g, self.end);
            self.touch_virtual(g, self.end);
            let grp = &self.groups[g];
            let gt = &mut self.tally.groups[g];
            gt.busy_s = grp.busy_s;
            gt.busy_first_half_s = grp.busy_first_half_s;
            gt.full_s = grp.full_s;
            gt.overflow_s = grp.overflow_s;
            gt.overflow_sq_s = grp.overflow_sq_s;
            gt.queue = grp.counts;
            gt.queue.waiting_end = u64::from(grp.waiting);
            self.tally.peak_busy[g] = grp.peak_busy;
        }
        // Measured calls still waiting or between redials count as pending
        // (a flow's call once, below, whatever it is doing).
        for w in &self.slab {
            if !w.active {
                continue;
            }
            // An interrupted call waiting to be served again was answered:
            // it is resolved.
            if w.call.measured()
                && !w.call.interrupted
                && !self.streams[w.call.stream as usize].staged
            {
                self.tally.streams[w.call.stream as usize].pending_end += 1;
            }
            self.tally.groups[w.group as usize].queue.pending_end += 1;
            let steps = &self.seen_steps[w.call.stream as usize];
            for (j, step) in steps.iter().enumerate() {
                if w.seen & (1 << j) != 0 {
                    self.tally.groups[step.group as usize].queue.pending_end += 1;
                }
            }
        }
        let mut redialling = vec![0u64; self.model.streams.len()];
        while let Some(e) = self.calendar.pop_main() {
            if let Event::Redial { slot } = e {
                let call = self.redials[slot as usize];
                if call.measured() {
                    redialling[call.stream as usize] += 1;
                }
            }
        }
        for (s, n) in redialling.into_iter().enumerate() {
            self.tally.streams[s].pending_end += n;
        }
        if !self.flows.is_empty() {
            self.flows_at_end();
        }
    }

    /// A steady start: seat the calls in progress at time 0 (see the
    /// module's "Start"). Runs once per replication, before the event loop;
    /// kept out of line so that it does not crowd the loop's code.
    #[inline(never)]
    fn seat_calls_in_progress(&mut self) {
        let model = self.model;
        let (seed, replication) = (model.plan.seed, self.tally.replication);
        // (key, stream, residual holding time)
        let mut initial: Vec<(f64, u32, f64)> = Vec::new();
        for (si, s) in model.streams.iter().enumerate() {
            let Some(rate) = s.arrivals.initial_rate() else {
                continue;
            };
            if s.has_stages() {
                continue; // a call flow starts empty (`Model::is_seated`)
            }
            let traffic = rate * s.holding.mean();
            if !(traffic > 0.0 && traffic.is_finite()) {
                continue;
            }
            let route_servers: u64 = s
                .route
                .iter()
                .map(|&g| u64::from(model.groups[g as usize].servers))
                .sum();
            let most = route_servers / u64::from(s.units);
            let mut rng = seeds::generator(seed, replication, s.seed_key, seeds::INITIAL);
            let mut key = 0.0;
            for _ in 0..most {
                let e: f64 = rand_distr::Distribution::sample(&rand_distr::Exp1, &mut rng);
                key += e / traffic;
                if key >= 1.0 {
                    break;
                }
                let residual = s.holding.sample_residual(&mut rng);
                initial.push((key, si as u32, residual));
            }
        }
        // Equal keys (all but impossible) go in stream order.
        initial.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        for (_, stream, residual) in initial {
            let si = stream as usize;
            let call = Call {
                stream,
                attempt: 1,
                bin: NOT_MEASURED,
                waited: false,
                holding: residual,
                attempt_at: 0.0,
                interrupted: false,
            };
            for pos in 0..self.routes[si].len() {
                let step = self.routes[si][pos];
                // Nobody waits yet: this is the admission test.
                if self.groups[step.group as usize].admits(step.need) {
                    self.seize(step.group as usize, call, 0.0);
                    break;
                }
            }
        }
    }

    #[inline]
    fn handle(&mut self, now: f64, event: Event) {
        match event {
            Event::SourceCall { stream } => self.new_call(stream as usize, now),
            Event::Redial { slot } => {
                let mut call = self.redials[slot as usize];
                self.free_redials.push(slot);
                call.attempt_at = now;
                self.attempt(call, now, 0);
            }
            Event::Departure { group, stream } => {
                self.departs(group as usize, stream as usize, now);
            }
            Event::TrackedEnd { slot, generation } => self.tracked_end(slot, generation, now),
            Event::HalfPeriod => {
                for grp in &mut self.groups {
                    let t0 = if grp.last_change > self.start {
                        grp.last_change
                    } else {
                        self.start
                    };
                    grp.busy_first_half_s = grp.busy_s + f64::from(grp.busy) * (now - t0);
                }
            }
            Event::VirtualEnd { group } => {
                let g = group as usize;
                self.touch_virtual(g, now);
                self.groups[g].virtual_busy -= 1;
            }
            Event::Abandon { slot, generation } => {
                let w = self.slab[slot as usize];
                if !w.active || w.generation != generation {
                    return; // answered or moved on meanwhile: lazily cancelled
                }
                self.release_slot(slot);
                let home = &mut self.groups[w.group as usize];
                home.waiting -= 1;
                home.counts.abandoned += 1;
                if w.seen != 0 {
                    self.leave_seen(&w, usize::MAX, true);
                }
                if self.streams[w.call.stream as usize].staged {
                    self.flow_abandons(self.slab_flow[slot as usize], now);
                    return;
                }
                self.attempt_failed(w.call, now, true);
            }
            Event::OverflowTimer { slot, generation } => {
                let w = self.slab[slot as usize];
                if !w.active || w.generation != generation {
                    return;
                }
                self.move_on(slot, w, now);
            }
            Event::SeenBy { slot, generation } => {
                let w = self.slab[slot as usize];
                if !w.active || w.generation != generation {
                    return; // answered, abandoned or redialled meanwhile
                }
                self.see_due(slot, now);
            }
            Event::Capacity { group, step } => self.capacity_changes(group as usize, step, now),
            Event::StageEnd { flow } => self.stage_ends(flow, now),
            Event::FlowRedial { flow } => self.flow_redials(flow, now),
            Event::FlowCall { stream } => self.flow_call(stream as usize, now),
        }
    }

    /// A call of stream `si` carried on group `g` ends: its servers free,
    /// waiting calls are answered, a finite source idles.
    #[inline(always)]
    fn departs(&mut self, g: usize, si: usize, now: f64) {
        self.touch(g, now);
        let units = self.streams[si].units;
        let grp = &mut self.groups[g];
        debug_assert!(grp.busy >= units);
        grp.busy -= units;
        if grp.waiting > 0 {
            self.serve_queue(g, now);
        }
        if self.streams[si].sources {
            self.source_idles(si, now);
        }
    }

    /// After entry `after` of group `g`'s schedule, the next entry whose
    /// servers differ is put on the calendar (none for a constant group).
    fn schedule_capacity(&mut self, g: usize, after: u32) {
        let Some(s) = &self.model.groups[g].schedule else {
            return;
        };
        let now = s.present[after as usize];
        if let Some(j) = (after as usize + 1..s.present.len()).find(|&j| s.present[j] != now) {
            let t = self.start + j as f64 * s.interval_s;
            self.calendar.schedule(
                t,
                Event::Capacity {
                    group: g as u32,
                    step: j as u32,
                },
            );
        }
    }

    /// Group `g`'s servers become those of schedule entry `step`. Calls in
    /// progress are never cut short: a fall only stops new calls being
    /// carried; a rise answers waiting calls at once.
    #[inline(never)]
    fn capacity_changes(&mut self, g: usize, step: u32, now: f64) {
        self.capacity_events += 1;
        let Some(s) = &self.model.groups[g].schedule else {
            return;
        };
        let servers = s.present[step as usize];
        self.touch(g, now);
        self.groups[g].servers = servers;
        if self.groups[g].waiting > 0 {
            self.serve_queue(g, now);
        }
        self.schedule_capacity(g, step);
    }

    /// Time of the next arrival of open stream `si` after `now`.
    #[inline(always)]
    fn next_arrival(&mut self, si: usize, now: f64) -> Option<f64> {
        let rng = &mut self.streams[si].arrivals;
        match &self.model.streams[si].arrivals {
            Arrivals::Poisson { rate } => {
                let e: f64 = rand_distr::Distribution::sample(&rand_distr::Exp1, rng);
                Some(now + e / rate)
            }
            _ => self.next_arrival_other(si, now),
        }
    }

    /// `next_arrival` for arrivals other than Poisson at a constant rate.
    #[inline(never)]
    fn next_arrival_other(&mut self, si: usize, now: f64) -> Option<f64> {
        let rng = &mut self.streams[si].arrivals;
        match &self.model.streams[si].arrivals {
            Arrivals::Poisson { .. } => unreachable!("handled by next_arrival"),
            Arrivals::Renewal { between } => Some(now + between.sample(rng)),
            Arrivals::Profile { interval_s, rates } => {
                // Inversion of the integrated piecewise-constant rate: walk
                // the intervals spending an Exp(1) amount of integrated rate.
                let mut e: f64 = rand_distr::Distribution::sample(&rand_distr::Exp1, rng);
                let mut t = now;
                loop {
                    let (rate, seg_end) = profile_segment(self.start, *interval_s, rates, t);
                    let room = rate * (seg_end - t);
                    if room > e {
                        return Some(t + e / rate);
                    }
                    if seg_end.is_infinite() {
                        return None; // rate zero for ever after
                    }
                    e -= room;
                    t = seg_end;
                }
            }
            Arrivals::Sources { .. } => None,
        }
    }

    #[inline(always)]
    fn new_call(&mut self, si: usize, now: f64) {
        let holding = sample(
            &self.model.streams[si].holding,
            &mut self.streams[si].holding,
        );
        let bin = if now >= self.start && now < self.end {
            if self.bins > 0 {
                (((now - self.start) / self.interval_s) as usize).min(self.bins - 1) as u32
            } else {
                0
            }
        } else {
            NOT_MEASURED
        };
        let call = Call {
            stream: si as u32,
            attempt: 1,
            bin,
            waited: false,
            holding,
            attempt_at: now,
            interrupted: false,
        };
        if call.measured() {
            self.pending += 1;
            let st = &mut self.tally.streams[si];
            st.offered += 1;
            st.offered_holding_s += holding;
            if self.bins > 0 {
                let it = &mut self.tally.stream_intervals[bin as usize][si];
                it.offered += 1;
                it.offered_holding_s += holding;
            }
        }
        self.attempt(call, now, 0);
    }

    /// Try the route from position `from` on.
    #[inline]
    fn attempt(&mut self, call: Call, now: f64, from: usize) {
        let si = call.stream as usize;
        if call.measured() && from == 0 {
            self.tally.streams[si].attempts += 1;
        }
        let steps = self.routes[si].len();
        for pos in from..steps {
            let step = self.routes[si][pos];
            let g = step.group as usize;
            let grp = &self.groups[g];
            if grp.admits(step.need) {
                self.seize(g, call, now);
                return;
            }
            if grp.preemption.is_some() && self.preempts(g, si, step.need, now) {
                self.seize(g, call, now);
                return;
            }
            let grp = &self.groups[g];
            if grp.has_waiting_place() {
                if !self.seen_steps[si].is_empty() && self.seen_at_once(call, now) {
                    return;
                }
                self.enqueue(g, pos as u32, call, now);
                return;
            }
            self.overflow(g, call.holding, now);
        }
        self.attempt_failed(call, now, false);
    }

    #[inline(always)]
    fn seize(&mut self, g: usize, call: Call, now: f64) {
        self.seize_call::<false>(g, call, now);
    }

    /// Group `g` carries `call` from `now` to the end of its holding time.
    /// `AGAIN`: an interrupted call served again (`preempt`), whose answer
    /// was counted when it was first answered.
    #[inline(always)]
    fn seize_call<const AGAIN: bool>(&mut self, g: usize, call: Call, now: f64) {
        let si = call.stream as usize;
        let (units, answer_within) = {
            let s = &self.streams[si];
            (s.units, s.answer_within_s)
        };
        self.touch(g, now);
        let grp = &mut self.groups[g];
        grp.busy += units;
        debug_assert!(grp.busy <= grp.servers, "busy servers above the group size");
        if grp.busy > grp.peak_busy {
            grp.peak_busy = grp.busy;
        }
        let tracked = grp.preemption.is_some();
        let ends = now + call.holding;
        let event = if tracked {
            self.track(g, call, now, ends, AGAIN)
        } else {
            Event::Departure {
                group: g as u32,
                stream: call.stream,
            }
        };
        self.calendar.schedule(ends, event);
        self.count_carried::<false>(si, now, ends);
        if AGAIN || !call.measured() {
            return;
        }
        self.count_answered(call, now - call.attempt_at, answer_within);
    }

    /// Carried call-seconds of stream `si` from `from` to `to` inside the
    /// measured period, added (`TAKE_OFF`: taken off, the part an
    /// interrupted call no longer carries), for every call, measured or not: a time integral,
    /// not a per-call count. (`max` and `min` written as comparisons: the
    /// same values for times, which are never NaN or -0, in fewer
    /// instructions.)
    #[inline(always)]
    fn count_carried<const TAKE_OFF: bool>(&mut self, si: usize, from: f64, to: f64) {
        let t0 = if from > self.start { from } else { self.start };
        let t1 = if to < self.end { to } else { self.end };
        let tally = &mut self.tally;
        let st = &mut tally.streams[si];
        if t1 > t0 {
            let signed = |dt: f64| if TAKE_OFF { -dt } else { dt };
            st.carried_s += signed(t1 - t0);
            if self.bins > 0 {
                let (start, width, bins) = (self.start, self.interval_s, self.bins);
                let iv = &mut tally.stream_intervals;
                spread(start, width, bins, t0, t1, |b, dt| {
                    iv[b][si].carried_s += signed(dt)
                });
            }
        }
    }

    /// A measured call answered after waiting `wait` (s) in all: counted
    /// and resolved in its stream and in the interval of its first attempt.
    #[inline(always)]
    fn count_answered(&mut self, call: Call, wait: f64, answer_within: Option<f64>) {
        let si = call.stream as usize;
        let tally = &mut self.tally;
        let within = answer_within.is_some_and(|aw| wait <= aw);
        let st = &mut tally.streams[si];
        st.answered += 1;
        st.wait_sum_s += wait;
        if within {
            st.answered_within += 1;
        }
        if let Some(h) = st.waits.as_mut() {
            let ms = ((wait * 1000.0).round() as u64).min(WAIT_MAX_MS);
            h.saturating_record(ms);
        }
        let waited = call.waited || wait > 0.0;
        let interval = (self.bins > 0).then(|| &mut tally.stream_intervals[call.bin as usize][si]);
        resolved(&mut self.pending, st, interval, waited, |it| {
            it.answered += 1;
            it.wait_sum_s += wait;
            if within {
                it.answered_within += 1;
            }
        });
    }

    /// A call finally blocked or abandoned: a measured call is resolved and
    /// lost; an unmeasured one is left alone.
    fn resolve_lost(&mut self, call: Call) {
        if !call.measured() {
            return;
        }
        let si = call.stream as usize;
        let tally = &mut self.tally;
        let interval = (self.bins > 0).then(|| &mut tally.stream_intervals[call.bin as usize][si]);
        resolved(
            &mut self.pending,
            &mut tally.streams[si],
            interval,
            call.waited,
            |it| it.lost += 1,
        );
    }

    /// A waiting-slab entry for `call`, about to wait in group `g` at
    /// `position` of its route: a free slot or a new one, active, with a
    /// new generation and seen by no other group yet. Returns the slot and
    /// its generation. (The one home of the entry's set-up: plain calls and
    /// a flow's calls at a stage alike.)
    #[inline(always)]
    fn take_slot(&mut self, call: Call, g: usize, position: u32) -> (u32, u32) {
        let slot = match self.free_slots.pop() {
            Some(s) => s,
            None => {
                self.slab.push(Waiting {
                    call,
                    group: 0,
                    position: 0,
                    generation: 0,
                    active: false,
                    seen: 0,
                    next_seen: 0,
                });
                (self.slab.len() - 1) as u32
            }
        };
        let w = &mut self.slab[slot as usize];
        w.call = call;
        w.group = g as u32;
        w.position = position;
        w.generation = w.generation.wrapping_add(1);
        w.active = true;
        w.seen = 0;
        w.next_seen = 0;
        (slot, w.generation)
    }

    fn enqueue(&mut self, g: usize, position: u32, mut call: Call, now: f64) {
        call.waited = true;
        let (slot, generation) = self.take_slot(call, g, position);
        self.join_queue(g, slot, generation, call.stream, now);
        let si = call.stream as usize;
        if let Some(p) = &self.model.streams[si].patience {
            let patience = p.sample(&mut self.streams[si].patience);
            self.calendar
                .schedule(now + patience, Event::Abandon { slot, generation });
        }
        if !self.seen_steps[si].is_empty() {
            self.see_due(slot, now);
        }
    }

    /// A call about to wait, whose stream has `seen_by` groups: the first
    /// of those that see it at once (delay 0), in the file's order, that
    /// can carry it now does; `false` when none can.
    #[inline(never)]
    fn seen_at_once(&mut self, call: Call, now: f64) -> bool {
        let si = call.stream as usize;
        for j in 0..self.seen_steps[si].len() {
            let step = self.seen_steps[si][j];
            if step.after_s > 0.0 {
                break; // in order of delay
            }
            if self.groups[step.group as usize].admits(step.need) {
                self.seize(step.group as usize, call, now);
                return true;
            }
        }
        false
    }

    /// The `seen_by` entries of the waiting call in `slot` whose delays
    /// have run out by `now`, in order: a group that can carry the call
    /// takes it at once (it leaves every queue); one with a free waiting
    /// place holds it in its queue too; a full one never sees it (on this
    /// attempt). Then the timer of the next entry, if any.
    #[inline(never)]
    fn see_due(&mut self, slot: u32, now: f64) {
        let w = self.slab[slot as usize];
        let si = w.call.stream as usize;
        // The wait started with the attempt: a call queues on arrival.
        let start = w.call.attempt_at;
        let mut j = w.next_seen as usize;
        while j < self.seen_steps[si].len() && start + self.seen_steps[si][j].after_s <= now {
            let step = self.seen_steps[si][j];
            let h = step.group as usize;
            if self.groups[h].admits(step.need) {
                let w = self.slab[slot as usize];
                let home = &mut self.groups[w.group as usize];
                home.waiting -= 1;
                home.counts.taken_elsewhere += 1;
                if w.seen != 0 {
                    self.leave_seen(&w, usize::MAX, false);
                }
                self.release_slot(slot);
                self.seize(h, w.call, now);
                return;
            }
            if self.groups[h].has_waiting_place() {
                self.slab[slot as usize].seen |= 1 << j;
                self.push_class(h, slot, w.generation, w.call.stream);
            }
            j += 1;
        }
        self.slab[slot as usize].next_seen = j as u32;
        if let Some(next) = self.seen_steps[si].get(j) {
            let generation = w.generation;
            self.calendar
                .schedule(start + next.after_s, Event::SeenBy { slot, generation });
        }
    }

    /// The waiting call `w` leaves the queues of the `seen_by` groups that
    /// hold it, except group `except`: taken by another group, or
    /// `abandoned`.
    fn leave_seen(&mut self, w: &Waiting, except: usize, abandoned: bool) {
        let steps = &self.seen_steps[w.call.stream as usize];
        for (j, step) in steps.iter().enumerate() {
            let h = step.group as usize;
            if w.seen & (1 << j) == 0 || h == except {
                continue;
            }
            let grp = &mut self.groups[h];
            grp.waiting -= 1;
            if abandoned {
                grp.counts.abandoned += 1;
            } else {
                grp.counts.taken_elsewhere += 1;
            }
        }
    }

    /// Whether the queue entry of `w` with `generation` in group `g` is
    /// live: the call still waits, in `g`'s queue as its own (where it
    /// queued) or seen there.
    #[inline(always)]
    fn holds(&self, w: &Waiting, generation: u32, g: usize) -> bool {
        w.active
            && w.generation == generation
            && (w.group as usize == g || (w.seen != 0 && self.seen_index(w, g).is_some()))
    }

    /// The `seen_by` entry of group `g` that holds `w` now, if any.
    fn seen_index(&self, w: &Waiting, g: usize) -> Option<usize> {
        (self.seen_steps[w.call.stream as usize].iter().enumerate())
            .position(|(j, s)| s.group as usize == g && w.seen & (1 << j) != 0)
    }

    /// Servers the waiting call `w` needs free on group `g`, which holds it.
    #[inline(always)]
    fn need_on(&self, w: &Waiting, g: usize) -> u32 {
        let si = w.call.stream as usize;
        if w.group as usize == g {
            return self.routes[si][w.position as usize].need;
        }
        match self.seen_index(w, g) {
            Some(j) => self.seen_steps[si][j].need,
            None => unreachable!("a live entry is held by its group"),
        }
    }

    /// Put the entry at the back of its class's queue in group `g` (one
    /// more call waiting there).
    #[inline(always)]
    fn push_class(&mut self, g: usize, slot: u32, generation: u32, stream: u32) {
        let grp = &mut self.groups[g];
        grp.waiting += 1;
        grp.counts.joined += 1;
        if grp.more_classes.is_empty() {
            grp.queue.push_back((slot, generation));
            return;
        }
        match grp.class_of[stream as usize] {
            0 => grp.queue.push_back((slot, generation)),
            c => grp.more_classes[c as usize - 1].push_back((slot, generation)),
        }
    }

    /// Group `g` answers the waiting call `w` (in `slot`), just taken off
    /// the front of one of its class queues: it leaves every other queue.
    #[inline(always)]
    fn answer_waiting(&mut self, g: usize, slot: u32, w: Waiting, now: f64) {
        let grp = &mut self.groups[g];
        grp.waiting -= 1;
        grp.counts.answered += 1;
        if w.seen != 0 {
            self.leave_other_queues(&w, g);
        }
        self.release_slot(slot);
        if self.streams[w.call.stream as usize].staged {
            self.flow_seizes(self.slab_flow[slot as usize], g, now);
            return;
        }
        if w.call.interrupted {
            self.seize_call::<true>(g, w.call, now);
            return;
        }
        self.seize(g, w.call, now);
    }

    /// `w`, answered by group `g`, leaves the queue where it waits (when
    /// that is not `g`'s) and those of the other groups that see it.
    #[inline(never)]
    fn leave_other_queues(&mut self, w: &Waiting, g: usize) {
        if w.group as usize != g {
            let home = &mut self.groups[w.group as usize];
            home.waiting -= 1;
            home.counts.taken_elsewhere += 1;
        }
        self.leave_seen(w, g, false);
    }

    /// The waiting call in `slot` (of `generation`) takes the last place in
    /// group `g`'s queue, and its `overflow_after` timer starts: a call
    /// queued on arrival and one moved on from an earlier group alike.
    #[inline(always)]
    fn join_queue(&mut self, g: usize, slot: u32, generation: u32, stream: u32, now: f64) {
        self.push_class(g, slot, generation, stream);
        if let Some(after) = self.groups[g].overflow_after_s {
            self.calendar
                .schedule(now + after, Event::OverflowTimer { slot, generation });
        }
    }

    fn release_slot(&mut self, slot: u32) {
        self.slab[slot as usize].active = false;
        self.free_slots.push(slot);
    }

    /// Answer waiting calls in order of arrival while the head can seize.
    fn serve_queue(&mut self, g: usize, now: f64) {
        if !self.groups[g].more_classes.is_empty() {
            self.serve_classes(g, now);
            return;
        }
        while self.groups[g].waiting > 0 {
            let Some(&(slot, generation)) = self.groups[g].queue.front() else {
                break;
            };
            let w = self.slab[slot as usize];
            if !self.holds(&w, generation, g) {
                // stale: answered elsewhere, abandoned or moved on
                self.groups[g].queue.pop_front();
                continue;
            }
            let need = self.need_on(&w, g);
            if !self.groups[g].has_free(need) {
                break; // strict order: the head holds the queue
            }
            self.groups[g].queue.pop_front();
            self.answer_waiting(g, slot, w, now);
        }
    }

    /// `serve_queue` for a group with several classes: while calls wait,
    /// the head of the first class that holds a live call is answered if
    /// it can seize; if it cannot, it holds the queue (strict order, as
    /// with one class).
    #[inline(never)]
    fn serve_classes(&mut self, g: usize, now: f64) {
        while self.groups[g].waiting > 0 {
            let mut head = None;
            for c in 0..=self.groups[g].more_classes.len() {
                loop {
                    let grp = &self.groups[g];
                    let q = if c == 0 {
                        &grp.queue
                    } else {
                        &grp.more_classes[c - 1]
                    };
                    let Some(&(slot, generation)) = q.front() else {
                        break;
                    };
                    let w = self.slab[slot as usize];
                    if self.holds(&w, generation, g) {
                        head = Some((c, slot, w));
                        break;
                    }
                    let grp = &mut self.groups[g];
                    if c == 0 {
                        grp.queue.pop_front();
                    } else {
                        grp.more_classes[c - 1].pop_front();
                    }
                }
                if head.is_some() {
                    break;
                }
            }
            let Some((c, slot, w)) = head else {
                break;
            };
            let need = self.need_on(&w, g);
            if !self.groups[g].has_free(need) {
                break;
            }
            let grp = &mut self.groups[g];
            if c == 0 {
                grp.queue.pop_front();
            } else {
                grp.more_classes[c - 1].pop_front();
            }
            self.answer_waiting(g, slot, w, now);
        }
    }

    /// `overflow_after` expired: try the rest of the route; where nothing
    /// later can serve or hold the call, it keeps its place.
    fn move_on(&mut self, slot: u32, w: Waiting, now: f64) {
        let si = w.call.stream as usize;
        // A flow's call moves on within its stage's groups only.
        let end = if self.streams[si].staged {
            self.stage_span_end[si][w.position as usize] as usize
        } else {
            self.routes[si].len()
        };
        for pos in (w.position as usize + 1)..end {
            let step = self.routes[si][pos];
            let g = step.group as usize;
            let grp = &self.groups[g];
            let can_seize = grp.admits(step.need);
            let can_wait = grp.has_waiting_place();
            if !can_seize && !can_wait {
                continue;
            }
            self.count_overflow(w.group as usize, now);
            let home = &mut self.groups[w.group as usize];
            home.waiting -= 1;
            home.counts.moved_on += 1;
            if can_seize {
                if w.seen != 0 {
                    self.leave_seen(&w, usize::MAX, false);
                }
                self.release_slot(slot);
                if self.streams[si].staged {
                    self.flow_seizes(self.slab_flow[slot as usize], g, now);
                    return;
                }
                self.seize(g, w.call, now);
            } else {
                // Same slot and generation: the pending abandon event stays
                // valid, so the caller's patience keeps running. The entry
                // left in the old queue is stale (its group no longer matches).
                let entry = &mut self.slab[slot as usize];
                entry.group = g as u32;
                entry.position = pos as u32;
                let generation = entry.generation;
                self.join_queue(g, slot, generation, w.call.stream, now);
            }
            return;
        }
    }

    fn count_overflow(&mut self, g: usize, now: f64) {
        if now >= self.start && now < self.end {
            self.tally.groups[g].overflow_calls += 1;
        }
    }

    /// The call found group `g` full (and could not wait there).
    #[inline]
    fn overflow(&mut self, g: usize, holding: f64, now: f64) {
        self.count_overflow(g, now);
        self.touch_virtual(g, now);
        self.groups[g].virtual_busy += 1;
        self.calendar
            .schedule(now + holding, Event::VirtualEnd { group: g as u32 });
    }

    fn attempt_failed(&mut self, mut call: Call, now: f64, abandoned: bool) {
        let si = call.stream as usize;
        self.count_failed_attempt(&call, abandoned);
        if let Some(delay) = self.redial_delay(si, call.attempt) {
            call.attempt += 1;
            let slot = match self.free_redials.pop() {
                Some(slot) => {
                    self.redials[slot as usize] = call;
                    slot
                }
                None => {
                    self.redials.push(call);
                    (self.redials.len() - 1) as u32
                }
            };
            self.calendar.schedule(now + delay, Event::Redial { slot });
            return;
        }
        self.lost_for_good(call, now, abandoned);
    }

    /// A measured attempt that was blocked or abandoned, counted.
    #[inline(always)]
    fn count_failed_attempt(&mut self, call: &Call, abandoned: bool) {
        if call.measured() {
            let st = &mut self.tally.streams[call.stream as usize];
            if abandoned {
                st.attempts_abandoned += 1;
            } else {
                st.attempts_blocked += 1;
                if call.attempt == 1 {
                    st.first_blocked += 1;
                }
            }
        }
    }

    /// A call that failed and does not redial: counted as finally blocked
    /// or abandoned and resolved as lost; its finite source idles.
    #[inline(always)]
    fn lost_for_good(&mut self, call: Call, now: f64, abandoned: bool) {
        let si = call.stream as usize;
        if call.measured() {
            let st = &mut self.tally.streams[si];
            if abandoned {
                st.abandoned_final += 1;
                if self.bins > 0 {
                    self.tally.stream_intervals[call.bin as usize][si].abandoned += 1;
                }
            } else {
                st.blocked_final += 1;
            }
        }
        self.resolve_lost(call);
        if self.streams[si].sources {
            self.source_idles(si, now);
        }
    }

    /// Whether a caller of stream `si` whose attempt `attempt` failed
    /// redials (the stream's `retry`: one uniform draw against the chance,
    /// then the delay, both from the stream's retry generator), and after
    /// what delay.
    #[inline(always)]
    fn redial_delay(&mut self, si: usize, attempt: u32) -> Option<f64> {
        let retry = self.model.streams[si].retry.as_ref()?;
        let chance = retry.chance_after(attempt);
        let rng = &mut self.streams[si].retry;
        let u: f64 = rng.random();
        (attempt < retry.max_attempts && u < chance).then(|| retry.delay.sample(rng))
    }

    /// A finite source's call has ended: it idles, then calls again.
    #[inline(never)]
    fn source_idles(&mut self, si: usize, now: f64) {
        if let Arrivals::Sources { idle, .. } = &self.model.streams[si].arrivals {
            let t = now + idle.sample(&mut self.streams[si].arrivals);
            let call = self.source_call(si);
            self.calendar.schedule(t, call);
        }
    }

    /// The event of a call of stream `si` from outside the arrival lane (a
    /// finite source's call; every call of a flow with stages, so that the
    /// one-stage path never tests for stages).
    fn source_call(&self, si: usize) -> Event {
        let stream = si as u32;
        if self.streams[si].staged {
            Event::FlowCall { stream }
        } else {
            Event::SourceCall { stream }
        }
    }

    /// Bring group `g`'s time integrals up to `now` (before its busy count
    /// changes).
    #[inline(always)]
    fn touch(&mut self, g: usize, now: f64) {
        let grp = &mut self.groups[g];
        // `max` and `min` as comparisons: see `seize`.
        let t0 = if grp.last_change > self.start {
            grp.last_change
        } else {
            self.start
        };
        let t1 = if now < self.end { now } else { self.end };
        grp.last_change = now;
        if t1 <= t0 {
            return;
        }
        let busy = f64::from(grp.busy);
        let full = grp.busy >= grp.servers;
        grp.busy_s += busy * (t1 - t0);
        if full {
            grp.full_s += t1 - t0;
        }
        if self.bins > 0 {
            let iv = &mut self.tally.group_intervals;
            spread(self.start, self.interval_s, self.bins, t0, t1, |b, dt| {
                iv[b][g].busy_s += busy * dt;
                if full {
                    iv[b][g].full_s += dt;
                }
            });
        }
    }

    fn touch_virtual(&mut self, g: usize, now: f64) {
        let grp = &mut self.groups[g];
        let t0 = grp.virtual_last_change.max(self.start);
        let t1 = now.min(self.end);
        grp.virtual_last_change = now;
        if t1 > t0 {
            let n = f64::from(grp.virtual_busy);
            grp.overflow_s += n * (t1 - t0);
            grp.overflow_sq_s += n * n * (t1 - t0);
        }
    }
}

/// The resolution of a measured call, answered (by `seize`) or lost (by
/// `Sim::resolve_lost`): it is no longer pending, counts as having waited
/// if it waited on any attempt, and as resolved in the interval of its
/// first attempt (`interval`, when intervals are on), where `and` adds what
/// else that interval counts (the answer and its wait, or the loss). On the
/// counters themselves rather than on `Sim`, so that `seize`, which already
/// holds the stream's tally, does not look it up again.
#[inline(always)]
fn resolved(
    pending: &mut u64,
    stream: &mut StreamTally,
    interval: Option<&mut StreamIntervalTally>,
    waited: bool,
    and: impl FnOnce(&mut StreamIntervalTally),
) {
    *pending -= 1;
    if waited {
        stream.waited += 1;
    }
    if let Some(it) = interval {
        it.resolved += 1;
        if waited {
            it.waited += 1;
        }
        and(it);
    }
}

/// Draw from `law`, with the exponential law inlined: the most common
/// holding law, drawn once per call (the same function and the same numbers
/// as `Law::sample`, without the call and the dispatch).
#[inline(always)]
fn sample(law: &Law, rng: &mut Xoshiro256PlusPlus) -> f64 {
    match law {
        Law::Exponential(l) => l.sample(rng),
        other => other.sample(rng),
    }
}

/// The rate in force at time `t` of a profile that starts at `start` (the
/// first rate also holds before it, the last after it), and when it changes.
fn profile_segment(start: f64, interval_s: f64, rates: &[f64], t: f64) -> (f64, f64) {
    if t < start {
        return (rates[0], start);
    }
    let i = ((t - start) / interval_s) as usize;
    if i + 1 >= rates.len() {
        return (rates[rates.len() - 1], f64::INFINITY);
    }
    let mut seg_end = start + (i as f64 + 1.0) * interval_s;
    if seg_end <= t {
        // Guard against rounding at a boundary.
        seg_end = t.next_up();
    }
    (rates[i], seg_end)
}

/// Split the span `[t0, t1)` (inside the measured period) over reporting
/// intervals of `width` starting at `start`, calling `add(bin, seconds)`.
#[inline]
fn spread(start: f64, width: f64, bins: usize, t0: f64, t1: f64, mut add: impl FnMut(usize, f64)) {
    let mut b = (((t0 - start) / width) as usize).min(bins - 1);
    let mut t = t0;
    while t < t1 {
        let bin_end = if b + 1 >= bins {
            t1
        } else {
            (start + (b as f64 + 1.0) * width).min(t1)
        };
        if bin_end > t {
            add(b, bin_end - t);
        }
        t = bin_end;
        b += 1;
        if b >= bins {
            break;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn events_stay_small() {
        // The calendar moves events on every push and pop: keep them at
        // 12 bytes (a tag and two u32).
        assert!(
            std::mem::size_of::<Event>() <= 12,
            "{}",
            std::mem::size_of::<Event>()
        );
    }

    #[test]
    fn spread_splits_across_bins() {
        let mut got = vec![0.0; 4];
        spread(10.0, 5.0, 4, 12.0, 23.0, |b, dt| got[b] += dt);
        assert_eq!(got, vec![3.0, 5.0, 3.0, 0.0]);
        let mut got = vec![0.0; 2];
        spread(0.0, 5.0, 2, 9.0, 10.0, |b, dt| got[b] += dt);
        assert_eq!(got, vec![0.0, 1.0]);
    }

    #[test]
    fn profile_segments() {
        let r = [1.0, 2.0, 3.0];
        assert_eq!(profile_segment(100.0, 10.0, &r, 50.0), (1.0, 100.0));
        assert_eq!(profile_segment(100.0, 10.0, &r, 105.0), (1.0, 110.0));
        assert_eq!(profile_segment(100.0, 10.0, &r, 115.0), (2.0, 120.0));
        assert_eq!(
            profile_segment(100.0, 10.0, &r, 125.0),
            (3.0, f64::INFINITY)
        );
    }
}
