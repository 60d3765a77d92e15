//! The `busyhour` command: clap definitions and dispatch only. Every figure
//! is computed by the library; errors print as one line and exit with 2.

mod cli;

use clap::{Parser, Subcommand};
use std::process::ExitCode;

/// Teletraffic engineering for real traffic: size circuit and agent groups by
/// simulation, beside the closed-form formulas.
#[derive(Parser)]
#[command(name = "busyhour", version, about, propagate_version = true)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Simulate a scenario file and report every figure with its 95% interval.
    Run(cli::RunArgs),
    /// Find the fewest servers (circuits, ports or agents) on one group for which every goal holds.
    Size(cli::SizeArgs),
    /// Run the scenario at a series of load scales, group sizes or values of
    /// any numeric setting, on the same seeds at every step.
    Sweep(cli::SweepArgs),
    /// Run two designs with the same random numbers and report each common
    /// figure of both with their paired difference and its 95% interval.
    Compare(cli::compare::CompareArgs),
    /// Why the answer differs from the book: from the textbook model to the
    /// scenario one real effect at a time (holding law, arrivals, peak
    /// profile, redials, patience), on the same seeds, with what each adds.
    Explain(cli::explain::ExplainArgs),
    /// Combine the part files of a sharded run into its result.
    Merge(cli::MergeArgs),
    /// Check a scenario file without running it: the model in plain words,
    /// the closed-form figures of each stream and group, and any problems.
    Check(cli::CheckArgs),
    /// Closed-form teletraffic formulas (Erlang B and C, Erlang A, Engset,
    /// overflow, multi-rate).
    Calc(cli::calc::CalcArgs),
    /// Measured call records -> traffic per interval, busy hour,
    /// holding-time law, peakedness; optionally a scenario file and a chart.
    Records(cli::records::RecordsArgs),
}

fn main() -> ExitCode {
    let cli: Cli = cli::guard::parse_args();
    cli::install_interrupt_handler();
    let result = cli::record_origin().and_then(|()| match &cli.command {
        Command::Run(a) => cli::run(a),
        Command::Size(a) => cli::size(a),
        Command::Sweep(a) => cli::sweep(a),
        Command::Merge(a) => cli::merge(a),
        Command::Compare(a) => cli::compare::run(a),
        Command::Explain(a) => cli::explain::run(a),
        Command::Check(a) => cli::check(a),
        Command::Calc(a) => cli::calc::run(a).map(|()| cli::Status::Done),
        Command::Records(a) => cli::records::run(a).map(|()| cli::Status::Done),
    });
    match result {
        Ok(status) => status.into(),
        Err(e) => {
            if cli::is_broken_pipe(&e) {
                return ExitCode::SUCCESS;
            }
            eprintln!("busyhour: {}", cli::guard::printable(&format!("{e:#}")));
            ExitCode::from(2)
        }
    }
}
