//! `busyhour explain SCENARIO`: the assumption ladder from the textbook
//! model to the scenario; the library call is `experiment::explain`.

use super::{OutputArgs, ReplicationArgs, Status, emit_charted, guard, with_progress};
use anyhow::{Result, bail};
use busyhour::experiment::{explain, work};
use busyhour::files::{FilePlan, OutputKind};
use busyhour::report::ExplainDocument;
use busyhour::scenario::{self, Replications};
use clap::Args;
use std::path::PathBuf;

/// `busyhour explain`.
#[derive(Args)]
pub struct ExplainArgs {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    /// A figure to explain (repeatable; default: each stream's loss and
    /// service level and each group's occupancy).
    #[arg(long, value_name = "NAME")]
    pub figure: Vec<String>,
    #[command(flatten)]
    pub reps: ReplicationArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `busyhour explain`.
pub fn run(a: &ExplainArgs) -> Result<Status> {
    if a.reps.precision.is_some() {
        bail!(
            "--precision: explain runs a fixed number of replications on every rung; give --replications N"
        );
    }
    let model = a.reps.load(&a.scenario)?;
    let mut files = FilePlan::new(a.output.force);
    files.input("the scenario", &a.scenario);
    for d in &model.data_files {
        files.input(
            format!(
                "the data file {}",
                scenario::printable(&d.display().to_string())
            ),
            d,
        );
    }
    if let Some(out) = &a.output.out {
        files.output("--out", out, a.output.out_kind(false));
    }
    if let Some(report) = &a.output.report {
        files.output("--report", report, OutputKind::Html);
    }
    files.check()?;
    let figures = super::figures_named(&model, &a.figure)?;
    let replications = busyhour::api::explain_replications(
        &model,
        &a.scenario.display().to_string(),
        a.reps.replications,
    )
    .map_err(anyhow::Error::msg)?;
    let cores = a
        .reps
        .threads
        .map_or_else(work::machine_cores, |t| t as usize)
        .min(work::machine_cores().max(1));
    // Every rung costs about what the scenario does; at most 1 + 2 x 5 rungs.
    let one = work::estimate_on(&model, &Replications::Fixed(replications), cores);
    let mut total = one;
    for _ in 0..10 {
        total = total.plus(one);
    }
    guard::confirm(&total, a.reps.yes, a.output.quiet)?;
    let ladder = with_progress(a.output.quiet, a.reps.threads, |opts| {
        explain::explain(&model, replications, opts)
    })?;
    let doc = ExplainDocument::new(&model, &a.scenario.display().to_string(), &ladder, &figures);
    emit_charted(&doc, &a.output, None)?;
    Ok(if ladder.partial {
        Status::Interrupted
    } else {
        Status::Done
    })
}
