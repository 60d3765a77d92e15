//! Multi-rate loss systems: several Poisson traffic classes, each call of
//! class `k` occupying `b_k` channels of one shared group (Kaufman-Roberts).

use super::error::{FormulaError, at_least_one, non_negative};
use super::scaled::{BIG, SMALL};

/// The largest group (channels) the recursion accepts: it keeps one number
/// per channel.
pub const MAX_CAPACITY: u32 = 10_000_000;

/// Kaufman-Roberts blocking per class on a group of `capacity` channels
/// offered `classes`, each `(traffic in erlangs, channels per call)`.
///
/// # Formula
///
/// Occupancy distribution by the recursion `q(0) = 1`,
/// `j q(j) = Σ_k a_k b_k q(j - b_k)` (terms with `j < b_k` omitted),
/// normalised over `j = 0..=C`; class `k` is blocked when fewer than `b_k`
/// channels are free: `B_k = Σ_{j > C - b_k} q(j)`. A class whose calls need
/// more than `C` channels is always blocked. With one class of 1 channel this
/// is Erlang B.
///
/// Source: J. S. Kaufman, "Blocking in a shared resource environment", IEEE
/// Trans. Communications 29 (1981); J. W. Roberts (1981); as in the ITU-T
/// Teletraffic Engineering Handbook, chapter on multi-dimensional loss
/// systems.
///
/// # Numerics
///
/// Positive-term recursion; the whole vector is rescaled by `2^-512`
/// whenever a value passes `2^512`, so nothing overflows at 10,000 channels
/// (values below `2^-1074` of the largest are dropped as negligible).
/// Cost `O(C × classes)`.
///
/// # Example
///
/// ```
/// use busyhour::formulas::{erlang_b, multirate};
/// let b = multirate::kaufman_roberts(10, &[(5.0, 1)])?;
/// assert!((b[0] / erlang_b::blocking(10, 5.0)? - 1.0).abs() < 1e-12);
/// let mixed = multirate::kaufman_roberts(30, &[(10.0, 1), (2.0, 6)])?;
/// assert!(mixed[1] > mixed[0]);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn kaufman_roberts(capacity: u32, classes: &[(f64, u32)]) -> Result<Vec<f64>, FormulaError> {
    let capacity = at_least_one("capacity (channels)", capacity)?;
    if capacity > MAX_CAPACITY {
        return Err(FormulaError::OutOfRange {
            what: "capacity (channels)",
            limit: u64::from(MAX_CAPACITY),
        });
    }
    if classes.is_empty() {
        return Err(FormulaError::InvalidArgument {
            name: "traffic classes",
            value: 0.0,
            expected: "at least one traffic class",
        });
    }
    for &(traffic, units) in classes {
        non_negative("class offered traffic (erlangs)", traffic)?;
        at_least_one("class channels per call", units)?;
    }
    let c = capacity as usize;
    // Classes that fit, as (a_k b_k, b_k).
    let fitting: Vec<(f64, usize)> = classes
        .iter()
        .filter(|&&(a, b)| b <= capacity && a > 0.0)
        .map(|&(a, b)| (a * f64::from(b), b as usize))
        .collect();
    let mut q = vec![0.0f64; c + 1];
    q[0] = 1.0;
    for j in 1..=c {
        let mut sum = 0.0;
        for &(ab, b) in &fitting {
            if b <= j {
                sum += ab * q[j - b];
            }
        }
        q[j] = sum / j as f64;
        if q[j] > BIG {
            // Rare: keep the values in range (only ratios matter).
            for v in &mut q[..=j] {
                *v *= SMALL;
            }
        }
    }
    let total: f64 = q.iter().sum();
    // Suffix sums: tail[m] = Σ_{j >= m} q(j).
    let mut tail = vec![0.0f64; c + 2];
    for j in (0..=c).rev() {
        tail[j] = tail[j + 1] + q[j];
    }
    Ok(classes
        .iter()
        .map(|&(_, b)| {
            if b > capacity {
                1.0
            } else {
                tail[c + 1 - b as usize] / total
            }
        })
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_classes() {
        assert!(kaufman_roberts(10, &[]).is_err());
        assert!(kaufman_roberts(u32::MAX, &[(1.0, 1)]).is_err());
        assert!(kaufman_roberts(0, &[(1.0, 1)]).is_err());
        assert!(kaufman_roberts(10, &[(1.0, 0)]).is_err());
        assert!(kaufman_roberts(10, &[(f64::NAN, 1)]).is_err());
    }

    #[test]
    fn oversized_class_is_always_blocked() {
        let b = kaufman_roberts(5, &[(1.0, 1), (1.0, 6)]).unwrap();
        assert_eq!(b[1], 1.0);
        assert!(b[0] < 1.0);
    }

    #[test]
    fn idle_classes_block_nothing_but_wide_calls() {
        let b = kaufman_roberts(4, &[(0.0, 1), (0.0, 2)]).unwrap();
        assert_eq!(b, vec![0.0, 0.0]);
    }
}
