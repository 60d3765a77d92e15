//! Exact stationary solutions of small continuous-time Markov chains, kept as
//! references for checking the simulation where no closed form exists:
//! redials on one loss group (a retrial queue) and an overflow network of
//! first-choice groups sharing one final group.
//!
//! Owns a generic sparse chain ([`Chain`]) and the two models built on it.
//! Must not touch simulation, files or printing.
//!
//! # Accuracy
//!
//! The balance equations are solved directly, not iterated: the state
//! reduction of Grassmann, Taksar and Heyman (1985) on the band of the rate
//! matrix. It subtracts nothing, so every probability, even a tiny one,
//! comes out with a small relative error (a few hundred rounding errors for
//! the chains here). Each solution is checked: the balance residual
//! `‖π Q‖₁ / Σ π_j q_j` must be below [`RESIDUAL_TOLERANCE`], or the solve
//! fails. The redial chain has an infinite orbit, cut where the estimated
//! probability of the neglected levels is below [`TAIL_TOLERANCE`]
//! ([`Redials::tail_estimate`] says how much was cut); the overflow network
//! is finite and exact up to the solver's rounding.
//!
//! # Limits
//!
//! At most [`MAX_STATES`] states and [`MAX_BAND_CELLS`] stored rates (states
//! times the band's width); beyond, [`FormulaError::OutOfRange`]. Meant for
//! reference cases of tens of servers, not for sizing.

use super::erlang_b::check_servers;
use super::error::{FormulaError, at_least_one, non_negative, positive};

/// The largest balance residual `‖π Q‖₁ / Σ π_j q_j` a solution may leave.
pub const RESIDUAL_TOLERANCE: f64 = 1e-12;

/// The most probability the redial chain may leave beyond its orbit cut.
pub const TAIL_TOLERANCE: f64 = 1e-12;

/// The most states a chain may have.
pub const MAX_STATES: usize = 4_000_000;

/// The most rates the band storage may hold (states x (2 x width + 1));
/// 32 million cells are 256 MiB.
pub const MAX_BAND_CELLS: usize = 32_000_000;

/// The longest orbit (callers waiting to redial) the redial chain will hold.
pub const MAX_ORBIT: u32 = 1_000_000;

/// A continuous-time Markov chain on states `0..states`, given by its
/// transition rates. State 0 should be a likely state (the empty system):
/// the solution is first computed relative to it.
#[derive(Debug, Clone)]
pub struct Chain {
    states: usize,
    /// `(from, to, rate)`, `from != to`, `rate > 0`; repeated pairs add up.
    transitions: Vec<(usize, usize, f64)>,
}

/// The stationary distribution of a [`Chain`].
#[derive(Debug, Clone, PartialEq)]
pub struct Stationary {
    /// `π_j`, summing to 1.
    pub probabilities: Vec<f64>,
    /// The balance residual `‖π Q‖₁ / Σ π_j q_j` actually left.
    pub residual: f64,
}

impl Chain {
    /// An empty chain on `states` states (at least 1, at most
    /// [`MAX_STATES`]).
    pub fn new(states: usize) -> Result<Chain, FormulaError> {
        if states == 0 {
            return Err(FormulaError::InvalidArgument {
                name: "states",
                value: 0.0,
                expected: "at least 1",
            });
        }
        if states > MAX_STATES {
            return Err(FormulaError::OutOfRange {
                what: "states of the chain",
                limit: MAX_STATES as u64,
            });
        }
        Ok(Chain {
            states,
            transitions: Vec::new(),
        })
    }

    /// Number of states.
    pub fn states(&self) -> usize {
        self.states
    }

    /// Adds the rate (per unit time, finite, >= 0) of going from `from` to
    /// `to`. A zero rate is ignored; so is `from == to` (a transition that
    /// changes nothing).
    pub fn add(&mut self, from: usize, to: usize, rate: f64) -> Result<(), FormulaError> {
        let rate = non_negative("transition rate", rate)?;
        for index in [from, to] {
            if index >= self.states {
                return Err(FormulaError::InvalidArgument {
                    name: "state index",
                    value: index as f64,
                    expected: "an index below the number of states",
                });
            }
        }
        if rate > 0.0 && from != to {
            self.transitions.push((from, to, rate));
        }
        Ok(())
    }

    /// The widest jump `|from - to|` of any transition.
    fn width(&self) -> usize {
        self.transitions
            .iter()
            .map(|&(f, t, _)| f.abs_diff(t))
            .max()
            .unwrap_or(0)
    }

    /// Solves `π Q = 0`, `Σ π = 1`.
    ///
    /// # Numerics
    ///
    /// State reduction (W. K. Grassmann, M. I. Taksar and D. P. Heyman,
    /// "Regenerative analysis and steady state distributions for Markov
    /// chains", Operations Research 33, 1985): states are removed from the
    /// last to the first, each removal folding the paths through it into
    /// the rates among the remaining states; the rates are kept in a band of
    /// the chain's widest jump, which the folding never leaves. Work is
    /// `states x width²`. Only additions, multiplications and divisions of
    /// positive numbers: no digits cancel.
    ///
    /// # Errors
    ///
    /// [`FormulaError::NoSolution`] when some state cannot reach state 0
    /// (the chain is not irreducible) or the residual is above
    /// [`RESIDUAL_TOLERANCE`]; [`FormulaError::OutOfRange`] when the band
    /// would exceed [`MAX_BAND_CELLS`].
    pub fn solve(&self) -> Result<Stationary, FormulaError> {
        let n = self.states;
        let w = self.width();
        let span = 2 * w + 1;
        if n.checked_mul(span)
            .is_none_or(|cells| cells > MAX_BAND_CELLS)
        {
            return Err(FormulaError::OutOfRange {
                what: "stored rates of the chain (states x band width)",
                limit: MAX_BAND_CELLS as u64,
            });
        }
        // band[i * span + (j + w - i)] = rate from i to j, |i - j| <= w.
        let at = |i: usize, j: usize| i * span + (j + w - i);
        let mut band = vec![0.0f64; n * span];
        for &(from, to, rate) in &self.transitions {
            band[at(from, to)] += rate;
        }
        // Removal of state k (from n - 1 down to 1): s = rate from k into the
        // remaining states 0..k; the rate from i into k becomes the chance
        // of going on from k, scaled (a_ik / s), and each path i -> k -> j
        // is added to a_ij.
        for k in (1..n).rev() {
            let low = k.saturating_sub(w);
            let s: f64 = (low..k).map(|j| band[at(k, j)]).sum();
            if !(s > 0.0) {
                return Err(FormulaError::NoSolution {
                    goal: "stationary distribution, state",
                    value: k as f64,
                    reason: "this state cannot reach state 0: the chain is not irreducible",
                });
            }
            for i in low..k {
                let cell = at(i, k);
                if band[cell] == 0.0 {
                    continue;
                }
                band[cell] /= s;
                let a_ik = band[cell];
                for j in low..k {
                    if j != i {
                        let a_kj = band[at(k, j)];
                        band[at(i, j)] += a_ik * a_kj;
                    }
                }
            }
        }
        // Back substitution: π_0 = 1, π_k = Σ_{i<k} π_i a_ik.
        let mut pi = vec![0.0f64; n];
        pi[0] = 1.0;
        for k in 1..n {
            let low = k.saturating_sub(w);
            pi[k] = (low..k).map(|i| pi[i] * band[at(i, k)]).sum();
        }
        let total: f64 = pi.iter().sum();
        if !(total.is_finite() && total > 0.0) {
            return Err(FormulaError::NoSolution {
                goal: "stationary distribution, total weight",
                value: total,
                reason: "the weights relative to state 0 overflowed: state 0 is too rare",
            });
        }
        for p in &mut pi {
            *p /= total;
        }
        let residual = self.residual(&pi);
        if !(residual <= RESIDUAL_TOLERANCE) {
            return Err(FormulaError::NoSolution {
                goal: "stationary distribution, balance residual",
                value: residual,
                reason: "the solution does not balance the flows to the tolerance",
            });
        }
        Ok(Stationary {
            probabilities: pi,
            residual,
        })
    }

    /// `‖π Q‖₁ / Σ_j π_j q_j` (0 for a chain with no flow at all).
    fn residual(&self, pi: &[f64]) -> f64 {
        let mut net = vec![0.0f64; self.states];
        let mut flow = 0.0;
        for &(from, to, rate) in &self.transitions {
            let f = pi[from] * rate;
            net[to] += f;
            net[from] -= f;
            flow += f;
        }
        if flow == 0.0 {
            return 0.0;
        }
        net.iter().map(|x| x.abs()).sum::<f64>() / flow
    }
}

/// Steady state of one loss group whose blocked callers redial.
///
/// Every share is per fresh call or per attempt as its name says, matching
/// the simulated figures of the same names.
#[derive(Debug, Clone, PartialEq)]
pub struct Redials {
    /// Share of fresh calls whose first attempt finds every server busy:
    /// `P(busy = N)` (Poisson arrivals see time averages).
    pub first_attempt_blocking: f64,
    /// Blocked attempts over all attempts, redials included.
    pub attempt_blocking: f64,
    /// Calls finally lost per fresh call: `(1 - p)` x blocked attempt rate /
    /// fresh call rate.
    pub loss: f64,
    /// Attempts per fresh call (1 when nobody redials).
    pub attempts_per_call: f64,
    /// Mean busy servers (erlangs).
    pub carried_traffic: f64,
    /// Share of time every server is busy (equal to
    /// `first_attempt_blocking`).
    pub time_congestion: f64,
    /// Mean number of callers waiting to redial.
    pub mean_orbit: f64,
    /// The largest orbit held in the chain.
    pub orbit_cut: u32,
    /// Estimated probability of the orbits beyond the cut (left out).
    pub tail_estimate: f64,
    /// Balance residual of the solution.
    pub residual: f64,
}

/// Solves the redial model exactly (up to the orbit cut): `servers` servers,
/// fresh Poisson calls offering `traffic` erlangs, exponential holding of
/// mean `holding_s`; a blocked attempt (fresh or redial) redials with chance
/// `redial_chance` after an exponential delay of mean `redial_delay_s`,
/// with no limit on the attempts; otherwise the call is lost.
///
/// # Formula
///
/// State `(i, j)`: `i` busy servers, `j` callers waiting to redial. With
/// `λ = traffic / holding_s`, `μ = 1 / holding_s`, `ν = 1 / redial_delay_s`
/// and `p = redial_chance`: a fresh call moves `(i, j) -> (i + 1, j)` at
/// rate `λ` when `i < N`, else `(N, j) -> (N, j + 1)` at rate `λ p`; a
/// redial moves `(i, j) -> (i + 1, j - 1)` at rate `j ν` when `i < N`, else
/// `(N, j) -> (N, j - 1)` at rate `j ν (1 - p)` (the caller gives up); a
/// call ends `(i, j) -> (i - 1, j)` at rate `i μ`. Then
/// `first_attempt_blocking = Σ_j π(N, j)`, attempt rate
/// `λ + ν E[j]`, blocked attempt rate `Σ_j π(N, j) (λ + j ν)`,
/// `loss = (1 - p) x blocked rate / λ`.
///
/// Source: the retrial queue with non-persistent callers (J. R. Artalejo,
/// G. I. Falin and J. G. C. Templeton; G. I. Falin and J. G. C. Templeton,
/// "Retrial Queues", Chapman & Hall, 1997, the M/M/c model with
/// impatience, as recalled from memory); the balance equations are read
/// off the transitions above.
///
/// # Numerics
///
/// The orbit is cut at level `J`, doubled from a first guess until the
/// probability of level `J` and the geometric tail it suggests (ratio of
/// level `J` to level `J - 1`) together fall below [`TAIL_TOLERANCE`];
/// fresh callers who would join a full orbit are dropped. For `p < 1` the
/// levels fall faster than geometrically once `J ν (1 - p)` passes `λ`, so
/// the estimate is conservative there. Work: `(N + 1) J x (N + 1)²`.
///
/// # Errors
///
/// `servers >= 1`, finite `traffic >= 0`, holding and delay finite and
/// above 0, `0 <= redial_chance <= 1`. [`FormulaError::Unstable`] when every
/// blocked caller redials (`p = 1`) and the traffic is at least the
/// servers. [`FormulaError::OutOfRange`] when the orbit would pass
/// [`MAX_ORBIT`] or the chain [`MAX_BAND_CELLS`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::{chains, erlang_b};
/// let r = chains::redials(10, 5.0, 180.0, 0.5, 60.0)?;
/// // Redials add load: the first attempt is blocked more often than in
/// // Erlang's group, and a call is lost less often than an attempt.
/// assert!(r.first_attempt_blocking > erlang_b::blocking(10, 5.0)?);
/// assert!(r.loss < r.first_attempt_blocking);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn redials(
    servers: u32,
    traffic: f64,
    holding_s: f64,
    redial_chance: f64,
    redial_delay_s: f64,
) -> Result<Redials, FormulaError> {
    let servers = check_servers("servers", at_least_one("servers", servers)?)?;
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let redial_delay_s = positive("mean redial delay (s)", redial_delay_s)?;
    let p = redial_chance;
    if !(0.0..=1.0).contains(&p) {
        return Err(FormulaError::InvalidArgument {
            name: "redial chance",
            value: p,
            expected: "a share from 0 to 1 (0% to 100%)",
        });
    }
    if p == 1.0 && traffic >= f64::from(servers) {
        return Err(FormulaError::Unstable {
            traffic,
            agents: servers,
        });
    }
    let lambda = traffic / holding_s;
    let mu = 1.0 / holding_s;
    let nu = 1.0 / redial_delay_s;
    let width = servers as usize + 1;
    // First guess: a few times the orbit that the fresh blocked stream alone
    // would build with every redial blocked, at least 16 levels.
    let guess = (8.0 * lambda * p * redial_delay_s / (1.0 - p).max(0.05)).ceil();
    let mut cut = (guess.min(f64::from(MAX_ORBIT)) as u32).max(16);
    loop {
        let levels = cut as usize + 1;
        let states = width.checked_mul(levels).ok_or(FormulaError::OutOfRange {
            what: "states of the chain",
            limit: MAX_STATES as u64,
        })?;
        let index = |i: usize, j: usize| j * width + i;
        let n = servers as usize;
        let mut chain = Chain::new(states)?;
        for j in 0..levels {
            let redial_rate = j as f64 * nu;
            for i in 0..=n {
                let here = index(i, j);
                if i < n {
                    chain.add(here, index(i + 1, j), lambda)?;
                    if j > 0 {
                        chain.add(here, index(i + 1, j - 1), redial_rate)?;
                    }
                } else {
                    if j < cut as usize {
                        chain.add(here, index(n, j + 1), lambda * p)?;
                    }
                    if j > 0 {
                        chain.add(here, index(n, j - 1), redial_rate * (1.0 - p))?;
                    }
                }
                if i > 0 {
                    chain.add(here, index(i - 1, j), i as f64 * mu)?;
                }
            }
        }
        let solution = chain.solve()?;
        let pi = &solution.probabilities;
        let level = |j: usize| -> f64 { pi[j * width..(j + 1) * width].iter().sum() };
        let last = level(cut as usize);
        let before = level(cut as usize - 1);
        let tail_estimate = if last == 0.0 {
            0.0
        } else if last < before {
            let r = last / before;
            last + last * r / (1.0 - r)
        } else {
            f64::INFINITY
        };
        if tail_estimate <= TAIL_TOLERANCE {
            let mut full = 0.0;
            let mut blocked_rate = 0.0;
            let mut orbit = 0.0;
            let mut busy = 0.0;
            for j in 0..levels {
                for i in 0..=n {
                    let q = pi[index(i, j)];
                    orbit += q * j as f64;
                    busy += q * i as f64;
                    if i == n {
                        full += q;
                        blocked_rate += q * (lambda + j as f64 * nu);
                    }
                }
            }
            let attempt_rate = lambda + nu * orbit;
            let (attempt_blocking, loss, attempts_per_call) = if lambda > 0.0 {
                (
                    blocked_rate / attempt_rate,
                    (1.0 - p) * blocked_rate / lambda,
                    attempt_rate / lambda,
                )
            } else {
                (0.0, 0.0, 1.0)
            };
            return Ok(Redials {
                first_attempt_blocking: full,
                attempt_blocking,
                loss,
                attempts_per_call,
                carried_traffic: busy,
                time_congestion: full,
                mean_orbit: orbit,
                orbit_cut: cut,
                tail_estimate,
                residual: solution.residual,
            });
        }
        if cut >= MAX_ORBIT {
            return Err(FormulaError::OutOfRange {
                what: "orbit of callers waiting to redial",
                limit: u64::from(MAX_ORBIT),
            });
        }
        cut = cut.saturating_mul(2).min(MAX_ORBIT);
    }
}

/// A first-choice group of an overflow network and the Poisson traffic
/// offered to it first.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FirstChoice {
    /// Servers (circuits) of the group.
    pub servers: u32,
    /// Offered traffic in erlangs.
    pub traffic: f64,
}

/// Steady state of an overflow network (see [`overflow_network`]).
#[derive(Debug, Clone, PartialEq)]
pub struct OverflowNetwork {
    /// Per first-choice stream: share of its calls lost (its own group and
    /// the final group both full).
    pub first_choice_loss: Vec<f64>,
    /// Share of the direct stream's calls lost (the final group full); also
    /// the final group's time congestion.
    pub direct_loss: f64,
    /// Per first-choice group: mean overflow traffic in erlangs (offered
    /// traffic x share of time the group is full), the occupancy of an
    /// infinite group that each overflowing call would hold.
    pub overflow_mean: Vec<f64>,
    /// Per first-choice group: carried traffic in erlangs.
    pub first_choice_carried: Vec<f64>,
    /// Carried traffic of the final group in erlangs.
    pub final_carried: f64,
    /// Share of time the final group has no free server.
    pub final_time_congestion: f64,
    /// States of the chain.
    pub states: usize,
    /// Balance residual of the solution.
    pub residual: f64,
}

/// Solves an overflow network exactly: first-choice groups, each offered
/// its own Poisson stream, overflow to one shared final group of
/// `final_servers`, which also takes a direct Poisson stream of
/// `direct_traffic` erlangs; blocked calls are cleared; every call's holding
/// is exponential with one common mean (which then drops out: traffic in
/// erlangs is all that matters).
///
/// # Formula
///
/// State `(n_1, ..., n_k, m)`, busy servers of each first-choice group and
/// of the final group, time in mean holding times. Stream `i` moves
/// `n_i -> n_i + 1` at rate `A_i` when `n_i < N_i`, else `m -> m + 1` when
/// `m < F`; the direct stream moves `m -> m + 1` at rate `A_d` when
/// `m < F`; calls end at rates `n_i` and `m`. Loss of stream `i`:
/// `P(n_i = N_i, m = F)`; of the direct stream `P(m = F)` (Poisson arrivals
/// see time averages). Mean overflow of group `i`: `A_i P(n_i = N_i)`, which
/// is Riordan's `A_i E_{N_i}(A_i)` as each first-choice group alone is an
/// Erlang loss group.
///
/// Source: the overflow setting of R. I. Wilkinson, "Theories for toll
/// traffic engineering in the U.S.A.", Bell System Technical Journal 35
/// (1956), solved here by its balance equations rather than by the
/// equivalent random approximation.
///
/// # Numerics
///
/// The state space is the product of the groups' sizes plus one; the
/// largest group is put outermost, which keeps the band narrow. Work:
/// states x (states / (largest + 1))².
///
/// # Errors
///
/// Finite traffic >= 0 everywhere; [`FormulaError::OutOfRange`] when the
/// chain would pass [`MAX_STATES`] or [`MAX_BAND_CELLS`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::chains::{self, FirstChoice};
/// let net = chains::overflow_network(
///     &[FirstChoice { servers: 10, traffic: 8.0 }, FirstChoice { servers: 7, traffic: 5.0 }],
///     8,
///     2.0,
/// )?;
/// // The direct stream meets the final group full more often than a
/// // first-choice stream meets both its groups full.
/// assert!(net.direct_loss > net.first_choice_loss[0]);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn overflow_network(
    first_choice: &[FirstChoice],
    final_servers: u32,
    direct_traffic: f64,
) -> Result<OverflowNetwork, FormulaError> {
    for g in first_choice {
        check_servers("servers of a first-choice group", g.servers)?;
        non_negative(
            "offered traffic of a first-choice group (erlangs)",
            g.traffic,
        )?;
    }
    let final_servers = check_servers("servers of the final group", final_servers)?;
    let direct_traffic = non_negative(
        "direct traffic to the final group (erlangs)",
        direct_traffic,
    )?;
    // Dimensions: the first-choice groups, then the final group.
    let sizes: Vec<usize> = first_choice
        .iter()
        .map(|g| g.servers as usize + 1)
        .chain(std::iter::once(final_servers as usize + 1))
        .collect();
    let too_many = FormulaError::OutOfRange {
        what: "states of the chain",
        limit: MAX_STATES as u64,
    };
    let states = sizes
        .iter()
        .try_fold(1usize, |acc, &s| acc.checked_mul(s))
        .ok_or(too_many.clone())?;
    if states > MAX_STATES {
        return Err(too_many);
    }
    // Strides: the largest dimension varies slowest (outermost), so that the
    // widest jump is states / (its size).
    let mut order: Vec<usize> = (0..sizes.len()).collect();
    order.sort_by_key(|&d| sizes[d]);
    let mut stride = vec![0usize; sizes.len()];
    let mut step = 1usize;
    for &d in &order {
        stride[d] = step;
        step *= sizes[d];
    }
    let k = first_choice.len();
    let fin = k;
    let coordinate = |state: usize, d: usize| (state / stride[d]) % sizes[d];
    let mut chain = Chain::new(states)?;
    for state in 0..states {
        let m = coordinate(state, fin);
        let final_free = m < final_servers as usize;
        for (d, g) in first_choice.iter().enumerate() {
            let n = coordinate(state, d);
            if n < g.servers as usize {
                chain.add(state, state + stride[d], g.traffic)?;
            } else if final_free {
                chain.add(state, state + stride[fin], g.traffic)?;
            }
            if n > 0 {
                chain.add(state, state - stride[d], n as f64)?;
            }
        }
        if final_free {
            chain.add(state, state + stride[fin], direct_traffic)?;
        }
        if m > 0 {
            chain.add(state, state - stride[fin], m as f64)?;
        }
    }
    let solution = chain.solve()?;
    let pi = &solution.probabilities;
    let mut first_choice_loss = vec![0.0; k];
    let mut full_share = vec![0.0; k];
    let mut first_choice_carried = vec![0.0; k];
    let mut final_carried = 0.0;
    let mut final_full = 0.0;
    for (state, &q) in pi.iter().enumerate() {
        let m = coordinate(state, fin);
        final_carried += q * m as f64;
        let final_is_full = m == final_servers as usize;
        if final_is_full {
            final_full += q;
        }
        for (d, g) in first_choice.iter().enumerate() {
            let n = coordinate(state, d);
            first_choice_carried[d] += q * n as f64;
            if n == g.servers as usize {
                full_share[d] += q;
                if final_is_full {
                    first_choice_loss[d] += q;
                }
            }
        }
    }
    let overflow_mean = first_choice
        .iter()
        .zip(&full_share)
        .map(|(g, share)| g.traffic * share)
        .collect();
    Ok(OverflowNetwork {
        first_choice_loss,
        direct_loss: final_full,
        overflow_mean,
        first_choice_carried,
        final_carried,
        final_time_congestion: final_full,
        states,
        residual: solution.residual,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chain_rejects_bad_input() {
        assert!(Chain::new(0).is_err());
        assert!(Chain::new(MAX_STATES + 1).is_err());
        let mut c = Chain::new(2).unwrap();
        assert!(c.add(0, 2, 1.0).is_err());
        assert!(c.add(0, 1, f64::NAN).is_err());
        assert!(c.add(0, 1, -1.0).is_err());
    }

    #[test]
    fn two_state_chain() {
        // On-off source: up at rate 2, down at rate 3: P(on) = 2/5.
        let mut c = Chain::new(2).unwrap();
        c.add(0, 1, 2.0).unwrap();
        c.add(1, 0, 3.0).unwrap();
        let s = c.solve().unwrap();
        assert!((s.probabilities[1] - 0.4).abs() < 1e-15);
    }

    #[test]
    fn reducible_chain_is_an_error() {
        // State 1 is absorbing: it never returns to state 0.
        let mut c = Chain::new(3).unwrap();
        c.add(0, 1, 1.0).unwrap();
        c.add(2, 1, 1.0).unwrap();
        assert!(matches!(c.solve(), Err(FormulaError::NoSolution { .. })));
    }

    #[test]
    fn redials_reject_bad_parameters() {
        assert!(redials(0, 1.0, 180.0, 0.5, 60.0).is_err());
        assert!(redials(5, f64::NAN, 180.0, 0.5, 60.0).is_err());
        assert!(redials(5, 1.0, 0.0, 0.5, 60.0).is_err());
        assert!(redials(5, 1.0, 180.0, 1.5, 60.0).is_err());
        assert!(redials(5, 1.0, 180.0, f64::NAN, 60.0).is_err());
        assert!(redials(5, 1.0, 180.0, 0.5, -1.0).is_err());
        assert!(matches!(
            redials(5, 5.0, 180.0, 1.0, 60.0),
            Err(FormulaError::Unstable { .. })
        ));
    }

    #[test]
    fn overflow_network_rejects_bad_traffic() {
        let g = FirstChoice {
            servers: 3,
            traffic: -1.0,
        };
        assert!(overflow_network(&[g], 2, 0.0).is_err());
        assert!(overflow_network(&[], 2, f64::INFINITY).is_err());
    }
}
