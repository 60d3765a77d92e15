//! Overflow traffic: Riordan's moments of the traffic a full group passes
//! on, Wilkinson's equivalent random method (with Rapp's approximation)
//! for a final group offered several overflow streams, and each stream's
//! own loss there with its overflow as Kuczura's interrupted Poisson
//! process.

use super::erlang_b::{self, LowerMass};
use super::error::{FormulaError, non_negative, positive};

/// Mean and variance of an overflow stream (as the occupancy of a virtual
/// group with infinitely many servers).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OverflowMoments {
    /// Mean overflow traffic in erlangs.
    pub mean: f64,
    /// Variance of the overflow traffic (erlangs²).
    pub variance: f64,
}

impl OverflowMoments {
    /// Peakedness `Z = variance / mean` (1 for Poisson traffic; above 1 for
    /// overflow). Defined as 1 when the mean is 0.
    pub fn peakedness(&self) -> f64 {
        if self.mean > 0.0 {
            self.variance / self.mean
        } else {
            1.0
        }
    }
}

/// Riordan's formula with `B` and `1 - B` already known.
fn riordan_moments(
    servers: f64,
    traffic: f64,
    blocking: f64,
    carried_share: f64,
) -> OverflowMoments {
    let mean = traffic * blocking;
    // N + 1 + M - A written as N + 1 - A(1 - B): no cancellation.
    let denominator = servers + 1.0 - traffic * carried_share;
    let variance = mean * (1.0 - mean + traffic / denominator);
    OverflowMoments { mean, variance }
}

/// Riordan's overflow moments: mean and variance of the traffic that
/// `traffic` erlangs of Poisson traffic overflow from a group of `servers`.
///
/// # Formula
///
/// `M = A B(N, A)`, `V = M (1 - M + A / (N + 1 + M - A))`. Source: J. Riordan
/// (1956), as given in R. I. Wilkinson, "Theories for toll traffic
/// engineering in the U.S.A.", Bell System Technical Journal 35 (1956), and
/// in the ITU-T Teletraffic Engineering Handbook, chapter on overflow
/// theory.
///
/// # Example
///
/// ```
/// use busyhour::formulas::overflow;
/// let m = overflow::riordan(10, 8.0)?;
/// assert!(m.peakedness() > 1.0);
/// // No servers: everything overflows, still Poisson.
/// let all = overflow::riordan(0, 8.0)?;
/// assert_eq!((all.mean, all.variance), (8.0, 8.0));
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn riordan(servers: u32, traffic: f64) -> Result<OverflowMoments, FormulaError> {
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    let servers = erlang_b::check_servers("servers", servers)?;
    if traffic == 0.0 {
        return Ok(OverflowMoments {
            mean: 0.0,
            variance: 0.0,
        });
    }
    let mut state = LowerMass::new(traffic);
    state.run_to(servers);
    Ok(riordan_moments(
        f64::from(servers),
        traffic,
        state.blocking(),
        state.carried_share(),
    ))
}

/// Riordan's overflow moments for a non-integer number of servers (the
/// equivalent group of the equivalent random method), with Erlang B
/// continued to real `N` by [`erlang_b::blocking_continuous`].
///
/// # Formula
///
/// As [`riordan`]. Source: as there; the continuation as in
/// [`erlang_b::blocking_continuous`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::overflow;
/// let whole = overflow::riordan(6, 4.0)?;
/// let same = overflow::riordan_continuous(6.0, 4.0)?;
/// assert!((same.variance / whole.variance - 1.0).abs() < 1e-12);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn riordan_continuous(servers: f64, traffic: f64) -> Result<OverflowMoments, FormulaError> {
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    Ok(match erlang_b::continuous_state(servers, traffic)? {
        Some(state) => riordan_moments(servers, traffic, state.blocking(), state.carried_share()),
        // No traffic: nothing overflows. No servers: everything does.
        None if traffic == 0.0 => OverflowMoments {
            mean: 0.0,
            variance: 0.0,
        },
        None => OverflowMoments {
            mean: traffic,
            variance: traffic,
        },
    })
}

/// The equivalent random group: Poisson traffic `traffic` offered to
/// `servers` (possibly fractional) servers whose overflow has the given mean
/// and variance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EquivalentRandom {
    /// Equivalent random traffic `A*` in erlangs.
    pub traffic: f64,
    /// Equivalent number of servers `N*` (fractional, >= 0).
    pub servers: f64,
}

/// Wilkinson's equivalent random method with Rapp's approximation: the
/// Poisson traffic and group size whose overflow has mean `mean` and
/// variance `variance`.
///
/// # Formula
///
/// With peakedness `z = V / M`: `A* = V + 3 z (z - 1)`,
/// `N* = A* (M + z) / (M + z - 1) - M - 1` (kept fractional, clamped at 0).
/// Poisson traffic (`z = 1`) gives `A* = M`, `N* = 0` exactly. Rapp's
/// formula approximates the exact inverse of Riordan's moments
/// ([`equivalent_random_exact`]): measured against it, `A*` and `N*` are off
/// by up to about 20% at peakedness 4 to 6.
///
/// Source: R. I. Wilkinson, Bell System Technical Journal 35 (1956); Y. Rapp,
/// "Planning of junction network in a multi-exchange area", Ericsson
/// Technics 20 (1964); both as in the ITU-T Teletraffic Engineering
/// Handbook, chapter on overflow theory.
///
/// # Errors
///
/// `mean > 0` and finite; `variance >= mean` (overflow traffic is never
/// smoother than Poisson; a shortfall of 1e-12 relative is taken as
/// rounding).
///
/// # Example
///
/// ```
/// use busyhour::formulas::overflow;
/// // The overflow of 10 erlangs from 12 servers: Rapp's equivalent group is
/// // close to (10 erlangs, 12 servers), not equal to it.
/// let m = overflow::riordan(12, 10.0)?;
/// let eq = overflow::equivalent_random(m.mean, m.variance)?;
/// assert!((eq.traffic - 10.0).abs() < 0.5 && (eq.servers - 12.0).abs() < 0.6);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn equivalent_random(mean: f64, variance: f64) -> Result<EquivalentRandom, FormulaError> {
    let mean = positive("overflow mean (erlangs)", mean)?;
    let variance = positive("overflow variance", variance)?;
    let mut z = variance / mean;
    if z < 1.0 - 1e-12 {
        return Err(FormulaError::InvalidArgument {
            name: "overflow variance",
            value: variance,
            expected: "at least the overflow mean (peakedness >= 1)",
        });
    }
    z = z.max(1.0);
    let variance = mean * z;
    let traffic = variance + 3.0 * z * (z - 1.0);
    let servers = (traffic * (mean + z) / (mean + z - 1.0) - mean - 1.0).max(0.0);
    Ok(EquivalentRandom { traffic, servers })
}

/// Wilkinson's equivalent random method solved exactly: the Poisson traffic
/// `A*` and (fractional) servers `N*` whose Riordan overflow moments are
/// exactly `mean` and `variance`.
///
/// # Formula
///
/// Solves `A* B(N*, A*) = M` and `V(N*, A*) = V` with Riordan's variance and
/// Erlang B continued to real servers ([`erlang_b::blocking_continuous`]).
/// For each trial `A* >= M` the mean equation fixes `N*` (the overflow mean
/// falls as servers are added); along that curve the variance rises with
/// `A*`, so an outer root search on `A*` finds the pair. Both searches are
/// bracketed (the integer Erlang B recursion brackets `N*` between whole
/// numbers; the outer bracket grows from Rapp's approximation,
/// [`equivalent_random`]) and use the Illinois variant of regula falsi,
/// stopping at the rounding level of the recursion (about `1e-12` relative
/// at 10,000 servers). Source: R. I. Wilkinson, Bell System Technical Journal
/// 35 (1956); ITU-T Teletraffic Engineering Handbook, chapter on overflow
/// theory.
///
/// # Errors
///
/// As [`equivalent_random`]; [`FormulaError::OutOfRange`] if the equivalent
/// group would need more than [`erlang_b::MAX_FORMULA_SERVERS`] servers.
///
/// # Example
///
/// ```
/// use busyhour::formulas::overflow;
/// let m = overflow::riordan(12, 10.0)?;
/// let eq = overflow::equivalent_random_exact(m.mean, m.variance)?;
/// assert!((eq.traffic - 10.0).abs() < 1e-8 && (eq.servers - 12.0).abs() < 1e-8);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn equivalent_random_exact(mean: f64, variance: f64) -> Result<EquivalentRandom, FormulaError> {
    let rapp = equivalent_random(mean, variance)?;
    let variance = variance.max(mean);
    if variance == mean {
        return Ok(rapp);
    }
    // The servers that make `traffic` overflow exactly `mean`: the integer
    // recursion brackets them between k - 1 and k, then the continued
    // Erlang B pins the fraction.
    let servers_for_mean = |traffic: f64| -> Result<f64, FormulaError> {
        if traffic <= mean {
            return Ok(0.0);
        }
        let f = |n: f64| -> Result<f64, FormulaError> {
            Ok((traffic * erlang_b::blocking_continuous(n, traffic)?).ln() - mean.ln())
        };
        let mut state = LowerMass::new(traffic);
        let mut previous = traffic; // overflow of 0 servers
        loop {
            if state.servers() >= erlang_b::MAX_FORMULA_SERVERS {
                return Err(FormulaError::OutOfRange {
                    what: "servers of the equivalent random group",
                    limit: u64::from(erlang_b::MAX_FORMULA_SERVERS),
                });
            }
            state.step();
            let overflow = traffic * state.blocking();
            if overflow <= mean {
                let k = f64::from(state.servers());
                return illinois(
                    f,
                    k - 1.0,
                    previous.ln() - mean.ln(),
                    k,
                    overflow.ln() - mean.ln(),
                    recursion_noise(k),
                );
            }
            previous = overflow;
        }
    };
    let variance_gap = |traffic: f64| -> Result<f64, FormulaError> {
        let n = servers_for_mean(traffic)?;
        Ok(riordan_continuous(n, traffic)?.variance / variance - 1.0)
    };
    // Bracket the root near Rapp's value, widening the step each time; A* = M
    // (N* = 0, variance M <= V) is always a lower end.
    let start = rapp.traffic.max(mean * (1.0 + 1e-9));
    let g_start = variance_gap(start)?;
    let (mut lo, mut g_lo, mut hi, mut g_hi) = (start, g_start, start, g_start);
    let mut factor = 1.01;
    if g_start < 0.0 {
        while g_hi < 0.0 {
            (lo, g_lo) = (hi, g_hi);
            hi *= factor;
            g_hi = variance_gap(hi)?;
            factor = factor * factor;
        }
    } else {
        while g_lo > 0.0 {
            (hi, g_hi) = (lo, g_lo);
            lo = (lo / factor).max(mean);
            g_lo = if lo == mean {
                mean / variance - 1.0
            } else {
                variance_gap(lo)?
            };
            factor = factor * factor;
        }
    }
    let traffic = illinois(variance_gap, lo, g_lo, hi, g_hi, recursion_noise(hi))?;
    Ok(EquivalentRandom {
        traffic,
        servers: servers_for_mean(traffic)?,
    })
}

/// Root of `f` between `lo` and `hi`, where `f(lo)` and `f(hi)` have
/// opposite signs (or one is within `noise` of 0), by the Illinois variant
/// of regula falsi. Stops at `|f| <= noise` (the rounding level of `f`) or a
/// bracket narrower than `1e-12` relative.
fn illinois(
    f: impl Fn(f64) -> Result<f64, FormulaError>,
    mut lo: f64,
    mut f_lo: f64,
    mut hi: f64,
    mut f_hi: f64,
    noise: f64,
) -> Result<f64, FormulaError> {
    if f_lo.abs() <= noise {
        return Ok(lo);
    }
    if f_hi.abs() <= noise {
        return Ok(hi);
    }
    let mut side = 0;
    for _ in 0..200 {
        if (hi - lo).abs() <= 1e-12 * lo.abs().max(hi.abs()).max(1e-12) {
            break;
        }
        let secant = (lo * f_hi - hi * f_lo) / (f_hi - f_lo);
        let x = if secant > lo.min(hi) && secant < lo.max(hi) {
            secant
        } else {
            0.5 * (lo + hi)
        };
        let fx = f(x)?;
        if fx.abs() <= noise {
            return Ok(x);
        }
        if (fx > 0.0) == (f_hi > 0.0) {
            hi = x;
            f_hi = fx;
            if side == 1 {
                f_lo *= 0.5;
            }
            side = 1;
        } else {
            lo = x;
            f_lo = fx;
            if side == -1 {
                f_hi *= 0.5;
            }
            side = -1;
        }
    }
    Ok(if f_lo.abs() < f_hi.abs() { lo } else { hi })
}

/// The rounding level of the Erlang B recursion over `servers` steps
/// (relative error below `3 N ε`, see [`erlang_b::blocking`]), with margin.
fn recursion_noise(servers: f64) -> f64 {
    4.0 * f64::EPSILON * (servers + 10.0)
}

/// A final (high-usage alternative) group offered the overflow of several
/// first-choice groups plus direct Poisson traffic.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FinalGroup {
    /// Mean traffic offered to the final group (overflows plus direct), in
    /// erlangs.
    pub overflow_mean: f64,
    /// Variance of the traffic offered to the final group.
    pub overflow_variance: f64,
    /// Its peakedness, variance / mean (1 when the mean is 0).
    pub peakedness: f64,
    /// The equivalent random group (absent when nothing is offered).
    pub equivalent: Option<EquivalentRandom>,
    /// Traffic lost on the final group, in erlangs.
    pub lost_traffic: f64,
    /// Share of the traffic offered to the final group that it loses:
    /// `lost_traffic / overflow_mean`.
    pub final_blocking: f64,
    /// Share of all traffic (first-choice and direct) that is lost:
    /// `lost_traffic / (Σ A_i + A_0)`.
    pub total_loss: f64,
}

/// Mean and variance of the traffic offered to a final group: the overflow
/// of first-choice groups `primaries` (each `(traffic, servers)`, Riordan's
/// moments) plus `direct` erlangs of Poisson traffic (variance = mean).
/// Moments of independent streams add. Each stream's variance is at least
/// its mean, so the sum is clamped to `V >= M` against rounding.
///
/// # Example
///
/// ```
/// use busyhour::formulas::overflow;
/// let m = overflow::offered_moments(&[(10.0, 12)], 2.0)?;
/// let one = overflow::riordan(12, 10.0)?;
/// assert!((m.mean - (one.mean + 2.0)).abs() < 1e-12);
/// assert!(m.variance >= m.mean);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn offered_moments(
    primaries: &[(f64, u32)],
    direct: f64,
) -> Result<OverflowMoments, FormulaError> {
    let direct = non_negative("direct traffic (erlangs)", direct)?;
    let mut mean = direct;
    let mut variance = direct;
    for &(traffic, servers) in primaries {
        let m = riordan(servers, traffic)?;
        mean += m.mean;
        variance += m.variance;
    }
    Ok(OverflowMoments {
        mean,
        variance: variance.max(mean),
    })
}

/// Blocking on a final group offered the overflow of first-choice groups
/// `primaries` (each `(traffic, servers)`) plus `direct` erlangs of Poisson
/// traffic, by the equivalent random method.
///
/// # Formula
///
/// Overflow moments add for independent streams: `M = Σ M_i + A_0`,
/// `V = Σ V_i + A_0` (Riordan's moments per group; direct Poisson traffic has
/// variance equal to its mean). The equivalent random group `(A*, N*)` of
/// `(M, V)` then has `N* + N_f` servers in front of nothing, so the lost
/// traffic is `A* B(N* + N_f, A*)` (Erlang B continued to real servers) and
/// `final_blocking = lost / M`. Source: Wilkinson's equivalent random method,
/// as in the ITU-T Teletraffic Engineering Handbook, chapter on overflow
/// theory.
///
/// The equivalent group is solved exactly ([`equivalent_random_exact`],
/// starting from Rapp's approximation) rather than taken from Rapp's formula
/// alone: with one first-choice group the method is then exact
/// (`A B(N_1 + N_f, A)`), whereas Rapp's `(A*, N*)` misestimates the loss on
/// a well-dimensioned final group by up to about 30% (see the tests).
///
/// # Example
///
/// ```
/// use busyhour::formulas::{erlang_b, overflow};
/// let f = overflow::final_group(&[(10.0, 12), (8.0, 10)], 2.0, 8)?;
/// assert!(f.peakedness > 1.0 && f.final_blocking > 0.0 && f.final_blocking < 1.0);
/// // One first-choice group hunting into the final group: exactly Erlang B
/// // on all the servers together.
/// let one = overflow::final_group(&[(10.0, 12)], 0.0, 5)?;
/// let exact = 10.0 * erlang_b::blocking(17, 10.0)?;
/// assert!((one.lost_traffic / exact - 1.0).abs() < 1e-8);
/// // Direct traffic alone is Poisson: plain Erlang B.
/// let d = overflow::final_group(&[], 5.0, 8)?;
/// assert!((d.final_blocking / erlang_b::blocking(8, 5.0)? - 1.0).abs() < 1e-12);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn final_group(
    primaries: &[(f64, u32)],
    direct: f64,
    final_servers: u32,
) -> Result<FinalGroup, FormulaError> {
    let final_servers = erlang_b::check_servers("final-group servers", final_servers)?;
    let OverflowMoments { mean, variance } = offered_moments(primaries, direct)?;
    let offered = direct + primaries.iter().map(|p| p.0).sum::<f64>();
    if mean.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
        return Ok(FinalGroup {
            overflow_mean: 0.0,
            overflow_variance: 0.0,
            peakedness: 1.0,
            equivalent: None,
            lost_traffic: 0.0,
            final_blocking: 0.0,
            total_loss: 0.0,
        });
    }
    let equivalent = equivalent_random_exact(mean, variance)?;
    let blocking = erlang_b::blocking_continuous(
        equivalent.servers + f64::from(final_servers),
        equivalent.traffic,
    )?;
    let lost_traffic = (equivalent.traffic * blocking).min(mean);
    Ok(FinalGroup {
        overflow_mean: mean,
        overflow_variance: variance,
        peakedness: variance / mean,
        equivalent: Some(equivalent),
        lost_traffic,
        final_blocking: lost_traffic / mean,
        total_loss: lost_traffic / offered,
    })
}

impl FinalGroup {
    /// The final-group blocking of one parcel of the offered overflow with
    /// peakedness `z` (1 for direct Poisson traffic): the peakedness split
    /// B_i = B Z_i / Z of the equivalent random method (an approximation
    /// recalled from the teletraffic literature as common practice with
    /// Wilkinson's method; a peaky parcel arrives in bursts and meets a full
    /// final group more often than a smooth one). Conserves lost traffic:
    /// sum M_i B_i = B M when the parcels' variances add up to the total.
    pub fn parcel_blocking(&self, z: f64) -> f64 {
        if !(self.peakedness > 0.0) || !(z > 0.0) {
            return self.final_blocking;
        }
        (self.final_blocking * z / self.peakedness).min(1.0)
    }
}

/// An interrupted Poisson process (IPP): calls arrive as a Poisson process
/// of rate `on_rate` while the process is on, none while it is off; on
/// periods end at rate `on_to_off`, off periods at rate `off_to_on`. Rates
/// per mean holding time (time measured in mean holding times).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ipp {
    /// Arrival rate while on.
    pub on_rate: f64,
    /// Rate at which an on period ends.
    pub on_to_off: f64,
    /// Rate at which an off period ends.
    pub off_to_on: f64,
}

impl Ipp {
    /// Long-run share of time on.
    pub fn on_share(&self) -> f64 {
        self.off_to_on / (self.on_to_off + self.off_to_on)
    }
    /// Mean traffic it offers (erlangs): `on_rate x on_share`.
    pub fn mean(&self) -> f64 {
        self.on_rate * self.on_share()
    }
}

/// The Laplace transform `E[exp(-s T)]` of the time `T` between overflow
/// calls of `traffic` erlangs of Poisson traffic offered to `servers` (time
/// in mean holding times, exponential holding).
///
/// # Formula
///
/// The overflow of an Erlang loss group is a renewal process whose
/// interarrival time is the first passage from `N` to `N + 1` busy servers
/// of the same birth-death chain with unlimited servers:
/// `u_n(s) = A / (A + n + s - n u_{n-1}(s))`, `u_0(s) = A / (A + s)`
/// (positive terms only). Source: the renewal property is Palm's; the
/// passage-time form as in L. Takács, "Introduction to the theory of
/// queues" (1962), for the overflow of a loss system.
fn overflow_interarrival_transform(servers: u32, traffic: f64, s: f64) -> f64 {
    let mut u = traffic / (traffic + s);
    for n in 1..=servers {
        let n = f64::from(n);
        u = traffic / (traffic + n + s - n * u);
    }
    u
}

/// Kuczura's interrupted Poisson process for the overflow of `traffic`
/// erlangs of Poisson traffic offered to `servers` (exponential holding):
/// the IPP with the same first three moments of the traffic it would
/// carry on an unlimited group (mean, variance and third moment of the
/// busy servers; the first two are Riordan's). `None` when there is nothing
/// to fit: no servers or no traffic (the overflow is the offered Poisson
/// stream itself, or nothing), an overflow as smooth as Poisson, or one so
/// rare that its rate falls below `1e-300`.
///
/// # Formula
///
/// For a renewal stream of rate `r` whose interarrival transform is `φ`,
/// offered to unlimited servers with exponential holding (μ = 1), the
/// binomial moments of the busy servers are
/// `β_k = (r / k) Π_{j<k} φ(j) / (1 - φ(j))` (Takács), so matching the
/// first three moments is matching `r`, `φ(1)` and `φ(2)`. The IPP (on
/// rate λ, on-to-off ω, off-to-on γ) has
/// `φ(s) = λ (s + γ) / (s² + (λ + ω + γ) s + λ γ)` and rate
/// `λ γ / (ω + γ)`; in `P = λ + ω + γ`, `Q = λ γ` and `λ` the three
/// conditions are linear. The overflow's `φ` comes from the passage-time
/// recursion above. Source: A. Kuczura, "The interrupted Poisson process
/// as an overflow process", Bell System Technical Journal 52 (1973)
/// (three-moment fit to the overflow; recalled from memory as matching
/// the moments of the unlimited overflow group, the form used here).
///
/// # Example
///
/// ```
/// use busyhour::formulas::{erlang_b, overflow};
/// let ipp = overflow::kuczura_ipp(10, 8.0)?.unwrap();
/// // The IPP carries the overflow's mean, A B(N, A).
/// let mean = 8.0 * erlang_b::blocking(10, 8.0)?;
/// assert!((ipp.mean() / mean - 1.0).abs() < 1e-9);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn kuczura_ipp(servers: u32, traffic: f64) -> Result<Option<Ipp>, FormulaError> {
    let traffic = non_negative("offered traffic (erlangs)", traffic)?;
    let servers = erlang_b::check_servers("servers", servers)?;
    if servers == 0 || traffic == 0.0 {
        return Ok(None);
    }
    let rate = traffic * erlang_b::blocking(servers, traffic)?;
    if !(rate > 1e-300) {
        return Ok(None);
    }
    // Rows (P, Q, λ | rhs): P - λ - Q / r = 0 and, for s = 1, 2,
    // v s P + (v - 1) Q - s λ = -v s², v = φ(s).
    let mut m = [[1.0, -1.0 / rate, -1.0, 0.0], [0.0; 4], [0.0; 4]];
    for (row, s) in m.iter_mut().skip(1).zip([1.0, 2.0]) {
        let v = overflow_interarrival_transform(servers, traffic, s);
        *row = [v * s, v - 1.0, -s, -v * s * s];
    }
    let Some([p, q, on_rate]) = solve3(m) else {
        return Ok(None);
    };
    let off_to_on = q / on_rate;
    let on_to_off = p - on_rate - off_to_on;
    if !(on_rate > 0.0 && off_to_on > 0.0 && on_to_off > 1e-12 * p) {
        // No interruption: as smooth as Poisson at this precision.
        return Ok(None);
    }
    Ok(Some(Ipp {
        on_rate,
        on_to_off,
        off_to_on,
    }))
}

/// Solves a 3 x 3 linear system (augmented rows) by Gaussian elimination
/// with partial pivoting; `None` when singular or not finite.
fn solve3(mut m: [[f64; 4]; 3]) -> Option<[f64; 3]> {
    for col in 0..3 {
        let pivot = (col..3).max_by(|&a, &b| m[a][col].abs().total_cmp(&m[b][col].abs()))?;
        m.swap(col, pivot);
        if !(m[col][col].abs() > 0.0) {
            return None;
        }
        let pivot_row = m[col];
        for row in m.iter_mut().skip(col + 1) {
            let f = row[col] / pivot_row[col];
            for (x, p) in row.iter_mut().zip(pivot_row).skip(col) {
                *x -= f * p;
            }
        }
    }
    let mut x = [0.0; 3];
    for row in (0..3).rev() {
        let tail: f64 = (row + 1..3).map(|k| m[row][k] * x[k]).sum();
        x[row] = (m[row][3] - tail) / m[row][row];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

/// The most on/off phase combinations [`parcel_losses`] will hold (the
/// chain's work grows with their cube).
pub const MAX_PARCEL_PHASES: usize = 64;

/// Each stream's loss on an overflow network: first-choice groups each
/// offered Poisson traffic, overflowing to one final group that also takes
/// direct Poisson traffic; exponential holding (approx.).
#[derive(Debug, Clone, PartialEq)]
pub struct ParcelLosses {
    /// Per first-choice group: the share of its overflow that the final
    /// group loses.
    pub final_blocking: Vec<f64>,
    /// Per first-choice group: the share of its offered calls lost (first
    /// group and final group full), `B(N_i, A_i) x final_blocking[i]`.
    pub loss: Vec<f64>,
    /// Time congestion of the final group, which is the loss of the direct
    /// Poisson traffic (Poisson arrivals see time averages).
    pub direct_loss: f64,
}

/// Per-parcel loss on a final group by interrupted Poisson processes
/// (approx.): each first-choice group's overflow (`primaries`, each
/// `(traffic, servers)`) is replaced by Kuczura's IPP ([`kuczura_ipp`]), and
/// the final group of `final_servers`, offered those IPPs plus `direct`
/// erlangs of Poisson traffic, is solved exactly as a Markov chain
/// (state: the parcels' phases and the final group's busy servers).
///
/// # Formula
///
/// With phases `φ` and busy final servers `m`: parcel `j` on adds calls at
/// `λ_j` while `m < F`, direct traffic at `A_0`; calls end at rate `m`;
/// phases switch at `ω_j`, `γ_j`. Parcel `j`'s final blocking is
/// `P(m = F | j on)`, the direct stream's `P(m = F)`. A group without
/// servers passes its Poisson stream on unchanged (added to `A_0` for the
/// chain, blocking `P(m = F)`); identical parcels share one phase counter
/// (how many are on). The only approximation is the IPP in place of each
/// overflow, matched in three interarrival moments. Source: A. Kuczura,
/// "The interrupted Poisson process as an overflow process", Bell System
/// Technical Journal 52 (1973); the final group solved as an MMPP/M/F/F
/// loss system, as in K. S. Meier-Hellstern, "The analysis of a queue
/// arising in overflow models", IEEE Transactions on Communications 37
/// (1989). Checked against the exact network chain in
/// `tests/formulas_overflow.rs`.
///
/// A parcel whose overflow is too rare to fit (moments beyond `f64`) is
/// left out of the chain and given final blocking 1: its stream's loss is
/// then its first-choice blocking, below about `1e-90`.
///
/// # Errors
///
/// As [`final_group`]; [`FormulaError::OutOfRange`] when the distinct
/// parcels need more than [`MAX_PARCEL_PHASES`] phase combinations, or the
/// chain more than [`super::chains::MAX_STATES`] states.
///
/// # Example
///
/// ```
/// use busyhour::formulas::overflow;
/// let p = overflow::parcel_losses(&[(8.0, 10), (5.0, 7)], 2.0, 8)?;
/// // The peakier parcel of the larger group meets a full final group more
/// // often than the direct Poisson traffic does.
/// assert!(p.final_blocking[0] > p.direct_loss);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn parcel_losses(
    primaries: &[(f64, u32)],
    direct: f64,
    final_servers: u32,
) -> Result<ParcelLosses, FormulaError> {
    use super::chains::Chain;
    let final_servers = erlang_b::check_servers("final-group servers", final_servers)?;
    let mut poisson = non_negative("direct traffic (erlangs)", direct)?;
    // Distinct IPPs with how many parcels share each; per primary, its class.
    let mut classes: Vec<(Ipp, usize)> = Vec::new();
    let mut class_of: Vec<Option<usize>> = Vec::with_capacity(primaries.len());
    let mut first_blocking = Vec::with_capacity(primaries.len());
    let mut rare = vec![false; primaries.len()];
    for (i, &(traffic, servers)) in primaries.iter().enumerate() {
        first_blocking.push(erlang_b::blocking(servers, traffic)?);
        match kuczura_ipp(servers, traffic)? {
            Some(ipp) => {
                let c = classes.iter().position(|c| c.0 == ipp).unwrap_or_else(|| {
                    classes.push((ipp, 0));
                    classes.len() - 1
                });
                classes[c].1 += 1;
                class_of.push(Some(c));
            }
            None if servers == 0 => {
                poisson += traffic;
                class_of.push(None);
            }
            None => {
                rare[i] = traffic > 0.0;
                class_of.push(None);
            }
        }
    }
    // Phase space: per class, how many of its parcels are on (0..=count).
    let mut phases = 1usize;
    for &(_, count) in &classes {
        phases = phases
            .checked_mul(count + 1)
            .filter(|&p| p <= MAX_PARCEL_PHASES)
            .ok_or(FormulaError::OutOfRange {
                what: "phase combinations of the overflow parcels",
                limit: MAX_PARCEL_PHASES as u64,
            })?;
    }
    let mut stride = Vec::with_capacity(classes.len());
    let mut step = 1usize;
    for &(_, count) in &classes {
        stride.push(step);
        step *= count + 1;
    }
    let levels = final_servers as usize + 1;
    let states = phases * levels;
    let on = |phase: usize, c: usize| (phase / stride[c]) % (classes[c].1 + 1);
    let mut chain = Chain::new(states)?;
    for m in 0..levels {
        for phase in 0..phases {
            let state = m * phases + phase;
            let free = m < final_servers as usize;
            let mut arrivals = poisson;
            for (c, &(ipp, count)) in classes.iter().enumerate() {
                let k = on(phase, c);
                arrivals += k as f64 * ipp.on_rate;
                if k < count {
                    chain.add(state, state + stride[c], (count - k) as f64 * ipp.off_to_on)?;
                }
                if k > 0 {
                    chain.add(state, state - stride[c], k as f64 * ipp.on_to_off)?;
                }
            }
            if free {
                chain.add(state, state + phases, arrivals)?;
            }
            if m > 0 {
                chain.add(state, state - phases, m as f64)?;
            }
        }
    }
    let pi = chain.solve()?.probabilities;
    // Per class: E[on count] and E[on count; final group full].
    let mut on_mass = vec![0.0; classes.len()];
    let mut on_full = vec![0.0; classes.len()];
    let mut full = 0.0;
    for (state, &q) in pi.iter().enumerate() {
        let (m, phase) = (state / phases, state % phases);
        let is_full = m == final_servers as usize;
        if is_full {
            full += q;
        }
        for c in 0..classes.len() {
            let k = on(phase, c) as f64;
            on_mass[c] += q * k;
            if is_full {
                on_full[c] += q * k;
            }
        }
    }
    let final_blocking: Vec<f64> = (0..primaries.len())
        .map(|i| match class_of[i] {
            Some(c) if on_mass[c] > 0.0 => on_full[c] / on_mass[c],
            Some(_) => full,
            None if rare[i] => 1.0,
            None => full,
        })
        .collect();
    let loss = final_blocking
        .iter()
        .zip(&first_blocking)
        .map(|(f, b)| f * b)
        .collect();
    Ok(ParcelLosses {
        final_blocking,
        loss,
        direct_loss: full,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_smooth_or_bad_moments() {
        assert!(equivalent_random(5.0, 4.0).is_err());
        assert!(equivalent_random(0.0, 1.0).is_err());
        assert!(equivalent_random(f64::NAN, 1.0).is_err());
        assert!(riordan(3, -2.0).is_err());
        assert!(final_group(&[(-1.0, 3)], 0.0, 3).is_err());
    }

    #[test]
    fn poisson_traffic_is_its_own_equivalent() {
        let eq = equivalent_random(7.0, 7.0).unwrap();
        assert_eq!(eq.traffic, 7.0);
        assert!(eq.servers.abs() < 1e-12);
    }

    #[test]
    fn nothing_offered_loses_nothing() {
        let f = final_group(&[(0.0, 5)], 0.0, 3).unwrap();
        assert_eq!(f.final_blocking, 0.0);
        assert_eq!(f.peakedness, 1.0);
    }
}
