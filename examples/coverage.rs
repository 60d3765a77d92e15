//! The coverage harness: runs scenarios with exact answers over many master
//! seeds and measures, for each checked figure, whether the 95% intervals
//! cover the exact value and whether the estimates are centred on it.
//!
//! ```sh
//! scripts/coverage.sh --threads 2                       # every case, 1,000 seeds
//! scripts/coverage.sh --seeds 200 --case redials         # one case, a quick look
//! ```
//!
//! A figure fails when its coverage is below 92% or its mean lies more than
//! 3 standard errors from the exact value; the exit status is 1 if any
//! figure fails, 2 on bad flags or a case that cannot run.

#[path = "../tests/common/coverage_cases.rs"]
mod coverage_cases;

use clap::Parser;
use coverage_cases::{CaseResult, MAX_BIAS_SE, MIN_COVERAGE};
use std::process::ExitCode;
use std::time::Instant;

/// Coverage of busyhour's 95% intervals on cases with exact answers.
#[derive(Parser)]
struct Args {
    /// Master seeds (independent studies) per case. With 1,000 the coverage
    /// has a standard error of 0.7% and a true 95% falls below 92% with a
    /// chance near 1e-5; with 200 (se 1.5%) near 2.5% per figure, so a run
    /// of 28 figures then fails by chance about half the time.
    #[arg(long, default_value_t = 1000, value_parser = clap::value_parser!(u64).range(2..=100_000))]
    seeds: u64,
    /// First master seed; the studies use seeds FIRST, FIRST + 1, ...
    #[arg(long, default_value_t = 1)]
    first_seed: u64,
    /// Run only the named case (repeatable); without it, every case.
    #[arg(long = "case", value_name = "NAME")]
    cases: Vec<String>,
    /// Studies run at a time (each on one thread).
    #[arg(long, default_value_t = 1, value_parser = clap::value_parser!(u64).range(1..=1024))]
    threads: u64,
    /// List the cases and exit.
    #[arg(long)]
    list: bool,
}

fn main() -> ExitCode {
    let args = Args::parse();
    match run(&args) {
        Ok(true) => ExitCode::SUCCESS,
        Ok(false) => ExitCode::from(1),
        Err(e) => {
            eprintln!("coverage: {e}");
            ExitCode::from(2)
        }
    }
}

fn run(args: &Args) -> Result<bool, String> {
    let all = coverage_cases::cases().map_err(|e| format!("exact values: {e}"))?;
    if args.list {
        for c in &all {
            println!("{:24} {}", c.name, c.about);
        }
        return Ok(true);
    }
    for name in &args.cases {
        if !all.iter().any(|c| c.name == name) {
            return Err(format!("no case named {name:?} (see --list)"));
        }
    }
    let chosen: Vec<_> = all
        .into_iter()
        .filter(|c| args.cases.is_empty() || args.cases.iter().any(|n| n == c.name))
        .collect();
    let last = args
        .first_seed
        .checked_add(args.seeds)
        .ok_or("--first-seed + --seeds overflows")?;
    let seeds: Vec<u64> = (args.first_seed..last).collect();
    let threads = usize::try_from(args.threads).map_err(|e| e.to_string())?;
    println!(
        "coverage of 95% intervals: {} seeds per case (from {}), {} at a time; \
         a figure fails below {:.0}% coverage or beyond {} se of bias",
        args.seeds,
        args.first_seed,
        threads,
        100.0 * MIN_COVERAGE,
        MAX_BIAS_SE
    );
    let mut results: Vec<CaseResult> = Vec::new();
    for case in &chosen {
        let started = Instant::now();
        let r = coverage_cases::run_case(case, &seeds, threads)?;
        println!();
        println!(
            "{}: {} ({} replications per seed, {:.1} s)",
            case.name,
            case.about,
            case.replications,
            started.elapsed().as_secs_f64()
        );
        println!(
            "  {:32} {:>12} {:>24} {:>9} {:>15} {:>7} {:>9}  verdict",
            "figure", "exact", "mean ± se", "bias/se", "coverage ± se", "warned", "rel. hw"
        );
        for (c, s) in &r.figures {
            println!(
                "  {:32} {:>12.6} {:>24} {:>+9.2} {:>15} {:>6.1}% {:>8.2}%  {} ({})",
                format!("{} {}", c.place, c.figure),
                s.exact,
                format!("{:.6} ± {:.6}", s.mean, s.se),
                s.bias_se,
                format!("{:.1}% ± {:.1}%", 100.0 * s.coverage, 100.0 * s.coverage_se),
                100.0 * s.warned(),
                100.0 * s.relative_half_width,
                if s.passes() { "pass" } else { "FAIL" },
                c.source
            );
        }
        results.push(r);
    }
    let failed: Vec<&str> = results
        .iter()
        .filter(|r| !r.passes())
        .map(|r| r.case)
        .collect();
    println!();
    println!("{}", coverage_cases::markdown_table(&results, seeds.len()));
    if failed.is_empty() {
        println!("every case passes");
        Ok(true)
    } else {
        println!("failing cases: {}", failed.join(", "));
        Ok(false)
    }
}
