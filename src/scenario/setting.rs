//! A scenario setting named by its key path (`stream.office.holding.mean`),
//! and a range of values for it in the file's own terms ("2m:4m:30s",
//! "300/h:600/h:50/h", "20%:40%:5%", "0.5:1.5:0.25"): the one home of
//! editing a scenario's TOML for `sweep --set`. Each value is written into
//! the file's table and the scenario compiled again, so every rule and
//! message of the scenario applies to every step.
//!
//! A path walks the file's tables: a plain segment is a key; after
//! `stream` or `group` (arrays of tables) comes the element's `name`.
//! Names containing a dot cannot be addressed.

use super::{Model, ScenarioError};
use crate::units;
use std::path::Path;
use thiserror::Error;

/// Most values in one range.
pub const MAX_VALUES: usize = 1000;

/// A setting or range that cannot be understood.
#[derive(Debug, Error, PartialEq)]
pub enum SettingError {
    /// Not `KEY=start:end:step`.
    #[error("'{0}': expected KEY=start:end:step, like \"stream.office.holding.mean=2m:4m:30s\"")]
    Form(String),
    /// The range is not one kind of value or not increasing.
    #[error("'{text}': {reason}")]
    Range {
        /// The text.
        text: String,
        /// What is wrong.
        reason: String,
    },
    /// The key path leads nowhere in the file.
    #[error("'{key}': {reason}")]
    Path {
        /// The key path.
        key: String,
        /// Where it stops.
        reason: String,
    },
}

/// What kind of value a range holds, from the way it is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// A duration ("2m", "90s"); shown in seconds.
    Duration,
    /// A rate ("300/h"); shown in calls per hour.
    Rate,
    /// A share ("25%"); shown in percent.
    Share,
    /// A plain number (a cv, a count of places or attempts).
    Number,
}

impl Kind {
    /// The unit the values are shown in.
    pub fn unit(self) -> &'static str {
        match self {
            Kind::Duration => "s",
            Kind::Rate => "calls/h",
            Kind::Share => "%",
            Kind::Number => "",
        }
    }
}

/// A key path and the values to set it to, in the order given.
#[derive(Debug, Clone, PartialEq)]
pub struct SettingRange {
    /// The key path as written.
    pub key: String,
    /// The kind of its values.
    pub kind: Kind,
    /// The values in the shown unit (seconds, calls per hour, percent, or
    /// plain).
    pub values: Vec<f64>,
}

fn parse_kind(token: &str) -> Result<(Kind, f64), String> {
    let t = token.trim();
    if let Ok(x) = t.parse::<f64>()
        && x.is_finite()
    {
        return Ok((Kind::Number, x));
    }
    if t.ends_with('%') {
        let p = t.trim_end_matches('%').trim();
        return p
            .parse::<f64>()
            .ok()
            .filter(|x| x.is_finite())
            .map(|x| (Kind::Share, x))
            .ok_or_else(|| format!("{t} is not a share"));
    }
    if t.contains('/') {
        return units::parse_rate(t)
            .map(|r| (Kind::Rate, r * 3600.0))
            .map_err(|e| e.to_string());
    }
    units::parse_duration(t)
        .map(|d| (Kind::Duration, d))
        .map_err(|e| e.to_string())
}

impl SettingRange {
    /// Parse `KEY=start:end:step` (the step may be left out for whole
    /// numbers: a step of 1).
    ///
    /// # Errors
    ///
    /// Not of that form, values of different kinds, or not increasing.
    pub fn parse(text: &str) -> Result<SettingRange, SettingError> {
        let (key, range) = text
            .split_once('=')
            .ok_or_else(|| SettingError::Form(text.to_string()))?;
        let key = key.trim();
        if key.is_empty() || key.split('.').any(|s| s.trim().is_empty()) {
            return Err(SettingError::Form(text.to_string()));
        }
        let bad = |reason: String| SettingError::Range {
            text: text.to_string(),
            reason,
        };
        let parts: Vec<&str> = range.split(':').collect();
        let tokens: Vec<(Kind, f64)> = parts
            .iter()
            .map(|p| parse_kind(p))
            .collect::<Result<_, _>>()
            .map_err(bad)?;
        let (kind, start, end, step) = match tokens.as_slice() {
            [(k, a), (k2, b), (k3, c)] if k == k2 && k == k3 => (*k, *a, *b, *c),
            [(Kind::Number, a), (Kind::Number, b)] if a.fract() == 0.0 && b.fract() == 0.0 => {
                (Kind::Number, *a, *b, 1.0)
            }
            [_, _, _] => {
                return Err(bad(
                    "start, end and step must be the same kind of value (all durations, all rates, all shares or all numbers)".into(),
                ));
            }
            _ => return Err(SettingError::Form(text.to_string())),
        };
        if !(step > 0.0) || end < start {
            return Err(bad(
                "the end must not be below the start and the step must be above zero".into(),
            ));
        }
        let count = ((end - start) / step + 1e-9).floor() as usize + 1;
        if count > MAX_VALUES {
            return Err(bad(format!(
                "{count} values is more than the limit of {MAX_VALUES}"
            )));
        }
        Ok(SettingRange {
            key: key.to_string(),
            kind,
            values: (0..count).map(|i| start + i as f64 * step).collect(),
        })
    }

    /// Value `i` as the scenario file writes it: a duration in seconds, a
    /// rate per second, a share in percent, a number (an integer when
    /// whole, so that counts stay counts).
    pub fn toml_value(&self, i: usize) -> toml::Value {
        let x = self.values[i];
        match self.kind {
            Kind::Duration => toml::Value::String(format!("{x}s")),
            Kind::Rate => toml::Value::String(format!("{}/s", x / 3600.0)),
            Kind::Share => toml::Value::String(format!("{x}%")),
            Kind::Number if x.fract() == 0.0 && x.abs() < 9e15 => toml::Value::Integer(x as i64),
            Kind::Number => toml::Value::Float(x),
        }
    }

    /// The axis label: the key path and the unit.
    pub fn label(&self) -> String {
        match self.kind.unit() {
            "" => self.key.clone(),
            u => format!("{} ({u})", self.key),
        }
    }
}

/// Set the value at `key` in the file's `table` (see the module's path
/// rules). The last segment may be new; every table before it must exist.
///
/// # Errors
///
/// A segment that names no key, no element of that name, or a value that
/// is not a table where the path goes on.
pub fn set(table: &mut toml::Table, key: &str, value: toml::Value) -> Result<(), SettingError> {
    let segments: Vec<&str> = key.split('.').map(str::trim).collect();
    let fail = |reason: String| SettingError::Path {
        key: key.to_string(),
        reason,
    };
    let mut here = table;
    let mut i = 0;
    while i + 1 < segments.len() {
        let seg = segments[i];
        let Some(next) = here.get_mut(seg) else {
            return Err(fail(format!("the scenario has no {seg:?} here")));
        };
        here = match next {
            toml::Value::Table(t) => t,
            toml::Value::Array(items) => {
                let name = segments[i + 1];
                i += 1;
                if i + 1 >= segments.len() {
                    return Err(fail(format!(
                        "{seg}.{name} names a whole [[{seg}]]: name one of its settings, like {seg}.{name}.servers"
                    )));
                }
                items
                    .iter_mut()
                    .filter_map(toml::Value::as_table_mut)
                    .find(|t| t.get("name").and_then(toml::Value::as_str) == Some(name))
                    .ok_or_else(|| fail(format!("no [[{seg}]] is named {name:?}")))?
            }
            _ => {
                return Err(fail(format!(
                    "{seg} is a single value, not a table: the path ends there"
                )));
            }
        };
        i += 1;
    }
    let leaf = segments[segments.len() - 1];
    if matches!(
        here.get(leaf),
        Some(toml::Value::Table(_) | toml::Value::Array(_))
    ) {
        return Err(fail(format!(
            "{leaf} is a table or a list: name one number in it"
        )));
    }
    here.insert(leaf.to_string(), value);
    Ok(())
}

/// A scenario file read once, compiled again with settings changed.
#[derive(Debug, Clone)]
pub struct Editable {
    table: toml::Table,
    file: String,
    base: std::path::PathBuf,
    default_title: String,
    data_dir: Option<std::path::PathBuf>,
}

/// A setting of an [`Editable`] scenario that cannot be compiled.
#[derive(Debug, Error)]
pub enum EditError {
    /// The path or range.
    #[error(transparent)]
    Setting(#[from] SettingError),
    /// The scenario with the value set is not valid.
    #[error("{key} = {value}: {error}")]
    Scenario {
        /// The key path.
        key: String,
        /// The value, as written into the file.
        value: String,
        /// The scenario's own message.
        error: Box<ScenarioError>,
    },
}

impl Editable {
    /// Read `path` (data files confined to `data_dir` as
    /// [`super::load_confined`] does).
    ///
    /// # Errors
    ///
    /// The file cannot be read, is not a valid scenario as it stands.
    pub fn load(path: &Path, data_dir: Option<&Path>) -> Result<Editable, ScenarioError> {
        let t = super::read_text(path)?;
        // Compile it once as it stands, for its own messages.
        super::parse_confined(&t.text, &t.file, &t.base, &t.default_title, data_dir)?;
        let table: toml::Table =
            t.text
                .parse()
                .map_err(|e: toml::de::Error| ScenarioError::Read {
                    file: t.file.clone(),
                    reason: e.to_string(),
                })?;
        Ok(Editable {
            table,
            file: t.file,
            base: t.base,
            default_title: t.default_title,
            data_dir: data_dir.map(Path::to_path_buf),
        })
    }

    /// The scenario with each `(key, value)` set, compiled.
    ///
    /// # Errors
    ///
    /// A path that leads nowhere, or a value the scenario refuses (its own
    /// message, after the key and value).
    pub fn with(&self, edits: &[(&str, toml::Value)]) -> Result<Model, EditError> {
        let mut table = self.table.clone();
        for (key, value) in edits {
            set(&mut table, key, value.clone())?;
        }
        let text = toml::to_string(&table).map_err(|e| {
            EditError::Setting(SettingError::Path {
                key: edits.first().map_or(String::new(), |e| e.0.to_string()),
                reason: e.to_string(),
            })
        })?;
        super::parse_confined(
            &text,
            &self.file,
            &self.base,
            &self.default_title,
            self.data_dir.as_deref(),
        )
        .map_err(|error| {
            let (key, value) = edits.last().map_or((String::new(), String::new()), |e| {
                (e.0.to_string(), e.1.to_string())
            });
            EditError::Scenario {
                key,
                value,
                error: Box::new(error),
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_read_their_kind_from_how_they_are_written() {
        let r = SettingRange::parse("stream.a.holding.mean=2m:4m:30s").unwrap();
        assert_eq!(r.kind, Kind::Duration);
        assert_eq!(r.values, vec![120.0, 150.0, 180.0, 210.0, 240.0]);
        assert_eq!(r.toml_value(1), toml::Value::String("150s".into()));
        let r = SettingRange::parse("stream.a.arrivals.rate=300/h:600/h:150/h").unwrap();
        assert_eq!((r.kind, r.values.len()), (Kind::Rate, 3));
        let r = SettingRange::parse("group.g.queue=0:4").unwrap();
        assert_eq!(r.values, vec![0.0, 1.0, 2.0, 3.0, 4.0]);
        assert_eq!(r.toml_value(2), toml::Value::Integer(2));
        let r = SettingRange::parse("stream.a.retry.chance=20%:40%:10%").unwrap();
        assert_eq!(r.toml_value(0), toml::Value::String("20%".into()));
        assert!(SettingRange::parse("a=2m:4:1").is_err());
        assert!(SettingRange::parse("a=4m:2m:1m").is_err());
        assert!(SettingRange::parse("a=0.5:1.5").is_err());
        assert!(SettingRange::parse("=1:2:1").is_err());
        assert!(SettingRange::parse("a.=1:2:1").is_err());
    }

    #[test]
    fn paths_walk_tables_and_named_elements() {
        let mut t: toml::Table = r#"
[simulation]
length = "1h"
[[stream]]
name = "a"
holding = { law = "exponential", mean = "3m" }
[[stream]]
name = "b"
holding = { law = "exponential", mean = "5m" }
"#
        .parse()
        .unwrap();
        set(&mut t, "stream.b.holding.mean", "4m".into()).unwrap();
        assert_eq!(t["stream"][1]["holding"]["mean"].as_str(), Some("4m"));
        assert_eq!(t["stream"][0]["holding"]["mean"].as_str(), Some("3m"));
        set(&mut t, "simulation.warmup", "10m".into()).unwrap();
        let e = set(&mut t, "stream.c.holding.mean", "1m".into()).unwrap_err();
        assert!(
            e.to_string().contains("no [[stream]] is named \"c\""),
            "{e}"
        );
        let e = set(&mut t, "stream.a", "1m".into()).unwrap_err();
        assert!(e.to_string().contains("names a whole [[stream]]"), "{e}");
        let e = set(&mut t, "simulation.length.x", "1m".into()).unwrap_err();
        assert!(e.to_string().contains("single value"), "{e}");
        let e = set(&mut t, "stream.a.holding", "1m".into()).unwrap_err();
        assert!(e.to_string().contains("table or a list"), "{e}");
    }
}
