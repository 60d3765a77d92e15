//! The document of `sweep` with several `--set` settings: each setting
//! swept alone (the others as the file has them, the same seeds at every
//! step), and a table of the one-at-a-time effects, largest first: for
//! every figure shown, how far its mean moves across each setting's range.
//! Built once from the settings' sweep documents; table, JSON, CSV, chart
//! and HTML render it.

use super::plot::{self, ChartError};
use super::sweep::{Column, SweepDocument, value_at};
use super::text::{self, Table, align};
use super::{CAUTION, Charted, Document, html};
use crate::stats::Estimate;
use serde::Serialize;

/// How far one figure moves across one setting's range.
#[derive(Debug, Clone, Serialize)]
pub struct Effect {
    /// The figure, as the sweep table names it ("office loss").
    pub figure: String,
    /// The setting's key path, with its unit.
    pub setting: String,
    /// The setting's first and last values.
    pub from: f64,
    /// The last value.
    pub to: f64,
    /// The figure's mean at the first value.
    pub at_from: f64,
    /// At the last value.
    pub at_to: f64,
    /// The largest minus the smallest mean over the range (the effect's
    /// size, the order of the table).
    pub spread: f64,
    /// The figure at the last value minus at the first, as a paired
    /// difference over the common seeds, with its 95% interval.
    pub change: Estimate,
    /// Whether the change's interval excludes zero (otherwise the range
    /// moves the figure less than the simulation can tell).
    pub decided: bool,
    /// The figure's unit, for the table.
    #[serde(skip)]
    pub unit: crate::stats::Unit,
}

/// Several settings swept one at a time, and their effects.
#[derive(Debug, Clone, Serialize)]
pub struct SensitivityDocument {
    /// The scenario file, as named.
    pub file: String,
    /// Each setting's sweep, in the order given.
    pub sweeps: Vec<SweepDocument>,
    /// Per figure shown, the settings' effects, largest first.
    pub effects: Vec<Effect>,
    /// The caution.
    pub caution: &'static str,
    /// The scenario's title.
    #[serde(skip)]
    pub scenario: String,
}

impl SensitivityDocument {
    /// The document of the settings' `sweeps` (one per `--set`).
    pub fn new(file: &str, sweeps: Vec<SweepDocument>) -> SensitivityDocument {
        let columns: Vec<Column> = sweeps.first().map_or_else(Vec::new, |d| d.columns.clone());
        let mut effects = Vec::new();
        for c in &columns {
            let mut of_figure: Vec<Effect> = sweeps
                .iter()
                .filter_map(|d| {
                    let at = d.columns.iter().position(|x| x == c)?;
                    let change = d.change.get(at).copied().flatten()?;
                    let means: Vec<(f64, f64, f64)> = (d.steps.iter())
                        .filter_map(|st| {
                            let v = value_at(&st.result, c)?;
                            Some((st.value, v.estimate.mean, v.estimate.half_width))
                        })
                        .filter(|x| x.1.is_finite())
                        .collect();
                    let (first, last) = (means.first()?, means.last()?);
                    let high = means.iter().map(|x| x.1).fold(f64::NEG_INFINITY, f64::max);
                    let low = means.iter().map(|x| x.1).fold(f64::INFINITY, f64::min);
                    Some(Effect {
                        figure: d.column_name(c),
                        setting: d.swept.clone(),
                        from: first.0,
                        to: last.0,
                        at_from: first.1,
                        at_to: last.1,
                        spread: high - low,
                        change,
                        decided: change.low > 0.0 || change.high < 0.0,
                        unit: c.figure.unit(),
                    })
                })
                .collect();
            of_figure.sort_by(|a, b| b.spread.total_cmp(&a.spread));
            effects.extend(of_figure);
        }
        SensitivityDocument {
            file: file.to_string(),
            scenario: sweeps
                .first()
                .map_or_else(String::new, |d| d.scenario.clone()),
            sweeps,
            effects,
            caution: CAUTION,
        }
    }

    fn effect_rows(&self) -> Vec<Vec<String>> {
        let mut rows = vec![vec![
            "figure".to_string(),
            "setting".into(),
            "range".into(),
            "figure from".into(),
            "to".into(),
            "spread".into(),
            "change, last - first (paired, 95%)".into(),
            "".into(),
        ]];
        let number = |x: f64| crate::units::trim_float(x, 4);
        for e in &self.effects {
            rows.push(vec![
                e.figure.clone(),
                e.setting.clone(),
                format!("{} to {}", number(e.from), number(e.to)),
                text::value(e.unit, e.at_from),
                text::value(e.unit, e.at_to),
                text::value(e.unit, e.spread),
                text::estimate(e.unit, &e.change),
                if e.decided {
                    String::new()
                } else {
                    "within the noise".into()
                },
            ]);
        }
        rows
    }
}

/// The heading of the effects table.
const EFFECTS: &str = "One-at-a-time effects (each setting alone, the others as the file has them, the same seeds at every step): the spread is the largest minus the smallest mean over the setting's range, largest first per figure; the change is the figure at the last value minus at the first, paired over the common seeds, \"within the noise\" when its 95% interval covers zero";

impl Document for SensitivityDocument {
    fn table(&self) -> String {
        let mut out = String::new();
        for d in &self.sweeps {
            // Each sweep's table without its caution; one caution at the end.
            out.push_str(d.body().trim_end());
            out.push_str("\n\n");
        }
        out.push_str(EFFECTS);
        out.push_str("\n\n");
        out.push_str(&align(&self.effect_rows(), "  "));
        out.push_str(&format!("\nCaution: {CAUTION}\n"));
        out
    }

    /// The effects, one row per figure and setting.
    fn csv(&self) -> Option<String> {
        let head: Vec<String> = [
            "figure",
            "setting",
            "from",
            "to",
            "at_from",
            "at_to",
            "spread",
            "change",
            "change_low",
            "change_high",
            "decided",
        ]
        .into_iter()
        .map(String::from)
        .collect();
        let rows = self.effects.iter().map(|e| {
            vec![
                e.figure.clone(),
                e.setting.clone(),
                text::csv_number(e.from),
                text::csv_number(e.to),
                text::csv_number(e.at_from),
                text::csv_number(e.at_to),
                text::csv_number(e.spread),
                text::csv_number(e.change.mean),
                text::csv_number(e.change.low),
                text::csv_number(e.change.high),
                e.decided.to_string(),
            ]
        });
        Some(text::csv(std::iter::once(head).chain(rows)))
    }
}

impl Charted for SensitivityDocument {
    /// Each setting's chart (a panel per figure), one under the other.
    fn chart(&self) -> Result<String, ChartError> {
        let charts = (self.sweeps.iter())
            .map(Charted::chart)
            .collect::<Result<Vec<_>, _>>()?;
        Ok(plot::stack(&charts))
    }

    fn html(&self, chart: Option<&str>) -> String {
        use html::Block;
        let mut blocks = vec![
            Block::Heading("The scenario in plain words".into()),
            Block::Pre(
                self.sweeps
                    .first()
                    .map_or_else(String::new, |d| d.words.clone()),
            ),
            Block::Heading("One-at-a-time effects".into()),
            Block::Paragraph(EFFECTS.into()),
            Block::Table(Table {
                title: String::new(),
                rows: self.effect_rows(),
            }),
        ];
        for d in &self.sweeps {
            blocks.push(Block::Heading(format!("Sweep of {}", d.swept)));
            blocks.push(Block::Table(Table {
                title: String::new(),
                rows: d.rows(),
            }));
            if let Some(summary) = d.goal_summary() {
                blocks.push(Block::Paragraph(summary));
            }
        }
        if let Some(svg) = chart {
            blocks.push(Block::Heading("Each setting's figures".into()));
            blocks.push(Block::Svg(svg.to_string()));
        }
        html::simulated_page(
            &self.scenario,
            &format!("busyhour sweep of {}: several settings", self.file),
            blocks,
            &[],
        )
    }
}
