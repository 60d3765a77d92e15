//! The document of `sweep`, and of `merge` of sweep parts: one run document
//! per step, the columns the table and chart show, and the goal lines of
//! the chart, built once from the finished steps. The JSON, the table, the
//! CSV, the HTML page and the chart render it.

use super::describe::describe_model;
use super::figures::{FigureSet, FigureValue};
use super::json::verdict_word;
use super::plot::{self, ChartError, LineChart, Paint, Series};
use super::run::RunDocument;
use super::text::{self, Table, align};
use super::{CAUTION, Charted, Document, html};
use crate::experiment::size::{Goal, Verdict, paired_difference};
use crate::experiment::sweep::{Step, Sweep};
use crate::scenario::Model;
use crate::stats::{Estimate, Figure, Scope, Unit};
use crate::units::trim_float;
use serde::{Serialize, Serializer};

/// One step of a sweep.
#[derive(Debug, Clone, Serialize)]
pub struct SweepStep {
    /// The swept value: a load scale, or servers on the swept group.
    pub value: f64,
    /// The servers on the swept group at this step, in a grid of load
    /// scale against servers.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub servers: Option<u32>,
    /// The outer setting's value at this step, in a grid of two settings.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub outer_value: Option<f64>,
    /// The run at this step.
    pub result: RunDocument,
    /// Each `--goal`'s verdict at this step (95% interval, one look), in the
    /// order the goals were given.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub goals: Vec<StepGoal>,
    /// The offered traffic of the step's model (first attempts, E; a call
    /// holding several servers counts each; finite sources left out), for
    /// the table.
    #[serde(skip)]
    pub offered_traffic: f64,
}

/// How far the goals hold at one size of a grid.
#[derive(Debug, Clone, Serialize)]
pub struct GridGoals {
    /// Servers on the swept group.
    pub servers: u32,
    /// The last load scale, from the lightest, up to which every goal
    /// holds at this size; null when the lightest already misses one.
    pub goals_hold_through: Option<f64>,
}

/// One goal's verdict at one step of a sweep.
#[derive(Debug, Clone, Serialize)]
pub struct StepGoal {
    /// As written: "loss<=1%".
    pub goal: String,
    /// "holds", "fails" or "undecided": whether the whole 95% interval of
    /// every figure the goal bounds lies on the right side, the wrong side,
    /// or straddles the bound.
    #[serde(serialize_with = "verdict_word")]
    pub verdict: Verdict,
}

/// Where a column's figure lives: the whole-period figures of a stream or
/// a group, by index.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Place {
    /// A stream.
    Stream(usize),
    /// A group.
    Group(usize),
}

/// A figure the table and the chart show at every step.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Column {
    /// Whose figure.
    pub place: Place,
    /// Which figure.
    pub figure: Figure,
}

/// A goal line across the chart.
#[derive(Debug, Clone, PartialEq)]
pub struct GoalLine {
    /// As written: "loss<=1%".
    pub text: String,
    /// The figure it bounds.
    pub figure: Figure,
    /// The bound, in the figure's unit.
    pub bound: f64,
}

fn figure_names<S: Serializer>(figures: &[Figure], s: S) -> Result<S::Ok, S::Error> {
    s.collect_seq(figures.iter().map(|f| f.name()))
}

/// What a sweep found.
#[derive(Debug, Clone, Serialize)]
pub struct SweepDocument {
    /// The scenario file, as the user named it (or as the parts record it).
    pub file: String,
    /// What was swept: "load scale (x forecast)", "servers on trunks".
    pub swept: String,
    /// Interrupted: only the finished steps are given.
    pub partial: bool,
    /// With `--goal`: the last swept value, counted from the easy end (the
    /// lightest load, or the most servers), up to which every step meets
    /// every goal; null when the easiest step already misses one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub goals_hold_through: Option<Option<f64>>,
    /// In a grid with `--goal`: per size of the swept group, the load scale
    /// up to which every goal holds.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub goals_by_servers: Vec<GridGoals>,
    /// *With `--goal`, sweeping a setting*: the values at which every goal
    /// holds (a setting has no easier direction to hold "through").
    #[serde(skip_serializing_if = "Option::is_none")]
    pub goals_met_at: Option<Vec<f64>>,
    /// In a grid: the group whose servers are swept.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub grid_group: Option<String>,
    /// In a grid of two settings: the outer setting (key path and unit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub outer_setting: Option<String>,
    /// *With `--goal`, in a grid of two settings*: the points `[outer,
    /// inner]` at which every goal holds.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub goals_met_at_points: Option<Vec<[f64; 2]>>,
    /// The figures `--figure` chose, when it was given: each step's result
    /// then carries only these.
    #[serde(skip_serializing_if = "Vec::is_empty", serialize_with = "figure_names")]
    pub figures: Vec<Figure>,
    /// Every step, in order.
    pub steps: Vec<SweepStep>,
    /// The safety caution.
    pub caution: &'static str,
    /// The scenario's title.
    #[serde(skip)]
    pub scenario: String,
    /// The figures the table and the chart show.
    #[serde(skip)]
    pub columns: Vec<Column>,
    /// Goal lines for the chart.
    #[serde(skip)]
    pub goals: Vec<GoalLine>,
    /// The scenario in plain words.
    #[serde(skip)]
    pub words: String,
    /// Whether the swept value is load (more is harder) or servers (more is
    /// easier).
    #[serde(skip)]
    pub load_swept: bool,
    /// A setting of the file is swept (the table's title says so).
    #[serde(skip)]
    pub setting: bool,
    /// Per column, the change of its figure from the first step to the
    /// last, as a paired difference over the common seeds (95%); `None`
    /// where a step does not report it.
    #[serde(skip)]
    pub change: Vec<Option<Estimate>>,
}

impl SweepDocument {
    /// The document of the finished `steps` of a sweep of `model` (read from
    /// `file`) over `swept`. `figures` are the chosen figures (empty: every
    /// figure in the JSON and CSV, and each stream's loss and service level
    /// and each group's occupancy in the table and chart); `goals` are
    /// judged at every step and drawn on the chart.
    pub fn new(
        model: &Model,
        file: &str,
        swept: &Sweep,
        steps: &[Step],
        partial: bool,
        figures: &[Figure],
        goals: &[Goal],
    ) -> SweepDocument {
        let ends = steps.first().zip(steps.last());
        let steps: Vec<SweepStep> = (steps.iter().enumerate())
            .map(|(i, st)| {
                let mut result = RunDocument::new(&st.model, &st.outcome, file);
                if !figures.is_empty() {
                    result.keep_figures(figures);
                }
                SweepStep {
                    value: st.value,
                    servers: swept.servers_at(i),
                    outer_value: swept.outer_at(i),
                    result,
                    goals: (goals.iter())
                        .map(|g| StepGoal {
                            goal: g.text.clone(),
                            verdict: g.judge_outcome(&st.outcome, 1).0,
                        })
                        .collect(),
                    // Busy servers offered: a call holding several
                    // servers counts each (channel-erlangs).
                    offered_traffic: (st.model.streams.iter())
                        .filter_map(|s| {
                            Some(s.offered_traffic(st.model.plan.length_s)? * f64::from(s.units))
                        })
                        .sum(),
                }
            })
            .collect();
        let shown = |c: &Column| {
            !figures.is_empty()
                || matches!(
                    (c.place, c.figure),
                    (Place::Stream(_), Figure::Loss | Figure::ServiceLevel)
                        | (Place::Group(_), Figure::Occupancy)
                )
        };
        let columns: Vec<Column> = steps
            .first()
            .map(|st| {
                let places = (st.result.streams.iter().enumerate())
                    .map(|(s, set)| (Place::Stream(s), set))
                    .chain(
                        (st.result.groups.iter().enumerate())
                            .map(|(g, set)| (Place::Group(g), set)),
                    );
                places
                    .flat_map(|(place, set)| {
                        set.figures.iter().map(move |v| Column {
                            place,
                            figure: v.figure,
                        })
                    })
                    .filter(shown)
                    .collect()
            })
            .unwrap_or_default();
        let change = (columns.iter())
            .map(|c: &Column| {
                let (first, last) = ends?;
                let scope = match c.place {
                    Place::Stream(s) => Scope::Stream(s),
                    Place::Group(g) => Scope::Group(g),
                };
                let a = first.outcome.index_of(scope, c.figure)?;
                let b = last.outcome.index_of(scope, c.figure)?;
                Some(paired_difference(&first.outcome, &last.outcome, a, b))
            })
            .collect();
        let load_swept = swept.scales_load();
        let grid = matches!(swept, Sweep::Grid { .. });
        let setting = swept.is_setting();
        let goals_hold_through =
            (!goals.is_empty() && !grid && !setting).then(|| hold_through(&steps, load_swept));
        let outer_setting = swept.outer_label();
        let holds = |st: &&SweepStep| st.goals.iter().all(|g| g.verdict == Verdict::Holds);
        let goals_met_at_points = (!goals.is_empty() && outer_setting.is_some()).then(|| {
            (steps.iter())
                .filter(holds)
                .map(|st| [st.outer_value.unwrap_or(f64::NAN), st.value])
                .collect()
        });
        let goals_met_at = (!goals.is_empty() && setting && outer_setting.is_none()).then(|| {
            (steps.iter())
                .filter(|st| st.goals.iter().all(|g| g.verdict == Verdict::Holds))
                .map(|st| st.value)
                .collect()
        });
        let mut goals_by_servers = Vec::new();
        if !goals.is_empty() && grid {
            let mut sizes: Vec<u32> = steps.iter().filter_map(|s| s.servers).collect();
            sizes.dedup();
            for n in sizes {
                let block = steps.iter().filter(|s| s.servers == Some(n));
                goals_by_servers.push(GridGoals {
                    servers: n,
                    goals_hold_through: hold_through(block, true),
                });
            }
        }
        let grid_group = swept
            .group()
            .filter(|_| grid)
            .map(|g| model.groups[g].name.clone());
        SweepDocument {
            file: file.to_string(),
            swept: swept.label(model),
            partial,
            goals_hold_through,
            goals_by_servers,
            goals_met_at,
            outer_setting,
            goals_met_at_points,
            grid_group,
            figures: figures.to_vec(),
            steps,
            caution: CAUTION,
            scenario: model.title.clone(),
            columns,
            // A goal on the share of days bounds each day's figure, not the
            // long-run figure the charts draw: it gets no line there.
            goals: (goals.iter().filter(|g| g.days.is_none()))
                .map(|g| GoalLine {
                    text: g.text.clone(),
                    figure: g.figure,
                    bound: g.bound,
                })
                .collect(),
            words: describe_model(model, file),
            load_swept,
            setting,
            change,
        }
    }

    /// One sentence on how far the design meets the goals, for the table.
    pub fn goal_summary(&self) -> Option<String> {
        if !self.goals_by_servers.is_empty() {
            let parts: Vec<String> = (self.goals_by_servers.iter())
                .map(|g| match g.goals_hold_through {
                    Some(v) => format!(
                        "with {} servers up to {}x forecast",
                        g.servers,
                        trim_float(v, 3)
                    ),
                    None => format!("with {} servers not even at the lightest load", g.servers),
                })
                .collect();
            return Some(format!("Every goal is met {}.", parts.join("; ")));
        }
        if let (Some(points), Some(outer)) = (&self.goals_met_at_points, &self.outer_setting) {
            let n = |v: f64| trim_float(v, 4);
            let listed: Vec<String> = (points.iter())
                .map(|[o, i]| format!("({}, {})", n(*o), n(*i)))
                .collect();
            return Some(if points.is_empty() {
                "No point of the grid meets every goal.".into()
            } else {
                format!(
                    "Every goal is met at {} of {} points ({outer}, {}): {}.",
                    points.len(),
                    self.steps.len(),
                    self.swept,
                    listed.join(", ")
                )
            });
        }
        if let Some(at) = &self.goals_met_at {
            return Some(if at.is_empty() {
                format!("No value of {} meets every goal.", self.swept)
            } else {
                let values: Vec<String> = at.iter().map(|v| trim_float(*v, 4)).collect();
                format!(
                    "Every goal is met at {} of {} values of {}: {}.",
                    at.len(),
                    self.steps.len(),
                    self.swept,
                    values.join(", ")
                )
            });
        }
        let through = self.goals_hold_through?;
        let what = |v: f64| {
            if self.load_swept {
                format!("{}x forecast", trim_float(v, 3))
            } else {
                format!("{} servers", trim_float(v, 0))
            }
        };
        Some(match through {
            None => format!(
                "The goals are not all met even at the easiest step ({}).",
                what(self.easiest().map_or(0.0, |s| s.value))
            ),
            Some(v) if self.load_swept => format!("Every goal is met up to {}.", what(v)),
            Some(v) => format!("Every goal is met from {} up.", what(v)),
        })
    }

    /// The step with the lightest load or the most servers.
    fn easiest(&self) -> Option<&SweepStep> {
        if self.load_swept {
            self.steps.iter().min_by(|a, b| a.value.total_cmp(&b.value))
        } else {
            self.steps.iter().max_by(|a, b| a.value.total_cmp(&b.value))
        }
    }

    /// The stream's or group's name of a place (the same at every step).
    fn name_of(&self, place: Place) -> &str {
        self.steps
            .first()
            .map_or("", |st| set_at(&st.result, place).name.as_str())
    }

    /// A column's heading in plain words: "office loss", "office service
    /// level".
    pub fn column_name(&self, c: &Column) -> String {
        let label = c.figure.label();
        let short = label.split(" (").next().unwrap_or(label);
        format!("{} {short}", self.name_of(c.place))
    }

    /// The sweep table: one row per step.
    pub fn rows(&self) -> Vec<Vec<String>> {
        let channels = self
            .steps
            .first()
            .is_some_and(|st| st.result.units.iter().any(|&u| u > 1));
        let offered = if channels {
            "offered traffic (channels)"
        } else {
            "offered traffic"
        };
        let mut head = vec![self.swept.clone(), offered.to_string()];
        if let Some(o) = &self.outer_setting {
            head.insert(0, o.clone());
        }
        if let Some(g) = &self.grid_group {
            head.insert(0, format!("servers on {g}"));
        }
        head.extend(self.columns.iter().map(|c| self.column_name(c)));
        let judged = self.steps.iter().any(|st| !st.goals.is_empty());
        if judged {
            head.push("goals".into());
        }
        let mut rows = vec![head];
        for st in &self.steps {
            let mut row = vec![
                trim_float(st.value, 3),
                text::value(Unit::Erlangs, st.offered_traffic),
            ];
            if self.outer_setting.is_some() {
                row.insert(
                    0,
                    st.outer_value.map_or(String::new(), |v| trim_float(v, 4)),
                );
            }
            if self.grid_group.is_some() {
                row.insert(0, st.servers.map_or(String::new(), |n| n.to_string()));
            }
            for c in &self.columns {
                let unit = c.figure.unit();
                let cell = match value_at(&st.result, c) {
                    Some(v) if !v.estimate.mean.is_nan() => {
                        let mut cell = text::estimate(unit, &v.estimate);
                        if let Some(f) = &v.formula {
                            cell.push_str(&format!(" [{}]", text::value(unit, f.value)));
                        }
                        cell
                    }
                    _ => "-".into(),
                };
                row.push(cell);
            }
            if judged {
                row.push(goal_cell(&st.goals));
            }
            rows.push(row);
        }
        rows
    }
}

impl Charted for SweepDocument {
    /// A grid has no one axis to draw against: its page shows the table.
    fn has_chart(&self) -> bool {
        self.grid_group.is_none() && self.outer_setting.is_none()
    }

    /// The sweep as one self-contained HTML page, with its chart when one
    /// is given.
    fn html(&self, chart: Option<&str>) -> String {
        use html::Block;
        let mut blocks = vec![
            Block::Heading("The scenario in plain words".into()),
            Block::Pre(self.words.clone()),
            Block::Heading(
                match self.steps.first().and_then(|st| st.result.clock_period()) {
                    Some(p) => format!("Sweep, measured {p}"),
                    None => "Sweep".into(),
                },
            ),
            Block::Paragraph(format!(
                "Each step runs the same seeds (common random numbers); values are means ± 95% half-widths, \
[formula] where a closed form applies.{}",
                if self.partial {
                    " PARTIAL RESULT: interrupted; only the finished steps are shown."
                } else {
                    ""
                }
            )),
            Block::Table(Table {
                title: String::new(),
                rows: self.rows(),
            }),
        ];
        if let Some(svg) = chart {
            blocks.push(Block::Svg(svg.to_string()));
        }
        html::simulated_page(
            &self.scenario,
            &format!("busyhour sweep of {}: {}", self.file, self.swept),
            blocks,
            &[],
        )
    }

    /// The chart: the columns' figures against the swept value, with their
    /// 95% bands, the closed-form curve where one applies, and goal lines;
    /// one panel per figure.
    fn chart(&self) -> Result<String, ChartError> {
        let mut figures: Vec<Figure> = Vec::new();
        for c in &self.columns {
            if !figures.contains(&c.figure) {
                figures.push(c.figure);
            }
        }
        let mut panels = Vec::new();
        for figure in figures {
            let (y_label, scale) = plot::axis(figure);
            let period = (self.steps.first())
                .and_then(|st| st.result.clock_period())
                .map_or(String::new(), |p| format!(", measured {p}"));
            let mut chart = LineChart::new(
                format!("{}: {}{period}", self.scenario, figure.label()),
                self.swept.clone(),
                y_label,
            );
            for c in self.columns.iter().filter(|c| c.figure == figure) {
                let values = || {
                    (self.steps.iter())
                        .filter_map(move |st| Some((st.value, value_at(&st.result, c)?)))
                };
                let pts: Vec<(f64, Estimate)> = values().map(|(x, v)| (x, v.estimate)).collect();
                let paint = match c.place {
                    Place::Stream(s) => Paint::Stream(s),
                    Place::Group(g) => Paint::Group(g),
                };
                chart.series.push(
                    plot::estimate_series(
                        format!("{} (95% band)", self.column_name(c)),
                        &pts,
                        scale,
                    )
                    .painted(paint),
                );
                let formula: Vec<(f64, f64, &str)> = values()
                    .filter_map(|(x, v)| v.formula.as_ref().map(|f| (x, f.value * scale, f.name)))
                    .collect();
                if formula.len() >= 2 {
                    chart.series.push(
                        Series::formula(
                            format!("{}, {}", self.column_name(c), formula[0].2),
                            formula.iter().map(|p| (p.0, p.1)).collect(),
                        )
                        .painted(paint),
                    );
                }
            }
            let (x0, x1) = (
                self.steps.first().map_or(0.0, |s| s.value),
                self.steps.last().map_or(1.0, |s| s.value),
            );
            for g in self.goals.iter().filter(|g| g.figure == figure) {
                chart.series.push(Series::goal(
                    format!("goal {}", g.text),
                    g.bound * scale,
                    (x0, x1),
                ));
            }
            panels.push(plot::render_svg(&chart)?);
        }
        if panels.is_empty() {
            return Err(ChartError::NoData);
        }
        Ok(plot::stack(&panels))
    }
}

impl SweepDocument {
    /// The table without its closing caution (a document that shows
    /// several sweeps adds one caution at its end).
    pub fn body(&self) -> String {
        let mut out = if self.setting {
            format!(
                "Sweep of {} in {}  ({})\n",
                self.swept, self.scenario, self.file
            )
        } else {
            format!("Load sweep of {}  ({})\n", self.scenario, self.file)
        };
        if let Some(first) = self.steps.first() {
            out.push_str(&format!(
                "{} replications per step, the same seeds at every step; [formula] where a closed form applies.\n",
                first.result.replications
            ));
        }
        if self.partial {
            out.push_str("PARTIAL RESULT: interrupted; only the finished steps are shown.\n");
        }
        out.push('\n');
        out.push_str(&align(&self.rows(), "  "));
        if let Some(summary) = self.goal_summary() {
            out.push_str(&format!("\n{summary}\n"));
        }
        out
    }
}

impl Document for SweepDocument {
    fn table(&self) -> String {
        format!("{}\nCaution: {CAUTION}\n", self.body())
    }

    /// Long format: one row per step and whole-period figure (only the
    /// chosen figures when `--figure` was given).
    fn csv(&self) -> Option<String> {
        let header: Vec<String> = ["value", "kind", "name"]
            .into_iter()
            .chain(FigureValue::CSV_COLUMNS)
            .map(String::from)
            .collect();
        let rows = self.steps.iter().flat_map(|st| {
            let value = text::csv_number(st.value);
            (st.result.streams.iter().map(|s| ("stream", s)))
                .chain(st.result.groups.iter().map(|g| ("group", g)))
                .flat_map(move |(kind, set)| {
                    let value = value.clone();
                    set.figures.iter().map(move |v| {
                        let lead = [value.clone(), kind.to_string(), set.name.clone()];
                        lead.into_iter().chain(v.csv_cells()).collect()
                    })
                })
        });
        Some(text::csv(std::iter::once(header).chain(rows)))
    }
}

/// The table cell of a step's verdicts: "met", or which goals fail or are
/// undecided.
fn goal_cell(goals: &[StepGoal]) -> String {
    let of = |v: Verdict| -> Vec<&str> {
        (goals.iter())
            .filter(|g| g.verdict == v)
            .map(|g| g.goal.as_str())
            .collect()
    };
    let (fails, open) = (of(Verdict::Fails), of(Verdict::Undecided));
    let mut parts = Vec::new();
    if !fails.is_empty() {
        parts.push(format!("fails {}", fails.join(", ")));
    }
    if !open.is_empty() {
        parts.push(format!("undecided {}", open.join(", ")));
    }
    if parts.is_empty() {
        "met".into()
    } else {
        parts.join("; ")
    }
}

/// The last value, walking from the easy end (lightest load or most
/// servers), of the run of steps at which every goal holds; `None` when the
/// easiest step already misses one.
fn hold_through<'a>(
    steps: impl IntoIterator<Item = &'a SweepStep>,
    load_swept: bool,
) -> Option<f64> {
    let mut order: Vec<&SweepStep> = steps.into_iter().collect();
    order.sort_by(|a, b| a.value.total_cmp(&b.value));
    if !load_swept {
        order.reverse();
    }
    order
        .iter()
        .take_while(|st| st.goals.iter().all(|g| g.verdict == Verdict::Holds))
        .last()
        .map(|st| st.value)
}

fn set_at(run: &RunDocument, place: Place) -> &FigureSet {
    match place {
        Place::Stream(s) => &run.streams[s],
        Place::Group(g) => &run.groups[g],
    }
}

/// The value of column `c` in a step's run.
pub fn value_at<'a>(run: &'a RunDocument, c: &Column) -> Option<&'a FigureValue> {
    set_at(run, c.place).figures.get(c.figure)
}
