//! The event calendar: a binary min-heap keyed by (time, sequence). The
//! sequence number grows with every insertion, so events at the same instant
//! leave in the order they were scheduled and runs are reproducible.
//!
//! Allocation-free in steady state: the heap's storage is reused once it has
//! grown to the largest number of pending events.

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

/// A 4-ary min-heap keyed by (time bits, sequence). Pops dominate the
/// engine's profile; a 4-ary heap halves the depth of a binary one and its
/// four children share a cache line or two, which measured about 15% faster
/// on the reference benchmark than `std::collections::BinaryHeap` (see
/// DEVELOPERS.md). A deliberate performance shortcut.
struct QuadHeap<E: Copy> {
    items: Vec<(u64, u64, E)>,
}

impl<E: Copy> QuadHeap<E> {
    fn with_capacity(capacity: usize) -> Self {
        QuadHeap {
            items: Vec::with_capacity(capacity),
        }
    }

    #[inline]
    fn peek(&self) -> Option<&(u64, u64, E)> {
        self.items.first()
    }

    #[inline]
    fn push(&mut self, item: (u64, u64, E)) {
        let mut i = self.items.len();
        self.items.push(item);
        let key = (item.0, item.1);
        while i > 0 {
            let parent = (i - 1) / 4;
            let p = self.items[parent];
            if (p.0, p.1) <= key {
                break;
            }
            self.items[i] = p;
            i = parent;
        }
        self.items[i] = item;
    }

    #[inline]
    fn pop(&mut self) -> Option<(u64, u64, E)> {
        let last = self.items.pop()?;
        if self.items.is_empty() {
            return Some(last);
        }
        let top = self.items[0];
        let n = self.items.len();
        let key = (last.0, last.1);
        let mut i = 0;
        loop {
            let first = 4 * i + 1;
            if first >= n {
                break;
            }
            let end = (first + 4).min(n);
            let mut best = first;
            let mut best_key = (self.items[first].0, self.items[first].1);
            for c in first + 1..end {
                let k = (self.items[c].0, self.items[c].1);
                if k < best_key {
                    best = c;
                    best_key = k;
                }
            }
            if key <= best_key {
                break;
            }
            self.items[i] = self.items[best];
            i = best;
        }
        self.items[i] = last;
        Some(top)
    }
}

/// Two calendars sharing one sequence: a small lane for the next arrival of
/// each open stream (at most one entry per stream) and the main lane for
/// everything else. Arrivals are half of all events in a loss system, and a
/// heap of a handful of entries costs far less than the main heap: a
/// deliberate shortcut that keeps the exact (time, sequence) order of a
/// single calendar.
pub struct Lanes<E: Copy> {
    arrivals: BinaryHeap<Entry<u32>>,
    main: QuadHeap<E>,
    seq: u64,
}

/// What `Lanes::pop` returns.
pub enum Next<E> {
    /// The next arrival of open stream (index).
    Arrival(u32),
    /// Any other event.
    Event(E),
}

impl<E: Copy> Lanes<E> {
    /// Empty lanes with room for `capacity` main events.
    pub fn with_capacity(capacity: usize) -> Self {
        Lanes {
            arrivals: BinaryHeap::new(),
            main: QuadHeap::with_capacity(capacity),
            seq: 0,
        }
    }

    /// Schedule the next arrival of open stream `stream` at `time`.
    #[inline]
    pub fn schedule_arrival(&mut self, time: f64, stream: u32) {
        debug_assert!(time >= 0.0 && time.is_finite(), "arrival time {time}");
        self.seq += 1;
        self.arrivals.push(Entry {
            time_bits: time.to_bits(),
            seq: self.seq,
            event: stream,
        });
    }

    /// Schedule `event` at `time`.
    #[inline]
    pub fn schedule(&mut self, time: f64, event: E) {
        debug_assert!(time >= 0.0 && time.is_finite(), "event time {time}");
        self.seq += 1;
        self.main.push((time.to_bits(), self.seq, event));
    }

    #[inline]
    fn arrival_first(&self) -> Option<bool> {
        match (self.arrivals.peek(), self.main.peek()) {
            (None, None) => None,
            (Some(_), None) => Some(true),
            (None, Some(_)) => Some(false),
            (Some(a), Some(m)) => Some((a.time_bits, a.seq) < (m.0, m.1)),
        }
    }

    /// Time of the next event of either lane.
    #[inline]
    pub fn peek_time(&self) -> Option<f64> {
        let bits = match self.arrival_first()? {
            true => self.arrivals.peek()?.time_bits,
            false => self.main.peek()?.0,
        };
        Some(f64::from_bits(bits))
    }

    /// Remove and return the next event of either lane with its time.
    #[inline]
    pub fn pop(&mut self) -> Option<(f64, Next<E>)> {
        if self.arrival_first()? {
            self.arrivals
                .pop()
                .map(|e| (f64::from_bits(e.time_bits), Next::Arrival(e.event)))
        } else {
            self.main
                .pop()
                .map(|e| (f64::from_bits(e.0), Next::Event(e.2)))
        }
    }

    /// Remove and return the next main-lane event, ignoring arrivals (for
    /// the end-of-run sweep).
    pub fn pop_main(&mut self) -> Option<E> {
        self.main.pop().map(|e| e.2)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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

    #[test]
    fn quad_heap_orders_like_a_sort() {
        use rand::{RngExt, SeedableRng};
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(5);
        let mut h = QuadHeap::with_capacity(8);
        let mut reference = Vec::new();
        let mut seq = 0u64;
        for round in 0..20_000u32 {
            // Mixed pushes and pops with many equal times.
            if rng.random::<f64>() < 0.55 || h.items.is_empty() {
                seq += 1;
                let t: u64 = rng.random_range(0..50);
                h.push((t, seq, round));
                reference.push((t, seq, round));
            } else {
                reference.sort();
                let want = reference.remove(0);
                assert_eq!(h.pop(), Some(want));
            }
        }
        reference.sort();
        for want in reference {
            assert_eq!(h.pop(), Some(want));
        }
        assert_eq!(h.pop(), None);
    }

    #[test]
    fn lanes_keep_one_order() {
        let mut l = Lanes::with_capacity(4);
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
}
