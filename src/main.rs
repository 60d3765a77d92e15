//! Temporary entry point exercising `busyhour calc` on its own.

use std::process::ExitCode;

use clap::{Parser, Subcommand};

mod cli;

#[derive(Parser)]
#[command(name = "busyhour", version, about = "Teletraffic engineering")]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Closed-form teletraffic formulas.
    Calc(cli::calc::CalcArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match &cli.command {
        Command::Calc(args) => cli::calc::run(args),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("busyhour: {e:#}");
            ExitCode::from(2)
        }
    }
}
