//! `busyhour calc`: the closed-form formulas from the command line.
//!
//! Owns the `calc` arguments, their parsing into numbers and the printing of
//! the answers (an aligned text block, or JSON with `--json`). Computes
//! nothing itself: every figure comes from `busyhour::formulas`.

use std::io::Write;

use anyhow::{Result, bail};
use clap::{Args, Subcommand};
use serde::Serialize;

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

/// An answer, both as text and as JSON.
struct Report {
    text: String,
    json: serde_json::Value,
}

fn evaluate(command: &CalcCommand) -> Result<Report> {
    match command {
        CalcCommand::Loss(a) => loss(a),
        CalcCommand::Servers(a) => servers(a),
        CalcCommand::Traffic(a) => traffic(a),
        CalcCommand::Queue(a) => queue(a),
        CalcCommand::Agents(a) => agents(a),
        CalcCommand::Redial(a) => redial(a),
        CalcCommand::Abandon(a) => abandon(a),
        CalcCommand::Finite(a) => finite(a),
        CalcCommand::Overflow(a) => overflow_groups(a),
        CalcCommand::Multirate(a) => multirate_classes(a),
    }
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
// Stage 2: formulas, then the text block and the JSON object.

/// An aligned block of labelled figures under a title line.
struct Block {
    title: String,
    rows: Vec<(String, String)>,
    notes: Vec<String>,
}

impl Block {
    fn new(title: &str) -> Block {
        Block {
            title: title.to_string(),
            rows: Vec::new(),
            notes: Vec::new(),
        }
    }

    fn row(mut self, label: &str, value: String) -> Block {
        self.rows.push((label.to_string(), value));
        self
    }

    fn note(mut self, note: &str) -> Block {
        self.notes.push(note.to_string());
        self
    }

    fn render(&self) -> String {
        let width = self
            .rows
            .iter()
            .map(|(l, _)| l.chars().count())
            .max()
            .unwrap_or(0);
        let mut s = format!("{}\n", self.title);
        for (label, value) in &self.rows {
            s += &format!("  {label:<width$}  {value}\n");
        }
        for note in &self.notes {
            s += &format!("  ({note})\n");
        }
        s
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

fn loss(a: &LossArgs) -> Result<Report> {
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, a.holding)?;
    let servers = a.servers;
    let blocking = erlang_b::blocking(servers, traffic)?;
    let text = Block::new("Erlang B loss system (blocked calls cleared)")
        .row("offered traffic", erlangs(traffic))
        .row("servers", servers.to_string())
        .row("blocking", percent(blocking))
        .row("carried traffic", erlangs(traffic * (1.0 - blocking)))
        .row("lost traffic", erlangs(traffic * blocking))
        .render();
    #[derive(Serialize)]
    struct Json {
        traffic: f64,
        servers: u32,
        blocking: f64,
        carried_traffic: f64,
        lost_traffic: f64,
    }
    Ok(Report {
        text,
        json: serde_json::to_value(Json {
            traffic,
            servers,
            blocking,
            carried_traffic: traffic * (1.0 - blocking),
            lost_traffic: traffic * blocking,
        })?,
    })
}

fn servers(a: &ServersArgs) -> Result<Report> {
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, a.holding)?;
    let target = a.loss;
    let servers = erlang_b::servers_for(traffic, target)?;
    let blocking = erlang_b::blocking(servers, traffic)?;
    let text = Block::new("Erlang B sizing: fewest servers for the grade of service")
        .row("offered traffic", erlangs(traffic))
        .row("grade of service", format!("{} or less", percent(target)))
        .row("servers", servers.to_string())
        .row("blocking", percent(blocking))
        .row(
            "occupancy",
            percent(traffic * (1.0 - blocking) / f64::from(servers)),
        )
        .render();
    #[derive(Serialize)]
    struct Json {
        traffic: f64,
        loss_goal: f64,
        servers: u32,
        blocking: f64,
        occupancy: f64,
    }
    Ok(Report {
        text,
        json: serde_json::to_value(Json {
            traffic,
            loss_goal: target,
            servers,
            blocking,
            occupancy: traffic * (1.0 - blocking) / f64::from(servers),
        })?,
    })
}

fn traffic(a: &TrafficArgs) -> Result<Report> {
    if let (Some(agents), Some(holding)) = (a.agents, a.holding) {
        return delay_traffic(a, agents, holding);
    }
    let (Some(servers), Some(target)) = (a.servers, a.loss) else {
        bail!("give --servers with --loss (a loss group), or --agents with --holding and a goal");
    };
    let traffic = erlang_b::traffic_for(servers, target)?;
    let text = Block::new("Erlang B capacity: most traffic at the grade of service")
        .row("servers", servers.to_string())
        .row("grade of service", percent(target))
        .row("offered traffic", erlangs(traffic))
        .row("carried traffic", erlangs(traffic * (1.0 - target)))
        .row(
            "occupancy",
            percent(traffic * (1.0 - target) / f64::from(servers)),
        )
        .render();
    #[derive(Serialize)]
    struct Json {
        servers: u32,
        loss_goal: f64,
        traffic: f64,
        carried_traffic: f64,
        occupancy: f64,
    }
    Ok(Report {
        text,
        json: serde_json::to_value(Json {
            servers,
            loss_goal: target,
            traffic,
            carried_traffic: traffic * (1.0 - target),
            occupancy: traffic * (1.0 - target) / f64::from(servers),
        })?,
    })
}

fn queue(a: &QueueArgs) -> Result<Report> {
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
        .row("offered traffic", erlangs(traffic))
        .row("mean holding time", seconds(holding))
        .row("agents", agents.to_string())
        .row("probability of waiting", percent(wait_probability))
        .row("mean wait, all calls", seconds(mean_wait_s))
        .row(
            &format!("answered within {}", units::format_duration(within)),
            percent(service_level),
        )
        .row("occupancy", percent(occupancy));
    if let (Some(w), Some(cv)) = (&general, a.holding_cv) {
        block = block
            .row("holding-time cv", number(cv, 3))
            .row(
                &format!("probability of waiting, {}", w.method.label()),
                percent(w.wait_probability),
            )
            .row(
                &format!("mean wait, all calls, {}", w.method.label()),
                seconds(w.mean_wait_s),
            )
            .note("the Erlang C rows assume exponential holding (cv 1); the service level has no general-holding form here");
    }
    #[derive(Serialize)]
    struct General {
        cv: f64,
        method: &'static str,
        exact: bool,
        wait_probability: f64,
        mean_wait_s: f64,
    }
    #[derive(Serialize)]
    struct Json {
        traffic: f64,
        holding_s: f64,
        agents: u32,
        answer_within_s: f64,
        wait_probability: f64,
        mean_wait_s: f64,
        service_level: f64,
        occupancy: f64,
        #[serde(skip_serializing_if = "Option::is_none")]
        general_holding: Option<General>,
    }
    Ok(Report {
        text: block.render(),
        json: serde_json::to_value(Json {
            traffic,
            holding_s: holding,
            agents,
            answer_within_s: within,
            wait_probability,
            mean_wait_s,
            service_level,
            occupancy,
            general_holding: general.zip(a.holding_cv).map(|(w, cv)| General {
                cv,
                method: w.method.label(),
                exact: w.method.is_exact(),
                wait_probability: w.wait_probability,
                mean_wait_s: w.mean_wait_s,
            }),
        })?,
    })
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

/// The goal rows and the figures of a delay system, as a block.
fn delay_block(
    mut block: Block,
    holding: f64,
    patience: Option<f64>,
    goals: &DelayGoals,
    f: &DelayFigures,
) -> Block {
    block = block.row("mean holding time", seconds(holding));
    if let Some(p) = patience {
        block = block.row("mean patience", seconds(p));
    }
    if let Some((t, goal)) = goals.service_level {
        block = block.row(
            "goal",
            format!(
                "{} answered within {}",
                percent(goal),
                units::format_duration(t)
            ),
        );
    }
    if let Some(goal) = goals.mean_wait_s {
        block = block.row("goal", format!("mean wait {} or less", seconds(goal)));
    }
    if let Some(goal) = goals.abandonment {
        block = block.row("goal", format!("{} abandoned or less", percent(goal)));
    }
    block = block
        .row("agents", f.agents.to_string())
        .row("offered traffic", erlangs(f.traffic))
        .row("probability of waiting", percent(f.wait_probability))
        .row("mean wait, all calls", seconds(f.mean_wait_s));
    if patience.is_some() {
        block = block.row("abandoned", percent(f.abandonment));
    }
    if let (Some(sl), Some((t, _))) = (f.service_level, goals.service_level) {
        block = block.row(
            &format!("answered within {}", units::format_duration(t)),
            format!("{} of all calls", percent(sl)),
        );
    }
    block.row("occupancy", percent(f.occupancy))
}

/// The JSON of `calc agents` and the delay form of `calc traffic`.
#[derive(Serialize)]
struct DelayJson {
    agents: u32,
    traffic: f64,
    holding_s: f64,
    patience_s: Option<f64>,
    answer_within_s: Option<f64>,
    service_level: Option<f64>,
    mean_wait_s: f64,
    wait_probability: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    abandonment: Option<f64>,
    occupancy: f64,
}

impl DelayJson {
    fn of(f: &DelayFigures, holding: f64, patience: Option<f64>, goals: &DelayGoals) -> DelayJson {
        DelayJson {
            agents: f.agents,
            traffic: f.traffic,
            holding_s: holding,
            patience_s: patience,
            answer_within_s: goals.service_level.map(|(t, _)| t),
            service_level: f.service_level,
            mean_wait_s: f.mean_wait_s,
            wait_probability: f.wait_probability,
            abandonment: patience.map(|_| f.abandonment),
            occupancy: f.occupancy,
        }
    }
}

fn method_title(patience: Option<f64>, what: &str) -> String {
    match patience {
        Some(_) => format!("Erlang A {what} (callers give up, M/M/N+M)"),
        None => format!("Erlang C {what} (callers wait without giving up)"),
    }
}

fn agents(a: &AgentsArgs) -> Result<Report> {
    let holding = a.holding;
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, Some(holding))?;
    let goals = goals_of(a.answer_within, a.service_level, a.mean_wait, a.abandon);
    let agents = delay_goals::agents_for(traffic, holding, a.patience, &goals)?;
    let f = delay_goals::figures(agents, traffic, holding, a.patience, a.answer_within)?;
    let title = method_title(a.patience, "sizing: fewest agents meeting every goal");
    let text = delay_block(Block::new(&title), holding, a.patience, &goals, &f).render();
    Ok(Report {
        text,
        json: serde_json::to_value(DelayJson::of(&f, holding, a.patience, &goals))?,
    })
}

fn delay_traffic(a: &TrafficArgs, agents: u32, holding: f64) -> Result<Report> {
    let goals = goals_of(a.answer_within, a.service_level, a.mean_wait, a.abandon);
    let traffic = delay_goals::traffic_for(agents, holding, a.patience, &goals)?;
    let f = delay_goals::figures(agents, traffic, holding, a.patience, a.answer_within)?;
    let title = method_title(a.patience, "capacity: most traffic meeting every goal");
    let block = delay_block(Block::new(&title), holding, a.patience, &goals, &f)
        .row("calls per hour", number(traffic / holding * 3600.0, 1));
    Ok(Report {
        text: block.render(),
        json: serde_json::to_value(DelayJson::of(&f, holding, a.patience, &goals))?,
    })
}

fn redial(a: &RedialArgs) -> Result<Report> {
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
    let text = Block::new("Loss system with redials (fixed point B = E_N(attempt traffic); approximation)")
        .row("fresh offered traffic", erlangs(traffic))
        .row("servers", servers.to_string())
        .row(
            "redial chances",
            format!("{} (the last repeats)", chances.join(", ")),
        )
        .row(
            "attempts in all",
            a.max_attempts
                .map_or("no limit".to_string(), |n| n.to_string()),
        )
        .row("attempt traffic", erlangs(fp.attempt_traffic))
        .row("blocking of every attempt", percent(fp.blocking))
        .row("attempts per fresh call", number(shares.attempts_per_call, 4))
        .row("fresh calls finally lost", percent(shares.loss))
        .row("carried traffic", erlangs(fp.carried_traffic()))
        .row("Erlang B without redials", percent(plain))
        .note("each attempt is taken to meet the same blocking and the attempts to be Poisson; redials bunch after busy spells, so the simulator is the reference")
        .render();
    #[derive(Serialize)]
    struct Json {
        method: &'static str,
        traffic: f64,
        servers: u32,
        redial_chances: Vec<f64>,
        max_attempts: Option<u32>,
        blocking: f64,
        attempt_traffic: f64,
        attempts_per_call: f64,
        loss: f64,
        carried_traffic: f64,
        erlang_b_without_redials: f64,
    }
    Ok(Report {
        text,
        json: serde_json::to_value(Json {
            method: "redial fixed point (approx.)",
            traffic,
            servers,
            redial_chances: a.chances.clone(),
            max_attempts: a.max_attempts,
            carried_traffic: fp.carried_traffic(),
            blocking: fp.blocking,
            attempt_traffic: fp.attempt_traffic,
            attempts_per_call: shares.attempts_per_call,
            loss: shares.loss,
            erlang_b_without_redials: plain,
        })?,
    })
}

fn abandon(a: &AbandonArgs) -> Result<Report> {
    let holding = a.holding;
    let traffic = offered_traffic(a.offered.traffic, a.offered.calls, Some(holding))?;
    let (patience, within) = (a.patience, a.answer_within);
    let q = erlang_a::solve(a.agents, traffic, holding, patience)?;
    let service_level = within.map(|t| q.service_level(t));
    let mut block = Block::new("Erlang A delay system with abandonment (M/M/N+M)")
        .row("offered traffic", erlangs(traffic))
        .row("mean holding time", seconds(holding))
        .row("mean patience", seconds(patience))
        .row("agents", q.agents.to_string())
        .row("probability of waiting", percent(q.wait_probability))
        .row("abandoned", percent(q.abandonment))
        .row("mean wait, all calls", seconds(q.mean_wait_s))
        .row("mean wait, answered calls", seconds(q.mean_wait_answered_s));
    if let (Some(sl), Some(t)) = (service_level, within) {
        block = block.row(
            &format!("answered within {}", units::format_duration(t)),
            format!("{} of all calls", percent(sl)),
        );
    }
    let text = block
        .row("carried traffic", erlangs(q.carried_traffic))
        .row("occupancy", percent(q.occupancy))
        .render();
    #[derive(Serialize)]
    struct Json {
        traffic: f64,
        holding_s: f64,
        patience_s: f64,
        agents: u32,
        answer_within_s: Option<f64>,
        wait_probability: f64,
        abandonment: f64,
        mean_wait_s: f64,
        mean_wait_answered_s: f64,
        service_level: Option<f64>,
        carried_traffic: f64,
        occupancy: f64,
    }
    Ok(Report {
        text,
        json: serde_json::to_value(Json {
            traffic,
            holding_s: holding,
            patience_s: patience,
            agents: q.agents,
            answer_within_s: within,
            wait_probability: q.wait_probability,
            abandonment: q.abandonment,
            mean_wait_s: q.mean_wait_s,
            mean_wait_answered_s: q.mean_wait_answered_s,
            service_level,
            carried_traffic: q.carried_traffic,
            occupancy: q.occupancy,
        })?,
    })
}

fn finite(a: &FiniteArgs) -> Result<Report> {
    let (sources, servers) = (a.sources, a.servers);
    let g = engset::solve(sources, servers, a.idle_traffic)?;
    let mut block = Block::new("Engset loss system (finite sources, blocked calls cleared)")
        .row("sources", sources.to_string())
        .row("servers", servers.to_string())
        .row("traffic per idle source", erlangs(a.idle_traffic))
        .row("offered traffic", erlangs(g.offered_traffic))
        .row("time congestion", percent(g.time_congestion))
        .row("call congestion", percent(g.call_congestion))
        .row("carried traffic", erlangs(g.carried_traffic));
    if sources <= servers {
        block = block.note("no more sources than servers: no call is ever blocked");
    }
    #[derive(Serialize)]
    struct Json {
        sources: u32,
        servers: u32,
        idle_traffic: f64,
        offered_traffic: f64,
        time_congestion: f64,
        call_congestion: f64,
        carried_traffic: f64,
    }
    Ok(Report {
        text: block.render(),
        json: serde_json::to_value(Json {
            sources: a.sources,
            servers: a.servers,
            idle_traffic: a.idle_traffic,
            offered_traffic: g.offered_traffic,
            time_congestion: g.time_congestion,
            call_congestion: g.call_congestion,
            carried_traffic: g.carried_traffic,
        })?,
    })
}

/// The per-stream method of `calc overflow`.
const PARCEL_METHOD: &str = "IPP overflow parcels, Kuczura (approx.)";

fn overflow_groups(a: &OverflowArgs) -> Result<Report> {
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

    let mut block = Block::new("Overflow traffic (Riordan moments, equivalent random method)");
    for (i, (traffic, servers)) in groups.iter().enumerate() {
        let label = if groups.len() == 1 {
            "first-choice group".to_string()
        } else {
            format!("first-choice group {}", i + 1)
        };
        block = block.row(
            &label,
            format!("{} on {servers} servers", erlangs(*traffic)),
        );
    }
    if direct > 0.0 {
        block = block.row("direct traffic", erlangs(direct));
    }
    block = block
        .row("overflow mean", erlangs(mean))
        .row("overflow variance", number(variance, 4))
        .row("peakedness", number(peakedness, 4));
    if let (Some(f), Some(n)) = (&final_group, final_servers) {
        if let Some(eq) = f.equivalent {
            block = block.row(
                "equivalent random group",
                format!(
                    "{} on {} servers",
                    erlangs(eq.traffic),
                    number(eq.servers, 3)
                ),
            );
        }
        block = block
            .row("final group", format!("{n} servers"))
            .row("final-group blocking", percent(f.final_blocking))
            .row("lost traffic", erlangs(f.lost_traffic))
            .row("share of all traffic lost", percent(f.total_loss));
    }
    // Each stream's own loss: Kuczura's IPP per parcel (None beyond its
    // phase limit, where only the totals above are shown).
    let parcels = final_servers.and_then(|n| overflow::parcel_losses(&groups, direct, n).ok());
    #[derive(Serialize)]
    struct Parcel {
        traffic: f64,
        servers: u32,
        final_blocking: f64,
        loss: f64,
    }
    let mut parcel_json = Vec::new();
    if let Some(p) = &parcels {
        block = block.row("per-stream loss", PARCEL_METHOD.to_string());
        for (i, &(traffic, servers)) in groups.iter().enumerate() {
            let label = if groups.len() == 1 {
                "  first-choice stream".to_string()
            } else {
                format!("  first-choice stream {}", i + 1)
            };
            block = block.row(
                &label,
                format!(
                    "{} (final group loses {} of its overflow)",
                    percent(p.loss[i]),
                    percent(p.final_blocking[i])
                ),
            );
            parcel_json.push(Parcel {
                traffic,
                servers,
                final_blocking: p.final_blocking[i],
                loss: p.loss[i],
            });
        }
        if direct > 0.0 {
            block = block.row("  direct traffic", percent(p.direct_loss));
        }
    }
    #[derive(Serialize)]
    struct Json {
        overflow_mean: f64,
        overflow_variance: f64,
        peakedness: f64,
        final_blocking: Option<f64>,
        parcel_method: Option<&'static str>,
        parcels: Vec<Parcel>,
        direct_loss: Option<f64>,
    }
    Ok(Report {
        text: block.render(),
        json: serde_json::to_value(Json {
            overflow_mean: mean,
            overflow_variance: variance,
            peakedness,
            final_blocking: final_group.map(|f| f.final_blocking),
            parcel_method: parcels.as_ref().map(|_| PARCEL_METHOD),
            parcels: parcel_json,
            direct_loss: parcels
                .as_ref()
                .filter(|_| direct > 0.0)
                .map(|p| p.direct_loss),
        })?,
    })
}

fn multirate_classes(a: &MultirateArgs) -> Result<Report> {
    let capacity = a.capacity;
    let classes = a
        .class
        .iter()
        .map(|c| pair("class", c, "UNITS", "2.5:6"))
        .collect::<Result<Vec<_>>>()?;
    let blocking = multirate::kaufman_roberts(capacity, &classes)?;
    let mut block = Block::new("Multi-rate loss system (Kaufman-Roberts)")
        .row("capacity", format!("{capacity} channels"));
    #[derive(Serialize)]
    struct Class {
        traffic: f64,
        units: u32,
        blocking: f64,
    }
    #[derive(Serialize)]
    struct Json {
        capacity: u32,
        classes: Vec<Class>,
    }
    let mut json = Json {
        capacity,
        classes: Vec::new(),
    };
    for (i, (&(traffic, units), &b)) in classes.iter().zip(&blocking).enumerate() {
        block = block.row(
            &format!("class {}", i + 1),
            format!(
                "{}, {units} channel{} per call: blocking {}",
                erlangs(traffic),
                if units == 1 { "" } else { "s" },
                percent(b)
            ),
        );
        json.classes.push(Class {
            traffic,
            units,
            blocking: b,
        });
    }
    Ok(Report {
        text: block.render(),
        json: serde_json::to_value(json)?,
    })
}
