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
//!
//! # Life table
//!
//! Beside the exponential fit, a non-parametric view that does not assume
//! a law: the share of callers still willing to wait after t seconds, by
//! the actuarial life-table estimator (Cutler and Ederer 1958) on bins of
//! [`BIN_S`] seconds, kept in fixed memory. In bin j with n_j callers still
//! waiting at its start, d_j abandoning and c_j answered inside it, the
//! effective number at risk is n_j - c_j / 2 (answers spread evenly over
//! the bin) and S(end of j) = prod (1 - d_j / (n_j - c_j / 2)); its
//! standard error is Greenwood's, S sqrt(sum d_j / (n'_j (n'_j - d_j))).
//! Answered calls that did not wait (wait 0) were never at risk and are
//! left out of the table; they add nothing to the exponential fit either.
//! Read against exp(-t / mean), it shows whether the exponential patience
//! is fair.

/// Width of a life-table bin (s).
pub const BIN_S: f64 = 5.0;

/// Life-table bins: waits of an hour or more share the last one.
const BINS: usize = 720;

/// Waits at which the life table is reported (s).
pub const SURVIVAL_AT_S: [f64; 5] = [15.0, 30.0, 60.0, 120.0, 300.0];

/// Waits of the analysed calls, summed for the estimate.
#[derive(Debug, Clone, Default, PartialEq)]
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
    /// Per life-table bin: (abandoned, answered after a wait) in it.
    bins: Vec<(u64, u64)>,
}

impl WaitTally {
    /// Count one answered (`abandoned` false) or abandoned call's wait.
    pub fn add(&mut self, abandoned: bool, wait_s: Option<f64>) {
        let Some(w) = wait_s else {
            self.unknown += 1;
            return;
        };
        self.total_wait_s += w;
        if self.bins.is_empty() {
            self.bins = vec![(0, 0); BINS];
        }
        let bin = ((w / BIN_S) as usize).min(BINS - 1);
        if abandoned {
            self.bins[bin].0 += 1;
        } else if w > 0.0 {
            self.bins[bin].1 += 1;
        }
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

impl WaitTally {
    /// The life table at `t_s` (a multiple of [`BIN_S`] below an hour):
    /// the share of callers still willing to wait after `t_s` seconds and
    /// Greenwood's standard error; `None` when nobody waited that long.
    pub fn survival(&self, t_s: f64) -> Option<(f64, f64)> {
        let end = ((t_s / BIN_S).round() as usize).min(BINS - 1);
        let mut at_risk: f64 = self.bins.iter().map(|b| (b.0 + b.1) as f64).sum();
        let (mut s, mut greenwood) = (1.0, 0.0);
        for &(d, c) in self.bins.iter().take(end) {
            let (d, c) = (d as f64, c as f64);
            let effective = at_risk - c / 2.0;
            if !(effective > 0.0) {
                return None;
            }
            s *= 1.0 - d / effective;
            if effective > d {
                greenwood += d / (effective * (effective - d));
            }
            at_risk -= d + c;
        }
        (at_risk > 0.0 || end == 0).then(|| (s, s * greenwood.sqrt()))
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
        // Life table, worked by hand on 5 s bins: at risk 4 (the wait of 0
        // s answered never was); bin [20, 25): 1 answered, n' = 3.5, no
        // event; bin [30, 35): 1 abandoned of 3, S = 2/3; bin [50, 55): 1
        // of 2, S = 1/3.
        assert_eq!(t.survival(30.0).unwrap().0, 1.0);
        assert!((t.survival(35.0).unwrap().0 - 2.0 / 3.0).abs() < 1e-12);
        assert!((t.survival(55.0).unwrap().0 - 1.0 / 3.0).abs() < 1e-12);
        // Greenwood at 55 s: S^2 (1/(3*2) + 1/(2*1)) = (1/9)(2/3).
        let se = t.survival(55.0).unwrap().1;
        assert!((se - (2.0f64 / 27.0).sqrt()).abs() < 1e-12, "{se}");
        // No abandonment, or only zero waits: nothing to fit.
        let mut none = WaitTally::default();
        none.add(false, Some(40.0));
        assert_eq!(none.exponential(), None);
        let mut zero = WaitTally::default();
        zero.add(true, Some(0.0));
        assert_eq!(zero.exponential(), None);
    }
}
