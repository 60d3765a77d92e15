//! Coverage cases: scenarios whose figures have exact answers (closed forms
//! from `busyhour::formulas`, or the Markov chains of `formulas::chains`),
//! run over many independent master seeds to measure whether the 95%
//! intervals cover the truth and whether the estimates are centred on it.
//!
//! Shared by `examples/coverage.rs` (the harness, `scripts/coverage.sh`) and
//! `tests/coverage.rs` (fixed seeds, the same pass rule), included by both
//! with `#[path]`. Uses only the library's public API.
#![allow(dead_code)]

use busyhour::experiment::warnings::Warning;
use busyhour::experiment::{self, RunOptions};
use busyhour::formulas::chains::{self, FirstChoice};
use busyhour::formulas::{FormulaError, engset, erlang_a, erlang_b, erlang_c, priority};
use busyhour::scenario::{self, Replications};
use busyhour::stats::{Estimate, Scope};
use std::path::Path;
use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};

/// A case fails when its coverage is below this share...
pub const MIN_COVERAGE: f64 = 0.92;
/// ... or when the mean of its estimates lies more than this many standard
/// errors from the exact value.
pub const MAX_BIAS_SE: f64 = 3.0;
/// Coverage is judged only over at least this many studies without a
/// warning on the figure.
pub const MIN_UNWARNED: usize = 100;

/// One figure of a case with its exact value.
#[derive(Debug, Clone)]
pub struct Check {
    /// Where the figure is reported.
    pub scope: Scope,
    /// The figure's JSON name (`loss`, `carried_traffic`, ...).
    pub figure: &'static str,
    /// A short label for the table (`stream`, `group primary-a`, ...).
    pub place: String,
    /// The exact value the intervals should cover.
    pub exact: f64,
    /// Where the exact value comes from.
    pub source: &'static str,
}

/// A scenario with exact answers.
#[derive(Debug, Clone)]
pub struct Case {
    /// Short name, for `--case`.
    pub name: &'static str,
    /// One line on what it checks.
    pub about: &'static str,
    /// Scenario text without a seed; the `[simulation]` table gets one per
    /// run.
    pub text: String,
    /// Replications per master seed (the shape of one study).
    pub replications: u32,
    /// The figures checked.
    pub checks: Vec<Check>,
}

impl Case {
    /// The scenario text with `seed = N` written into `[simulation]`.
    pub fn scenario(&self, seed: u64) -> String {
        self.text.replacen(
            "[simulation]\n",
            &format!("[simulation]\nseed = {seed}\n"),
            1,
        )
    }
}

/// One study's estimates of a case's checks, each with whether the run
/// warned that its interval may not cover.
type Study = Vec<(Estimate, bool)>;

/// The summary of one figure over many master seeds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Summary {
    /// Exact value.
    pub exact: f64,
    /// Master seeds (studies) run.
    pub seeds: usize,
    /// Mean of the estimates over seeds.
    pub mean: f64,
    /// Standard error of that mean (sd of the estimates / sqrt(seeds)).
    pub se: f64,
    /// (mean - exact) / se.
    pub bias_se: f64,
    /// Share of the intervals `[low, high]` containing the exact value,
    /// among the studies whose run did not warn that this figure's
    /// interval may not cover (`Warning::Sparse`: waits seen in too few
    /// replications); the pass rule judges this.
    pub coverage: f64,
    /// Binomial standard error of the coverage, sqrt(c (1 - c) / studies
    /// without the warning).
    pub coverage_se: f64,
    /// Studies that did not warn about this figure (the coverage's
    /// denominator).
    pub unwarned: usize,
    /// Mean over seeds of the interval's half length / exact value.
    pub relative_half_width: f64,
}

impl Summary {
    /// Summarises the estimates of one figure (one per seed, with whether
    /// that study warned about it); an estimate without a defined mean or
    /// interval counts as not covering.
    pub fn of(exact: f64, studies: &[(Estimate, bool)]) -> Summary {
        let estimates: Vec<Estimate> = studies.iter().map(|s| s.0).collect();
        let seeds = estimates.len();
        let n = seeds as f64;
        let means: Vec<f64> = estimates
            .iter()
            .map(|e| e.mean)
            .filter(|m| m.is_finite())
            .collect();
        let k = means.len() as f64;
        let mean = means.iter().sum::<f64>() / k;
        let var = means.iter().map(|m| (m - mean).powi(2)).sum::<f64>() / (k - 1.0);
        let se = (var / k).sqrt();
        let bias_se = if se > 0.0 {
            (mean - exact) / se
        } else if mean == exact {
            0.0
        } else {
            f64::INFINITY
        };
        let unwarned: Vec<&Estimate> = studies.iter().filter(|s| !s.1).map(|s| &s.0).collect();
        let u = unwarned.len() as f64;
        let covered = unwarned.iter().filter(|e| e.contains(exact)).count() as f64;
        let coverage = if u > 0.0 { covered / u } else { f64::NAN };
        let relative_half_width = estimates
            .iter()
            .map(|e| (e.high - e.low) / 2.0 / exact.abs())
            .sum::<f64>()
            / n;
        Summary {
            exact,
            seeds,
            mean,
            se,
            bias_se,
            coverage,
            coverage_se: (coverage * (1.0 - coverage) / u).sqrt(),
            unwarned: unwarned.len(),
            relative_half_width,
        }
    }

    /// The pass rule: |bias| at most [`MAX_BIAS_SE`] standard errors, and
    /// coverage at least [`MIN_COVERAGE`] among the studies that did not
    /// warn, judged where at least [`MIN_UNWARNED`] of them did not (a
    /// figure the run warns about nearly always is the warning's to
    /// carry); NaN fails.
    pub fn passes(&self) -> bool {
        let covers = self.unwarned < MIN_UNWARNED || self.coverage >= MIN_COVERAGE;
        covers && self.bias_se.abs() <= MAX_BIAS_SE
    }

    /// Share of the studies that warned about this figure.
    pub fn warned(&self) -> f64 {
        1.0 - self.unwarned as f64 / self.seeds as f64
    }
}

/// Every figure of a case, summarised.
#[derive(Debug, Clone)]
pub struct CaseResult {
    /// The case's name.
    pub case: &'static str,
    /// Replications per seed.
    pub replications: u32,
    /// One summary per check, in the case's order.
    pub figures: Vec<(Check, Summary)>,
}

impl CaseResult {
    /// Whether every figure passes.
    pub fn passes(&self) -> bool {
        self.figures.iter().all(|(_, s)| s.passes())
    }
}

/// Runs `case` once per master seed in `seeds` (each a study of
/// `case.replications` replications on one thread), `threads` studies at a
/// time, and summarises each checked figure.
pub fn run_case(case: &Case, seeds: &[u64], threads: usize) -> Result<CaseResult, String> {
    let next = AtomicUsize::new(0);
    let results: Mutex<Vec<Option<Study>>> = Mutex::new(vec![None; seeds.len()]);
    let failure: Mutex<Option<String>> = Mutex::new(None);
    std::thread::scope(|scope| {
        for _ in 0..threads.max(1) {
            scope.spawn(|| {
                loop {
                    let i = next.fetch_add(1, Ordering::Relaxed);
                    if i >= seeds.len() {
                        break;
                    }
                    match run_seed(case, seeds[i]) {
                        Ok(v) => {
                            if let Ok(mut r) = results.lock() {
                                r[i] = Some(v);
                            }
                        }
                        Err(e) => {
                            if let Ok(mut f) = failure.lock() {
                                f.get_or_insert(e);
                            }
                            next.store(seeds.len(), Ordering::Relaxed);
                        }
                    }
                }
            });
        }
    });
    if let Some(e) = failure.into_inner().map_err(|e| e.to_string())? {
        return Err(e);
    }
    let per_seed: Vec<Study> = results
        .into_inner()
        .map_err(|e| e.to_string())?
        .into_iter()
        .map(|r| r.ok_or_else(|| format!("{}: a seed did not run", case.name)))
        .collect::<Result<_, _>>()?;
    let figures = case
        .checks
        .iter()
        .enumerate()
        .map(|(j, check)| {
            let column: Vec<(Estimate, bool)> = per_seed.iter().map(|v| v[j]).collect();
            (check.clone(), Summary::of(check.exact, &column))
        })
        .collect();
    Ok(CaseResult {
        case: case.name,
        replications: case.replications,
        figures,
    })
}

/// One study: the case at one master seed; the estimates of its checks,
/// each with whether the run warned that its interval may not cover.
fn run_seed(case: &Case, seed: u64) -> Result<Study, String> {
    let text = case.scenario(seed);
    let model = scenario::parse(&text, "case.toml", Path::new("."), case.name)
        .map_err(|e| format!("{}: scenario does not compile: {e}", case.name))?;
    let outcome = experiment::run(
        &model,
        Some(Replications::Fixed(case.replications)),
        &RunOptions {
            threads: Some(1),
            ..Default::default()
        },
    )
    .map_err(|e| format!("{}: run failed: {e}", case.name))?;
    let warned = |c: &Check| {
        outcome.warnings.iter().any(|w| {
            matches!(w, Warning::Sparse { figure, .. }
                if figure.scope == c.scope && figure.figure.name() == c.figure)
        })
    };
    case.checks
        .iter()
        .map(|c| {
            let e = outcome.get(c.scope, c.figure).ok_or_else(|| {
                format!(
                    "{}: figure {} of {} not reported",
                    case.name, c.figure, c.place
                )
            })?;
            Ok((e, warned(c)))
        })
        .collect()
}

/// The results as a markdown table (one row per figure).
pub fn markdown_table(results: &[CaseResult], seeds: usize) -> String {
    let mut out = String::new();
    out.push_str(&format!(
        "| case | reps/seed | figure | exact | mean over {seeds} seeds ± se | bias (se) | coverage ± se | warned | rel. half-width | verdict |\n"
    ));
    out.push_str("| --- | ---: | --- | ---: | ---: | ---: | ---: | ---: | ---: | --- |\n");
    for r in results {
        for (c, s) in &r.figures {
            out.push_str(&format!(
                "| {} | {} | {} {} | {} | {} ± {} | {:+.1} | {:.1}% ± {:.1}% | {:.1}% | {:.1}% | {} |\n",
                r.case,
                r.replications,
                c.place,
                c.figure,
                number(s.exact),
                number(s.mean),
                number(s.se),
                s.bias_se,
                100.0 * s.coverage,
                100.0 * s.coverage_se,
                100.0 * s.warned(),
                100.0 * s.relative_half_width,
                if s.passes() { "pass" } else { "FAIL" },
            ));
        }
    }
    out
}

/// Five significant digits.
fn number(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let digits = (4 - x.abs().log10().floor() as i32).max(0) as usize;
    format!("{x:.digits$}")
}

fn stream(s: usize, figure: &'static str, exact: f64, source: &'static str) -> Check {
    Check {
        scope: Scope::Stream(s),
        figure,
        place: if s == 0 {
            "stream".to_string()
        } else {
            format!("stream {}", s + 1)
        },
        exact,
        source,
    }
}

fn group(g: usize, name: &str, figure: &'static str, exact: f64, source: &'static str) -> Check {
    Check {
        scope: Scope::Group(g),
        figure,
        place: format!("group {name}"),
        exact,
        source,
    }
}

/// Three-minute holding, the common case.
const HOLDING_S: f64 = 180.0;

/// Calls per hour offering `traffic` erlangs of three-minute calls.
fn per_hour(traffic: f64) -> f64 {
    traffic * 3600.0 / HOLDING_S
}

fn small_hour() -> Result<Case, FormulaError> {
    let (n, a) = (10, 5.0);
    let b = erlang_b::blocking(n, a)?;
    Ok(Case {
        name: "small-hour",
        about: "10 circuits, 5 E, exponential 3 min, 1 h replications, 30 min warm-up",
        text: format!(
            "[simulation]\nwarmup = \"30m\"\nlength = \"1h\"\n\n\
             [[group]]\nname = \"circuits\"\nservers = {n}\n\n\
             [[stream]]\nname = \"calls\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"circuits\"]\n",
            per_hour(a)
        ),
        replications: 100,
        checks: vec![
            stream(0, "loss", b, "Erlang B"),
            stream(0, "first_attempt_blocking", b, "Erlang B"),
            group(
                0,
                "circuits",
                "carried_traffic",
                a * (1.0 - b),
                "A (1 - Erlang B)",
            ),
            group(0, "circuits", "time_congestion", b, "Erlang B"),
        ],
    })
}

fn four_lines() -> Result<Case, FormulaError> {
    let (n, a) = (4, 2.0);
    Ok(Case {
        name: "four-lines",
        about: "2 E on 4 lines, exponential 3 min, 15 min replications, no warm-up given",
        text: format!(
            "[simulation]\nlength = \"15m\"\n\n\
             [[group]]\nname = \"lines\"\nservers = {n}\n\n\
             [[stream]]\nname = \"calls\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"lines\"]\n",
            per_hour(a)
        ),
        replications: 40,
        checks: vec![stream(0, "loss", erlang_b::blocking(n, a)?, "Erlang B")],
    })
}

fn lognormal_short_warmup() -> Result<Case, FormulaError> {
    let (n, a) = (107, 90.0);
    Ok(Case {
        name: "lognormal-short-warmup",
        about: "107 circuits, 90 E, lognormal 3 min cv 2, 30 min warm-up, 2 h replications",
        text: format!(
            "[simulation]\nwarmup = \"30m\"\nlength = \"2h\"\n\n\
             [[group]]\nname = \"trunks\"\nservers = {n}\n\n\
             [[stream]]\nname = \"calls\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"lognormal\", mean = \"3m\", cv = 2 }}\n\
             route = [\"trunks\"]\n",
            per_hour(a)
        ),
        replications: 20,
        checks: vec![stream(
            0,
            "loss",
            erlang_b::blocking(n, a)?,
            "Erlang B (insensitivity)",
        )],
    })
}

fn hyperexp_cv3() -> Result<Case, FormulaError> {
    let n = 30;
    // The traffic Erlang B blocks at 1%, rounded to whole calls per hour;
    // the exact value is computed from the rounded rate.
    let rate = per_hour(erlang_b::traffic_for(n, 0.01)?).round();
    let a = rate * HOLDING_S / 3600.0;
    Ok(Case {
        name: "hyperexp-cv3",
        about: "30 circuits at about 1% Erlang B, hyperexponential 3 min cv 3, 5 min warm-up, 1 h replications",
        text: format!(
            "[simulation]\nwarmup = \"5m\"\nlength = \"1h\"\n\n\
             [[group]]\nname = \"trunks\"\nservers = {n}\n\n\
             [[stream]]\nname = \"calls\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{rate}/h\" }}\n\
             holding = {{ law = \"hyperexponential\", mean = \"3m\", cv = 3 }}\n\
             route = [\"trunks\"]\n"
        ),
        replications: 40,
        checks: vec![stream(
            0,
            "loss",
            erlang_b::blocking(n, a)?,
            "Erlang B (insensitivity)",
        )],
    })
}

fn erlang_c_half_hour() -> Result<Case, FormulaError> {
    let (n, a, within_s) = (14, 12.0, 20.0);
    Ok(Case {
        name: "erlang-c-half-hour",
        about: "14 agents, 12 E, unlimited queue, exponential 3 min, default warm-up (no key), 30 min replications",
        text: format!(
            "[simulation]\nlength = \"30m\"\n\n\
             [[group]]\nname = \"agents\"\nservers = {n}\nqueue = \"unlimited\"\n\n\
             [[stream]]\nname = \"callers\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"agents\"]\nanswer_within = \"20s\"\n",
            per_hour(a)
        ),
        replications: 40,
        checks: vec![
            stream(
                0,
                "wait_probability",
                erlang_c::wait_probability(n, a)?,
                "Erlang C",
            ),
            stream(
                0,
                "wait_mean",
                erlang_c::mean_wait(n, a, HOLDING_S)?,
                "Erlang C",
            ),
            stream(
                0,
                "service_level",
                erlang_c::service_level(n, a, HOLDING_S, within_s)?,
                "Erlang C",
            ),
        ],
    })
}

fn erlang_a_half_hour() -> Result<Case, FormulaError> {
    let (n, a, patience_s, within_s) = (13, 12.0, 60.0, 20.0);
    let q = erlang_a::solve(n, a, HOLDING_S, patience_s)?;
    Ok(Case {
        name: "erlang-a-half-hour",
        about: "13 agents, 12 E, exponential 3 min, exponential patience 1 min, 15 min warm-up, 30 min replications",
        text: format!(
            "[simulation]\nwarmup = \"15m\"\nlength = \"30m\"\n\n\
             [[group]]\nname = \"agents\"\nservers = {n}\nqueue = \"unlimited\"\n\n\
             [[stream]]\nname = \"callers\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             patience = {{ law = \"exponential\", mean = \"1m\" }}\n\
             route = [\"agents\"]\nanswer_within = \"20s\"\n",
            per_hour(a)
        ),
        replications: 40,
        checks: vec![
            stream(0, "abandonment", q.abandonment, "Erlang A"),
            stream(0, "wait_probability", q.wait_probability, "Erlang A"),
            stream(
                0,
                "wait_mean",
                q.mean_wait_answered_s,
                "Erlang A (answered calls)",
            ),
            stream(0, "service_level", q.service_level(within_s), "Erlang A"),
        ],
    })
}

fn redials() -> Result<Case, FormulaError> {
    let (n, a, p, delay_s) = (10, 7.0, 0.7, 60.0);
    let r = chains::redials(n, a, HOLDING_S, p, delay_s)?;
    Ok(Case {
        name: "redials",
        about: "10 circuits, 7 E fresh, exponential 3 min; blocked callers redial with chance 70% after exponential 1 min; 30 min warm-up, 1 h replications",
        text: format!(
            "[simulation]\nwarmup = \"30m\"\nlength = \"1h\"\n\n\
             [[group]]\nname = \"circuits\"\nservers = {n}\n\n\
             [[stream]]\nname = \"calls\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"circuits\"]\n\
             retry = {{ chance = [\"70%\"], delay = {{ law = \"exponential\", mean = \"1m\" }}, max_attempts = 1000 }}\n",
            per_hour(a)
        ),
        replications: 40,
        checks: vec![
            stream(
                0,
                "first_attempt_blocking",
                r.first_attempt_blocking,
                "redial chain",
            ),
            stream(0, "attempt_blocking", r.attempt_blocking, "redial chain"),
            stream(0, "loss", r.loss, "redial chain"),
            stream(0, "attempts_per_call", r.attempts_per_call, "redial chain"),
        ],
    })
}

fn engset_sources() -> Result<Case, FormulaError> {
    // 30 sources idle for exponential 15 min between calls of 3 min: each
    // idle source offers 0.2 E.
    let (sources, n, beta) = (30, 10, HOLDING_S / 900.0);
    let g = engset::solve(sources, n, beta)?;
    Ok(Case {
        name: "engset",
        about: "30 sources (idle exponential 15 min), 10 circuits, exponential 3 min, 30 min warm-up, 1 h replications",
        text: format!(
            "[simulation]\nwarmup = \"30m\"\nlength = \"1h\"\n\n\
             [[group]]\nname = \"circuits\"\nservers = {n}\n\n\
             [[stream]]\nname = \"sources\"\n\
             arrivals = {{ law = \"sources\", count = {sources}, idle = {{ law = \"exponential\", mean = \"15m\" }} }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"circuits\"]\n"
        ),
        replications: 40,
        checks: vec![
            stream(
                0,
                "first_attempt_blocking",
                g.call_congestion,
                "Engset call congestion",
            ),
            stream(0, "loss", g.call_congestion, "Engset call congestion"),
            group(
                0,
                "circuits",
                "time_congestion",
                g.time_congestion,
                "Engset time congestion",
            ),
            group(
                0,
                "circuits",
                "carried_traffic",
                g.carried_traffic,
                "Engset",
            ),
        ],
    })
}

fn overflow_network() -> Result<Case, FormulaError> {
    let first = [
        FirstChoice {
            servers: 10,
            traffic: 8.0,
        },
        FirstChoice {
            servers: 7,
            traffic: 5.0,
        },
    ];
    let (final_servers, direct) = (8, 2.0);
    let net = chains::overflow_network(&first, final_servers, direct)?;
    Ok(Case {
        name: "overflow-network",
        about: "first-choice groups 10 circuits/8 E and 7/5 E overflowing to a final group of 8 with 2 E direct; exponential 3 min; 30 min warm-up, 1 h replications",
        text: format!(
            "[simulation]\nwarmup = \"30m\"\nlength = \"1h\"\n\n\
             [[group]]\nname = \"first-a\"\nservers = {}\n\n\
             [[group]]\nname = \"first-b\"\nservers = {}\n\n\
             [[group]]\nname = \"final\"\nservers = {final_servers}\n\n\
             [[stream]]\nname = \"a\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"first-a\", \"final\"]\n\n\
             [[stream]]\nname = \"b\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"first-b\", \"final\"]\n\n\
             [[stream]]\nname = \"direct\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"final\"]\n",
            first[0].servers,
            first[1].servers,
            per_hour(first[0].traffic),
            per_hour(first[1].traffic),
            per_hour(direct),
        ),
        replications: 30,
        checks: vec![
            stream(0, "loss", net.first_choice_loss[0], "overflow chain"),
            stream(1, "loss", net.first_choice_loss[1], "overflow chain"),
            stream(2, "loss", net.direct_loss, "overflow chain"),
            group(
                0,
                "first-a",
                "overflow_mean",
                net.overflow_mean[0],
                "overflow chain (Riordan's mean)",
            ),
            group(
                1,
                "first-b",
                "overflow_mean",
                net.overflow_mean[1],
                "overflow chain (Riordan's mean)",
            ),
            group(
                2,
                "final",
                "carried_traffic",
                net.final_carried,
                "overflow chain",
            ),
        ],
    })
}

/// Agents whose servers fall and rise every half hour, from an empty
/// start: per-interval figures against the exact transient of the chain
/// (`formulas::transient`), where no stationary formula holds.
fn schedule_agents() -> Result<Case, FormulaError> {
    use busyhour::formulas::transient::ScheduledAgents;
    let servers = vec![10, 14, 9, 13];
    let exact = ScheduledAgents {
        arrival_rate: 4.0 / 60.0,
        holding_s: HOLDING_S,
        patience_s: Some(120.0),
        interval_s: 1800.0,
        servers: servers.clone(),
        warmup_s: 1800.0,
        queue_cut: 80,
        intervals: 4,
    }
    .solve()?;
    let at = |b: usize, stream: bool, figure: &'static str, value: f64| Check {
        scope: if stream {
            Scope::StreamInterval(b, 0)
        } else {
            Scope::GroupInterval(b, 0)
        },
        figure,
        place: format!(
            "interval {} {}",
            b + 1,
            if stream { "stream" } else { "group agents" }
        ),
        exact: value,
        source: "exact transient chain",
    };
    let mut checks = Vec::new();
    for (b, x) in exact.iter().enumerate().skip(1) {
        checks.push(at(b, true, "wait_probability", x.wait));
        checks.push(at(b, false, "carried_traffic", x.carried));
    }
    checks.push(at(2, false, "time_congestion", exact[2].all_busy));
    Ok(Case {
        name: "schedule-agents",
        about: "agents 10, 14, 9, 13 per half hour, 12 E, exponential 3 min, exponential patience 2 min, empty start, 30 min warm-up, 2 h replications",
        text: "[simulation]\nwarmup = \"30m\"\nlength = \"2h\"\ninterval = \"30m\"\nstart = \"empty\"\n\n\
             [[group]]\nname = \"agents\"\nservers = [10, 14, 9, 13]\ninterval = \"30m\"\nqueue = \"unlimited\"\n\n\
             [[stream]]\nname = \"calls\"\n\
             arrivals = { law = \"poisson\", rate = \"4/m\" }\n\
             holding = { law = \"exponential\", mean = \"3m\" }\n\
             patience = { law = \"exponential\", mean = \"2m\" }\n\
             route = [\"agents\"]\n"
            .to_string(),
        replications: 40,
        checks,
    })
}

/// A loss group under an uncertain forecast: each replication (day) the
/// rate is multiplied by a gamma factor of mean 1 and cv 20%; the loss is
/// the ratio of expected lost to expected offered calls, E[F B(N, A F)] /
/// E[F], by numerical integration over the factor's law (the formula
/// column's "Erlang B over the forecast's spread", itself checked against
/// statrs' gamma density in `tests/forecast.rs`).
fn forecast_spread() -> Result<Case, FormulaError> {
    let (n, a) = (30, 25.0);
    let text = format!(
        "[simulation]\nwarmup = \"30m\"\nlength = \"1h\"\n\n\
         [[group]]\nname = \"circuits\"\nservers = {n}\n\n\
         [[stream]]\nname = \"calls\"\n\
         arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
         holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
         uncertainty = \"20%\"\n\
         route = [\"circuits\"]\n",
        per_hour(a)
    );
    let model = scenario::parse(&text, "case.toml", Path::new("."), "forecast").map_err(|_| {
        FormulaError::NoSolution {
            goal: "forecast case",
            value: a,
            reason: "the case's scenario does not compile",
        }
    })?;
    let column = busyhour::report::formula_column(&model);
    let exact = |scope: Scope, figure: busyhour::stats::Figure| {
        column
            .get(&busyhour::stats::FigureId { scope, figure })
            .map(|f| f.value)
            .ok_or(FormulaError::NoSolution {
                goal: "forecast case",
                value: a,
                reason: "no integrated Erlang B in the formula column",
            })
    };
    use busyhour::stats::Figure;
    Ok(Case {
        name: "forecast-spread",
        about: "30 circuits, 25 E by the forecast, gamma day factor cv 20%, exponential 3 min, 30 min warm-up, 1 h replications",
        text,
        replications: 40,
        checks: vec![
            stream(
                0,
                "loss",
                exact(Scope::Stream(0), Figure::Loss)?,
                "Erlang B over the forecast's spread",
            ),
            group(
                0,
                "circuits",
                "time_congestion",
                exact(Scope::Group(0), Figure::TimeCongestion)?,
                "Erlang B over the forecast's spread",
            ),
        ],
    })
}

fn priority_two_classes() -> Result<Case, FormulaError> {
    let (n, a) = (10, [2.5, 4.5]);
    let waits = priority::class_mean_waits(n, &a, HOLDING_S)?;
    let stream_text = |name: &str, traffic: f64, priority: u32| {
        format!(
            "[[stream]]\nname = \"{name}\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"agents\"]\npriority = {priority}\n\n",
            per_hour(traffic)
        )
    };
    Ok(Case {
        name: "priority-two-classes",
        about: "10 agents, 2.5 E answered before 4.5 E (non-pre-emptive priority), unlimited queue, exponential 3 min, 2 h replications",
        text: format!(
            "[simulation]\nlength = \"2h\"\n\n\
             [[group]]\nname = \"agents\"\nservers = {n}\nqueue = \"unlimited\"\n\n{}{}",
            stream_text("urgent", a[0], 1),
            stream_text("routine", a[1], 2),
        ),
        replications: 60,
        checks: vec![
            stream(0, "wait_mean", waits[0], "Cobham (1954)"),
            stream(1, "wait_mean", waits[1], "Cobham (1954)"),
            stream(
                1,
                "wait_probability",
                erlang_c::wait_probability(n, a[0] + a[1])?,
                "Erlang C",
            ),
        ],
    })
}

/// Pre-emptive resume on M/M/N, two-hour replications: the urgent class
/// is the M/M/N queue of its own load (it never sees the routine class),
/// and the number in the group is that of M/M/N first come first served,
/// so the routine class waits with probability C(N, A) and is interrupted
/// (λ_1 / λ_2)(C(N, A) - C(N, a_1)) times per answered call (PASTA).
fn preemptive_resume() -> Result<Case, FormulaError> {
    preemptive_crews(4)
}

fn preemptive_crews(n: u32) -> Result<Case, FormulaError> {
    let a = [2.0, 1.2];
    let stream_text = |name: &str, traffic: f64, priority: u32| {
        format!(
            "[[stream]]\nname = \"{name}\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"crews\"]\npriority = {priority}\n\n",
            per_hour(traffic)
        )
    };
    let c_urgent = erlang_c::wait_probability(n, a[0])?;
    let c_total = erlang_c::wait_probability(n, a[0] + a[1])?;
    Ok(Case {
        name: "preemptive-resume",
        about: "4 crews, 2 E interrupting 1.2 E (pre-emptive resume), unlimited queue, exponential 3 min, 2 h replications",
        text: format!(
            "[simulation]\nlength = \"2h\"\n\n\
             [[group]]\nname = \"crews\"\nservers = {n}\nqueue = \"unlimited\"\npreemption = \"resume\"\n\n{}{}",
            stream_text("urgent", a[0], 1),
            stream_text("routine", a[1], 2),
        ),
        replications: 60,
        checks: vec![
            stream(
                0,
                "wait_probability",
                c_urgent,
                "Erlang C of the class alone",
            ),
            stream(
                0,
                "wait_mean",
                erlang_c::mean_wait(n, a[0], HOLDING_S)?,
                "Erlang C of the class alone",
            ),
            stream(1, "wait_probability", c_total, "Erlang C of the total"),
            stream(
                1,
                "interruptions",
                a[0] / a[1] * (c_total - c_urgent),
                "M/M/N number in system, PASTA",
            ),
        ],
    })
}

fn pooled_groups() -> Result<Case, FormulaError> {
    let (n1, n2, a) = (6, 5, [5.0, 4.0]);
    let n = n1 + n2;
    let total = a[0] + a[1];
    let stream_text = |name: &str, traffic: f64, home: &str, other: &str| {
        format!(
            "[[stream]]\nname = \"{name}\"\n\
             arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
             holding = {{ law = \"exponential\", mean = \"3m\" }}\n\
             route = [\"{home}\"]\nseen_by = [{{ group = \"{other}\" }}]\n\
             answer_within = \"20s\"\n\n",
            per_hour(traffic)
        )
    };
    Ok(Case {
        name: "pooled-groups",
        about: "6 and 5 agents seeing each other's waiting calls at once (seen_by), 5 E and 4 E, exponential 3 min, 1 h replications",
        text: format!(
            "[simulation]\nlength = \"1h\"\n\n\
             [[group]]\nname = \"east\"\nservers = {n1}\nqueue = \"unlimited\"\n\n\
             [[group]]\nname = \"west\"\nservers = {n2}\nqueue = \"unlimited\"\n\n{}{}",
            stream_text("north", a[0], "east", "west"),
            stream_text("south", a[1], "west", "east"),
        ),
        replications: 80,
        checks: vec![
            stream(
                0,
                "wait_mean",
                erlang_c::mean_wait(n, total, HOLDING_S)?,
                "Erlang C, pooled",
            ),
            stream(
                1,
                "wait_probability",
                erlang_c::wait_probability(n, total)?,
                "Erlang C, pooled",
            ),
            stream(
                1,
                "service_level",
                erlang_c::service_level(n, total, HOLDING_S, 20.0)?,
                "Erlang C, pooled",
            ),
        ],
    })
}

/// Trunks held to the end of call flows through an announcement
/// (deterministic 5 s), a menu (lognormal 40 s, cv 1.5, 30% finish there)
/// and a talk (exponential 3 min), with as many ports and agents as trunks
/// so that nobody waits or is blocked after the trunk: the trunk group is
/// M/G/N/N with the total holding (171 s mean), and Erlang B of rate x
/// 171 s is exact by insensitivity (Sevastyanov 1957). Flows start empty:
/// a one-hour warm-up (21 mean holding times).
fn call_flow_trunks() -> Result<Case, FormulaError> {
    let (n, a) = (10, 8.0);
    let total_s = 5.0 + 40.0 + 0.7 * 180.0;
    let b = erlang_b::blocking(n, a)?;
    let text = format!(
        "[simulation]\nwarmup = \"1h\"\nlength = \"1h\"\n\n\
         [[group]]\nname = \"trunks\"\nservers = {n}\n\n\
         [[group]]\nname = \"ports\"\nservers = {n}\n\n\
         [[group]]\nname = \"agents\"\nservers = {n}\nqueue = \"unlimited\"\n\n\
         [[stream]]\nname = \"callers\"\n\
         arrivals = {{ law = \"poisson\", rate = \"{}/h\" }}\n\
         stages = [\n\
         {{ name = \"trunk\", route = [\"trunks\"], hold = \"to-end\", holding = {{ law = \"deterministic\", mean = \"5s\" }} }},\n\
         {{ name = \"menu\", route = [\"ports\"], holding = {{ law = \"lognormal\", mean = \"40s\", cv = 1.5 }}, finish = \"30%\" }},\n\
         {{ name = \"talk\", route = [\"agents\"], holding = {{ law = \"exponential\", mean = \"3m\" }} }},\n\
         ]\n",
        a / total_s * 3600.0
    );
    Ok(Case {
        name: "call-flow-trunks",
        about: "10 trunks held through announcement, menu and talk (deterministic, lognormal cv 1.5, exponential; 171 s in all), 8 E, 1 h warm-up, 1 h replications",
        text,
        replications: 40,
        checks: vec![
            stream(
                0,
                "first_attempt_blocking",
                b,
                "Erlang B of the total holding",
            ),
            group(
                0,
                "trunks",
                "time_congestion",
                b,
                "Erlang B of the total holding",
            ),
            group(
                0,
                "trunks",
                "carried_traffic",
                a * (1.0 - b),
                "Erlang B of the total holding",
            ),
            Check {
                scope: Scope::Stage(0, 0),
                figure: "stage_blocked",
                place: "stage trunk".into(),
                exact: b,
                source: "Erlang B of the total holding",
            },
        ],
    })
}

/// Every case, in the harness's order.
pub fn cases() -> Result<Vec<Case>, FormulaError> {
    Ok(vec![
        small_hour()?,
        four_lines()?,
        lognormal_short_warmup()?,
        hyperexp_cv3()?,
        erlang_c_half_hour()?,
        erlang_a_half_hour()?,
        redials()?,
        engset_sources()?,
        overflow_network()?,
        schedule_agents()?,
        forecast_spread()?,
        call_flow_trunks()?,
        priority_two_classes()?,
        pooled_groups()?,
        preemptive_resume()?,
    ]
    .into_iter()
    .chain(short_studies()?)
    .collect())
}

/// `case` with another name, description, replication length and count.
fn reshaped(
    mut case: Case,
    name: &'static str,
    about: &'static str,
    lengths: (&str, &str),
    replications: u32,
) -> Case {
    case.text = case.text.replacen(lengths.0, lengths.1, 1);
    case.name = name;
    case.about = about;
    case.replications = replications;
    case
}

/// Shorter studies of the queue cases: fewer or shorter replications,
/// where a mean wait's per-replication sums are most skewed, and a class
/// that waits so rarely that the run warns instead of giving an interval
/// (`Warning::Sparse`).
fn short_studies() -> Result<Vec<Case>, FormulaError> {
    let hour = "length = \"1h\"";
    let two = "length = \"2h\"";
    Ok(vec![
        reshaped(
            erlang_c_half_hour()?,
            "erlang-c-20-half-hours",
            "erlang-c-half-hour with 20 replications of 30 min",
            (hour, hour),
            20,
        ),
        reshaped(
            priority_two_classes()?,
            "priority-30-reps",
            "priority-two-classes with 30 replications of 2 h",
            (two, two),
            30,
        ),
        reshaped(
            pooled_groups()?,
            "pooled-30-reps",
            "pooled-groups with 30 replications of 2 h",
            (hour, two),
            30,
        ),
        reshaped(
            preemptive_resume()?,
            "preemptive-one-hour",
            "preemptive-resume with 40 replications of 1 h",
            (two, hour),
            40,
        ),
        reshaped(
            preemptive_crews(8)?,
            "rare-urgent-waits",
            "8 crews, 2 E interrupting 1.2 E (pre-emptive resume), 40 replications of 1 h: the urgent class waits 0.11% of the time, and the run warns",
            (two, hour),
            40,
        ),
    ])
}

/// The case named `name`.
pub fn case(name: &str) -> Result<Option<Case>, FormulaError> {
    Ok(cases()?.into_iter().find(|c| c.name == name))
}
