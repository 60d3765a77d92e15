//! Non-pre-emptive priority classes on one agent group: the M/M/N queue
//! whose waiting calls are answered class by class (first come, first
//! served within a class), every class with the same exponential holding
//! time, Poisson arrivals and no abandonment.

use super::erlang_c;
use super::error::{FormulaError, non_negative, positive};

/// Mean wait of each priority class (s), class 0 answered first, over all
/// its calls (those answered at once count as 0 s).
///
/// # Formula
///
/// Cobham (1954), for N agents and equal exponential holding of mean `h`:
///
/// `W_k = C(N, A) h / N / ((1 - s_{k-1}) (1 - s_k))`,
/// `s_k = (A_0 + ... + A_k) / N`, `s_{-1} = 0`,
///
/// with `A_k` the offered traffic of class k, `A` their sum and
/// `C(N, A)` Erlang C. Written here as
/// `C h N / ((N - S_{k-1}) (N - S_k))` with `S_k` the cumulative traffic,
/// so that no quotient of small differences appears. The load-weighted mean
/// `sum A_k W_k / A` is Erlang C's mean wait `C h / (N - A)` (Kleinrock's
/// conservation law for work-conserving disciplines; the unit tests check
/// it). For one agent it is the M/G/1 priority formula
/// `W_k = W_0 / ((1 - s_{k-1})(1 - s_k))`, `W_0 = sum lambda_i E[S^2] / 2`
/// (Kleinrock, Queueing Systems, vol. II, 1976, section 3.6).
///
/// # Errors
///
/// [`FormulaError::Unstable`] when the total traffic is at least the agents;
/// [`FormulaError::InvalidArgument`] for an empty list, a negative or NaN
/// traffic, or a holding time that is not positive.
///
/// # Example
///
/// ```
/// use busyhour::formulas::priority;
/// // One agent, two classes of 0.25 E each, h = 1 s: C = 0.5, and
/// // W_0 = 0.5 / (1 x 0.75) = 2/3 s, W_1 = 0.5 / (0.75 x 0.5) = 4/3 s.
/// let w = priority::class_mean_waits(1, &[0.25, 0.25], 1.0)?;
/// assert!((w[0] - 2.0 / 3.0).abs() < 1e-12 && (w[1] - 4.0 / 3.0).abs() < 1e-12);
/// # Ok::<(), busyhour::formulas::FormulaError>(())
/// ```
pub fn class_mean_waits(
    agents: u32,
    traffics: &[f64],
    holding_s: f64,
) -> Result<Vec<f64>, FormulaError> {
    let h = positive("mean holding time (s)", holding_s)?;
    if traffics.is_empty() {
        return Err(FormulaError::InvalidArgument {
            name: "priority classes",
            value: 0.0,
            expected: "at least one class",
        });
    }
    for &a in traffics {
        non_negative("offered traffic of a class (erlangs)", a)?;
    }
    let total: f64 = traffics.iter().sum();
    let c = erlang_c::wait_probability(agents, total)?;
    let n = f64::from(agents);
    let mut before = 0.0;
    let mut waits = Vec::with_capacity(traffics.len());
    for &a in traffics {
        let upto = before + a;
        waits.push(c * h * n / ((n - before) * (n - upto)));
        before = upto;
    }
    Ok(waits)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_class_is_erlang_c() {
        // Erlang C's mean wait C h / (N - A).
        for (n, a) in [(1u32, 0.5), (10, 8.0), (50, 47.5), (200, 150.0)] {
            let w = class_mean_waits(n, &[a], 180.0).unwrap();
            let c = erlang_c::mean_wait(n, a, 180.0).unwrap();
            assert!((w[0] - c).abs() <= 1e-12 * c, "{n} {a}: {} vs {c}", w[0]);
        }
    }

    #[test]
    fn the_load_weighted_mean_is_erlang_c() {
        // Kleinrock's conservation law: sum A_k W_k = A W_FCFS for any
        // work-conserving order with equal holding laws.
        for (n, classes) in [
            (12u32, vec![2.0, 4.0, 4.5]),
            (3, vec![0.1, 2.5]),
            (100, vec![10.0, 30.0, 40.0, 12.0]),
        ] {
            let w = class_mean_waits(n, &classes, 240.0).unwrap();
            let total: f64 = classes.iter().sum();
            let mixed: f64 = classes.iter().zip(&w).map(|(a, w)| a * w).sum::<f64>() / total;
            let c = erlang_c::mean_wait(n, total, 240.0).unwrap();
            assert!((mixed - c).abs() <= 1e-12 * c, "{n}: {mixed} vs {c}");
            // Higher classes wait less.
            assert!(w.windows(2).all(|p| p[0] < p[1]), "{w:?}");
        }
    }

    #[test]
    fn one_agent_is_the_m_g_1_priority_formula() {
        // Kleinrock vol. II, 3.6: W_k = W_0 / ((1 - s_{k-1})(1 - s_k)),
        // W_0 = sum lambda_i E[S^2] / 2 = rho h for exponential holding
        // (E[S^2] = 2 h^2).
        let (h, lambdas) = (2.0, [0.05, 0.15, 0.1]);
        let traffics: Vec<f64> = lambdas.iter().map(|l| l * h).collect();
        let rho: f64 = traffics.iter().sum();
        let w0: f64 = lambdas.iter().map(|l| l * 2.0 * h * h / 2.0).sum();
        assert!((w0 - rho * h).abs() < 1e-15);
        let w = class_mean_waits(1, &traffics, h).unwrap();
        let mut s = 0.0;
        for (k, a) in traffics.iter().enumerate() {
            let want = w0 / ((1.0 - s) * (1.0 - s - a));
            s += a;
            assert!((w[k] - want).abs() <= 1e-12 * want, "class {k}");
        }
    }

    #[test]
    fn bad_arguments_are_refused() {
        assert!(class_mean_waits(2, &[], 1.0).is_err());
        assert!(class_mean_waits(2, &[1.0, f64::NAN], 1.0).is_err());
        assert!(class_mean_waits(2, &[1.0, -0.1], 1.0).is_err());
        assert!(class_mean_waits(2, &[1.0, 1.0], 1.0).is_err()); // A = N
        assert!(class_mean_waits(2, &[1.0], 0.0).is_err());
        assert!(class_mean_waits(0, &[0.5], 1.0).is_err());
    }
}
