//! The document of `size --per-interval`: the staffing table (per
//! interval, the forecast load, the stationary formula's requirement, the
//! modified-offered-load requirement, the simulated requirement and each
//! goal's figure there with its 95% interval), built once from a
//! [`StaffingPlan`]. The JSON, the table, the CSV, the chart and the HTML
//! page render it.

use super::json::verdict_word;
use super::plot::{self, ChartError, LineChart, Paint, Series};
use super::text::{self, Table, align};
use super::{CAUTION, Charted, Document, html};
use crate::experiment::RunResult;
use crate::experiment::size::{Goal, Verdict};
use crate::experiment::staffing::{self, ShiftPlan, StaffingPlan};
use crate::scenario::Model;
use crate::stats::{self, Estimate, Figure};
use crate::textbook::{self, IntervalReference};
use serde::Serialize;

/// One goal in one interval under the plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct IntervalGoal {
    /// The goal as written.
    pub goal: String,
    /// "holds", "fails" or "undecided".
    #[serde(serialize_with = "verdict_word")]
    pub verdict: Verdict,
    /// The deciding estimate (the worst of the figures the goal covers).
    pub estimate: Estimate,
    /// The figure's unit, for the table.
    #[serde(skip)]
    pub unit: stats::Unit,
    /// Share of replications (days) in which the interval's own figures met
    /// the goal, with its exact 95% interval: how often this half hour
    /// misses, a different question from the long-run figure.
    pub days_meeting: Estimate,
}

/// Each goal of interval `b` judged on `result`.
fn judged(model: &Model, goals: &[Goal], b: usize, result: &RunResult) -> Vec<IntervalGoal> {
    staffing::interval_goals(model, goals, b)
        .unwrap_or_default()
        .iter()
        .map(|g| {
            let (verdict, estimate, _) = g.judge_targets(result, 1);
            IntervalGoal {
                goal: g.text.clone(),
                verdict,
                estimate,
                unit: g.judged_unit(),
                days_meeting: g.period_share(result),
            }
        })
        .collect()
}

/// One shift of a shift plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShiftRow {
    /// Start, seconds after the end of the warm-up.
    pub start_s: f64,
    /// End (breaks included).
    pub end_s: f64,
    /// Breaks: (start, end) in seconds after the end of the warm-up.
    pub breaks_s: Vec<(f64, f64)>,
    /// Agents working it.
    pub agents: u32,
}

/// One interval under a shift plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShiftInterval {
    /// Agents to schedule (the staffing's, with shrinkage).
    pub required: u32,
    /// Agents on duty by the shifts.
    pub scheduled: u32,
    /// Of them, taking calls (after shrinkage).
    pub servers: u32,
    /// Each goal there under the shifts, simulated.
    pub goals: Vec<IntervalGoal>,
}

/// The shift plan of a staffing, and how it fares in the simulator.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShiftPlanSection {
    /// The shifts worked, in order of start.
    pub shifts: Vec<ShiftRow>,
    /// Paid agent-hours (each shift's whole length, breaks included).
    pub paid_agent_hours: f64,
    /// Agent-hours the staffing asks to schedule.
    pub required_agent_hours: f64,
    /// No cheaper cover exists (proven by the search); otherwise the best
    /// found within its node limit.
    pub proven_fewest: bool,
    /// Every interval meets every goal under the shifts.
    pub met: bool,
    /// Per reporting interval, as the staffing table's rows.
    pub intervals: Vec<ShiftInterval>,
}

impl ShiftPlanSection {
    fn new(model: &Model, goals: &[Goal], plan: &ShiftPlan) -> ShiftPlanSection {
        let interval_s = model.plan.interval_s.unwrap_or(model.plan.length_s);
        let at = |i: u32| f64::from(i) * interval_s;
        let shifts = (plan.cover.shifts.iter())
            .map(|s| ShiftRow {
                start_s: at(s.start),
                end_s: at(s.end()),
                breaks_s: (s.breaks.iter())
                    .map(|b| (at(s.start + b.after), at(s.start + b.after + b.length)))
                    .collect(),
                agents: s.count,
            })
            .collect();
        let hours = |n: u64| n as f64 * interval_s / 3600.0;
        let intervals = (0..plan.required.len())
            .map(|b| ShiftInterval {
                required: plan.required[b],
                scheduled: plan.scheduled[b],
                servers: plan.present[b],
                goals: judged(model, goals, b, &plan.result),
            })
            .collect();
        ShiftPlanSection {
            shifts,
            paid_agent_hours: hours(plan.cover.agent_intervals),
            required_agent_hours: (0..plan.required.len())
                .map(|b| f64::from(plan.required[b]) * stats::interval_length(model, b) / 3600.0)
                .sum(),
            proven_fewest: plan.cover.proven,
            met: plan.verdicts.iter().all(|&v| v == Verdict::Holds),
            intervals,
        }
    }
}

/// One row of the staffing table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StaffingInterval {
    /// Start, seconds after the end of the warm-up.
    pub start_s: f64,
    /// End.
    pub end_s: f64,
    /// Offered traffic by the forecast (E).
    pub offered_traffic: f64,
    /// The stationary formula's requirement at that load.
    pub stationary: Option<u32>,
    /// The interval's mean infinite-server load (E).
    pub modified_offered_traffic: f64,
    /// The requirement at that load.
    pub modified: Option<u32>,
    /// The simulated requirement: servers taking calls.
    pub servers: u32,
    /// Servers to schedule for them (with the group's shrinkage).
    pub scheduled: u32,
    /// One fewer was seen not to do (the fewest at this precision).
    pub settled: bool,
    /// Each goal there.
    pub goals: Vec<IntervalGoal>,
    /// Servers of the starting plan (the stationary requirement, where a
    /// formula covers the goals).
    pub start_servers: u32,
    /// Each goal there under the starting plan, as simulated.
    pub start_goals: Vec<IntervalGoal>,
}

/// What `size --per-interval` found.
#[derive(Debug, Clone, Serialize)]
pub struct StaffingDocument {
    /// The scenario's title.
    pub scenario: String,
    /// The scenario file, as the user named it.
    pub file: String,
    /// The staffed group.
    pub group: String,
    /// The goals, as written.
    pub goals: Vec<String>,
    /// Every interval meets every goal under the plan.
    pub met: bool,
    /// The search stopped before it ended (interrupted, or the most rounds).
    pub partial: bool,
    /// Simulations run.
    pub rounds: usize,
    /// Replications per simulation.
    pub replications: u64,
    /// Method of the `stationary` column.
    pub stationary_method: &'static str,
    /// Method of the `modified` column.
    pub modified_method: &'static str,
    /// Server-hours taking calls: the simulated plan.
    pub server_hours: f64,
    /// The same for the stationary plan, where every interval has one.
    pub stationary_server_hours: Option<f64>,
    /// The rows.
    pub intervals: Vec<StaffingInterval>,
    /// The shifts covering the simulated plan, when the group has shift
    /// types.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shift_plan: Option<ShiftPlanSection>,
    /// The caution.
    pub caution: &'static str,
    /// Clock time of the start of the measured period (seconds after
    /// midnight), for labels.
    #[serde(skip)]
    pub clock_start: Option<f64>,
    /// Each goal's figure, bound (in the figure's unit) and share of days
    /// (for a goal on the share of days), for the chart's goal lines.
    #[serde(skip)]
    pub bounds: Vec<(Figure, f64, Option<f64>)>,
    /// The scenario in plain words, for the HTML page.
    #[serde(skip)]
    pub words: String,
    /// Some stream offered to the group redials, which the formula
    /// columns leave out.
    #[serde(skip)]
    pub redials: bool,
}

impl StaffingDocument {
    /// The document of `plan`, the staffing of group `group` of `model`.
    pub fn new(
        model: &Model,
        file: &str,
        group: usize,
        goals: &[Goal],
        references: &[IntervalReference],
        plan: &StaffingPlan,
        shifts: Option<&ShiftPlan>,
    ) -> StaffingDocument {
        let staffed = model.with_schedule(group, &plan.servers).ok();
        let schedule = staffed
            .as_ref()
            .and_then(|m| m.groups[group].schedule.clone());
        let (stationary_method, modified_method) = textbook::reference_methods(model, group);
        let hours = |b: usize| stats::interval_length(model, b) / 3600.0;
        let intervals: Vec<StaffingInterval> = (0..plan.servers.len())
            .map(|b| {
                let start_s = stats::interval_start(model, b);
                let r = references.get(b);
                let judged = |result: &RunResult| judged(model, goals, b, result);
                let goals = judged(&plan.result);
                let start_goals = plan.at_start.as_ref().map(judged).unwrap_or_default();
                StaffingInterval {
                    start_s,
                    end_s: start_s + stats::interval_length(model, b),
                    offered_traffic: r.map_or(f64::NAN, |r| r.load),
                    stationary: r.and_then(|r| r.stationary),
                    modified_offered_traffic: r.map_or(f64::NAN, |r| r.modified_load),
                    modified: r.and_then(|r| r.modified),
                    servers: plan.servers[b],
                    scheduled: schedule
                        .as_ref()
                        .map_or(plan.servers[b], |s| s.scheduled[b]),
                    settled: plan.settled[b],
                    goals,
                    start_servers: plan
                        .rounds
                        .first()
                        .map_or(plan.servers[b], |r| r.servers[b]),
                    start_goals,
                }
            })
            .collect();
        let server_hours = (0..intervals.len())
            .map(|b| f64::from(intervals[b].servers) * hours(b))
            .sum();
        let stationary_server_hours = (0..intervals.len())
            .map(|b| intervals[b].stationary.map(|n| f64::from(n) * hours(b)))
            .sum();
        StaffingDocument {
            scenario: model.title.clone(),
            file: file.to_string(),
            group: model.groups[group].name.clone(),
            goals: goals.iter().map(|g| g.text.clone()).collect(),
            met: plan.met,
            partial: plan.partial,
            rounds: plan.rounds.len(),
            replications: plan.result.replications,
            stationary_method,
            modified_method,
            server_hours,
            stationary_server_hours,
            intervals,
            shift_plan: shifts.map(|p| ShiftPlanSection::new(model, goals, p)),
            caution: CAUTION,
            clock_start: model.plan.clock_start_s,
            bounds: goals.iter().map(|g| (g.figure, g.bound, g.days)).collect(),
            words: super::describe::describe_model(model, file),
            redials: (model.streams.iter())
                .any(|s| s.route.contains(&(group as u32)) && s.retry.is_some()),
        }
    }

    /// Whether every interval has a stationary requirement (then the
    /// search started from the stationary plan).
    fn stationary_everywhere(&self) -> bool {
        self.intervals.iter().all(|r| r.stationary.is_some())
    }

    /// The name of the plan the search started from.
    fn start_name(&self) -> &'static str {
        if self.stationary_everywhere() {
            "stationary plan"
        } else {
            "starting plan"
        }
    }

    /// The measured period in clock times ("08:00-17:00"), when the
    /// scenario gives a clock start.
    fn clock_period(&self) -> Option<String> {
        let end = self.intervals.last()?.end_s;
        self.clock_start.map(|_| {
            format!(
                "{}-{}",
                text::clock_at(self.clock_start, 0.0),
                text::clock_at(self.clock_start, end)
            )
        })
    }

    /// A panel with the x axis in hours (clock time where the scenario
    /// gives a clock start).
    fn panel(&self, what: String, y_label: String, first: bool) -> LineChart {
        let midpoints = if first { "" } else { ", interval midpoints" };
        let mut title = if first {
            format!("{}: {what}", self.scenario)
        } else {
            what
        };
        if let Some(period) = self.clock_period() {
            title.push_str(&format!(", {period}"));
        }
        let x_label = if self.clock_start.is_some() {
            format!("clock time{midpoints}")
        } else {
            format!("time from the end of the warm-up (h:mm){midpoints}")
        };
        let mut c = LineChart::new(title, x_label, y_label);
        if !first {
            // A goal's figure near its bound: the axis spans the data.
            c.size.1 = 420;
            c.y_from_zero = false;
        }
        let start = self.clock_start;
        c.x_ticks = Some(Box::new(move |hours: f64| {
            text::clock_at(start, hours * 3600.0)
        }));
        c
    }

    /// A staircase across the intervals: each interval's value held from
    /// its start to its end; intervals without a value are left out.
    fn staircase(&self, value: impl Fn(&StaffingInterval) -> Option<f64>) -> Vec<(f64, f64)> {
        (self.intervals.iter())
            .filter_map(|r| {
                let v = value(r)?;
                Some([(r.start_s / 3600.0, v), (r.end_s / 3600.0, v)])
            })
            .flatten()
            .collect()
    }

    fn shrinkage(&self) -> bool {
        self.intervals.iter().any(|r| r.scheduled != r.servers)
    }

    fn rows(&self) -> Vec<Vec<String>> {
        let count = |n: Option<u32>| n.map_or("-".into(), |n| n.to_string());
        let mut head = vec![
            "interval".to_string(),
            "offered".into(),
            format!("[{}]", self.stationary_method),
            format!("[{}]", self.modified_method),
            "simulated".into(),
        ];
        if self.shrinkage() {
            head.push("to schedule".into());
        }
        head.extend(self.goals.iter().cloned());
        head.extend(self.goals.iter().map(|g| format!("{g}, days met")));
        head.extend(
            self.goals
                .iter()
                .map(|g| format!("{g}, stationary plan simulated")),
        );
        let mut rows = vec![head];
        for r in &self.intervals {
            let mut row = vec![
                format!(
                    "{}-{}",
                    text::clock_at(self.clock_start, r.start_s),
                    text::clock_at(self.clock_start, r.end_s)
                ),
                text::value(stats::Unit::Erlangs, r.offered_traffic),
                count(r.stationary),
                count(r.modified),
                format!(
                    "{}{}",
                    r.servers,
                    if r.settled { "" } else { " (may be fewer)" }
                ),
            ];
            if self.shrinkage() {
                row.push(r.scheduled.to_string());
            }
            row.extend(r.goals.iter().map(marked));
            row.extend(
                (r.goals.iter()).map(|g| text::value(stats::Unit::Share, g.days_meeting.mean)),
            );
            row.extend(r.start_goals.iter().map(marked));
            rows.push(row);
        }
        rows
    }
}

impl StaffingDocument {
    /// The shifts of the shift plan: start, end, agents, breaks.
    fn shift_list(&self, plan: &ShiftPlanSection) -> Vec<Vec<String>> {
        let clock = |t: f64| text::clock_at(self.clock_start, t);
        let mut rows = vec![vec![
            "start".to_string(),
            "end".into(),
            "agents".into(),
            "breaks".into(),
        ]];
        for s in &plan.shifts {
            let breaks: Vec<String> = (s.breaks_s.iter())
                .map(|&(a, b)| format!("{}-{}", clock(a), clock(b)))
                .collect();
            rows.push(vec![
                clock(s.start_s),
                clock(s.end_s),
                s.agents.to_string(),
                if breaks.is_empty() {
                    "-".into()
                } else {
                    breaks.join(", ")
                },
            ]);
        }
        rows
    }

    /// Per interval under the shift plan: to schedule, on duty, taking
    /// calls, and each goal's figure.
    fn shift_rows(&self, plan: &ShiftPlanSection) -> Vec<Vec<String>> {
        let mut head = vec![
            "interval".to_string(),
            "to schedule".into(),
            "shifts give".into(),
        ];
        if self.shrinkage() {
            head.push("taking calls".into());
        }
        head.extend(
            self.goals
                .iter()
                .map(|g| format!("{g}, shift plan simulated")),
        );
        let mut rows = vec![head];
        for (r, p) in self.intervals.iter().zip(&plan.intervals) {
            let mut row = vec![
                format!(
                    "{}-{}",
                    text::clock_at(self.clock_start, r.start_s),
                    text::clock_at(self.clock_start, r.end_s)
                ),
                p.required.to_string(),
                match p.scheduled - p.required.min(p.scheduled) {
                    0 => p.scheduled.to_string(),
                    over => format!("{} (+{over})", p.scheduled),
                },
            ];
            if self.shrinkage() {
                row.push(p.servers.to_string());
            }
            row.extend(p.goals.iter().map(marked));
            rows.push(row);
        }
        rows
    }

    /// How the intervals fare under the shift plan, in words.
    fn shift_verdict(&self, plan: &ShiftPlanSection) -> String {
        let count = |v: Verdict| {
            (plan.intervals.iter())
                .filter(|p| p.goals.iter().any(|g| g.verdict == v))
                .count()
        };
        let (fails, undecided) = (count(Verdict::Fails), count(Verdict::Undecided));
        let intervals = |n: usize| if n == 1 { "interval" } else { "intervals" };
        match (fails, undecided) {
            (0, 0) => "Every interval meets every goal under the shift plan.".into(),
            (0, u) => format!(
                "No interval fails under the shift plan; {u} {} undecided ({} 95% interval straddles a goal's bound: near the bound, where the fewest servers sit).",
                intervals(u),
                if u == 1 { "its" } else { "their" }
            ),
            (f, _) => format!(
                "NOT MET: {f} {} {} a goal under the shift plan (rows marked FAILS).",
                intervals(f),
                if f == 1 { "fails" } else { "fail" }
            ),
        }
    }

    /// The shift plan's summary line.
    fn shift_summary(&self, plan: &ShiftPlanSection) -> String {
        let h = |x: f64| crate::units::trim_float(x, 1);
        let over = if plan.required_agent_hours > 0.0 {
            format!(
                " ({}% over)",
                h((plan.paid_agent_hours / plan.required_agent_hours - 1.0) * 100.0)
            )
        } else {
            String::new()
        };
        format!(
            "Shift plan: {} paid agent-hours for the {} agent-hours to schedule{over}; {}. {}",
            h(plan.paid_agent_hours),
            h(plan.required_agent_hours),
            if plan.proven_fewest {
                "no cheaper cover of the allowed shift types exists"
            } else {
                "the best cover found within the search's limit, not proven the fewest"
            },
            self.shift_verdict(plan)
        )
    }
}

/// An estimate with its verdict, as the tables show it.
fn marked(g: &IntervalGoal) -> String {
    let mark = match g.verdict {
        Verdict::Holds => "",
        Verdict::Fails => " FAILS",
        Verdict::Undecided => " undecided",
    };
    format!("{}{mark}", text::estimate(g.unit, &g.estimate))
}

impl Document for StaffingDocument {
    fn table(&self) -> String {
        let mut out = format!("{}  ({})\n", self.scenario, self.file);
        out.push_str(&format!(
            "Staffing of {} per interval for {} ({} simulations of {} replications, the same seeds each time)\n",
            self.group,
            self.goals.join(", "),
            self.rounds,
            self.replications
        ));
        out.push_str("Offered load by the forecast; the formulas are the stationary requirement of each interval's load and that of its modified offered load (both approx. for a changing load");
        if self.redials {
            out.push_str(", and counting fresh calls only: the redials the simulation carries are not in them");
        }
        out.push_str("); \"simulated\" is the fewest servers taking calls found by simulation, with what each interval leaves to the next; each goal's figure there with its 95% interval.\n\n");
        out.push_str(&align(&self.rows(), "  "));
        out.push('\n');
        let hours = |h: f64| format!("{} server-hours", crate::units::trim_float(h, 1));
        out.push_str(&format!("Simulated plan: {}", hours(self.server_hours)));
        if let Some(h) = self.stationary_server_hours {
            out.push_str(&format!("; stationary plan: {}", hours(h)));
        }
        out.push('\n');
        if self.partial {
            out.push_str("PARTIAL RESULT: the search stopped before it ended; intervals marked \"may be fewer\" were not tried with one fewer.\n");
        }
        if self.met {
            out.push_str("Every interval meets every goal under the simulated plan.\n");
        } else {
            out.push_str("NOT MET: no staffing tried met every goal in every interval; the table shows the last one tried.\n");
        }
        if let Some(plan) = &self.shift_plan {
            out.push_str("\nShifts from the group's shift types: the fewest paid agent-hours that schedule at least \"to schedule\" in every interval, simulated with the same seeds\n\n");
            out.push_str(&align(&self.shift_list(plan), "  "));
            out.push('\n');
            out.push_str(&align(&self.shift_rows(plan), "  "));
            out.push('\n');
            out.push_str(&self.shift_summary(plan));
            out.push('\n');
        }
        out.push_str(&format!("\nCaution: {CAUTION}\n"));
        out
    }

    fn csv(&self) -> Option<String> {
        let mut head: Vec<String> = [
            "start_s",
            "end_s",
            "offered_traffic",
            "stationary",
            "modified_offered_traffic",
            "modified",
            "servers",
            "scheduled",
            "settled",
        ]
        .into_iter()
        .map(String::from)
        .collect();
        for g in &self.goals {
            head.extend([
                format!("{g} mean"),
                format!("{g} low"),
                format!("{g} high"),
                format!("{g} verdict"),
                format!("{g} days met"),
            ]);
        }
        if self.shift_plan.is_some() {
            head.extend(["shift_scheduled".to_string(), "shift_servers".into()]);
            for g in &self.goals {
                head.extend([
                    format!("shift plan {g} mean"),
                    format!("shift plan {g} low"),
                    format!("shift plan {g} high"),
                    format!("shift plan {g} verdict"),
                ]);
            }
        }
        let opt = |n: Option<u32>| n.map_or(String::new(), |n| n.to_string());
        let rows = self.intervals.iter().enumerate().map(|(b, r)| {
            let mut row = vec![
                text::csv_number(r.start_s),
                text::csv_number(r.end_s),
                text::csv_number(r.offered_traffic),
                opt(r.stationary),
                text::csv_number(r.modified_offered_traffic),
                opt(r.modified),
                r.servers.to_string(),
                r.scheduled.to_string(),
                r.settled.to_string(),
            ];
            for g in &r.goals {
                row.extend([
                    text::csv_number(g.estimate.mean),
                    text::csv_number(g.estimate.low),
                    text::csv_number(g.estimate.high),
                    g.verdict.word().to_string(),
                    text::csv_number(g.days_meeting.mean),
                ]);
            }
            if let Some(p) = self.shift_plan.as_ref().and_then(|p| p.intervals.get(b)) {
                row.extend([p.scheduled.to_string(), p.servers.to_string()]);
                for g in &p.goals {
                    row.extend([
                        text::csv_number(g.estimate.mean),
                        text::csv_number(g.estimate.low),
                        text::csv_number(g.estimate.high),
                        g.verdict.word().to_string(),
                    ]);
                }
            }
            row
        });
        Some(text::csv(std::iter::once(head).chain(rows)))
    }
}

impl Charted for StaffingDocument {
    fn has_chart(&self) -> bool {
        !self.intervals.is_empty()
    }

    /// Load and agents over the day: the forecast's offered load and the
    /// servers of the simulated, stationary and modified-offered-load plans
    /// as staircases (formula plans dashed); then one panel per goal, its
    /// figure per interval under the simulated plan and under the plan the
    /// search started from (both simulated, with 95% bands) against the
    /// goal's bound.
    fn chart(&self) -> Result<String, ChartError> {
        if self.intervals.is_empty() {
            return Err(ChartError::NoData);
        }
        let count = |n: Option<u32>| n.map(f64::from);
        let mut load = self.panel(
            format!("offered load and {} per interval", self.group),
            "offered load (erlangs) and servers".into(),
            true,
        );
        load.series.push(
            Series::new(
                "offered load by the forecast (erlangs)",
                self.staircase(|r| Some(r.offered_traffic)),
            )
            .painted(Paint::Offered),
        );
        load.series.push(
            Series::new(
                "simulated plan: servers taking calls",
                self.staircase(|r| Some(f64::from(r.servers))),
            )
            .painted(Paint::Stream(0)),
        );
        if self.shrinkage() {
            load.series.push(
                Series::new(
                    "simulated plan: servers to schedule (with shrinkage)",
                    self.staircase(|r| Some(f64::from(r.scheduled))),
                )
                .painted(Paint::Stream(3)),
            );
        }
        if let Some(plan) = &self.shift_plan {
            let on_duty: Vec<(f64, f64)> = (self.intervals.iter().zip(&plan.intervals))
                .flat_map(|(r, p)| {
                    let v = f64::from(p.scheduled);
                    [(r.start_s / 3600.0, v), (r.end_s / 3600.0, v)]
                })
                .collect();
            load.series
                .push(Series::new("shift plan: agents on duty", on_duty).painted(Paint::Stream(4)));
        }
        let stationary = self.staircase(|r| count(r.stationary));
        if !stationary.is_empty() {
            load.series.push(
                Series::formula(
                    format!("stationary plan: {}", self.stationary_method),
                    stationary,
                )
                .painted(Paint::Stream(1)),
            );
        }
        let modified = self.staircase(|r| count(r.modified));
        if !modified.is_empty() {
            load.series.push(
                Series::formula(
                    format!("modified-offered-load plan: {}", self.modified_method),
                    modified,
                )
                .painted(Paint::Stream(2)),
            );
        }
        let mut panels = vec![plot::render_svg(&load)?];
        let span = (0.0, self.intervals.last().map_or(0.0, |r| r.end_s / 3600.0));
        let mid = |r: &StaffingInterval| (r.start_s + r.end_s) / 7200.0;
        for (i, (goal, (figure, bound, days))) in self.goals.iter().zip(&self.bounds).enumerate() {
            // A goal on the share of days is judged, and drawn, on that
            // share.
            let ((y_label, scale), line, drawn_at) = match days {
                Some(d) => (
                    ("days meeting the bound (%)".to_string(), 100.0),
                    format!(
                        "{} on {} of days",
                        text::value(figure.unit(), *bound),
                        text::value(stats::Unit::Share, *d)
                    ),
                    *d,
                ),
                None => (
                    plot::axis(*figure),
                    text::value(figure.unit(), *bound),
                    *bound,
                ),
            };
            let mut c = self.panel(format!("Goal {goal} per interval"), y_label, false);
            c.series.push(Series::goal(
                format!("goal {goal} (bound {line})"),
                drawn_at * scale,
                span,
            ));
            let under = |start: bool| -> Vec<(f64, Estimate)> {
                (self.intervals.iter())
                    .filter_map(|r| {
                        let goals = if start { &r.start_goals } else { &r.goals };
                        Some((mid(r), goals.get(i)?.estimate))
                    })
                    .collect()
            };
            c.series.push(
                plot::estimate_series(
                    "under the simulated plan (95% band)".into(),
                    &under(false),
                    scale,
                )
                .painted(Paint::Stream(0)),
            );
            let at_start = under(true);
            if !at_start.is_empty() {
                c.series.push(
                    plot::estimate_series(
                        format!("under the {}, simulated (95% band)", self.start_name()),
                        &at_start,
                        scale,
                    )
                    .painted(Paint::Stream(1)),
                );
            }
            if let Some(plan) = &self.shift_plan {
                let under: Vec<(f64, Estimate)> = (self.intervals.iter().zip(&plan.intervals))
                    .filter_map(|(r, p)| Some((mid(r), p.goals.get(i)?.estimate)))
                    .collect();
                c.series.push(
                    plot::estimate_series(
                        "under the shift plan, simulated (95% band)".into(),
                        &under,
                        scale,
                    )
                    .painted(Paint::Stream(4)),
                );
            }
            panels.push(plot::render_svg(&c)?);
        }
        Ok(plot::stack(&panels))
    }

    /// The staffing as one self-contained HTML page, with its chart when
    /// one is given.
    fn html(&self, chart: Option<&str>) -> String {
        use html::Block;
        let hours = |h: f64| format!("{} server-hours", crate::units::trim_float(h, 1));
        let mut summary = if self.met {
            format!(
                "Every interval meets {} under the simulated plan: {}",
                self.goals.join(", "),
                hours(self.server_hours)
            )
        } else {
            format!(
                "NOT MET: no staffing tried met every goal in every interval; the table shows the last one tried ({})",
                hours(self.server_hours)
            )
        };
        if let Some(h) = self.stationary_server_hours {
            summary.push_str(&format!("; the stationary plan: {}", hours(h)));
        }
        summary.push('.');
        let mut blocks = vec![
            Block::Heading("The scenario in plain words".into()),
            Block::Pre(self.words.clone()),
            Block::Heading(format!("Staffing of {} per interval", self.group)),
            Block::Paragraph(summary),
        ];
        if self.partial {
            blocks.push(Block::Paragraph(
                "PARTIAL RESULT: the search stopped before it ended; intervals marked \"may be fewer\" were not tried with one fewer."
                    .into(),
            ));
        }
        blocks.push(Block::Table(Table {
            title: if self.clock_start.is_some() {
                "Staffing table (clock time)".into()
            } else {
                "Staffing table".into()
            },
            rows: self.rows(),
        }));
        if let Some(plan) = &self.shift_plan {
            blocks.push(Block::Heading("Shift plan".into()));
            blocks.push(Block::Paragraph(self.shift_summary(plan)));
            blocks.push(Block::Table(Table {
                title: "Shifts".into(),
                rows: self.shift_list(plan),
            }));
            blocks.push(Block::Table(Table {
                title: "Per interval under the shift plan".into(),
                rows: self.shift_rows(plan),
            }));
        }
        if let Some(svg) = chart {
            blocks.push(Block::Heading(match self.clock_period() {
                Some(period) => format!("Load and servers over the day, {period}"),
                None => "Load and servers over the day".into(),
            }));
            blocks.push(Block::Svg(svg.to_string()));
        }
        blocks.push(Block::Heading("Method".into()));
        blocks.push(Block::Paragraph(format!(
            "Offered load is the forecast's. The [{}] column is the stationary requirement of each interval's load, \
the [{}] column that of its modified offered load (the interval's mean infinite-server load, Jagerman 1975; \
Jennings, Mandelbaum, Massey and Whitt 1996); both are approximations for a changing load and count fresh calls \
only. \"simulated\" is the fewest servers taking calls found by simulating the whole day ({} simulations of {} \
replications, the same seeds each time, in the manner of Feldman, Mandelbaum, Massey and Whitt 2008): every \
interval short of a goal gets one more, then every other interval is tried with one fewer, so that what each \
interval leaves to the next (callers still waiting, calls in progress) counts. An interval holds when each goal's \
whole 95% interval lies on the right side of its bound, at the run's level with no correction for the number of \
intervals or simulations. The goal columns marked \"stationary plan simulated\" show the plan the search started \
from ({}), simulated with the same seeds.",
            self.stationary_method,
            self.modified_method,
            self.rounds,
            self.replications,
            if self.stationary_everywhere() {
                "the stationary requirement of every interval"
            } else {
                "the stationary requirement, or one more than the load where no formula covers the goals"
            }
        )));
        html::simulated_page(
            &self.scenario,
            &format!(
                "busyhour size --per-interval of {} in {}",
                self.group, self.file
            ),
            blocks,
            &[],
        )
    }
}

/// A duration as a scenario writes it: "8h", "8h30m", "30m", "45s".
fn duration_text(seconds: f64) -> String {
    let s = seconds.round() as u64;
    let (h, m, sec) = (s / 3600, s % 3600 / 60, s % 60);
    let mut out = String::new();
    if h > 0 {
        out.push_str(&format!("{h}h"));
    }
    if m > 0 {
        out.push_str(&format!("{m}m"));
    }
    if sec > 0 || out.is_empty() {
        out.push_str(&format!("{sec}s"));
    }
    out
}

impl StaffingDocument {
    /// The shift plan as the scenario's `shifts` list.
    fn shifts_value(&self, plan: &ShiftPlanSection) -> toml::Value {
        let clock = |t: f64| crate::units::format_time_of_day(self.clock_start.unwrap_or(0.0) + t);
        let shifts = (plan.shifts.iter())
            .map(|s| {
                let mut t = toml::Table::new();
                t.insert("start".into(), clock(s.start_s).into());
                t.insert("length".into(), duration_text(s.end_s - s.start_s).into());
                t.insert("agents".into(), i64::from(s.agents).into());
                if !s.breaks_s.is_empty() {
                    let breaks = (s.breaks_s.iter())
                        .map(|&(a, b)| {
                            let mut t = toml::Table::new();
                            t.insert("after".into(), duration_text(a - s.start_s).into());
                            t.insert("length".into(), duration_text(b - a).into());
                            toml::Value::Table(t)
                        })
                        .collect();
                    t.insert("breaks".into(), toml::Value::Array(breaks));
                }
                toml::Value::Table(t)
            })
            .collect();
        toml::Value::Array(shifts)
    }
}

/// A staffing plan that cannot be written back into its scenario.
#[derive(Debug, thiserror::Error)]
pub enum WriteBackError {
    /// The scenario's text is not TOML (it was read once already, so the
    /// file changed meanwhile).
    #[error("cannot read the scenario again: {0}")]
    Parse(#[from] toml::de::Error),
    /// Something the staffing needs is not in the file.
    #[error("the scenario has no {0}")]
    Missing(String),
    /// The edited scenario cannot be written as TOML.
    #[error("cannot write the scenario: {0}")]
    Serialise(#[from] toml::ser::Error),
}

impl StaffingDocument {
    /// The scenario `original` (the file's text) with the staffed group's
    /// `servers` replaced by the simulated plan's scheduled numbers, one per
    /// reporting interval, and its `interval` set to `[simulation]`'s (as
    /// the file writes it); a shrinkage list becomes one entry per
    /// reporting interval (`shrinkage`, one share per interval of the new
    /// schedule, in percent), a single shrinkage is kept. Everything else
    /// as the file had it; its comments are not kept. The file starts with
    /// comments: what wrote it, `command`, and the caution.
    ///
    /// # Errors
    ///
    /// The text is not TOML, or has no such group or no reporting interval.
    pub fn scenario_with_plan(
        &self,
        original: &str,
        shrinkage: &[f64],
        command: &str,
    ) -> Result<String, WriteBackError> {
        let mut table: toml::Table = original.parse()?;
        let interval = table
            .get("simulation")
            .and_then(|s| s.get("interval"))
            .cloned()
            .ok_or_else(|| WriteBackError::Missing("interval in [simulation]".into()))?;
        let group = table
            .get_mut("group")
            .and_then(toml::Value::as_array_mut)
            .and_then(|groups| {
                groups.iter_mut().find_map(|g| {
                    let g = g.as_table_mut()?;
                    (g.get("name").and_then(toml::Value::as_str) == Some(&self.group)).then_some(g)
                })
            })
            .ok_or_else(|| WriteBackError::Missing(format!("[[group]] named {}", self.group)))?;
        if let Some(plan) = &self.shift_plan {
            group.remove("servers");
            group.insert("shifts".into(), self.shifts_value(plan));
        } else {
            let scheduled: Vec<toml::Value> = (self.intervals.iter())
                .map(|r| toml::Value::Integer(i64::from(r.scheduled)))
                .collect();
            group.insert("servers".into(), toml::Value::Array(scheduled));
        }
        group.insert("interval".into(), interval);
        if group.get("shrinkage").is_some_and(toml::Value::is_array) {
            let shares = (shrinkage.iter())
                .map(|s| {
                    toml::Value::String(format!("{}%", crate::units::trim_float(s * 100.0, 6)))
                })
                .collect();
            group.insert("shrinkage".into(), toml::Value::Array(shares));
        }
        let body = toml::to_string(&table)?;
        let one_line = |s: &str| s.replace(['\n', '\r'], " ");
        Ok(format!(
            "# {}: {} staffed per interval {}\n\
# Written by: {}\n\
# {}\n\
# Caution: {CAUTION}\n\
# The comments of the original scenario were not kept; its values were.\n\n{body}",
            one_line(&self.scenario),
            one_line(&self.group),
            crate::files::STAFFED_SCENARIO_MARK,
            one_line(command),
            match &self.shift_plan {
                Some(_) => format!(
                    "The group's agents work the shift plan's shifts, which cover the simulated plan's servers to schedule ({}).",
                    one_line(&self.goals.join(", "))
                ),
                None => format!(
                    "The group's servers are the simulated plan's servers to schedule, one per reporting interval ({}).",
                    one_line(&self.goals.join(", "))
                ),
            },
        ))
    }
}
