//! The exact transient of an agent group whose servers follow a schedule:
//! Poisson calls, exponential holding, exponential patience (or none), an
//! unlimited queue cut at a level whose probability is negligible, from an
//! empty start. A reference for checking the simulation of schedules, where
//! no stationary formula describes the intervals after a change.
//!
//! # Method
//!
//! The Kolmogorov forward equations dp/dt = p Q of the (busy, waiting)
//! chain, integrated with the classical fourth-order Runge-Kutta method at
//! a step well inside its stability region. At each change of the servers
//! the state jumps as the engine's rule says: when the number rises,
//! waiting calls are answered at once; when it falls, calls in progress
//! finish and no call is answered until the busy count is below the new
//! number (docs/semantics.md, "Schedules"). Time averages over each
//! interval are left Riemann sums on the step grid (error of the order of
//! the step). Must not touch simulation, files or printing.

use super::error::{FormulaError, non_negative, positive};

/// An agent group on a schedule, as the chain sees it.
#[derive(Debug, Clone, PartialEq)]
pub struct ScheduledAgents {
    /// Calls per second (Poisson).
    pub arrival_rate: f64,
    /// Mean holding time (s), exponential.
    pub holding_s: f64,
    /// Mean patience (s), exponential; `None`: callers wait as long as it
    /// takes.
    pub patience_s: Option<f64>,
    /// Length of each schedule entry (s); also the reporting interval.
    pub interval_s: f64,
    /// Servers per entry; the first holds through the warm-up, the last
    /// after the list ends.
    pub servers: Vec<u32>,
    /// Warm-up before the measured period (s), from an empty group.
    pub warmup_s: f64,
    /// Waiting calls the chain keeps (the cut of the unlimited queue).
    pub queue_cut: usize,
    /// Measured intervals.
    pub intervals: usize,
}

/// Exact time averages over one measured interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IntervalAverages {
    /// Share of the time every server present is busy (time congestion).
    pub all_busy: f64,
    /// Share of the time an arrival would wait: by PASTA (Wolff 1982), the
    /// share of the interval's calls that wait.
    pub wait: f64,
    /// Mean number busy (carried traffic, erlangs).
    pub carried: f64,
}

/// The most states the chain may have.
const MAX_STATES: usize = 200_000;

impl ScheduledAgents {
    /// Per measured interval, the exact time averages (see the module's
    /// method).
    ///
    /// # Errors
    ///
    /// A rate or time that is not positive, an empty schedule, no
    /// intervals, or a chain beyond the size kept here.
    pub fn solve(&self) -> Result<Vec<IntervalAverages>, FormulaError> {
        positive("arrival rate", self.arrival_rate)?;
        positive("holding time", self.holding_s)?;
        positive("interval", self.interval_s)?;
        if let Some(p) = self.patience_s {
            positive("patience", p)?;
        }
        non_negative("warm-up", self.warmup_s)?;
        let b_max = self.servers.iter().copied().max().unwrap_or(0) as usize;
        let q_max = self.queue_cut;
        let states = (b_max + 1) * (q_max + 1);
        if self.servers.is_empty() || self.intervals == 0 {
            return Err(FormulaError::NoSolution {
                goal: "schedule entries",
                value: self.servers.len() as f64,
                reason: "the chain needs at least one entry and one measured interval",
            });
        }
        if states > MAX_STATES {
            return Err(FormulaError::OutOfRange {
                what: "the chain's states",
                limit: MAX_STATES as u64,
            });
        }
        let (lambda, mu) = (self.arrival_rate, 1.0 / self.holding_s);
        let theta = self.patience_s.map_or(0.0, |p| 1.0 / p);
        let idx = |b: usize, q: usize| b * (q_max + 1) + q;
        let servers_at = |t: f64| -> usize {
            let i = if t < 0.0 {
                0
            } else {
                (t / self.interval_s) as usize
            };
            self.servers[i.min(self.servers.len() - 1)] as usize
        };
        let deriv = |p: &[f64], n: usize, out: &mut [f64]| {
            out.iter_mut().for_each(|x| *x = 0.0);
            for b in 0..=b_max {
                for q in 0..=q_max {
                    let pr = p[idx(b, q)];
                    if pr == 0.0 {
                        continue;
                    }
                    let mut leave = 0.0;
                    // An arrival: answered when a server is free and nobody
                    // waits, otherwise it waits (up to the cut).
                    if b < n && q == 0 {
                        out[idx(b + 1, 0)] += lambda * pr;
                        leave += lambda;
                    } else if q < q_max {
                        out[idx(b, q + 1)] += lambda * pr;
                        leave += lambda;
                    }
                    // A call ends: the head of the queue takes the server if
                    // the busy count is then below the servers present.
                    if b > 0 {
                        let r = b as f64 * mu;
                        if q > 0 && b - 1 < n {
                            out[idx(b, q - 1)] += r * pr;
                        } else {
                            out[idx(b - 1, q)] += r * pr;
                        }
                        leave += r;
                    }
                    // A caller hangs up.
                    if q > 0 && theta > 0.0 {
                        let r = q as f64 * theta;
                        out[idx(b, q - 1)] += r * pr;
                        leave += r;
                    }
                    out[idx(b, q)] -= leave * pr;
                }
            }
        };
        let fastest = lambda + b_max as f64 * mu + q_max as f64 * theta;
        // Steps per interval: at least 3,000, and a step at most 0.5 / the
        // fastest total rate (RK4 is stable to about 2.8).
        let per_interval = (3000.0f64).max((self.interval_s * fastest / 0.5).ceil());
        let dt = self.interval_s / per_interval;
        let warmup_steps = (self.warmup_s / dt).round() as usize;
        let measured_steps = per_interval as usize * self.intervals;
        let mut p = vec![0.0; states];
        p[idx(0, 0)] = 1.0;
        let mut k = [
            vec![0.0; states],
            vec![0.0; states],
            vec![0.0; states],
            vec![0.0; states],
        ];
        let mut tmp = vec![0.0; states];
        let mut out = vec![
            IntervalAverages {
                all_busy: 0.0,
                wait: 0.0,
                carried: 0.0,
            };
            self.intervals
        ];
        let mut n = servers_at(-1.0);
        for step in 0..warmup_steps + measured_steps {
            // Time of this step from the end of the warm-up.
            let t = (step as f64 - warmup_steps as f64) * dt;
            let now = servers_at(t + 1e-9 * dt);
            if now != n {
                // A rise answers waiting calls at once; a fall moves
                // nobody.
                n = now;
                let mut moved = vec![0.0; states];
                for b in 0..=b_max {
                    for q in 0..=q_max {
                        let take = if b < n { (n - b).min(q) } else { 0 };
                        moved[idx(b + take, q - take)] += p[idx(b, q)];
                    }
                }
                p = moved;
            }
            if step >= warmup_steps {
                let bin = (step - warmup_steps) / per_interval as usize;
                let w = 1.0 / per_interval;
                let o = &mut out[bin];
                for b in 0..=b_max {
                    for q in 0..=q_max {
                        let pr = p[idx(b, q)];
                        if b >= n {
                            o.all_busy += pr * w;
                        }
                        if b >= n || q > 0 {
                            o.wait += pr * w;
                        }
                        o.carried += b as f64 * pr * w;
                    }
                }
            }
            deriv(&p, n, &mut k[0]);
            for s in 0..states {
                tmp[s] = p[s] + 0.5 * dt * k[0][s];
            }
            deriv(&tmp, n, &mut k[1]);
            for s in 0..states {
                tmp[s] = p[s] + 0.5 * dt * k[1][s];
            }
            deriv(&tmp, n, &mut k[2]);
            for s in 0..states {
                tmp[s] = p[s] + dt * k[2][s];
            }
            deriv(&tmp, n, &mut k[3]);
            for s in 0..states {
                p[s] += dt / 6.0 * (k[0][s] + 2.0 * k[1][s] + 2.0 * k[2][s] + k[3][s]);
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::formulas::erlang_a;

    /// A schedule that never changes, long after the start: the chain is
    /// at its stationary law, which Erlang A gives in closed form.
    #[test]
    fn a_constant_schedule_settles_at_erlang_a() {
        let (n, a, h, p) = (6u32, 4.0, 180.0, 120.0);
        let exact = ScheduledAgents {
            arrival_rate: a / h,
            holding_s: h,
            patience_s: Some(p),
            interval_s: 1800.0,
            servers: vec![n],
            warmup_s: 4.0 * 3600.0,
            queue_cut: 40,
            intervals: 1,
        }
        .solve()
        .unwrap();
        let ea = erlang_a::solve(n, a, h, p).unwrap();
        assert!((exact[0].wait - ea.wait_probability).abs() < 1e-5);
        assert!((exact[0].carried - a * (1.0 - ea.abandonment)).abs() < 1e-4);
    }
}
