//! The document of `run`, and of `merge` of run parts: every figure of
//! every stream, group and reporting interval with its 95% interval and
//! closed-form value, built once from a finished [`RunResult`]. The JSON, the
//! table, the CSV, the HTML page and the per-interval chart all render it.

use super::check::FormulaView;
use super::describe::{describe_model, forecast_line, warmup_origin};
use super::figures::{FigureSet, FigureValue};
use super::json::finite;
use super::plot::{self, ChartError, Line, LineChart, Paint, Series};
use super::text::{self, Table, align, clock_at};
use super::{CAUTION, Charted, Document, html};
use crate::experiment::RunResult;
use crate::scenario::{Model, Start};
use crate::stats::{self, Estimate, Figure, Scope, Unit};
use crate::textbook::formula_column;
use crate::units::{format_duration, format_share, trim_float};
use serde::{Serialize, Serializer};

/// The precision goal of a run, when one was set.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Precision {
    /// Relative 95% half-width asked for (a share).
    pub target: f64,
    /// Largest relative half-width among the key figures; null when none
    /// was defined.
    #[serde(serialize_with = "finite")]
    pub achieved: f64,
    /// Whether every key figure reached the target.
    pub met: bool,
}

/// One reporting interval of a peak profile.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Interval {
    /// Start, seconds from the end of the warm-up.
    pub start_s: f64,
    /// End, seconds from the end of the warm-up.
    pub end_s: f64,
    /// Every stream's figures in the interval.
    pub streams: Vec<FigureSet>,
    /// Every group's figures in the interval.
    pub groups: Vec<FigureSet>,
    /// Offered traffic summed over the streams, its interval from the
    /// per-replication sums (for the chart).
    #[serde(skip)]
    pub offered_all: Estimate,
    /// Carried traffic summed over the streams, likewise.
    #[serde(skip)]
    pub carried_all: Estimate,
}

fn start_name<S: Serializer>(start: &Start, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(match start {
        Start::Steady => "steady",
        Start::Empty => "empty",
    })
}

/// What a run found.
#[derive(Debug, Clone, Serialize)]
pub struct RunDocument {
    /// The scenario's title.
    pub scenario: String,
    /// The scenario file, as the user named it.
    pub file: String,
    /// The busyhour version that made it.
    pub version: &'static str,
    /// The master seed.
    pub seed: u64,
    /// Replications run.
    pub replications: u64,
    /// Warm-up of each replication (s).
    pub warmup_s: f64,
    /// Whether the warm-up was derived from the laws (not given in the file).
    pub warmup_derived: bool,
    /// How each replication starts: "steady" or "empty".
    #[serde(serialize_with = "start_name")]
    pub start: Start,
    /// Measured length of each replication (s).
    pub length_s: f64,
    /// Interrupted: fewer replications than planned.
    pub partial: bool,
    /// Every stream's figures over the measured period.
    pub streams: Vec<FigureSet>,
    /// Every group's figures over the measured period.
    pub groups: Vec<FigureSet>,
    /// Every stage of every call flow, stream by stream (none without
    /// stages).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub stages: Vec<StageFigures>,
    /// The precision goal, when one was set.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub precision: Option<Precision>,
    /// The reporting intervals, when the scenario sets `interval`.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub intervals: Vec<Interval>,
    /// The interval with the highest loss of any stream (ties: the highest
    /// time congestion of any group), counted from 0.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub worst_interval: Option<usize>,
    /// The busy hour of a peak profile: the hour of most forecast load, with
    /// each stream's simulated loss over it beside Erlang B of its load.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub busy_hour: Option<BusyHourFigures>,
    /// When some stream's rate is uncertain: what the figures are (averages
    /// over the forecast's spread), in one line.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub forecast_spread: Option<String>,
    /// Warnings about the start or the load.
    pub warnings: Vec<String>,
    /// The safety caution.
    pub caution: &'static str,
    /// The clock time the measured period begins at ("08:00"), when the
    /// scenario gives one: interval labels are then clock times.
    #[serde(
        skip_serializing_if = "Option::is_none",
        serialize_with = "time_of_day"
    )]
    pub clock_start: Option<f64>,
    /// Length of a reporting interval (s; the last may be shorter).
    #[serde(skip)]
    pub interval_s: f64,
    /// Events processed in all replications.
    #[serde(skip)]
    pub events: u64,
    /// Wall-clock seconds.
    #[serde(skip)]
    pub wall_s: f64,
    /// Per group, its servers as the table's group column shows them: "18",
    /// or for a schedule "6 to 11 per 30 min" (the JSON gives each
    /// interval's servers in its group sets).
    #[serde(skip)]
    pub servers_words: Vec<String>,
    /// The scenario in plain words.
    #[serde(skip)]
    pub words: String,
    /// The closed forms of the model, for the page's textbook view.
    #[serde(skip)]
    pub textbook: FormulaView,
    /// Servers each stream's call holds (multi-unit calls: channels).
    #[serde(skip)]
    pub units: Vec<u32>,
    /// Per group: whether some call holds several of its servers, so that
    /// its traffic counts busy channels, not calls.
    #[serde(skip)]
    pub channel_groups: Vec<bool>,
}

/// The busy hour of a run: the window, its forecast load, and each stream's
/// loss over it (lost over offered calls in the window's intervals, pooled
/// over replications) beside Erlang B of the busy-hour load.
#[derive(Debug, Clone, Serialize)]
pub struct BusyHourFigures {
    /// Start of the window, seconds from the end of the warm-up.
    pub start_s: f64,
    /// End of the window.
    pub end_s: f64,
    /// Offered traffic in the window by the forecast (E).
    pub offered_traffic: f64,
    /// Per stream: its name and its loss over the window, with the formula
    /// where one applies.
    pub streams: Vec<FigureSet>,
}

impl BusyHourFigures {
    /// The busy hour of `model` and each stream's loss over it in `outcome`.
    fn new(model: &Model, outcome: &RunResult) -> Option<BusyHourFigures> {
        let bh = crate::textbook::busy_hour(model)?;
        let streams = (model.streams.iter().enumerate())
            .filter_map(|(s, st)| {
                let indices: Vec<usize> = (bh.first..bh.first + bh.count)
                    .map(|b| outcome.index_of(Scope::StreamInterval(b, s), Figure::Loss))
                    .collect::<Option<_>>()?;
                let pooled: Vec<stats::Obs> = (outcome.per_replication.iter())
                    .map(|rep| {
                        let (num, den) = (indices.iter())
                            .fold((0.0, 0.0), |(n, d), &i| (n + rep[i].num, d + rep[i].den));
                        stats::Obs::ratio(num, den)
                    })
                    .collect();
                let estimate = stats::estimate_figure(Figure::Loss, &pooled, stats::LEVEL);
                let formula = bh.erlang_b[s].map(|value| crate::textbook::Formula {
                    name: crate::textbook::BUSY_HOUR_METHOD,
                    value,
                });
                let mut set = FigureSet::new(&st.name, None);
                (set.figures.0).push(FigureValue::new(Figure::Loss, estimate, formula.as_ref()));
                Some(set)
            })
            .collect();
        Some(BusyHourFigures {
            start_s: bh.start_s,
            end_s: bh.end_s,
            offered_traffic: bh.offered,
            streams,
        })
    }
}

/// The figures of one stage of a stream's call flow.
#[derive(Debug, Clone, Serialize)]
pub struct StageFigures {
    /// The stream's name.
    pub stream: String,
    /// The stage's name (as `name`) and its figures.
    #[serde(flatten)]
    pub set: FigureSet,
}

impl RunDocument {
    /// The document of `outcome`, a run of `model` read from `file`.
    pub fn new(model: &Model, outcome: &RunResult, file: &str) -> RunDocument {
        let formulas = formula_column(model);
        let stream_sets = || {
            (model.streams.iter())
                .map(|st| FigureSet::new(&st.name, None))
                .collect::<Vec<_>>()
        };
        let plan = &model.plan;
        let width = plan.interval_s.unwrap_or(plan.length_s);
        let mut streams = stream_sets();
        let mut groups: Vec<FigureSet> = (model.groups.iter())
            .map(|gr| FigureSet::new(&gr.name, Some(gr.servers)))
            .collect();
        // Each stage's place in `stages`, by stream.
        let mut stages: Vec<StageFigures> = Vec::new();
        let mut stage_at: Vec<usize> = Vec::with_capacity(model.streams.len());
        for st in &model.streams {
            stage_at.push(stages.len());
            stages.extend(st.stages.iter().map(|k| StageFigures {
                stream: st.name.clone(),
                set: FigureSet::new(&k.name, None),
            }));
        }
        let mut intervals: Vec<Interval> = (0..plan.interval_count())
            .map(|b| Interval {
                start_s: b as f64 * width,
                end_s: b as f64 * width + stats::interval_length(model, b),
                streams: stream_sets(),
                groups: (model.groups.iter())
                    .map(|gr| {
                        // A schedule's servers in the interval (their mean,
                        // rounded, where an entry changes inside it).
                        let t0 = b as f64 * width;
                        let servers = (gr.schedule.as_ref()).map(|_| {
                            let t1 = t0 + stats::interval_length(model, b);
                            gr.servers_over(t0, t1).round() as u32
                        });
                        FigureSet::new(&gr.name, servers)
                    })
                    .collect(),
                offered_all: summed(outcome, b, Figure::OfferedTraffic),
                carried_all: summed(outcome, b, Figure::CarriedTraffic),
            })
            .collect();
        for (f, e) in outcome.layout.iter().zip(&outcome.estimates) {
            let set = match f.scope {
                Scope::Stream(s) => &mut streams[s],
                Scope::Group(g) => &mut groups[g],
                Scope::StreamInterval(b, s) => &mut intervals[b].streams[s],
                Scope::GroupInterval(b, g) => &mut intervals[b].groups[g],
                Scope::Stage(s, k) => &mut stages[stage_at[s] + k].set,
            };
            (set.figures.0).push(FigureValue::new(f.figure, *e, formulas.get(f)));
        }
        let worst_interval = worst(&intervals);
        RunDocument {
            scenario: model.title.clone(),
            file: file.to_string(),
            version: env!("CARGO_PKG_VERSION"),
            seed: plan.seed,
            replications: outcome.replications,
            warmup_s: plan.warmup_s,
            warmup_derived: !plan.warmup_given,
            start: plan.start,
            length_s: plan.length_s,
            partial: outcome.partial,
            streams,
            groups,
            stages,
            precision: outcome.precision.map(|p| Precision {
                target: p.target,
                achieved: p.achieved,
                met: p.met,
            }),
            intervals,
            worst_interval,
            busy_hour: BusyHourFigures::new(model, outcome),
            forecast_spread: forecast_line(model),
            warnings: outcome.warnings.iter().map(|w| w.to_string()).collect(),
            caution: CAUTION,
            clock_start: plan.clock_start_s,
            interval_s: width,
            events: outcome.events,
            wall_s: outcome.wall_s,
            servers_words: model.groups.iter().map(servers_words).collect(),
            words: describe_model(model, file),
            textbook: FormulaView::new(model, &formulas),
            units: model.streams.iter().map(|st| st.units).collect(),
            channel_groups: (0..model.groups.len())
                .map(|g| {
                    (model.streams.iter())
                        .any(|st| st.units > 1 && st.route.iter().any(|&r| r as usize == g))
                })
                .collect(),
        }
    }

    /// Keep only `figures` in every stream, group and interval (a sweep's
    /// `--figure`).
    pub fn keep_figures(&mut self, figures: &[Figure]) {
        let sets = (self.streams.iter_mut().chain(&mut self.groups)).chain(
            (self.intervals.iter_mut()).flat_map(|iv| iv.streams.iter_mut().chain(&mut iv.groups)),
        );
        for set in sets {
            set.figures.0.retain(|v| figures.contains(&v.figure));
        }
    }

    /// How the run was made, in one line.
    fn run_line(&self) -> String {
        let mut s = format!(
            "{} replications of {} measured after {} warm-up{}, seed {}",
            self.replications,
            format_duration(self.length_s),
            format_duration(self.warmup_s),
            warmup_origin(self.warmup_derived, self.start),
            self.seed
        );
        if let Some(pr) = self.precision {
            s.push_str(&format!(
                "; precision goal {} {} (worst key figure {})",
                format_share(pr.target),
                if pr.met {
                    "met"
                } else {
                    "NOT met: replication cap reached"
                },
                format_share(pr.achieved)
            ));
        }
        if let Some(line) = &self.forecast_spread {
            s.push_str(&format!("\n{line}"));
        }
        s
    }

    /// The tables of the run, shared by the terminal and the HTML page.
    pub fn tables(&self) -> Vec<Table> {
        let header = |first: &str| {
            vec![
                first.to_string(),
                "figure".into(),
                "simulated".into(),
                "95% ±".into(),
                "formula".into(),
            ]
        };
        let mut rows = vec![header("stream")];
        for (s, st) in self.streams.iter().enumerate() {
            // A call holding several servers: its traffic is in calls, the
            // group's in channels; say which.
            let first = match self.units.get(s) {
                Some(&u) if u > 1 => format!("{} ({u} channels a call; traffic in calls)", st.name),
                _ => st.name.clone(),
            };
            rows.extend(figure_rows(st, &first));
        }
        let mut tables = vec![Table {
            title: "Streams".into(),
            rows,
        }];
        let mut rows = vec![header("group")];
        for (g, gr) in self.groups.iter().enumerate() {
            let servers = &self.servers_words[g];
            let first = if self.channel_groups.get(g) == Some(&true) {
                format!("{} ({servers}; traffic in channels)", gr.name)
            } else {
                format!("{} ({servers})", gr.name)
            };
            rows.extend(figure_rows(gr, &first));
        }
        tables.push(Table {
            title: "Groups".into(),
            rows,
        });
        if !self.stages.is_empty() {
            let mut rows = vec![header("stream / stage")];
            for st in &self.stages {
                rows.extend(figure_rows(
                    &st.set,
                    &format!("{} / {}", st.stream, st.set.name),
                ));
            }
            tables.push(Table {
                title: "Stages of the call flows".into(),
                rows,
            });
        }
        if !self.intervals.is_empty() {
            tables.push(Table {
                title: if self.clock_start.is_some() {
                    "By interval (clock time)".into()
                } else {
                    "By interval (from the end of the warm-up)".into()
                },
                rows: self.interval_rows(),
            });
        }
        if let Some(bh) = &self.busy_hour {
            let mut rows = vec![header("stream")];
            for st in &bh.streams {
                rows.extend(figure_rows(st, &st.name));
            }
            tables.push(Table {
                title: format!(
                    "Busy hour {}-{} (the hour of most forecast load: {} offered)",
                    clock_at(self.clock_start, bh.start_s),
                    clock_at(self.clock_start, bh.end_s),
                    text::value(Unit::Erlangs, bh.offered_traffic)
                ),
                rows,
            });
        }
        tables
    }

    /// The interval table: each stream's offered traffic and loss (and the
    /// closed form of the loss where one applies), each group's occupancy.
    fn interval_rows(&self) -> Vec<Vec<String>> {
        let loss_formula = |b: usize, s: usize| {
            (self.intervals[b].streams[s].figures.get(Figure::Loss))
                .and_then(|v| v.formula.as_ref())
        };
        // The method of each stream's interval loss, named in the header.
        let methods: Vec<Option<&str>> = (0..self.streams.len())
            .map(|s| (0..self.intervals.len()).find_map(|b| loss_formula(b, s).map(|f| f.name)))
            .collect();
        // The waiting figures of streams that can wait, and the servers of
        // groups with a schedule, where the intervals have them.
        let has = |s: usize, f: Figure| {
            (self.intervals.first()).is_some_and(|iv| iv.streams[s].figures.get(f).is_some())
        };
        let waits: Vec<Vec<(Figure, &str)>> = (0..self.streams.len())
            .map(|s| {
                [
                    (Figure::ServiceLevel, "service level"),
                    (Figure::WaitMean, "mean wait"),
                ]
                .into_iter()
                .filter(|&(f, _)| has(s, f))
                .collect()
            })
            .collect();
        let scheduled: Vec<bool> = (0..self.groups.len())
            .map(|g| (self.intervals.first()).is_some_and(|iv| iv.groups[g].servers.is_some()))
            .collect();
        let mut head = vec!["interval".to_string()];
        for ((s, st), method) in self.streams.iter().enumerate().zip(&methods) {
            head.push(format!("{} offered", st.name));
            head.push(format!("{} loss", st.name));
            if let Some(name) = method {
                head.push(format!("[{name}]"));
            }
            for (_, label) in &waits[s] {
                head.push(format!("{} {label}", st.name));
            }
        }
        for (g, gr) in self.groups.iter().enumerate() {
            if scheduled[g] {
                head.push(format!("{} servers", gr.name));
            }
            head.push(format!("{} occupancy", gr.name));
        }
        let mut rows = vec![head];
        for (b, iv) in self.intervals.iter().enumerate() {
            let mut row = vec![format!(
                "{}-{}{}",
                clock_at(self.clock_start, iv.start_s),
                clock_at(self.clock_start, iv.end_s),
                if self.worst_interval == Some(b) {
                    " worst"
                } else {
                    ""
                }
            )];
            for (s, st) in iv.streams.iter().enumerate() {
                row.push(text::value(Unit::Erlangs, st.mean(Figure::OfferedTraffic)));
                row.push(text::value(Unit::Share, st.mean(Figure::Loss)));
                if methods[s].is_some() {
                    row.push(
                        loss_formula(b, s)
                            .map_or("-".into(), |f| text::value(Unit::Share, f.value)),
                    );
                }
                for &(f, _) in &waits[s] {
                    row.push(text::value(f.unit(), st.mean(f)));
                }
            }
            for (g, gr) in iv.groups.iter().enumerate() {
                if scheduled[g] {
                    row.push(gr.servers.map_or("-".into(), |n| n.to_string()));
                }
                row.push(text::value(Unit::Share, gr.mean(Figure::Occupancy)));
            }
            rows.push(row);
        }
        rows
    }
}

impl Charted for RunDocument {
    /// The run as one self-contained HTML page, with the chart when one is
    /// given.
    fn html(&self, chart: Option<&str>) -> String {
        use html::Block;
        let mut blocks = vec![
            Block::Heading("The scenario in plain words".into()),
            Block::Pre(self.words.clone()),
            Block::Heading("Results".into()),
            Block::Paragraph(format!(
                "{}. Shares, mean waits and attempts per call are pooled over all replications (total over total); \
other figures are means across replications. Intervals are 95%; an interval shown by its two ends is cut to the \
figure's range or widened to the exact binomial bound when events are few. The formula column \
shows the closed-form value where its assumptions hold.",
                self.run_line()
            )),
        ];
        if self.partial {
            blocks.push(Block::Paragraph(
                "PARTIAL RESULT: the run was interrupted; only the finished replications are shown."
                    .into(),
            ));
        }
        for w in &self.warnings {
            blocks.push(Block::Paragraph(format!("Warning: {w}.")));
        }
        blocks.extend(self.tables().into_iter().map(Block::Table));
        if let Some(svg) = chart {
            blocks.push(Block::Heading(if self.intervals.is_empty() {
                "Chart".into()
            } else {
                match self.clock_period() {
                    Some(period) => format!("Per interval, {period}"),
                    None => "Per interval".into(),
                }
            }));
            blocks.push(Block::Svg(svg.to_string()));
        }
        blocks.push(Block::Heading("Textbook view".into()));
        blocks.push(Block::Pre(self.textbook.text()));
        html::simulated_page(
            &self.scenario,
            &format!("busyhour run of {}", self.file),
            blocks,
            &[],
        )
    }

    /// Every run has a chart: per interval when the scenario has
    /// intervals, otherwise each stream's and group's figures side by side.
    fn has_chart(&self) -> bool {
        true
    }

    /// The chart. With intervals: offered and carried traffic (all
    /// streams), each stream's loss, and where calls queue each stream's
    /// abandonment, service level and mean wait and each group's occupancy,
    /// per interval, with 95% bands and the closed form (dashed) where one
    /// applies; a scheduled group's servers busy against servers present.
    /// Without: the same figures over the measured period, one dot and
    /// whisker per stream or group, the closed form as a ring beside it.
    fn chart(&self) -> Result<String, ChartError> {
        let panels = if self.intervals.is_empty() {
            self.whole_period_panels()
        } else {
            self.interval_panels()
        };
        let svgs = (panels.iter())
            .map(plot::render_svg)
            .collect::<Result<Vec<_>, _>>()?;
        if svgs.is_empty() {
            return Err(ChartError::NoData);
        }
        Ok(plot::stack(&svgs))
    }
}

/// The figures the run chart shows beside traffic, in order, and whose
/// (streams or groups) they are; a panel is drawn only when some stream or
/// group reports the figure, and the queue figures only where calls queue.
const CHART_FIGURES: [(Figure, bool); 5] = [
    (Figure::Loss, false),
    (Figure::Abandonment, false),
    (Figure::ServiceLevel, false),
    (Figure::WaitMean, false),
    (Figure::Occupancy, true),
];

impl RunDocument {
    /// Whether some stream can queue (it reports a mean wait).
    fn queues(&self) -> bool {
        (self.streams.iter()).any(|st| st.figures.get(Figure::WaitMean).is_some())
    }

    /// The figures charted: loss always; abandonment, service level, mean
    /// wait and group occupancy where calls queue.
    fn charted_figures(&self) -> impl Iterator<Item = (Figure, bool)> + '_ {
        (CHART_FIGURES.into_iter()).filter(|&(f, _)| f == Figure::Loss || self.queues())
    }

    /// The measured period in clock times ("06:00-09:00"), when the
    /// scenario gives a clock start.
    pub(crate) fn clock_period(&self) -> Option<String> {
        self.clock_start.map(|_| {
            format!(
                "{}-{}",
                clock_at(self.clock_start, 0.0),
                clock_at(self.clock_start, self.length_s)
            )
        })
    }

    /// A panel title: what is shown, with the measured period's clock times
    /// when the scenario gives a clock start; the first panel names the
    /// scenario too.
    fn panel_title(&self, what: &str, first: bool) -> String {
        let mut title = if first {
            format!("{}: {what}", self.scenario)
        } else {
            let mut c = what.chars();
            c.next()
                .map_or(String::new(), |f| f.to_uppercase().chain(c).collect())
        };
        if let Some(period) = self.clock_period() {
            title.push_str(&format!(", {period}"));
        }
        title
    }

    /// One panel per charted figure, per interval.
    fn interval_panels(&self) -> Vec<LineChart> {
        let width_h = self.interval_s / 3600.0;
        let mid = |b: usize| (b as f64 + 0.5) * width_h;
        let x_label = if self.clock_start.is_some() {
            "clock time, interval midpoints"
        } else {
            "time from the end of the warm-up (h:mm), interval midpoints"
        };
        let start = self.clock_start;
        let new_chart = |what: &str, y_label: String| {
            let first = what.starts_with("traffic");
            let mut c = LineChart::new(self.panel_title(what, first), x_label, y_label);
            if !first {
                c.size.1 = 420;
            }
            c.x_ticks = Some(Box::new(move |hours: f64| clock_at(start, hours * 3600.0)));
            c
        };
        let mut traffic = new_chart("traffic per interval", "traffic (erlangs)".into());
        for (name, offered) in [("offered traffic", true), ("carried traffic", false)] {
            let pts: Vec<(f64, Estimate)> = (self.intervals.iter().enumerate())
                .map(|(b, iv)| {
                    let total = if offered {
                        iv.offered_all
                    } else {
                        iv.carried_all
                    };
                    (mid(b), total)
                })
                .collect();
            traffic.series.push(
                plot::estimate_series(format!("{name}, all streams (95% band)"), &pts, 1.0)
                    .painted(if offered {
                        Paint::Offered
                    } else {
                        Paint::Carried
                    }),
            );
        }
        let mut panels = vec![traffic];
        for (figure, of_groups) in self.charted_figures() {
            let (y_label, scale) = plot::axis(figure);
            let mut c = new_chart(&format!("{} per interval", figure.label()), y_label);
            let owners = if of_groups {
                &self.groups
            } else {
                &self.streams
            };
            for (k, owner) in owners.iter().enumerate() {
                let values = || {
                    (self.intervals.iter().enumerate()).filter_map(move |(b, iv)| {
                        let sets = if of_groups { &iv.groups } else { &iv.streams };
                        Some((mid(b), sets[k].figures.get(figure)?))
                    })
                };
                let pts: Vec<(f64, Estimate)> = values().map(|(x, v)| (x, v.estimate)).collect();
                if pts.is_empty() {
                    continue;
                }
                let paint = if of_groups {
                    Paint::Group(k)
                } else {
                    Paint::Stream(k)
                };
                let short = figure.label().split(" (").next().unwrap_or("");
                c.series.push(
                    plot::estimate_series(
                        format!("{} {short} (95% band)", owner.name),
                        &pts,
                        scale,
                    )
                    .painted(paint),
                );
                let formula: Vec<(f64, f64)> = values()
                    .filter_map(|(x, v)| v.formula.as_ref().map(|f| (x, f.value * scale)))
                    .collect();
                // The series is named for the method that gave it.
                let method = values().find_map(|(_, v)| v.formula.as_ref().map(|f| f.name));
                if let Some(method) = method {
                    let method = match method {
                        "Erlang B, interval load" => "Erlang B of the interval load",
                        other => other,
                    };
                    c.series.push(
                        Series::formula(format!("{} {short}, {method}", owner.name), formula)
                            .painted(paint),
                    );
                }
            }
            if !c.series.is_empty() {
                panels.push(c);
            }
        }
        // Groups whose servers follow a schedule: servers busy against
        // servers present, interval by interval.
        let mut busy = new_chart("servers busy and present per interval", "servers".into());
        for (g, gr) in self.groups.iter().enumerate() {
            // A staircase: each interval's servers across the interval.
            let present: Vec<(f64, f64)> = (self.intervals.iter())
                .filter_map(|iv| {
                    let n = f64::from(iv.groups[g].servers?);
                    Some([(iv.start_s / 3600.0, n), (iv.end_s / 3600.0, n)])
                })
                .flatten()
                .collect();
            if present.is_empty() {
                continue;
            }
            let pts: Vec<(f64, Estimate)> = (self.intervals.iter().enumerate())
                .filter_map(|(b, iv)| {
                    let v = iv.groups[g].figures.get(Figure::CarriedTraffic)?;
                    Some((mid(b), v.estimate))
                })
                .collect();
            busy.series.push(
                plot::estimate_series(format!("{} servers busy (95% band)", gr.name), &pts, 1.0)
                    .painted(Paint::Group(g)),
            );
            // A bound, drawn as goals are.
            busy.series.push(Series {
                points: present,
                ..Series::goal(
                    format!("{} servers present (schedule)", gr.name),
                    0.0,
                    (0.0, 0.0),
                )
            });
        }
        if !busy.series.is_empty() {
            busy.zoom_to_goals = false;
            panels.push(busy);
        }
        panels
    }

    /// One panel per charted figure over the measured period: a dot and
    /// whisker (the 95% interval) per stream or group, the closed form as a
    /// ring beside it.
    fn whole_period_panels(&self) -> Vec<LineChart> {
        let mut panels = Vec::new();
        for (figure, of_groups) in self.charted_figures() {
            let owners = if of_groups {
                &self.groups
            } else {
                &self.streams
            };
            let shown: Vec<(usize, &FigureValue)> = (owners.iter().enumerate())
                .filter_map(|(k, o)| Some((k, o.figures.get(figure)?)))
                .collect();
            if shown.is_empty() {
                continue;
            }
            let (y_label, scale) = plot::axis(figure);
            let whose = if of_groups { "group" } else { "stream" };
            let mut c = LineChart::new(
                self.panel_title(&format!("{} by {whose}", figure.label()), panels.is_empty()),
                String::new(),
                y_label,
            );
            c.x_categories = shown.iter().map(|(k, _)| owners[*k].name.clone()).collect();
            c.size.1 = 360;
            let mut simulated = Vec::new();
            let mut band = Vec::new();
            let mut formula = Vec::new();
            for (slot, (_, v)) in shown.iter().enumerate() {
                let e = &v.estimate;
                let x = slot as f64;
                if e.mean.is_finite() {
                    simulated.push((x, e.mean * scale));
                }
                if e.low.is_finite() && e.high.is_finite() {
                    band.push((x, e.low * scale, e.high * scale));
                }
                if let Some(f) = &v.formula {
                    formula.push((x + 0.12, f.value * scale));
                }
            }
            c.series.push(Series {
                band: Some(band),
                ..Series::new("simulated (95% interval)", simulated)
                    .painted(Paint::Stream(0))
                    .drawn(Line::Dots)
            });
            if !formula.is_empty() {
                c.series.push(
                    Series::formula("closed form, where it applies (see the table)", formula)
                        .painted(Paint::Stream(1))
                        .drawn(Line::Rings),
                );
            }
            panels.push(c);
        }
        panels
    }
}

impl Document for RunDocument {
    fn table(&self) -> String {
        let mut out = format!("{}  ({})\n", self.scenario, self.file);
        out.push_str(&self.run_line());
        out.push_str("\nShares, mean waits and attempts per call are pooled over all replications (total over total);\nother figures are means across replications. \"±\" is the 95% half-width; \"[a to b]\" a 95% interval\ncut to the figure's range or widened to the exact binomial bound when events are few.\n");
        if self.partial {
            out.push_str(
                "PARTIAL RESULT: the run was interrupted; only the finished replications are shown.\n",
            );
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
        out.push_str(&format!("\n{}\n", work_line(self.events, self.wall_s)));
        out.push_str(&format!("Caution: {CAUTION}\n"));
        out
    }

    /// Long format: one row per figure, streams, groups, then each
    /// interval's.
    fn csv(&self) -> Option<String> {
        let header: Vec<String> = ["kind", "name", "interval_start_s"]
            .into_iter()
            .chain(FigureValue::CSV_COLUMNS)
            .map(String::from)
            .collect();
        let whole = (self.streams.iter().map(|s| ("stream", s)))
            .chain(self.groups.iter().map(|g| ("group", g)))
            .map(|(kind, set)| (kind, set, String::new()));
        let by_interval = self.intervals.iter().flat_map(|iv| {
            let start = trim_float(iv.start_s, 3);
            (iv.streams.iter().map(|s| ("stream", s)))
                .chain(iv.groups.iter().map(|g| ("group", g)))
                .map(move |(kind, set)| (kind, set, start.clone()))
        });
        let stage_names: Vec<String> = (self.stages.iter())
            .map(|st| format!("{}/{}", st.stream, st.set.name))
            .collect();
        let whole = whole.map(|(kind, set, start)| (kind, set, None, start));
        let by_interval = by_interval.map(|(kind, set, start)| (kind, set, None, start));
        let stages = (self.stages.iter().zip(&stage_names))
            .map(|(st, name)| ("stage", &st.set, Some(name), String::new()));
        let rows = (whole.chain(stages).chain(by_interval)).flat_map(|(kind, set, name, start)| {
            set.figures.iter().map(move |v| {
                let name = name.unwrap_or(&set.name).clone();
                let lead = [kind.to_string(), name, start.clone()];
                lead.into_iter().chain(v.csv_cells()).collect()
            })
        });
        Some(text::csv(std::iter::once(header).chain(rows)))
    }
}

/// The table rows of one stream or group: label, estimate, interval and
/// closed form of each figure, the owner named on the first row.
fn figure_rows(set: &FigureSet, first: &str) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    for v in set.figures.iter() {
        // The mean square is a building block of the peakedness, kept in
        // the JSON and CSV for merging and checking, not shown in the table.
        if v.figure == Figure::OverflowMeanSquare {
            continue;
        }
        let e = &v.estimate;
        let unit = v.figure.unit();
        rows.push(vec![
            if rows.is_empty() {
                first.to_string()
            } else {
                String::new()
            },
            v.figure.label().to_string(),
            text::value(unit, e.mean),
            if e.mean.is_nan() {
                String::new()
            } else {
                text::interval(unit, e)
            },
            v.formula.as_ref().map_or(String::new(), |f| {
                format!("{} ({})", text::value(unit, f.value), f.name)
            }),
        ]);
    }
    rows
}

/// Sum of an interval figure over every stream, as an estimate whose
/// interval comes from the per-replication sums.
fn summed(outcome: &RunResult, b: usize, figure: Figure) -> Estimate {
    let idx: Vec<usize> = (outcome.layout.iter().enumerate())
        .filter(|(_, f)| {
            matches!(f.scope, Scope::StreamInterval(bb, _) if bb == b) && f.figure == figure
        })
        .map(|(i, _)| i)
        .collect();
    stats::estimate(
        (outcome.per_replication.iter()).map(|v| idx.iter().map(|&i| v[i].own()).sum::<f64>()),
    )
}

/// The interval with the highest loss of any stream (ties: the highest time
/// congestion of any group; then the earliest); None without intervals.
fn worst(intervals: &[Interval]) -> Option<usize> {
    let highest = |sets: &[FigureSet], figure: Figure| {
        sets.iter()
            .map(|s| s.mean(figure))
            .filter(|m| !m.is_nan())
            .fold(0.0f64, f64::max)
    };
    let score: Vec<(f64, f64)> = intervals
        .iter()
        .map(|iv| {
            (
                highest(&iv.streams, Figure::Loss),
                highest(&iv.groups, Figure::TimeCongestion),
            )
        })
        .collect();
    (0..score.len()).max_by(|&a, &b| {
        score[a]
            .partial_cmp(&score[b])
            .unwrap_or(std::cmp::Ordering::Equal)
            .then(b.cmp(&a))
    })
}

fn time_of_day<S: Serializer>(t: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    match t {
        Some(c) => s.serialize_str(&crate::units::format_time_of_day(*c)),
        None => s.serialize_none(),
    }
}

/// How much the engine did, and how fast: "63,105 events simulated in
/// 0.01 s (6.3 million a second)"; a run too short to time says so instead
/// of printing a rate of nothing in 0.00 s.
pub fn work_line(events: u64, wall_s: f64) -> String {
    let count = thousands(events);
    if wall_s < 0.005 {
        format!("{count} events simulated in under 0.01 s")
    } else {
        format!(
            "{count} events simulated in {wall_s:.2} s ({:.1} million a second)",
            events as f64 / wall_s / 1e6
        )
    }
}

/// 63105 as "63,105".
fn thousands(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// A group's servers in the group column: "18"; with shrinkage "14 of 20
/// scheduled"; for a schedule "6 to 11 per 30 min".
fn servers_words(g: &crate::scenario::Group) -> String {
    let Some(s) = &g.schedule else {
        return g.servers.to_string();
    };
    if !g.servers_change() {
        return format!("{} of {} scheduled", s.present[0], s.scheduled[0]);
    }
    let fewest = s.present.iter().min().copied().unwrap_or(0);
    format!(
        "{fewest} to {} per {}",
        g.servers,
        crate::units::format_duration(s.interval_s)
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn work_line_reads_as_a_rate_or_says_it_was_too_short_to_time() {
        assert_eq!(thousands(0), "0");
        assert_eq!(thousands(999), "999");
        assert_eq!(thousands(63_105), "63,105");
        assert_eq!(thousands(1_234_567), "1,234,567");
        assert_eq!(
            work_line(63_105, 0.001),
            "63,105 events simulated in under 0.01 s"
        );
        assert_eq!(
            work_line(5_000_000, 0.5),
            "5,000,000 events simulated in 0.50 s (10.0 million a second)"
        );
    }
}
