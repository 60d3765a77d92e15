//! Engset: a loss system offered traffic by a finite number of sources
//! (blocked calls cleared), each source calling only while idle.

use super::erlang_b::check_servers;
use super::error::{FormulaError, non_negative};
use super::scaled::{BIG, SHIFT, SMALL, Scaled, ldexp};

/// Congestion and carried traffic of an Engset group.
#[derive(Debug, Clone, PartialEq)]
pub struct Engset {
    /// Share of time every server is busy, `E(S, N, β)`.
    pub time_congestion: f64,
    /// Share of call attempts that find every server busy: by the arrival
    /// theorem, the time congestion seen with one source fewer,
    /// `E(S - 1, N, β)`.
    pub call_congestion: f64,
    /// Mean number of busy servers (erlangs).
    pub carried_traffic: f64,
    /// Offered traffic in erlangs: call attempts per mean holding time,
    /// `β (S - carried)` (only idle sources call).
    pub offered_traffic: f64,
}

/// Engset time congestion by the recursion
/// `J(n) = n / ((S - n + 1) β) · (1 + J(n - 1))`, `E = 1 / (1 + J(N))`,
/// for `N <= S`; 0 for `N > S`.
fn time_congestion(sources: u32, servers: u32, beta: f64) -> f64 {
    if servers > sources {
        return 0.0;
    }
    if servers == 0 {
        return 1.0;
    }
    let s = f64::from(sources);
    let mut j = 0.0;
    let mut e: i64 = 0;
    let mut one = 1.0;
    for n in 1..=servers {
        let n = f64::from(n);
        j = n / ((s - n + 1.0) * beta) * (one + j);
        if j > BIG {
            j *= SMALL;
            e += SHIFT;
            one = ldexp(1.0, -e);
        }
    }
    Scaled::ONE.add(Scaled::new(j, e)).recip().to_f64()
}

/// Solves the Engset loss system: `sources` sources, `servers` servers,
/// each idle source offering `idle_traffic` erlangs (its call rate while
/// idle times the mean holding time, often written `β`).
///
/// # Formula
///
/// State probabilities are the truncated binomial
/// `p_k = C(S, k) β^k / Σ_{i=0}^{N} C(S, i) β^i`. Time congestion
/// `E(S, N, β) = p_N`; call congestion `B = E(S - 1, N, β)` (arrival
/// theorem); carried traffic `Y = β S (1 - B) / (1 + β (1 - B))`, from
/// `Y = β (S - Y)(1 - B)`. The recursion
/// `1/E(S, n) = 1 + n / ((S - n + 1) β) · 1/E(S, n - 1)` is used, never
/// binomial coefficients. With `S < N` nothing is ever blocked; with `S = N`
/// no call is blocked (call congestion 0), although all servers are busy a
/// share `(β / (1 + β))^S` of the time.
///
/// Source: T. O. Engset (1918); the recursion as in the ITU-T Teletraffic
/// Engineering Handbook, chapter on loss systems with full accessibility
/// and a limited number of sources.
///
/// # Numerics
///
/// Positive-term recursion in extended range: relative error below `3 N ε`.
///
/// # Example
///
/// ```
/// use busyhour::formulas::engset;
/// let g = engset::solve(30, 10, 0.2)?;
/// assert!(g.call_congestion < g.time_congestion);
/// assert!(engset::solve(8, 10, 0.5)?.time_congestion == 0.0);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn solve(sources: u32, servers: u32, idle_traffic: f64) -> Result<Engset, FormulaError> {
    let beta = non_negative("offered traffic per idle source (erlangs)", idle_traffic)?;
    let servers = check_servers("servers", servers)?;
    if beta == 0.0 || sources == 0 {
        return Ok(Engset {
            time_congestion: if servers == 0 { 1.0 } else { 0.0 },
            call_congestion: if servers == 0 && sources > 0 {
                1.0
            } else {
                0.0
            },
            carried_traffic: 0.0,
            offered_traffic: 0.0,
        });
    }
    let time_congestion = time_congestion(sources, servers, beta);
    let call_congestion = time_congestion_with(sources - 1, servers, beta);
    let s = f64::from(sources);
    let passed = beta * (1.0 - call_congestion);
    let carried_traffic = s * passed / (1.0 + passed);
    Ok(Engset {
        time_congestion,
        call_congestion,
        carried_traffic,
        offered_traffic: beta * (s - carried_traffic),
    })
}

/// Time congestion with `sources` sources (used with one fewer for call
/// congestion); a group with no sources is never congested unless it has no
/// servers.
fn time_congestion_with(sources: u32, servers: u32, beta: f64) -> f64 {
    if sources == 0 {
        if servers == 0 { 1.0 } else { 0.0 }
    } else {
        time_congestion(sources, servers, beta)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_traffic() {
        assert!(solve(10, 3, -0.1).is_err());
        assert!(solve(10, 3, f64::NAN).is_err());
        assert!(solve(10, 3, f64::INFINITY).is_err());
    }

    #[test]
    fn one_source_one_server() {
        // One source: busy a share β/(1+β); it never meets a busy server.
        let g = solve(1, 1, 0.25).unwrap();
        assert!((g.time_congestion - 0.2).abs() < 1e-16);
        assert_eq!(g.call_congestion, 0.0);
        assert!((g.carried_traffic - 0.2).abs() < 1e-16);
    }
}
