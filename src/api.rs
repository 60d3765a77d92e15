//! Entry points for programs that embed the library (the Python package in
//! `python/`): a scenario from a table of keys, the replication overrides
//! the binary takes as flags, and one call per command from a model to its
//! finished report document (`check`, `run`, `size`, `sweep`, `records`).
//! Owns no model logic: it strings together the calls the binary's handlers
//! make, minus files and printing. Must not print, write files or read the
//! terminal.
//!
//! Arguments are named as the embedding program names them (`group`,
//! `goals`, `scale`), so messages read `scale: ...` where the binary's say
//! `--scale: ...`; the text after the name is the library's own message.

use crate::experiment::cost::{self, CostError};
use crate::experiment::size::{self, Goal, GoalError, SizeOptions};
use crate::experiment::staffing;
use crate::experiment::sweep::{self, Sweep, SweepError};
use crate::experiment::{self, ExperimentError, RunOptions};
use crate::records::{self, RecordsError};
use crate::report::{
    CheckDocument, CompareDocument, CostDocument, ExplainDocument, RunDocument, SizeDocument,
    StaffingDocument, SweepDocument, records::RecordsDocument,
};
use crate::scenario::{self, Model, Replications, ScenarioError};
use crate::stats::Figure;
use std::path::Path;
use thiserror::Error;

/// A request the library cannot carry out.
#[derive(Debug, Error)]
pub enum ApiError {
    /// The scenario (file, text or table) is not a valid design; the
    /// message names the file and the key path.
    #[error(transparent)]
    Scenario(#[from] ScenarioError),
    /// An argument is out of its domain; the message names the argument
    /// and says what is expected.
    #[error("{0}")]
    Argument(String),
    /// The replications could not be run.
    #[error(transparent)]
    Experiment(#[from] ExperimentError),
    /// The call records cannot be read or analysed.
    #[error(transparent)]
    Records(#[from] RecordsError),
}

/// An argument's error: `name: message`.
fn argument(name: &str, message: impl std::fmt::Display) -> ApiError {
    ApiError::Argument(format!("{name}: {message}"))
}

/// A scenario given as a table of keys of the file's shape (for example a
/// Python dict): written as TOML and compiled by [`scenario::parse`], so
/// that every rule and message is the file's. `name` stands for the file
/// in messages; data paths are relative to `base`.
///
/// A type or unknown-key error of the parser carries a line and column of
/// the TOML written here, which the caller never saw: such an error is
/// given as `name: key: message` instead (the form of a validation error).
pub fn scenario_from_table(
    table: &toml::Table,
    name: &str,
    base: &Path,
) -> Result<Model, ScenarioError> {
    let text = toml::to_string(table).map_err(|e| ScenarioError::Invalid {
        file: scenario::printable(name),
        key: String::new(),
        message: scenario::printable(&e.to_string()),
    })?;
    scenario::parse(&text, name, base, name).map_err(|e| match e {
        ScenarioError::Syntax {
            file, key, message, ..
        } => ScenarioError::Invalid { file, key, message },
        other => other,
    })
}

/// What the binary's `--replications`, `--precision`, `--max-replications`
/// and `--seed` flags override in a scenario's plan.
#[derive(Debug, Clone, Default)]
pub struct Overrides {
    /// Run exactly this many replications.
    pub replications: Option<u32>,
    /// Add replications until every key figure's relative 95% half-width
    /// is at most this share.
    pub precision: Option<f64>,
    /// Cap on replications with a precision goal.
    pub max_replications: Option<u32>,
    /// Master seed.
    pub seed: Option<u64>,
}

impl Overrides {
    /// Check each value's domain (the binary's flag parsers give the same
    /// rules): at least 2 replications, a precision above 0% and below
    /// 100%, a cap only with a precision, not both a count and a precision.
    pub fn check(&self) -> Result<(), ApiError> {
        for (name, n) in [
            ("replications", self.replications),
            ("max_replications", self.max_replications),
        ] {
            if let Some(n) = n
                && n < 2
            {
                return Err(argument(
                    name,
                    format!("{n}: at least 2 replications are needed for a confidence interval"),
                ));
            }
        }
        if let Some(p) = self.precision
            && !(p > 0.0 && p < 1.0)
        {
            return Err(argument(
                "precision",
                format!("{p}: expected a relative half-width above 0 and below 1, like 0.02"),
            ));
        }
        if self.replications.is_some() && self.precision.is_some() {
            return Err(argument(
                "replications",
                "give a number of replications or a precision, not both",
            ));
        }
        if self.max_replications.is_some() && self.precision.is_none() {
            return Err(argument(
                "max_replications",
                "caps a precision goal: give precision too",
            ));
        }
        Ok(())
    }

    /// Apply the seed override to the model.
    pub fn apply(&self, model: &mut Model) {
        if let Some(seed) = self.seed {
            model.plan.seed = seed;
        }
    }

    /// The replication plan asked for, if it overrides the file's.
    pub fn plan_override(&self, model: &Model) -> Option<Replications> {
        if let Some(n) = self.replications {
            return Some(Replications::Fixed(n));
        }
        let target = self.precision?;
        let max = match (self.max_replications, &model.plan.replications) {
            (Some(m), _) => m,
            (None, Replications::Precision { max, .. }) => *max,
            (None, _) => scenario::DEFAULT_MAX_REPLICATIONS,
        };
        Some(Replications::Precision { target, max })
    }

    /// The replication plan: the override, or the file's.
    pub fn plan(&self, model: &Model) -> Replications {
        self.plan_override(model)
            .unwrap_or_else(|| model.plan.replications.clone())
    }
}

/// A figure name that the scenario does not report.
#[derive(Debug, Error, PartialEq)]
#[error("{0}: this scenario reports no figure of that name")]
pub struct UnknownFigure(pub String);

/// The figures `names` names, each once, in the order given.
pub fn figures_named(model: &Model, names: &[String]) -> Result<Vec<Figure>, UnknownFigure> {
    let layout = crate::stats::layout(model);
    let mut figures = Vec::new();
    for name in names {
        match layout.iter().find(|f| f.name() == name) {
            Some(f) if !figures.contains(&f.figure) => figures.push(f.figure),
            Some(_) => {}
            None => return Err(UnknownFigure(name.clone())),
        }
    }
    Ok(figures)
}

/// Parse goals as the binary's `--goal` does, judged on `group` where a
/// goal names no stream.
pub fn goals(texts: &[String], model: &Model, group: usize) -> Result<Vec<Goal>, GoalError> {
    texts.iter().map(|g| Goal::parse(g, model, group)).collect()
}

/// `check`: the model in plain words, the closed-form figures of each
/// stream and group, and the problems (which fail the check) and notes
/// found, as the document `busyhour check --json` prints.
pub fn check(model: &Model, file: &str) -> CheckDocument {
    let (problems, notes): (Vec<_>, Vec<_>) = crate::experiment::warnings::model_warnings(model)
        .into_iter()
        .partition(|w| w.fails_check());
    let problems = problems.iter().map(|p| p.to_string()).collect();
    let mut doc = CheckDocument::new(model, file, &crate::report::formula_view(model), problems);
    doc.notes = notes.iter().map(|n| n.to_string()).collect();
    doc
}

/// `run`: the model's replications (the file's plan or `overrides`), as
/// the document `busyhour run --json` prints. `file` names the scenario in
/// the document.
pub fn run(
    model: &Model,
    file: &str,
    overrides: &Overrides,
    opts: &RunOptions,
) -> Result<(RunDocument, bool), ApiError> {
    overrides.check()?;
    let mut model = model.clone();
    overrides.apply(&mut model);
    let outcome = experiment::run(&model, overrides.plan_override(&model), opts)?;
    Ok((RunDocument::new(&model, &outcome, file), outcome.partial))
}

/// `size`: the fewest servers on the group named `group` meeting every
/// goal, as the document `busyhour size --json` prints (the sizing of one
/// number of servers; not `--per-interval` nor `--goal cost`).
pub fn size(
    model: &Model,
    file: &str,
    group: &str,
    goal_texts: &[String],
    overrides: &Overrides,
    decide_within: Option<u32>,
    opts: &RunOptions,
) -> Result<(SizeDocument, bool), ApiError> {
    overrides.check()?;
    if goal_texts.is_empty() {
        return Err(argument(
            "goals",
            "give at least one goal, like \"loss<=1%\"",
        ));
    }
    if let Some(g) = goal_texts.iter().find(|g| g.trim() == "cost") {
        return Err(argument(
            "goals",
            format!(
                "'{g}' stands alone: the least-cost size is its own request (size_cost; in Python size(goals=\"cost\")), and the cost already prices lost and waiting calls"
            ),
        ));
    }
    if let Some(n) = decide_within
        && n < 2
    {
        return Err(argument(
            "decide_within",
            format!("{n}: at least 2 replications are needed for a confidence interval"),
        ));
    }
    let mut model = model.clone();
    overrides.apply(&mut model);
    let index = group_named(&model, file, group)?;
    let goals = goals(goal_texts, &model, index).map_err(|e| argument("goals", e))?;
    let how = SizeOptions::new(&model, &goals, overrides.plan(&model), decide_within);
    let result = size::size(&model, index, goals, &how, opts)?;
    let partial = result.partial;
    Ok((SizeDocument::new(&model, file, &result), partial))
}

/// The index of the group named `group` of `model`, or the argument's
/// error naming `file`.
fn group_named(model: &Model, file: &str, group: &str) -> Result<usize, ApiError> {
    model.group_index(group).ok_or_else(|| {
        argument(
            "group",
            format!("{group}: no group of {file} has that name"),
        )
    })
}

/// `size --goal cost`: the size of `group` with the least expected total
/// cost under the scenario's `[prices]`, with the cost curve, as the
/// document `busyhour size --goal cost --json` prints.
pub fn size_cost(
    model: &Model,
    file: &str,
    group: &str,
    overrides: &Overrides,
    opts: &RunOptions,
) -> Result<(CostDocument, bool), ApiError> {
    overrides.check()?;
    let mut model = model.clone();
    overrides.apply(&mut model);
    let index = group_named(&model, file, group)?;
    let sizing =
        cost::size_for_cost(&model, index, overrides.plan(&model), opts).map_err(|e| match e {
            CostError::Run(e) => ApiError::Experiment(e),
            e => argument("prices", e),
        })?;
    let partial = sizing.partial;
    Ok((CostDocument::new(&model, file, &sizing), partial))
}

/// `size --per-interval`: the fewest servers of `group` in each reporting
/// interval for which every interval meets every goal (at most `rounds`
/// simulations of the day), beside the formulas' requirements, and the
/// shift plan where the group has `shift_types`, as the document
/// `busyhour size --per-interval --json` prints (not its `--scenario-out`).
pub fn staffing(
    model: &Model,
    file: &str,
    group: &str,
    goal_texts: &[String],
    overrides: &Overrides,
    rounds: u32,
    opts: &RunOptions,
) -> Result<(StaffingDocument, bool), ApiError> {
    overrides.check()?;
    if goal_texts.is_empty() {
        return Err(argument(
            "goals",
            "give at least one goal, like \"service_level>=80%\"",
        ));
    }
    if !(2..=1000).contains(&rounds) {
        return Err(argument(
            "rounds",
            format!("{rounds}: expected 2 to 1000 simulations of the day"),
        ));
    }
    let mut model = model.clone();
    overrides.apply(&mut model);
    if model.plan.interval_s.is_none() {
        return Err(argument(
            "scenario",
            format!(
                "{file}: staffing sizes each reporting interval: give interval = \"30m\" (or another length) in [simulation]"
            ),
        ));
    }
    let index = group_named(&model, file, group)?;
    let goals = goals(goal_texts, &model, index).map_err(|e| argument("goals", e))?;
    if let Some(g) = staffing::not_per_interval(&model, &goals) {
        return Err(argument(
            "goals",
            format!("{}: {}", g.text, staffing::NOT_PER_INTERVAL),
        ));
    }
    let references = staffing::references(&model, index, &goals);
    let start = staffing::formula_start(&references);
    let plan = overrides.plan(&model);
    let staffed = staffing::staff(
        &model,
        index,
        &goals,
        &start,
        Some(plan.clone()),
        opts,
        rounds,
    )?;
    let partial = staffed.result.partial;
    let shifts = if model.groups[index].shift_types.is_empty() || partial || !staffed.met {
        None
    } else {
        Some(staffing::shift_plan(
            &model,
            index,
            &goals,
            &staffed.servers,
            Some(plan),
            opts,
        )?)
    };
    let partial = partial || shifts.as_ref().is_some_and(|s| s.result.partial);
    let doc = StaffingDocument::new(
        &model,
        file,
        index,
        &goals,
        &references,
        &staffed,
        shifts.as_ref(),
    );
    Ok((doc, partial))
}

/// `compare`: design B against design A on A's plan with common random
/// numbers, as the document `busyhour compare A B --json` prints
/// (differences B - A with their paired intervals). A fixed number of
/// replications: `precision` is refused.
pub fn compare(
    a: &Model,
    file_a: &str,
    b: &Model,
    file_b: &str,
    overrides: &Overrides,
    opts: &RunOptions,
) -> Result<(CompareDocument, bool), ApiError> {
    use crate::experiment::compare;
    overrides.check()?;
    if overrides.precision.is_some() {
        return Err(argument(
            "precision",
            "compare runs a fixed number of paired replications; give replications",
        ));
    }
    let (mut a, mut b) = (a.clone(), b.clone());
    overrides.apply(&mut a);
    overrides.apply(&mut b);
    let plan = compare::plan(&a, &b, overrides.replications)
        .map_err(|e| argument("b", format!("{file_b} against {file_a}: {e}")))?;
    let result = compare::compare(&a, &b, plan, opts)?;
    let partial = result.partial;
    Ok((
        CompareDocument::new(&a, file_a, &b, file_b, &result),
        partial,
    ))
}

/// `explain`: the assumption ladder from the textbook model to the
/// scenario, as the document `busyhour explain --json` prints; `figures`
/// names the figures explained (empty: each stream's loss and service
/// level and each group's occupancy). A fixed number of replications on
/// every rung: the override, or the file's.
pub fn explain(
    model: &Model,
    file: &str,
    figure_names: &[String],
    overrides: &Overrides,
    opts: &RunOptions,
) -> Result<(ExplainDocument, bool), ApiError> {
    overrides.check()?;
    if overrides.precision.is_some() {
        return Err(argument(
            "precision",
            "explain runs a fixed number of replications on every rung; give replications",
        ));
    }
    let mut model = model.clone();
    overrides.apply(&mut model);
    let replications = explain_replications(&model, file, overrides.replications)
        .map_err(|e| argument("replications", e))?;
    let figures = figures_named(&model, figure_names).map_err(|e| argument("figures", e))?;
    let ladder = crate::experiment::explain::explain(&model, replications, opts)?;
    let partial = ladder.partial;
    Ok((
        ExplainDocument::new(&model, file, &ladder, &figures),
        partial,
    ))
}

/// The replications of every rung of `explain`: `given`, else the file's
/// fixed number; a file with a precision goal is refused (the message
/// names `file`).
pub fn explain_replications(model: &Model, file: &str, given: Option<u32>) -> Result<u32, String> {
    match (given, &model.plan.replications) {
        (Some(n), _) => Ok(n),
        (None, Replications::Fixed(n)) => Ok(*n),
        (None, Replications::Precision { .. }) => Err(format!(
            "{file}: [simulation] asks for a precision goal; explain runs a fixed number of replications on every rung: give a number of replications"
        )),
    }
}

/// What a sweep steps through: load scales (`[STREAM=]start:end:step`),
/// servers on one group (`GROUP=start:end[:step]`), or both (a grid).
#[derive(Debug, Clone, Default)]
pub struct SweepAxes {
    /// The load scales, as the binary's `--scale`.
    pub scale: Option<String>,
    /// The group sizes, as the binary's `--servers`.
    pub servers: Option<String>,
}

impl SweepAxes {
    /// The sweep of `model` these axes describe.
    pub fn sweep(&self, model: &Model) -> Result<Sweep, ApiError> {
        let scale = |s: &str| Sweep::parse_scale(s, model).map_err(|e| argument("scale", e));
        let servers = |s: &str| Sweep::parse_servers(s, model).map_err(|e| argument("servers", e));
        match (&self.scale, &self.servers) {
            (Some(a), Some(b)) => Sweep::grid(scale(a)?, servers(b)?, model)
                .map_err(|e: SweepError| argument("servers", e)),
            (Some(a), None) => scale(a),
            (None, Some(b)) => servers(b),
            (None, None) => Err(argument(
                "scale",
                "give scale (load scales) or servers (group sizes), or both",
            )),
        }
    }
}

/// `sweep`: the scenario at each step of `axes`, as the document
/// `busyhour sweep --json` prints; `figures` keeps only those figures
/// (empty: every figure), `goal_texts` are judged at every step.
pub fn sweep(
    model: &Model,
    file: &str,
    axes: &SweepAxes,
    figure_names: &[String],
    goal_texts: &[String],
    overrides: &Overrides,
    opts: &RunOptions,
) -> Result<(SweepDocument, bool), ApiError> {
    overrides.check()?;
    let mut model = model.clone();
    overrides.apply(&mut model);
    let spec = axes.sweep(&model)?;
    let goals =
        goals(goal_texts, &model, spec.group().unwrap_or(0)).map_err(|e| argument("goals", e))?;
    let figures = figures_named(&model, figure_names).map_err(|e| argument("figures", e))?;
    let (steps, completion) = sweep::run(&model, &spec, &overrides.plan(&model), opts)?;
    let partial = completion.stopped();
    let doc = SweepDocument::new(&model, file, &spec, &steps, partial, &figures, &goals);
    Ok((doc, partial))
}

/// How to read call records: the binary's `records` flags that shape the
/// analysis (not its output files).
#[derive(Debug, Clone, Default)]
pub struct RecordsRequest {
    /// Interval length, like "15m" (default: the binary's).
    pub interval: Option<String>,
    /// Which columns hold what (`None`: the usual names).
    pub columns: records::Columns,
    /// Analyse only these days ("mon-fri", "2025-03-04..2025-03-07").
    pub days: Option<String>,
    /// Skip and count bad rows instead of stopping at the first.
    pub skip_bad: bool,
}

impl RecordsRequest {
    /// The analysis options, each value checked.
    pub fn options(&self) -> Result<records::Options, ApiError> {
        let mut opts = records::Options::default();
        if let Some(text) = &self.interval {
            opts.interval_s = records::parse_interval(text)?;
        }
        opts.days = (self.days.as_deref())
            .map(records::DayFilter::parse)
            .transpose()
            .map_err(|e| argument("days", e))?;
        opts.columns = self.columns.clone();
        opts.skip_bad = self.skip_bad;
        Ok(opts)
    }
}

/// `records` of a file: the document `busyhour records --json` prints.
pub fn records_file(path: &Path, request: &RecordsRequest) -> Result<RecordsDocument, ApiError> {
    let analysis = records::analyse(path, &request.options()?)?;
    Ok(RecordsDocument::new(&analysis))
}

/// `records` of CSV text already in memory (a data frame written as CSV);
/// `name` stands for the file in messages and in the document.
pub fn records_text(
    text: &str,
    name: &str,
    request: &RecordsRequest,
) -> Result<RecordsDocument, ApiError> {
    let analysis = records::analyse_reader(text.as_bytes(), name, &request.options()?)?;
    Ok(RecordsDocument::new(&analysis))
}
