//! Traffic per interval: calls, outcomes and carried traffic on a grid of
//! equal intervals of real time, labelled by the local clock.
//!
//! # The grid and the local clock
//!
//! A call starting at local clock time `L` (its instant plus its own zone
//! offset `o`) belongs to the interval whose local start is `L` rounded down
//! to the interval length; that interval covers the real time
//! `[start - o, start - o + interval)`. Intervals are kept by their real
//! start, so calls that span several intervals are split by real time: each
//! interval receives the part of the holding time that falls inside it.
//! Carried traffic in erlangs is that time divided by the interval length
//! (Erlang's definition: the mean number of busy servers).
//!
//! Where the offset changes (daylight saving time), the clock jumps but real
//! time does not: on the day the clocks go forward by an hour the local day
//! has 23 hours of intervals, on the day they go back it has 25 (the
//! repeated hour appears twice, once with each offset). An interval in which
//! no call starts takes the offset of the interval before it, so the day on
//! which a change falls is only right when calls start on both sides of the
//! change (true of any real traffic). A call that spans a change is split by
//! real time, so its carried traffic is exact.
//!
//! Naive times (no offset) and Unix seconds carry offset 0: for naive times
//! the local clock is taken as given, so a repeated hour overlaps itself and
//! a skipped hour is empty. Give an offset where the clock changes.
//!
//! # The whole-day timeline
//!
//! The timeline runs from local midnight of the first call's day to local
//! midnight after the last call's day, every interval present (zero where
//! nothing happened): a record file is taken to cover whole local days.
//! Calls that began before the file's first row are not in it, so the first
//! intervals of the first day may be low; holding time that runs past the
//! last day's midnight is left out. Export whole days.

use super::days::DayFilter;
use super::reader::{CallRecord, Outcome};
use super::time::{DAY_S, Date};
use super::{RecordsError, Totals};
use std::collections::HashMap;

/// Most intervals a timeline may hold (about 28 years of quarter hours).
pub const MAX_INTERVALS: u64 = 1_000_000;

/// Raw counters of one interval while reading.
#[derive(Debug, Clone, Copy)]
struct Cell {
    offset_s: i32,
    offset_from_start: bool, // the offset is that of a call starting here
    calls: u64,
    answered: u64,
    blocked: u64,
    abandoned: u64,
    carried_s: f64, // holding time inside the interval, answered calls
}

impl Cell {
    fn new(offset_s: i32, from_start: bool) -> Self {
        Cell {
            offset_s,
            offset_from_start: from_start,
            calls: 0,
            answered: 0,
            blocked: 0,
            abandoned: 0,
            carried_s: 0.0,
        }
    }
}

/// Collects calls into intervals while the file streams past. Memory grows
/// with the number of intervals that saw traffic, never with the rows.
pub struct Accumulator {
    interval_s: i64,
    first_offset: Option<i32>,
    index: HashMap<i64, usize>, // real start (s) -> cells[i]
    cells: Vec<(i64, Cell)>,
    last: Option<(i64, usize)>, // the last interval looked up (files are mostly in time order)
}

impl Accumulator {
    /// An empty accumulator for intervals of `interval_s` seconds (a divisor of 3600).
    pub fn new(interval_s: u32) -> Self {
        Accumulator {
            interval_s: i64::from(interval_s),
            first_offset: None,
            index: HashMap::new(),
            cells: Vec::new(),
            last: None,
        }
    }

    fn cell(&mut self, real_start: i64, offset_s: i32, from_start: bool) -> &mut Cell {
        let i = match self.last {
            Some((r, i)) if r == real_start => i,
            _ => {
                let next = self.cells.len();
                let i = *self.index.entry(real_start).or_insert(next);
                if i == next {
                    self.cells
                        .push((real_start, Cell::new(offset_s, from_start)));
                }
                self.last = Some((real_start, i));
                i
            }
        };
        let c = &mut self.cells[i].1;
        if from_start && !c.offset_from_start {
            c.offset_s = offset_s;
            c.offset_from_start = true;
        }
        c
    }

    /// Add one call: counted in the interval where it starts; an answered
    /// call (or one without an outcome) adds its holding time, split over the
    /// intervals it spans. Blocked and abandoned calls held no server and
    /// add no carried traffic.
    ///
    /// Fails, returning the first call's offset, when the call's offset does
    /// not put it on the same grid as the first call's (e.g. +05:30 beside
    /// +00:00 with hour-long intervals).
    pub fn add(&mut self, rec: &CallRecord) -> Result<(), i32> {
        let i = self.interval_s;
        let o = rec.start.offset_s;
        let first = *self.first_offset.get_or_insert(o);
        if (i64::from(o) - i64::from(first)).rem_euclid(i) != 0 {
            return Err(first);
        }
        let local = rec.start.local_s();
        let label = (local / i as f64).floor() as i64 * i;
        let real_start = label - i64::from(o);
        let cell = self.cell(real_start, o, true);
        cell.calls += 1;
        match rec.outcome {
            Some(Outcome::Blocked) => cell.blocked += 1,
            Some(Outcome::Abandoned) => cell.abandoned += 1,
            Some(Outcome::Answered) | None => cell.answered += 1,
        }
        if matches!(rec.outcome, Some(Outcome::Blocked | Outcome::Abandoned))
            || rec.duration_s <= 0.0
        {
            return Ok(());
        }
        let t0 = rec.start.utc_s;
        let t1 = t0 + rec.duration_s;
        let mut r = real_start;
        loop {
            let end = (r + i) as f64;
            let inside = t1.min(end) - t0.max(r as f64);
            if inside > 0.0 {
                self.cell(r, o, false).carried_s += inside;
            }
            if t1 <= end {
                break;
            }
            r += i;
        }
        Ok(())
    }

    /// The whole-day timeline (see the module doc). `days` marks the days to
    /// analyse. Fails when the span exceeds [`MAX_INTERVALS`].
    pub fn finish(self, days: Option<&DayFilter>, file: &str) -> Result<Timeline, RecordsError> {
        let i = self.interval_s;
        let mut cells = self.cells;
        cells.sort_by_key(|(r, _)| *r);
        // The last day is that of the last call to start: holding time that
        // spills past its midnight belongs to a day with no calls measured.
        let last_start = cells.iter().rev().find(|(_, c)| c.calls > 0);
        let (Some(&(r0, c0)), Some(&(rn, cn))) = (cells.first(), last_start) else {
            return Ok(Timeline {
                interval_s: i as u32,
                intervals: Vec::new(),
                days: Vec::new(),
            });
        };
        let first_day = (r0 + i64::from(c0.offset_s)).div_euclid(DAY_S);
        let last_day = (rn + i64::from(cn.offset_s)).div_euclid(DAY_S);
        let start = first_day * DAY_S - i64::from(c0.offset_s);
        let end = (last_day + 1) * DAY_S - i64::from(cn.offset_s);
        let count = ((end - start).max(0) / i) as u64;
        if count > MAX_INTERVALS {
            return Err(RecordsError::Span {
                file: file.to_string(),
                first: Date(first_day).to_string(),
                last: Date(last_day).to_string(),
                intervals: count,
                limit: MAX_INTERVALS,
            });
        }
        let mut intervals = Vec::with_capacity(count as usize);
        let mut next = cells.iter().peekable();
        let mut offset = c0.offset_s;
        let mut r = start;
        while r < end {
            let mut cell = Cell::new(offset, false);
            while let Some(&&(cr, c)) = next.peek() {
                if cr > r {
                    break;
                }
                if cr == r {
                    cell = c;
                }
                next.next();
            }
            offset = cell.offset_s;
            let label = r + i64::from(offset);
            intervals.push(Interval {
                start_utc_s: r,
                offset_s: offset,
                day: label.div_euclid(DAY_S),
                clock_s: label.rem_euclid(DAY_S) as u32,
                calls: cell.calls,
                answered: cell.answered,
                blocked: cell.blocked,
                abandoned: cell.abandoned,
                carried_traffic: cell.carried_s / i as f64,
                offered_traffic: cell.carried_s / i as f64,
            });
            r += i;
        }
        let mut day_list: Vec<Day> = Vec::new();
        for (k, iv) in intervals.iter().enumerate() {
            match day_list.last_mut() {
                Some(d) if d.day == iv.day && d.first + d.len == k => d.len += 1,
                _ => day_list.push(Day {
                    day: iv.day,
                    first: k,
                    len: 1,
                    selected: days.is_none_or(|f| f.selects(iv.day)),
                }),
            }
        }
        Ok(Timeline {
            interval_s: i as u32,
            intervals,
            days: day_list,
        })
    }
}

/// One interval of the timeline.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Interval {
    /// Real start: seconds since 1970-01-01T00:00:00Z (naive times: local).
    pub start_utc_s: i64,
    /// Zone offset of the local clock in this interval (s).
    pub offset_s: i32,
    /// Local day (days since 1970-01-01).
    pub day: i64,
    /// Local clock time of the start (s after local midnight).
    pub clock_s: u32,
    /// Call attempts starting here.
    pub calls: u64,
    /// Of which answered (or without an outcome).
    pub answered: u64,
    /// Of which blocked.
    pub blocked: u64,
    /// Of which abandoned.
    pub abandoned: u64,
    /// Carried traffic (erlangs): answered holding time inside the interval
    /// divided by its length.
    pub carried_traffic: f64,
    /// Offered traffic estimate (erlangs): see [`Timeline::set_offered`].
    pub offered_traffic: f64,
}

impl Interval {
    /// Local clock time of the start, seconds since local midnight of 1970-01-01.
    pub fn local_start_s(&self) -> i64 {
        self.start_utc_s + i64::from(self.offset_s)
    }
}

/// A local day of the timeline: `intervals[first..first + len]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Day {
    /// Days since 1970-01-01 (local).
    pub day: i64,
    /// Index of its first interval.
    pub first: usize,
    /// Number of intervals (96 quarter hours on an ordinary day; 92 or 100
    /// when the clocks change by an hour).
    pub len: usize,
    /// Whether the day filter keeps it for the analysis.
    pub selected: bool,
}

/// Every interval from the first day's midnight to the last day's end.
#[derive(Debug, Clone, PartialEq)]
pub struct Timeline {
    /// Interval length (s).
    pub interval_s: u32,
    /// The intervals in real-time order.
    pub intervals: Vec<Interval>,
    /// The local days, in order.
    pub days: Vec<Day>,
}

impl Timeline {
    /// The intervals of one day.
    pub fn of(&self, day: &Day) -> &[Interval] {
        &self.intervals[day.first..day.first + day.len]
    }

    /// The days kept by the day filter.
    pub fn selected_days(&self) -> impl Iterator<Item = &Day> {
        self.days.iter().filter(|d| d.selected)
    }

    /// Clock positions per day: intervals in 24 hours.
    pub fn slots_per_day(&self) -> usize {
        (DAY_S / i64::from(self.interval_s)) as usize
    }

    /// Calls by outcome on the selected days.
    pub fn totals(&self) -> Totals {
        let mut t = Totals::default();
        for d in self.selected_days() {
            for iv in self.of(d) {
                t.calls += iv.calls;
                t.answered += iv.answered;
                t.blocked += iv.blocked;
                t.abandoned += iv.abandoned;
            }
        }
        t
    }

    /// Set every interval's offered traffic estimate:
    ///
    /// ```text
    /// offered = carried + (blocked + abandoned) * mean_holding / interval
    /// ```
    ///
    /// Each attempt that was not answered is taken to have wanted the mean
    /// holding time of the answered calls, counted in the interval where it
    /// started. Assumptions: unanswered callers would have held as long as
    /// answered ones; every attempt is a fresh call. Redials after a busy
    /// signal are counted again, so where callers redial the estimate
    /// overstates the fresh demand; the fresh offered traffic then lies
    /// between the carried traffic and this figure. Without outcomes the
    /// estimate is the carried traffic.
    pub fn set_offered(&mut self, mean_holding_s: f64) {
        let per_attempt = mean_holding_s / f64::from(self.interval_s);
        for iv in &mut self.intervals {
            iv.offered_traffic =
                iv.carried_traffic + (iv.blocked + iv.abandoned) as f64 * per_attempt;
        }
    }
}
