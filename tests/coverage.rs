//! Coverage of the 95% intervals on cases with exact answers, with fixed
//! seeds: each case runs as 1,000 independent studies (master seeds), and
//! every checked figure must have its exact value inside at least 92% of the
//! studies' intervals, with the mean of the estimates within 3 standard
//! errors of it (the rule of `scripts/coverage.sh`, shared code in
//! `tests/common/coverage_cases.rs`).
//!
//! Exact values: Erlang B (Erlang 1917; for lognormal holding by
//! insensitivity, Sevastyanov 1957), Erlang C (Erlang 1917), and the redial
//! chain of `formulas::chains` (the retrial queue with non-persistent
//! callers, Falin and Templeton 1997).
//!
//! With 1,000 studies the coverage has a standard error of 0.7%, so a true
//! 95% coverage falls below 92% with a chance near 1e-5 per figure: a failure
//! is a finding, not bad luck.

#[path = "common/coverage_cases.rs"]
mod coverage_cases;

/// Studies per case.
const SEEDS: u64 = 1000;
/// Master seeds 20,001 to 21,000: other draws than the harness's default
/// (seeds from 1).
const FIRST_SEED: u64 = 20_001;
/// Studies run at a time.
const THREADS: usize = 2;

#[track_caller]
fn assert_covers_truth(name: &str) -> coverage_cases::CaseResult {
    let case = coverage_cases::case(name)
        .expect("exact values compute")
        .expect("the case exists");
    let seeds: Vec<u64> = (FIRST_SEED..FIRST_SEED + SEEDS).collect();
    let result = coverage_cases::run_case(&case, &seeds, THREADS).expect("the case runs");
    let table = coverage_cases::markdown_table(std::slice::from_ref(&result), seeds.len());
    assert!(
        result.passes(),
        "{name}: coverage below {:.0}% or bias beyond {} standard errors\n{table}",
        100.0 * coverage_cases::MIN_COVERAGE,
        coverage_cases::MAX_BIAS_SE
    );
    result
}

#[test]
fn coverage_small_hour_loss_and_carried_traffic_cover_erlang_b() {
    // 10 circuits, 5 E, one-hour replications, 100 per study: per-replication
    // loss ratios averaged were 5% low (coverage 90%); the pooled ratio of
    // sums is centred.
    assert_covers_truth("small-hour");
}

#[test]
fn coverage_trunks_of_call_flows_cover_erlang_b_of_the_total_holding() {
    // Insensitivity (Sevastyanov 1957): trunks held through announcement,
    // menu and talk block as Erlang B of rate x the mean total holding.
    assert_covers_truth("call-flow-trunks");
}

#[test]
fn coverage_redial_figures_cover_the_exact_retrial_chain() {
    assert_covers_truth("redials");
}

#[test]
fn coverage_overflow_network_losses_cover_the_exact_chain() {
    // Per-stream loss of two first-choice groups overflowing to a shared
    // final group with a direct stream, against the exact network chain.
    assert_covers_truth("overflow-network");
}

#[test]
fn coverage_erlang_a_half_hour_covers_erlang_a() {
    assert_covers_truth("erlang-a-half-hour");
}

// From an empty start, 15 minutes of warm-up left a queue at 86% occupancy
// far from its steady state (relaxation time about 40 minutes): the mean
// wait came out 16 to 26% low. The case gives no warm-up: the default spans
// five relaxation times of the queue (`Model::queue_relaxation_s`).
#[test]
fn coverage_erlang_c_half_hour_covers_erlang_c() {
    assert_covers_truth("erlang-c-half-hour");
}

// Lognormal holding with cv 2 keeps long calls that a 30-minute warm-up from
// empty had not yet accumulated: the loss came out 17% low. Replications now
// start with the calls in progress of the steady state seated.
#[test]
fn coverage_lognormal_loss_after_a_short_warmup_covers_erlang_b() {
    assert_covers_truth("lognormal-short-warmup");
}

#[test]
fn coverage_schedule_figures_cover_the_exact_transient() {
    // Agents 10, 14, 9, 13 per half hour with abandonment: per-interval
    // figures after each rise and fall against the forward equations of
    // the chain (`formulas::transient`).
    assert_covers_truth("schedule-agents");
}

#[test]
fn coverage_forecast_spread_covers_the_integrated_erlang_b() {
    // A gamma day factor of cv 20% on 25 E and 30 circuits: the pooled
    // loss over days against E[F B(N, A F)] / E[F].
    assert_covers_truth("forecast-spread");
}

// Twenty half-hour replications of a queue at 86% occupancy: the mean
// wait's sums are skewed enough that the log-scale interval used before
// covered 90.6% (harness seeds); the skew-corrected one must hold the line.
#[test]
fn coverage_erlang_c_mean_wait_of_twenty_half_hours_covers_erlang_c() {
    assert_covers_truth("erlang-c-20-half-hours");
}

// An urgent class that waits 0.11% of the time: no interval from 40
// one-hour replications can cover its mean wait, so the run must say so
// (Warning::Sparse) in nearly every study, while its probability of
// waiting (exact interval) still covers Erlang C of the class alone.
#[test]
fn coverage_rare_waits_warn_instead_of_giving_a_narrow_interval() {
    let result = assert_covers_truth("rare-urgent-waits");
    let (_, wait_mean) = result
        .figures
        .iter()
        .find(|(c, _)| c.figure == "wait_mean")
        .expect("the case checks the mean wait");
    assert!(
        wait_mean.warned() > 0.9,
        "warned in only {:.1}% of the studies",
        100.0 * wait_mean.warned()
    );
}
