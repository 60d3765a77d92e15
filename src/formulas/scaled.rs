//! Extended-range non-negative numbers, `mantissa × 2^exponent`, for the
//! products and sums of the teletraffic recursions that leave the range of
//! `f64` (for example the state weights of 10,000 servers, near 10^35,000).
//!
//! Only what the formulas need: multiply, divide, add, logarithm and the
//! conversion back to `f64` (which underflows to 0 or overflows to infinity
//! only when the true value lies outside `f64`'s range).

/// The mantissa is kept within `[2^-SHIFT, 2^SHIFT)`; the exponent carries
/// the rest.
pub(crate) const SHIFT: i64 = 512;
/// `2^SHIFT`.
pub(crate) const BIG: f64 = pow2_normal(SHIFT);
/// `2^-SHIFT`.
pub(crate) const SMALL: f64 = pow2_normal(-SHIFT);

/// The high part of ln 2 (its low bits are zero, so `k * LN2_HI` is exact for
/// |k| < 2^20); with `LN2_LO` it gives ln 2 to about 2^-90 (Cody and Waite's
/// argument reduction).
const LN2_HI: f64 = f64::from_bits(0x3fe6_2e42_fee0_0000);
const LN2_LO: f64 = f64::from_bits(0x3dea_39ef_3579_3c76);

/// `2^e` for `e` in the normal range `[-1022, 1023]`, exact.
const fn pow2_normal(e: i64) -> f64 {
    f64::from_bits(((e + 1023) as u64) << 52)
}

/// `m × 2^e` with a single rounding, even when the result is subnormal, zero
/// or infinite.
pub(crate) fn ldexp(mut m: f64, mut e: i64) -> f64 {
    while e > 1000 {
        m *= pow2_normal(1000);
        e -= 1000;
        if m.is_infinite() || m == 0.0 {
            return m;
        }
    }
    while e < -1000 {
        // Exact while the product stays normal; only a subnormal result rounds.
        m *= pow2_normal(-1000);
        e += 1000;
        if m == 0.0 {
            return m;
        }
    }
    m * pow2_normal(e)
}

/// A non-negative number `m × 2^e` of practically unlimited range.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Scaled {
    /// Mantissa: 0, or within `[2^-SHIFT, 2^SHIFT)` once normalised.
    m: f64,
    /// Binary exponent.
    e: i64,
}

impl Scaled {
    pub(crate) const ZERO: Scaled = Scaled { m: 0.0, e: 0 };
    pub(crate) const ONE: Scaled = Scaled { m: 1.0, e: 0 };

    /// Builds from a mantissa and binary exponent, normalising.
    pub(crate) fn new(m: f64, e: i64) -> Scaled {
        Scaled { m, e }.normalised()
    }

    /// `x` as an extended number.
    #[cfg(test)]
    pub(crate) fn from_f64(x: f64) -> Scaled {
        Scaled::new(x, 0)
    }

    /// `e^x` for any finite `x`, with Cody and Waite's reduction
    /// `x = k ln 2 + r`, so the relative error is that of `exp(r)` plus
    /// `|x|` ulps of `x` itself.
    pub(crate) fn exp(x: f64) -> Scaled {
        let k = (x / std::f64::consts::LN_2).round();
        let r = (x - k * LN2_HI) - k * LN2_LO;
        Scaled::new(r.exp(), k as i64)
    }

    fn normalised(mut self) -> Scaled {
        if self.m == 0.0 || !self.m.is_finite() {
            return self;
        }
        while self.m >= BIG {
            self.m *= SMALL;
            self.e += SHIFT;
        }
        while self.m < SMALL {
            self.m *= BIG;
            self.e -= SHIFT;
        }
        self
    }

    /// `self × x` for a finite `x >= 0`.
    pub(crate) fn mul_f64(self, x: f64) -> Scaled {
        Scaled::new(self.m * x, self.e)
    }

    /// `self / other`; `other` must not be zero.
    pub(crate) fn div(self, other: Scaled) -> Scaled {
        Scaled::new(self.m / other.m, self.e - other.e)
    }

    /// `1 / self`; `self` must not be zero.
    pub(crate) fn recip(self) -> Scaled {
        Scaled::new(1.0 / self.m, -self.e)
    }

    /// `self + other`.
    pub(crate) fn add(self, other: Scaled) -> Scaled {
        if other.m == 0.0 {
            return self;
        }
        if self.m == 0.0 {
            return other;
        }
        let (hi, lo) = if self.e >= other.e {
            (self, other)
        } else {
            (other, self)
        };
        Scaled::new(hi.m + ldexp(lo.m, lo.e - hi.e), hi.e)
    }

    /// The value as `f64` (0 or infinity outside `f64`'s range).
    pub(crate) fn to_f64(self) -> f64 {
        if self.e == 0 {
            self.m
        } else {
            ldexp(self.m, self.e)
        }
    }

    /// Natural logarithm (-infinity for zero).
    pub(crate) fn ln(self) -> f64 {
        self.m.ln() + self.e as f64 * std::f64::consts::LN_2
    }

    /// `ln(1 + self)`, accurate also when `self` is small.
    pub(crate) fn ln_1p(self) -> f64 {
        if self.e == 0 {
            self.m.ln_1p()
        } else {
            Scaled::ONE.add(self).ln()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ldexp_matches_powi_in_range_and_saturates_outside() {
        assert_eq!(ldexp(1.5, 10), 1536.0);
        assert_eq!(ldexp(1.0, -1074), f64::from_bits(1));
        assert_eq!(ldexp(1.0, -1076), 0.0);
        assert_eq!(ldexp(1.0, 1024), f64::INFINITY);
        assert_eq!(ldexp(3.0, -3000), 0.0);
        assert_eq!(ldexp(1.0, 1023), f64::MAX / (2.0 - f64::EPSILON));
    }

    #[test]
    fn arithmetic_beyond_f64_range() {
        // 10^400 / 10^399 = 10 (each built as a product of 10^100 factors).
        let mut a = Scaled::ONE;
        for _ in 0..4 {
            a = a.mul_f64(1e100);
        }
        let b = a.div(Scaled::from_f64(10.0));
        assert!((a.div(b).to_f64() - 10.0).abs() < 1e-13);
        assert!((a.ln() - 400.0 * 10f64.ln()).abs() < 1e-12);
        assert_eq!(a.to_f64(), f64::INFINITY);
        assert_eq!(a.recip().to_f64(), 0.0);
        let sum = a.add(b);
        assert!((sum.div(a).to_f64() - 1.1).abs() < 1e-14);
    }

    #[test]
    fn exp_is_accurate_far_outside_f64_range() {
        let x = -50_000.25;
        let s = Scaled::exp(x);
        assert!((s.ln() - x).abs() < 1e-10);
        // e^-700 is still in range: compare with the library exp.
        let r = Scaled::exp(-700.0).to_f64() / (-700.0f64).exp();
        assert!((r - 1.0).abs() < 1e-14);
    }
}
