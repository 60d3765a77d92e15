//! `busyhour calc`: the closed-form formulas from the command line.
//!
//! Owns the `calc` arguments, their parsing into numbers and the printing of
//! the answers (an aligned text block, or JSON with `--json`). Computes
//! nothing itself: every figure comes from `busyhour::formulas`.

use std::io::Write;

use anyhow::{Result, bail};
use clap::{Args, Subcommand};

use busyhour::formulas::delay_goals::{self, DelayFigures, DelayGoals};
use busyhour::formulas::{
    engset, erlang_a, erlang_b, erlang_c, multirate, overflow, queue_general, redial_fixed_point,
};
use busyhour::report::CAUTION;
use busyhour::units;

use super::flags;

/// Arguments of `busyhour calc`.
#[derive(Debug, Args)]
pub struct CalcArgs {
    /// Which formula to evaluate.
    #[command(subcommand)]
    pub command: CalcCommand,
}

/// The questions `busyhour calc` answers.
#[derive(Debug, Subcommand)]
pub enum CalcCommand {
    /// Erlang B: share of calls lost on a group (blocked calls cleared).
    Loss(LossArgs),
    /// Erlang B: fewest servers that keep the loss at or below a grade of service.
    Servers(ServersArgs),
    /// Erlang B: most traffic a group carries at a grade of service.
    Traffic(TrafficArgs),
    /// Erlang C: waiting on an agent group whose callers never give up.
    Queue(QueueArgs),
    /// Erlang C: fewest agents for a service-level and/or mean-wait goal.
    Agents(AgentsArgs),
    /// Erlang B with redials: blocking when blocked callers try again (fixed point).
    Redial(RedialArgs),
    /// Erlang A: waiting and abandonment when callers give up.
    Abandon(AbandonArgs),
    /// Engset: loss on a group serving a finite number of sources.
    Finite(FiniteArgs),
    /// Overflow moments of first-choice groups and the loss on a shared final group.
    Overflow(OverflowArgs),
    /// Kaufman-Roberts: loss per class when calls occupy several channels.
    Multirate(MultirateArgs),
}

/// `--json`, shared by every subcommand.
#[derive(Debug, Args)]
pub struct Output {
    /// Print a JSON object instead of the text block.
    #[arg(long)]
    pub json: bool,
}

/// Offered traffic, in erlangs or as a call rate times a holding time.
#[derive(Debug, Args)]
pub struct Offered {
    /// Offered traffic in erlangs (or give --calls with --holding).
    #[arg(
        long,
        value_name = "ERLANGS",
        allow_negative_numbers = true,
        required_unless_present = "calls",
        conflicts_with = "calls",
        value_parser = flags::erlangs
    )]
    pub traffic: Option<f64>,
    /// Call rate such as "420/h", "7/m" or "0.5/s"; offered traffic is rate × holding time.
    #[arg(long, value_name = "RATE", requires = "holding", allow_hyphen_values = true, value_parser = flags::rate)]
    pub calls: Option<f64>,
}

/// `calc loss`.
#[derive(Debug, Args)]
pub struct LossArgs {
    #[command(flatten)]
    pub offered: Offered,
    /// Mean holding time such as "3m", "180s" or "180" (needed with --calls).
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub holding: Option<f64>,
    /// Number of servers (circuits, channels, ports).
    #[arg(long, value_name = "N", value_parser = flags::at_least_one)]
    pub servers: u32,
    #[command(flatten)]
    pub output: Output,
}

/// `calc servers`.
#[derive(Debug, Args)]
pub struct ServersArgs {
    #[command(flatten)]
    pub offered: Offered,
    /// Mean holding time such as "3m" (needed with --calls).
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub holding: Option<f64>,
    /// Grade of service: the largest acceptable loss, such as "1%" or 0.01.
    #[arg(long, value_name = "SHARE", value_parser = flags::open_share)]
    pub loss: f64,
    #[command(flatten)]
    pub output: Output,
}

/// `calc traffic`: a loss group (`--servers` and `--loss`) or an agent group
/// (`--agents`, `--holding` and at least one goal).
#[derive(Debug, Args)]
#[command(group(clap::ArgGroup::new("delay_goal").multiple(true).args(["service_level", "mean_wait", "abandon"])))]
pub struct TrafficArgs {
    /// Number of servers of a loss group (blocked calls cleared; Erlang B).
    #[arg(long, value_name = "N", required_unless_present = "agents", requires = "loss", value_parser = flags::at_least_one)]
    pub servers: Option<u32>,
    /// Grade of service: the largest acceptable loss, such as "1%" or 0.01.
    #[arg(long, value_name = "SHARE", requires = "servers", value_parser = flags::open_share)]
    pub loss: Option<f64>,
    /// Number of agents of a delay system (callers wait; Erlang C, or Erlang A with --patience).
    #[arg(long, value_name = "N", conflicts_with_all = ["servers", "loss"], requires_all = ["holding", "delay_goal"], value_parser = flags::at_least_one)]
    pub agents: Option<u32>,
    /// Mean holding (handling) time of the agent group's calls, such as "3m".
    #[arg(long, value_name = "DURATION", requires = "agents", value_parser = flags::positive_duration)]
    pub holding: Option<f64>,
    /// Answer-time goal for the service level, such as "20s".
    #[arg(long, value_name = "DURATION", requires = "service_level", value_parser = flags::duration)]
    pub answer_within: Option<f64>,
    /// Goal: at least this share answered within --answer-within, such as "80%".
    #[arg(long, value_name = "SHARE", requires_all = ["answer_within", "agents"], value_parser = flags::open_share)]
    pub service_level: Option<f64>,
    /// Goal: mean wait of all calls at most this, such as "15s".
    #[arg(long, value_name = "DURATION", requires = "agents", value_parser = flags::duration)]
    pub mean_wait: Option<f64>,
    /// Mean patience of the callers, such as "1m" (Erlang A).
    #[arg(long, value_name = "DURATION", requires = "agents", value_parser = flags::positive_duration)]
    pub patience: Option<f64>,
    /// Goal: at most this share of callers abandon, such as "3%" (needs --patience).
    #[arg(long, value_name = "SHARE", requires = "patience", value_parser = flags::open_share)]
    pub abandon: Option<f64>,
    #[command(flatten)]
    pub output: Output,
}

/// `calc queue`.
#[derive(Debug, Args)]
pub struct QueueArgs {
    #[command(flatten)]
    pub offered: Offered,
    /// Mean holding (handling) time such as "3m" or "180s".
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub holding: f64,
    /// Number of agents.
    #[arg(long, value_name = "N", value_parser = flags::at_least_one)]
    pub agents: u32,
    /// Answer-time goal for the service level, such as "20s".
    #[arg(long, value_name = "DURATION", value_parser = flags::duration)]
    pub answer_within: f64,
    /// Coefficient of variation of the holding time (1 is exponential, 0
    /// constant): adds the M/G/N mean wait by a two-moment method.
    #[arg(long, value_name = "CV", allow_negative_numbers = true, value_parser = cv)]
    pub holding_cv: Option<f64>,
    #[command(flatten)]
    pub output: Output,
}

/// `calc redial`.
#[derive(Debug, Args)]
pub struct RedialArgs {
    #[command(flatten)]
    pub offered: Offered,
    /// Mean holding time such as "3m" (needed with --calls).
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub holding: Option<f64>,
    /// Number of servers.
    #[arg(long, value_name = "N", value_parser = flags::at_least_one)]
    pub servers: u32,
    /// Chance that a blocked caller tries again, such as "70%"; repeat for
    /// the second, third ... redial (the last repeats).
    #[arg(long = "redial", value_name = "SHARE", required = true, value_parser = flags::share)]
    pub chances: Vec<f64>,
    /// Attempts in all, the first included (default: no limit).
    #[arg(long, value_name = "N", value_parser = flags::at_least_one)]
    pub max_attempts: Option<u32>,
    #[command(flatten)]
    pub output: Output,
}

/// A coefficient of variation: finite and not negative.
fn cv(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(x) if x >= 0.0 && x.is_finite() => Ok(x),
        _ => Err(format!(
            "'{text}' is not a coefficient of variation: expected a number >= 0 such as 0.5 (1 is exponential)"
        )),
    }
}

/// `calc agents`.
#[derive(Debug, Args)]
#[command(group(clap::ArgGroup::new("goal").required(true).multiple(true).args(["service_level", "mean_wait", "abandon"])))]
pub struct AgentsArgs {
    #[command(flatten)]
    pub offered: Offered,
    /// Mean holding (handling) time such as "3m" or "180s".
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub holding: f64,
    /// Answer-time goal for the service level, such as "20s".
    #[arg(long, value_name = "DURATION", value_parser = flags::duration)]
    pub answer_within: Option<f64>,
    /// Goal: at least this share answered within --answer-within, such as "80%".
    #[arg(long, value_name = "SHARE", requires = "answer_within", value_parser = flags::open_share)]
    pub service_level: Option<f64>,
    /// Goal: mean wait of all calls at most this, such as "15s".
    #[arg(long, value_name = "DURATION", value_parser = flags::duration)]
    pub mean_wait: Option<f64>,
    /// Mean patience of the callers, such as "1m": sizes by Erlang A
    /// (callers give up) instead of Erlang C.
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub patience: Option<f64>,
    /// Goal: at most this share of callers abandon, such as "3%" (needs --patience).
    #[arg(long, value_name = "SHARE", requires = "patience", value_parser = flags::open_share)]
    pub abandon: Option<f64>,
    #[command(flatten)]
    pub output: Output,
}

/// `calc abandon`.
#[derive(Debug, Args)]
pub struct AbandonArgs {
    #[command(flatten)]
    pub offered: Offered,
    /// Mean holding (handling) time such as "3m" or "180s".
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub holding: f64,
    /// Number of agents.
    #[arg(long, value_name = "N", value_parser = flags::at_least_one)]
    pub agents: u32,
    /// Mean patience: how long callers wait on average before giving up, such as "1m".
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub patience: f64,
    /// Answer-time goal for the service level, such as "20s".
    #[arg(long, value_name = "DURATION", value_parser = flags::duration)]
    pub answer_within: Option<f64>,
    #[command(flatten)]
    pub output: Output,
}

/// `calc finite`.
#[derive(Debug, Args)]
pub struct FiniteArgs {
    /// Number of traffic sources (subscribers, terminals).
    #[arg(long, value_name = "S", value_parser = flags::at_least_one)]
    pub sources: u32,
    /// Number of servers.
    #[arg(long, value_name = "N", value_parser = flags::at_least_one)]
    pub servers: u32,
    /// Offered traffic per idle source in erlangs: its call rate while idle × mean holding time.
    #[arg(long, value_name = "ERLANGS", allow_negative_numbers = true)]
    pub idle_traffic: f64,
    #[command(flatten)]
    pub output: Output,
}

/// `calc overflow`.
#[derive(Debug, Args)]
pub struct OverflowArgs {
    /// Offered traffic in erlangs of a single first-choice group (with --servers).
    #[arg(
        long,
        value_name = "ERLANGS",
        allow_negative_numbers = true,
        conflicts_with = "calls",
        value_parser = flags::erlangs
    )]
    pub traffic: Option<f64>,
    /// Call rate of a single first-choice group, such as "420/h" (with --holding and --servers).
    #[arg(long, value_name = "RATE", requires = "holding", allow_hyphen_values = true, value_parser = flags::rate)]
    pub calls: Option<f64>,
    /// Mean holding time such as "3m" (needed with --calls).
    #[arg(long, value_name = "DURATION", value_parser = flags::positive_duration)]
    pub holding: Option<f64>,
    /// Servers of the single first-choice group.
    #[arg(long, value_name = "N", value_parser = flags::at_least_one)]
    pub servers: Option<u32>,
    /// A first-choice group as TRAFFIC:SERVERS, such as "12:15"; repeat for several.
    #[arg(long, value_name = "ERLANGS:N", conflicts_with_all = ["traffic", "calls", "servers"])]
    pub primary: Vec<String>,
    /// Poisson traffic in erlangs offered straight to the final group.
    #[arg(long, value_name = "ERLANGS", allow_negative_numbers = true, value_parser = flags::erlangs)]
    pub direct: Option<f64>,
    /// Servers of the shared final group.
    #[arg(long = "final", value_name = "N", value_parser = flags::at_least_one)]
    pub final_servers: Option<u32>,
    #[command(flatten)]
    pub output: Output,
}

/// `calc multirate`.
#[derive(Debug, Args)]
pub struct MultirateArgs {
    /// Channels of the shared group.
    #[arg(long, value_name = "C", value_parser = flags::at_least_one)]
    pub capacity: u32,
    /// A traffic class as ERLANGS:CHANNELS_PER_CALL, such as "2.5:6"; repeat for each class.
    #[arg(long, value_name = "ERLANGS:UNITS", required = true)]
    pub class: Vec<String>,
    #[command(flatten)]
    pub output: Output,
}

/// Runs `busyhour calc` and prints the answer to standard output.
///
/// Errors (bad values, impossible goals, an unstable queue) come back as one
/// line of text for the caller to print; nothing is printed then.
pub fn run(args: &CalcArgs) -> Result<()> {
    let mut report = evaluate(&args.command)?;
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    // Every answer carries the caution: the quickest way to size an
    // emergency line is one calc command.
    if output_of(&args.command).json {
        if let serde_json::Value::Object(map) = &mut report.json {
            map.insert("caution".into(), CAUTION.into());
        }
        let text = serde_json::to_string_pretty(&report.json)?;
        writeln!(out, "{text}")?;
    } else {
        writeln!(out, "{}Caution: {CAUTION}", report.text)?;
    }
    out.flush()?;
    Ok(())
}

fn output_of(command: &CalcCommand) -> &Output {
    match command {
        CalcCommand::Loss(a) => &a.output,
        CalcCommand::Servers(a) => &a.output,
        CalcCommand::Traffic(a) => &a.output,
        CalcCommand::Queue(a) => &a.output,
        CalcCommand::Agents(a) => &a.output,
        CalcCommand::Redial(a) => &a.output,
        CalcCommand::Abandon(a) => &a.output,
        CalcCommand::Finite(a) => &a.output,
        CalcCommand::Overflow(a) => &a.output,
        CalcCommand::Multirate(a) => &a.output,
    }
}

/// An answer, both as text and as JSON, made from one [`Block`].
struct Report {
    text: String,
    json: serde_json::Value,
}

fn evaluate(command: &CalcCommand) -> Result<Report> {
    let block = match command {
        CalcCommand::Loss(a) => loss(a)?,
        CalcCommand::Servers(a) => servers(a)?,
        CalcCommand::Traffic(a) => traffic(a)?,
        CalcCommand::Queue(a) => queue(a)?,
        CalcCommand::Agents(a) => agents(a)?,
        CalcCommand::Redial(a) => redial(a)?,
        CalcCommand::Abandon(a) => abandon(a)?,
        CalcCommand::Finite(a) => finite(a)?,
        CalcCommand::Overflow(a) => overflow_groups(a)?,
        CalcCommand::Multirate(a) => multirate_classes(a)?,
    };
    Ok(block.report())
}

// ---------------------------------------------------------------------------
// Stage 1: the flags arrive as numbers (`flags`); what is left is the
// offered traffic, given one of two ways, and the `ERLANGS:COUNT` pairs.

/// Offered traffic in erlangs from `--traffic`, or `--calls` × `--holding`.
fn offered_traffic(traffic: Option<f64>, calls: Option<f64>, holding: Option<f64>) -> Result<f64> {
    match (traffic, calls, holding) {
        (Some(a), _, _) => Ok(a),
        (None, Some(per_second), Some(h)) => Ok(per_second * h),
        (None, Some(_), None) => {
            bail!("--calls needs --holding to turn a call rate into erlangs")
        }
        (None, None, _) => {
            bail!("give the offered traffic with --traffic, or --calls with --holding")
        }
    }
}

/// `ERLANGS:COUNT`, as in `--primary 12:15` or `--class 2.5:6`.
fn pair(flag: &str, text: &str, what: &str, example: &str) -> Result<(f64, u32)> {
    let parsed = text.split_once(':').and_then(|(a, n)| {
        let a = a.trim().parse::<f64>().ok().filter(|a| a.is_finite())?;
        let n = n.trim().parse::<u32>().ok()?;
        Some((a, n))
    });
    match parsed {
        Some((a, n)) if a >= 0.0 && n >= 1 => Ok((a, n)),
        _ => bail!(
            "--{flag} '{text}' is not valid: expected ERLANGS:{what} with erlangs >= 0 and {what} >= 1, such as \"{example}\""
        ),
    }
}

// ---------------------------------------------------------------------------
// Stage 2: formulas, then one block that is both the text and the JSON.

/// A figure as the text block shows it; the JSON carries the raw number
/// (shares as fractions, times in seconds, traffic in erlangs).
#[derive(Clone, Copy)]
enum Shown {
    /// Traffic: "12.5 erlangs".
    Erlangs(f64),
    /// A share: "1.2%".
    Share(f64),
    /// A time: "20 s".
    Seconds(f64),
    /// A whole number: servers, agents, sources.
    Count(u32),
    /// A plain number with up to this many decimals.
    Number(f64, usize),
}

impl Shown {
    fn text(self) -> String {
        match self {
            Shown::Erlangs(x) => erlangs(x),
            Shown::Share(x) => percent(x),
            Shown::Seconds(x) => seconds(x),
            Shown::Count(n) => n.to_string(),
            Shown::Number(x, digits) => number(x, digits),
        }
    }

    fn json(self) -> serde_json::Value {
        match self {
            Shown::Erlangs(x) | Shown::Share(x) | Shown::Seconds(x) | Shown::Number(x, _) => {
                x.into()
            }
            Shown::Count(n) => n.into(),
        }
    }
}

/// An answer: an aligned block of labelled figures under a title line, and
/// the same figures as a JSON object. Every text row is added together with
/// its JSON key, so the two cannot drift apart; the JSON may carry more (a
/// value the text shows in a label, such as the service-level time).
struct Block {
    title: String,
    rows: Vec<(String, String)>,
    notes: Vec<String>,
    json: serde_json::Map<String, serde_json::Value>,
    /// The JSON object that later keys go into (`None`: the top level).
    section: Option<String>,
    /// Those objects, put under their keys at the end.
    sections: std::collections::BTreeMap<String, serde_json::Map<String, serde_json::Value>>,
}

impl Block {
    fn new(title: &str) -> Block {
        let mut json = serde_json::Map::new();
        json.insert("title".into(), title.into());
        Block {
            title: title.to_string(),
            rows: Vec::new(),
            notes: Vec::new(),
            json,
            section: None,
            sections: Default::default(),
        }
    }

    fn put(&mut self, key: &str, value: serde_json::Value) {
        let object = match &self.section {
            None => &mut self.json,
            Some(section) => self.sections.entry(section.clone()).or_default(),
        };
        let earlier = object.insert(key.to_string(), value);
        debug_assert!(earlier.is_none(), "calc JSON key {key} set twice");
    }

    /// Later rows' JSON goes into the object under `key` (a group of
    /// figures from another method, such as the general-holding waits).
    fn section(mut self, key: &str) -> Block {
        self.section = Some(key.to_string());
        self
    }

    /// A row whose text and JSON both follow from the figure.
    fn figure(self, label: &str, key: &str, shown: Shown) -> Block {
        self.row(label, shown.text(), key, shown.json())
    }

    /// A row with its own wording, and the value the JSON carries for it.
    fn row(mut self, label: &str, text: String, key: &str, json: serde_json::Value) -> Block {
        self.rows.push((label.to_string(), text));
        self.put(key, json);
        self
    }

    /// A value the JSON carries that the text shows in a label or the title.
    fn field(mut self, key: &str, json: serde_json::Value) -> Block {
        self.put(key, json);
        self
    }

    /// A row whose JSON is one more element of the array under `key`.
    fn item(mut self, label: &str, text: String, key: &str, json: serde_json::Value) -> Block {
        self.rows.push((label.to_string(), text));
        match self.json.get_mut(key) {
            Some(serde_json::Value::Array(items)) => items.push(json),
            _ => self.put(key, vec![json].into()),
        }
        self
    }

    /// A note under the rows (text in brackets; JSON `notes`).
    fn note(mut self, note: &str) -> Block {
        self.notes.push(note.to_string());
        self
    }

    fn report(mut self) -> Report {
        let width = self
            .rows
            .iter()
            .map(|(l, _)| l.chars().count())
            .max()
            .unwrap_or(0);
        let mut text = format!("{}\n", self.title);
        for (label, value) in &self.rows {
            text += &format!("  {label:<width$}  {value}\n");
        }
        for note in &self.notes {
            text += &format!("  ({note})\n");
        }
        self.section = None;
        if !self.notes.is_empty() {
            let notes = std::mem::take(&mut self.notes);
            self.put("notes", notes.into());
        }
        for (key, object) in std::mem::take(&mut self.sections) {
            self.put(&key, object.into());
        }
        Report {
            text,
            json: serde_json::Value::Object(self.json),
        }
    }
}

/// A number with up to `digits` decimals, trailing zeros dropped.
fn number(x: f64, digits: usize) -> String {
    let s = format!("{x:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

fn erlangs(x: f64) -> String {
    let n = number(x, 4);
    let unit = if n == "1" { "erlang" } else { "erlangs" };
    format!("{n} {unit}")
}

fn seconds(x: f64) -> String {
    format!("{} s", number(x, 2))
}

fn percent(x: f64) -> String {
    units::format_share(x)
}

fn loss(a: &LossArgs) -> Result<Block> {
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, a.holding)?;
    let servers = a.servers;
    let blocking = erlang_b::blocking(servers, traffic)?;
    Ok(Block::new("Erlang B loss system (blocked calls cleared)")
        .figure("offered traffic", "traffic", Shown::Erlangs(traffic))
        .figure("servers", "servers", Shown::Count(servers))
        .figure("blocking", "blocking", Shown::Share(blocking))
        .figure(
            "carried traffic",
            "carried_traffic",
            Shown::Erlangs(traffic * (1.0 - blocking)),
        )
        .figure(
            "lost traffic",
            "lost_traffic",
            Shown::Erlangs(traffic * blocking),
        ))
}

fn servers(a: &ServersArgs) -> Result<Block> {
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, a.holding)?;
    let target = a.loss;
    let servers = erlang_b::servers_for(traffic, target)?;
    let blocking = erlang_b::blocking(servers, traffic)?;
    Ok(
        Block::new("Erlang B sizing: fewest servers for the grade of service")
            .figure("offered traffic", "traffic", Shown::Erlangs(traffic))
            .row(
                "grade of service",
                format!("{} or less", percent(target)),
                "loss_goal",
                target.into(),
            )
            .figure("servers", "servers", Shown::Count(servers))
            .figure("blocking", "blocking", Shown::Share(blocking))
            .figure(
                "occupancy",
                "occupancy",
                Shown::Share(traffic * (1.0 - blocking) / f64::from(servers)),
            ),
    )
}

fn traffic(a: &TrafficArgs) -> Result<Block> {
    if let (Some(agents), Some(holding)) = (a.agents, a.holding) {
        return delay_traffic(a, agents, holding);
    }
    let (Some(servers), Some(target)) = (a.servers, a.loss) else {
        bail!("give --servers with --loss (a loss group), or --agents with --holding and a goal");
    };
    let traffic = erlang_b::traffic_for(servers, target)?;
    Ok(
        Block::new("Erlang B capacity: most traffic at the grade of service")
            .figure("servers", "servers", Shown::Count(servers))
            .figure("grade of service", "loss_goal", Shown::Share(target))
            .figure("offered traffic", "traffic", Shown::Erlangs(traffic))
            .figure(
                "carried traffic",
                "carried_traffic",
                Shown::Erlangs(traffic * (1.0 - target)),
            )
            .figure(
                "occupancy",
                "occupancy",
                Shown::Share(traffic * (1.0 - target) / f64::from(servers)),
            ),
    )
}

/// "answered within 20 s": the service-level row's label.
fn within_label(t: f64) -> String {
    format!("answered within {}", units::format_duration(t))
}

fn queue(a: &QueueArgs) -> Result<Block> {
    let holding = a.holding;
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, Some(holding))?;
    let within = a.answer_within;
    let agents = a.agents;
    let wait_probability = erlang_c::wait_probability(agents, traffic)?;
    let mean_wait_s = erlang_c::mean_wait(agents, traffic, holding)?;
    let service_level = erlang_c::service_level(agents, traffic, holding, within)?;
    let occupancy = erlang_c::occupancy(agents, traffic)?;
    let general = a
        .holding_cv
        .map(|cv| queue_general::mean_wait(agents, traffic, holding, cv))
        .transpose()?;
    let mut block = Block::new("Erlang C delay system (callers wait without giving up)")
        .figure("offered traffic", "traffic", Shown::Erlangs(traffic))
        .figure("mean holding time", "holding_s", Shown::Seconds(holding))
        .figure("agents", "agents", Shown::Count(agents))
        .figure(
            "probability of waiting",
            "wait_probability",
            Shown::Share(wait_probability),
        )
        .figure(
            "mean wait, all calls",
            "mean_wait_s",
            Shown::Seconds(mean_wait_s),
        )
        .field("answer_within_s", within.into())
        .figure(
            &within_label(within),
            "service_level",
            Shown::Share(service_level),
        )
        .figure("occupancy", "occupancy", Shown::Share(occupancy));
    if let (Some(w), Some(cv)) = (&general, a.holding_cv) {
        let method = w.method.label();
        block = block
            .section("general_holding")
            .figure("holding-time cv", "cv", Shown::Number(cv, 3))
            .field("method", method.into())
            .field("exact", w.method.is_exact().into())
            .figure(
                &format!("probability of waiting, {method}"),
                "wait_probability",
                Shown::Share(w.wait_probability),
            )
            .figure(
                &format!("mean wait, all calls, {method}"),
                "mean_wait_s",
                Shown::Seconds(w.mean_wait_s),
            )
            .note("the Erlang C rows assume exponential holding (cv 1); the service level has no general-holding form here");
    }
    Ok(block)
}

fn goals_of(
    within: Option<f64>,
    level: Option<f64>,
    mean_wait: Option<f64>,
    abandon: Option<f64>,
) -> DelayGoals {
    DelayGoals {
        service_level: within.zip(level),
        mean_wait_s: mean_wait,
        abandonment: abandon,
    }
}

/// The goal rows and the figures of a delay system (`calc agents` and the
/// delay form of `calc traffic`).
fn delay_block(
    mut block: Block,
    holding: f64,
    patience: Option<f64>,
    goals: &DelayGoals,
    f: &DelayFigures,
) -> Block {
    block = block.figure("mean holding time", "holding_s", Shown::Seconds(holding));
    if let Some(p) = patience {
        block = block.figure("mean patience", "patience_s", Shown::Seconds(p));
    }
    if let Some((t, goal)) = goals.service_level {
        block = block.field("answer_within_s", t.into()).row(
            "goal",
            format!(
                "{} answered within {}",
                percent(goal),
                units::format_duration(t)
            ),
            "service_level_goal",
            goal.into(),
        );
    }
    if let Some(goal) = goals.mean_wait_s {
        block = block.row(
            "goal",
            format!("mean wait {} or less", seconds(goal)),
            "mean_wait_goal_s",
            goal.into(),
        );
    }
    if let Some(goal) = goals.abandonment {
        block = block.row(
            "goal",
            format!("{} abandoned or less", percent(goal)),
            "abandonment_goal",
            goal.into(),
        );
    }
    block = block
        .figure("agents", "agents", Shown::Count(f.agents))
        .figure("offered traffic", "traffic", Shown::Erlangs(f.traffic))
        .figure(
            "probability of waiting",
            "wait_probability",
            Shown::Share(f.wait_probability),
        )
        .figure(
            "mean wait, all calls",
            "mean_wait_s",
            Shown::Seconds(f.mean_wait_s),
        );
    if patience.is_some() {
        block = block.figure("abandoned", "abandonment", Shown::Share(f.abandonment));
    }
    if let (Some(sl), Some((t, _))) = (f.service_level, goals.service_level) {
        block = block.row(
            &within_label(t),
            format!("{} of all calls", percent(sl)),
            "service_level",
            sl.into(),
        );
    }
    block.figure("occupancy", "occupancy", Shown::Share(f.occupancy))
}

fn method_title(patience: Option<f64>, what: &str) -> String {
    match patience {
        Some(_) => format!("Erlang A {what} (callers give up, M/M/N+M)"),
        None => format!("Erlang C {what} (callers wait without giving up)"),
    }
}

fn agents(a: &AgentsArgs) -> Result<Block> {
    let holding = a.holding;
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, Some(holding))?;
    let goals = goals_of(a.answer_within, a.service_level, a.mean_wait, a.abandon);
    let agents = delay_goals::agents_for(traffic, holding, a.patience, &goals)?;
    let f = delay_goals::figures(agents, traffic, holding, a.patience, a.answer_within)?;
    let title = method_title(a.patience, "sizing: fewest agents meeting every goal");
    Ok(delay_block(
        Block::new(&title),
        holding,
        a.patience,
        &goals,
        &f,
    ))
}

fn delay_traffic(a: &TrafficArgs, agents: u32, holding: f64) -> Result<Block> {
    let goals = goals_of(a.answer_within, a.service_level, a.mean_wait, a.abandon);
    let traffic = delay_goals::traffic_for(agents, holding, a.patience, &goals)?;
    let f = delay_goals::figures(agents, traffic, holding, a.patience, a.answer_within)?;
    let title = method_title(a.patience, "capacity: most traffic meeting every goal");
    Ok(
        delay_block(Block::new(&title), holding, a.patience, &goals, &f).figure(
            "calls per hour",
            "calls_per_hour",
            Shown::Number(traffic / holding * 3600.0, 1),
        ),
    )
}

fn redial(a: &RedialArgs) -> Result<Block> {
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, a.holding)?;
    let servers = a.servers;
    let stream = redial_fixed_point::RedialingStream {
        traffic,
        chances: a.chances.clone(),
        max_attempts: a.max_attempts,
    };
    let fp = redial_fixed_point::solve(servers, std::slice::from_ref(&stream))?;
    let shares = fp.streams[0];
    let plain = erlang_b::blocking(servers, traffic)?;
    let chances: Vec<String> = a.chances.iter().map(|&c| percent(c)).collect();
    Ok(Block::new("Loss system with redials (fixed point B = E_N(attempt traffic); approximation)")
        .field("method", "redial fixed point (approx.)".into())
        .figure("fresh offered traffic", "traffic", Shown::Erlangs(traffic))
        .figure("servers", "servers", Shown::Count(servers))
        .row(
            "redial chances",
            format!("{} (the last repeats)", chances.join(", ")),
            "redial_chances",
            a.chances.clone().into(),
        )
        .row(
            "attempts in all",
            a.max_attempts
                .map_or("no limit".to_string(), |n| n.to_string()),
            "max_attempts",
            a.max_attempts.into(),
        )
        .figure("attempt traffic", "attempt_traffic", Shown::Erlangs(fp.attempt_traffic))
        .figure("blocking of every attempt", "blocking", Shown::Share(fp.blocking))
        .figure(
            "attempts per fresh call",
            "attempts_per_call",
            Shown::Number(shares.attempts_per_call, 4),
        )
        .figure("fresh calls finally lost", "loss", Shown::Share(shares.loss))
        .figure("carried traffic", "carried_traffic", Shown::Erlangs(fp.carried_traffic()))
        .figure(
            "Erlang B without redials",
            "erlang_b_without_redials",
            Shown::Share(plain),
        )
        .note("each attempt is taken to meet the same blocking and the attempts to be Poisson; redials bunch after busy spells, so the simulator is the reference"))
}

fn abandon(a: &AbandonArgs) -> Result<Block> {
    let holding = a.holding;
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, Some(holding))?;
    let (patience, within) = (a.patience, a.answer_within);
    let q = erlang_a::solve(a.agents, traffic, holding, patience)?;
    let mut block = Block::new("Erlang A delay system with abandonment (M/M/N+M)")
        .figure("offered traffic", "traffic", Shown::Erlangs(traffic))
        .figure("mean holding time", "holding_s", Shown::Seconds(holding))
        .figure("mean patience", "patience_s", Shown::Seconds(patience))
        .figure("agents", "agents", Shown::Count(q.agents))
        .figure(
            "probability of waiting",
            "wait_probability",
            Shown::Share(q.wait_probability),
        )
        .figure("abandoned", "abandonment", Shown::Share(q.abandonment))
        .figure(
            "mean wait, all calls",
            "mean_wait_s",
            Shown::Seconds(q.mean_wait_s),
        )
        .figure(
            "mean wait, answered calls",
            "mean_wait_answered_s",
            Shown::Seconds(q.mean_wait_answered_s),
        );
    if let Some(t) = within {
        let sl = q.service_level(t);
        block = block.field("answer_within_s", t.into()).row(
            &within_label(t),
            format!("{} of all calls", percent(sl)),
            "service_level",
            sl.into(),
        );
    }
    Ok(block
        .figure(
            "carried traffic",
            "carried_traffic",
            Shown::Erlangs(q.carried_traffic),
        )
        .figure("occupancy", "occupancy", Shown::Share(q.occupancy)))
}

fn finite(a: &FiniteArgs) -> Result<Block> {
    let (sources, servers) = (a.sources, a.servers);
    let g = engset::solve(sources, servers, a.idle_traffic)?;
    let mut block = Block::new("Engset loss system (finite sources, blocked calls cleared)")
        .figure("sources", "sources", Shown::Count(sources))
        .figure("servers", "servers", Shown::Count(servers))
        .figure(
            "traffic per idle source",
            "idle_traffic",
            Shown::Erlangs(a.idle_traffic),
        )
        .figure(
            "offered traffic",
            "offered_traffic",
            Shown::Erlangs(g.offered_traffic),
        )
        .figure(
            "time congestion",
            "time_congestion",
            Shown::Share(g.time_congestion),
        )
        .figure(
            "call congestion",
            "call_congestion",
            Shown::Share(g.call_congestion),
        )
        .figure(
            "carried traffic",
            "carried_traffic",
            Shown::Erlangs(g.carried_traffic),
        );
    if sources <= servers {
        block = block.note("no more sources than servers: no call is ever blocked");
    }
    Ok(block)
}

/// The per-stream method of `calc overflow`.
const PARCEL_METHOD: &str = "IPP overflow parcels, Kuczura (approx.)";

fn overflow_groups(a: &OverflowArgs) -> Result<Block> {
    let mut groups = Vec::new();
    if a.primary.is_empty() {
        let Some(servers) = a.servers else {
            bail!(
                "give one first-choice group with --traffic (or --calls) and --servers, or several with --primary ERLANGS:N"
            );
        };
        let traffic = offered_traffic(a.traffic, a.calls, a.holding)?;
        groups.push((traffic, servers));
    } else {
        for p in &a.primary {
            groups.push(pair("primary", p, "SERVERS", "12.5:20")?);
        }
    }
    let direct = a.direct.unwrap_or(0.0);
    let final_servers = a.final_servers;
    let moments = overflow::offered_moments(&groups, direct)?;
    let (mean, variance, peakedness) = (moments.mean, moments.variance, moments.peakedness());
    let final_group = final_servers
        .map(|n| overflow::final_group(&groups, direct, n))
        .transpose()?;
    let numbered = |what: &str, i: usize| {
        if groups.len() == 1 {
            what.to_string()
        } else {
            format!("{what} {}", i + 1)
        }
    };

    let mut block = Block::new("Overflow traffic (Riordan moments, equivalent random method)");
    for (i, &(traffic, servers)) in groups.iter().enumerate() {
        block = block.item(
            &numbered("first-choice group", i),
            format!("{} on {servers} servers", erlangs(traffic)),
            "first_choice_groups",
            serde_json::json!({ "traffic": traffic, "servers": servers }),
        );
    }
    if direct > 0.0 {
        block = block.figure("direct traffic", "direct_traffic", Shown::Erlangs(direct));
    }
    block = block
        .figure("overflow mean", "overflow_mean", Shown::Erlangs(mean))
        .figure(
            "overflow variance",
            "overflow_variance",
            Shown::Number(variance, 4),
        )
        .figure("peakedness", "peakedness", Shown::Number(peakedness, 4));
    if let (Some(f), Some(n)) = (&final_group, final_servers) {
        if let Some(eq) = f.equivalent {
            block = block.row(
                "equivalent random group",
                format!(
                    "{} on {} servers",
                    erlangs(eq.traffic),
                    number(eq.servers, 3)
                ),
                "equivalent_random_group",
                serde_json::json!({ "traffic": eq.traffic, "servers": eq.servers }),
            );
        }
        block = block
            .row(
                "final group",
                format!("{n} servers"),
                "final_servers",
                n.into(),
            )
            .figure(
                "final-group blocking",
                "final_blocking",
                Shown::Share(f.final_blocking),
            )
            .figure(
                "lost traffic",
                "lost_traffic",
                Shown::Erlangs(f.lost_traffic),
            )
            .figure(
                "share of all traffic lost",
                "total_loss",
                Shown::Share(f.total_loss),
            );
    }
    // Each stream's own loss: Kuczura's IPP per parcel (None beyond its
    // phase limit, where only the totals above are shown).
    let parcels = final_servers.and_then(|n| overflow::parcel_losses(&groups, direct, n).ok());
    if let Some(p) = &parcels {
        block = block.row(
            "per-stream loss",
            PARCEL_METHOD.to_string(),
            "parcel_method",
            PARCEL_METHOD.into(),
        );
        for (i, &(traffic, servers)) in groups.iter().enumerate() {
            block = block.item(
                &format!("  {}", numbered("first-choice stream", i)),
                format!(
                    "{} (final group loses {} of its overflow)",
                    percent(p.loss[i]),
                    percent(p.final_blocking[i])
                ),
                "parcels",
                serde_json::json!({
                    "traffic": traffic,
                    "servers": servers,
                    "final_blocking": p.final_blocking[i],
                    "loss": p.loss[i],
                }),
            );
        }
        if direct > 0.0 {
            block = block.figure(
                "  direct traffic",
                "direct_loss",
                Shown::Share(p.direct_loss),
            );
        }
    }
    Ok(block)
}

fn multirate_classes(a: &MultirateArgs) -> Result<Block> {
    let capacity = a.capacity;
    let classes = a
        .class
        .iter()
        .map(|c| pair("class", c, "UNITS", "2.5:6"))
        .collect::<Result<Vec<_>>>()?;
    let blocking = multirate::kaufman_roberts(capacity, &classes)?;
    let mut block = Block::new("Multi-rate loss system (Kaufman-Roberts)").row(
        "capacity",
        format!("{capacity} channels"),
        "capacity",
        capacity.into(),
    );
    for (i, (&(traffic, units), &b)) in classes.iter().zip(&blocking).enumerate() {
        block = block.item(
            &format!("class {}", i + 1),
            format!(
                "{}, {units} channel{} per call: blocking {}",
                erlangs(traffic),
                if units == 1 { "" } else { "s" },
                percent(b)
            ),
            "classes",
            serde_json::json!({ "traffic": traffic, "units": units, "blocking": b }),
        );
    }
    Ok(block)
}
