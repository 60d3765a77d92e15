//! The document of `size --goal cost`: the cost curve (total and its parts
//! against the size, each with its 95% interval), the size of least
//! expected cost and whether its neighbours cost more at 95%, and the
//! closed-form optimum beside it where Erlang B applies. Built once from a
//! [`CostSizing`]; table, JSON, CSV, chart and HTML render it.

use super::compare::difference_cell;
use super::plot::{self, ChartError, LineChart, Paint, Series};
use super::text::{self, Table, align};
use super::{CAUTION, Charted, Document, html};
use crate::experiment::cost::CostSizing;
use crate::scenario::Model;
use crate::stats::{Estimate, Unit};
use serde::Serialize;

/// One size on the curve.
#[derive(Debug, Clone, Serialize)]
pub struct CostRow {
    /// Servers on the group.
    pub servers: u32,
    /// Expected total cost per measured period.
    pub total: Estimate,
    /// Its parts.
    pub servers_cost: Estimate,
    /// Lost calls.
    pub lost_calls_cost: Estimate,
    /// Abandoned calls.
    pub abandoned_calls_cost: Estimate,
    /// Waiting.
    pub waiting_cost: Estimate,
    /// The closed-form total at this size, where it applies.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub formula_total: Option<f64>,
}

/// A neighbour of the best size against it.
#[derive(Debug, Clone, Serialize)]
pub struct Neighbour {
    /// Its servers.
    pub servers: u32,
    /// Its cost minus the best's, paired.
    pub difference: Estimate,
}

/// What `size --goal cost` found.
#[derive(Debug, Clone, Serialize)]
pub struct CostDocument {
    /// The scenario's title.
    pub scenario: String,
    /// The file, as named.
    pub file: String,
    /// The sized group.
    pub group: String,
    /// Its pack size.
    pub module: u32,
    /// Replications per size (the same seeds at every size).
    pub replications: u64,
    /// The size of least expected cost.
    pub servers: u32,
    /// Its neighbours cost more at 95% (paired differences above 0).
    pub decided: bool,
    /// The evaluated neighbours against the best.
    pub neighbours: Vec<Neighbour>,
    /// The curve, in increasing size.
    pub curve: Vec<CostRow>,
    /// The closed-form optimum's method, where it applies.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub formula_method: Option<&'static str>,
    /// The closed-form optimum's size.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub formula_servers: Option<u32>,
    /// Interrupted.
    pub partial: bool,
    /// The caution.
    pub caution: &'static str,
    /// The scenario in words, for the page.
    #[serde(skip)]
    pub words: String,
}

/// One part of a row's cost.
type Pick = fn(&CostRow) -> Estimate;

/// The closed form's name.
const MOE: &str = "Erlang B cost optimum (Moe's principle, Jensen 1950)";

impl CostDocument {
    /// The document of `sizing` of `model` from `file`.
    pub fn new(model: &Model, file: &str, sizing: &CostSizing) -> CostDocument {
        let curve = (sizing.points.iter())
            .map(|p| CostRow {
                servers: p.servers,
                total: p.cost.total,
                servers_cost: p.cost.servers,
                lost_calls_cost: p.cost.lost,
                abandoned_calls_cost: p.cost.abandoned,
                waiting_cost: p.cost.waiting,
                formula_total: p.formula,
            })
            .collect();
        CostDocument {
            scenario: model.title.clone(),
            file: file.to_string(),
            group: model.groups[sizing.group].name.clone(),
            module: sizing.module,
            replications: sizing.replications,
            servers: sizing.points.get(sizing.best).map_or(0, |p| p.servers),
            decided: sizing.decided(),
            neighbours: (sizing.against.iter().flatten())
                .map(|&(servers, difference)| Neighbour {
                    servers,
                    difference,
                })
                .collect(),
            curve,
            formula_method: sizing.closed_form.as_ref().map(|_| MOE),
            formula_servers: sizing.closed_form.as_ref().map(|c| c.servers),
            partial: sizing.partial,
            caution: CAUTION,
            words: super::describe::describe_model(model, file),
        }
    }

    fn rows(&self) -> Vec<Vec<String>> {
        let e = |x: &Estimate| text::estimate(Unit::Count, x);
        // The parts with a price (a part that is 0 at every size is left
        // out of the table; the JSON and CSV keep it).
        let parts: Vec<(&str, Pick)> = [
            ("servers cost", (|r: &CostRow| r.servers_cost) as Pick),
            ("lost calls cost", |r| r.lost_calls_cost),
            ("abandoned calls cost", |r| r.abandoned_calls_cost),
            ("waiting cost", |r| r.waiting_cost),
        ]
        .into_iter()
        .filter(|(_, pick)| self.curve.iter().any(|r| pick(r).mean != 0.0))
        .collect();
        let mut head = vec![format!("servers on {}", self.group), "total cost".into()];
        head.extend(parts.iter().map(|(name, _)| name.to_string()));
        let formula = self.curve.iter().any(|r| r.formula_total.is_some());
        if formula {
            head.push("[Erlang B total]".into());
        }
        let mut rows = vec![head];
        for r in &self.curve {
            let mut row = vec![
                format!(
                    "{}{}",
                    r.servers,
                    if r.servers == self.servers {
                        " least"
                    } else {
                        ""
                    }
                ),
                e(&r.total),
            ];
            row.extend(parts.iter().map(|(_, pick)| e(&pick(r))));
            if formula {
                row.push(
                    r.formula_total
                        .map_or("-".into(), |v| text::value(Unit::Count, v)),
                );
            }
            rows.push(row);
        }
        rows
    }

    fn verdict(&self) -> String {
        let mut s = format!(
            "Least expected cost: {} servers on {}",
            self.servers, self.group
        );
        if self.module > 1 {
            s.push_str(&format!(", in packs of {}", self.module));
        }
        s.push('.');
        let against: Vec<String> = (self.neighbours.iter())
            .map(|n| {
                format!(
                    "{} servers cost {} more",
                    n.servers,
                    difference_cell(Unit::Count, &n.difference)
                )
            })
            .collect();
        if !against.is_empty() {
            s.push_str(&format!(
                " Paired on the same seeds, {}",
                against.join("; ")
            ));
        }
        s.push_str(if self.decided {
            ": decided, every neighbour costs more at 95%."
        } else {
            ": not decided, a neighbour's paired interval reaches 0 (more replications would separate them, or the costs are that close)."
        });
        if let (Some(m), Some(n)) = (self.formula_method, self.formula_servers) {
            s.push_str(&format!("\n{m}: {n} servers."));
        }
        s
    }
}

impl Document for CostDocument {
    fn table(&self) -> String {
        let mut out = format!(
            "Cost sizing of {} in {}  ({})\nExpected cost per measured period from [prices], {} replications per size, the same seeds at every size; 95% intervals.\n",
            self.group, self.scenario, self.file, self.replications
        );
        if self.partial {
            out.push_str("PARTIAL RESULT: interrupted.\n");
        }
        out.push('\n');
        out.push_str(&align(&self.rows(), "  "));
        out.push_str(&format!("\n{}\n", self.verdict()));
        out.push_str(&format!("\nCaution: {CAUTION}\n"));
        out
    }

    fn csv(&self) -> Option<String> {
        let mut head = vec!["servers".to_string()];
        for part in [
            "total",
            "servers_cost",
            "lost_calls_cost",
            "abandoned_calls_cost",
            "waiting_cost",
        ] {
            for c in ["mean", "low", "high"] {
                head.push(format!("{part}_{c}"));
            }
        }
        head.push("formula_total".into());
        let rows = self.curve.iter().map(|r| {
            let mut row = vec![r.servers.to_string()];
            for e in [
                &r.total,
                &r.servers_cost,
                &r.lost_calls_cost,
                &r.abandoned_calls_cost,
                &r.waiting_cost,
            ] {
                row.extend([e.mean, e.low, e.high].map(text::csv_number));
            }
            row.push(r.formula_total.map_or(String::new(), text::csv_number));
            row
        });
        Some(text::csv(std::iter::once(head).chain(rows)))
    }
}

impl Charted for CostDocument {
    /// Total cost and its parts against the size, with 95% bands; the
    /// closed-form total dashed.
    fn chart(&self) -> Result<String, ChartError> {
        if self.curve.is_empty() {
            return Err(ChartError::NoData);
        }
        let mut c = LineChart::new(
            format!(
                "{}: expected cost against servers on {}",
                self.scenario, self.group
            ),
            format!("servers on {}", self.group),
            "expected cost per measured period",
        );
        let series = |pick: fn(&CostRow) -> Estimate| -> Vec<(f64, Estimate)> {
            self.curve
                .iter()
                .map(|r| (f64::from(r.servers), pick(r)))
                .collect()
        };
        let parts: [(&str, Pick, Paint); 5] = [
            ("total", |r| r.total, Paint::Carried),
            ("servers", |r| r.servers_cost, Paint::Stream(2)),
            ("lost calls", |r| r.lost_calls_cost, Paint::Stream(1)),
            (
                "abandoned calls",
                |r| r.abandoned_calls_cost,
                Paint::Stream(3),
            ),
            ("waiting", |r| r.waiting_cost, Paint::Stream(4)),
        ];
        for (name, pick, paint) in parts {
            let pts = series(pick);
            if pts.iter().all(|(_, e)| e.mean == 0.0) {
                continue;
            }
            c.series.push(
                plot::estimate_series(format!("{name} (95% band)"), &pts, 1.0).painted(paint),
            );
        }
        let formula: Vec<(f64, f64)> = (self.curve.iter())
            .filter_map(|r| Some((f64::from(r.servers), r.formula_total?)))
            .collect();
        if !formula.is_empty() {
            c.series.push(
                Series::formula("total by Erlang B (closed form)", formula).painted(Paint::Carried),
            );
        }
        plot::render_svg(&c)
    }

    fn html(&self, chart: Option<&str>) -> String {
        use html::Block;
        let mut blocks = vec![
            Block::Heading("The scenario in plain words".into()),
            Block::Pre(self.words.clone()),
            Block::Heading(format!("Cost sizing of {}", self.group)),
            Block::Paragraph(self.verdict()),
            Block::Table(Table {
                title: "Expected cost per measured period".into(),
                rows: self.rows(),
            }),
        ];
        if let Some(svg) = chart {
            blocks.push(Block::Svg(svg.to_string()));
        }
        html::simulated_page(
            &self.scenario,
            &format!(
                "busyhour size --goal cost of {} in {}",
                self.group, self.file
            ),
            blocks,
            &[],
        )
    }
}
