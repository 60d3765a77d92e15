//! Callers' patience from waiting times in the records: how long a caller
//! waits in the queue before hanging up. Owns the censored estimate only;
//! the scenario writer turns it into a patience law.
//!
//! # Method
//!
//! An abandoned call's wait is its patience (an observed event); an
//! answered call's wait is a lower bound of its caller's patience (a
//! right-censored observation: the caller would have waited at least that
//! long). For exponential patience of rate theta the log-likelihood of d
//! abandonments among waits w_1..w_n is d ln theta - theta sum w_i, so the
//! maximum-likelihood estimate is
//!
//! ```text
//! theta = d / W,   W = total waiting time of every caller who waited (abandoned or answered)
//! mean patience = 1 / theta = W / d
//! ```
//!
//! with the asymptotic standard error theta / sqrt(d) from the Fisher
//! information d / theta^2 (the exponential law with right censoring,
//! e.g. Lawless, "Statistical Models and Methods for Lifetime Data", 2003,
//! section 2.2; recalled from memory). Using only the abandoned calls'
//! waits (ignoring the censoring) would understate the patience: the
//! callers who were answered quickly never showed how long they would
//! have waited. The estimate assumes patience does not depend on the wait
//! the caller is offered (no announcements that change it) and that
//! callers are alike.
//!
//! Blocked calls never waited and count in neither sum; rows whose wait
//! is unknown (an empty field) are counted apart and left out.

/// Waits of the analysed calls, summed for the estimate.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct WaitTally {
    /// Abandoned calls with a known wait (the events).
    pub abandoned: u64,
    /// Answered calls with a known wait (censored observations).
    pub answered: u64,
    /// Total wait of those calls (s).
    pub total_wait_s: f64,
    /// Total wait of the abandoned ones alone (s).
    pub abandoned_wait_s: f64,
    /// Answered or abandoned calls whose wait field was empty.
    pub unknown: u64,
}

impl WaitTally {
    /// Count one answered (`abandoned` false) or abandoned call's wait.
    pub fn add(&mut self, abandoned: bool, wait_s: Option<f64>) {
        let Some(w) = wait_s else {
            self.unknown += 1;
            return;
        };
        self.total_wait_s += w;
        if abandoned {
            self.abandoned += 1;
            self.abandoned_wait_s += w;
        } else {
            self.answered += 1;
        }
    }

    /// The censored estimate of exponential patience; `None` without an
    /// abandoned call with a known wait, or when every wait is zero.
    pub fn exponential(&self) -> Option<PatienceEstimate> {
        if self.abandoned == 0 || !(self.total_wait_s > 0.0) {
            return None;
        }
        let d = self.abandoned as f64;
        let rate_per_s = d / self.total_wait_s;
        Some(PatienceEstimate {
            rate_per_s,
            rate_standard_error: rate_per_s / d.sqrt(),
            mean_s: 1.0 / rate_per_s,
            mean_standard_error_s: 1.0 / rate_per_s / d.sqrt(),
        })
    }
}

/// Exponential patience fitted to censored waits (module doc).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PatienceEstimate {
    /// Abandonment rate of a waiting caller (per second).
    pub rate_per_s: f64,
    /// Its asymptotic standard error, rate / sqrt(abandoned).
    pub rate_standard_error: f64,
    /// Mean patience (s), 1 / rate.
    pub mean_s: f64,
    /// Its asymptotic standard error by the delta method, mean / sqrt(abandoned).
    pub mean_standard_error_s: f64,
}

/// The method, in one line, for reports and the scenario comment.
pub const METHOD: &str = "exponential patience by maximum likelihood with censored waits: rate = abandoned calls / total waiting time of every caller who waited (abandoned or answered), standard error rate / sqrt(abandoned)";

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worked_by_hand() {
        // Two abandoned after 30 s and 50 s, three answered after 20, 0
        // and 100 s: theta = 2 / 200 per second, mean 100 s, se 100/sqrt 2.
        let mut t = WaitTally::default();
        for (abandoned, w) in [
            (true, 30.0),
            (true, 50.0),
            (false, 20.0),
            (false, 0.0),
            (false, 100.0),
        ] {
            t.add(abandoned, Some(w));
        }
        t.add(false, None);
        let e = t.exponential().unwrap();
        assert_eq!((t.abandoned, t.answered, t.unknown), (2, 3, 1));
        assert!((e.rate_per_s - 0.01).abs() < 1e-15);
        assert!((e.mean_s - 100.0).abs() < 1e-12);
        assert!((e.mean_standard_error_s - 100.0 / 2f64.sqrt()).abs() < 1e-12);
        // No abandonment, or only zero waits: nothing to fit.
        let mut none = WaitTally::default();
        none.add(false, Some(40.0));
        assert_eq!(none.exponential(), None);
        let mut zero = WaitTally::default();
        zero.add(true, Some(0.0));
        assert_eq!(zero.exponential(), None);
    }
}
