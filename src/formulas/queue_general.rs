//! Queues with Poisson arrivals and a general holding-time law (M/G/N):
//! the mean wait of all calls and the probability of waiting, from the mean
//! and the coefficient of variation (cv) of the holding time.
//!
//! Owns Pollaczek-Khinchine (one server, exact), the Allen-Cunneen two-moment
//! approximation (N servers) and Cosmetatos' correction for constant holding
//! (M/D/N). Must not touch simulation, files or printing.
//!
//! The queue is first come, first served, unlimited, with no abandonment; the
//! offered traffic must be below the number of agents.

use super::erlang_b::check_servers;
use super::erlang_c;
use super::error::{FormulaError, at_least_one, non_negative, positive};

/// Which method gave a [`Wait`], and whether it is exact.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// Pollaczek-Khinchine, one server: exact for any holding law.
    PollaczekKhinchine,
    /// Allen-Cunneen (Lee-Longton) two-moment form, N servers: approximate
    /// (exact at cv = 1, where it is Erlang C).
    AllenCunneen,
    /// Cosmetatos' correction for constant holding, N servers: approximate.
    Cosmetatos,
}

impl Method {
    /// The method's name as the formula column shows it; approximations say so.
    pub fn label(self) -> &'static str {
        match self {
            Method::PollaczekKhinchine => "Pollaczek-Khinchine",
            Method::AllenCunneen => "Allen-Cunneen (approx.)",
            Method::Cosmetatos => "Cosmetatos (approx.)",
        }
    }

    /// True when the method is exact for the queue it was chosen for.
    pub fn is_exact(self) -> bool {
        matches!(self, Method::PollaczekKhinchine)
    }
}

/// Mean wait and probability of waiting of an M/G/N queue.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Wait {
    /// Mean wait of all calls (those served at once count as 0 s), seconds.
    pub mean_wait_s: f64,
    /// Probability that a call waits.
    pub wait_probability: f64,
    /// The method used.
    pub method: Method,
}

fn check(
    agents: u32,
    traffic: f64,
    holding_s: f64,
    cv: f64,
) -> Result<(u32, f64, f64, f64), FormulaError> {
    let agents = check_servers("agents", at_least_one("agents", agents)?)?;
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    let holding_s = positive("mean holding time (s)", holding_s)?;
    let cv = non_negative("holding-time cv", cv)?;
    if traffic >= f64::from(agents) {
        return Err(FormulaError::Unstable { traffic, agents });
    }
    Ok((agents, traffic, holding_s, cv))
}

/// Pollaczek-Khinchine mean wait of all calls in the M/G/1 queue, seconds.
/// Exact for any holding law with finite variance.
///
/// # Formula
///
/// `W = ρ (1 + cv²) / (2 (1 - ρ)) · h`, `ρ = traffic < 1`, `h` the mean
/// holding time; the probability of waiting is `ρ`. Source: F. Pollaczek
/// (1930) and A. Y. Khinchine (1932), the M/G/1 mean-value formula, e.g. L.
/// Kleinrock, "Queueing Systems", vol. 1 (1975), as recalled from memory.
///
/// # Example
///
/// ```
/// use busyhour::formulas::queue_general;
/// // M/D/1 at 50% load: half the M/M/1 wait of one holding time.
/// let w = queue_general::pollaczek_khinchine(0.5, 120.0, 0.0)?;
/// assert!((w - 60.0).abs() < 1e-12);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
///
/// # Errors
///
/// [`FormulaError::Unstable`] when `traffic >= 1`; invalid arguments as
/// for [`mean_wait`].
pub fn pollaczek_khinchine(traffic: f64, holding_s: f64, cv: f64) -> Result<f64, FormulaError> {
    let (_, rho, h, cv) = check(1, traffic, holding_s, cv)?;
    Ok(rho * (1.0 + cv * cv) / (2.0 * (1.0 - rho)) * h)
}

/// Cosmetatos' approximation of the mean wait of all calls in the M/D/N
/// queue (constant holding time `holding_s`), seconds.
///
/// # Formula
///
/// `W_D ≈ ½ W_M · [1 + (1 - ρ)(N - 1)(√(4 + 5N) - 2) / (16 ρ N)]`, with
/// `W_M` the Erlang C mean wait of the same traffic and holding mean and
/// `ρ = traffic / N`. For `N = 1` it is exact (Pollaczek-Khinchine with
/// cv = 0). Source: G. P. Cosmetatos, "Some approximate equilibrium results
/// for the multi-server queue (M/G/r)", Operational Research Quarterly 27
/// (1976), as recalled from memory (also quoted in H. C. Tijms, "A First
/// Course in Stochastic Models", 2003). Approximate; its error is a few per
/// cent at moderate and heavy load.
///
/// # Example
///
/// ```
/// use busyhour::formulas::{erlang_c, queue_general};
/// let w = queue_general::cosmetatos(10, 8.0, 180.0)?;
/// let mm = erlang_c::mean_wait(10, 8.0, 180.0)?;
/// assert!(w > 0.5 * mm && w < 0.6 * mm);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
///
/// # Errors
///
/// As for [`mean_wait`].
pub fn cosmetatos(agents: u32, traffic: f64, holding_s: f64) -> Result<f64, FormulaError> {
    let (n, a, h, _) = check(agents, traffic, holding_s, 0.0)?;
    if a == 0.0 {
        return Ok(0.0);
    }
    let mm = erlang_c::mean_wait(n, a, h)?;
    let nf = f64::from(n);
    let rho = a / nf;
    let correction = (1.0 - rho) * (nf - 1.0) * ((4.0 + 5.0 * nf).sqrt() - 2.0) / (16.0 * rho * nf);
    Ok(0.5 * mm * (1.0 + correction))
}

/// Allen-Cunneen approximation of the mean wait of all calls in the M/G/N
/// queue, seconds.
///
/// # Formula
///
/// `W ≈ W_M · (1 + cv²) / 2`, `W_M` the Erlang C mean wait (the
/// Lee-Longton form; with Poisson arrivals, Allen-Cunneen's
/// `(c_a² + c_s²) / 2` factor reduces to it). Exact at `N = 1`
/// (Pollaczek-Khinchine) and at `cv = 1` with exponential holding (Erlang
/// C); approximate otherwise. Sources: A. M. Lee and P. A. Longton,
/// "Queueing processes associated with airline passenger check-in",
/// Operational Research Quarterly 10 (1959); A. O. Allen, "Probability,
/// Statistics, and Queueing Theory" (1978), crediting Cunneen; as recalled
/// from memory.
///
/// # Example
///
/// ```
/// use busyhour::formulas::{erlang_c, queue_general};
/// let w = queue_general::allen_cunneen(10, 8.0, 180.0, 1.0)?;
/// assert!((w - erlang_c::mean_wait(10, 8.0, 180.0)?).abs() < 1e-9);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
///
/// # Errors
///
/// As for [`mean_wait`].
pub fn allen_cunneen(
    agents: u32,
    traffic: f64,
    holding_s: f64,
    cv: f64,
) -> Result<f64, FormulaError> {
    let (n, a, h, cv) = check(agents, traffic, holding_s, cv)?;
    Ok(erlang_c::mean_wait(n, a, h)? * (1.0 + cv * cv) / 2.0)
}

/// Mean wait of all calls and probability of waiting of the M/G/N queue, by
/// the best of the methods here for the case: Pollaczek-Khinchine for one
/// agent (exact), Cosmetatos for constant holding (`cv = 0`) on several
/// agents, Allen-Cunneen otherwise (both approximate).
///
/// # Formula
///
/// The mean wait as in [`pollaczek_khinchine`], [`cosmetatos`] and
/// [`allen_cunneen`]. The probability of waiting: `ρ` for one agent (exact:
/// the share of time the server is busy, which Poisson arrivals see);
/// Erlang C `C(N, A)` for several (approximate, exact for exponential
/// holding; the two-moment methods above keep it).
///
/// # Example
///
/// ```
/// use busyhour::formulas::queue_general::{self, Method};
/// let w = queue_general::mean_wait(10, 8.0, 180.0, 0.0)?;
/// assert_eq!(w.method, Method::Cosmetatos);
/// let one = queue_general::mean_wait(1, 0.8, 180.0, 0.5)?;
/// assert!(one.method.is_exact() && (one.wait_probability - 0.8).abs() < 1e-15);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
///
/// # Errors
///
/// `agents >= 1` (up to [`super::erlang_b::MAX_FORMULA_SERVERS`]), finite
/// `traffic >= 0`, finite `holding_s > 0`, finite `cv >= 0`;
/// [`FormulaError::Unstable`] when `traffic >= agents`.
pub fn mean_wait(agents: u32, traffic: f64, holding_s: f64, cv: f64) -> Result<Wait, FormulaError> {
    let (n, a, h, cv) = check(agents, traffic, holding_s, cv)?;
    if n == 1 {
        return Ok(Wait {
            mean_wait_s: pollaczek_khinchine(a, h, cv)?,
            wait_probability: a,
            method: Method::PollaczekKhinchine,
        });
    }
    let wait_probability = erlang_c::wait_probability(n, a)?;
    let (mean_wait_s, method) = if cv == 0.0 {
        (cosmetatos(n, a, h)?, Method::Cosmetatos)
    } else {
        (allen_cunneen(n, a, h, cv)?, Method::AllenCunneen)
    };
    Ok(Wait {
        mean_wait_s,
        wait_probability,
        method,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_arguments() {
        assert!(mean_wait(0, 1.0, 1.0, 1.0).is_err());
        assert!(mean_wait(2, f64::NAN, 1.0, 1.0).is_err());
        assert!(mean_wait(2, 1.0, 0.0, 1.0).is_err());
        assert!(mean_wait(2, 1.0, 1.0, -0.1).is_err());
        assert!(mean_wait(2, 1.0, 1.0, f64::INFINITY).is_err());
        assert!(matches!(
            mean_wait(2, 2.0, 1.0, 1.0),
            Err(FormulaError::Unstable { .. })
        ));
    }

    #[test]
    fn no_traffic_no_wait() {
        for cv in [0.0, 0.5, 2.0] {
            for n in [1, 5] {
                let w = mean_wait(n, 0.0, 60.0, cv).expect("valid");
                assert_eq!(w.mean_wait_s, 0.0);
                assert_eq!(w.wait_probability, 0.0);
            }
        }
    }
}
