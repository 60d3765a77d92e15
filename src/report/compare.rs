//! The document of `compare`: two designs run on one plan with common random
//! numbers, every figure they share with each design's estimate and the
//! paired difference B - A (its 95% interval, whether it is decided, and
//! the half-width an unpaired comparison would have had), and the figures
//! only one design reports. The JSON, the table, the CSV, the HTML page and
//! the chart all render it. Computes no figure.

use super::plot::{self, ChartError, Line, LineChart, Paint, Series};
use super::text::{self, Table, align, clock_at, csv_number};
use super::{CAUTION, Charted, Document, html};
use crate::experiment::compare::{Compared, Comparison, Owner, Unmatched};
use crate::scenario::Model;
use crate::stats::{Estimate, Figure, Unit};
use crate::units::{format_duration, trim_float};
use serde::Serialize;

/// One of the two designs.
#[derive(Debug, Clone, Serialize)]
pub struct Design {
    /// The scenario's title.
    pub scenario: String,
    /// The scenario file, as the user named it.
    pub file: String,
}

/// One figure both designs report.
#[derive(Debug, Clone, Serialize)]
pub struct ComparedFigure {
    /// "stream" or "group".
    pub kind: &'static str,
    /// The stream's or group's name.
    pub name: String,
    /// The reporting interval, counted from 0; absent for the whole period.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interval: Option<usize>,
    /// The figure's JSON name ("loss").
    pub figure: &'static str,
    /// A's estimate.
    pub a: Estimate,
    /// B's estimate.
    pub b: Estimate,
    /// B - A from the paired replications, with its 95% interval.
    pub difference: Estimate,
    /// The 95% half-width of B - A from independent runs of the two.
    #[serde(serialize_with = "super::json::finite")]
    pub unpaired_half_width: f64,
    /// Whether the paired interval excludes 0.
    pub decided: bool,
    /// The difference in words ("B loses fewer calls", "not decided").
    pub verdict: String,
    /// Which figure (for the table's label and unit).
    #[serde(skip)]
    pub which: Figure,
}

/// A figure only one design reports.
#[derive(Debug, Clone, Serialize)]
pub struct OnlyFigure {
    /// "stream" or "group".
    pub kind: &'static str,
    /// The stream's or group's name.
    pub name: String,
    /// The reporting interval, counted from 0; absent for the whole period.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interval: Option<usize>,
    /// The figure's JSON name.
    pub figure: &'static str,
    /// Its estimate in the design that reports it.
    pub estimate: Estimate,
    /// Which figure.
    #[serde(skip)]
    pub which: Figure,
}

/// What a comparison found.
#[derive(Debug, Clone, Serialize)]
pub struct CompareDocument {
    /// Design A (the plan's).
    pub a: Design,
    /// Design B.
    pub b: Design,
    /// The busyhour version that made it.
    pub version: &'static str,
    /// The master seed both ran on.
    pub seed: u64,
    /// Paired replications run.
    pub replications: u64,
    /// Warm-up of each replication of both designs (s).
    pub warmup_s: f64,
    /// Measured length of each replication (s).
    pub length_s: f64,
    /// Length of a reporting interval (s), when the designs have intervals.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interval_s: Option<f64>,
    /// Interrupted: fewer replications than planned.
    pub partial: bool,
    /// What of B's file the plan did not use.
    pub notes: Vec<String>,
    /// Every figure both report: whole period first, then by interval.
    pub figures: Vec<ComparedFigure>,
    /// Figures only A reports.
    pub only_a: Vec<OnlyFigure>,
    /// Figures only B reports.
    pub only_b: Vec<OnlyFigure>,
    /// Warnings about the start of either design, marked "A:" or "B:".
    pub warnings: Vec<String>,
    /// The safety caution.
    pub caution: &'static str,
    /// Clock time the measured period begins at (A's), for labels.
    #[serde(skip)]
    pub clock_start: Option<f64>,
}

/// The difference in a planner's words: which way B moves the figure when
/// the interval excludes 0, "not decided" when it does not, and
/// "identical in every replication" when every replication gave both
/// designs the same value.
pub fn verdict(figure: Figure, difference: &Estimate, decided: bool) -> String {
    if difference.mean == 0.0 && difference.half_width == 0.0 {
        return "identical in every replication".into();
    }
    if !decided {
        return "not decided".into();
    }
    let lower = difference.mean < 0.0;
    let pick = |fewer: &str, more: &str| if lower { fewer } else { more }.to_string();
    match figure {
        Figure::Loss => pick("B loses fewer calls", "B loses more calls"),
        Figure::FirstAttemptBlocking | Figure::AttemptBlocking => {
            pick("B blocks fewer attempts", "B blocks more attempts")
        }
        Figure::Abandonment => pick("fewer callers abandon in B", "more callers abandon in B"),
        Figure::WaitProbability => pick("fewer calls wait in B", "more calls wait in B"),
        Figure::ServiceLevel => pick(
            "B answers fewer calls in time",
            "B answers more calls in time",
        ),
        Figure::WaitMean | Figure::WaitP50 | Figure::WaitP90 | Figure::WaitP99 => {
            pick("B's waits are shorter", "B's waits are longer")
        }
        Figure::CarriedTraffic => pick("B carries less", "B carries more"),
        Figure::Occupancy => pick("B's servers are less busy", "B's servers are busier"),
        Figure::TimeCongestion => pick("B is full less often", "B is full more often"),
        Figure::OverflowCalls | Figure::OverflowMean => {
            pick("B overflows less", "B overflows more")
        }
        Figure::OverflowPeakedness => pick("B's overflow is smoother", "B's overflow is peakier"),
        _ => pick("lower in B", "higher in B"),
    }
}

impl ComparedFigure {
    fn new(c: &Compared) -> ComparedFigure {
        let decided = c.decided();
        ComparedFigure {
            kind: c.owner.kind(),
            name: c.owner.name.clone(),
            interval: c.owner.interval,
            figure: c.figure.name(),
            a: c.a,
            b: c.b,
            difference: c.difference,
            unpaired_half_width: c.unpaired_half_width,
            decided,
            verdict: verdict(c.figure, &c.difference, decided),
            which: c.figure,
        }
    }
}

impl OnlyFigure {
    fn new(u: &Unmatched) -> OnlyFigure {
        OnlyFigure {
            kind: u.owner.kind(),
            name: u.owner.name.clone(),
            interval: u.owner.interval,
            figure: u.figure.name(),
            estimate: u.estimate,
            which: u.figure,
        }
    }
}

/// Whole-period figures first, then by interval; streams before groups
/// within each, in each design's file order otherwise (a stable sort).
fn report_order(o: &Owner) -> (Option<usize>, bool) {
    (o.interval, !o.stream)
}

impl CompareDocument {
    /// The document of `result`, a comparison of `a` (read from `file_a`)
    /// with `b` (from `file_b`).
    pub fn new(
        a: &Model,
        file_a: &str,
        b: &Model,
        file_b: &str,
        result: &Comparison,
    ) -> CompareDocument {
        let mut common: Vec<&Compared> = result.common.iter().collect();
        common.sort_by_key(|c| report_order(&c.owner));
        let only = |list: &[Unmatched]| {
            let mut v: Vec<&Unmatched> = list.iter().collect();
            v.sort_by_key(|u| report_order(&u.owner));
            v.into_iter().map(OnlyFigure::new).collect()
        };
        let warnings = (result.a.warnings.iter().map(|w| format!("A: {w}")))
            .chain(result.b.warnings.iter().map(|w| format!("B: {w}")))
            .collect();
        CompareDocument {
            a: Design {
                scenario: a.title.clone(),
                file: file_a.to_string(),
            },
            b: Design {
                scenario: b.title.clone(),
                file: file_b.to_string(),
            },
            version: env!("CARGO_PKG_VERSION"),
            seed: result.plan.seed,
            replications: result.a.replications,
            warmup_s: result.plan.warmup_s,
            length_s: a.plan.length_s,
            interval_s: a.plan.interval_s,
            partial: result.partial,
            notes: result.plan.notes.clone(),
            figures: common.into_iter().map(ComparedFigure::new).collect(),
            only_a: only(&result.only_a),
            only_b: only(&result.only_b),
            warnings,
            caution: CAUTION,
            clock_start: a.plan.clock_start_s,
        }
    }

    /// How the comparison was made, in one line.
    fn plan_line(&self) -> String {
        format!(
            "{} paired replications of {} measured after {} warm-up, seed {}: replication r of A and of B draw the same random numbers for streams of the same name",
            self.replications,
            format_duration(self.length_s),
            format_duration(self.warmup_s),
            self.seed
        )
    }

    /// An interval's label ("09:00-09:30").
    fn interval_label(&self, b: usize) -> String {
        let i = self.interval_s.unwrap_or(0.0);
        let start = b as f64 * i;
        let end = (start + i).min(self.length_s);
        format!(
            "{}-{}",
            clock_at(self.clock_start, start),
            clock_at(self.clock_start, end)
        )
    }

    /// The tables, shared by the terminal and the HTML page.
    pub fn tables(&self) -> Vec<Table> {
        let head = |first: &str| -> Vec<String> {
            [
                first,
                "figure",
                "A",
                "B",
                "B - A (paired 95%)",
                "unpaired ±",
                "verdict",
            ]
            .map(String::from)
            .to_vec()
        };
        let mut whole = vec![head("stream / group")];
        let mut by_interval = vec![head("interval, stream / group")];
        let mut last: Option<(Option<usize>, &str, &str)> = None;
        for f in &self.figures {
            if f.which == Figure::OverflowMeanSquare {
                continue;
            }
            let unit = f.which.unit();
            let owner = (f.interval, f.kind, f.name.as_str());
            let first = if last == Some(owner) {
                String::new()
            } else {
                match f.interval {
                    Some(b) => format!("{} {} {}", self.interval_label(b), f.kind, f.name),
                    None => format!("{} {}", f.kind, f.name),
                }
            };
            last = Some(owner);
            let row = vec![
                first,
                f.which.label().to_string(),
                text::estimate(unit, &f.a),
                text::estimate(unit, &f.b),
                difference_cell(unit, &f.difference),
                if f.unpaired_half_width.is_finite() {
                    format!("± {}", text::value(unit, f.unpaired_half_width))
                } else {
                    "± ?".into()
                },
                f.verdict.clone(),
            ];
            if f.interval.is_some() {
                by_interval.push(row);
            } else {
                whole.push(row);
            }
        }
        let mut tables = vec![Table {
            title: "Figures both designs report (whole measured period)".into(),
            rows: whole,
        }];
        if by_interval.len() > 1 {
            tables.push(Table {
                title: if self.clock_start.is_some() {
                    "By interval (clock time)".into()
                } else {
                    "By interval (from the end of the warm-up)".into()
                },
                rows: by_interval,
            });
        }
        for (list, which) in [(&self.only_a, "A"), (&self.only_b, "B")] {
            if list.is_empty() {
                continue;
            }
            let mut rows = vec![
                ["stream / group", "figure", which]
                    .map(String::from)
                    .to_vec(),
            ];
            let mut last = None;
            for f in list
                .iter()
                .filter(|f| f.which != Figure::OverflowMeanSquare)
            {
                let owner = (f.interval, f.kind, f.name.as_str());
                let whose = match f.interval {
                    _ if last == Some(owner) => String::new(),
                    Some(b) => format!("{} {} {}", self.interval_label(b), f.kind, f.name),
                    None => format!("{} {}", f.kind, f.name),
                };
                last = Some(owner);
                rows.push(vec![
                    whose,
                    f.which.label().to_string(),
                    text::estimate(f.which.unit(), &f.estimate),
                ]);
            }
            tables.push(Table {
                title: format!("Reported only by {which} (not compared)"),
                rows,
            });
        }
        tables
    }

    fn explanation() -> &'static str {
        "\"B - A\" is the difference with its 95% interval from the paired replications (common random\n\
numbers); \"unpaired ±\" the half-width the same number of independent replications would have given.\n\
A difference is decided when its interval excludes 0."
    }
}

/// A difference with its interval: "-0.62% [-0.71% to -0.54%]".
pub fn difference_cell(unit: Unit, d: &Estimate) -> String {
    if d.mean.is_nan() {
        return "-".into();
    }
    if d.mean == 0.0 && d.half_width == 0.0 {
        return "0".into();
    }
    let signed = |x: f64| {
        let v = text::value(unit, x);
        if x > 0.0 { format!("+{v}") } else { v }
    };
    if !(d.low.is_finite() && d.high.is_finite()) {
        return format!("{} [?]", signed(d.mean));
    }
    format!(
        "{} [{} to {}]",
        signed(d.mean),
        signed(d.low),
        signed(d.high)
    )
}

impl Document for CompareDocument {
    fn table(&self) -> String {
        let mut out = format!(
            "A: {}  ({})\nB: {}  ({})\n{}\n{}\n",
            self.a.scenario,
            self.a.file,
            self.b.scenario,
            self.b.file,
            self.plan_line(),
            Self::explanation()
        );
        if self.partial {
            out.push_str(
                "PARTIAL RESULT: the comparison was interrupted; only the replications both designs finished are shown.\n",
            );
        }
        for n in &self.notes {
            out.push_str(&format!("Note: {n}.\n"));
        }
        for t in self.tables() {
            out.push_str(&format!("\n{}\n", t.title));
            out.push_str(&align(&t.rows, "  "));
        }
        for w in &self.warnings {
            out.push_str(&format!("\nWarning: {w}"));
        }
        if !self.warnings.is_empty() {
            out.push('\n');
        }
        out.push_str(&format!("\nCaution: {CAUTION}\n"));
        out
    }

    /// Long format: one row per figure both report, then one per figure
    /// only one reports (its design's columns filled, the other's and the
    /// difference's empty).
    fn csv(&self) -> Option<String> {
        let mut header: Vec<String> = ["kind", "name", "interval_start_s", "figure"]
            .map(String::from)
            .to_vec();
        for who in ["a", "b", "difference"] {
            for col in ["mean", "half_width", "low", "high"] {
                header.push(format!("{who}_{col}"));
            }
        }
        header.extend(
            ["unpaired_half_width", "decided", "verdict", "replications"].map(String::from),
        );
        let start = |b: Option<usize>| {
            b.map_or(String::new(), |b| {
                trim_float(b as f64 * self.interval_s.unwrap_or(0.0), 3)
            })
        };
        let cells = |e: Option<&Estimate>| -> Vec<String> {
            match e {
                Some(e) => vec![
                    csv_number(e.mean),
                    csv_number(e.half_width),
                    csv_number(e.low),
                    csv_number(e.high),
                ],
                None => vec![String::new(); 4],
            }
        };
        let mut rows = vec![header];
        for f in &self.figures {
            let mut row = vec![
                f.kind.to_string(),
                f.name.clone(),
                start(f.interval),
                f.figure.to_string(),
            ];
            row.extend(cells(Some(&f.a)));
            row.extend(cells(Some(&f.b)));
            row.extend(cells(Some(&f.difference)));
            row.extend([
                csv_number(f.unpaired_half_width),
                f.decided.to_string(),
                f.verdict.clone(),
                self.replications.to_string(),
            ]);
            rows.push(row);
        }
        for (list, in_a) in [(&self.only_a, true), (&self.only_b, false)] {
            for f in list {
                let mut row = vec![
                    f.kind.to_string(),
                    f.name.clone(),
                    start(f.interval),
                    f.figure.to_string(),
                ];
                row.extend(cells(in_a.then_some(&f.estimate)));
                row.extend(cells((!in_a).then_some(&f.estimate)));
                row.extend(cells(None));
                row.extend([
                    String::new(),
                    String::new(),
                    format!("only in {}", if in_a { "A" } else { "B" }),
                    self.replications.to_string(),
                ]);
                rows.push(row);
            }
        }
        Some(text::csv(rows))
    }
}

/// The figures the chart draws, one panel each where both designs report
/// them over the whole period.
const CHART_FIGURES: [Figure; 6] = [
    Figure::Loss,
    Figure::Abandonment,
    Figure::ServiceLevel,
    Figure::WaitMean,
    Figure::CarriedTraffic,
    Figure::Occupancy,
];

impl Charted for CompareDocument {
    fn has_chart(&self) -> bool {
        self.figures
            .iter()
            .any(|f| f.interval.is_none() && CHART_FIGURES.contains(&f.which))
    }

    /// One panel per figure: B - A of each stream or group as a dot with its
    /// paired 95% whisker, and the line of no difference.
    fn chart(&self) -> Result<String, ChartError> {
        let mut svgs = Vec::new();
        let panels = CHART_FIGURES
            .into_iter()
            .flat_map(|f| [(f, "stream"), (f, "group")]);
        for (figure, kind) in panels {
            let shown: Vec<&ComparedFigure> = (self.figures.iter())
                .filter(|f| f.interval.is_none() && f.which == figure && f.kind == kind)
                .collect();
            if shown.is_empty() {
                continue;
            }
            let (y_label, scale) = plot::axis(figure);
            let mut c = LineChart::new(
                format!("B - A: {} by {kind} (paired 95% interval)", figure.label()),
                String::new(),
                y_label,
            );
            c.x_categories = shown.iter().map(|f| f.name.clone()).collect();
            c.size.1 = 300;
            c.y_from_zero = false;
            c.zoom_to_goals = false;
            let mut dots = Vec::new();
            let mut band = Vec::new();
            for (slot, f) in shown.iter().enumerate() {
                let d = &f.difference;
                let x = slot as f64;
                if d.mean.is_finite() {
                    dots.push((x, d.mean * scale));
                }
                if d.low.is_finite() && d.high.is_finite() {
                    band.push((x, d.low * scale, d.high * scale));
                }
            }
            c.series.push(Series {
                band: Some(band),
                ..Series::new("B - A (paired 95% interval)", dots)
                    .painted(Paint::Stream(0))
                    .drawn(Line::Dots)
            });
            let right = shown.len().saturating_sub(1) as f64;
            c.series
                .push(Series::goal("no difference", 0.0, (-0.5, right + 0.5)));
            svgs.push(plot::render_svg(&c)?);
        }
        if svgs.is_empty() {
            return Err(ChartError::NoData);
        }
        Ok(plot::stack(&svgs))
    }

    fn html(&self, chart: Option<&str>) -> String {
        use html::Block;
        let mut blocks = vec![
            Block::Heading("The designs".into()),
            Block::List(vec![
                format!("A: {} ({})", self.a.scenario, self.a.file),
                format!("B: {} ({})", self.b.scenario, self.b.file),
            ]),
            Block::Paragraph(format!("{}.", self.plan_line())),
            Block::Paragraph(Self::explanation().replace('\n', " ")),
        ];
        if self.partial {
            blocks.push(Block::Paragraph(
                "PARTIAL RESULT: the comparison was interrupted; only the replications both designs finished are shown."
                    .into(),
            ));
        }
        for n in &self.notes {
            blocks.push(Block::Paragraph(format!("Note: {n}.")));
        }
        for w in &self.warnings {
            blocks.push(Block::Paragraph(format!("Warning: {w}.")));
        }
        blocks.push(Block::Heading("Results".into()));
        blocks.extend(self.tables().into_iter().map(Block::Table));
        if let Some(svg) = chart {
            blocks.push(Block::Heading("Differences".into()));
            blocks.push(Block::Svg(svg.to_string()));
        }
        let paired = [
            "Both designs run on A's plan with the same seed and replication numbers: a stream of \
the same name draws the same arrival and holding times in both, so the difference is estimated from \
paired replications. Streams that differ between the files draw their own numbers.",
        ];
        html::simulated_page(
            "Comparison of two designs (B - A)",
            &format!("busyhour compare of {} and {}", self.a.file, self.b.file),
            blocks,
            &paired,
        )
    }
}
