//! The document of `check`: the scenario in plain words, the formula view
//! (which closed form applies to which figure, and its value) and the
//! problems the check found. [`FormulaView`] is also the "Textbook view" of
//! the run page.

use super::describe::describe_model;
use super::text::{self, align};
use super::{CAUTION, Document, FormulaValue};
use crate::scenario::Model;
use crate::stats::{Figure, FigureId, Scope};
use crate::textbook::Formula;
use serde::Serialize;
use std::collections::{BTreeMap, HashMap};

/// One closed-form value of the formula view.
#[derive(Debug, Clone)]
pub struct FormulaEntry {
    /// Whose figure: "stream office", "group trunks".
    pub owner: String,
    /// Which figure.
    pub figure: Figure,
    /// The reporting interval as a clock ("1:15-1:30"), for interval figures.
    pub interval: Option<String>,
    /// The method and its value.
    pub formula: FormulaValue,
}

/// What the closed forms say about a model, in a fixed order: streams,
/// groups, then intervals in time order.
#[derive(Debug, Clone, Default)]
pub struct FormulaView {
    /// The values, in order.
    pub entries: Vec<FormulaEntry>,
    /// Streams no closed form covers (over the whole measured period).
    pub uncovered_streams: Vec<String>,
}

impl FormulaView {
    /// The view of `model` from its formula column.
    pub fn new(model: &Model, column: &HashMap<FigureId, Formula>) -> FormulaView {
        let mut keyed: Vec<(&FigureId, &Formula)> = column.iter().collect();
        keyed.sort_by_key(|(f, _)| {
            let (kind, i, b) = match f.scope {
                Scope::Stream(s) => (0, s, 0),
                Scope::Group(g) => (1, g, 0),
                Scope::StreamInterval(b, s) => (2, s, b),
                Scope::GroupInterval(b, g) => (3, g, b),
                Scope::Stage(s, k) => (4, s, k),
            };
            (kind, i, b, f.figure.compact_order(), f.figure)
        });
        let width = model.plan.interval_s.unwrap_or(model.plan.length_s);
        let clock = |b: usize| {
            let start = b as f64 * width;
            let end = (start + width).min(model.plan.length_s);
            let c = model.plan.clock_start_s;
            format!("{}-{}", text::clock_at(c, start), text::clock_at(c, end))
        };
        let entries = keyed
            .into_iter()
            .map(|(f, fo)| FormulaEntry {
                owner: match f.scope {
                    Scope::Stream(s) | Scope::StreamInterval(_, s) => {
                        format!("stream {}", model.streams[s].name)
                    }
                    Scope::Group(g) | Scope::GroupInterval(_, g) => {
                        format!("group {}", model.groups[g].name)
                    }
                    Scope::Stage(s, k) => {
                        let st = &model.streams[s];
                        format!("stream {} stage {}", st.name, st.stages[k].name)
                    }
                },
                figure: f.figure,
                interval: match f.scope {
                    Scope::StreamInterval(b, _) | Scope::GroupInterval(b, _) => Some(clock(b)),
                    _ => None,
                },
                formula: FormulaValue::from(fo),
            })
            .collect();
        let covered = |scope: Scope| column.keys().any(|f| f.scope == scope);
        let uncovered_streams = (model.streams.iter().enumerate())
            .filter(|(s, _)| !covered(Scope::Stream(*s)))
            .map(|(_, st)| st.name.clone())
            .collect();
        FormulaView {
            entries,
            uncovered_streams,
        }
    }

    /// The view as text: what the closed forms say for this model, and
    /// where none applies.
    pub fn text(&self) -> String {
        let mut out = String::from("\nFormula view (closed forms where their assumptions hold)\n");
        let mut rows: Vec<Vec<String>> = self
            .entries
            .iter()
            .map(|e| {
                vec![
                    e.owner.clone(),
                    match &e.interval {
                        Some(clock) => format!("{} ({clock})", e.figure.label()),
                        None => e.figure.label().to_string(),
                    },
                    text::value(e.figure.unit(), e.formula.value),
                    e.formula.name.to_string(),
                ]
            })
            .collect();
        // Each owner's name once.
        for i in (1..rows.len()).rev() {
            if rows[i][0] == rows[i - 1][0] {
                rows[i][0] = String::new();
            }
        }
        if rows.is_empty() {
            out.push_str(
                "  No closed form applies to this design: the simulation is the only answer.\n",
            );
            return out;
        }
        out.push_str(&align(&rows, "  "));
        if !self.uncovered_streams.is_empty() {
            out.push_str(&format!(
                "  No closed form for stream(s) {}: simulation only.\n",
                self.uncovered_streams.join(", ")
            ));
        }
        out
    }
}

/// A stream as `check` reports it.
#[derive(Debug, Clone, Serialize)]
pub struct CheckStream {
    /// The stream's name.
    pub name: String,
    /// Offered traffic of first attempts (E); null for finite sources,
    /// whose offered traffic depends on how many are idle.
    pub offered_traffic: Option<f64>,
    /// Closed-form values over the whole measured period, by figure name.
    pub formulas: BTreeMap<&'static str, FormulaValue>,
}

/// A group as `check` reports it.
#[derive(Debug, Clone, Serialize)]
pub struct CheckGroup {
    /// The group's name.
    pub name: String,
    /// Its servers.
    pub servers: u32,
    /// Closed-form values over the whole measured period, by figure name.
    pub formulas: BTreeMap<&'static str, FormulaValue>,
}

/// What `check` prints: the compiled model, the formula view and the
/// problems found.
#[derive(Debug, Clone, Serialize)]
pub struct CheckDocument {
    /// The scenario's title.
    pub scenario: String,
    /// Every stream, in file order.
    pub streams: Vec<CheckStream>,
    /// Every group, in file order.
    pub groups: Vec<CheckGroup>,
    /// What makes the check fail (exit status 1); absent when it passes.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub problems: Vec<String>,
    /// The safety caution (the formula view is a design figure too).
    pub caution: &'static str,
    /// Advisory warnings, shown without failing the check; absent when
    /// there are none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
    /// The scenario in plain words.
    #[serde(skip)]
    pub words: String,
    /// The formula view, for the table.
    #[serde(skip)]
    pub view: FormulaView,
}

impl CheckDocument {
    /// The check of `model` (read from `file`), with the problems found.
    pub fn new(
        model: &Model,
        file: &str,
        column: &HashMap<FigureId, Formula>,
        problems: Vec<String>,
    ) -> CheckDocument {
        let formulas = |scope: Scope| -> BTreeMap<&'static str, FormulaValue> {
            column
                .iter()
                .filter(|(f, _)| f.scope == scope)
                .map(|(f, fo)| (f.name(), FormulaValue::from(fo)))
                .collect()
        };
        CheckDocument {
            scenario: model.title.clone(),
            streams: (model.streams.iter().enumerate())
                .map(|(s, st)| CheckStream {
                    name: st.name.clone(),
                    offered_traffic: st.offered_traffic(model.plan.length_s),
                    formulas: formulas(Scope::Stream(s)),
                })
                .collect(),
            groups: (model.groups.iter().enumerate())
                .map(|(g, gr)| CheckGroup {
                    name: gr.name.clone(),
                    servers: gr.servers,
                    formulas: formulas(Scope::Group(g)),
                })
                .collect(),
            problems,
            caution: CAUTION,
            notes: Vec::new(),
            words: describe_model(model, file),
            view: FormulaView::new(model, column),
        }
    }

    /// Whether the check passed.
    pub fn passed(&self) -> bool {
        self.problems.is_empty()
    }
}

impl Document for CheckDocument {
    fn table(&self) -> String {
        let mut s = self.words.clone();
        s.push_str(&self.view.text());
        if !self.notes.is_empty() {
            s.push_str("\nWarnings (the check still passes):\n");
            for n in &self.notes {
                s.push_str(&format!("  - {n}\n"));
            }
        }
        if self.problems.is_empty() {
            s.push_str("\nThe scenario is valid.\n");
        } else {
            s.push_str("\nThe scenario is valid as a file, but the check failed:\n");
            for p in &self.problems {
                s.push_str(&format!("  - {p}\n"));
            }
        }
        s.push_str(&format!("Caution: {CAUTION}\n"));
        s
    }
}
