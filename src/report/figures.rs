//! A figure's estimate and closed-form value as every document carries
//! them, and the figures of one stream or group. The figure itself
//! ([`Figure`]) gives the JSON name, the label and the unit, so a new
//! figure needs nothing here.

use super::json::finite;
use super::text::csv_number;
use crate::stats::{Estimate, Estimator, Figure};
use crate::textbook::Formula;
use serde::ser::{Serialize, SerializeMap, Serializer};

/// A closed-form value beside an estimate.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FormulaValue {
    /// The method ("Erlang B", "Erlang C", ...; "approx." where it is one).
    pub name: &'static str,
    /// Its value in the figure's unit; null where the formula is undefined.
    #[serde(serialize_with = "finite")]
    pub value: f64,
}

impl From<&Formula> for FormulaValue {
    fn from(f: &Formula) -> FormulaValue {
        FormulaValue {
            name: f.name,
            value: f.value,
        }
    }
}

/// One figure's estimate with its 95% interval: in the JSON its `mean`,
/// `half_width`, `low`, `high` (null where undefined), `replications`,
/// `estimator`, and `formula` where a closed form applies.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FigureValue {
    /// Which figure (its name is the key the value is written under).
    #[serde(skip)]
    pub figure: Figure,
    /// The estimate and its interval.
    #[serde(flatten)]
    pub estimate: Estimate,
    /// How the replications were combined.
    pub estimator: Estimator,
    /// The closed-form value, where its assumptions hold.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub formula: Option<FormulaValue>,
}

impl FigureValue {
    /// The CSV columns of a figure's value, after the columns that say
    /// whose it is.
    pub const CSV_COLUMNS: [&'static str; 9] = [
        "figure",
        "mean",
        "half_width",
        "low",
        "high",
        "estimator",
        "replications",
        "formula",
        "formula_value",
    ];

    /// The value's cells under [`FigureValue::CSV_COLUMNS`] (empty where
    /// undefined or absent).
    pub fn csv_cells(&self) -> [String; 9] {
        let e = &self.estimate;
        let (formula, formula_value) = self
            .formula
            .as_ref()
            .map_or((String::new(), String::new()), |f| {
                (f.name.to_string(), csv_number(f.value))
            });
        [
            self.figure.name().to_string(),
            csv_number(e.mean),
            csv_number(e.half_width),
            csv_number(e.low),
            csv_number(e.high),
            self.estimator.name().to_string(),
            e.replications.to_string(),
            formula,
            formula_value,
        ]
    }

    /// The estimate of `figure`, with its closed form if any.
    pub fn new(figure: Figure, estimate: Estimate, formula: Option<&Formula>) -> FigureValue {
        FigureValue {
            figure,
            estimate,
            estimator: figure.estimator(),
            formula: formula.map(FormulaValue::from),
        }
    }
}

/// Figures in report order, written in the JSON as an object keyed by
/// figure name.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Figures(pub Vec<FigureValue>);

impl Figures {
    /// The value of `figure`, if reported.
    pub fn get(&self, figure: Figure) -> Option<&FigureValue> {
        self.0.iter().find(|v| v.figure == figure)
    }

    /// The figures in report order.
    pub fn iter(&self) -> std::slice::Iter<'_, FigureValue> {
        self.0.iter()
    }
}

impl Serialize for Figures {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut map = s.serialize_map(Some(self.0.len()))?;
        for v in &self.0 {
            map.serialize_entry(v.figure.name(), v)?;
        }
        map.end()
    }
}

/// The figures of one stream or group (of the whole period or one
/// interval), under its name.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FigureSet {
    /// The stream's or group's name.
    pub name: String,
    /// A group's servers (whole-period group sets only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub servers: Option<u32>,
    /// Its figures, written beside `name` as keys.
    #[serde(flatten)]
    pub figures: Figures,
}

impl FigureSet {
    /// A set with no figures yet.
    pub fn new(name: &str, servers: Option<u32>) -> FigureSet {
        FigureSet {
            name: name.to_string(),
            servers,
            figures: Figures::default(),
        }
    }

    /// The mean of `figure`; NaN when it is not reported or undefined.
    pub fn mean(&self, figure: Figure) -> f64 {
        self.figures
            .get(figure)
            .map_or(f64::NAN, |v| v.estimate.mean)
    }
}
