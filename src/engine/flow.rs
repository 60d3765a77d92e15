//! Call flows with stages: the path of a stream's calls through its stages
//! (`Stream::stages`), kept apart from the one-stage path, which streams
//! without stages take unchanged: a flow's calls arrive as `Event::FlowCall`
//! (never through the arrival lane or `new_call`), and the queue code sends
//! a waiting call of a stream marked `StreamState::staged` here.
//!
//! # Life of a flow's call
//!
//! At arrival the call draws its plan once, from the stream's holding
//! generator, stage by stage: the stage's holding time, then (where the
//! stage has a `finish` share) one uniform draw that may end the call after
//! this stage; a call that ends stops drawing. Redials keep the plan.
//!
//! An attempt enters the first stage. Entering stage k tries its route as
//! a one-stage call does (seize, else wait where the group has a place,
//! else overflow to the next group); with no server and no place it is
//! blocked at k. A seized stage ends after its holding time (at once
//! without one): a server held "stage" is released, one held "to-end"
//! stays seized; the call then ends (its plan's last stage) or enters
//! stage k + 1. A call that ends releases every server it holds and is
//! answered, with the sum of its waits at the stages as its wait. A call
//! blocked at a stage, or whose patience at a stage runs out, releases
//! every server it holds; the attempt failed, and the stream's `retry`
//! decides as for any call: a redial starts again from the first stage.
//!
//! A flow lives in `Sim::flows` from arrival to its end, redials included;
//! events refer to it by slot (`Event::StageEnd`, `Event::FlowRedial`), so
//! that events stay small. A waiting flow's call sits in the groups' queues
//! like any call (`Sim::slab`), with its flow in `Sim::slab_flow`.

use super::{Call, Event, NOT_MEASURED, Sim, sample, spread};
use crate::scenario::{Hold, Model};
use rand::RngExt;

/// No group: the current stage holds nothing that ends with it.
const NO_GROUP: u32 = u32::MAX;

/// One call flow in progress.
#[derive(Debug, Clone)]
pub(super) struct Flow {
    /// The call (its `holding` is the current stage's).
    call: Call,
    /// Index of the current stage.
    stage: u32,
    /// The stage after which the call ends (drawn at arrival).
    last: u32,
    /// Waiting or in service at `stage` (false between redials).
    in_stage: bool,
    /// When the call entered the current stage.
    stage_at: f64,
    /// Its wait at the current stage, once seized there.
    stage_wait: f64,
    /// Sum of the waits of this attempt's stages so far.
    wait_s: f64,
    /// When this attempt first seized a server (NaN before).
    seized_at: f64,
    /// The group held until the current stage ends, or `NO_GROUP`.
    current: u32,
    /// The groups held until the call ends.
    held: Vec<u32>,
    /// The plan: each stage's holding time, up to `last`.
    holdings: Vec<f64>,
}

/// Per stream, the first position of each stage in the stream's route, and
/// per position the end of its stage's span (both empty for a stream
/// without stages).
pub(super) fn spans(model: &Model) -> (Vec<Vec<u32>>, Vec<Vec<u32>>) {
    (model.streams.iter())
        .map(|s| {
            let mut starts = Vec::with_capacity(s.stages.len());
            let mut ends = Vec::with_capacity(s.route.len());
            for k in 0..s.stages.len() {
                let span = s.stage_span(k);
                starts.push(span.start as u32);
                ends.extend(span.clone().map(|_| span.end as u32));
            }
            (starts, ends)
        })
        .unzip()
}

impl Sim<'_> {
    /// A call of flow stream `si` arrives: an open stream's next arrival is
    /// put on the calendar (as `Event::FlowCall`: the arrival lane and
    /// `new_call` serve one-stage streams only), then the call starts.
    #[inline(never)]
    pub(super) fn flow_call(&mut self, si: usize, now: f64) {
        if !self.streams[si].sources
            && let Some(t) = self.next_arrival(si, now)
        {
            let stream = si as u32;
            self.calendar.schedule(t, Event::FlowCall { stream });
        }
        self.new_flow(si, now);
    }

    /// A new call of stream `si`, a flow with stages: its plan, its
    /// counts as an offered call, then its first attempt.
    #[inline(never)]
    fn new_flow(&mut self, si: usize, now: f64) {
        let model = self.model;
        let stages = &model.streams[si].stages;
        let f = match self.free_flows.pop() {
            Some(f) => f,
            None => {
                self.flows.push(Flow {
                    call: Call {
                        stream: 0,
                        attempt: 1,
                        bin: NOT_MEASURED,
                        waited: false,
                        holding: 0.0,
                        attempt_at: 0.0,
                        interrupted: false,
                    },
                    stage: 0,
                    last: 0,
                    in_stage: false,
                    stage_at: 0.0,
                    stage_wait: 0.0,
                    wait_s: 0.0,
                    seized_at: f64::NAN,
                    current: NO_GROUP,
                    held: Vec::new(),
                    holdings: Vec::new(),
                });
                (self.flows.len() - 1) as u32
            }
        };
        let rng = &mut self.streams[si].holding;
        let flow = &mut self.flows[f as usize];
        flow.holdings.clear();
        let mut last = stages.len() - 1;
        for (k, st) in stages.iter().enumerate() {
            flow.holdings
                .push(st.holding.as_ref().map_or(0.0, |l| sample(l, rng)));
            if st.finish > 0.0 {
                let u: f64 = rng.random();
                if u < st.finish {
                    last = k;
                    break;
                }
            }
        }
        let total: f64 = flow.holdings.iter().sum();
        let bin = if now >= self.start && now < self.end {
            if self.bins > 0 {
                (((now - self.start) / self.interval_s) as usize).min(self.bins - 1) as u32
            } else {
                0
            }
        } else {
            NOT_MEASURED
        };
        flow.call = Call {
            stream: si as u32,
            attempt: 1,
            bin,
            waited: false,
            holding: 0.0,
            attempt_at: now,
            interrupted: false,
        };
        flow.last = last as u32;
        if bin != NOT_MEASURED {
            self.pending += 1;
            let st = &mut self.tally.streams[si];
            st.offered += 1;
            st.offered_holding_s += total;
            if self.bins > 0 {
                let it = &mut self.tally.stream_intervals[bin as usize][si];
                it.offered += 1;
                it.offered_holding_s += total;
            }
        }
        self.flow_attempt(f, now);
    }

    /// An attempt of flow `f` from its first stage.
    fn flow_attempt(&mut self, f: u32, now: f64) {
        let flow = &mut self.flows[f as usize];
        flow.stage = 0;
        flow.wait_s = 0.0;
        flow.seized_at = f64::NAN;
        flow.current = NO_GROUP;
        flow.held.clear();
        if flow.call.measured() {
            self.tally.streams[flow.call.stream as usize].attempts += 1;
        }
        self.stage_enters(f, now);
    }

    /// Flow `f` enters its current stage: seize, wait or overflow along the
    /// stage's route; blocked when no group can serve or hold it.
    fn stage_enters(&mut self, f: u32, now: f64) {
        let flow = &mut self.flows[f as usize];
        let (si, k) = (flow.call.stream as usize, flow.stage as usize);
        flow.in_stage = true;
        flow.stage_at = now;
        flow.call.holding = flow.holdings[k];
        // What an overflowed call would have held here: the stage's time,
        // or for a server held to the end the rest of the plan.
        let holding = match self.model.streams[si].stages[k].hold {
            Hold::Stage => flow.call.holding,
            Hold::ToEnd => flow.holdings[k..].iter().sum(),
        };
        let measured = flow.call.measured();
        if measured {
            self.tally.stages[si][k].entered += 1;
        }
        let start = self.stage_start[si][k] as usize;
        let end = self.stage_span_end[si][start] as usize;
        for pos in start..end {
            let step = self.routes[si][pos];
            let g = step.group as usize;
            let grp = &self.groups[g];
            if grp.admits(step.need) {
                self.flow_seizes(f, g, now);
                return;
            }
            if grp.has_waiting_place() {
                self.flow_enqueue(f, g, pos as u32, now);
                return;
            }
            self.overflow(g, holding, now);
        }
        if measured {
            self.tally.stages[si][k].blocked += 1;
        }
        self.flows[f as usize].in_stage = false;
        self.flow_fails(f, now, false);
    }

    /// Flow `f`'s call waits at its current stage in group `g` (position
    /// `position` of the route); its patience at the stage starts.
    fn flow_enqueue(&mut self, f: u32, g: usize, position: u32, now: f64) {
        let flow = &mut self.flows[f as usize];
        flow.call.waited = true;
        let (call, k) = (flow.call, flow.stage as usize);
        // (The scenario refuses seen_by on a stream with stages.)
        let (slot, generation) = self.take_slot(call, g, position);
        if self.slab_flow.len() < self.slab.len() {
            self.slab_flow.resize(self.slab.len(), 0);
        }
        self.slab_flow[slot as usize] = f;
        self.join_queue(g, slot, generation, call.stream, now);
        let si = call.stream as usize;
        if let Some(p) = &self.model.streams[si].stages[k].patience {
            let patience = p.sample(&mut self.streams[si].patience);
            self.calendar
                .schedule(now + patience, Event::Abandon { slot, generation });
        }
    }

    /// Flow `f` seizes a server of group `g` for its current stage.
    #[inline(never)]
    pub(super) fn flow_seizes(&mut self, f: u32, g: usize, now: f64) {
        self.touch(g, now);
        let grp = &mut self.groups[g];
        grp.busy += 1;
        debug_assert!(grp.busy <= grp.servers, "busy servers above the group size");
        if grp.busy > grp.peak_busy {
            grp.peak_busy = grp.busy;
        }
        let flow = &mut self.flows[f as usize];
        let si = flow.call.stream as usize;
        let k = flow.stage as usize;
        flow.stage_wait = now - flow.stage_at;
        flow.wait_s += flow.stage_wait;
        if flow.seized_at.is_nan() {
            flow.seized_at = now;
        }
        match self.model.streams[si].stages[k].hold {
            Hold::ToEnd => flow.held.push(g as u32),
            Hold::Stage => flow.current = g as u32,
        }
        let holding = flow.call.holding;
        if holding > 0.0 {
            self.calendar
                .schedule(now + holding, Event::StageEnd { flow: f });
        } else {
            self.stage_ends(f, now);
        }
    }

    /// A server of group `g` held by a flow is released.
    fn flow_releases(&mut self, g: usize, now: f64) {
        self.touch(g, now);
        let grp = &mut self.groups[g];
        debug_assert!(grp.busy >= 1);
        grp.busy -= 1;
        if grp.waiting > 0 {
            self.serve_queue(g, now);
        }
    }

    /// Flow `f`'s current stage ends: its "stage" server is released; the
    /// call ends or enters the next stage.
    #[inline(never)]
    pub(super) fn stage_ends(&mut self, f: u32, now: f64) {
        let flow = &mut self.flows[f as usize];
        let (si, k) = (flow.call.stream as usize, flow.stage as usize);
        let current = std::mem::replace(&mut flow.current, NO_GROUP);
        flow.in_stage = false;
        let ends = flow.stage == flow.last;
        if flow.call.measured() {
            let st = &mut self.tally.stages[si][k];
            st.served += 1;
            st.wait_sum_s += flow.stage_wait;
            if ends {
                st.finished += 1;
            }
        }
        if current != NO_GROUP {
            self.flow_releases(current as usize, now);
        }
        if ends {
            self.flow_completes(f, now);
        } else {
            self.flows[f as usize].stage += 1;
            self.stage_enters(f, now);
        }
    }

    /// Every server flow `f` holds until the end is released, and the
    /// stream's carried call-seconds get the span from its first seizure.
    fn flow_releases_all(&mut self, f: u32, now: f64) {
        let held = std::mem::take(&mut self.flows[f as usize].held);
        for &g in &held {
            self.flow_releases(g as usize, now);
        }
        let flow = &mut self.flows[f as usize];
        flow.held = held;
        flow.held.clear();
        let (si, seized_at) = (flow.call.stream as usize, flow.seized_at);
        flow.seized_at = f64::NAN;
        if !seized_at.is_nan() {
            self.flow_carried(si, seized_at, now);
        }
    }

    /// Call-seconds of stream `si` from `from` to `to`, clipped to the
    /// measured period, as carried (whole run and intervals).
    fn flow_carried(&mut self, si: usize, from: f64, to: f64) {
        let t0 = from.max(self.start);
        let t1 = to.min(self.end);
        if t1 > t0 {
            self.tally.streams[si].carried_s += t1 - t0;
            if self.bins > 0 {
                let (start, width, bins) = (self.start, self.interval_s, self.bins);
                let iv = &mut self.tally.stream_intervals;
                spread(start, width, bins, t0, t1, |b, dt| {
                    iv[b][si].carried_s += dt
                });
            }
        }
    }

    /// Flow `f`'s call ends after its last planned stage: answered, with
    /// the waits of its stages as its wait.
    fn flow_completes(&mut self, f: u32, now: f64) {
        self.flow_releases_all(f, now);
        let flow = &self.flows[f as usize];
        let (call, wait) = (flow.call, flow.wait_s);
        let si = call.stream as usize;
        if call.measured() {
            self.count_answered(call, wait, self.streams[si].answer_within_s);
        }
        self.free_flows.push(f);
        if self.streams[si].sources {
            self.source_idles(si, now);
        }
    }

    /// Flow `f`'s call gave up waiting at its current stage.
    #[inline(never)]
    pub(super) fn flow_abandons(&mut self, f: u32, now: f64) {
        let flow = &mut self.flows[f as usize];
        flow.in_stage = false;
        if flow.call.measured() {
            let (si, k) = (flow.call.stream as usize, flow.stage as usize);
            self.tally.stages[si][k].abandoned += 1;
        }
        self.flow_fails(f, now, true);
    }

    /// Flow `f`'s attempt failed (blocked or abandoned at a stage): every
    /// server it holds is released; it redials from the first stage or is
    /// lost, as the stream's `retry` says.
    fn flow_fails(&mut self, f: u32, now: f64, abandoned: bool) {
        self.flow_releases_all(f, now);
        let mut call = self.flows[f as usize].call;
        let si = call.stream as usize;
        self.count_failed_attempt(&call, abandoned);
        if let Some(delay) = self.redial_delay(si, call.attempt) {
            call.attempt += 1;
            self.flows[f as usize].call = call;
            self.calendar
                .schedule(now + delay, Event::FlowRedial { flow: f });
            return;
        }
        self.free_flows.push(f);
        self.lost_for_good(call, now, abandoned);
    }

    /// The redial of flow `f` is due.
    #[inline(never)]
    pub(super) fn flow_redials(&mut self, f: u32, now: f64) {
        self.flows[f as usize].call.attempt_at = now;
        self.flow_attempt(f, now);
    }

    /// At the end of the replication: every measured flow still open
    /// (waiting, in service or between redials) is pending in its stream,
    /// and in its stage when waiting or in service there; the call-seconds
    /// of flows still holding servers count as carried up to the end.
    pub(super) fn flows_at_end(&mut self) {
        let mut open = vec![true; self.flows.len()];
        for &f in &self.free_flows {
            open[f as usize] = false;
        }
        for (f, &is_open) in open.iter().enumerate() {
            if !is_open {
                continue;
            }
            let flow = &self.flows[f];
            let (call, seized_at) = (flow.call, flow.seized_at);
            let si = call.stream as usize;
            if call.measured() {
                self.tally.streams[si].pending_end += 1;
                if flow.in_stage {
                    self.tally.stages[si][flow.stage as usize].pending_end += 1;
                }
            }
            if !seized_at.is_nan() {
                self.flow_carried(si, seized_at, self.end);
            }
        }
    }
}
