//! The document of `size`: the answer, each goal's verdict and estimate at
//! the answer and at one server fewer, and every size tried, built once
//! from a [`SizeResult`]. The JSON, the table and the HTML page render it.

use super::describe::describe_model;
use super::figures::FigureValue;
use super::json::verdict_word;
use super::plot::{self, ChartError, Line, LineChart, Markers, Paint, Series};
use super::text::{self, Table, align};
use super::{CAUTION, Charted, Document, html};
use crate::experiment::size::{Evaluation, Goal, SizeResult, Verdict};
use crate::scenario::Model;
use crate::stats::{Estimate, Figure, Scope, Unit};
use serde::{Serialize, Serializer};

fn figure_name<S: Serializer>(f: &Figure, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(f.name())
}

/// A goal as the user gave it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SizeGoal {
    /// As written: "loss<=1%".
    pub goal: String,
    /// The figure's name.
    #[serde(serialize_with = "figure_name")]
    pub figure: Figure,
    /// True for `<=`, false for `>=`.
    pub at_most: bool,
    /// The bound, in the figure's unit (a share, seconds, erlangs or a ratio).
    pub bound: f64,
    /// A goal on the share of days: the least share of replications (days)
    /// whose own figures meet the bound; absent for a goal on the long-run
    /// figure.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub days: Option<f64>,
    /// Whether the goal covers several streams or groups (the table then
    /// names the one that decides).
    #[serde(skip)]
    pub several: bool,
}

impl SizeGoal {
    /// "80%" or "80% on 90% of days".
    fn bound_words(&self) -> String {
        let bound = text::value(self.figure.unit(), self.bound);
        match self.days {
            Some(d) => format!("{bound} on {} of days", text::value(Unit::Share, d)),
            None => bound,
        }
    }
}

/// The stream or group whose figure decides a goal.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Owner {
    /// `{"stream": name}`.
    Stream(String),
    /// `{"group": name}`.
    Group(String),
}

/// One goal at one size.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GoalAtSize {
    /// The goal as written.
    pub goal: String,
    /// "holds", "fails" or "undecided".
    #[serde(serialize_with = "verdict_word")]
    pub verdict: Verdict,
    /// The deciding estimate (the worst of the figures the goal covers),
    /// with the interval of the verdict's level; for a goal on the share of
    /// days, the long-run figure beside the share the verdict is on.
    pub estimate: FigureValue,
    /// Whose figure that is.
    pub decided_by: Option<Owner>,
    /// Share of replications (periods) whose own figure met the bound, with
    /// its exact 95% interval (at the verdict's level for a goal on the
    /// share of days, which is judged on it).
    pub periods_meeting: Estimate,
}

/// The goals at one size.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SizeEvaluation {
    /// Servers on the sized group.
    pub servers: u32,
    /// Replications run at that size.
    pub replications: u64,
    /// "fails" if any goal fails, else "undecided" if any is, else "holds".
    #[serde(serialize_with = "verdict_word")]
    pub verdict: Verdict,
    /// Each goal, in the order given.
    pub goals: Vec<GoalAtSize>,
    /// The warnings of the runs judged at that size (a visible transient,
    /// mean waits resting on a few replications), as sentences.
    pub warnings: Vec<String>,
}

/// One size the search tried.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Tried {
    /// Servers.
    pub servers: u32,
    /// Replications run there.
    pub replications: u64,
    /// Its verdict.
    #[serde(serialize_with = "verdict_word")]
    pub verdict: Verdict,
}

/// What `size` found.
#[derive(Debug, Clone, Serialize)]
pub struct SizeDocument {
    /// The scenario's title.
    pub scenario: String,
    /// The scenario file, as the user named it.
    pub file: String,
    /// The sized group.
    pub group: String,
    /// The goals.
    pub goals: Vec<SizeGoal>,
    /// The fewest servers meeting every goal; null when none was found.
    pub servers: Option<u32>,
    /// The closed-form answer, when the formula column covers every goal.
    pub formula_servers: Option<u32>,
    /// One server fewer could not be decided: the answer may be one more
    /// than needed.
    pub uncertain: bool,
    /// Most looks at one size (each verdict's level is 1 - 0.05 / looks).
    pub looks: u32,
    /// Interrupted: the search did not finish.
    pub partial: bool,
    /// The goals at the answer.
    pub at_answer: Option<SizeEvaluation>,
    /// The goals at one server fewer.
    pub one_fewer: Option<SizeEvaluation>,
    /// Every size tried, in order.
    pub tried: Vec<Tried>,
    /// Wall-clock seconds.
    pub wall_s: f64,
    /// The safety caution.
    pub caution: &'static str,
    /// The largest size searched.
    #[serde(skip)]
    pub limit: u32,
    /// The scenario in plain words.
    #[serde(skip)]
    pub words: String,
    /// What the sized group's servers are, in words: "agents" for a group
    /// where calls queue, "servers" otherwise.
    #[serde(skip)]
    pub what: &'static str,
    /// Every size evaluated, fewest first: per goal, the deciding estimate
    /// with the interval it was judged on (for the chart).
    #[serde(skip)]
    pub by_size: Vec<(u32, Vec<Estimate>)>,
}

impl SizeDocument {
    /// Each warning of the runs at the answer and at one server fewer, with
    /// the size it was seen at.
    fn judged_warnings(&self) -> Vec<(&String, &SizeEvaluation)> {
        [&self.at_answer, &self.one_fewer]
            .into_iter()
            .flatten()
            .flat_map(|e| e.warnings.iter().map(move |w| (w, e)))
            .collect()
    }

    /// The document of a sizing of `model` (read from `file`).
    pub fn new(model: &Model, file: &str, r: &SizeResult) -> SizeDocument {
        let owner = |scope: Scope| match scope {
            Scope::Stream(s) => Some(Owner::Stream(model.streams[s].name.clone())),
            Scope::Group(g) => Some(Owner::Group(model.groups[g].name.clone())),
            _ => None,
        };
        let evaluation = |e: &Evaluation| SizeEvaluation {
            servers: e.servers,
            replications: e.outcome.replications,
            verdict: e.verdict(),
            warnings: e.outcome.warnings.iter().map(|w| w.to_string()).collect(),
            goals: (r
                .goals
                .iter()
                .zip(&e.goals)
                .zip(&e.periods)
                .zip(&e.deciding))
            .map(|(((g, (verdict, est)), periods), deciding)| {
                // A goal on the share of days is judged on the share; the
                // long-run figure is shown beside it.
                let (figure, periods, deciding) = match g.days {
                    None => (*est, *periods, *deciding),
                    Some(_) => {
                        let long_run = Goal {
                            days: None,
                            ..g.clone()
                        };
                        let (_, figure, worst) = long_run.judge_targets(&e.outcome, r.looks);
                        (figure, *est, worst)
                    }
                };
                GoalAtSize {
                    goal: g.text.clone(),
                    verdict: *verdict,
                    estimate: FigureValue::new(g.figure, figure, None),
                    decided_by: deciding.and_then(|f| owner(f.scope)),
                    periods_meeting: periods,
                }
            })
            .collect(),
        };
        SizeDocument {
            scenario: model.title.clone(),
            file: file.to_string(),
            group: model.groups[r.group].name.clone(),
            goals: (r.goals.iter())
                .map(|g| SizeGoal {
                    goal: g.text.clone(),
                    figure: g.figure,
                    at_most: g.at_most,
                    bound: g.bound,
                    days: g.days,
                    several: g.targets.len() > 1,
                })
                .collect(),
            servers: r.servers,
            formula_servers: r.formula_servers,
            uncertain: r.uncertain,
            looks: r.looks,
            partial: r.partial,
            at_answer: r.at_answer.as_ref().map(evaluation),
            one_fewer: r.one_fewer.as_ref().map(evaluation),
            tried: (r.tried.iter())
                .map(|&(servers, replications, verdict)| Tried {
                    servers,
                    replications,
                    verdict,
                })
                .collect(),
            wall_s: r.wall_s,
            caution: CAUTION,
            limit: r.limit,
            words: describe_model(model, file),
            what: if model.groups[r.group].queue == crate::scenario::Queue::None {
                "servers"
            } else {
                "agents"
            },
            by_size: r.by_size.clone(),
        }
    }

    /// "one agent fewer", "one server fewer".
    fn one_fewer_words(&self) -> String {
        format!("one {} fewer", self.what.trim_end_matches('s'))
    }

    /// Each verdict's confidence in percent (Bonferroni over the looks).
    fn level(&self) -> f64 {
        100.0 - 5.0 / f64::from(self.looks)
    }

    /// The goal table: each goal at the answer and at one server (agent)
    /// fewer.
    pub fn goal_rows(&self) -> Vec<Vec<String>> {
        let cols: Vec<&SizeEvaluation> = [self.at_answer.as_ref(), self.one_fewer.as_ref()]
            .into_iter()
            .flatten()
            .collect();
        let mut head = vec!["goal".to_string()];
        for e in &cols {
            head.push(format!("at {} {}", e.servers, self.what));
            head.push(String::new());
        }
        let mut rows = vec![head];
        for (i, goal) in self.goals.iter().enumerate() {
            let unit = goal.figure.unit();
            let on_days = goal.days.is_some();
            let mut row = vec![format!("{} (bound {})", goal.goal, goal.bound_words())];
            for e in &cols {
                let at = &e.goals[i];
                // Name the stream or group whose figure decides, when the
                // goal covers several.
                let whose = match (&at.decided_by, goal.several) {
                    (Some(Owner::Stream(n) | Owner::Group(n)), true) => format!(" ({n})"),
                    _ => String::new(),
                };
                row.push(format!(
                    "{}{whose}",
                    text::estimate(unit, &at.estimate.estimate)
                ));
                // A goal on the share of days has its verdict on the row
                // of that share.
                row.push(if on_days {
                    String::new()
                } else {
                    verdict_cell(at.verdict)
                });
            }
            rows.push(row);
            let label = match goal.days {
                Some(d) => format!(
                    "  days meeting it (one per replication; goal: at least {})",
                    text::value(Unit::Share, d)
                ),
                None => "  periods meeting it (one per replication)".to_string(),
            };
            let mut row = vec![label];
            for e in &cols {
                let at = &e.goals[i];
                row.push(text::estimate(Unit::Share, &at.periods_meeting));
                row.push(if on_days {
                    verdict_cell(at.verdict)
                } else {
                    String::new()
                });
            }
            rows.push(row);
        }
        rows
    }
}

/// A verdict as the goal table shows it (a failure in capitals).
fn verdict_cell(v: Verdict) -> String {
    match v {
        Verdict::Holds => "holds",
        Verdict::Fails => "FAILS",
        Verdict::Undecided => "undecided",
    }
    .into()
}

impl Charted for SizeDocument {
    fn has_chart(&self) -> bool {
        !self.by_size.is_empty()
    }

    /// One panel per goal: its deciding figure at every size tried, with
    /// the interval its verdict was judged on, the bound as a goal line and
    /// the answer shaded.
    fn chart(&self) -> Result<String, ChartError> {
        let xs = (self.by_size.first().map(|s| f64::from(s.0)))
            .zip(self.by_size.last().map(|s| f64::from(s.0)));
        let Some((x0, x1)) = xs else {
            return Err(ChartError::NoData);
        };
        let mut panels = Vec::new();
        for (i, goal) in self.goals.iter().enumerate() {
            let (y_label, scale) = match goal.days {
                Some(_) => ("days meeting the bound (%)".to_string(), 100.0),
                None => plot::axis(goal.figure),
            };
            let what = format!("{} against {} on {}", goal.goal, self.what, self.group);
            let mut c = LineChart::new(
                if i == 0 {
                    format!("{}: {what}", self.scenario)
                } else {
                    what
                },
                format!("{} on {}", self.what, self.group),
                y_label,
            );
            c.x_ticks = Some(Box::new(|x: f64| {
                if (x - x.round()).abs() < 1e-6 {
                    format!("{}", x.round())
                } else {
                    String::new()
                }
            }));
            let pts: Vec<(f64, Estimate)> = (self.by_size.iter())
                .filter_map(|(n, e)| Some((f64::from(*n), *e.get(i)?)))
                .collect();
            let whose = if goal.several {
                ", the worst stream or group"
            } else {
                ""
            };
            // The goal line spans half a size beyond the first and last
            // sizes, which sets the x axis.
            c.series.push(Series::goal(
                format!("goal {} (bound {})", goal.goal, goal.bound_words()),
                goal.days.unwrap_or(goal.bound) * scale,
                (x0 - 0.5, x1 + 0.5),
            ));
            // Sizes are whole numbers: a dot and whisker at each size tried.
            c.series.push(
                plot::estimate_series(
                    format!(
                        "simulated{whose} ({}% interval, as judged)",
                        crate::units::trim_float(self.level(), 2)
                    ),
                    &pts,
                    scale,
                )
                .painted(Paint::Stream(0))
                .drawn(Line::Dots),
            );
            if let Some(n) = self.servers {
                c.markers.push(Markers {
                    name: format!("the answer: {n} {}", self.what),
                    spans: vec![(f64::from(n) - 0.3, f64::from(n) + 0.3)],
                });
            }
            panels.push(plot::render_svg(&c)?);
        }
        if panels.is_empty() {
            return Err(ChartError::NoData);
        }
        Ok(plot::stack(&panels))
    }

    /// The sizing as one self-contained HTML page, with its chart when one
    /// is given.
    fn html(&self, chart: Option<&str>) -> String {
        use html::Block;
        let answer = match self.servers {
            Some(n) => format!("Answer: {n} {} on {}.", self.what, self.group),
            None => format!(
                "No size of {} up to {} {} meets every goal.",
                self.group, self.limit, self.what
            ),
        };
        let formula = match self.formula_servers {
            Some(f) => format!("The closed form alone says {f}."),
            None => "No closed form covers these goals.".into(),
        };
        let mut blocks = vec![
            Block::Heading("The scenario in plain words".into()),
            Block::Pre(self.words.clone()),
            Block::Heading("Answer".into()),
            Block::Paragraph(format!("{answer} {formula}")),
        ];
        if self.uncertain {
            blocks.push(Block::Paragraph(format!(
                "At {} the goals could not be decided within the replication cap: the answer is the \
smallest size shown to meet them and may be one more than needed.",
                self.one_fewer_words()
            )));
        }
        blocks.push(Block::Table(Table {
            title: format!("Goals at the answer and at {}", self.one_fewer_words()),
            rows: self.goal_rows(),
        }));
        let mut tried = vec![vec![
            self.what.to_string(),
            "replications".into(),
            "verdict".into(),
        ]];
        tried.extend(self.tried.iter().map(|t| {
            vec![
                t.servers.to_string(),
                t.replications.to_string(),
                t.verdict.word().to_string(),
            ]
        }));
        blocks.push(Block::Table(Table {
            title: "Sizes tried".into(),
            rows: tried,
        }));
        for (w, e) in self.judged_warnings() {
            blocks.push(Block::Paragraph(format!(
                "Warning at {} {}: {w}",
                e.servers, self.what
            )));
        }
        if let Some(svg) = chart {
            blocks.push(Block::Svg(svg.to_string()));
        }
        blocks.push(Block::Paragraph(format!(
            "A goal holds at a size when its whole interval lies on the right side of the bound; with up to {} looks \
at one size each verdict uses a {:.2}% interval (Bonferroni), so the chance of any wrong verdict stays at most 5%.",
            self.looks,
            self.level()
        )));
        html::simulated_page(
            &self.scenario,
            &format!("busyhour size of {} in {}", self.group, self.file),
            blocks,
            &[],
        )
    }
}

impl Document for SizeDocument {
    fn table(&self) -> String {
        let mut out = format!(
            "Sizing group \"{}\" of {}  ({})\n",
            self.group, self.scenario, self.file
        );
        let goals: Vec<&str> = self.goals.iter().map(|g| g.goal.as_str()).collect();
        out.push_str(&format!("Goals: {}\n", goals.join(", ")));
        out.push_str(&format!(
            "A goal holds at a size when its whole interval lies on the right side of the bound; with up to {} looks \
at one size the intervals are {:.2}% (Bonferroni), 95% overall. The goal is judged on the long-run figure \
(shares pooled over all calls); \"periods meeting it\" is the share of replications, each one measured period long, \
whose own figure met the bound (95% exact interval).\n",
            self.looks,
            self.level()
        ));
        if self.goals.iter().any(|g| g.days.is_some()) {
            out.push_str(
                "A goal \"on X of days\" is judged instead on the share of replications (days) whose own figures met \
the bound, with its exact interval at the verdict's level: it holds when that whole interval is at least X.\n",
            );
        }
        out.push('\n');
        let undecided = self
            .tried
            .last()
            .is_some_and(|t| t.verdict == Verdict::Undecided);
        match self.servers {
            Some(n) => out.push_str(&format!("Answer: {n} {}", self.what)),
            None if self.partial => out.push_str("No answer: the search was interrupted"),
            None if undecided => out.push_str(&format!(
                "No answer: up to {} {} the goals could not be decided within the replication cap \
(raise --decide-within)",
                self.limit, self.what
            )),
            None => out.push_str(&format!(
                "No answer: no size up to {} {} meets every goal",
                self.limit, self.what
            )),
        }
        match self.formula_servers {
            Some(f) => out.push_str(&format!("   (closed form alone: {f})\n")),
            None => out.push_str("   (no closed form covers these goals)\n"),
        }
        if self.uncertain {
            out.push_str(&format!(
                "Note: at {} the goals could not be decided within the replication cap; \
the answer is the smallest size shown to meet them, and may be one more than needed.\n",
                self.one_fewer_words()
            ));
        }
        let rows = self.goal_rows();
        if rows.len() > 1 {
            out.push('\n');
            out.push_str(&align(&rows, "  "));
        }
        let tried: Vec<String> = (self.tried.iter())
            .map(|t| {
                format!(
                    "{} ({} reps, {})",
                    t.servers,
                    t.replications,
                    t.verdict.word()
                )
            })
            .collect();
        out.push_str(&format!("\nSizes tried: {}\n", tried.join(", ")));
        for (w, e) in self.judged_warnings() {
            out.push_str(&format!("Warning at {} {}: {w}\n", e.servers, self.what));
        }
        out.push_str(&format!("Took {:.2} s.\nCaution: {CAUTION}\n", self.wall_s));
        out
    }
}
