//! The finite queue M/M/N/K and its variant with exponential patience
//! M/M/N/K+M: Poisson arrivals, exponential holding, `N` agents and at most
//! `q = K - N` callers waiting; a caller who finds the waiting room full is
//! blocked (lost), a waiting caller may give up after an exponential
//! patience.

use super::erlang_b::{LowerMass, check_servers};
use super::error::{FormulaError, at_least_one, non_negative, positive};

/// The most waiting places the solution sums over (one step per place).
pub const MAX_WAITING_PLACES: u32 = 50_000_000;

/// The steady state of an M/M/N/K(+M) group and its figures of merit.
/// Every share is of all offered calls.
#[derive(Debug, Clone, PartialEq)]
pub struct FiniteQueue {
    /// Agents `N`.
    pub agents: u32,
    /// Waiting places `q = K - N`.
    pub places: u32,
    /// Offered traffic `A = λ h` in erlangs.
    pub traffic: f64,
    /// Mean holding time `h` in seconds.
    pub holding_s: f64,
    /// Mean patience in seconds (`None`: callers never give up).
    pub patience_s: Option<f64>,
    /// Share of calls that find every agent busy and every waiting place
    /// taken, and are blocked (`π_K`; Poisson arrivals see time averages).
    pub blocking: f64,
    /// Share of calls that queue: every agent busy, a waiting place free.
    pub wait_probability: f64,
    /// Share of calls that abandon the queue (`θ E[Q] / λ`).
    pub abandonment: f64,
    /// Share of calls answered: `1 - blocking - abandonment`.
    pub answered: f64,
    /// Share of time with every agent busy (`P(k >= N)`).
    pub all_busy: f64,
    /// Mean number of callers waiting.
    pub mean_queue: f64,
    /// Mean wait of the answered calls (0 s counted for those answered at
    /// once).
    pub mean_wait_answered_s: f64,
    /// Carried traffic in erlangs (`A x answered`).
    pub carried_traffic: f64,
    /// `π_{N+j}` for `j = 0..=q`: the states with every agent busy.
    queue_states: Vec<f64>,
    /// Share answered at once (`P(k < N)`).
    no_wait: f64,
}

/// Solves M/M/N/K (no patience) or M/M/N/K+M (exponential patience of mean
/// `patience_s`) exactly from its birth-death balance equations.
///
/// # Formula
///
/// State `k` (calls present, `0 <= k <= N + q`) has birth rate `λ` below
/// `N + q` and death rate `min(k, N) μ + max(k - N, 0) θ`. Relative to
/// `π_N`, the states below weigh `J = Σ_{k<N} π_k / π_N` (the Erlang B
/// recursion) and the queue states `t_j = Π_{i=1}^{j} A / (N + i γ)`,
/// `γ = θ / μ = h / patience` (`γ = 0` without patience: `(A/N)^j`). Then
/// blocking `π_{N+q}` (PASTA), P(wait) `Σ_{j<q} π_{N+j}`,
/// `E[Q] = Σ j π_{N+j}`, abandonment `γ E[Q] / A` (abandonment rate over
/// arrival rate). A caller who finds `j < q` waiting is answered with
/// probability `s_j = N / (N + (j+1) γ)` after a mean answered wait
/// `s_j Σ_{i=1}^{j+1} h / (N + i γ)` (later arrivals queue behind it and
/// do not change its fate). Source: the M/M/c/K queue of L. Kleinrock,
/// "Queueing Systems, Volume 1" (1975), and D. Gross and C. M. Harris,
/// "Fundamentals of Queueing Theory" (1998); patience as in Palm's
/// M/M/N+M (1943), "Erlang A" in Gans, Koole and Mandelbaum (2003), here
/// with a waiting room of `q` places. As `q` grows the figures tend to
/// Erlang C (no patience, `A < N`) and Erlang A.
///
/// # Numerics
///
/// Weights in logarithms, normalised by their largest term: nothing
/// overflows for 10,000 agents and any load. One step per waiting place.
///
/// # Errors
///
/// `agents >= 1`; finite `traffic >= 0`; holding and patience finite and
/// above 0; at most [`MAX_WAITING_PLACES`] places
/// ([`FormulaError::OutOfRange`]).
///
/// # Example
///
/// ```
/// use busyhour::formulas::{erlang_b, finite_queue};
/// // No waiting room: Erlang B.
/// let q = finite_queue::solve(10, 0, 8.0, 180.0, None)?;
/// assert!((q.blocking / erlang_b::blocking(10, 8.0)? - 1.0).abs() < 1e-12);
/// // Five places: fewer blocked, some wait.
/// let w = finite_queue::solve(10, 5, 8.0, 180.0, None)?;
/// assert!(w.blocking < q.blocking && w.wait_probability > 0.0);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn solve(
    agents: u32,
    places: u32,
    traffic: f64,
    holding_s: f64,
    patience_s: Option<f64>,
) -> Result<FiniteQueue, FormulaError> {
    let agents = check_servers("agents", at_least_one("agents", agents)?)?;
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let patience_s = patience_s
        .map(|p| positive("mean patience (s)", p))
        .transpose()?;
    if places > MAX_WAITING_PLACES {
        return Err(FormulaError::OutOfRange {
            what: "waiting places",
            limit: u64::from(MAX_WAITING_PLACES),
        });
    }
    let gamma = match patience_s {
        Some(p) => {
            let g = holding_s / p;
            if !(g > 0.0 && g.is_finite()) {
                return Err(FormulaError::InvalidArgument {
                    name: "mean patience (s)",
                    value: p,
                    expected: "a patience whose ratio to the holding time is a finite number > 0",
                });
            }
            g
        }
        None => 0.0,
    };
    let n = f64::from(agents);
    if traffic == 0.0 {
        let queue_states = vec![0.0; places as usize + 1];
        return Ok(FiniteQueue {
            agents,
            places,
            traffic,
            holding_s,
            patience_s,
            blocking: 0.0,
            wait_probability: 0.0,
            abandonment: 0.0,
            answered: 1.0,
            all_busy: 0.0,
            mean_queue: 0.0,
            mean_wait_answered_s: 0.0,
            carried_traffic: 0.0,
            queue_states,
            no_wait: 1.0,
        });
    }
    let mut lower = LowerMass::new(traffic);
    lower.run_to(agents);
    let ln_lower = lower.value().ln();
    // ln t_j, j = 0..=q.
    let mut ln_t = Vec::with_capacity(places as usize + 1);
    let mut acc = 0.0;
    ln_t.push(acc);
    for i in 1..=places {
        acc += (traffic / (n + f64::from(i) * gamma)).ln();
        ln_t.push(acc);
    }
    let top = ln_t.iter().copied().fold(ln_lower, f64::max);
    let total: f64 = (ln_lower - top).exp() + ln_t.iter().map(|&l| (l - top).exp()).sum::<f64>();
    let ln_total = top + total.ln();
    let queue_states: Vec<f64> = ln_t.iter().map(|&l| (l - ln_total).exp()).collect();
    let no_wait = (ln_lower - ln_total).exp();
    let q = places as usize;
    let blocking = queue_states[q];
    let wait_probability: f64 = queue_states[..q].iter().sum();
    let all_busy = wait_probability + blocking;
    let mean_queue: f64 = queue_states
        .iter()
        .enumerate()
        .map(|(j, p)| j as f64 * p)
        .sum();
    let abandonment = gamma * mean_queue / traffic;
    // Answered after waiting, and their summed waits (in holding times).
    let mut answered_after_wait = 0.0;
    let mut answered_wait = 0.0;
    let mut harmonic = 0.0;
    for (j, &p) in queue_states[..q].iter().enumerate() {
        let rate = n + (j + 1) as f64 * gamma;
        harmonic += 1.0 / rate;
        let share = n / rate;
        answered_after_wait += p * share;
        answered_wait += p * share * harmonic;
    }
    let answered = no_wait + answered_after_wait;
    let mean_wait_answered_s = if answered > 0.0 {
        answered_wait * holding_s / answered
    } else {
        0.0
    };
    Ok(FiniteQueue {
        agents,
        places,
        traffic,
        holding_s,
        patience_s,
        blocking,
        wait_probability,
        abandonment,
        answered,
        all_busy,
        mean_queue,
        mean_wait_answered_s,
        carried_traffic: traffic * answered,
        queue_states,
        no_wait,
    })
}

impl FiniteQueue {
    /// Loss: share of calls never answered, blocked or abandoned.
    pub fn loss(&self) -> f64 {
        1.0 - self.answered
    }

    /// Service level: the share of **all offered calls** answered within
    /// `within_s` seconds (blocked and abandoning calls count as not
    /// answered; calls answered at once count as answered within any time).
    /// A negative or NaN `within_s` is taken as 0.
    ///
    /// # Formula
    ///
    /// A caller who finds `j < q` waiting is answered within `t` with
    /// probability `s_j P(X >= j + 1)`: without patience the wait is
    /// Erlang(`j + 1`, `N μ`) and `X` is Poisson with mean `N t / h`; with
    /// patience the tilted stages have rates `θ (N/γ + i)`, and `X` is
    /// negative binomial with `N / γ + 1` failures and success probability
    /// `1 - e^{-θ t}` (the derivation of [`super::erlang_a::ErlangA::service_level`],
    /// cut at `q`). `SL(t) = P(k < N) + Σ_{j<q} π_{N+j} s_j P(X >= j + 1)`.
    /// Source: as [`solve`].
    ///
    /// # Numerics
    ///
    /// The law of `X` in logarithms; absolute error near `1e-15`.
    ///
    /// # Example
    ///
    /// ```
    /// use busyhour::formulas::finite_queue;
    /// let q = finite_queue::solve(10, 8, 9.0, 180.0, Some(120.0))?;
    /// assert!(q.service_level(0.0) < q.service_level(20.0));
    /// assert!(q.service_level(1e7) <= q.answered + 1e-12);
    /// # Ok::<(), busyhour::formulas::FormulaError>(())
    /// ```
    pub fn service_level(&self, within_s: f64) -> f64 {
        let t = if within_s > 0.0 { within_s } else { 0.0 };
        if self.traffic == 0.0 {
            return 1.0;
        }
        if t == 0.0 {
            return self.no_wait;
        }
        let n = f64::from(self.agents);
        let q = self.places as usize;
        let gamma = self.patience_s.map_or(0.0, |p| self.holding_s / p);
        // ln P(X = i) as i steps, and the running P(X <= i).
        let (mut ln_pmf, step): (f64, Box<dyn Fn(f64) -> f64>) = match self.patience_s {
            None => {
                let mean = n * t / self.holding_s;
                (-mean, Box::new(move |i: f64| (mean / i).ln()))
            }
            Some(p) => {
                let theta_t = t / p;
                let x = -(-theta_t).exp_m1();
                let beta = n / gamma + 1.0;
                (
                    -beta * theta_t,
                    Box::new(move |i: f64| (x * (i - 1.0 + beta) / i).ln()),
                )
            }
        };
        let mut cdf = ln_pmf.exp(); // P(X <= 0)
        let mut within = self.no_wait;
        for (j, &p) in self.queue_states[..q].iter().enumerate() {
            let share = n / (n + (j + 1) as f64 * gamma);
            within += p * share * (1.0 - cdf).max(0.0);
            let i = (j + 1) as f64;
            ln_pmf += step(i);
            cdf += ln_pmf.exp();
        }
        within.min(self.answered)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_arguments() {
        assert!(solve(0, 3, 1.0, 60.0, None).is_err());
        assert!(solve(2, 3, -1.0, 60.0, None).is_err());
        assert!(solve(2, 3, f64::NAN, 60.0, None).is_err());
        assert!(solve(2, 3, 1.0, 0.0, None).is_err());
        assert!(solve(2, 3, 1.0, 60.0, Some(0.0)).is_err());
        assert!(solve(2, 3, 1.0, 60.0, Some(f64::INFINITY)).is_err());
        assert!(solve(2, MAX_WAITING_PLACES + 1, 1.0, 60.0, None).is_err());
    }

    #[test]
    fn zero_traffic_answers_everyone_at_once() {
        let q = solve(3, 4, 0.0, 60.0, Some(30.0)).unwrap();
        assert_eq!(q.blocking, 0.0);
        assert_eq!(q.service_level(10.0), 1.0);
    }

    #[test]
    fn overload_is_finite() {
        // 10,000 erlangs on 100 agents and 10,000 places: nothing overflows.
        let q = solve(100, 10_000, 10_000.0, 60.0, None).unwrap();
        assert!(q.blocking > 0.98 && q.blocking < 1.0);
        assert!((q.carried_traffic - 100.0).abs() < 1.0);
    }
}
