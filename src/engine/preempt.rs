//! Pre-emptive priority (`preemption` on a group): the calls in service on
//! such a group are tracked one by one, so that an arriving call of higher
//! priority can interrupt one. Every other group's calls leave by anonymous
//! `Departure` events, and no code here runs for them.
//!
//! # Rules (docs/semantics.md, "Pre-emption")
//!
//! An attempt that arrives at a group of its route with `preemption`, finds
//! it unable to carry the call now and too few servers free, interrupts
//! calls in service of lower priority (a larger `priority` number; a stream
//! without one ranks last): the lowest priority first, and among equals the
//! one that started service last (the least work lost), until enough
//! servers are free; if all such calls together would not free enough,
//! none is interrupted and the attempt goes on as without pre-emption
//! (waits, or overflows). The interrupted call then, by the group's rule:
//!
//! - `resume`: waits at the head of its class in the group's queue (ahead
//!   of calls not yet answered, whatever the queue's places) and is served
//!   again for the rest of its holding time;
//! - `restart`: the same, for the whole of its holding time again;
//! - `lose`: ends there (its finite source idles).
//!
//! An interrupted call waiting to be served again has no patience, no
//! `overflow_after` and no `seen_by`: it was answered. Its first answer
//! counts in the wait figures once; every interruption of a measured call
//! counts in the stream's `interruptions`. A measured call carried here is
//! followed to the end of its service (it stays in `pending`), so that its
//! interruptions after the measured period are counted too.

use super::{Call, Event, Sim};
use crate::scenario::Preemption;

/// A call in service on a group with `preemption`.
#[derive(Debug, Clone, Copy)]
pub(super) struct InService {
    call: Call,
    group: u32,
    /// Position of this slot in the group's `in_service` list.
    index: u32,
    /// Start of this service (s).
    started: f64,
    /// Its end (s).
    ends: f64,
    generation: u32,
    active: bool,
}

impl Sim<'_> {
    /// Track `call`, carried on group `g` (with `preemption`) from `now` to
    /// `ends`, and return the event of its end. `again`: an interrupted
    /// call served again, followed already.
    #[cold]
    #[inline(never)]
    pub(super) fn track(
        &mut self,
        g: usize,
        call: Call,
        now: f64,
        ends: f64,
        again: bool,
    ) -> Event {
        if call.measured() && !again {
            self.pending += 1; // resolved at the end of its service
        }
        let slot = match self.free_service.pop() {
            Some(s) => s,
            None => {
                self.service.push(InService {
                    call,
                    group: 0,
                    index: 0,
                    started: 0.0,
                    ends: 0.0,
                    generation: 0,
                    active: false,
                });
                (self.service.len() - 1) as u32
            }
        };
        let list = &mut self.groups[g].in_service;
        let s = &mut self.service[slot as usize];
        s.call = call;
        s.group = g as u32;
        s.index = list.len() as u32;
        s.started = now;
        s.ends = ends;
        s.generation = s.generation.wrapping_add(1);
        s.active = true;
        list.push(slot);
        Event::TrackedEnd {
            slot,
            generation: s.generation,
        }
    }

    /// Take the call in `slot` off its group's list of calls in service.
    fn untrack(&mut self, slot: u32) {
        let s = self.service[slot as usize];
        let list = &mut self.groups[s.group as usize].in_service;
        let i = s.index as usize;
        debug_assert_eq!(list[i], slot);
        list.swap_remove(i);
        if let Some(&moved) = list.get(i) {
            self.service[moved as usize].index = i as u32;
        }
        self.service[slot as usize].active = false;
        self.free_service.push(slot);
    }

    /// The end of a tracked call's service (skipped when it was
    /// interrupted meanwhile: lazily cancelled).
    pub(super) fn tracked_end(&mut self, slot: u32, generation: u32, now: f64) {
        let s = self.service[slot as usize];
        if !s.active || s.generation != generation {
            return;
        }
        self.untrack(slot);
        if s.call.measured() {
            self.pending -= 1;
        }
        self.departs(s.group as usize, s.call.stream as usize, now);
    }

    /// An attempt of stream `si` that group `g` cannot carry now: interrupt
    /// calls of lower priority until `need` servers are free (see the
    /// module's rules). `true` when it did: the caller then seizes.
    #[inline(never)]
    pub(super) fn preempts(&mut self, g: usize, si: usize, need: u32, now: f64) -> bool {
        let rank = self.rank[si];
        let mut victims = std::mem::take(&mut self.victims);
        victims.clear();
        let grp = &self.groups[g];
        victims.extend(
            (grp.in_service.iter().copied())
                .filter(|&v| self.rank[self.service[v as usize].call.stream as usize] > rank),
        );
        // Lowest priority first; then the latest start; then the slot, so
        // that the order never depends on the list's own order.
        victims.sort_unstable_by(|&a, &b| {
            let (x, y) = (&self.service[a as usize], &self.service[b as usize]);
            let (rx, ry) = (
                self.rank[x.call.stream as usize],
                self.rank[y.call.stream as usize],
            );
            ry.cmp(&rx)
                .then(y.started.total_cmp(&x.started))
                .then(a.cmp(&b))
        });
        let mut busy = grp.busy;
        let mut take = 0;
        while grp.servers.saturating_sub(busy) < need && take < victims.len() {
            let v = &self.service[victims[take] as usize];
            busy -= self.streams[v.call.stream as usize].units;
            take += 1;
        }
        let enough = grp.servers.saturating_sub(busy) >= need;
        if enough {
            for &v in &victims[..take] {
                self.interrupt(v, now);
            }
        }
        self.victims = victims;
        enough
    }

    /// Interrupt the call in service in `slot`: its servers free now, it
    /// no longer carries the rest of its holding time, and it waits to be
    /// served again or is lost, by its group's rule.
    fn interrupt(&mut self, slot: u32, now: f64) {
        let s = self.service[slot as usize];
        self.untrack(slot);
        let g = s.group as usize;
        let si = s.call.stream as usize;
        self.touch(g, now);
        let units = self.streams[si].units;
        debug_assert!(self.groups[g].busy >= units);
        self.groups[g].busy -= units;
        self.count_carried::<true>(si, now, s.ends);
        if s.call.measured() {
            self.tally.streams[si].interruptions += 1;
        }
        let rule = self.groups[g]
            .preemption
            .expect("only a group with preemption tracks its calls");
        let mut call = s.call;
        match rule {
            Preemption::Lose => {
                if call.measured() {
                    self.pending -= 1;
                }
                if self.streams[si].sources {
                    self.source_idles(si, now);
                }
                return;
            }
            Preemption::Resume => call.holding = s.ends - now,
            Preemption::Restart => {}
        }
        call.interrupted = true;
        let position = (self.routes[si].iter())
            .position(|step| step.group as usize == g)
            .expect("a tracked call was carried on its route (the scenario refuses seen_by and stages here)");
        let (w, generation) = self.take_slot(call, g, position as u32);
        self.push_front_class(g, w, generation, call.stream);
    }

    /// Put the entry at the head of its class's queue in group `g` (one
    /// more call waiting there, whatever the queue's places).
    fn push_front_class(&mut self, g: usize, slot: u32, generation: u32, stream: u32) {
        let grp = &mut self.groups[g];
        grp.waiting += 1;
        grp.counts.joined += 1;
        match grp.class_of.get(stream as usize).copied().unwrap_or(0) {
            0 => grp.queue.push_front((slot, generation)),
            c => grp.more_classes[c as usize - 1].push_front((slot, generation)),
        }
    }
}
