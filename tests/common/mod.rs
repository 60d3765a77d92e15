//! Helpers shared by the simulation tests.
#![allow(dead_code)]

use busyhour::experiment::{self, RunOptions, RunResult};
use busyhour::scenario::{self, Model, Replications};
use busyhour::stats::Estimate;
use std::path::Path;

/// Compile scenario text (empirical files relative to the crate root).
pub fn model(text: &str) -> Model {
    scenario::parse(
        text,
        "test.toml",
        Path::new(env!("CARGO_MANIFEST_DIR")),
        "test",
    )
    .unwrap_or_else(|e| panic!("test scenario does not compile: {e}"))
}

/// Run a model with its own plan.
pub fn run(model: &Model) -> RunResult {
    experiment::run(model, None, &RunOptions::default()).expect("run")
}

/// Run with a fixed number of replications.
pub fn run_n(model: &Model, n: u32) -> RunResult {
    experiment::run(model, Some(Replications::Fixed(n)), &RunOptions::default()).expect("run")
}

/// Assert that the exact value lies within `k` half-widths of the estimate,
/// printing both side by side when it does not.
#[track_caller]
pub fn assert_covers(what: &str, e: Estimate, exact: f64, k: f64) {
    assert!(
        e.replications >= 2 && e.half_width.is_finite(),
        "{what}: no interval ({e:?})"
    );
    let ok = (e.mean - exact).abs() <= k * e.half_width;
    assert!(
        ok,
        "{what}\n  expected {exact:.6}\n  simulated {:.6} ± {:.6} ({} replications): off by {:.1} half-widths",
        e.mean,
        e.half_width,
        e.replications,
        (e.mean - exact).abs() / e.half_width
    );
}

/// Assert that the interval is narrow enough to make a comparison meaningful.
#[track_caller]
pub fn assert_precise(what: &str, e: Estimate, max_relative: f64) {
    assert!(
        e.half_width <= max_relative * e.mean.abs(),
        "{what}: interval too wide to test anything: {:.6} ± {:.6}",
        e.mean,
        e.half_width
    );
}

/// Erlang B computed independently of busyhour's formulas: the truncated
/// Poisson distribution B(N, A) = pmf(N) / cdf(N), from statrs.
pub fn erlang_b_statrs(n: u64, a: f64) -> f64 {
    use statrs::distribution::{Discrete, DiscreteCDF, Poisson};
    let p = Poisson::new(a).expect("valid traffic");
    p.pmf(n) / p.cdf(n)
}

/// Erlang C from Erlang B by the standard identity C = N B / (N - A (1 - B))
/// (any teletraffic handbook); B from statrs.
pub fn erlang_c_statrs(n: u32, a: f64) -> f64 {
    let b = erlang_b_statrs(u64::from(n), a);
    let nf = f64::from(n);
    nf * b / (nf - a * (1.0 - b))
}

/// Stationary distribution of a continuous-time Markov chain with `states`
/// states and transitions `(from, to, rate)`: solves `π Q = 0`, `Σ π = 1`
/// by dense Gaussian elimination with partial pivoting, the last balance
/// equation replaced by the normalisation. A solver independent of the
/// library's (`formulas::chains`), for the tests' exact references.
pub fn dense_stationary(states: usize, transitions: &[(usize, usize, f64)]) -> Vec<f64> {
    let mut m = vec![vec![0.0f64; states + 1]; states];
    for &(from, to, rate) in transitions {
        m[to][from] += rate;
        m[from][from] -= rate;
    }
    for cell in m[states - 1].iter_mut() {
        *cell = 1.0;
    }
    for col in 0..states {
        let pivot = (col..states)
            .max_by(|&a, &b| m[a][col].abs().total_cmp(&m[b][col].abs()))
            .expect("rows left");
        m.swap(col, pivot);
        let pivot_row = m[col].clone();
        for (row, r) in m.iter_mut().enumerate() {
            if row != col && r[col] != 0.0 {
                let f = r[col] / pivot_row[col];
                for (x, p) in r.iter_mut().zip(&pivot_row).skip(col) {
                    *x -= f * p;
                }
            }
        }
    }
    (0..states).map(|i| m[i][states] / m[i][i]).collect()
}
