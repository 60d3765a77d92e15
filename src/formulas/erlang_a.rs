//! Erlang A: the delay system with abandonment M/M/N+M (Palm's model):
//! Poisson arrivals, exponential holding times, `N` agents, and callers who
//! give up after an exponential patience if not answered by then.

use super::erlang_b::{LowerMass, check_servers};
use super::error::{FormulaError, at_least_one, non_negative, positive};
use super::scaled::{BIG, SHIFT, SMALL, Scaled};

/// The truncation tolerance: the neglected probability mass (and the
/// neglected first moment of the queue length) is proven below this share
/// of what was summed.
pub const TRUNCATION_TOLERANCE: f64 = 1e-17;

/// The longest queue (waiting callers) the exact solution will sum over.
pub const MAX_QUEUE: u64 = 50_000_000;

/// The steady state of an M/M/N+M group and its figures of merit.
///
/// Every share is of all offered calls unless its name says otherwise.
#[derive(Debug, Clone, PartialEq)]
pub struct ErlangA {
    /// Agents `N`.
    pub agents: u32,
    /// Offered traffic `A = λ h` in erlangs.
    pub traffic: f64,
    /// Mean holding (service) time `h` in seconds.
    pub holding_s: f64,
    /// Mean patience `θ⁻¹` in seconds.
    pub patience_s: f64,
    /// Share of calls that find every agent busy and queue (`P(K >= N)`).
    pub wait_probability: f64,
    /// Share of calls that abandon the queue before being answered.
    pub abandonment: f64,
    /// Share of calls answered (`1 - abandonment`, computed on its own).
    pub answered: f64,
    /// Mean number of callers waiting.
    pub mean_queue: f64,
    /// Mean time in queue over all calls, answered or abandoned, those
    /// answered at once counted as 0 s (Little's law: `E[Q] / λ`).
    pub mean_wait_s: f64,
    /// Mean time in queue of the answered calls only (0 s counted for those
    /// answered at once).
    pub mean_wait_answered_s: f64,
    /// Carried traffic in erlangs (`A · answered`).
    pub carried_traffic: f64,
    /// Agent occupancy: carried traffic / agents.
    pub occupancy: f64,
    /// The longest queue length included in the sums; longer queues were
    /// neglected.
    pub truncated_at: u64,
    /// A proven upper bound on the neglected probability mass, as a share of
    /// the mass of the states with every agent busy (see [`solve`]).
    pub tail_bound: f64,
    /// `1 / Σ_k w_k` in the units where state `N` has weight 1.
    inv_total: Scaled,
    /// Share answered at once (`P(K < N)`).
    no_wait: f64,
}

/// Solves the M/M/N+M queue exactly from its birth-death balance equations.
///
/// # Formula
///
/// With `λ` the call rate, `μ = 1/h` and `θ = 1/patience`, state `k`
/// (calls present) has birth rate `λ` and death rate `min(k, N) μ +
/// max(k - N, 0) θ`. Relative to state `N`, the states below carry weight
/// `J(N) = Σ_{k<N} π_k/π_N` (the Erlang B recursion) and the queue states
/// `N + j` carry `t_j = Π_{i=1}^{j} A / (N + i γ)` with `γ = θ/μ = h/patience`.
/// From these: `P(wait) = Σ t_j / (J + Σ t_j)`; `E[Q] = Σ j t_j / (J + Σ t_j)`;
/// `P(abandon) = θ E[Q] / λ = γ E[Q] / A`; mean wait of all calls
/// `E[Q] / λ` (Little). A caller who arrives to find `j` waiting is answered
/// with probability `N / (N + (j+1) γ)`, after a mean
/// `(N / (N + (j+1)γ)) Σ_{i=1}^{j+1} h / (N + i γ)` of answered waiting.
///
/// Source: the M/M/N+M model (C. Palm, 1943; "Erlang A" in N. Gans,
/// G. Koole and A. Mandelbaum, "Telephone call centers: tutorial, review and
/// research prospects", M&SOM 5(2), 2003); the balance equations are those of
/// any birth-death process.
///
/// # Numerics
///
/// The queue-state sum stops after state `j` once the ratio
/// `r = A / (N + (j+1) γ)` of the next term is below 1 and the bounds
/// `t_j r/(1-r)` on the neglected mass and `t_j (j r/(1-r) + r/(1-r)²)` on
/// the neglected first moment are below [`TRUNCATION_TOLERANCE`] of the sums
/// so far. The ratios decrease in `j`, so the neglected terms are bounded by
/// a geometric series with ratio `r`: the bound is proven, not estimated.
/// Weights are kept in extended range, so nothing overflows even for
/// 10,000 agents and 10,000 erlangs.
///
/// # Errors
///
/// `agents >= 1`, finite `traffic >= 0`, holding and patience finite and
/// above 0. [`FormulaError::OutOfRange`] when the most likely queue would
/// be longer than [`MAX_QUEUE`] callers (huge overload with near-infinite
/// patience).
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_a;
/// let q = erlang_a::solve(10, 9.0, 180.0, 60.0)?;
/// assert!(q.abandonment > 0.0 && q.abandonment < q.wait_probability);
/// assert!((q.abandonment + q.answered - 1.0).abs() < 1e-12);
/// let sl = q.service_level(20.0);
/// assert!(sl > 0.0 && sl < q.answered);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn solve(
    agents: u32,
    traffic: f64,
    holding_s: f64,
    patience_s: f64,
) -> Result<ErlangA, FormulaError> {
    let agents = check_servers("agents", at_least_one("agents", agents)?)?;
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let patience_s = positive("mean patience (s)", patience_s)?;
    let n = f64::from(agents);
    let gamma = holding_s / patience_s;
    if !(gamma > 0.0 && gamma.is_finite()) {
        return Err(FormulaError::InvalidArgument {
            name: "mean patience (s)",
            value: patience_s,
            expected: "a patience whose ratio to the holding time is a finite number > 0",
        });
    }
    if traffic == 0.0 {
        return Ok(ErlangA {
            agents,
            traffic,
            holding_s,
            patience_s,
            wait_probability: 0.0,
            abandonment: 0.0,
            answered: 1.0,
            mean_queue: 0.0,
            mean_wait_s: 0.0,
            mean_wait_answered_s: 0.0,
            carried_traffic: 0.0,
            occupancy: 0.0,
            truncated_at: 0,
            tail_bound: 0.0,
            inv_total: Scaled::ZERO,
            no_wait: 1.0,
        });
    }
    // The terms grow while A > N + j γ: the most likely queue is near
    // (A - N) / γ.
    if (traffic - n) / gamma > MAX_QUEUE as f64 {
        return Err(FormulaError::OutOfRange {
            what: "the most likely queue (callers)",
            limit: MAX_QUEUE,
        });
    }

    let mut lower = LowerMass::new(traffic);
    lower.run_to(agents);
    let lower = lower.value();

    // Sums over the queue states j = 0, 1, ... in units of t_j × 2^scale:
    // mass Σ t_j, first moment Σ j t_j, answered mass Σ t_j s_j and answered
    // wait Σ t_j s_j H_j, where s_j = N/(N + (j+1)γ) and
    // H_j = Σ_{i=1}^{j+1} 1/(N + iγ) (in holding times).
    let mut term = 1.0;
    let mut scale: i64 = 0;
    let mut j: u64 = 0;
    let mut harmonic = 1.0 / (n + gamma);
    let answered_share = n / (n + gamma);
    let mut mass = 1.0;
    let mut moment = 0.0;
    let mut answered_mass = answered_share;
    let mut answered_wait = answered_share * harmonic;
    let tail_bound = loop {
        let ratio = traffic / (n + (j + 1) as f64 * gamma);
        if ratio < 1.0 {
            let geometric = ratio / (1.0 - ratio);
            let tail_mass = term * geometric;
            let tail_moment = term * (j as f64 * geometric + geometric / (1.0 - ratio));
            if tail_mass <= TRUNCATION_TOLERANCE * mass
                && tail_moment <= TRUNCATION_TOLERANCE * moment
            {
                break tail_mass / mass;
            }
        }
        if j >= MAX_QUEUE {
            return Err(FormulaError::OutOfRange {
                what: "queue states needed (callers)",
                limit: MAX_QUEUE,
            });
        }
        j += 1;
        term *= ratio;
        let next_rate = n + (j + 1) as f64 * gamma;
        harmonic += 1.0 / next_rate;
        let share = n / next_rate;
        mass += term;
        moment += j as f64 * term;
        answered_mass += term * share;
        answered_wait += term * share * harmonic;
        if term > BIG {
            // Performance: rare rescale keeps every sum in range.
            term *= SMALL;
            mass *= SMALL;
            moment *= SMALL;
            answered_mass *= SMALL;
            answered_wait *= SMALL;
            scale += SHIFT;
        }
    };

    let queue_mass = Scaled::new(mass, scale);
    // ρ = (states below N) / (states N and above), both in units of π_N.
    let rho = lower.div(queue_mass).to_f64();
    let wait_probability = 1.0 / (1.0 + rho);
    let no_wait = 1.0 / (1.0 + 1.0 / rho);
    let mean_queue = moment / mass * wait_probability;
    let abandonment = gamma * mean_queue / traffic;
    let answered_after_wait = answered_mass / mass * wait_probability;
    let answered = no_wait + answered_after_wait;
    let mean_wait_s = mean_queue * holding_s / traffic;
    let mean_wait_answered_s = if answered > 0.0 {
        answered_wait / mass * wait_probability * holding_s / answered
    } else {
        0.0
    };
    let carried_traffic = traffic * answered;
    Ok(ErlangA {
        agents,
        traffic,
        holding_s,
        patience_s,
        wait_probability,
        abandonment,
        answered,
        mean_queue,
        mean_wait_s,
        mean_wait_answered_s,
        carried_traffic,
        occupancy: carried_traffic / n,
        truncated_at: j,
        tail_bound,
        inv_total: lower.add(queue_mass).recip(),
        no_wait,
    })
}

impl ErlangA {
    /// Service level: the share of **all offered calls** that are answered
    /// within `within_s` seconds. Calls that abandon (whenever they do)
    /// count as not answered within the time; calls answered at once count as
    /// answered within any time. At `within_s = 0` this is `P(K < N)`; as
    /// `within_s` grows it tends to [`ErlangA::answered`].
    ///
    /// A negative or NaN `within_s` is treated as 0 and an infinite one gives
    /// [`ErlangA::answered`].
    ///
    /// # Formula
    ///
    /// Exact. A caller arriving to find `j` waiting (`j` ahead) reaches an
    /// agent after `V`, a sum of exponential stages with rates
    /// `c_i = N μ + i θ`, `i = j, …, 0`, while its own patience
    /// `τ ~ Exp(θ)` runs; it is answered within `t` when `V <= t` and
    /// `V < τ`. Tilting by `e^{-θV}` shifts every rate by `θ`:
    /// `P(V <= t, V < τ) = (c_0 / c_{j+1}) P(V' <= t)` with
    /// `V' = Σ_{i=1}^{j+1} Exp(c_i)`. The rates `c_i = θ(b + i)`,
    /// `b = N·patience/h`, are equally spaced, so (as for the order
    /// statistics of exponentials, by Rényi's representation)
    /// `P(V' <= t) = I_x(j+1, b+1)`, the regularised incomplete beta
    /// function at `x = 1 - e^{-θt}`, which equals `P(X >= j+1)` for `X`
    /// negative binomial with `b+1` failures and success probability `x`.
    /// Summing by parts,
    /// `SL(t) = P(K < N) + Σ_{i>=1} P(X = i) Σ_{j<i} π_{N+j} c_0/c_{j+1}`,
    /// a sum of positive terms. Source: the derivation above from the M/M/N+M
    /// balance equations (see [`solve`]); the waiting-time law of M/M/N+M is
    /// also treated by Riordan (1962) and by Mandelbaum and Zeltyn (2007).
    ///
    /// # Numerics
    ///
    /// Positive-term sums in extended range; the tail `P(X > J)` beyond the
    /// truncation `J` is `1 - P(X <= J)` when that is below 1/2 and a summed
    /// (geometrically bounded) tail otherwise. Absolute error near `1e-15`.
    ///
    /// # Example
    ///
    /// ```
    /// use busyhour::formulas::erlang_a;
    /// let q = erlang_a::solve(12, 10.0, 180.0, 90.0)?;
    /// assert!(q.service_level(0.0) < q.service_level(20.0));
    /// assert!(q.service_level(1e6) <= q.answered + 1e-12);
    /// # Ok::<(), busyhour::formulas::FormulaError>(())
    /// ```
    pub fn service_level(&self, within_s: f64) -> f64 {
        let within_s = if within_s > 0.0 { within_s } else { 0.0 };
        if self.traffic == 0.0 {
            return 1.0;
        }
        if within_s == 0.0 {
            return self.no_wait;
        }
        if within_s.is_infinite() {
            return self.answered;
        }
        let n = f64::from(self.agents);
        let gamma = self.holding_s / self.patience_s;
        let theta_t = within_s / self.patience_s;
        let x = -(-theta_t).exp_m1();
        // Negative binomial X: P(X = i) = C(i + β - 1, i) x^i (1-x)^β, β = b + 1.
        let beta = n / gamma + 1.0;
        let mut pmf = Scaled::exp(-beta * theta_t);
        let mut pmf_sum = pmf.to_f64();
        // Normalised queue-state probabilities π_{N+j}, from j = 0.
        let mut state = self.inv_total;
        let mut answered_below = 0.0; // Σ_{j<i} π_{N+j} c_0/c_{j+1}
        let mut within = 0.0;
        let last = self.truncated_at;
        for i in 1..=last {
            let j = (i - 1) as f64;
            let next_rate = n + (j + 1.0) * gamma;
            answered_below += state.to_f64() * n / next_rate;
            state = state.mul_f64(self.traffic / next_rate);
            pmf = pmf.mul_f64(x * (j + beta) / i as f64);
            let p = pmf.to_f64();
            pmf_sum += p;
            within += p * answered_below;
        }
        answered_below += state.to_f64() * n / (n + (last as f64 + 1.0) * gamma);
        // P(X > last)
        let beyond = if pmf_sum < 0.5 {
            1.0 - pmf_sum
        } else {
            negative_binomial_tail(pmf, last, x, beta, 1.0 - pmf_sum)
        };
        (self.no_wait + within + answered_below * beyond).min(self.answered)
    }

    /// Service level as a share of the **answered** calls: of the calls that
    /// reach an agent, the share that waited at most `within_s` seconds;
    /// `service_level(t) / answered`.
    ///
    /// # Formula
    ///
    /// `P(W <= t | answered) = SL(t) / P(answered)`, with `SL` from
    /// [`ErlangA::service_level`]. Source: as there.
    ///
    /// # Example
    ///
    /// ```
    /// use busyhour::formulas::erlang_a;
    /// let q = erlang_a::solve(12, 10.0, 180.0, 90.0)?;
    /// assert!(q.service_level_of_answered(20.0) > q.service_level(20.0));
    /// # Ok::<(), busyhour::formulas::FormulaError>(())
    /// ```
    pub fn service_level_of_answered(&self, within_s: f64) -> f64 {
        if self.answered > 0.0 {
            (self.service_level(within_s) / self.answered).min(1.0)
        } else {
            0.0
        }
    }
}

/// `P(X > last)` for the negative binomial `X` of [`ErlangA::service_level`]
/// by summing forward from `P(X = last)`: the term ratio `x (i + β - 1)/i`
/// decreases in `i`, so once it is below 1 the rest is bounded by a geometric
/// series. Falls back to `fallback` (`1 - P(X <= last)`) if the sum would be
/// very long.
fn negative_binomial_tail(mut pmf: Scaled, last: u64, x: f64, beta: f64, fallback: f64) -> f64 {
    let mut sum = 0.0;
    let mut i = last;
    while i < last + MAX_QUEUE {
        i += 1;
        let ratio = x * (i as f64 - 1.0 + beta) / i as f64;
        pmf = pmf.mul_f64(ratio);
        let p = pmf.to_f64();
        sum += p;
        let next = x * (i as f64 + beta) / (i as f64 + 1.0);
        if next < 1.0 && p * next / (1.0 - next) <= TRUNCATION_TOLERANCE * sum {
            return sum;
        }
        if p == 0.0 && next < 1.0 {
            return sum;
        }
    }
    fallback.max(0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_arguments() {
        assert!(solve(0, 1.0, 60.0, 60.0).is_err());
        assert!(solve(2, -1.0, 60.0, 60.0).is_err());
        assert!(solve(2, 1.0, f64::NAN, 60.0).is_err());
        assert!(solve(2, 1.0, 60.0, 0.0).is_err());
        assert!(solve(2, 1.0, 60.0, f64::INFINITY).is_err());
        assert!(solve(2, 1.0, 1e300, 1e-300).is_err());
    }

    #[test]
    fn zero_traffic_answers_everyone_at_once() {
        let q = solve(3, 0.0, 60.0, 30.0).unwrap();
        assert_eq!(q.wait_probability, 0.0);
        assert_eq!(q.service_level(0.0), 1.0);
    }

    #[test]
    fn overload_is_stable_with_abandonment() {
        // 20 erlangs on 10 agents: in the long run about half the calls
        // must abandon, since at most 10 erlangs can be carried.
        let q = solve(10, 20.0, 60.0, 60.0).unwrap();
        assert!(q.carried_traffic < 10.0);
        assert!(q.abandonment > 0.45);
        assert!((q.abandonment + q.answered - 1.0).abs() < 1e-12);
    }
}
