//! A loss group whose blocked callers redial, by the usual fixed point: each
//! attempt, fresh or repeated, is taken to meet the same blocking `B`, and
//! the attempts together are taken to be Poisson, so `B` is Erlang B of the
//! attempt traffic the redials themselves build.
//!
//! Owns the fixed point and the shares that follow from it. Must not touch
//! simulation, files or printing. The exact Markov chain of one such group
//! (exponential holding and redial delay) is `chains::redials`.

use super::erlang_b::{self, check_servers};
use super::error::{FormulaError, at_least_one, non_negative};

/// The most iterations the fixed point may take.
pub const MAX_ITERATIONS: u32 = 100_000;

/// One stream of fresh Poisson calls offered to the group, and how its
/// blocked callers redial.
#[derive(Debug, Clone, PartialEq)]
pub struct RedialingStream {
    /// Fresh traffic offered, erlangs (fresh calls x mean holding).
    pub traffic: f64,
    /// Chance of the first, second, ... redial after a blocked attempt; the
    /// last repeats. Empty: nobody redials.
    pub chances: Vec<f64>,
    /// Attempts in all, the first included; `None`: no limit.
    pub max_attempts: Option<u32>,
}

/// Per-stream shares from the fixed point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StreamShares {
    /// Attempts per fresh call, the first included.
    pub attempts_per_call: f64,
    /// Fresh calls finally lost (blocked on their last attempt) per fresh
    /// call: `1 - (1 - B) x attempts_per_call`.
    pub loss: f64,
}

/// The fixed point of a loss group with redials.
#[derive(Debug, Clone, PartialEq)]
pub struct FixedPoint {
    /// `B`: the blocking of every attempt, fresh or repeated; so also the
    /// first-attempt blocking, the attempt blocking and the time congestion
    /// (Poisson attempts see time averages).
    pub blocking: f64,
    /// Attempt traffic offered, erlangs: `Σ A_s x attempts per call`.
    pub attempt_traffic: f64,
    /// Shares per stream, in the order given.
    pub streams: Vec<StreamShares>,
    /// Iterations taken.
    pub iterations: u32,
}

impl FixedPoint {
    /// Carried traffic (erlangs): `(1 - B) x attempt traffic`.
    pub fn carried_traffic(&self) -> f64 {
        (1.0 - self.blocking) * self.attempt_traffic
    }
}

/// Attempts per fresh call when every attempt is blocked with chance `b`:
/// `Σ_k q_k`, `q_1 = 1`, `q_{k+1} = q_k b c_k`, `c_k` the chance of redialing
/// after attempt `k` (0 from the attempt limit on).
fn attempts(st: &RedialingStream, b: f64) -> f64 {
    let Some(&last) = st.chances.last() else {
        return 1.0;
    };
    let limit = st.max_attempts.map_or(u64::MAX, u64::from);
    let listed = st.chances.len() as u64;
    let mut q = 1.0;
    let mut sum = 1.0;
    let mut k = 1u64;
    // Attempts whose redial chance is one of the listed, not the repeated.
    while k < listed && k < limit {
        q *= b * st.chances[(k - 1) as usize];
        sum += q;
        k += 1;
    }
    if k >= limit {
        return sum;
    }
    // From attempt k on the chance is `last`: a geometric run of
    // `limit - k` more attempts (unbounded without a limit).
    let r = b * last;
    if st.max_attempts.is_none() {
        return if r < 1.0 {
            sum + q * r / (1.0 - r)
        } else {
            f64::INFINITY
        };
    }
    let t = (limit - k) as f64;
    if r < 1.0 {
        sum + q * r * (1.0 - r.powf(t)) / (1.0 - r)
    } else {
        sum + q * t
    }
}

/// Solves the redial fixed point for `servers` servers offered the given
/// streams of fresh Poisson calls.
///
/// # Formula
///
/// `B = E_N(Σ_s A_s a_s(B))`, `E_N` Erlang B and `a_s(B)` the attempts per
/// fresh call of stream `s` when every attempt is blocked with chance `B`.
/// For a constant redial chance `p` and no attempt limit `a = 1 / (1 - p B)`,
/// so `B = E_N(A / (1 - p B))`, attempts per call `1 / (1 - p B)` and loss
/// `(1 - p) B / (1 - p B)`. Then first-attempt blocking = attempt blocking
/// = time congestion = `B`.
///
/// Approximate: it treats the redials as Poisson attempts that see the
/// time-average state, which holds only when redials come long after the
/// blocking (redial delay much longer than the holding time); with short
/// delays a redial often finds the group still full and the fixed point
/// understates blocking. Independent of the holding and delay laws. Source:
/// common practice in teletraffic engineering (the repeated-attempt
/// balance of attempt traffic, as in the ITU-T Teletraffic Engineering
/// Handbook's chapter on repeated calls, as recalled from memory); not one
/// paper.
///
/// # Numerics
///
/// Iteration `B_{k+1} = E_N(Σ A_s a_s(B_k))` from `B_0 = 0`. The right side
/// grows with `B`, so the iterates rise monotonically to the smallest fixed
/// point (where several exist, the one a group starting empty would reach).
/// It stops when the remaining distance, estimated from the ratio of
/// successive steps, is below `1e-13 B`.
///
/// # Example
///
/// ```
/// use busyhour::formulas::{erlang_b, redial_fixed_point};
/// let f = redial_fixed_point::fixed_point(10, 7.0, 0.5)?;
/// let s = f.streams[0];
/// assert!(f.blocking > erlang_b::blocking(10, 7.0)?);
/// let p = 0.5;
/// assert!((s.attempts_per_call - 1.0 / (1.0 - p * f.blocking)).abs() < 1e-12);
/// assert!((s.loss - (1.0 - p) * f.blocking / (1.0 - p * f.blocking)).abs() < 1e-12);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
///
/// # Errors
///
/// `servers >= 1` (up to [`erlang_b::MAX_FORMULA_SERVERS`]), at least one stream,
/// each with finite `traffic >= 0`, chances from 0 to 1 and a limit of at
/// least one attempt. [`FormulaError::Unstable`] when the streams that redial
/// for ever with chance 1 offer at least `servers` erlangs (they would be
/// carried in full). [`FormulaError::OutOfRange`] when the iteration has not
/// settled after [`MAX_ITERATIONS`].
pub fn solve(servers: u32, streams: &[RedialingStream]) -> Result<FixedPoint, FormulaError> {
    let servers = check_servers("servers", at_least_one("servers", servers)?)?;
    if streams.is_empty() {
        return Err(FormulaError::InvalidArgument {
            name: "streams",
            value: 0.0,
            expected: "at least one stream",
        });
    }
    let mut persistent = 0.0;
    for st in streams {
        non_negative("offered traffic (erlangs)", st.traffic)?;
        for &c in &st.chances {
            if !(0.0..=1.0).contains(&c) {
                return Err(FormulaError::InvalidArgument {
                    name: "redial chance",
                    value: c,
                    expected: "a share from 0 to 1 (0% to 100%)",
                });
            }
        }
        if let Some(m) = st.max_attempts {
            at_least_one("attempts in all", m)?;
        } else if st.chances.last() == Some(&1.0) {
            persistent += st.traffic;
        }
    }
    if persistent >= f64::from(servers) {
        return Err(FormulaError::Unstable {
            traffic: persistent,
            agents: servers,
        });
    }
    let offered = |b: f64| -> f64 { streams.iter().map(|st| st.traffic * attempts(st, b)).sum() };
    let mut b = 0.0f64;
    let mut last_step = f64::INFINITY;
    for iterations in 1..=MAX_ITERATIONS {
        let a = offered(b);
        if !a.is_finite() {
            break;
        }
        let next = erlang_b::blocking(servers, a)?;
        let step = next - b;
        b = next;
        let ratio = step / last_step;
        // The first step has no ratio to judge by; afterwards stop when the
        // steps, falling geometrically, leave less than 1e-13 B to go.
        let settled = b == 0.0
            || (iterations > 1
                && (step <= 0.0 || (ratio < 1.0 && step * ratio / (1.0 - ratio) <= 1e-13 * b)));
        last_step = step;
        if settled {
            let attempt_traffic = offered(b);
            let streams = streams
                .iter()
                .map(|st| {
                    let attempts_per_call = attempts(st, b);
                    StreamShares {
                        attempts_per_call,
                        loss: (1.0 - (1.0 - b) * attempts_per_call).clamp(0.0, 1.0),
                    }
                })
                .collect();
            return Ok(FixedPoint {
                blocking: b,
                attempt_traffic,
                streams,
                iterations,
            });
        }
    }
    Err(FormulaError::OutOfRange {
        what: "iterations of the redial fixed point",
        limit: u64::from(MAX_ITERATIONS),
    })
}

/// The fixed point for one stream offering `traffic` erlangs of fresh calls
/// whose blocked attempts redial with constant chance `redial_chance`, with
/// no limit on the attempts: `B = E_N(A / (1 - p B))`. See [`solve`].
///
/// # Errors
///
/// As for [`solve`].
pub fn fixed_point(
    servers: u32,
    traffic: f64,
    redial_chance: f64,
) -> Result<FixedPoint, FormulaError> {
    solve(
        servers,
        &[RedialingStream {
            traffic,
            chances: vec![redial_chance],
            max_attempts: None,
        }],
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_redials_is_erlang_b() {
        let f = fixed_point(10, 7.0, 0.0).expect("valid");
        let b = erlang_b::blocking(10, 7.0).expect("valid");
        assert!((f.blocking - b).abs() < 1e-15);
        assert_eq!(f.streams[0].attempts_per_call, 1.0);
        assert!((f.streams[0].loss - b).abs() < 1e-15);
    }

    #[test]
    fn attempt_limit_truncates_the_geometric_series() {
        let st = |max| RedialingStream {
            traffic: 1.0,
            chances: vec![0.8, 0.5],
            max_attempts: max,
        };
        let b: f64 = 0.3;
        // 1 + b 0.8 + b 0.8 (b 0.5) + ... ; with a limit of 3 attempts:
        let three = 1.0 + b * 0.8 + b * 0.8 * b * 0.5;
        assert!((attempts(&st(Some(3)), b) - three).abs() < 1e-15);
        assert_eq!(attempts(&st(Some(1)), b), 1.0);
        let r = b * 0.5;
        let unlimited = 1.0 + b * 0.8 * (1.0 + r / (1.0 - r));
        assert!((attempts(&st(None), b) - unlimited).abs() < 1e-15);
        assert!((attempts(&st(Some(1000)), b) - unlimited).abs() < 1e-12);
    }

    #[test]
    fn bad_arguments_and_persistent_overload_are_errors() {
        assert!(fixed_point(0, 1.0, 0.5).is_err());
        assert!(fixed_point(5, f64::NAN, 0.5).is_err());
        assert!(fixed_point(5, 1.0, 1.5).is_err());
        assert!(solve(5, &[]).is_err());
        assert!(matches!(
            fixed_point(5, 5.0, 1.0),
            Err(FormulaError::Unstable { .. })
        ));
        assert!(fixed_point(5, 4.0, 1.0).is_ok());
    }
}
