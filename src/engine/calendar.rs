//! The event calendar: pending events ordered by time, ties first-in
//! first-out (in the order they were scheduled), so runs are reproducible.
//!
//! [`Calendar`] is the plain statement of that order: a binary heap keyed by
//! (time, sequence number). The engine runs on [`Lanes`]: a [`CalendarQueue`]
//! (buckets of time, O(1) per event whatever the number pending) for
//! departures and timers, beside a small heap of the open streams' next
//! arrivals. Both give exactly the order of [`Calendar`]; the tests below
//! check it on random schedules with many ties.
//!
//! Allocation-free in steady state: storage is reused once it has grown to
//! the largest number of pending events.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

struct Entry<E> {
    /// `f64::to_bits` of a time >= 0: for non-negative floats the bit pattern
    /// orders like the number, so comparisons stay integer (a deliberate
    /// shortcut, valid because times are never negative or NaN).
    time_bits: u64,
    seq: u64,
    event: E,
}

impl<E> PartialEq for Entry<E> {
    fn eq(&self, other: &Self) -> bool {
        self.time_bits == other.time_bits && self.seq == other.seq
    }
}
impl<E> Eq for Entry<E> {}
impl<E> PartialOrd for Entry<E> {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl<E> Ord for Entry<E> {
    fn cmp(&self, other: &Self) -> Ordering {
        // Reversed: BinaryHeap is a max-heap, we want the earliest first.
        (other.time_bits, other.seq).cmp(&(self.time_bits, self.seq))
    }
}

/// Pending events ordered by time, ties first-in first-out.
pub struct Calendar<E: Copy> {
    heap: BinaryHeap<Entry<E>>,
    seq: u64,
}

impl<E: Copy> Calendar<E> {
    /// An empty calendar with room for `capacity` pending events.
    pub fn with_capacity(capacity: usize) -> Self {
        Calendar {
            heap: BinaryHeap::with_capacity(capacity),
            seq: 0,
        }
    }

    /// Schedule `event` at absolute time `time` (>= 0, finite).
    #[inline]
    pub fn schedule(&mut self, time: f64, event: E) {
        debug_assert!(time >= 0.0 && time.is_finite(), "event time {time}");
        self.seq += 1;
        self.heap.push(Entry {
            time_bits: time.to_bits(),
            seq: self.seq,
            event,
        });
    }

    /// Time of the next event, if any.
    #[inline]
    pub fn peek_time(&self) -> Option<f64> {
        self.heap.peek().map(|e| f64::from_bits(e.time_bits))
    }

    /// Remove and return the next event with its time.
    #[inline]
    pub fn pop(&mut self) -> Option<(f64, E)> {
        self.heap
            .pop()
            .map(|e| (f64::from_bits(e.time_bits), e.event))
    }

    /// Number of pending events.
    pub fn len(&self) -> usize {
        self.heap.len()
    }

    /// Whether no event is pending.
    pub fn is_empty(&self) -> bool {
        self.heap.is_empty()
    }
}

/// No node: the end of a list.
const NIL: u32 = u32::MAX;

/// One pending event of a [`CalendarQueue`].
#[derive(Clone, Copy)]
struct Node<E> {
    /// `f64::to_bits` of the time (orders like the time, see `Entry`).
    key: u64,
    /// Scheduling sequence number, compared only with the arrival lane's.
    seq: u64,
    /// Next node of the same bucket (or of the free list), or `NIL`.
    next: u32,
    event: E,
}

/// One bucket: a list of nodes sorted by (time, sequence), with the key of
/// its last node (valid when not empty). Keeping that key here spares a
/// visit to a node far away in memory when appending a new event, the
/// common case.
#[derive(Clone, Copy)]
struct Bucket {
    tail_key: u64,
    head: u32,
    tail: u32,
}

const EMPTY: Bucket = Bucket {
    tail_key: 0,
    head: NIL,
    tail: NIL,
};

/// A calendar queue (R. Brown, "Calendar queues: a fast O(1) priority queue
/// implementation for the simulation event set problem", Communications of
/// the ACM 31(10), 1988).
///
/// Time is cut into days of equal length; the buckets form a year, bucket
/// `d mod buckets` holding the events of day `d` (and of the same day of
/// later years) in a list sorted by time. Taking the next event looks at the
/// current day's bucket; if its first event belongs to a later year, it
/// steps to the next day. Scheduling appends to a bucket's list (walking it
/// only when the new event is not its latest). With days near three times
/// the average gap between events and about as many buckets as pending
/// events, both cost O(1) on average whatever the number of events pending,
/// where a heap costs O(log n) per event: the engine's cost per call stays
/// flat from 10 to 10,000 servers. The queue resizes itself (buckets doubled
/// or halved, the day re-measured from the events at its head) when the
/// number of pending events or the work per operation drifts.
///
/// Days are found from the bits of the time (`key >> shift`), which order
/// like the time: exact integer arithmetic, so a later day never holds an
/// earlier event. A day spans 2^shift units in the last place of the time,
/// so its length in seconds doubles each time the clock passes a power of
/// two; the work check then re-measures it.
///
/// Ties: a list keeps events of equal time in scheduling order (a new event
/// goes after every event of equal or earlier time), events of equal time
/// always share a bucket, and a resize re-links the events in that same
/// order. So events leave in exactly the (time, sequence) order of
/// [`Calendar`]: a deliberate performance shortcut that changes no result.
///
/// Events live in one pool of nodes linked by index and reused through a
/// free list.
pub struct CalendarQueue<E: Copy> {
    nodes: Vec<Node<E>>,
    /// First free node, or `NIL`.
    free: u32,
    /// The year; its length is a power of two.
    buckets: Vec<Bucket>,
    /// `buckets.len() - 1`.
    mask: u64,
    /// An event of key k is in day `k >> shift`.
    shift: u32,
    /// The current day: no pending event lies in an earlier one.
    day: u64,
    len: usize,
    seq: u64,
    /// The next event's node (the head of the current day's bucket) when
    /// known, and its key (0 when unknown). Set by `find`; scheduling an
    /// event before it, or taking it out, clears it.
    ready: u32,
    ready_key: u64,
    /// List steps and empty days passed, and operations, since the last
    /// check.
    work: u64,
    ops: u64,
    /// Operations between checks: `CHECK_EVERY`, or after a re-measure at
    /// least the number of events pending, so that a queue whose work stays
    /// high cannot spend its time re-measuring (a resize costs O(n log n)).
    check_every: u64,
    /// Key of the last event taken out.
    last_key: u64,
    /// Binary exponent of the time when the day was measured: a day's
    /// length in seconds doubles with the exponent, so a change re-measures.
    exponent: u64,
    /// Scratch for resizes: (key, node) in leaving order.
    order: Vec<(u64, u32)>,
}

/// Fewest buckets.
const MIN_BUCKETS: usize = 4;
/// Operations between checks of the work per operation.
const CHECK_EVERY: u64 = 4096;
/// Work per operation above which the day is re-measured.
const MAX_WORK_PER_OP: u64 = 4;
/// Events at the head sampled to measure the day.
const SAMPLE: usize = 64;

impl<E: Copy> CalendarQueue<E> {
    /// An empty calendar.
    pub fn new() -> Self {
        CalendarQueue {
            nodes: Vec::new(),
            free: NIL,
            buckets: vec![EMPTY; MIN_BUCKETS],
            mask: (MIN_BUCKETS - 1) as u64,
            shift: 52,
            day: 0,
            len: 0,
            seq: 0,
            ready: NIL,
            ready_key: 0,
            work: 0,
            ops: 0,
            check_every: CHECK_EVERY,
            last_key: 0,
            exponent: 0,
            order: Vec::new(),
        }
    }

    /// Schedule `event` at absolute time `time` (>= 0, finite).
    #[inline(always)]
    pub fn schedule(&mut self, time: f64, event: E) {
        let seq = self.next_seq();
        self.schedule_seq(time, seq, event);
    }

    /// A new sequence number (shared with the arrival lane of [`Lanes`]).
    #[inline]
    fn next_seq(&mut self) -> u64 {
        self.seq += 1;
        self.seq
    }

    #[inline(always)]
    fn schedule_seq(&mut self, time: f64, seq: u64, event: E) {
        debug_assert!(time >= 0.0 && time.is_finite(), "event time {time}");
        let key = time.to_bits();
        let day = key >> self.shift;
        if day < self.day {
            self.day = day;
        }
        if key < self.ready_key {
            self.ready = NIL;
            self.ready_key = 0;
        }
        let node = Node {
            key,
            seq,
            next: NIL,
            event,
        };
        let n = if self.free != NIL {
            let n = self.free;
            self.free = self.nodes[n as usize].next;
            self.nodes[n as usize] = node;
            n
        } else {
            self.nodes.push(node);
            (self.nodes.len() - 1) as u32
        };
        let b = (day & self.mask) as usize;
        let nodes = &mut self.nodes;
        let bucket = &mut self.buckets[b];
        if bucket.head == NIL {
            *bucket = Bucket {
                tail_key: key,
                head: n,
                tail: n,
            };
        } else if bucket.tail_key <= key {
            // The latest of its bucket, as most events are: append. Ties go
            // after the events already there.
            nodes[bucket.tail as usize].next = n;
            bucket.tail = n;
            bucket.tail_key = key;
        } else if key < nodes[bucket.head as usize].key {
            nodes[n as usize].next = bucket.head;
            bucket.head = n;
        } else {
            // Walk past every event of equal or earlier time (ties stay in
            // scheduling order); the head is not later and the tail is, so
            // the walk starts after the head and stops before the tail.
            let mut prev = bucket.head;
            let mut cur = nodes[prev as usize].next;
            while nodes[cur as usize].key <= key {
                prev = cur;
                cur = nodes[cur as usize].next;
                self.work += 1;
            }
            nodes[n as usize].next = cur;
            nodes[prev as usize].next = n;
        }
        self.len += 1;
        self.ops += 1;
        if self.len > 2 * self.buckets.len() {
            self.resize(self.buckets.len() * 2);
        }
    }

    /// Move `day` to the next event's day and return that event's node (the
    /// head of the day's bucket), or `NIL` when none is pending.
    #[inline(always)]
    fn find(&mut self) -> u32 {
        if self.ready != NIL || self.len == 0 {
            return self.ready;
        }
        self.find_day()
    }

    /// `find` when the next event is not known yet: step through the days.
    #[inline(never)]
    fn find_day(&mut self) -> u32 {
        for _ in 0..self.buckets.len() {
            let h = self.buckets[(self.day & self.mask) as usize].head;
            if h != NIL {
                let key = self.nodes[h as usize].key;
                if key >> self.shift == self.day {
                    self.ready = h;
                    self.ready_key = key;
                    return h;
                }
            }
            self.day += 1;
            self.work += 1;
        }
        self.find_far()
    }

    /// A whole year without an event: jump to the earliest bucket head.
    #[cold]
    fn find_far(&mut self) -> u32 {
        let mut best = NIL;
        let mut key = u64::MAX;
        for b in &self.buckets {
            if b.head != NIL && (best == NIL || self.nodes[b.head as usize].key < key) {
                best = b.head;
                key = self.nodes[b.head as usize].key;
            }
        }
        self.day = key >> self.shift;
        self.ready = best;
        self.ready_key = key;
        best
    }

    /// Key and sequence number of the next event.
    #[inline(always)]
    fn peek_entry(&mut self) -> Option<(u64, u64)> {
        match self.find() {
            NIL => None,
            h => {
                let node = &self.nodes[h as usize];
                Some((node.key, node.seq))
            }
        }
    }

    /// Time of the next event, if any. Takes `&mut self` because it moves
    /// the current day forward to that event; it schedules or drops nothing.
    #[inline]
    pub fn peek_time(&mut self) -> Option<f64> {
        self.peek_entry().map(|(key, _)| f64::from_bits(key))
    }

    /// Remove and return the next event with its time.
    #[inline(always)]
    pub fn pop(&mut self) -> Option<(f64, E)> {
        let h = self.find();
        if h == NIL {
            return None;
        }
        self.ready = NIL;
        self.ready_key = 0;
        let node = self.nodes[h as usize];
        let b = (self.day & self.mask) as usize;
        let bucket = &mut self.buckets[b];
        debug_assert_eq!(bucket.head, h);
        bucket.head = node.next;
        if node.next == NIL {
            bucket.tail = NIL;
        }
        self.nodes[h as usize].next = self.free;
        self.free = h;
        self.len -= 1;
        self.ops += 1;
        self.last_key = node.key;
        if self.ops >= self.check_every {
            self.check();
        }
        Some((f64::from_bits(node.key), node.event))
    }

    /// Every `check_every` operations: halve the buckets when they are far
    /// too many for the events, or re-measure the day when operations cost
    /// too much work or the clock has passed a power of two.
    #[cold]
    fn check(&mut self) {
        let too_much_work = self.work > MAX_WORK_PER_OP * self.ops;
        self.work = 0;
        self.ops = 0;
        self.check_every = CHECK_EVERY;
        let buckets = self.buckets.len();
        if buckets > MIN_BUCKETS && 2 * self.len < buckets {
            self.resize(buckets / 2);
        } else if too_much_work || self.last_key >> 52 != self.exponent {
            self.resize(buckets);
            self.check_every = CHECK_EVERY.max(self.len as u64);
        }
    }

    /// Re-link every event into `buckets` buckets, with days measured from
    /// the events at the head: three times their average gap (Brown 1988),
    /// rounded down to a power of two units in the last place.
    #[cold]
    fn resize(&mut self, buckets: usize) {
        let mut order = std::mem::take(&mut self.order);
        order.clear();
        for b in &self.buckets {
            let mut n = b.head;
            while n != NIL {
                order.push((self.nodes[n as usize].key, n));
                n = self.nodes[n as usize].next;
            }
        }
        // Stable: events of equal time come from one list, already in
        // scheduling order, and keep it.
        order.sort_by_key(|&(key, _)| key);
        self.exponent = order.first().map_or(0, |&(key, _)| key >> 52);
        // The head's events, or all of them when those share one time.
        for sample in [order.len().min(SAMPLE), order.len()] {
            if sample < 2 {
                break;
            }
            let span = order[sample - 1].0 - order[0].0;
            let width = span / (sample as u64 - 1) * 3;
            if width > 0 {
                self.shift = 63 - width.leading_zeros();
                break;
            }
        }
        self.buckets.clear();
        self.buckets.resize(buckets, EMPTY);
        self.mask = (buckets - 1) as u64;
        // Append in leaving order: each list stays sorted, ties in order.
        for &(key, n) in &order {
            let bucket = &mut self.buckets[((key >> self.shift) & self.mask) as usize];
            self.nodes[n as usize].next = NIL;
            if bucket.head == NIL {
                bucket.head = n;
            } else {
                self.nodes[bucket.tail as usize].next = n;
            }
            bucket.tail = n;
            bucket.tail_key = key;
        }
        self.day = order.first().map_or(0, |&(key, _)| key >> self.shift);
        self.ready = NIL;
        self.ready_key = 0;
        self.order = order;
    }

    /// Number of pending events.
    pub fn len(&self) -> usize {
        self.len
    }

    /// Whether no event is pending.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }
}

impl<E: Copy> Default for CalendarQueue<E> {
    fn default() -> Self {
        Self::new()
    }
}

/// The engine's calendar: a small heap for the next arrival of each open
/// stream (at most one entry per stream) beside a [`CalendarQueue`] for
/// everything else, sharing one sequence so that together they keep the
/// exact (time, sequence) order of a single [`Calendar`]. Arrivals are half
/// of all events in a loss system, and a heap of a handful of entries costs
/// far less than any general calendar: a deliberate performance shortcut.
///
/// A stream's next arrival is scheduled as soon as its current one is
/// taken out; the taken entry stays at the top of the arrival heap until
/// then and is overwritten in place (one sift instead of a pop and a push).
pub struct Lanes<E: Copy> {
    arrivals: BinaryHeap<Entry<u32>>,
    /// The top of `arrivals` has been taken out but not yet removed.
    taken: bool,
    main: CalendarQueue<E>,
}

/// What `Lanes::pop` returns.
pub enum Next<E> {
    /// The next arrival of open stream (index).
    Arrival(u32),
    /// Any other event.
    Event(E),
}

/// The lane of the next event, from [`Lanes::peek`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Lane {
    /// The arrival heap.
    Arrivals,
    /// The calendar queue.
    Main,
}

impl<E: Copy> Lanes<E> {
    /// Empty lanes.
    pub fn new() -> Self {
        Lanes {
            arrivals: BinaryHeap::new(),
            taken: false,
            main: CalendarQueue::new(),
        }
    }

    /// Remove an arrival taken out and not replaced.
    #[inline(always)]
    fn settle(&mut self) {
        if self.taken {
            self.taken = false;
            self.arrivals.pop();
        }
    }

    /// Schedule the next arrival of open stream `stream` at `time`.
    #[inline]
    pub fn schedule_arrival(&mut self, time: f64, stream: u32) {
        debug_assert!(time >= 0.0 && time.is_finite(), "arrival time {time}");
        let entry = Entry {
            time_bits: time.to_bits(),
            seq: self.main.next_seq(),
            event: stream,
        };
        if self.taken {
            self.taken = false;
            if let Some(mut top) = self.arrivals.peek_mut() {
                *top = entry;
                return;
            }
        }
        self.arrivals.push(entry);
    }

    /// Schedule `event` at `time`.
    #[inline(always)]
    pub fn schedule(&mut self, time: f64, event: E) {
        self.main.schedule(time, event);
    }

    /// Time and lane of the next event (None: nothing pending).
    #[inline(always)]
    pub fn peek(&mut self) -> Option<(f64, Lane)> {
        self.settle();
        match (self.arrivals.peek(), self.main.peek_entry()) {
            (None, None) => None,
            (Some(a), None) => Some((f64::from_bits(a.time_bits), Lane::Arrivals)),
            (None, Some(m)) => Some((f64::from_bits(m.0), Lane::Main)),
            (Some(a), Some(m)) => Some(if (a.time_bits, a.seq) < m {
                (f64::from_bits(a.time_bits), Lane::Arrivals)
            } else {
                (f64::from_bits(m.0), Lane::Main)
            }),
        }
    }

    /// Take out the next event of `lane`, which [`Lanes::peek`] has just
    /// named (with nothing scheduled since).
    #[inline(always)]
    pub fn take(&mut self, lane: Lane) -> Option<(f64, Next<E>)> {
        match lane {
            Lane::Arrivals => {
                debug_assert!(!self.taken);
                let top = self.arrivals.peek()?;
                self.taken = true;
                Some((f64::from_bits(top.time_bits), Next::Arrival(top.event)))
            }
            Lane::Main => self.main.pop().map(|(t, e)| (t, Next::Event(e))),
        }
    }

    /// Time of the next event of either lane.
    #[inline]
    pub fn peek_time(&mut self) -> Option<f64> {
        self.peek().map(|(t, _)| t)
    }

    /// Remove and return the next event of either lane with its time.
    #[inline]
    pub fn pop(&mut self) -> Option<(f64, Next<E>)> {
        let (_, lane) = self.peek()?;
        self.take(lane)
    }

    /// Remove and return the next event of the main lane, ignoring arrivals
    /// (for the end-of-run sweep).
    pub fn pop_main(&mut self) -> Option<E> {
        self.main.pop().map(|(_, e)| e)
    }
}

impl<E: Copy> Default for Lanes<E> {
    fn default() -> Self {
        Self::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{RngExt, SeedableRng};

    #[test]
    fn earliest_first_and_ties_in_insertion_order() {
        let mut c = Calendar::with_capacity(4);
        c.schedule(2.0, 'a');
        c.schedule(1.0, 'b');
        c.schedule(2.0, 'c');
        c.schedule(0.0, 'd');
        c.schedule(1.0, 'e');
        let order: Vec<char> = std::iter::from_fn(|| c.pop().map(|(_, e)| e)).collect();
        assert_eq!(order, vec!['d', 'b', 'e', 'a', 'c']);
    }

    /// Random use of a calendar queue against the reference heap: phases of
    /// growth and decline (resizes both ways), time scales from
    /// microseconds to days (re-measured days, far jumps), and many equal
    /// times (a coarse grid, zero delays).
    fn against_reference(seed: u64, grid: f64, rounds: u32) {
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(seed);
        let mut queue = CalendarQueue::new();
        let mut reference = Calendar::with_capacity(8);
        let mut now = 0.0f64;
        for round in 0..rounds {
            let phase = (round / 5_000) % 4;
            let push_share = [0.6, 0.5, 0.4, 0.5][phase as usize];
            let scale = 10f64.powi((round / 20_000 % 6) as i32 - 4) * 1e3;
            if rng.random::<f64>() < push_share || reference.is_empty() {
                let mut dt = rng.random::<f64>() * scale * rng.random::<f64>();
                if grid > 0.0 {
                    dt = (dt / grid).floor() * grid;
                } else if rng.random::<f64>() < 0.2 {
                    dt = 0.0;
                }
                queue.schedule(now + dt, round);
                reference.schedule(now + dt, round);
            } else {
                assert_eq!(queue.peek_time(), reference.peek_time());
                let want = reference.pop();
                assert_eq!(queue.pop(), want);
                now = want.map_or(now, |w| w.0);
            }
            assert_eq!(queue.len(), reference.len());
        }
        while let Some(want) = reference.pop() {
            assert_eq!(queue.pop(), Some(want));
        }
        assert_eq!(queue.pop(), None);
        assert!(queue.is_empty());
    }

    #[test]
    fn calendar_queue_matches_the_reference() {
        against_reference(11, 0.0, 130_000);
        against_reference(12, 0.25, 130_000);
        against_reference(13, 1e-3, 130_000);
    }

    #[test]
    fn calendar_queue_takes_events_before_a_peeked_one() {
        // Lanes peek the queue, then may take an earlier arrival whose
        // handling schedules before the peeked event.
        let mut q = CalendarQueue::new();
        for i in 0..100u32 {
            q.schedule(1000.0 + f64::from(i), i);
        }
        assert_eq!(q.peek_time(), Some(1000.0));
        q.schedule(10.0, 500);
        q.schedule(1000.0, 501);
        assert_eq!(q.pop(), Some((10.0, 500)));
        assert_eq!(q.pop(), Some((1000.0, 0)));
        assert_eq!(q.pop(), Some((1000.0, 501)));
        assert_eq!(q.pop(), Some((1001.0, 1)));
    }

    #[test]
    fn lanes_keep_one_order() {
        let mut l = Lanes::new();
        l.schedule(1.0, 'x');
        l.schedule_arrival(1.0, 7);
        l.schedule(0.5, 'y');
        l.schedule_arrival(2.0, 8);
        l.schedule(1.0, 'z');
        let order: Vec<String> = std::iter::from_fn(|| {
            l.pop().map(|(t, n)| match n {
                Next::Arrival(s) => format!("{t}:a{s}"),
                Next::Event(e) => format!("{t}:{e}"),
            })
        })
        .collect();
        assert_eq!(order, vec!["0.5:y", "1:x", "1:a7", "1:z", "2:a8"]);
    }

    #[test]
    fn lanes_match_the_reference() {
        // Arrivals of three streams and other events, with ties across the
        // lanes, against one reference heap.
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(21);
        let mut lanes = Lanes::new();
        let mut reference = Calendar::with_capacity(8);
        for s in 0..3u32 {
            lanes.schedule_arrival(0.0, s);
            reference.schedule(0.0, (true, s));
        }
        let mut done = 0;
        while done < 100_000 {
            let (t, next) = lanes.pop().expect("never empty");
            let want = reference.pop().expect("never empty");
            let got = match next {
                Next::Arrival(s) => (true, s),
                Next::Event(e) => (false, e),
            };
            assert_eq!((t, got), want);
            done += 1;
            if got.0 {
                // Next arrival of the stream on a coarse grid; a departure.
                let gap = (rng.random::<f64>() * 4.0).floor() * 0.5;
                lanes.schedule_arrival(t + gap, got.1);
                reference.schedule(t + gap, (true, got.1));
                let hold = (rng.random::<f64>() * 40.0).floor() * 0.5;
                lanes.schedule(t + hold, done);
                reference.schedule(t + hold, (false, done));
            }
        }
    }
}
