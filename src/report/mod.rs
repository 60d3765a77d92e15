//! Output people can use: one typed document per command (`run` and
//! `merge` of run parts, `check`, `size`, `sweep` and `merge` of sweep
//! parts, `records`), built once
//! from finished results. JSON comes from serde; the table, the CSV and the
//! HTML page are rendered from the same document, so a figure is named in
//! one place ([`crate::stats::Figure`]). Also atomic file writing. Reads
//! finished results only; must not run the engine.

pub mod check;
pub mod compare;
pub mod cost;
pub mod describe;
pub mod explain;
pub mod figures;
pub mod html;
pub mod json;
pub mod plot;
pub mod records;
pub mod run;
pub mod sensitivity;
pub mod size;
pub mod staffing;
pub mod sweep;
pub mod text;

pub use check::CheckDocument;
pub use compare::CompareDocument;
pub use cost::CostDocument;
pub use explain::ExplainDocument;
pub use figures::{FigureSet, FigureValue, Figures, FormulaValue};
pub use run::RunDocument;
pub use sensitivity::SensitivityDocument;
pub use size::SizeDocument;
pub use staffing::StaffingDocument;
pub use sweep::SweepDocument;
pub use text::Table;

pub use crate::textbook::{Formula, formula_column, formula_view};

use serde::Serialize;
use std::io::Write;
use std::path::Path;

pub use crate::CAUTION;

/// The caution in a form short enough for a chart's footnote (a chart is
/// pasted into documents on its own).
pub const CAUTION_SHORT: &str = "Estimates under stated model assumptions, not guarantees; \
for emergency or life-safety calls keep margin and defer to local regulation and licensed practice.";

/// How a command prints its document.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// The terminal table (the default).
    Table,
    /// JSON with the design's names (`--json`).
    Json,
    /// Long-format CSV, one row per figure (`--csv`).
    Csv,
}

/// A command's output document: serde gives its JSON; the table and (where
/// the command has one) the CSV are rendered from the same fields.
pub trait Document: Serialize {
    /// The terminal table.
    fn table(&self) -> String;

    /// Long-format CSV; `None` for a command without one.
    fn csv(&self) -> Option<String> {
        None
    }
}

/// A document with a chart, and an HTML page that embeds it (`run`,
/// `sweep`).
pub trait Charted: Document {
    /// Whether there is anything to draw (a run without intervals has no
    /// chart).
    fn has_chart(&self) -> bool {
        true
    }

    /// The chart as SVG.
    fn chart(&self) -> Result<String, plot::ChartError>;

    /// The HTML page, with the chart where one is given.
    fn html(&self, chart: Option<&str>) -> String;
}

/// A document that cannot be printed in the format asked for.
#[derive(Debug, thiserror::Error)]
pub enum RenderError {
    /// The command has no CSV form; the flags should have refused `--csv`.
    #[error("this command prints a table or JSON, not CSV")]
    NoCsv,
    /// serde could not write the JSON (a bug: documents hold only strings,
    /// numbers and lists).
    #[error("cannot write the JSON: {0}")]
    Json(#[from] serde_json::Error),
}

/// The document as text in `format`.
pub fn render(format: Format, doc: &impl Document) -> Result<String, RenderError> {
    match format {
        Format::Table => Ok(doc.table()),
        Format::Json => Ok(json::to_text(doc)?),
        Format::Csv => doc.csv().map(with_caution).ok_or(RenderError::NoCsv),
    }
}

/// A CSV file goes around on its own (pasted into a spreadsheet, read by a
/// script), so it carries the caution as its first line, a comment: read it
/// with `pandas.read_csv(path, comment="#")` or skip one line.
fn with_caution(csv: String) -> String {
    format!("# Caution: {CAUTION}\n{csv}")
}

/// Write `contents` to `path` through a temporary file in the same folder
/// and a rename, so a crash never leaves a half-written file and an existing
/// file is replaced only by a complete new one.
pub fn write_atomically(path: &Path, contents: &[u8]) -> std::io::Result<()> {
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path.file_name().ok_or_else(|| {
        std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            "the output path names no file",
        )
    })?;
    let tmp = dir.join(format!(
        ".{}.{}.tmp",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(contents)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}
