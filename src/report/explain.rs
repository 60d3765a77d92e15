//! The document of `explain`: the assumption ladder from the textbook
//! model to the scenario (each rung's figures), what each effect accounts
//! for (the paired step from the rung below, its share of the whole gap,
//! and the effect alone on the book model), built once from a [`Ladder`];
//! table, JSON, CSV and HTML render it.

use super::compare::difference_cell;
use super::plot::ChartError;
use super::text::{self, Table, align};
use super::{CAUTION, Charted, Document, html};
use crate::experiment::compare::{Compared, Owner};
use crate::experiment::explain::Ladder;
use crate::stats::{Estimate, Figure};
use serde::Serialize;

/// One figure on one rung.
#[derive(Debug, Clone, Serialize)]
pub struct RungFigure {
    /// The figure's place and name, as the table heads it ("office loss").
    pub figure: String,
    /// Its estimate on this rung.
    pub estimate: Estimate,
}

/// One rung of the ladder.
#[derive(Debug, Clone, Serialize)]
pub struct RungRow {
    /// "book model", "+ holding-time law", ...
    pub rung: String,
    /// The effects on (JSON names), the book model's none.
    pub effects: Vec<&'static str>,
    /// The shown figures.
    pub figures: Vec<RungFigure>,
}

/// What one effect accounts for in one figure.
#[derive(Debug, Clone, Serialize)]
pub struct EffectRow {
    /// The figure ("office loss").
    pub figure: String,
    /// The effect's JSON name.
    pub effect: &'static str,
    /// The paired difference from the rung below to the effect's rung.
    pub step: Estimate,
    /// `step` over the whole gap, when the gap is decided (its interval
    /// excludes 0).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub share_of_gap: Option<f64>,
    /// The paired difference the effect makes alone on the book model.
    pub alone: Estimate,
    /// The figure's unit, for the table.
    #[serde(skip)]
    pub unit: crate::stats::Unit,
    /// The effect in words, for the table.
    #[serde(skip)]
    pub words: &'static str,
}

/// The whole gap of one figure: book model against the scenario.
#[derive(Debug, Clone, Serialize)]
pub struct GapRow {
    /// The figure.
    pub figure: String,
    /// On the book model.
    pub book: Estimate,
    /// On the scenario.
    pub scenario: Estimate,
    /// Scenario minus book, paired.
    pub difference: Estimate,
    /// The unit, for the table.
    #[serde(skip)]
    pub unit: crate::stats::Unit,
}

/// What `explain` found.
#[derive(Debug, Clone, Serialize)]
pub struct ExplainDocument {
    /// The scenario's title.
    pub scenario: String,
    /// The scenario file, as named.
    pub file: String,
    /// The effects, in the order they are added (JSON names).
    pub order: Vec<&'static str>,
    /// Replications per rung (the same seeds on every rung).
    pub replications: u32,
    /// Interrupted: every rung keeps the replications all finished.
    pub partial: bool,
    /// Patience stayed in the book model: without it a queue offered at
    /// least its servers would grow without bound.
    pub patience_kept: bool,
    /// The rungs, the book model first, the scenario last.
    pub rungs: Vec<RungRow>,
    /// Per figure, per effect in order.
    pub effects: Vec<EffectRow>,
    /// Per figure, the whole gap.
    pub gap: Vec<GapRow>,
    /// The caution.
    pub caution: &'static str,
    /// The scenario in words, for the page.
    #[serde(skip)]
    pub words: String,
}

/// The figures shown: `chosen`, or each stream's loss and service level and
/// each group's occupancy; whole-period figures only.
fn shown(c: &Compared, chosen: &[Figure]) -> bool {
    c.owner.interval.is_none()
        && if chosen.is_empty() {
            matches!(
                (c.owner.stream, c.figure),
                (true, Figure::Loss | Figure::ServiceLevel) | (false, Figure::Occupancy)
            )
        } else {
            chosen.contains(&c.figure)
        }
}

fn figure_name(owner: &Owner, figure: Figure) -> String {
    let label = figure.label();
    let short = label.split(" (").next().unwrap_or(label);
    format!("{} {short}", owner.name)
}

impl ExplainDocument {
    /// The document of `ladder` of the scenario `file`, showing `chosen`
    /// figures (empty: the defaults).
    pub fn new(
        model: &crate::scenario::Model,
        file: &str,
        ladder: &Ladder,
        chosen: &[Figure],
    ) -> ExplainDocument {
        let gap_figures: Vec<&Compared> = ladder.gap.iter().filter(|c| shown(c, chosen)).collect();
        let keys: Vec<(Owner, Figure)> = (gap_figures.iter())
            .map(|c| (c.owner.clone(), c.figure))
            .collect();
        let find = |list: &[Compared], k: &(Owner, Figure)| {
            list.iter()
                .find(|c| c.owner == k.0 && c.figure == k.1)
                .cloned()
        };
        let rungs = (ladder.rungs.iter().enumerate())
            .map(|(i, r)| RungRow {
                rung: if i == 0 {
                    "book model".to_string()
                } else {
                    format!("+ {}", ladder.effects[i - 1].words())
                },
                effects: r.effects.iter().map(|e| e.name()).collect(),
                figures: keys
                    .iter()
                    .map(|k| RungFigure {
                        figure: figure_name(&k.0, k.1),
                        // Rung 0 is A of the first step, rung i B of step i.
                        estimate: if i == 0 {
                            find(&ladder.gap, k).map_or(Estimate::UNDEFINED, |c| c.a)
                        } else {
                            (ladder.steps.get(i - 1))
                                .and_then(|s| find(s, k))
                                .map_or(Estimate::UNDEFINED, |c| c.b)
                        },
                    })
                    .collect(),
            })
            .collect();
        let mut effects = Vec::new();
        let mut gap = Vec::new();
        for k in &keys {
            let Some(whole) = find(&ladder.gap, k) else {
                continue;
            };
            let unit = k.1.unit();
            for (j, e) in ladder.effects.iter().enumerate() {
                let step = (ladder.steps.get(j))
                    .and_then(|s| find(s, k))
                    .map_or(Estimate::UNDEFINED, |c| c.difference);
                let alone = (ladder.alone.get(j))
                    .and_then(|s| find(s, k))
                    .map_or(Estimate::UNDEFINED, |c| c.difference);
                effects.push(EffectRow {
                    figure: figure_name(&k.0, k.1),
                    effect: e.name(),
                    step,
                    share_of_gap: whole
                        .decided()
                        .then(|| step.mean / whole.difference.mean)
                        .filter(|x| x.is_finite()),
                    alone,
                    unit,
                    words: e.words(),
                });
            }
            gap.push(GapRow {
                figure: figure_name(&k.0, k.1),
                book: whole.a,
                scenario: whole.b,
                difference: whole.difference,
                unit,
            });
        }
        ExplainDocument {
            scenario: model.title.clone(),
            file: file.to_string(),
            order: ladder.effects.iter().map(|e| e.name()).collect(),
            replications: ladder.replications,
            partial: ladder.partial,
            patience_kept: ladder.patience_kept,
            rungs,
            effects,
            gap,
            caution: CAUTION,
            words: super::describe::describe_model(model, file),
        }
    }

    fn intro(&self) -> String {
        let order: Vec<&str> = (self.rungs.iter().skip(1))
            .map(|r| r.rung.trim_start_matches("+ "))
            .collect();
        let mut s = format!(
            "From the textbook model (Poisson arrivals at the mean rate, exponential holding of the same mean, a flat load known exactly, no redials{}) to the scenario, one effect added per rung, in this order: {}; {} replications per rung, the same seeds on every rung.",
            if self.patience_kept {
                "; patience kept, since without it a queue would grow without bound"
            } else {
                ", no abandonment"
            },
            if order.is_empty() {
                "none (the scenario is its textbook model)".to_string()
            } else {
                order.join(", ")
            },
            self.replications
        );
        if self.partial {
            s.push_str(" PARTIAL RESULT: interrupted.");
        }
        s
    }

    fn rung_rows(&self) -> Vec<Vec<String>> {
        let mut head = vec!["rung".to_string()];
        if let Some(first) = self.rungs.first() {
            head.extend(first.figures.iter().map(|f| f.figure.clone()));
        }
        let units: Vec<crate::stats::Unit> = self.gap.iter().map(|g| g.unit).collect();
        let mut rows = vec![head];
        let last = self.rungs.len().saturating_sub(1);
        for (i, r) in self.rungs.iter().enumerate() {
            let mut name = r.rung.clone();
            if i == last && i > 0 {
                name.push_str(" = the scenario");
            }
            let mut row = vec![name];
            row.extend(
                (r.figures.iter().zip(&units)).map(|(f, &u)| text::estimate(u, &f.estimate)),
            );
            rows.push(row);
        }
        rows
    }

    fn effect_rows(&self) -> Vec<Vec<String>> {
        let mut rows = vec![vec![
            "figure".to_string(),
            "effect".into(),
            "step from the rung below".into(),
            "share of the gap".into(),
            "alone on the book model".into(),
        ]];
        for e in &self.effects {
            rows.push(vec![
                e.figure.clone(),
                e.words.into(),
                difference_cell(e.unit, &e.step),
                e.share_of_gap.map_or("-".into(), |x| {
                    // Rounded to whole percent, without a "-0".
                    let pct = (x * 100.0).round();
                    format!("{}%", if pct == 0.0 { 0.0 } else { pct })
                }),
                difference_cell(e.unit, &e.alone),
            ]);
        }
        for g in &self.gap {
            rows.push(vec![
                g.figure.clone(),
                "whole gap".into(),
                difference_cell(g.unit, &g.difference),
                "100%".into(),
                String::new(),
            ]);
        }
        rows
    }
}

/// The effects table's heading.
const EFFECTS: &str = "What each effect accounts for: paired differences with 95% intervals; the share of the whole gap (book model to scenario) is shown where the gap is decided, and depends on the order when effects interact, so each effect alone on the book model stands beside it";

impl Document for ExplainDocument {
    fn table(&self) -> String {
        let mut out = format!(
            "Assumption ladder of {}  ({})\n{}\n\n",
            self.scenario,
            self.file,
            self.intro()
        );
        out.push_str(&align(&self.rung_rows(), "  "));
        if !self.effects.is_empty() {
            out.push_str(&format!("\n{EFFECTS}\n\n"));
            out.push_str(&align(&self.effect_rows(), "  "));
        }
        out.push_str(&format!("\nCaution: {CAUTION}\n"));
        out
    }

    /// One row per figure and effect (and the whole gap).
    fn csv(&self) -> Option<String> {
        let head: Vec<String> = [
            "figure",
            "effect",
            "step_mean",
            "step_low",
            "step_high",
            "share_of_gap",
            "alone_mean",
            "alone_low",
            "alone_high",
        ]
        .map(String::from)
        .to_vec();
        let mut rows: Vec<Vec<String>> = (self.effects.iter())
            .map(|e| {
                vec![
                    e.figure.clone(),
                    e.effect.into(),
                    text::csv_number(e.step.mean),
                    text::csv_number(e.step.low),
                    text::csv_number(e.step.high),
                    e.share_of_gap.map_or(String::new(), text::csv_number),
                    text::csv_number(e.alone.mean),
                    text::csv_number(e.alone.low),
                    text::csv_number(e.alone.high),
                ]
            })
            .collect();
        rows.extend(self.gap.iter().map(|g| {
            vec![
                g.figure.clone(),
                "whole_gap".into(),
                text::csv_number(g.difference.mean),
                text::csv_number(g.difference.low),
                text::csv_number(g.difference.high),
                "1".into(),
                String::new(),
                String::new(),
                String::new(),
            ]
        }));
        Some(text::csv(std::iter::once(head).chain(rows)))
    }
}

impl Charted for ExplainDocument {
    /// The ladder is a table; the page carries no chart.
    fn has_chart(&self) -> bool {
        false
    }

    fn chart(&self) -> Result<String, ChartError> {
        Err(ChartError::NoData)
    }

    /// The ladder as one self-contained HTML page.
    fn html(&self, _chart: Option<&str>) -> String {
        use html::Block;
        let mut blocks = vec![
            Block::Heading("The scenario in plain words".into()),
            Block::Pre(self.words.clone()),
            Block::Heading("From the book to the scenario".into()),
            Block::Paragraph(self.intro()),
            Block::Table(Table {
                title: "The ladder".into(),
                rows: self.rung_rows(),
            }),
        ];
        if !self.effects.is_empty() {
            blocks.push(Block::Paragraph(EFFECTS.into()));
            blocks.push(Block::Table(Table {
                title: "What each effect accounts for".into(),
                rows: self.effect_rows(),
            }));
        }
        html::simulated_page(
            &self.scenario,
            &format!("busyhour explain of {}", self.file),
            blocks,
            &[],
        )
    }
}
