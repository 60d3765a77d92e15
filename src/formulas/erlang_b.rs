//! Erlang B: the loss system M/M/N/N (blocked calls cleared), and its
//! inverses in servers and in traffic.
//!
//! By insensitivity the blocking holds for any holding-time law with the
//! given mean, as long as arrivals are Poisson and blocked calls do not
//! return.

use super::error::{FormulaError, at_least_one, non_negative, open_share, positive};
use super::scaled::{BIG, SHIFT, SMALL, Scaled, ldexp};

/// The most servers any formula accepts or an inverse will count up to.
pub const MAX_FORMULA_SERVERS: u32 = 100_000_000;

/// The running state of the recursion `J(n) = n/A · (1 + J(n-1))`, `J(0) = 0`,
/// where `J(n) = Σ_{k<n} π_k / π_n` is the probability mass of the states
/// below `n` relative to state `n`, so that `B(n, A) = 1 / (1 + J(n))`.
///
/// Every step adds and multiplies positive numbers, so each step adds at most
/// about three rounding errors and never amplifies earlier ones: after N
/// steps the relative error is below `3 N ε` (about `7e-12` at N = 10,000).
/// `J` is kept as `j × 2^e` so it never overflows.
#[derive(Debug, Clone, Copy)]
pub(crate) struct LowerMass {
    traffic: f64,
    /// Fractional servers below the integer steps (0 for whole groups):
    /// the state describes `offset + n` servers.
    offset: f64,
    /// Whole steps taken so far.
    n: u32,
    /// Mantissa of J(n).
    j: f64,
    /// Binary exponent of J(n) (a multiple of `SHIFT`).
    e: i64,
    /// The number 1 at exponent `e`, i.e. `2^-e`.
    one: f64,
}

impl LowerMass {
    /// Starts at `n = 0`; `traffic` must be finite and > 0.
    pub(crate) fn new(traffic: f64) -> LowerMass {
        LowerMass::from_fraction(traffic, 0.0, 0.0)
    }

    /// Starts at `offset` servers (`0 <= offset < 1`) with `J(offset) = j0`;
    /// each step then adds one server.
    pub(crate) fn from_fraction(traffic: f64, offset: f64, j0: f64) -> LowerMass {
        LowerMass {
            traffic,
            offset,
            n: 0,
            j: j0,
            e: 0,
            one: 1.0,
        }
    }

    /// Advances to `n + 1`.
    #[inline]
    pub(crate) fn step(&mut self) {
        self.n += 1;
        self.j = ((self.offset + f64::from(self.n)) / self.traffic) * (self.one + self.j);
        if self.j > BIG {
            // Performance: the rescale is rare (once per ~10^154 of growth),
            // so the common path is one division, one addition and one
            // multiplication.
            self.j *= SMALL;
            self.e += SHIFT;
            self.one = ldexp(1.0, -self.e);
        }
    }

    /// Advances to `servers`.
    pub(crate) fn run_to(&mut self, servers: u32) {
        while self.n < servers {
            self.step();
        }
    }

    /// Whole steps taken so far (the servers, for a whole group).
    pub(crate) fn servers(&self) -> u32 {
        self.n
    }

    /// `J(n)` as an extended-range number.
    pub(crate) fn value(&self) -> Scaled {
        Scaled::new(self.j, self.e)
    }

    /// `B(n, A) = 1 / (1 + J(n))` as `f64` (underflows to 0 only below
    /// `f64`'s range).
    #[inline]
    pub(crate) fn blocking(&self) -> f64 {
        if self.e == 0 {
            1.0 / (1.0 + self.j)
        } else {
            ldexp(1.0 / (self.one + self.j), -self.e)
        }
    }

    /// `1 - B(n, A) = J / (1 + J)`, without cancellation.
    pub(crate) fn carried_share(&self) -> f64 {
        self.j / (self.one + self.j)
    }

    /// `ln B(n, A) = -ln(1 + J(n))`.
    pub(crate) fn ln_blocking(&self) -> f64 {
        -self.value().ln_1p()
    }
}

fn check_traffic(traffic: f64) -> Result<f64, FormulaError> {
    non_negative("offered traffic (erlangs)", traffic)
}

/// Accepts up to [`MAX_FORMULA_SERVERS`] servers (the recursions take one step per
/// server).
pub(crate) fn check_servers(what: &'static str, servers: u32) -> Result<u32, FormulaError> {
    if servers > MAX_FORMULA_SERVERS {
        return Err(FormulaError::OutOfRange {
            what,
            limit: u64::from(MAX_FORMULA_SERVERS),
        });
    }
    Ok(servers)
}

/// Erlang B blocking `B(N, A)`: the share of calls lost (and the share of
/// time all servers are busy) when `traffic` erlangs of Poisson traffic are
/// offered to `servers` servers and blocked calls are cleared.
///
/// # Formula
///
/// `B(N, A) = (A^N / N!) / Σ_{k=0}^{N} A^k / k!`, computed by the inverse
/// recursion `1/B(n) = 1 + (n/A) · 1/B(n-1)` written as
/// `J(n) = (n/A)(1 + J(n-1))`, `B = 1/(1 + J)`; never with factorials.
/// `B(0, A) = 1`; `B(N, 0) = 0` for `N >= 1`.
///
/// Source: Erlang's loss formula and its recursion, see any teletraffic
/// handbook, e.g. the ITU-T Teletraffic Engineering Handbook (ITU-D SG 2),
/// chapter on the Erlang loss system.
///
/// # Numerics
///
/// Relative error below `3 N ε` (about `7e-12` at 10,000 servers); the
/// recursion runs in extended range, so nothing overflows. A result below
/// about `2.2e-308` is returned as a subnormal number or 0: use
/// [`ln_blocking`] for such values.
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_b;
/// let b = erlang_b::blocking(18, 10.0)?;
/// assert!(b < 0.01 && b > 0.007);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn blocking(servers: u32, traffic: f64) -> Result<f64, FormulaError> {
    let traffic = check_traffic(traffic)?;
    let servers = check_servers("servers", servers)?;
    if servers == 0 {
        return Ok(1.0);
    }
    if traffic == 0.0 {
        return Ok(0.0);
    }
    let mut state = LowerMass::new(traffic);
    state.run_to(servers);
    Ok(state.blocking())
}

/// Natural logarithm of the Erlang B blocking, `ln B(N, A)`, for values far
/// below `f64`'s range (for example 10,000 servers offered 1 erlang, where
/// `B` is near `10^-35,660`).
///
/// # Formula
///
/// `ln B(N, A) = -ln(1 + J(N))` with the recursion of [`blocking`]; `-inf`
/// when the traffic is 0 and `N >= 1`. Source: as [`blocking`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_b;
/// let ln_b = erlang_b::ln_blocking(10_000, 1.0)?;
/// assert!(ln_b < -80_000.0 && ln_b.is_finite());
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn ln_blocking(servers: u32, traffic: f64) -> Result<f64, FormulaError> {
    let traffic = check_traffic(traffic)?;
    let servers = check_servers("servers", servers)?;
    if servers == 0 {
        return Ok(0.0);
    }
    if traffic == 0.0 {
        return Ok(f64::NEG_INFINITY);
    }
    let mut state = LowerMass::new(traffic);
    state.run_to(servers);
    Ok(state.ln_blocking())
}

/// Erlang B for a non-integer number of servers `x >= 0` (needed by the
/// equivalent random method, whose equivalent group is fractional).
///
/// # Formula
///
/// The exact continuation by the incomplete gamma function (not an
/// interpolation): `1/B(x, A) = A ∫_0^∞ e^{-At} (1+t)^x dt
/// = e^A A^{-x} Γ(x+1, A)`, which agrees with Erlang B at every integer `x`.
/// The fractional part `x₀ = x - ⌊x⌋` is evaluated directly, then the integer
/// recursion `1/B(x₀+k) = 1 + ((x₀+k)/A) · 1/B(x₀+k-1)` climbs to `x`.
///
/// Source: the integral representation of Erlang B, e.g. D. L. Jagerman,
/// "Some properties of the Erlang loss function", Bell System Technical
/// Journal 53 (1974); the ITU-T Teletraffic Engineering Handbook uses it for
/// the equivalent random method.
///
/// # Numerics
///
/// For `A >= 2` the upper incomplete gamma function comes from its continued
/// fraction (modified Lentz), giving `1/B(x₀, A) = A · CF`; below, from the
/// power series `e^A A^{-x₀} Γ(x₀+1) - A Σ_n A^n / ((x₀+1)(x₀+2)…(x₀+n+1))`
/// with `Γ` from `statrs`'s Lanczos approximation. Relative error near
/// `1e-14` for the fractional start, then as [`blocking`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_b;
/// let whole = erlang_b::blocking(7, 5.0)?;
/// let same = erlang_b::blocking_continuous(7.0, 5.0)?;
/// assert!((same / whole - 1.0).abs() < 1e-12);
/// let between = erlang_b::blocking_continuous(7.5, 5.0)?;
/// assert!(between < whole && between > erlang_b::blocking(8, 5.0)?);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn blocking_continuous(servers: f64, traffic: f64) -> Result<f64, FormulaError> {
    Ok(match continuous_state(servers, traffic)? {
        None if servers == 0.0 => 1.0,
        None => 0.0,
        Some(state) => state.blocking(),
    })
}

/// The recursion state at a real number of servers (see
/// [`blocking_continuous`]); `None` when `servers` or `traffic` is 0.
pub(crate) fn continuous_state(
    servers: f64,
    traffic: f64,
) -> Result<Option<LowerMass>, FormulaError> {
    let servers = non_negative("servers", servers)?;
    let traffic = check_traffic(traffic)?;
    if servers > f64::from(MAX_FORMULA_SERVERS) {
        return Err(FormulaError::OutOfRange {
            what: "servers",
            limit: u64::from(MAX_FORMULA_SERVERS),
        });
    }
    if servers == 0.0 || traffic == 0.0 {
        return Ok(None);
    }
    let whole = servers.floor();
    let frac = servers - whole;
    // J(x0) = 1/B(x0) - 1, then J(x0 + k) = ((x0 + k)/A)(1 + J(x0 + k - 1)).
    let mut state = LowerMass::from_fraction(traffic, frac, fractional_lower_mass(frac, traffic));
    state.run_to(whole as u32);
    Ok(Some(state))
}

/// `J(x₀) = 1/B(x₀, A) - 1` for `0 <= x₀ < 1`, `A > 0`.
fn fractional_lower_mass(x0: f64, traffic: f64) -> f64 {
    if x0 == 0.0 {
        return 0.0;
    }
    let s = x0 + 1.0;
    let a = traffic;
    if a >= 2.0 {
        // Γ(s, a) = e^{-a} a^s / (a + 1 - s - 1(1-s)/(a + 3 - s - 2(2-s)/(a + 5 - s - …)))
        // (modified Lentz), so 1/B = e^a a^{-x0} Γ(s, a) = a / denominator.
        let tiny = 1e-300;
        let mut b = a + 1.0 - s;
        let mut c = 1.0 / tiny;
        let mut d = 1.0 / b;
        let mut h = d;
        for i in 1..10_000 {
            let an = -f64::from(i) * (f64::from(i) - s);
            b += 2.0;
            d = an * d + b;
            if d.abs() < tiny {
                d = tiny;
            }
            c = b + an / c;
            if c.abs() < tiny {
                c = tiny;
            }
            d = 1.0 / d;
            let del = d * c;
            h *= del;
            if (del - 1.0).abs() < 1e-16 {
                break;
            }
        }
        // 1/B - 1 = a h - 1; a h is near 1 + x0/a for large a, losing at most
        // log2(a/x0) bits of J, whose weight in later steps is J/(1+J).
        a * h - 1.0
    } else {
        // 1/B = e^a a^{-x0} Γ(s) - a Σ_{n>=0} a^n / (s (s+1) … (s+n)).
        let gamma_s = statrs::function::gamma::gamma(s);
        let mut term = a / s;
        let mut sum = term;
        let mut n = 1.0;
        while term > 1e-17 * sum {
            term *= a / (s + n);
            sum += term;
            n += 1.0;
        }
        a.exp() * a.powf(-x0) * gamma_s - sum - 1.0
    }
}

/// The fewest servers `N` with `B(N, A) <= target`: circuits needed to carry
/// `traffic` erlangs at a grade of service `target` (for example 0.01).
///
/// # Formula
///
/// Runs the recursion of [`blocking`] upwards from `N = 0` and stops at the
/// first `N` whose blocking, computed exactly as [`blocking`] computes it, is
/// at most `target`. Erlang B decreases strictly in `N`, so that `N` is the
/// answer. Source: as [`blocking`].
///
/// # Errors
///
/// Traffic must be finite and > 0, `target` strictly between 0 and 1;
/// [`FormulaError::OutOfRange`] beyond [`MAX_FORMULA_SERVERS`].
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_b;
/// assert_eq!(erlang_b::servers_for(10.0, 0.01)?, 18);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn servers_for(traffic: f64, target: f64) -> Result<u32, FormulaError> {
    let traffic = positive("offered traffic (erlangs)", traffic)?;
    let target = open_share("grade of service (blocking target)", target)?;
    let mut state = LowerMass::new(traffic);
    while state.servers() < MAX_FORMULA_SERVERS {
        state.step();
        if state.blocking() <= target {
            return Ok(state.servers());
        }
    }
    Err(FormulaError::OutOfRange {
        what: "servers needed",
        limit: u64::from(MAX_FORMULA_SERVERS),
    })
}

/// The largest traffic `A` that `servers` servers carry with blocking at most
/// `target`: the root of `B(N, A) = target`.
///
/// # Formula
///
/// `B(N, A)` increases strictly in `A`, and `ln B` is concave in `u = ln A`
/// with slope `d ln B / d ln A = N - A(1 - B)` (servers minus carried
/// traffic, > 0). Newton's method on `u` therefore converges monotonically
/// once below the root; it starts from `A = N / (1 - target)`, which
/// is never below the root because the carried traffic `A(1 - B)` cannot
/// exceed `N`. Bisection guards every step. Stops when the step is below
/// `1e-14` relative. Source: as [`blocking`]; the derivative
/// `∂B/∂A = B (N/A - 1 + B)` is in the ITU-T Teletraffic Engineering
/// Handbook.
///
/// # Errors
///
/// `servers >= 1`, `target` strictly between 0 and 1.
///
/// # Example
///
/// ```
/// use busyhour::formulas::erlang_b;
/// let a = erlang_b::traffic_for(10, 0.01)?;
/// assert!((a - 4.461).abs() < 5e-4);
/// let b = erlang_b::blocking(10, a)?;
/// assert!((b / 0.01 - 1.0).abs() < 1e-10);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn traffic_for(servers: u32, target: f64) -> Result<f64, FormulaError> {
    let servers = check_servers("servers", at_least_one("servers", servers)?)?;
    let target = open_share("grade of service (blocking target)", target)?;
    let n = f64::from(servers);
    let ln_target = target.ln();
    // g(u) = ln B(N, e^u) - ln target, increasing and concave in u.
    let eval = |u: f64| {
        let mut state = LowerMass::new(u.exp());
        state.run_to(servers);
        (state.ln_blocking() - ln_target, state.carried_share())
    };
    let mut hi = (n / (1.0 - target)).ln(); // g(hi) >= 0
    let mut lo = f64::NEG_INFINITY; // g(lo) < 0
    let mut u = hi;
    for _ in 0..200 {
        let (g, carried_share) = eval(u);
        if g == 0.0 {
            break;
        }
        if g > 0.0 {
            hi = hi.min(u);
        } else {
            lo = lo.max(u);
        }
        let slope = n - u.exp() * carried_share;
        let mut next = u - g / slope;
        if !(slope > 0.0 && next > lo && next < hi) {
            next = if lo.is_finite() {
                0.5 * (lo + hi)
            } else {
                // No lower point yet: halve the traffic.
                hi - std::f64::consts::LN_2
            };
        }
        let step = next - u;
        u = next;
        if step.abs() <= 1e-14 * u.abs().max(1.0) || hi - lo <= 1e-15 * u.abs().max(1.0) {
            break;
        }
    }
    Ok(u.exp())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boundary_cases() {
        assert_eq!(blocking(0, 5.0), Ok(1.0));
        assert_eq!(blocking(3, 0.0), Ok(0.0));
        assert_eq!(blocking(1, 1.0), Ok(0.5));
        // B(2, 1) = (1/2) / (1 + 1 + 1/2) = 0.2
        assert!((blocking(2, 1.0).unwrap() - 0.2).abs() < 1e-16);
    }

    #[test]
    fn rejects_bad_arguments() {
        assert!(blocking(3, -1.0).is_err());
        assert!(blocking(3, f64::NAN).is_err());
        assert!(blocking(3, f64::INFINITY).is_err());
        assert!(servers_for(0.0, 0.01).is_err());
        assert!(servers_for(5.0, 0.0).is_err());
        assert!(servers_for(5.0, 1.0).is_err());
        assert!(servers_for(5.0, f64::NAN).is_err());
        assert!(traffic_for(0, 0.01).is_err());
        assert!(traffic_for(5, 1.5).is_err());
        assert!(blocking_continuous(-0.5, 1.0).is_err());
        assert!(matches!(
            blocking(u32::MAX, 1.0),
            Err(FormulaError::OutOfRange { .. })
        ));
    }

    #[test]
    fn fractional_start_is_one_at_zero_and_continuous() {
        for a in [0.01, 0.5, 1.9999, 2.0, 7.0, 300.0] {
            let near0 = fractional_lower_mass(1e-9, a);
            assert!(near0.abs() < 1e-7, "a = {a}: {near0}");
            // Continuity at x0 -> 1: J(1) = 1/A.
            let near1 = fractional_lower_mass(1.0 - 1e-10, a);
            assert!((near1 * a - 1.0).abs() < 1e-8, "a = {a}: {near1}");
        }
    }
}
