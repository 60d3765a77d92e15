//! Binary-side command handlers: turn parsed flags into library calls and
//! print the results. No model logic lives here.

pub mod calc;
pub mod records;

use anyhow::{Context, Result, bail};
use busyhour::experiment::{self, RunOptions};
use busyhour::report::{self, RunReport};
use busyhour::scenario::{self, Replications};
use busyhour::units;
use clap::Args;
use std::io::{IsTerminal, Write};
use std::path::PathBuf;
use std::process::ExitCode;

/// How a command ended, as an exit status.
pub enum Status {
    /// 0: done.
    Done,
    /// 1: the goal or check failed.
    Failed,
    /// 130: interrupted; partial results were printed.
    Interrupted,
}

impl From<Status> for ExitCode {
    fn from(s: Status) -> ExitCode {
        match s {
            Status::Done => ExitCode::SUCCESS,
            Status::Failed => ExitCode::from(1),
            Status::Interrupted => ExitCode::from(130),
        }
    }
}

/// Whether the error is a closed pipe on stdout (e.g. `| head`): not an error.
pub fn is_broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}

/// Output format flags shared by the commands that print figures.
#[derive(Args, Clone)]
pub struct OutputArgs {
    /// Print JSON with the design's figure names instead of the table.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print long-format CSV (one row per figure) instead of the table.
    #[arg(long)]
    pub csv: bool,
    /// Write the output to FILE (atomically: a temporary file, then a rename)
    /// instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
}

/// `busyhour run`.
#[derive(Args)]
pub struct RunArgs {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    /// Run exactly N replications (overrides the file).
    #[arg(long, value_name = "N", conflicts_with = "precision")]
    pub replications: Option<u32>,
    /// Add replications until every stream's loss and every group's carried
    /// traffic has a relative 95% half-width at most this (e.g. "2%").
    #[arg(long, value_name = "SHARE")]
    pub precision: Option<String>,
    /// Cap on replications with --precision.
    #[arg(long, value_name = "N", requires = "precision")]
    pub max_replications: Option<u32>,
    /// Master seed (overrides the file).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// Worker threads (default: one per core). Results do not depend on it.
    #[arg(long, value_name = "T", value_parser = clap::value_parser!(u32).range(1..=1024))]
    pub threads: Option<u32>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `busyhour check`.
#[derive(Args)]
pub struct CheckArgs {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    /// Print the formula view as JSON.
    #[arg(long)]
    pub json: bool,
}

fn replications_override(a: &RunArgs, model: &scenario::Model) -> Result<Option<Replications>> {
    if let Some(n) = a.replications {
        if n < 2 {
            bail!("--replications {n}: at least 2 are needed for a confidence interval");
        }
        return Ok(Some(Replications::Fixed(n)));
    }
    if let Some(p) = &a.precision {
        let target = units::parse_share(p).with_context(|| "--precision")?;
        if !(target > 0.0 && target < 1.0) {
            bail!("--precision '{p}': expected a relative half-width above 0% and below 100%, like \"2%\"");
        }
        let max = match (a.max_replications, &model.plan.replications) {
            (Some(m), _) if m < 2 => bail!("--max-replications {m}: at least 2 are needed"),
            (Some(m), _) => m,
            (None, Replications::Precision { max, .. }) => *max,
            (None, _) => scenario::DEFAULT_MAX_REPLICATIONS,
        };
        return Ok(Some(Replications::Precision { target, max }));
    }
    Ok(None)
}

/// A progress bar on stderr when it is a terminal.
fn progress_bar(quiet: bool) -> Option<indicatif::ProgressBar> {
    if quiet || !std::io::stderr().is_terminal() {
        return None;
    }
    let bar = indicatif::ProgressBar::new(0);
    bar.set_style(
        indicatif::ProgressStyle::with_template("{elapsed_precise} [{bar:40}] {pos}/{len} replications")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar())
            .progress_chars("=> "),
    );
    Some(bar)
}

/// Print or write the output.
fn emit(output: &OutputArgs, text: &str) -> Result<()> {
    match &output.out {
        Some(path) => report::write_atomically(path, text.as_bytes())
            .with_context(|| format!("cannot write {}", path.display())),
        None => {
            let mut out = std::io::stdout().lock();
            out.write_all(text.as_bytes())?;
            out.flush()?;
            Ok(())
        }
    }
}

/// `busyhour run`.
pub fn run(a: &RunArgs) -> Result<Status> {
    let mut model = scenario::load(&a.scenario)?;
    if let Some(seed) = a.seed {
        model.plan.seed = seed;
    }
    let reps = replications_override(a, &model)?;
    let bar = progress_bar(a.output.quiet);
    let progress = |done: u64, planned: u64| {
        if let Some(b) = &bar {
            b.set_length(planned);
            b.set_position(done);
        }
    };
    let opts = RunOptions {
        threads: a.threads.map(|t| t as usize),
        progress: Some(&progress),
        stop: None,
    };
    let outcome = experiment::run(&model, reps, &opts)?;
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    let file = a.scenario.display().to_string();
    let r = RunReport::new(&model, &outcome, &file);
    let text = if a.output.json {
        let mut s = serde_json::to_string_pretty(&report::to_json(&r))?;
        s.push('\n');
        s
    } else if a.output.csv {
        report::to_csv(&r)
    } else {
        report::to_table(&r)
    };
    emit(&a.output, &text)?;
    Ok(if outcome.partial { Status::Interrupted } else { Status::Done })
}

/// `busyhour check`.
pub fn check(a: &CheckArgs) -> Result<Status> {
    let model = scenario::load(&a.scenario)?;
    let file = a.scenario.display().to_string();
    let view = report::formula_view(&model);
    let text = if a.json {
        let mut s = serde_json::to_string_pretty(&report::formula_view_json(&model, &view))?;
        s.push('\n');
        s
    } else {
        let mut s = report::describe_model(&model, &file);
        s.push_str(&report::formula_view_text(&model, &view));
        s.push_str("\nThe scenario is valid.\n");
        s
    };
    let mut out = std::io::stdout().lock();
    out.write_all(text.as_bytes())?;
    Ok(Status::Done)
}
