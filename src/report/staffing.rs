//! The document of `size --per-interval`: the staffing table (per
//! interval, the forecast load, the stationary formula's requirement, the
//! modified-offered-load requirement, the simulated requirement and each
//! goal's figure there with its 95% interval), built once from a
//! [`StaffingPlan`]. The JSON, the table and the CSV render it.

use super::json::verdict_word;
use super::text::{self, align};
use super::{CAUTION, Document};
use crate::experiment::size::{Goal, Verdict};
use crate::experiment::staffing::{self, StaffingPlan};
use crate::scenario::Model;
use crate::stats::{self, Estimate};
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
    /// The caution.
    pub caution: &'static str,
    /// Clock time of the start of the measured period (seconds after
    /// midnight), for labels.
    #[serde(skip)]
    pub clock_start: Option<f64>,
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
                let judged = |result: &crate::experiment::RunResult| {
                    staffing::interval_goals(model, goals, b)
                        .unwrap_or_default()
                        .iter()
                        .map(|g| {
                            let (verdict, estimate, _) = g.judge_targets(result, 1);
                            IntervalGoal {
                                goal: g.text.clone(),
                                verdict,
                                estimate,
                            }
                        })
                        .collect::<Vec<_>>()
                };
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
            caution: CAUTION,
            clock_start: model.plan.clock_start_s,
        }
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
            for g in r.goals.iter().chain(&r.start_goals) {
                let unit = (crate::stats::Figure::from_name(goal_figure(&g.goal)))
                    .map_or(stats::Unit::Ratio, |f| f.unit());
                let mark = match g.verdict {
                    Verdict::Holds => "",
                    Verdict::Fails => " FAILS",
                    Verdict::Undecided => " undecided",
                };
                row.push(format!("{}{mark}", text::estimate(unit, &g.estimate)));
            }
            rows.push(row);
        }
        rows
    }
}

/// The figure name of a goal as written: "office.service_level>=80%" ->
/// "service_level".
fn goal_figure(goal: &str) -> &str {
    let left = goal.split(['<', '>']).next().unwrap_or(goal).trim();
    left.rsplit('.').next().unwrap_or(left).trim()
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
        out.push_str("Offered load by the forecast; the formulas are the stationary requirement of each interval's load and that of its modified offered load (both approx. for a changing load); \"simulated\" is the fewest servers taking calls found by simulation, with what each interval leaves to the next; each goal's figure there with its 95% interval.\n\n");
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
            ]);
        }
        let opt = |n: Option<u32>| n.map_or(String::new(), |n| n.to_string());
        let rows = self.intervals.iter().map(|r| {
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
                ]);
            }
            row
        });
        Some(text::csv(std::iter::once(head).chain(rows)))
    }
}
