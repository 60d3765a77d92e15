//! Binary-side command handlers: turn parsed flags into library calls and
//! print the results. No model logic lives here.

pub mod calc;
pub mod compare;
pub mod explain;
pub mod flags;
pub mod guard;
pub mod records;

use anyhow::{Context, Result, bail};
use busyhour::experiment::shard::ShardSpec;
use busyhour::experiment::{self, RunOptions};
use busyhour::files::{FilePlan, OutputKind};
use busyhour::report::{self, Charted, Document, Format, RunDocument, SweepDocument};
use busyhour::scenario::{self, Model, Replications};
use busyhour::units;
use clap::Args;
use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, Ordering};

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

/// Set by the first Ctrl-C or SIGTERM: no new replication starts, finished
/// ones are reported as a partial result (exit 130). A second signal exits
/// at once.
static STOP: AtomicBool = AtomicBool::new(false);

/// Install the interrupt handler (once per process).
pub fn install_interrupt_handler() {
    let _ = ctrlc::set_handler(|| {
        if STOP.swap(true, Ordering::SeqCst) {
            std::process::exit(130);
        }
        eprintln!(
            "busyhour: interrupted; finishing the replications in progress (press Ctrl-C again to quit at once)"
        );
    });
}

/// Output format flags shared by the commands that print figures.
#[derive(Args, Clone)]
pub struct OutputArgs {
    /// Print JSON instead of the table: every figure under its short name
    /// (loss, service_level, wait_p90), with its 95% interval and the
    /// closed-form value (keys in docs/json.md).
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print CSV instead of the table: one row per figure of each stream
    /// and group (and of each interval or step), after a "# Caution:"
    /// comment line.
    #[arg(long)]
    pub csv: bool,
    /// Write the output to FILE (atomically: a temporary file, then a rename)
    /// instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write a self-contained HTML report (tables, charts, the
    /// formula comparison, assumptions and cautions) to FILE.
    #[arg(long, value_name = "FILE.html")]
    pub report: Option<PathBuf>,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
    /// Replace an existing output file even when it does not look like an
    /// earlier busyhour output (never a file this command reads).
    #[arg(long)]
    pub force: bool,
}

impl OutputArgs {
    /// The format the flags ask for.
    fn format(&self) -> Format {
        if self.json {
            Format::Json
        } else if self.csv {
            Format::Csv
        } else {
            Format::Table
        }
    }

    /// What `--out` holds: JSON, CSV, a part file or the text report.
    fn out_kind(&self, part: bool) -> OutputKind {
        if part {
            return OutputKind::Part;
        }
        match self.format() {
            Format::Json => OutputKind::Json,
            Format::Csv => OutputKind::Csv,
            Format::Table => OutputKind::Text,
        }
    }

    /// A plan of the files of a command: the scenario and its data files as
    /// inputs, `--out` and `--report` as outputs.
    fn plan(&self, scenario: &Path, model: &Model, part: bool) -> FilePlan {
        let mut plan = FilePlan::new(self.force);
        scenario_inputs(&mut plan, scenario, model);
        if let Some(out) = &self.out {
            plan.output("--out", out, self.out_kind(part));
        }
        if let Some(report) = &self.report {
            plan.output("--report", report, OutputKind::Html);
        }
        plan
    }
}

/// Check the files of a command that reads a scenario and writes `--out`,
/// `--report` and an optional `--chart`, before any work.
fn check_files(
    output: &OutputArgs,
    scenario: &Path,
    model: &Model,
    part: bool,
    chart: Option<&Path>,
) -> Result<()> {
    let mut files = output.plan(scenario, model, part);
    if let Some(chart) = chart {
        files.output("--chart", chart, OutputKind::Svg);
    }
    files.check()?;
    Ok(())
}

/// The scenario and every data file it read, as inputs.
fn scenario_inputs(plan: &mut FilePlan, path: &Path, model: &Model) {
    plan.input("the scenario", path);
    for d in &model.data_files {
        plan.input(
            format!(
                "the data file {} of the scenario",
                busyhour::scenario::printable(&d.display().to_string())
            ),
            d,
        );
    }
}

/// `busyhour run`.
#[derive(Args)]
pub struct RunArgs {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    #[command(flatten)]
    pub reps: ReplicationArgs,
    /// Draw the figures to FILE.svg: per interval when [simulation] sets
    /// `interval` (traffic, loss, and where calls queue service level, mean
    /// wait and occupancy, with 95% bands and the formula dashed), otherwise
    /// one dot and 95% whisker per stream or group.
    #[arg(long, value_name = "FILE.svg")]
    pub chart: Option<PathBuf>,
    /// Run only shard I of N (a contiguous slice of the replications, with
    /// the seeds of the whole run) and write its raw part file to --out, for
    /// `busyhour merge` (which prints the table, JSON, CSV and report).
    #[arg(
        long,
        value_name = "I/N",
        requires = "out",
        conflicts_with_all = ["json", "csv", "report", "chart"],
        value_parser = flags::shard
    )]
    pub shard: Option<ShardSpec>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `busyhour merge`.
#[derive(Args)]
pub struct MergeArgs {
    /// Part files written by `run --shard I/N --out FILE`.
    #[arg(required = true, value_name = "PART")]
    pub parts: Vec<PathBuf>,
    /// The scenario the parts were run from (default: the path recorded in
    /// the parts).
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,
    /// Refuse any data file the scenario names that does not lie inside
    /// DIR (a scenario can name any file its user can read).
    #[arg(long = "data-dir", value_name = "DIR")]
    pub data_dir: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// How many replications, and with which seed and threads.
#[derive(Args, Clone)]
pub struct ReplicationArgs {
    /// Run exactly N replications (overrides the file).
    #[arg(long, value_name = "N", conflicts_with = "precision", value_parser = flags::replications)]
    pub replications: Option<u32>,
    /// Add replications until every stream's loss and every group's carried
    /// traffic has a relative 95% half-width at most this (e.g. "2%").
    #[arg(long, value_name = "SHARE", value_parser = flags::precision)]
    pub precision: Option<f64>,
    /// Cap on replications with --precision.
    #[arg(long, value_name = "N", requires = "precision", value_parser = flags::replications)]
    pub max_replications: Option<u32>,
    /// Master seed (overrides the file).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// Worker threads (default: one per core). Results do not depend on it.
    #[arg(long, value_name = "T", value_parser = clap::value_parser!(u32).range(1..=1024))]
    pub threads: Option<u32>,
    /// Run even when the estimated time is over ten minutes.
    #[arg(long)]
    pub yes: bool,
    /// Refuse any data file the scenario names that does not lie inside
    /// DIR (for services that run scenarios written by others: a scenario
    /// can name any file its user can read).
    #[arg(long = "data-dir", value_name = "DIR")]
    pub data_dir: Option<PathBuf>,
}

/// `busyhour sweep`.
#[derive(Args)]
pub struct SweepArgs {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    /// Multiply arrival rates by each factor of start:end:step, for every
    /// stream or one ("office=0.8:1.6:0.1").
    #[arg(
        long,
        value_name = "[STREAM=]RANGE",
        required_unless_present_any = ["servers", "set"]
    )]
    pub scale: Option<String>,
    /// Set one group's servers to each size of start:end[:step] ("trunks=40:60");
    /// with --scale, every load scale at every size (a grid).
    #[arg(long, value_name = "GROUP=RANGE")]
    pub servers: Option<String>,
    /// Set one setting of the scenario file, by its key path, to each value
    /// of start:end:step, written as the file writes it:
    /// "stream.office.holding.mean=2m:4m:30s",
    /// "group.agents.queue=0:10:2", "stream.office.retry.chance=20%:60%:10%".
    /// Repeat to sweep several settings one at a time (each alone, the
    /// others as the file has them) with a table of their effects.
    #[arg(long, value_name = "KEY=RANGE", conflicts_with_all = ["scale", "servers"])]
    pub set: Vec<String>,
    /// With two --set: every value of the second at each value of the first
    /// (a grid), instead of one at a time.
    #[arg(long, requires = "set")]
    pub grid: bool,
    /// A figure to show (repeatable): the table and chart show these
    /// (default: loss, service level, occupancy), the CSV and JSON only
    /// these (default: every figure).
    #[arg(long, value_name = "NAME")]
    pub figure: Vec<String>,
    /// Draw the figures against the swept value, with 95% bands, the
    /// closed-form curve and goal lines, to FILE.svg.
    #[arg(long, value_name = "FILE.svg")]
    pub chart: Option<PathBuf>,
    /// A goal judged at every step (the table says which steps meet it and
    /// up to which load the design holds) and drawn on the chart, like
    /// "loss<=1%" (repeatable).
    #[arg(long, value_name = "GOAL")]
    pub goal: Vec<String>,
    #[command(flatten)]
    pub reps: ReplicationArgs,
    /// Run only shard I of N of every step's replications and write the raw
    /// part file to --out, for `busyhour merge` (which prints the table,
    /// JSON, CSV and report).
    #[arg(
        long,
        value_name = "I/N",
        requires = "out",
        conflicts_with_all = ["json", "csv", "report", "chart", "figure", "goal"],
        value_parser = flags::shard
    )]
    pub shard: Option<ShardSpec>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `busyhour size`.
#[derive(Args)]
pub struct SizeArgs {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    /// The group to size.
    #[arg(long, value_name = "GROUP")]
    pub group: String,
    /// A goal every answer must meet, as [stream.]figure<=value or >=value:
    /// "loss<=1%", "office.service_level>=80%", "wait_p90<=30s",
    /// "occupancy>=60%". Add "on 90% of days" to ask that the share of
    /// replications (days) whose own figures meet the bound be at least
    /// 90%, rather than the long-run figure. Repeat for several goals.
    /// "cost" alone (with [prices] in the scenario) finds the size of least
    /// expected cost.
    #[arg(long, value_name = "GOAL", required = true)]
    pub goal: Vec<String>,
    #[command(flatten)]
    pub reps: ReplicationArgs,
    /// Most replications at one size while a goal's interval straddles its
    /// bound (default: what about 2 s of engine work buys, at least 10
    /// times the starting count, at most 20,000; raised for strict goals on
    /// shares of calls to what showing the goal with no event seen takes,
    /// within about 15 s of engine work per size).
    #[arg(long = "decide-within", value_name = "N", value_parser = flags::replications)]
    pub decide_within: Option<u32>,
    /// Size the group in each reporting interval (needs `interval` in
    /// [simulation]): the fewest servers per interval for which every
    /// interval meets every goal, simulating the whole day again after each
    /// adjustment, so that what one interval leaves to the next counts.
    /// Prints the staffing table beside the formulas' requirements; when
    /// the group has shift_types, also the fewest paid agent-hours of
    /// shifts covering it, simulated.
    #[arg(long = "per-interval", conflicts_with = "decide_within")]
    pub per_interval: bool,
    /// Most simulations of the day for --per-interval.
    #[arg(long, value_name = "N", default_value_t = 40, requires = "per_interval", value_parser = clap::value_parser!(u32).range(2..=1000))]
    pub rounds: u32,
    /// Draw each goal's figure against the sizes tried, with the interval it
    /// was judged on and the goal's bound, to FILE.svg; with --per-interval,
    /// the load and the plans' servers over the day and each goal's figure
    /// per interval under the simulated and the stationary plan.
    #[arg(long, value_name = "FILE.svg")]
    pub chart: Option<PathBuf>,
    /// With --per-interval: write the scenario again to FILE.toml with the
    /// group's servers set to the simulated plan's servers to schedule, one
    /// per reporting interval, or to the shift plan's shifts when the group
    /// has shift_types (written only when every interval meets every goal;
    /// the original's comments are not kept).
    #[arg(
        long = "scenario-out",
        value_name = "FILE.toml",
        requires = "per_interval"
    )]
    pub scenario_out: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `busyhour check`.
#[derive(Args)]
pub struct CheckArgs {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    /// Print JSON instead of the text: each stream and group with its
    /// closed-form figures, and the problems and notes found (keys in
    /// docs/json.md).
    #[arg(long)]
    pub json: bool,
    /// Refuse any data file the scenario names that does not lie inside
    /// DIR (for services that run scenarios written by others: a scenario
    /// can name any file its user can read).
    #[arg(long = "data-dir", value_name = "DIR")]
    pub data_dir: Option<PathBuf>,
}

impl ReplicationArgs {
    /// The scenario, confined to --data-dir, with the --seed override
    /// applied: the one place a command loads its model.
    fn load(&self, scenario: &Path) -> Result<Model> {
        let mut model = scenario::load_confined(scenario, self.data_dir.as_deref())?;
        self.overrides().apply(&mut model);
        Ok(model)
    }

    /// What the flags override in the file's plan.
    fn overrides(&self) -> busyhour::api::Overrides {
        busyhour::api::Overrides {
            replications: self.replications,
            precision: self.precision,
            max_replications: self.max_replications,
            seed: self.seed,
        }
    }

    /// The replication plan the flags ask for, if they override the file's.
    fn plan_override(&self, model: &Model) -> Option<Replications> {
        self.overrides().plan_override(model)
    }

    /// The replication plan: the flags' override, or the file's.
    fn plan(&self, model: &Model) -> Replications {
        self.overrides().plan(model)
    }
}

/// A progress bar on stderr when it is a terminal.
fn progress_bar(quiet: bool) -> Option<indicatif::ProgressBar> {
    if quiet || !std::io::stderr().is_terminal() {
        return None;
    }
    let bar = indicatif::ProgressBar::new(0);
    bar.set_style(
        indicatif::ProgressStyle::with_template(
            "{elapsed_precise} [{bar:40}] {pos}/{len} replications",
        )
        .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar())
        .progress_chars("=> "),
    );
    Some(bar)
}

/// Run `work` with the run options of the flags: worker threads, the stop
/// flag of Ctrl-C, and a progress bar on stderr when it is a terminal.
fn with_progress<T>(quiet: bool, threads: Option<u32>, work: impl FnOnce(&RunOptions) -> T) -> T {
    let bar = progress_bar(quiet);
    let progress = |done: u64, planned: u64| {
        if let Some(b) = &bar {
            b.set_length(planned.max(done));
            b.set_position(done);
        }
    };
    let opts = RunOptions {
        threads: threads.map(|t| t as usize),
        progress: Some(&progress),
        stop: Some(&STOP),
    };
    let result = work(&opts);
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    result
}

/// Write a shard's part file; the exit status says whether it is complete.
fn emit_part(output: &OutputArgs, part: &busyhour::experiment::shard::Part) -> Result<Status> {
    let mut text = serde_json::to_string(part)?;
    text.push('\n');
    write_output(output.out.as_deref(), &text)?;
    Ok(if part.partial {
        Status::Interrupted
    } else {
        Status::Done
    })
}

/// Print a command's document in `format` on standard output, or write it
/// to `out`: the one place every command's output is rendered.
fn emit(format: Format, doc: &impl Document, out: Option<&Path>) -> Result<()> {
    let text = report::render(format, doc)?;
    write_output(out, &text)
}

/// Print `text`, or write it to `out` atomically.
fn write_output(out: Option<&Path>, text: &str) -> Result<()> {
    match out {
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

/// Write an extra output file (chart or report) atomically.
fn write_file(path: &std::path::Path, text: &str) -> Result<()> {
    report::write_atomically(path, text.as_bytes())
        .with_context(|| format!("cannot write {}", path.display()))
}

/// Record when and by which command line this process's HTML reports are
/// made: now, or `SOURCE_DATE_EPOCH` (seconds since 1970, UTC) when set,
/// the reproducible-builds convention, so that tests and comparisons of
/// reports get the same bytes.
pub fn record_origin() -> Result<()> {
    let unix_s = match std::env::var("SOURCE_DATE_EPOCH") {
        Ok(text) => text.trim().parse::<i64>().map_err(|_| {
            anyhow::anyhow!(
                "SOURCE_DATE_EPOCH={text}: expected whole seconds since 1970-01-01 UTC, like 1764763200"
            )
        })?,
        Err(_) => std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.as_secs() as i64),
    };
    let args: Vec<String> = std::env::args_os()
        .map(|a| a.to_string_lossy().into_owned())
        .collect();
    report::html::set_origin(report::html::Origin::new(&args, unix_s));
    Ok(())
}

/// `busyhour run`.
pub fn run(a: &RunArgs) -> Result<Status> {
    let model = a.reps.load(&a.scenario)?;
    check_files(
        &a.output,
        &a.scenario,
        &model,
        a.shard.is_some(),
        a.chart.as_deref(),
    )?;
    let reps = a.reps.plan_override(&model);
    if let Some(spec) = &a.shard {
        return run_shard(a, &model, *spec);
    }
    guard::check_run(&model, reps.as_ref(), &a.reps, a.output.quiet)?;
    let outcome = with_progress(a.output.quiet, a.reps.threads, |opts| {
        experiment::run(&model, reps, opts)
    })?;
    let file = a.scenario.display().to_string();
    emit_run(
        &RunDocument::new(&model, &outcome, &file),
        &a.output,
        a.chart.as_deref(),
    )?;
    // A precision goal that was not met is a failed goal: said on stderr
    // whatever the output, exit status 1.
    let short = outcome.precision.filter(|p| !p.met);
    if let Some(p) = short {
        let which = experiment::worst_key(&outcome.layout, &outcome.estimates).map_or(
            String::new(),
            |(f, _)| {
                let whose = match f.scope {
                    busyhour::stats::Scope::Stream(s) => {
                        format!("stream \"{}\"", model.streams[s].name)
                    }
                    busyhour::stats::Scope::Group(g) => {
                        format!("group \"{}\"", model.groups[g].name)
                    }
                    _ => String::new(),
                };
                format!(" ({whose} {})", f.name())
            },
        );
        eprintln!(
            "busyhour: precision goal {} not met after {} replications: the worst key figure{which} reached {}; raise max_replications or accept a wider interval",
            units::format_share(p.target),
            outcome.replications,
            units::format_share(p.achieved)
        );
    }
    Ok(if outcome.partial {
        Status::Interrupted
    } else if short.is_some() {
        Status::Failed
    } else {
        Status::Done
    })
}

/// Print a document in the format asked for, after writing its chart
/// (`--chart`) and HTML page (`--report`) where asked (`run`, `size`,
/// `sweep` and `merge`).
fn emit_charted(doc: &impl Charted, output: &OutputArgs, chart_path: Option<&Path>) -> Result<()> {
    let chart = if doc.has_chart() && (chart_path.is_some() || output.report.is_some()) {
        Some(doc.chart().context("chart")?)
    } else {
        None
    };
    if let (Some(path), Some(svg)) = (chart_path, &chart) {
        write_file(path, svg)?;
    }
    if let Some(path) = &output.report {
        write_file(path, &doc.html(chart.as_deref()))?;
    }
    emit(output.format(), doc, output.out.as_deref())
}

/// A run's document (`run`, and `merge` of run parts): printed, and its
/// warnings on stderr unless the table on the terminal shows them.
fn emit_run(doc: &RunDocument, output: &OutputArgs, chart_path: Option<&Path>) -> Result<()> {
    emit_charted(doc, output, chart_path)?;
    let table_on_terminal = output.format() == Format::Table && output.out.is_none();
    if !output.quiet && !table_on_terminal {
        for w in &doc.warnings {
            eprintln!("busyhour: warning: {w}");
        }
    }
    Ok(())
}

/// `busyhour check`.
pub fn check(a: &CheckArgs) -> Result<Status> {
    let model = scenario::load_confined(&a.scenario, a.data_dir.as_deref())?;
    let file = a.scenario.display().to_string();
    let doc = busyhour::api::check(&model, &file);
    let format = if a.json { Format::Json } else { Format::Table };
    emit(format, &doc, None)?;
    Ok(if doc.passed() {
        Status::Done
    } else {
        Status::Failed
    })
}

/// `busyhour size`.
pub fn size(a: &SizeArgs) -> Result<Status> {
    use busyhour::experiment::size::{self, SizeOptions};
    if a.goal.iter().any(|g| g.trim() == "cost") {
        return size_cost(a);
    }
    if a.per_interval {
        return size_per_interval(a);
    }
    if a.output.csv {
        bail!("size prints a table or --json (--csv is for run, sweep and size --per-interval)");
    }
    let (model, group, goals) = size_inputs(a)?;
    let replications = a.reps.plan(&model);
    guard::check_size(&model, &replications, &a.reps, a.output.quiet)?;
    let how = SizeOptions::new(&model, &goals, replications, a.decide_within);
    let result = with_progress(a.output.quiet, a.reps.threads, |opts| {
        size::size(&model, group, goals, &how, opts)
    })?;
    let file = a.scenario.display().to_string();
    let doc = report::SizeDocument::new(&model, &file, &result);
    emit_charted(&doc, &a.output, a.chart.as_deref())?;
    Ok(if result.partial {
        Status::Interrupted
    } else if result.servers.is_some() {
        Status::Done
    } else {
        Status::Failed
    })
}

/// What both kinds of `size` read first: the model (its files checked
/// against the outputs), the sized group and the goals.
fn size_inputs(a: &SizeArgs) -> Result<(Model, usize, Vec<busyhour::experiment::size::Goal>)> {
    use busyhour::experiment::size::Goal;
    let model = a.reps.load(&a.scenario)?;
    let mut files = a.output.plan(&a.scenario, &model, false);
    if let Some(chart) = &a.chart {
        files.output("--chart", chart, OutputKind::Svg);
    }
    if let Some(path) = &a.scenario_out {
        files.output("--scenario-out", path, OutputKind::StaffedScenario);
    }
    files.check()?;
    let group = model.group_index(&a.group).with_context(|| {
        format!(
            "--group {}: no group of {} has that name",
            a.group,
            a.scenario.display()
        )
    })?;
    let goals = a
        .goal
        .iter()
        .map(|g| Goal::parse(g, &model, group))
        .collect::<Result<Vec<_>, _>>()?;
    Ok((model, group, goals))
}

/// `busyhour size --goal cost`: the size of least expected cost.
fn size_cost(a: &SizeArgs) -> Result<Status> {
    use busyhour::experiment::cost;
    if a.goal.len() > 1 {
        bail!(
            "--goal cost stands alone: the cost already prices lost and waiting calls; give prices in [prices] instead of other goals"
        );
    }
    if a.per_interval || a.scenario_out.is_some() {
        bail!(
            "--goal cost sizes one number of servers for the whole run: leave out --per-interval and --scenario-out"
        );
    }
    let model = a.reps.load(&a.scenario)?;
    check_files(&a.output, &a.scenario, &model, false, a.chart.as_deref())?;
    let group = model.group_index(&a.group).ok_or_else(|| {
        anyhow::anyhow!(
            "--group {}: {} has no group of that name",
            a.group,
            a.scenario.display()
        )
    })?;
    let replications = a.reps.plan(&model);
    guard::check_size(&model, &replications, &a.reps, a.output.quiet)?;
    let sizing = with_progress(a.output.quiet, a.reps.threads, |opts| {
        cost::size_for_cost(&model, group, replications.clone(), opts)
    })?;
    let doc = report::CostDocument::new(&model, &a.scenario.display().to_string(), &sizing);
    emit_charted(&doc, &a.output, a.chart.as_deref())?;
    Ok(if sizing.partial {
        Status::Interrupted
    } else {
        Status::Done
    })
}

/// `busyhour size --per-interval`: the staffing table.
fn size_per_interval(a: &SizeArgs) -> Result<Status> {
    use busyhour::experiment::staffing;
    let (model, group, goals) = size_inputs(a)?;
    if model.plan.interval_s.is_none() {
        bail!(
            "--per-interval sizes each reporting interval: give interval = \"30m\" (or another length) in [simulation] of {}",
            a.scenario.display()
        );
    }
    if let Some(g) = staffing::not_per_interval(&model, &goals) {
        bail!("--goal {}: {}", g.text, staffing::NOT_PER_INTERVAL);
    }
    let references = staffing::references(&model, group, &goals);
    let start = staffing::formula_start(&references);
    let replications = a.reps.plan(&model);
    guard::check_size(&model, &replications, &a.reps, a.output.quiet)?;
    let plan = with_progress(a.output.quiet, a.reps.threads, |opts| {
        staffing::staff(
            &model,
            group,
            &goals,
            &start,
            Some(replications.clone()),
            opts,
            a.rounds,
        )
    })?;
    let shifts = if model.groups[group].shift_types.is_empty() || plan.result.partial {
        None
    } else if !plan.met {
        eprintln!("busyhour: no shift plan: no staffing tried met every goal in every interval");
        None
    } else {
        Some(with_progress(a.output.quiet, a.reps.threads, |opts| {
            staffing::shift_plan(
                &model,
                group,
                &goals,
                &plan.servers,
                Some(replications.clone()),
                opts,
            )
        })?)
    };
    let file = a.scenario.display().to_string();
    let doc = report::StaffingDocument::new(
        &model,
        &file,
        group,
        &goals,
        &references,
        &plan,
        shifts.as_ref(),
    );
    if let Some(path) = &a.scenario_out {
        if plan.met {
            let original = std::fs::read_to_string(&a.scenario)
                .with_context(|| format!("cannot read {}", a.scenario.display()))?;
            let staffed = model.with_schedule(group, &plan.servers)?;
            let shrinkage = (staffed.groups[group].schedule.as_ref())
                .map_or_else(Vec::new, |s| s.shrinkage.clone());
            let args: Vec<String> = std::env::args_os()
                .map(|a| a.to_string_lossy().into_owned())
                .collect();
            let command = report::html::Origin::new(&args, 0).command;
            let text = doc
                .scenario_with_plan(&original, &shrinkage, &command)
                .with_context(|| format!("--scenario-out {}", path.display()))?;
            write_file(path, &text)?;
        } else {
            eprintln!(
                "busyhour: --scenario-out {}: not written, no staffing tried met every goal in every interval",
                path.display()
            );
        }
    }
    emit_charted(&doc, &a.output, a.chart.as_deref())?;
    Ok(if plan.result.partial {
        Status::Interrupted
    } else if plan.met {
        Status::Done
    } else {
        Status::Failed
    })
}

/// The figures `--figure` names, each once, in the order given.
pub(crate) fn figures_named(
    model: &scenario::Model,
    names: &[String],
) -> Result<Vec<busyhour::stats::Figure>> {
    busyhour::api::figures_named(model, names).map_err(|e| anyhow::anyhow!("--figure {e}"))
}

/// `busyhour sweep --set`: one setting swept, or several one at a time
/// with their effects.
fn sweep_settings(a: &SweepArgs, model: &scenario::Model) -> Result<Status> {
    use busyhour::experiment::sweep::{self, Sweep};
    use busyhour::scenario::setting::{Editable, SettingRange};
    let file = Editable::load(&a.scenario, a.reps.data_dir.as_deref())?;
    let seed = a.reps.seed;
    let adjust = |m: &mut scenario::Model| {
        if let Some(seed) = seed {
            m.plan.seed = seed;
        }
    };
    let ranges = (a.set.iter())
        .map(|text| SettingRange::parse(text).context("--set"))
        .collect::<Result<Vec<_>>>()?;
    if a.shard.is_some() && (a.grid || ranges.len() != 1) {
        bail!("--shard runs one axis: shard one --set at a time, without --grid");
    }
    let specs = if a.grid {
        let [outer, inner] = <[SettingRange; 2]>::try_from(ranges).map_err(|r| {
            anyhow::anyhow!(
                "--grid crosses two settings: give exactly two --set, not {}",
                r.len()
            )
        })?;
        if a.chart.is_some() {
            bail!(
                "--chart draws one axis: chart a grid one --set at a time (the table and --report show the grid)"
            );
        }
        vec![Sweep::setting_grid(outer, inner, &file, adjust).context("--set")?]
    } else {
        (ranges.into_iter().zip(&a.set))
            .map(|(range, text)| {
                Sweep::setting(range, &file, adjust).with_context(|| format!("--set {text}"))
            })
            .collect::<Result<Vec<_>>>()?
    };
    let goals = a
        .goal
        .iter()
        .map(|g| busyhour::experiment::size::Goal::parse(g, model, 0))
        .collect::<Result<Vec<_>, _>>()?;
    let figures = figures_named(model, &a.figure)?;
    let plan = a.reps.plan(model);
    if let (Some(shard), [spec], [text]) = (a.shard, specs.as_slice(), a.set.as_slice()) {
        return sweep_shard(a, model, spec, &plan, format!("set={text}"), shard);
    }
    for spec in &specs {
        guard::check_sweep(model, spec, &plan, &a.reps, a.output.quiet)?;
    }
    let name = a.scenario.display().to_string();
    let mut docs = Vec::new();
    let mut partial = false;
    for spec in &specs {
        let (steps, completion) = with_progress(a.output.quiet, a.reps.threads, |opts| {
            sweep::run(model, spec, &plan, opts)
        })?;
        partial = completion.stopped();
        docs.push(SweepDocument::new(
            model, &name, spec, &steps, partial, &figures, &goals,
        ));
        if partial {
            break;
        }
    }
    if docs.len() == 1 {
        emit_charted(&docs[0], &a.output, a.chart.as_deref())?;
    } else {
        let doc = report::SensitivityDocument::new(&name, docs);
        emit_charted(&doc, &a.output, a.chart.as_deref())?;
    }
    Ok(if partial {
        Status::Interrupted
    } else {
        Status::Done
    })
}

/// `busyhour sweep`.
pub fn sweep(a: &SweepArgs) -> Result<Status> {
    use busyhour::experiment::sweep::{self, Sweep};
    let model = a.reps.load(&a.scenario)?;
    check_files(
        &a.output,
        &a.scenario,
        &model,
        a.shard.is_some(),
        a.chart.as_deref(),
    )?;
    if !a.set.is_empty() {
        return sweep_settings(a, &model);
    }
    let spec = match (&a.scale, &a.servers) {
        (Some(s), Some(n)) => {
            if a.shard.is_some() {
                bail!("--shard runs one axis: shard a grid one --servers value at a time");
            }
            if a.chart.is_some() {
                bail!(
                    "--chart draws one axis: chart a grid one --servers value at a time (the table and --report show the grid)"
                );
            }
            Sweep::grid(
                Sweep::parse_scale(s, &model).context("--scale")?,
                Sweep::parse_servers(n, &model).context("--servers")?,
                &model,
            )?
        }
        (Some(s), None) => Sweep::parse_scale(s, &model).context("--scale")?,
        (None, Some(s)) => Sweep::parse_servers(s, &model).context("--servers")?,
        (None, None) => bail!("give --scale or --servers"),
    };
    let goal_group = spec.group().unwrap_or(0);
    let goals = a
        .goal
        .iter()
        .map(|g| busyhour::experiment::size::Goal::parse(g, &model, goal_group))
        .collect::<Result<Vec<_>, _>>()?;
    let figures = figures_named(&model, &a.figure)?;
    let plan = a.reps.plan(&model);
    if let Some(shard) = a.shard {
        let recorded = match (&a.scale, &a.servers) {
            (Some(s), _) => format!("scale={s}"),
            (None, Some(s)) => format!("servers={s}"),
            (None, None) => unreachable!("clap requires one of them"),
        };
        return sweep_shard(a, &model, &spec, &plan, recorded, shard);
    }
    guard::check_sweep(&model, &spec, &plan, &a.reps, a.output.quiet)?;
    let (steps, completion) = with_progress(a.output.quiet, a.reps.threads, |opts| {
        sweep::run(&model, &spec, &plan, opts)
    })?;
    let partial = completion.stopped();
    let file = a.scenario.display().to_string();
    let doc = SweepDocument::new(&model, &file, &spec, &steps, partial, &figures, &goals);
    emit_charted(&doc, &a.output, a.chart.as_deref())?;
    Ok(if partial {
        Status::Interrupted
    } else {
        Status::Done
    })
}

/// `busyhour sweep ... --shard I/N --out PART`: every step of `spec`, the
/// shard's slice of its replications; `recorded` is the sweep as given
/// (`scale=...`, `servers=...` or `set=KEY=RANGE`), for the merge.
fn sweep_shard(
    a: &SweepArgs,
    base: &scenario::Model,
    spec: &busyhour::experiment::sweep::Sweep,
    plan: &Replications,
    recorded: String,
    shard: ShardSpec,
) -> Result<Status> {
    use busyhour::experiment::shard;
    let Replications::Fixed(total) = *plan else {
        bail!("--shard needs a fixed number of replications: use --replications N");
    };
    let values = spec.values();
    let models: Vec<(Option<f64>, scenario::Model)> = (0..values.len())
        .map(|i| Ok((Some(values[i]), spec.model_at(base, i)?)))
        .collect::<Result<_>>()?;
    let file = a.scenario.display().to_string();
    let part = with_progress(a.output.quiet, a.reps.threads, |opts| {
        shard::run_shard(
            &models,
            &file,
            Some(recorded),
            u64::from(total),
            shard,
            opts,
        )
    })??;
    emit_part(&a.output, &part)
}

/// `busyhour run --shard I/N --out PART`.
fn run_shard(a: &RunArgs, model: &scenario::Model, shard: ShardSpec) -> Result<Status> {
    use busyhour::experiment::shard;
    let total = match a.reps.plan(model) {
        Replications::Fixed(n) => u64::from(n),
        Replications::Precision { .. } => bail!(
            "--shard needs a fixed number of replications: run a pilot with --precision first, \
then shard with --replications N (see the README, \"Beyond one machine\")"
        ),
    };
    let file = a.scenario.display().to_string();
    let steps = [(None, model.clone())];
    let part = with_progress(a.output.quiet, a.reps.threads, |opts| {
        shard::run_shard(&steps, &file, None, total, shard, opts)
    })??;
    emit_part(&a.output, &part)
}

/// `busyhour merge`.
pub fn merge(a: &MergeArgs) -> Result<Status> {
    use busyhour::experiment::shard;
    let mut parts = Vec::new();
    for p in &a.parts {
        let name = p.display().to_string();
        let text =
            std::fs::read_to_string(p).with_context(|| format!("{name}: cannot read the part"))?;
        parts.push((name.clone(), shard::read_part(&text, &name)?));
    }
    let recorded = parts[0].1.file.clone();
    let scenario_path = a
        .scenario
        .clone()
        .unwrap_or_else(|| PathBuf::from(&recorded));
    let loaded = scenario::load_confined(&scenario_path, a.data_dir.as_deref())?;
    let mut files = a.output.plan(&scenario_path, &loaded, false);
    for p in &a.parts {
        files.input(
            format!(
                "the part file {}",
                scenario::printable(&p.display().to_string())
            ),
            p,
        );
    }
    files.check()?;
    let model = shard::model_for(&loaded, &parts);
    let scenario_name = scenario_path.display().to_string();
    if let Some(spec) = parts[0].1.sweep.clone() {
        let sw = sweep_from_spec(&spec, &model, a, &scenario_path)?;
        return merge_sweep(a, &model, &recorded, &scenario_name, &sw, &parts);
    }
    let mut outcomes = shard::merge(&[(None, model.clone())], &scenario_name, &parts)?;
    let outcome = outcomes.remove(0);
    emit_run(
        &RunDocument::new(&model, &outcome, &recorded),
        &a.output,
        None,
    )?;
    Ok(Status::Done)
}

/// Parse a sweep as recorded in a part: `scale=[STREAM=]RANGE`,
/// `servers=GROUP=RANGE` or `set=KEY=RANGE` (the scenario file edited at
/// each value, with the parts' seed).
fn sweep_from_spec(
    spec: &str,
    model: &scenario::Model,
    a: &MergeArgs,
    scenario_path: &Path,
) -> Result<busyhour::experiment::sweep::Sweep> {
    use busyhour::experiment::sweep::Sweep;
    use busyhour::scenario::setting::{Editable, SettingRange};
    Ok(match spec.split_once('=') {
        Some(("scale", rest)) => Sweep::parse_scale(rest, model)?,
        Some(("servers", rest)) => Sweep::parse_servers(rest, model)?,
        Some(("set", rest)) => {
            let range = SettingRange::parse(rest).context("the parts' --set")?;
            let file = Editable::load(scenario_path, a.data_dir.as_deref())?;
            let seed = model.plan.seed;
            Sweep::setting(range, &file, |m| m.plan.seed = seed)
                .with_context(|| format!("the parts' --set {rest}"))?
        }
        _ => bail!("the parts record an unknown sweep '{spec}'"),
    })
}

fn merge_sweep(
    a: &MergeArgs,
    model: &scenario::Model,
    recorded: &str,
    scenario_name: &str,
    sw: &busyhour::experiment::sweep::Sweep,
    parts: &[(String, busyhour::experiment::shard::Part)],
) -> Result<Status> {
    use busyhour::experiment::{shard, sweep};
    let values = sw.values();
    let models: Vec<(Option<f64>, scenario::Model)> = (0..values.len())
        .map(|i| Ok((Some(values[i]), sw.model_at(model, i)?)))
        .collect::<Result<_>>()?;
    let outcomes = shard::merge(&models, scenario_name, parts)?;
    let steps: Vec<sweep::Step> = models
        .into_iter()
        .zip(outcomes)
        .map(|((v, m), outcome)| sweep::Step {
            value: v.unwrap_or(0.0),
            model: m,
            outcome,
        })
        .collect();
    let doc = SweepDocument::new(model, recorded, sw, &steps, false, &[], &[]);
    emit_charted(&doc, &a.output, None)?;
    Ok(Status::Done)
}
