//! Drawing: SVG line charts from numbers. One or more named series against
//! a common x axis, each with an optional shaded band (a confidence
//! interval, a min-max range), shaded vertical spans marking periods (busy
//! hours, the measured period), axis labels with units and a title, and
//! several charts stacked into one SVG. The charts of `run`, `sweep` and
//! `records` are built from their documents in their own modules; this one
//! owns drawing only.
//!
//! Drawn with the `plotters` crate's SVG backend (no fonts needed: text is
//! written as SVG text elements and laid out by the viewer).

use crate::stats::Estimate;
use plotters::prelude::*;
use std::fmt;

/// Distinct colours for series, in order (then repeated).
const PALETTE: [RGBColor; 6] = [
    RGBColor(31, 119, 180),
    RGBColor(214, 39, 40),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(255, 127, 14),
    RGBColor(23, 190, 207),
];

/// Colour of marker spans.
const MARKER: RGBColor = RGBColor(255, 190, 60);

/// One line of the chart.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Name shown in the legend.
    pub name: String,
    /// (x, y) points, drawn in the order given.
    pub points: Vec<(f64, f64)>,
    /// Optional band: (x, low, high) points, shaded in the series' colour.
    pub band: Option<Vec<(f64, f64, f64)>>,
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
    /// Width and height in pixels.
    pub size: (u32, u32),
    /// Start the y axis at zero (otherwise at the data's minimum).
    pub y_from_zero: bool,
    /// Tick label format for the x axis.
    pub x_ticks: Option<Box<dyn Fn(f64) -> String>>,
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

impl LineChart {
    /// An empty chart with a title and axis labels, 1000 x 500 pixels, y from zero.
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
            size: (1000, 500),
            y_from_zero: true,
            x_ticks: None,
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

/// Draw the chart as an SVG document.
///
/// # Example
/// ```
/// use busyhour::report::plot::{LineChart, Series, render_svg};
/// let mut c = LineChart::new("Load", "time (h)", "traffic (E)");
/// c.series.push(Series { name: "carried".into(), points: vec![(0.0, 1.0), (1.0, 3.0)], band: None });
/// let svg = render_svg(&c).unwrap();
/// assert!(svg.starts_with("<svg") && svg.contains("carried"));
/// ```
pub fn render_svg(chart: &LineChart) -> Result<String, ChartError> {
    let draw = |e: &dyn fmt::Display| ChartError::Draw(e.to_string());
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
    let (x0, mut x1) = finite_range(xs).ok_or(ChartError::NoData)?;
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
    if x1 <= x0 {
        x1 = x0 + 1.0;
    }
    if y1 <= y0 {
        y1 = y0 + 1.0;
    }
    y1 += 0.05 * (y1 - y0); // head room for the legend
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, chart.size).into_drawing_area();
        root.fill(&WHITE).map_err(|e| draw(&e))?;
        let mut c = ChartBuilder::on(&root)
            .caption(&chart.title, ("sans-serif", 20))
            .margin(12)
            .x_label_area_size(45)
            .y_label_area_size(60)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(|e| draw(&e))?;
        let default_ticks = |x: &f64| crate::units::trim_float(*x, 2);
        let ticks = |x: &f64| match &chart.x_ticks {
            Some(f) => f(*x),
            None => default_ticks(x),
        };
        c.configure_mesh()
            .x_desc(chart.x_label.as_str())
            .y_desc(chart.y_label.as_str())
            .x_label_formatter(&ticks)
            .light_line_style(WHITE.mix(0.0))
            .draw()
            .map_err(|e| draw(&e))?;
        for m in &chart.markers {
            let spans = m
                .spans
                .iter()
                .filter(|s| s.0.is_finite() && s.1.is_finite())
                .map(|&(a, b)| Rectangle::new([(a, y0), (b, y1)], MARKER.mix(0.35).filled()));
            c.draw_series(spans)
                .map_err(|e| draw(&e))?
                .label(m.name.as_str())
                .legend(|(x, y)| {
                    Rectangle::new([(x, y - 5), (x + 20, y + 5)], MARKER.mix(0.35).filled())
                });
        }
        for (k, s) in chart.series.iter().enumerate() {
            let color = PALETTE[k % PALETTE.len()];
            if let Some(band) = &s.band {
                let band: Vec<_> = band
                    .iter()
                    .filter(|b| b.0.is_finite() && b.1.is_finite() && b.2.is_finite())
                    .collect();
                if band.len() >= 2 {
                    let outline: Vec<(f64, f64)> = band
                        .iter()
                        .map(|b| (b.0, b.2))
                        .chain(band.iter().rev().map(|b| (b.0, b.1)))
                        .collect();
                    c.draw_series(std::iter::once(Polygon::new(
                        outline,
                        color.mix(0.2).filled(),
                    )))
                    .map_err(|e| draw(&e))?;
                }
            }
            let points = s
                .points
                .iter()
                .copied()
                .filter(|p| p.0.is_finite() && p.1.is_finite());
            c.draw_series(LineSeries::new(points, color.stroke_width(2)))
                .map_err(|e| draw(&e))?
                .label(s.name.as_str())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
                });
        }
        c.configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK.mix(0.4))
            .draw()
            .map_err(|e| draw(&e))?;
        root.present().map_err(|e| draw(&e))?;
    }
    Ok(svg)
}

/// A series of estimates at x positions, scaled by `scale` (100 for
/// percentages), with their 95% band; undefined estimates are left out.
pub fn estimate_series(name: String, points: &[(f64, Estimate)], scale: f64) -> Series {
    let band: Vec<(f64, f64, f64)> = points
        .iter()
        .filter(|(_, e)| e.mean.is_finite() && e.half_width.is_finite())
        .map(|(x, e)| {
            (
                *x,
                (e.mean - e.half_width) * scale,
                (e.mean + e.half_width) * scale,
            )
        })
        .collect();
    Series {
        name,
        points: points
            .iter()
            .filter(|(_, e)| e.mean.is_finite())
            .map(|(x, e)| (*x, e.mean * scale))
            .collect(),
        band: (!band.is_empty()).then_some(band),
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
        "<text x=\"8\" y=\"{}\" font-family=\"sans-serif\" font-size=\"11\" fill=\"#444\">{}</text>\n",
        panels + FOOTNOTE_HEIGHT - 6,
        super::html::escape(super::CAUTION_SHORT)
    ));
    out.push_str("</svg>\n");
    out
}

/// Height of the caution line under a stacked chart, in pixels.
const FOOTNOTE_HEIGHT: u32 = 20;

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
            name: "<offered>".into(),
            points: vec![(0.0, 1.0), (1.0, 2.0)],
            band: Some(vec![(0.0, 0.5, 1.5), (1.0, 1.5, 2.5)]),
        });
        c.markers.push(Markers {
            name: "busy hour".into(),
            spans: vec![(0.2, 0.4)],
        });
        let svg = render_svg(&c).unwrap();
        assert!(svg.contains("A &amp; B") && svg.contains("&lt;offered&gt;"));
        assert!(svg.contains("busy hour") && svg.contains("<polygon"));
    }
}
