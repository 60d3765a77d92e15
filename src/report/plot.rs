//! Drawing: SVG charts from numbers. One or more named series against a
//! common x axis (numbers, or named categories for dot-and-whisker charts),
//! each with an optional band (a confidence interval, a min-max range),
//! shaded vertical spans marking periods (busy hours), goal lines, axis
//! labels with units and a title, the legend below the plot, and several
//! charts stacked into one SVG. The charts of `run`, `size`, `sweep` and
//! `records` are built from their documents in their own modules; this one
//! owns drawing, and the one map from what a line means to its colour and
//! dash ([`Paint`], [`Line`]).
//!
//! The frame (axes, ticks, grid, title) is drawn with the `plotters` crate's
//! SVG backend; the data (bands, lines, dots) and the legend are written as
//! SVG elements here, so that a formula line carries a real
//! `stroke-dasharray` and data outside a zoomed axis is clipped (a nested
//! `<svg>` clips what it holds). No fonts needed: text is written as SVG
//! text elements and laid out by the viewer.

use crate::stats::Estimate;
use plotters::prelude::*;
use std::fmt::{self, Write as _};

/// What a line stands for; it picks the colour, the same meaning the same
/// colour in every chart. The palette is our own: chosen for readers with
/// any common colour-vision deficiency (it varies lightness, and hue along
/// blue-orange, not red against green) and for greyscale print (the first
/// five stream colours differ in lightness).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Paint {
    /// By the series' place in its chart (for charts that set no meaning).
    #[default]
    Auto,
    /// Offered traffic (light blue).
    Offered,
    /// Carried traffic (navy).
    Carried,
    /// A stream's figures, by the stream's index in the scenario.
    Stream(usize),
    /// A group's figures, by the group's index (the palette in another
    /// order, so that stream 0 and group 0 differ).
    Group(usize),
    /// A goal or target line (near black).
    Goal,
}

/// The colour of offered traffic.
pub const OFFERED: RGBColor = RGBColor(0x6a, 0xa6, 0xdc);
/// The colour of carried traffic.
pub const CARRIED: RGBColor = RGBColor(0x1c, 0x3a, 0x70);
/// The colour of goal and target lines.
pub const GOAL: RGBColor = RGBColor(0x11, 0x11, 0x11);
/// Streams' and groups' colours, in order (relative luminance 0.04, 0.16,
/// 0.31, 0.43, 0.58, 0.10: distinct in greyscale for the first five).
pub const PALETTE: [RGBColor; 6] = [
    RGBColor(0x3b, 0x2a, 0x66), // indigo
    RGBColor(0xc4, 0x46, 0x2a), // brick
    RGBColor(0x35, 0xa8, 0x9a), // teal
    RGBColor(0xe8, 0xa2, 0x1e), // amber
    RGBColor(0x9f, 0xd0, 0xea), // sky
    RGBColor(0x7a, 0x3d, 0x8f), // plum
];
/// The palette's order for groups: from its other end (so that stream 0 and
/// group 0 differ), with the light sky, faint on white, late.
const GROUP_ORDER: [usize; 6] = [5, 3, 2, 4, 1, 0];
/// The colour of marked periods (busy hours).
const MARKER: RGBColor = RGBColor(0xf0, 0xd2, 0x8c);

impl Paint {
    /// The colour, for a series at `position` in its chart (used by `Auto`).
    pub fn colour(self, position: usize) -> RGBColor {
        match self {
            Paint::Auto => PALETTE[position % PALETTE.len()],
            Paint::Offered => OFFERED,
            Paint::Carried => CARRIED,
            Paint::Stream(s) => PALETTE[s % PALETTE.len()],
            Paint::Group(g) => PALETTE[GROUP_ORDER[g % GROUP_ORDER.len()]],
            Paint::Goal => GOAL,
        }
    }
}

/// How a series is drawn: simulated figures solid, closed forms dashed,
/// goals dash-dotted; dots (with whiskers from the band) and rings for
/// charts of named categories.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Line {
    /// A simulated figure.
    #[default]
    Solid,
    /// A closed-form (formula) figure.
    Dashed,
    /// A goal or target.
    DashDot,
    /// Filled dots, the band drawn as whiskers (a simulated figure).
    Dots,
    /// Open rings (a closed-form value beside a dot).
    Rings,
}

impl Line {
    /// The SVG `stroke-dasharray` of the line, if dashed.
    fn dash(self) -> Option<&'static str> {
        match self {
            Line::Dashed => Some("9 5"),
            Line::DashDot => Some("14 5 3 5"),
            _ => None,
        }
    }
}

/// One line of the chart.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Series {
    /// Name shown in the legend.
    pub name: String,
    /// (x, y) points, drawn in the order given.
    pub points: Vec<(f64, f64)>,
    /// Optional band: (x, low, high) points, shaded in the series' colour.
    pub band: Option<Vec<(f64, f64, f64)>>,
    /// What it stands for (its colour).
    pub paint: Paint,
    /// How it is drawn.
    pub line: Line,
}

impl Series {
    /// A simulated series: solid, coloured by its place.
    pub fn new(name: impl Into<String>, points: Vec<(f64, f64)>) -> Series {
        Series {
            name: name.into(),
            points,
            ..Series::default()
        }
    }

    /// A closed-form series: dashed.
    pub fn formula(name: impl Into<String>, points: Vec<(f64, f64)>) -> Series {
        Series::new(name, points).drawn(Line::Dashed)
    }

    /// A goal line at `bound` across `x0..x1`: near black, dash-dotted.
    pub fn goal(name: impl Into<String>, bound: f64, (x0, x1): (f64, f64)) -> Series {
        Series::new(name, vec![(x0, bound), (x1, bound)])
            .painted(Paint::Goal)
            .drawn(Line::DashDot)
    }

    /// The same series in another colour.
    pub fn painted(mut self, paint: Paint) -> Series {
        self.paint = paint;
        self
    }

    /// The same series drawn another way.
    pub fn drawn(mut self, line: Line) -> Series {
        self.line = line;
        self
    }
}

/// A set of vertical spans sharing one legend entry.
#[derive(Debug, Clone, PartialEq)]
pub struct Markers {
    /// Name shown in the legend.
    pub name: String,
    /// (from, to) x ranges to shade.
    pub spans: Vec<(f64, f64)>,
}

/// A line chart. `x_ticks` formats the x axis tick labels (default: the
/// number).
pub struct LineChart {
    /// Title above the chart.
    pub title: String,
    /// X axis label, with its unit.
    pub x_label: String,
    /// Y axis label, with its unit.
    pub y_label: String,
    /// The lines.
    pub series: Vec<Series>,
    /// Shaded spans.
    pub markers: Vec<Markers>,
    /// Width and height of the plot panel in pixels (the legend, and the
    /// panel near the goal where one is drawn, add to the height).
    pub size: (u32, u32),
    /// Start the y axis at zero (otherwise at the data's minimum).
    pub y_from_zero: bool,
    /// Tick label format for the x axis.
    pub x_ticks: Option<Box<dyn Fn(f64) -> String>>,
    /// Named categories along the x axis (a dot-and-whisker chart): x = 0,
    /// 1, ... are the categories, labelled with these names.
    pub x_categories: Vec<String>,
    /// Add a second panel with the y axis cut near the goal lines when they
    /// lie low on the full axis (below an eighth of its height), so that a
    /// 1% goal is not squashed onto the x axis by a curve reaching 30%.
    pub zoom_to_goals: bool,
}

impl fmt::Debug for LineChart {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("LineChart")
            .field("title", &self.title)
            .field("series", &self.series.len())
            .field("markers", &self.markers.len())
            .finish()
    }
}

/// Width of every chart, in pixels: the HTML page shows it at its native
/// size (72rem, about 1150 px, less the page's padding).
pub const WIDTH: u32 = 1100;

impl LineChart {
    /// An empty chart with a title and axis labels, [`WIDTH`] x 480 pixels,
    /// y from zero.
    pub fn new(
        title: impl Into<String>,
        x_label: impl Into<String>,
        y_label: impl Into<String>,
    ) -> Self {
        LineChart {
            title: title.into(),
            x_label: x_label.into(),
            y_label: y_label.into(),
            series: Vec::new(),
            markers: Vec::new(),
            size: (WIDTH, 480),
            y_from_zero: true,
            x_ticks: None,
            x_categories: Vec::new(),
            zoom_to_goals: true,
        }
    }
}

/// A chart that cannot be drawn.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ChartError {
    /// No series has a finite point.
    #[error("the chart has no data to draw")]
    NoData,
    /// The drawing backend failed.
    #[error("cannot draw the chart: {0}")]
    Draw(String),
}

fn finite_range(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    values
        .filter(|v| v.is_finite())
        .fold(None, |acc, v| match acc {
            None => Some((v, v)),
            Some((lo, hi)) => Some((lo.min(v), hi.max(v))),
        })
}

/// Font sizes in SVG pixels at the chart's native size. (plotters writes a
/// font of size s as `font-size` s / 1.24; [`font`] undoes that.)
const TITLE_PX: f64 = 19.0;
const AXIS_PX: f64 = 16.0;
const TICK_PX: f64 = 15.0;
const LEGEND_PX: f64 = 15.0;

/// The plotters font size that is written as at least `px` SVG pixels
/// (plotters keeps whole sizes).
fn font(px: f64) -> (&'static str, f64) {
    ("sans-serif", (px * 1.24).ceil())
}

/// Height of one legend row, in pixels.
const LEGEND_ROW: u32 = 26;
/// Width of a legend entry's sample line.
const SAMPLE_W: u32 = 36;

/// A legend entry: a shaded span, or a series' sample.
enum Entry<'a> {
    Span(&'a str),
    Line(&'a str, RGBColor, Line),
}

impl Entry<'_> {
    fn name(&self) -> &str {
        match self {
            Entry::Span(n) | Entry::Line(n, ..) => n,
        }
    }

    /// Width on the page: the sample, a gap, the text (an average sans-serif
    /// glyph is taken as 0.6 em, a little wider than most) and the space to
    /// the next entry.
    fn width(&self) -> u32 {
        SAMPLE_W + 8 + (self.name().chars().count() as f64 * LEGEND_PX * 0.6) as u32 + 28
    }
}

/// The legend's entries laid out in rows within `width`.
fn legend_rows<'a>(chart: &'a LineChart, width: u32) -> Vec<Vec<Entry<'a>>> {
    let mut entries: Vec<Entry<'a>> = Vec::new();
    for m in &chart.markers {
        entries.push(Entry::Span(&m.name));
    }
    for (k, s) in chart.series.iter().enumerate() {
        if s.name.is_empty() || entries.iter().any(|e| e.name() == s.name) {
            continue;
        }
        entries.push(Entry::Line(&s.name, s.paint.colour(k), s.line));
    }
    let mut rows: Vec<Vec<Entry<'a>>> = Vec::new();
    let mut used = u32::MAX;
    for e in entries {
        let w = e.width();
        if used.saturating_add(w) > width {
            rows.push(Vec::new());
            used = 0;
        }
        used += w;
        rows.last_mut().expect("a row was pushed").push(e);
    }
    rows
}

fn hex(c: RGBColor) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

/// The x range of the chart's data (the categories' slots for a category
/// chart).
fn x_range(chart: &LineChart) -> Result<(f64, f64), ChartError> {
    if !chart.x_categories.is_empty() {
        return Ok((-0.5, chart.x_categories.len() as f64 - 0.5));
    }
    let xs = chart
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.0))
        .chain(
            chart
                .markers
                .iter()
                .flat_map(|m| m.spans.iter().flat_map(|s| [s.0, s.1])),
        );
    let (x0, x1) = finite_range(xs).ok_or(ChartError::NoData)?;
    Ok((x0, if x1 <= x0 { x0 + 1.0 } else { x1 }))
}

/// The y range of the chart's data, bands and goal lines, with 5% room
/// above.
fn y_range(chart: &LineChart) -> Result<(f64, f64), ChartError> {
    let ys = chart.series.iter().flat_map(|s| {
        s.points
            .iter()
            .map(|p| p.1)
            .chain(s.band.iter().flatten().flat_map(|b| [b.1, b.2]))
    });
    let (mut y0, mut y1) = finite_range(ys).ok_or(ChartError::NoData)?;
    if chart.y_from_zero {
        y0 = y0.min(0.0);
    }
    if y1 <= y0 {
        y1 = y0 + 1.0;
    }
    Ok((y0, y1 + 0.05 * (y1 - y0)))
}

/// The top of the panel near the goals: three times the highest goal, when
/// every goal lies below an eighth of the full axis (and the axis starts at
/// zero or above).
fn zoom_top(chart: &LineChart, (y0, y1): (f64, f64)) -> Option<f64> {
    if !chart.zoom_to_goals || y0 < 0.0 {
        return None;
    }
    let goals = chart
        .series
        .iter()
        .filter(|s| s.paint == Paint::Goal)
        .flat_map(|s| s.points.iter().map(|p| p.1));
    let (_, highest) = finite_range(goals)?;
    (highest > 0.0 && highest * 8.0 < y1).then_some(highest * 3.0)
}

/// Draw the chart as an SVG document: the plot panel, a panel with the y
/// axis cut near the goals where they lie low (see
/// [`LineChart::zoom_to_goals`]), and the legend below.
///
/// # Example
/// ```
/// use busyhour::report::plot::{LineChart, Series, render_svg};
/// let mut c = LineChart::new("Load", "time (h)", "traffic (erlangs)");
/// c.series.push(Series::new("carried", vec![(0.0, 1.0), (1.0, 3.0)]));
/// c.series.push(Series::formula("Erlang B", vec![(0.0, 1.1), (1.0, 2.9)]));
/// let svg = render_svg(&c).unwrap();
/// assert!(svg.starts_with("<svg") && svg.contains("carried"));
/// assert!(svg.contains("stroke-dasharray"));
/// ```
pub fn render_svg(chart: &LineChart) -> Result<String, ChartError> {
    let xr = x_range(chart)?;
    let yr = y_range(chart)?;
    let zoom = zoom_top(chart, yr);
    let (width, panel_h) = chart.size;
    let zoom_h = if zoom.is_some() { panel_h * 3 / 4 } else { 0 };
    let rows = legend_rows(chart, width.saturating_sub(40));
    let legend_h = if rows.is_empty() {
        0
    } else {
        rows.len() as u32 * LEGEND_ROW + 10
    };
    let height = panel_h + zoom_h + legend_h;
    let mut svg = String::new();
    let mut data = String::new();
    {
        let draw = |e: &dyn fmt::Display| ChartError::Draw(e.to_string());
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| draw(&e))?;
        let (top, rest) = root.split_vertically(panel_h);
        draw_panel(&top, chart, &chart.title, xr, yr, &mut data)?;
        if let Some(z) = zoom {
            let (near, _) = rest.split_vertically(zoom_h);
            let title = format!(
                "Near the goal: the same chart with the y axis cut at {}",
                crate::units::trim_float(z, 3)
            );
            draw_panel(&near, chart, &title, xr, (0.0, z), &mut data)?;
        }
        root.present().map_err(|e| draw(&e))?;
    }
    legend(&rows, panel_h + zoom_h, &mut data);
    let end = svg
        .rfind("</svg>")
        .ok_or(ChartError::Draw("no SVG end".into()))?;
    svg.insert_str(end, &data);
    Ok(svg)
}

/// Draw one panel's frame with plotters, and its data into `out` as SVG
/// elements clipped to the plotting area.
fn draw_panel(
    area: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
    chart: &LineChart,
    title: &str,
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
    out: &mut String,
) -> Result<(), ChartError> {
    let draw = |e: &dyn fmt::Display| ChartError::Draw(e.to_string());
    let categories = !chart.x_categories.is_empty();
    // A long title (a scenario's own) is set smaller to fit the width, an
    // average glyph taken as 0.55 em, down to the tick size.
    let (width, _) = area.dim_in_pixel();
    let chars = title.chars().count().max(1) as f64;
    let title_px = (f64::from(width.saturating_sub(40)) / (chars * 0.55)).clamp(TICK_PX, TITLE_PX);
    let mut c = ChartBuilder::on(area)
        .caption(title, font(title_px))
        .margin(14)
        .margin_right(28)
        .x_label_area_size(if categories { 40 } else { 62 })
        .y_label_area_size(84)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(|e| draw(&e))?;
    let ticks = |x: &f64| match &chart.x_ticks {
        Some(f) => f(*x),
        None => crate::units::trim_float(*x, 2),
    };
    // A tick a rounding error below zero is written "0", not "-0".
    let y_ticks = |y: &f64| match crate::units::trim_float(*y, 3) {
        s if s == "-0" => "0".to_string(),
        s => s,
    };
    let mut mesh = c.configure_mesh();
    mesh.x_desc(chart.x_label.as_str())
        .y_desc(chart.y_label.as_str())
        .x_label_formatter(&ticks)
        .y_label_formatter(&y_ticks)
        .label_style(font(TICK_PX))
        .axis_desc_style(font(AXIS_PX))
        .light_line_style(WHITE.mix(0.0))
        .bold_line_style(BLACK.mix(0.12));
    if categories {
        mesh.x_labels(0).disable_x_mesh();
    }
    mesh.draw().map_err(|e| draw(&e))?;
    for m in &chart.markers {
        let spans = m
            .spans
            .iter()
            .filter(|s| s.0.is_finite() && s.1.is_finite())
            .map(|&(a, b)| Rectangle::new([(a, y0), (b, y1)], MARKER.mix(0.55).filled()));
        c.draw_series(spans).map_err(|e| draw(&e))?;
    }
    let (px, py) = c.plotting_area().get_pixel_range();
    let at = |x: f64, y: f64| c.backend_coord(&(x, y));
    // A nested <svg> clips what it holds to the plotting area.
    let _ = writeln!(
        out,
        "<svg x=\"{0}\" y=\"{1}\" width=\"{2}\" height=\"{3}\" viewBox=\"{0} {1} {2} {3}\" overflow=\"hidden\">",
        px.start,
        py.start,
        px.end - px.start,
        py.end - py.start
    );
    let finite = |v: &[f64]| v.iter().all(|x| x.is_finite());
    for (k, s) in chart.series.iter().enumerate() {
        let colour = hex(s.paint.colour(k));
        let Some(band) = &s.band else { continue };
        let band: Vec<_> = band.iter().filter(|b| finite(&[b.0, b.1, b.2])).collect();
        if matches!(s.line, Line::Dots | Line::Rings) {
            for b in band {
                let (x, lo) = at(b.0, b.1);
                let (_, hi) = at(b.0, b.2);
                let _ = writeln!(
                    out,
                    "<path d=\"M{x} {lo}V{hi}M{} {lo}h12M{} {hi}h12\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"2\"/>",
                    x - 6,
                    x - 6
                );
            }
        } else if band.len() >= 2 {
            let outline: Vec<String> = band
                .iter()
                .map(|b| at(b.0, b.2))
                .chain(band.iter().rev().map(|b| at(b.0, b.1)))
                .map(|(x, y)| format!("{x},{y}"))
                .collect();
            let _ = writeln!(
                out,
                "<polygon points=\"{}\" fill=\"{colour}\" fill-opacity=\"0.16\" stroke=\"none\"/>",
                outline.join(" ")
            );
        }
    }
    for (k, s) in chart.series.iter().enumerate() {
        let colour = hex(s.paint.colour(k));
        let points: Vec<(i32, i32)> = (s.points.iter())
            .filter(|p| finite(&[p.0, p.1]))
            .map(|p| at(p.0, p.1))
            .collect();
        match s.line {
            Line::Dots | Line::Rings => {
                let fill = if s.line == Line::Dots {
                    colour.as_str()
                } else {
                    "#ffffff"
                };
                for (x, y) in points {
                    let _ = writeln!(
                        out,
                        "<circle cx=\"{x}\" cy=\"{y}\" r=\"6\" fill=\"{fill}\" stroke=\"{colour}\" stroke-width=\"2.5\"/>"
                    );
                }
            }
            line => {
                let coords: Vec<String> = points.iter().map(|(x, y)| format!("{x},{y}")).collect();
                let dash = line
                    .dash()
                    .map_or(String::new(), |d| format!(" stroke-dasharray=\"{d}\""));
                let _ = writeln!(
                    out,
                    "<polyline points=\"{}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"2.5\" stroke-linejoin=\"round\"{dash}/>",
                    coords.join(" ")
                );
            }
        }
    }
    out.push_str("</svg>\n");
    for (k, name) in chart.x_categories.iter().enumerate() {
        let (x, _) = at(k as f64, y0);
        let _ = writeln!(
            out,
            "<text x=\"{x}\" y=\"{}\" text-anchor=\"middle\" font-family=\"sans-serif\" font-size=\"{TICK_PX}\" fill=\"#000000\">{}</text>",
            py.end + 22,
            super::html::escape(name)
        );
    }
    Ok(())
}

/// The legend's rows as SVG elements, from `top` down.
fn legend(rows: &[Vec<Entry<'_>>], top: u32, out: &mut String) {
    for (r, row) in rows.iter().enumerate() {
        let y = top + r as u32 * LEGEND_ROW + LEGEND_ROW / 2 + 4;
        let mut x = 20;
        for e in row {
            match e {
                Entry::Span(_) => {
                    let _ = writeln!(
                        out,
                        "<rect x=\"{x}\" y=\"{}\" width=\"{SAMPLE_W}\" height=\"14\" fill=\"{}\" fill-opacity=\"0.55\"/>",
                        y - 7,
                        hex(MARKER)
                    );
                }
                Entry::Line(_, colour, line @ (Line::Dots | Line::Rings)) => {
                    let fill = if *line == Line::Dots {
                        hex(*colour)
                    } else {
                        "#ffffff".into()
                    };
                    let _ = writeln!(
                        out,
                        "<circle cx=\"{}\" cy=\"{y}\" r=\"6\" fill=\"{fill}\" stroke=\"{}\" stroke-width=\"2.5\"/>",
                        x + SAMPLE_W / 2,
                        hex(*colour)
                    );
                }
                Entry::Line(_, colour, line) => {
                    let dash = line
                        .dash()
                        .map_or(String::new(), |d| format!(" stroke-dasharray=\"{d}\""));
                    let _ = writeln!(
                        out,
                        "<path d=\"M{x} {y}h{SAMPLE_W}\" stroke=\"{}\" stroke-width=\"2.5\"{dash}/>",
                        hex(*colour)
                    );
                }
            }
            let _ = writeln!(
                out,
                "<text x=\"{}\" y=\"{}\" font-family=\"sans-serif\" font-size=\"{LEGEND_PX}\" fill=\"#000000\">{}</text>",
                x + SAMPLE_W + 8,
                y + 5,
                super::html::escape(e.name())
            );
            x += e.width();
        }
    }
}

/// A figure's y axis label with its unit, and the scale from its value
/// (100 for shares drawn in percent): "loss (calls never served, %)",
/// "service level (%)" (the unit joins a label's own brackets rather than
/// opening a second pair).
pub fn axis(figure: crate::stats::Figure) -> (String, f64) {
    use crate::stats::Unit;
    let (unit, scale) = match figure.unit() {
        Unit::Share => ("%", 100.0),
        Unit::Erlangs => ("erlangs", 1.0),
        Unit::Seconds => ("seconds", 1.0),
        Unit::Count => ("calls", 1.0),
        Unit::Ratio => ("ratio", 1.0),
    };
    let label = figure.label();
    let text = match label.strip_suffix(')') {
        Some(inner) if inner.contains(" (") => format!("{inner}, {unit})"),
        _ => format!("{label} ({unit})"),
    };
    (text, scale)
}

/// A series of estimates at x positions, scaled by `scale` (100 for
/// percentages), with their 95% interval as its band (the interval's two
/// ends: cut to the figure's range, or widened by an exact bound for rare
/// events); undefined estimates are left out.
pub fn estimate_series(name: String, points: &[(f64, Estimate)], scale: f64) -> Series {
    let band: Vec<(f64, f64, f64)> = points
        .iter()
        .filter(|(_, e)| e.mean.is_finite() && e.low.is_finite() && e.high.is_finite())
        .map(|(x, e)| (*x, e.low * scale, e.high * scale))
        .collect();
    Series {
        band: (!band.is_empty()).then_some(band),
        ..Series::new(
            name,
            points
                .iter()
                .filter(|(_, e)| e.mean.is_finite())
                .map(|(x, e)| (*x, e.mean * scale))
                .collect(),
        )
    }
}
/// Stack several SVG charts vertically into one SVG document (nested `<svg>`
/// elements, each at its own offset), with the caution as a footnote.
pub fn stack(charts: &[String]) -> String {
    // Every chart file ends with the caution as a footnote.
    let dims = |svg: &str| -> (u32, u32) {
        let attr = |name: &str| -> u32 {
            svg.find(&format!("{name}=\""))
                .and_then(|i| {
                    let rest = &svg[i + name.len() + 2..];
                    rest.find('"')
                        .and_then(|j| rest[..j].trim_end_matches("px").parse().ok())
                })
                .unwrap_or(0)
        };
        (attr("width"), attr("height"))
    };
    let width = charts.iter().map(|c| dims(c).0).max().unwrap_or(0);
    let panels: u32 = charts.iter().map(|c| dims(c).1).sum();
    let height = panels + FOOTNOTE_HEIGHT;
    let mut out = format!(
        "<svg width=\"{width}\" height=\"{height}\" viewBox=\"0 0 {width} {height}\" xmlns=\"http://www.w3.org/2000/svg\">\n"
    );
    let mut y = 0;
    for c in charts {
        let body = c.find("<svg").map_or(c.as_str(), |i| &c[i..]);
        out.push_str(&body.replacen("<svg", &format!("<svg y=\"{y}\""), 1));
        out.push('\n');
        y += dims(c).1;
    }
    out.push_str(&format!(
        "<text x=\"8\" y=\"{}\" font-family=\"sans-serif\" font-size=\"13\" fill=\"#444\">{}</text>\n",
        panels + FOOTNOTE_HEIGHT - 6,
        super::html::escape(super::CAUTION_SHORT)
    ));
    out.push_str("</svg>\n");
    out
}

/// Height of the caution line under a stacked chart, in pixels.
const FOOTNOTE_HEIGHT: u32 = 24;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn empty_chart_is_an_error() {
        let c = LineChart::new("t", "x", "y");
        assert_eq!(render_svg(&c).unwrap_err(), ChartError::NoData);
    }

    #[test]
    fn names_are_escaped() {
        let mut c = LineChart::new("A & B", "x", "y");
        c.series.push(Series {
            band: Some(vec![(0.0, 0.5, 1.5), (1.0, 1.5, 2.5)]),
            ..Series::new("<offered>", vec![(0.0, 1.0), (1.0, 2.0)])
        });
        c.markers.push(Markers {
            name: "busy hour".into(),
            spans: vec![(0.2, 0.4)],
        });
        let svg = render_svg(&c).unwrap();
        assert!(svg.contains("A &amp; B") && svg.contains("&lt;offered&gt;"));
        assert!(svg.contains("busy hour") && svg.contains("<polygon"));
        assert!(!svg.contains("<offered>"));
    }

    #[test]
    fn formula_lines_are_dashed_simulated_solid_and_goals_dash_dotted() {
        let mut c = LineChart::new("t", "x", "y");
        c.series
            .push(Series::new("sim", vec![(0.0, 1.0), (1.0, 2.0)]).painted(Paint::Stream(1)));
        c.series
            .push(Series::formula("book", vec![(0.0, 1.1), (1.0, 2.1)]).painted(Paint::Stream(1)));
        c.series.push(Series::goal("goal", 1.5, (0.0, 1.0)));
        let svg = render_svg(&c).unwrap();
        let lines: Vec<&str> = svg
            .lines()
            .filter(|l| l.starts_with("<polyline") && l.contains("stroke-width=\"2.5\""))
            .collect();
        assert_eq!(lines.len(), 3, "{svg}");
        let brick = hex(PALETTE[1]);
        assert!(lines[0].contains(&brick) && !lines[0].contains("dasharray"));
        assert!(lines[1].contains(&brick) && lines[1].contains("stroke-dasharray=\"9 5\""));
        assert!(
            lines[2].contains(&hex(GOAL)) && lines[2].contains("stroke-dasharray=\"14 5 3 5\"")
        );
        // The legend sits below the plot: every legend text lies under the
        // plotting area's bottom edge.
        assert!(svg.contains(">book</text>") && svg.contains(">goal</text>"));
        // Every text, ticks included, is at least 13 px at the native size
        // (the HTML page shows charts at that size).
        let sizes: Vec<f64> = svg
            .split("font-size=\"")
            .skip(1)
            .map(|r| r.split('"').next().unwrap().parse().unwrap())
            .collect();
        assert!(
            sizes.len() > 5 && sizes.iter().all(|&px| px >= 13.0),
            "{sizes:?}"
        );
    }

    #[test]
    fn a_low_goal_gets_a_panel_near_it_and_data_is_clipped_there() {
        let mut c = LineChart::new("loss", "load", "loss (%)");
        c.series
            .push(Series::new("sim", vec![(0.0, 0.2), (1.0, 30.0)]).painted(Paint::Stream(0)));
        c.series.push(Series::goal("goal", 1.0, (0.0, 1.0)));
        let svg = render_svg(&c).unwrap();
        assert!(svg.contains("Near the goal: the same chart with the y axis cut at 3"));
        assert_eq!(svg.matches("overflow=\"hidden\"").count(), 2);
        // Without a low goal: one panel.
        c.series.pop();
        c.series.push(Series::goal("goal", 20.0, (0.0, 1.0)));
        assert!(!render_svg(&c).unwrap().contains("Near the goal"));
    }

    #[test]
    fn palette_colours_differ_in_lightness_for_greyscale_print() {
        // Relative luminance (WCAG 2.x definition, sRGB).
        let lum = |c: RGBColor| {
            let ch = |v: u8| {
                let v = f64::from(v) / 255.0;
                if v <= 0.04045 {
                    v / 12.92
                } else {
                    ((v + 0.055) / 1.055).powf(2.4)
                }
            };
            0.2126 * ch(c.0) + 0.7152 * ch(c.1) + 0.0722 * ch(c.2)
        };
        let mut first: Vec<f64> = PALETTE[..5].iter().map(|&c| lum(c)).collect();
        first.sort_by(f64::total_cmp);
        for w in first.windows(2) {
            assert!(w[1] - w[0] >= 0.07, "{first:?}");
        }
        assert!(lum(OFFERED) - lum(CARRIED) >= 0.2);
    }
}
