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
}
