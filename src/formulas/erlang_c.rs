//! Erlang C: the delay system M/M/N (callers wait as long as it takes, served
//! first come, first served), with mean wait, service level and agent sizing.

use super::erlang_b::{LowerMass, MAX_FORMULA_SERVERS, check_servers};
use super::error::{FormulaError, at_least_one, non_negative, open_share, positive};

/// Erlang C wait probability and its complement from the Erlang B state of
/// the same group: `C = N B / (N - A + A B)`, `1 - C = (N - A)(1 - B) / (N - A + A B)`.
/// Both are ratios of positive terms, so neither suffers cancellation.
fn wait_and_complement(agents: f64, traffic: f64, blocking: f64, carried_share: f64) -> (f64, f64) {
    let free = agents - traffic; // > 0 (checked by the caller)
    let denominator = free + traffic * blocking;
    (
        agents * blocking / denominator,
        free * carried_share / denominator,
    )
}

/// Validated agents and traffic of a stable queue.
fn stable(agents: u32, traffic: f64) -> Result<(f64, f64), FormulaError> {
    let agents = check_servers("agents", at_least_one("agents", agents)?)?;
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    if traffic >= f64::from(agents) {
        return Err(FormulaError::Unstable { traffic, agents });
    }
    Ok((f64::from(agents), traffic))
}

/// `(C, 1 - C)` for a stable queue.
fn wait_pair(agents: u32, traffic: f64) -> Result<(f64, f64), FormulaError> {
    let (n, a) = stable(agents, traffic)?;
    if a == 0.0 {
        return Ok((0.0, 1.0));
    }
    let mut state = LowerMass::new(a);
    state.run_to(agents);
    Ok(wait_and_complement(
        n,
        a,
        state.blocking(),
        state.carried_share(),
    ))
}

/// `1 - C e^{-x}` written as `(1 - C) + C (1 - e^{-x})`: a sum of two
/// non-negative terms.
fn answered_within(wait: f64, no_wait: f64, exponent: f64) -> f64 {
    no_wait - wait * (-exponent).exp_m1()
}

/// Erlang C probability of waiting `C(N, A)`: the share of calls that find
/// every agent busy and queue.
///
/// # Formula
///
/// `C(N, A) = N B(N, A) / (N - A (1 - B(N, A)))`, with `B` from the Erlang B
/// recursion; requires `A < N`. Source: Erlang's delay formula, e.g. the
/// ITU-T Teletraffic Engineering Handbook, chapter on the Erlang delay
/// system.
///
/// # Errors
///
/// [`FormulaError::Unstable`] when `traffic >= agents`.
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_c;
/// let c = erlang_c::wait_probability(2, 1.0)?;
/// assert!((c - 1.0 / 3.0).abs() < 1e-15);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn wait_probability(agents: u32, traffic: f64) -> Result<f64, FormulaError> {
    Ok(wait_pair(agents, traffic)?.0)
}

/// Erlang C mean waiting time of all calls (those served at once count as
/// 0 s), in seconds.
///
/// # Formula
///
/// `W = C(N, A) · h / (N - A)`, `h` the mean holding time. Source: the M/M/N
/// queue, e.g. the ITU-T Teletraffic Engineering Handbook.
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_c;
/// // M/M/1 at 50% load: W = ρ h / (1 - ρ) = 1 holding time.
/// let w = erlang_c::mean_wait(1, 0.5, 120.0)?;
/// assert!((w - 120.0).abs() < 1e-12);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn mean_wait(agents: u32, traffic: f64, holding_s: f64) -> Result<f64, FormulaError> {
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let (wait, _) = wait_pair(agents, traffic)?;
    Ok(wait * holding_s / (f64::from(agents) - traffic))
}

/// Erlang C service level: the share of calls answered within `within_s`
/// seconds, `P(W <= t)`.
///
/// # Formula
///
/// `P(W <= t) = 1 - C(N, A) e^{-(N - A) t / h}` (first come, first served;
/// exponential holding times). Computed as `(1 - C) + C (1 - e^{-(N-A)t/h})`
/// so that no digits cancel. Source: the waiting-time distribution of M/M/N,
/// e.g. the ITU-T Teletraffic Engineering Handbook.
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_c;
/// let sl = erlang_c::service_level(12, 10.0, 180.0, 20.0)?;
/// assert!(sl > 0.6 && sl < 0.8);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn service_level(
    agents: u32,
    traffic: f64,
    holding_s: f64,
    within_s: f64,
) -> Result<f64, FormulaError> {
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let within_s = non_negative("answer-within time (s)", within_s)?;
    let (wait, no_wait) = wait_pair(agents, traffic)?;
    let exponent = (f64::from(agents) - traffic) * within_s / holding_s;
    Ok(answered_within(wait, no_wait, exponent))
}

/// Agent occupancy `A / N`: the share of time an agent is busy.
///
/// # Formula
///
/// `ρ = A / N` (all offered traffic is carried in a stable delay system).
/// Source: e.g. the ITU-T Teletraffic Engineering Handbook.
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_c;
/// assert_eq!(erlang_c::occupancy(10, 8.0)?, 0.8);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn occupancy(agents: u32, traffic: f64) -> Result<f64, FormulaError> {
    let (n, a) = stable(agents, traffic)?;
    Ok(a / n)
}

/// Runs the Erlang B recursion upwards and returns the first stable `N` at
/// which `meets(N, C, 1 - C)` holds.
fn fewest_agents(traffic: f64, meets: impl Fn(f64, f64, f64) -> bool) -> Result<u32, FormulaError> {
    let mut state = LowerMass::new(traffic);
    while state.servers() < MAX_FORMULA_SERVERS {
        state.step();
        let n = f64::from(state.servers());
        if n <= traffic {
            continue;
        }
        let (wait, no_wait) =
            wait_and_complement(n, traffic, state.blocking(), state.carried_share());
        if meets(n, wait, no_wait) {
            return Ok(state.servers());
        }
    }
    Err(FormulaError::OutOfRange {
        what: "agents needed",
        limit: u64::from(MAX_FORMULA_SERVERS),
    })
}

/// The fewest agents whose Erlang C service level (share answered within
/// `within_s`) reaches `target_share`.
///
/// # Formula
///
/// Smallest `N > A` with `1 - C(N, A) e^{-(N-A) t/h} >= target`; the service
/// level increases with `N`, so the upward search from `⌊A⌋ + 1` finds it,
/// reusing one Erlang B recursion. Source: as [`service_level`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_c;
/// let n = erlang_c::agents_for_service_level(10.0, 180.0, 20.0, 0.8)?;
/// assert!(erlang_c::service_level(n, 10.0, 180.0, 20.0)? >= 0.8);
/// assert!(erlang_c::service_level(n - 1, 10.0, 180.0, 20.0)? < 0.8);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn agents_for_service_level(
    traffic: f64,
    holding_s: f64,
    within_s: f64,
    target_share: f64,
) -> Result<u32, FormulaError> {
    let traffic = positive("offered traffic (erlangs)", traffic)?;
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let within_s = non_negative("answer-within time (s)", within_s)?;
    let target = open_share("service level target", target_share)?;
    fewest_agents(traffic, |n, wait, no_wait| {
        answered_within(wait, no_wait, (n - traffic) * within_s / holding_s) >= target
    })
}

/// The fewest agents whose Erlang C mean wait (all calls) is at most
/// `max_mean_wait_s` seconds.
///
/// # Formula
///
/// Smallest `N > A` with `C(N, A) h / (N - A) <= W`; the mean wait decreases
/// with `N`. Source: as [`mean_wait`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_c;
/// let n = erlang_c::agents_for_mean_wait(10.0, 180.0, 15.0)?;
/// assert!(erlang_c::mean_wait(n, 10.0, 180.0)? <= 15.0);
/// assert!(erlang_c::mean_wait(n - 1, 10.0, 180.0)? > 15.0);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn agents_for_mean_wait(
    traffic: f64,
    holding_s: f64,
    max_mean_wait_s: f64,
) -> Result<u32, FormulaError> {
    let traffic = positive("offered traffic (erlangs)", traffic)?;
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let max_wait = positive("mean wait goal (s)", max_mean_wait_s)?;
    fewest_agents(traffic, |n, wait, _| {
        wait * holding_s / (n - traffic) <= max_wait
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unstable_and_bad_arguments_are_errors() {
        assert!(matches!(
            wait_probability(10, 10.0),
            Err(FormulaError::Unstable { .. })
        ));
        assert!(matches!(
            mean_wait(3, 7.5, 60.0),
            Err(FormulaError::Unstable { .. })
        ));
        assert!(wait_probability(0, 0.5).is_err());
        assert!(service_level(5, 2.0, 60.0, -1.0).is_err());
        assert!(service_level(5, 2.0, 0.0, 1.0).is_err());
        assert!(agents_for_service_level(2.0, 60.0, 20.0, 1.0).is_err());
        assert!(agents_for_mean_wait(2.0, 60.0, 0.0).is_err());
    }

    #[test]
    fn zero_traffic_never_waits() {
        assert_eq!(wait_probability(3, 0.0), Ok(0.0));
        assert_eq!(service_level(3, 0.0, 60.0, 0.0), Ok(1.0));
    }

    #[test]
    fn single_server_matches_mm1() {
        // M/M/1: C = ρ, P(W > t) = ρ e^{-(1-ρ) t / h}.
        let rho = 0.7;
        assert!((wait_probability(1, rho).unwrap() - rho).abs() < 1e-15);
        let sl = service_level(1, rho, 100.0, 50.0).unwrap();
        assert!((sl - (1.0 - rho * (-(1.0 - rho) * 0.5f64).exp())).abs() < 1e-15);
    }
}
