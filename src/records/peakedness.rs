//! Peakedness of the arrival stream: the variance-to-mean ratio Z of the
//! number of calls per interval, with the daily rise and fall of the mean
//! taken out. Z = 1 for Poisson arrivals; Z > 1 for peaked (bursty or
//! overflow-like) traffic, Z < 1 for smooth traffic. Owns this measure only.
//!
//! # Methods
//!
//! **Day to day** (two or more analysed days): each clock slot s has its own
//! mean m_s, estimated by the mean over the D_s days that have the slot.
//! With SS_s the sum of squared deviations of the slot's counts from m_s,
//! E\[SS_s\] = (D_s - 1) Var_s, so
//!
//! ```text
//! Z = sum_s SS_s / sum_s (D_s - 1) m_s
//! ```
//!
//! is an unbiased-ratio estimate of Var/mean whatever the daily profile (a
//! one-way analysis of variance with clock slots as groups). It assumes the
//! days analysed are alike (choose them with `--days`, e.g. weekdays).
//!
//! **Successive differences** (one day): for a slowly varying mean,
//! E[(n_{i+1} - n_i)^2] = 2 Var, so Z = sum (n_{i+1} - n_i)^2 / sum
//! (n_i + n_{i+1}) (von Neumann's mean square successive difference, 1941).
//! A fast-changing profile inflates it.
//!
//! The standard error is the one for Poisson counts, where a squared
//! deviation of a count with mean m has variance about 2m^2 + m (Poisson
//! fourth central moment 3m^2 + m); it tells whether Z differs from 1 by more
//! than chance. Redials after a busy signal or an abandoned wait raise Z.

use super::intervals::Timeline;

/// How the peakedness was measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PeakednessMethod {
    /// Deviations from each clock slot's mean over the days analysed.
    DayToDay {
        /// Days analysed.
        days: usize,
    },
    /// Successive differences within a single day.
    SuccessiveDifferences,
}

impl PeakednessMethod {
    /// The method in plain words.
    pub fn describe(&self) -> String {
        match self {
            PeakednessMethod::DayToDay { days } => {
                format!("deviations from each clock interval's mean over {days} days")
            }
            PeakednessMethod::SuccessiveDifferences => {
                "successive differences within one day".to_string()
            }
        }
    }
}

/// Variance-to-mean ratio of calls per interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Peakedness {
    /// Z: variance / mean, corrected for the varying mean.
    pub value: f64,
    /// Standard error of Z for Poisson arrivals.
    pub standard_error: f64,
    /// How it was measured.
    pub method: PeakednessMethod,
    /// Interval counts used.
    pub intervals: usize,
}

impl Peakedness {
    /// Whether Z lies within two standard errors of 1 (Poisson arrivals are
    /// a fair assumption by this test).
    pub fn poisson_fair(&self) -> bool {
        (self.value - 1.0).abs() <= 2.0 * self.standard_error
    }
}

/// Measure the peakedness over the selected days of `t` (None when there
/// are no calls, or fewer than two intervals).
pub fn measure(t: &Timeline) -> Option<Peakedness> {
    let days = t.selected_days().count();
    if days >= 2 {
        // Counts per interval for each clock slot, over the days analysed
        // (two on the day the clocks go back, none in a skipped hour).
        let mut by_slot: Vec<Vec<f64>> = vec![Vec::new(); t.slots_per_day()];
        for d in t.selected_days() {
            for iv in t.of(d) {
                by_slot[(iv.clock_s / t.interval_s) as usize].push(iv.calls as f64);
            }
        }
        let (mut ss, mut denominator, mut var_ss, mut used) = (0.0, 0.0, 0.0, 0usize);
        for counts in &by_slot {
            if counts.len() < 2 {
                continue;
            }
            let k = counts.len() as f64;
            let m = counts.iter().sum::<f64>() / k;
            ss += counts.iter().map(|c| (c - m) * (c - m)).sum::<f64>();
            denominator += (k - 1.0) * m;
            var_ss += (k - 1.0) * (2.0 * m * m + m);
            used += counts.len();
        }
        if denominator <= 0.0 {
            return None;
        }
        return Some(Peakedness {
            value: ss / denominator,
            standard_error: var_ss.sqrt() / denominator,
            method: PeakednessMethod::DayToDay { days },
            intervals: used,
        });
    }
    let day = t.selected_days().next()?;
    let counts: Vec<f64> = t.of(day).iter().map(|iv| iv.calls as f64).collect();
    let (mut num, mut den, mut var) = (0.0, 0.0, 0.0);
    for w in counts.windows(2) {
        let d = w[1] - w[0];
        let m = 0.5 * (w[0] + w[1]);
        num += d * d;
        den += 2.0 * m;
        // d is the difference of two counts of mean m: E d^2 = 2m,
        // Var d^2 = 8m^2 + 2m for Poisson counts.
        var += 8.0 * m * m + 2.0 * m;
    }
    (den > 0.0).then(|| Peakedness {
        value: num / den,
        standard_error: var.sqrt() / den,
        method: PeakednessMethod::SuccessiveDifferences,
        intervals: counts.len(),
    })
}
