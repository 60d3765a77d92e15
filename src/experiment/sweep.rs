//! Load sweeps: the same design run at a series of load scales (all streams or
//! one) or group sizes, every step with the same seeds (common random
//! numbers), for peak-hour stress tests.

use super::{Accumulated, Completion, ExperimentError, RunOptions, RunResult, Runner, outcome_of};
use crate::scenario::setting::{Editable, SettingRange};
use crate::scenario::{Model, Replications, TransformError};
use std::time::Instant;
use thiserror::Error;

/// Most steps in one sweep.
pub const MAX_STEPS: usize = 1000;

/// A sweep that cannot be understood.
#[derive(Debug, Error, PartialEq)]
pub enum SweepError {
    /// Not `start:end[:step]`.
    #[error(
        "'{0}': expected a range start:end:step like \"0.8:1.6:0.1\" (servers: \"40:60\" or \"40:60:5\")"
    )]
    Range(String),
    /// Values out of their domain.
    #[error("'{text}': {reason}")]
    Values {
        /// The text.
        text: String,
        /// What is wrong.
        reason: String,
    },
    /// A value the model cannot take (a scale that takes a stream out of range).
    #[error("'{text}': {reason}")]
    Transform {
        /// The text.
        text: String,
        /// Why the model refuses it.
        reason: TransformError,
    },
    /// A scenario setting the file cannot take (its path, or a value
    /// refused with the scenario's own message).
    #[error("{0}")]
    Setting(String),
    /// The named stream or group does not exist.
    #[error("'{text}': no {what} is named \"{name}\"")]
    Name {
        /// The text.
        text: String,
        /// "stream" or "group".
        what: &'static str,
        /// The name.
        name: String,
    },
}

/// What a sweep varies.
#[derive(Debug, Clone)]
pub enum Sweep {
    /// Arrival rates multiplied by each value (all streams, or one).
    Scale {
        /// Stream index, or all.
        stream: Option<usize>,
        /// The factors.
        values: Vec<f64>,
    },
    /// One group's servers set to each value.
    Servers {
        /// Group index.
        group: usize,
        /// The sizes.
        values: Vec<u32>,
    },
    /// A grid: every load scale at every size of one group, sizes outer
    /// (all scales at the first size, then at the next).
    Grid {
        /// Stream index of the scaled load, or all.
        stream: Option<usize>,
        /// The load scales.
        scales: Vec<f64>,
        /// The group whose servers are set.
        group: usize,
        /// Its sizes.
        sizes: Vec<u32>,
    },
    /// One setting of the scenario file, by its key path, set to each
    /// value; every step's model is the file compiled with that value.
    Setting {
        /// The key path and its values.
        range: SettingRange,
        /// The model at each value.
        models: Vec<Model>,
    },
    /// Two settings of the file as a grid: every value of `inner` at each
    /// value of `outer` (outer first: all of `inner` at its first value,
    /// then at the next).
    SettingGrid {
        /// The setting of the outer loop.
        outer: SettingRange,
        /// The setting of the inner loop.
        inner: SettingRange,
        /// The model at each point, in that order.
        models: Vec<Model>,
    },
}

fn parse_range(text: &str, default_step: Option<f64>) -> Result<Vec<f64>, SweepError> {
    let bad = || SweepError::Range(text.to_string());
    let parts: Vec<&str> = text.split(':').map(str::trim).collect();
    let num = |s: &str| {
        s.parse::<f64>()
            .ok()
            .filter(|x| x.is_finite())
            .ok_or_else(bad)
    };
    let (start, end, step) = match (parts.as_slice(), default_step) {
        ([a, b, c], _) => (num(a)?, num(b)?, num(c)?),
        ([a, b], Some(step)) => (num(a)?, num(b)?, step),
        _ => return Err(bad()),
    };
    if !(step > 0.0) || end < start {
        return Err(SweepError::Values {
            text: text.to_string(),
            reason: "the end must not be below the start and the step must be above zero".into(),
        });
    }
    let count = ((end - start) / step + 1e-9).floor() as usize + 1;
    if count > MAX_STEPS {
        return Err(SweepError::Values {
            text: text.to_string(),
            reason: format!("{count} steps is more than the limit of {MAX_STEPS}"),
        });
    }
    // Computed from the index, not by repeated addition, so 0.8:1.6:0.1 ends
    // at 1.6 and not at 1.5999999.
    Ok((0..count).map(|i| start + i as f64 * step).collect())
}

impl Sweep {
    /// Parse `--scale [stream=]start:end:step`.
    pub fn parse_scale(text: &str, model: &Model) -> Result<Sweep, SweepError> {
        let (stream, range) = match text.split_once('=') {
            Some((name, r)) => (
                Some(
                    model
                        .stream_index(name.trim())
                        .ok_or_else(|| SweepError::Name {
                            text: text.to_string(),
                            what: "stream",
                            name: name.trim().to_string(),
                        })?,
                ),
                r,
            ),
            None => (None, text),
        };
        let values = parse_range(range, None)?;
        if values.iter().any(|v| !(*v > 0.0) || *v > 1000.0) {
            return Err(SweepError::Values {
                text: text.to_string(),
                reason: "scale factors must be above 0 and at most 1000".into(),
            });
        }
        Sweep::Scale { stream, values }.checked(text, model)
    }

    /// Parse `--servers group=start:end[:step]`.
    pub fn parse_servers(text: &str, model: &Model) -> Result<Sweep, SweepError> {
        let (name, range) = text
            .split_once('=')
            .ok_or_else(|| SweepError::Range(text.to_string()))?;
        let group = model
            .group_index(name.trim())
            .ok_or_else(|| SweepError::Name {
                text: text.to_string(),
                what: "group",
                name: name.trim().to_string(),
            })?;
        let values = parse_range(range, Some(1.0))?;
        if values
            .iter()
            .any(|v| v.fract() != 0.0 || *v < 1.0 || *v > crate::scenario::MAX_GROUP_SERVERS as f64)
        {
            return Err(SweepError::Values {
                text: text.to_string(),
                reason: "server counts must be whole numbers from 1 to 1000000".into(),
            });
        }
        Sweep::Servers {
            group,
            values: values.into_iter().map(|v| v as u32).collect(),
        }
        .checked(text, model)
    }

    /// A grid of `scale` (from [`Sweep::parse_scale`]) against `servers`
    /// (from [`Sweep::parse_servers`]).
    pub fn grid(scale: Sweep, servers: Sweep, model: &Model) -> Result<Sweep, SweepError> {
        let (
            Sweep::Scale {
                stream,
                values: scales,
            },
            Sweep::Servers {
                group,
                values: sizes,
            },
        ) = (scale, servers)
        else {
            return Err(SweepError::Values {
                text: "--scale with --servers".into(),
                reason: "a grid is a load scale against a server range".into(),
            });
        };
        let steps = scales.len() * sizes.len();
        if steps > MAX_STEPS {
            return Err(SweepError::Values {
                text: "--scale with --servers".into(),
                reason: format!("{steps} steps is more than the limit of {MAX_STEPS}"),
            });
        }
        Sweep::Grid {
            stream,
            scales,
            group,
            sizes,
        }
        .checked("--scale with --servers", model)
    }

    /// `--set KEY=RANGE` on the scenario `file`: the file compiled at each
    /// value, then `adjust`ed (the flags' overrides, such as a seed).
    ///
    /// # Errors
    ///
    /// A path that leads nowhere or a value the scenario refuses, named.
    pub fn setting(
        range: SettingRange,
        file: &Editable,
        adjust: impl Fn(&mut Model),
    ) -> Result<Sweep, SweepError> {
        let models = (0..range.values.len())
            .map(|i| {
                let mut m = file
                    .with(&[(range.key.as_str(), range.toml_value(i))])
                    .map_err(|e| SweepError::Setting(e.to_string()))?;
                adjust(&mut m);
                Ok(m)
            })
            .collect::<Result<Vec<_>, SweepError>>()?;
        Ok(Sweep::Setting { range, models })
    }

    /// `--set A --set B --grid`: every value of `inner` at each value of
    /// `outer`, the file compiled at each point, then `adjust`ed.
    ///
    /// # Errors
    ///
    /// As [`Sweep::setting`]; more points than [`MAX_STEPS`].
    pub fn setting_grid(
        outer: SettingRange,
        inner: SettingRange,
        file: &Editable,
        adjust: impl Fn(&mut Model),
    ) -> Result<Sweep, SweepError> {
        let points = outer.values.len() * inner.values.len();
        if points > MAX_STEPS {
            return Err(SweepError::Values {
                text: format!("--set {} with --set {}", outer.key, inner.key),
                reason: format!("{points} steps is more than the limit of {MAX_STEPS}"),
            });
        }
        let mut models = Vec::with_capacity(points);
        for o in 0..outer.values.len() {
            for i in 0..inner.values.len() {
                let mut m = file
                    .with(&[
                        (outer.key.as_str(), outer.toml_value(o)),
                        (inner.key.as_str(), inner.toml_value(i)),
                    ])
                    .map_err(|e| SweepError::Setting(e.to_string()))?;
                adjust(&mut m);
                models.push(m);
            }
        }
        Ok(Sweep::SettingGrid {
            outer,
            inner,
            models,
        })
    }

    /// The outer setting's value at step `i` of a setting grid.
    pub fn outer_at(&self, i: usize) -> Option<f64> {
        match self {
            Sweep::SettingGrid { outer, inner, .. } => Some(outer.values[i / inner.values.len()]),
            _ => None,
        }
    }

    /// The outer setting's label of a setting grid.
    pub fn outer_label(&self) -> Option<String> {
        match self {
            Sweep::SettingGrid { outer, .. } => Some(outer.label()),
            _ => None,
        }
    }

    /// The sweep, once every step's model has been built from `model`.
    fn checked(self, text: &str, model: &Model) -> Result<Sweep, SweepError> {
        for i in 0..self.values().len() {
            self.model_at(model, i)
                .map_err(|reason| SweepError::Transform {
                    text: text.to_string(),
                    reason,
                })?;
        }
        Ok(self)
    }

    /// The swept values as numbers (of a grid: the load scale of each step).
    pub fn values(&self) -> Vec<f64> {
        match self {
            Sweep::Scale { values, .. } => values.clone(),
            Sweep::Servers { values, .. } => values.iter().map(|&v| f64::from(v)).collect(),
            Sweep::Grid { scales, sizes, .. } => (0..sizes.len())
                .flat_map(|_| scales.iter().copied())
                .collect(),
            Sweep::Setting { range, .. } => range.values.clone(),
            Sweep::SettingGrid { outer, inner, .. } => (0..outer.values.len())
                .flat_map(|_| inner.values.iter().copied())
                .collect(),
        }
    }

    /// The servers on the grid's group at step `i` (None unless a grid).
    pub fn servers_at(&self, i: usize) -> Option<u32> {
        match self {
            Sweep::Grid { scales, sizes, .. } => Some(sizes[i / scales.len()]),
            _ => None,
        }
    }

    /// Whether the swept value is a load scale (more is harder).
    pub fn scales_load(&self) -> bool {
        matches!(self, Sweep::Scale { .. } | Sweep::Grid { .. })
    }

    /// The group whose servers are swept, if any.
    pub fn group(&self) -> Option<usize> {
        match self {
            Sweep::Servers { group, .. } => Some(*group),
            Sweep::Grid { group, .. } => Some(*group),
            Sweep::Scale { .. } | Sweep::Setting { .. } | Sweep::SettingGrid { .. } => None,
        }
    }

    /// The model at step `i`. Fails only for a step the parsers refuse
    /// (a sweep built by hand may hold one).
    pub fn model_at(&self, model: &Model, i: usize) -> Result<Model, TransformError> {
        match self {
            Sweep::Scale { stream, values } => model.with_load_scaled(values[i], *stream),
            Sweep::Servers { group, values } => model.with_servers(*group, values[i]),
            Sweep::Grid {
                stream,
                scales,
                group,
                sizes,
            } => {
                let n = scales.len();
                model
                    .with_servers(*group, sizes[i / n])?
                    .with_load_scaled(scales[i % n], *stream)
            }
            Sweep::Setting { models, .. } | Sweep::SettingGrid { models, .. } => {
                Ok(models[i].clone())
            }
        }
    }

    /// Whether the swept value is a setting of the file (no direction is
    /// easier).
    pub fn is_setting(&self) -> bool {
        matches!(self, Sweep::Setting { .. } | Sweep::SettingGrid { .. })
    }

    /// Axis label of the swept value.
    pub fn label(&self, model: &Model) -> String {
        match self {
            Sweep::Scale { stream, .. } | Sweep::Grid { stream, .. } => match stream {
                None => "load scale (x forecast)".into(),
                Some(s) => format!("load scale of {} (x forecast)", model.streams[*s].name),
            },
            Sweep::Servers { group, .. } => format!("servers on {}", model.groups[*group].name),
            Sweep::Setting { range, .. } => range.label(),
            Sweep::SettingGrid { inner, .. } => inner.label(),
        }
    }
}

/// One step of a sweep.
#[derive(Debug, Clone)]
pub struct Step {
    /// The swept value.
    pub value: f64,
    /// The model run at this step.
    pub model: Model,
    /// Its results.
    pub outcome: RunResult,
}

/// Run every step; stops early on request, returning the finished steps
/// (and `Completion::Stopped`).
pub fn run(
    model: &Model,
    sweep: &Sweep,
    plan: &Replications,
    opts: &RunOptions,
) -> Result<(Vec<Step>, Completion), ExperimentError> {
    let runner = Runner::new(opts)?;
    let mut steps = Vec::new();
    for (i, value) in sweep.values().into_iter().enumerate() {
        let started = Instant::now();
        let m = sweep.model_at(model, i)?;
        let mut acc = Accumulated::default();
        let (precision, completion) = runner.run_plan(&m, plan, &mut acc);
        if completion.stopped() {
            return Ok((steps, completion));
        }
        let outcome = outcome_of(
            &m,
            acc,
            started.elapsed().as_secs_f64(),
            precision,
            completion,
        );
        steps.push(Step {
            value,
            model: m,
            outcome,
        });
    }
    Ok((steps, Completion::Complete))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_end_where_they_should() {
        let v = parse_range("0.8:1.6:0.1", None).unwrap();
        assert_eq!(v.len(), 9);
        assert!((v[8] - 1.6).abs() < 1e-12);
        assert_eq!(
            parse_range("40:44", Some(1.0)).unwrap(),
            vec![40.0, 41.0, 42.0, 43.0, 44.0]
        );
        assert!(parse_range("1:0:0.1", None).is_err());
        assert!(parse_range("0:1:0", None).is_err());
        assert!(parse_range("0:1", None).is_err());
        assert!(parse_range("0:1e9:1", None).is_err());
        assert!(parse_range("a:b:c", None).is_err());
    }
}
