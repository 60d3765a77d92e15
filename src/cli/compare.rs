//! `busyhour compare A.toml B.toml`: both designs on A's plan with common
//! random numbers; the library call is `experiment::compare`.

use super::{OutputArgs, ReplicationArgs, Status, emit_charted, guard, with_progress};
use anyhow::{Context, Result, bail};
use busyhour::experiment::compare;
use busyhour::experiment::work;
use busyhour::files::{FilePlan, OutputKind};
use busyhour::report::CompareDocument;
use busyhour::scenario::{self, Model, Replications};
use clap::Args;
use std::path::{Path, PathBuf};

/// `busyhour compare`.
#[derive(Args)]
pub struct CompareArgs {
    /// Design A (TOML): its [simulation] plan (replications, seed, length,
    /// intervals) is the comparison's.
    #[arg(value_name = "A")]
    pub a: PathBuf,
    /// Design B (TOML): its measured length, intervals and start must be
    /// A's; differences are reported as B - A.
    #[arg(value_name = "B")]
    pub b: PathBuf,
    #[command(flatten)]
    pub reps: ReplicationArgs,
    /// Draw each difference of the whole period (loss, service level,
    /// mean wait, traffic, occupancy) as a dot with its paired 95% whisker
    /// and the line of no difference, to FILE.svg.
    #[arg(long, value_name = "FILE.svg")]
    pub chart: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// A design's file and its data files, as inputs of the plan.
fn inputs(plan: &mut FilePlan, which: &str, path: &Path, model: &Model) {
    plan.input(format!("design {which}"), path);
    for d in &model.data_files {
        plan.input(
            format!(
                "the data file {} of design {which}",
                scenario::printable(&d.display().to_string())
            ),
            d,
        );
    }
}

/// `busyhour compare`.
pub fn run(a: &CompareArgs) -> Result<Status> {
    if a.reps.precision.is_some() {
        bail!(
            "--precision: compare runs a fixed number of paired replications; give --replications N"
        );
    }
    let model_a = a.reps.load(&a.a)?;
    let model_b = a.reps.load(&a.b)?;
    let mut files = FilePlan::new(a.output.force);
    inputs(&mut files, "A", &a.a, &model_a);
    inputs(&mut files, "B", &a.b, &model_b);
    if let Some(out) = &a.output.out {
        files.output("--out", out, a.output.out_kind(false));
    }
    if let Some(report) = &a.output.report {
        files.output("--report", report, OutputKind::Html);
    }
    if let Some(chart) = &a.chart {
        files.output("--chart", chart, OutputKind::Svg);
    }
    files.check()?;
    let plan = compare::plan(&model_a, &model_b, a.reps.replications)
        .with_context(|| format!("{} against {}", a.b.display(), a.a.display()))?;
    let fixed = Replications::Fixed(plan.replications);
    let cores = a
        .reps
        .threads
        .map_or_else(work::machine_cores, |t| t as usize)
        .min(work::machine_cores().max(1));
    guard::confirm(
        &work::estimate_on(&model_a, &fixed, cores)
            .plus(work::estimate_on(&model_b, &fixed, cores)),
        a.reps.yes,
        a.output.quiet,
    )?;
    let result = with_progress(a.output.quiet, a.reps.threads, |opts| {
        compare::compare(&model_a, &model_b, plan, opts)
    })?;
    let doc = CompareDocument::new(
        &model_a,
        &a.a.display().to_string(),
        &model_b,
        &a.b.display().to_string(),
        &result,
    );
    emit_charted(&doc, &a.output, a.chart.as_deref())?;
    if !a.output.quiet
        && (a.output.format() != busyhour::report::Format::Table || a.output.out.is_some())
    {
        for w in doc.notes.iter().chain(&doc.warnings) {
            eprintln!("busyhour: note: {w}");
        }
    }
    Ok(if result.partial {
        Status::Interrupted
    } else {
        Status::Done
    })
}
