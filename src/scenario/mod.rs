//! The scenario file format: TOML text -> serde types (`spec`) -> validation ->
//! compiled, index-based [`Model`]. Owns every rule about what a valid design
//! is; must not simulate or report.

pub mod model;
pub mod setting;
pub mod spec;

pub use model::Forecast;
pub use model::{
    Arrivals, Group, Hold, Model, Preemption, Prices, Queue, Replications, Retry, RunPlan,
    Schedule, SeenBy, Stage, Start, Stream, TransformError, residual_quantile,
};

use crate::dist::{self, Law, LawParams};
use crate::units;
use spec::{Amount, ArrivalSpec, ChanceSpec, LawSpec, QueueSpec, ScenarioSpec};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// Limits that keep a typo from becoming a run of days or an allocation of
/// terabytes. Larger designs are real but belong to a different tool.
///
/// Most servers in one group (also bounds a reserve and a call's units).
pub const MAX_GROUP_SERVERS: i64 = 1_000_000;
/// Longest warm-up or measured period accepted (s): ten years.
pub const MAX_LENGTH_S: f64 = 10.0 * 365.0 * 86400.0;
/// Most stages in one call flow.
pub const MAX_STAGES: usize = 16;
/// Most replications accepted.
pub const MAX_REPLICATIONS: i64 = 1_000_000;
/// Most finite sources, waiting places or attempts per call accepted.
pub const MAX_COUNT: i64 = 10_000_000;
/// Most reporting intervals per replication.
pub const MAX_INTERVALS: f64 = 100_000.0;
/// Largest `priority` number of a stream.
pub const MAX_PRIORITY: i64 = 1000;
/// Most groups in one stream's `seen_by` (the engine keeps them in a
/// 32-bit mask per waiting call).
pub const MAX_SEEN_BY: usize = 32;
/// Replications used when the file gives neither a count nor a precision.
pub const DEFAULT_REPLICATIONS: u32 = 20;
/// Replication cap for a precision goal when the file gives none.
pub const DEFAULT_MAX_REPLICATIONS: u32 = 1000;

/// A scenario file that cannot be used. Every variant names the file; the
/// message says what is wrong and what is expected.
#[derive(Debug, Error)]
pub enum ScenarioError {
    /// The file cannot be read (missing, a directory, no permission, not UTF-8).
    #[error("{file}: cannot read the scenario: {reason}")]
    Read {
        /// The scenario file.
        file: String,
        /// Why.
        reason: String,
    },
    /// TOML syntax, a wrong type or an unknown key, located by the parser;
    /// `key` is the path to the value when the parser knows it (a wrong type,
    /// an unknown or missing key), empty for plain syntax errors.
    #[error("{file}:{line}:{column}: {key}{message}", key = key_prefix(key))]
    Syntax {
        /// The scenario file.
        file: String,
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// Key path, e.g. `group[2].servers`; empty when unknown.
        key: String,
        /// The parser's message.
        message: String,
    },
    /// A value breaks a rule of the design; `key` is the path to it.
    #[error("{file}: {key}: {message}")]
    Invalid {
        /// The scenario file.
        file: String,
        /// Key path, e.g. `stream "office".route[1]`.
        key: String,
        /// What is wrong and what is expected.
        message: String,
    },
}

/// Largest scenario file read (bytes); a bigger one is surely not a scenario.
const MAX_FILE_BYTES: u64 = 16 * 1024 * 1024;

/// Read, parse and validate a scenario file.
pub fn load(path: &Path) -> Result<Model, ScenarioError> {
    load_confined(path, None)
}

/// [`load`], refusing any data file that does not lie inside `data_dir`
/// (after following links), before reading it: a scenario may name any file
/// its user can read, so a service that runs scenarios written by others
/// confines them to a folder.
pub fn load_confined(path: &Path, data_dir: Option<&Path>) -> Result<Model, ScenarioError> {
    let t = read_text(path)?;
    parse_confined(&t.text, &t.file, &t.base, &t.default_title, data_dir)
}

/// A scenario file's text, with what its parsing needs: the file's name
/// as errors print it, the folder its data paths are relative to, and the
/// title to use when the file gives none.
pub(crate) struct ScenarioText {
    pub text: String,
    pub file: String,
    pub base: PathBuf,
    pub default_title: String,
}

/// Read a scenario file (size-checked, UTF-8) without compiling it.
pub(crate) fn read_text(path: &Path) -> Result<ScenarioText, ScenarioError> {
    let file = printable(&path.display().to_string());
    let read_err = |reason: String| ScenarioError::Read {
        file: file.clone(),
        reason,
    };
    let meta = std::fs::metadata(path).map_err(|e| read_err(e.to_string()))?;
    if meta.is_dir() {
        return Err(read_err("it is a directory, not a file".into()));
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err(read_err(format!(
            "{} bytes is far too large for a scenario file (limit {MAX_FILE_BYTES})",
            meta.len()
        )));
    }
    let bytes = std::fs::read(path).map_err(|e| read_err(e.to_string()))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        read_err(format!(
            "not UTF-8 text (byte {})",
            e.utf8_error().valid_up_to()
        ))
    })?;
    let base = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let default_title = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    Ok(ScenarioText {
        text,
        file,
        base,
        default_title,
    })
}

/// Parse and validate scenario text. `file` names it in errors; `base` is the
/// folder that empirical data paths are relative to.
pub fn parse(
    text: &str,
    file: &str,
    base: &Path,
    default_title: &str,
) -> Result<Model, ScenarioError> {
    parse_confined(text, file, base, default_title, None)
}

/// [`parse`] with data files confined to `data_dir` (see [`load_confined`]).
pub fn parse_confined(
    text: &str,
    file: &str,
    base: &Path,
    default_title: &str,
    data_dir: Option<&Path>,
) -> Result<Model, ScenarioError> {
    let file = &printable(file);
    let spec: ScenarioSpec = toml::from_str(text).map_err(|e| {
        let offset = e.span().map_or(0, |s| s.start);
        let (line, column) = line_column(text, offset);
        let message = one_line(e.message());
        ScenarioError::Syntax {
            file: file.to_string(),
            line,
            column,
            key: printable(&key_path(&e, text, offset, &message)),
            message: printable(&message),
        }
    })?;
    Compiler {
        file: file.to_string(),
        base: base.to_path_buf(),
        data_files: Default::default(),
        data_dir: data_dir.map(Path::to_path_buf),
    }
    .compile(spec, default_title)
}

/// Text from the user's file in a message, control characters (line breaks
/// included) escaped, so that every message stays on one line.
pub fn printable(text: &str) -> String {
    if !text.chars().any(char::is_control) {
        return text.to_string();
    }
    text.chars()
        .flat_map(|c| {
            let escaped: Vec<char> = if c.is_control() {
                c.escape_default().collect()
            } else {
                vec![c]
            };
            escaped
        })
        .collect()
}

fn key_prefix(key: &str) -> String {
    if key.is_empty() {
        String::new()
    } else {
        format!("{key}: ")
    }
}

/// Whitespace runs (line breaks included) squeezed to one space.
fn one_line(message: &str) -> String {
    message.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// The key path of a deserialization error, e.g. `stream[2].holding.cv`.
///
/// The toml parser records the keys leading to a bad value (shown by its
/// `Display` only when the error carries no input) but not the position in
/// an array of tables: that is counted here from the `[[name]]` headers
/// before the error. An unknown or missing field is appended to the path.
fn key_path(e: &toml::de::Error, text: &str, offset: usize, message: &str) -> String {
    let mut bare = e.clone();
    bare.set_input(None);
    let shown = bare.to_string();
    let mut keys: Vec<String> = shown
        .lines()
        .find_map(|l| l.strip_prefix("in `").and_then(|k| k.strip_suffix('`')))
        .map(|k| k.split('.').map(str::to_string).collect())
        .unwrap_or_default();
    if let Some(first) = keys.first_mut() {
        // Headers up to the end of the error's line: a missing field is
        // reported at its table's own header.
        let header = format!("[[{first}]]");
        let line_end = text[text_before(text, offset).len()..]
            .find('\n')
            .map_or(text.len(), |i| text_before(text, offset).len() + i);
        let count = text[..line_end]
            .lines()
            .filter(|l| l.trim_start().starts_with(&header))
            .count();
        if count > 0 {
            first.push_str(&format!("[{count}]"));
        }
    }
    for prefix in ["unknown field `", "missing field `"] {
        if let Some(field) = message
            .strip_prefix(prefix)
            .and_then(|rest| rest.split('`').next())
        {
            keys.push(field.to_string());
        }
    }
    if keys.is_empty() && e.span().is_some() {
        return key_on_line(text, offset);
    }
    keys.join(".")
}

/// For a syntax error, where the parser records no keys: the key written on
/// the error's line (or the table header there), under the nearest table
/// header above it, e.g. `group[2].servers`. Empty when the line holds no
/// recognisable key. A reading aid only: multi-line strings may mislead it.
fn key_on_line(text: &str, offset: usize) -> String {
    let before = text_before(text, offset);
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let line = text[line_start..].lines().next().unwrap_or("").trim();
    let header_name = |l: &str| -> Option<(bool, String)> {
        let l = l.trim();
        if let Some(rest) = l.strip_prefix("[[") {
            Some((true, rest.split("]]").next()?.trim().to_string()))
        } else {
            let rest = l.strip_prefix('[')?;
            Some((false, rest.split(']').next()?.trim().to_string()))
        }
    };
    let usable = |k: &str| {
        !k.is_empty()
            && k.chars()
                .all(|c| c.is_ascii_alphanumeric() || matches!(c, '_' | '-' | '.' | '"'))
    };
    let mut counts: HashMap<String, usize> = HashMap::new();
    let mut table = String::new();
    for l in text[..line_start].lines() {
        if let Some((array, name)) = header_name(l) {
            table = if !usable(&name) {
                String::new()
            } else if array {
                let n = counts.entry(name.clone()).or_default();
                *n += 1;
                format!("{name}[{n}]")
            } else {
                name
            };
        }
    }
    let key = match header_name(line) {
        Some((_, name)) => return if usable(&name) { name } else { String::new() },
        None => match line.split_once('=') {
            Some((k, _)) if usable(k.trim()) => k.trim().replace('"', ""),
            _ => return table,
        },
    };
    if table.is_empty() {
        key
    } else {
        format!("{table}.{key}")
    }
}

/// `text` up to byte `offset`, moved back to a character boundary.
fn text_before(text: &str, offset: usize) -> &str {
    let mut end = offset.min(text.len());
    while !text.is_char_boundary(end) {
        end -= 1;
    }
    &text[..end]
}

fn line_column(text: &str, offset: usize) -> (usize, usize) {
    let before = text_before(text, offset);
    let line = before.matches('\n').count() + 1;
    let column = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, column)
}

/// FNV-1a, 64 bits: a fixed, documented hash of a stream's name for its
/// random-number key (std's hasher may change between Rust versions).
pub fn name_key(name: &str) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in name.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

/// The grid shifts lie on: its interval and the clock time of its start.
struct Grid {
    interval_s: f64,
    clock_start_s: f64,
}

/// The random-stream key of a forecast factor shared under `label`: apart
/// from every stream's own key (a stream may bear the label's name).
pub fn forecast_key(label: &str) -> u64 {
    name_key(label) ^ 0x5eed_f0ca_57f0_ca57
}

struct Compiler {
    file: String,
    base: PathBuf,
    /// Data files read so far (empirical laws).
    data_files: std::cell::RefCell<Vec<PathBuf>>,
    /// Data files must lie inside this folder (`--data-dir`).
    data_dir: Option<PathBuf>,
}

type R<T> = Result<T, ScenarioError>;

impl Compiler {
    fn err(&self, key: impl Into<String>, message: impl Into<String>) -> ScenarioError {
        ScenarioError::Invalid {
            file: self.file.clone(),
            key: printable(&key.into()),
            message: printable(&message.into()),
        }
    }

    fn duration(&self, key: &str, a: &Amount) -> R<f64> {
        let s = match a {
            Amount::Number(x) if x.is_finite() && *x >= 0.0 => *x,
            Amount::Number(x) => {
                return Err(self.err(
                    key,
                    format!("{x} is not a duration: expected seconds >= 0 or a time like \"3m\""),
                ));
            }
            Amount::Text(t) => {
                units::parse_duration(t).map_err(|e| self.err(key, e.to_string()))?
            }
        };
        if s > MAX_LENGTH_S {
            return Err(self.err(key, format!("{a} is longer than the limit of ten years")));
        }
        Ok(s)
    }

    fn positive_duration(&self, key: &str, a: &Amount) -> R<f64> {
        let s = self.duration(key, a)?;
        if s <= 0.0 {
            return Err(self.err(key, format!("{a} must be longer than zero")));
        }
        Ok(s)
    }

    fn rate(&self, key: &str, a: &Amount, allow_zero: bool) -> R<f64> {
        let r = match a {
            Amount::Number(x) => {
                return Err(self.err(
                    key,
                    format!(
                        "{x} has no unit: write the rate with its unit, like \"{x}/h\" or \"{x}/m\""
                    ),
                ));
            }
            Amount::Text(t) => units::parse_rate(t).map_err(|e| self.err(key, e.to_string()))?,
        };
        if r == 0.0 && !allow_zero {
            return Err(self.err(key, format!("{a}: a rate must be above zero")));
        }
        if r > 1e7 {
            return Err(self.err(
                key,
                format!("{a} is above the limit of 10 million calls per second"),
            ));
        }
        Ok(r)
    }

    fn share(&self, key: &str, a: &Amount) -> R<f64> {
        match a {
            Amount::Number(x) if (0.0..=1.0).contains(x) => Ok(*x),
            Amount::Number(x) => Err(self.err(key, format!("{x} is not a share: expected a fraction from 0 to 1 or a percentage like \"70%\""))),
            Amount::Text(t) => units::parse_share(t).map_err(|e| self.err(key, e.to_string())),
        }
    }

    fn count(&self, key: &str, v: i64, min: i64, max: i64) -> R<u32> {
        if v < min || v > max {
            return Err(self.err(
                key,
                format!("{v} is out of range: expected a whole number from {min} to {max}"),
            ));
        }
        Ok(v as u32)
    }

    /// The whole file: the run plan, the names, the groups, then the
    /// streams (which refer to both), then the default warm-up.
    fn compile(&self, spec: ScenarioSpec, default_title: &str) -> R<Model> {
        let plan = self.plan(&spec.simulation)?;
        if spec.groups.is_empty() {
            return Err(self.err(
                "group",
                "the scenario has no [[group]]: add at least one circuit or agent group",
            ));
        }
        if spec.streams.is_empty() {
            return Err(self.err(
                "stream",
                "the scenario has no [[stream]]: add at least one traffic stream",
            ));
        }
        let group_index = self.name_index("group", spec.groups.iter().map(|g| &g.name))?;
        let stream_index = self.name_index("stream", spec.streams.iter().map(|s| &s.name))?;
        let groups = spec
            .groups
            .iter()
            .map(|g| self.group(g, &stream_index, &plan))
            .collect::<R<Vec<Group>>>()?;
        let streams = spec
            .streams
            .iter()
            .map(|s| self.stream(s, &group_index, &groups))
            .collect::<R<Vec<Stream>>>()?;
        self.check_shared_forecasts(&streams)?;
        self.check_preferences(&spec, &groups, &streams)?;
        let prices = match &spec.prices {
            None => None,
            Some(p) => Some(self.prices(p, &group_index, &stream_index)?),
        };
        let mut model = Model {
            title: spec.title.unwrap_or_else(|| default_title.to_string()),
            plan,
            groups,
            streams,
            data_files: self.data_files.take(),
            prices,
        };
        for g in 0..model.groups.len() {
            model.groups[g].class_of = model.queue_classes(g).0;
        }
        if !model.plan.warmup_given {
            // The default warm-up from the holding laws, whole seconds, at
            // most the longest warm-up a file may give.
            model.plan.warmup_s = model.warmup_needed_s().ceil().min(MAX_LENGTH_S);
        }
        Ok(model)
    }

    /// `[prices]` by group and stream index.
    fn prices(
        &self,
        p: &spec::PricesSpec,
        groups: &HashMap<&str, usize>,
        streams: &HashMap<&str, usize>,
    ) -> R<crate::scenario::Prices> {
        use spec::PriceMap;
        let by = |key: &str,
                  map: &Option<PriceMap>,
                  index: &HashMap<&str, usize>,
                  what: &str,
                  default: f64|
         -> R<Vec<f64>> {
            let mut out = vec![default; index.len()];
            let check = |k: &str, v: f64| -> R<f64> {
                if v.is_finite() && v >= 0.0 {
                    Ok(v)
                } else {
                    Err(self.err(k, format!("{v} is not a price: expected a number >= 0")))
                }
            };
            match map {
                None => {}
                Some(PriceMap::All(v)) => {
                    let v = check(&format!("prices.{key}"), *v)?;
                    out.iter_mut().for_each(|x| *x = v);
                }
                Some(PriceMap::By(m)) => {
                    for (name, &v) in m {
                        let k = format!("prices.{key}.{name}");
                        let Some(&i) = index.get(name.as_str()) else {
                            return Err(self.err(k, format!("no {what} is named \"{name}\"")));
                        };
                        out[i] = check(&k, v)?;
                    }
                }
            }
            Ok(out)
        };
        let module = by("module", &p.module, groups, "group", 1.0)?;
        if let Some((g, &m)) = (module.iter().enumerate())
            .find(|&(_, &m)| m.fract() != 0.0 || !(1.0..=1e6).contains(&m))
        {
            let name = groups
                .iter()
                .find(|&(_, &i)| i == g)
                .map_or("", |(n, _)| *n);
            return Err(self.err(
                format!("prices.module.{name}"),
                format!(
                    "{m} is not a pack size: expected a whole number of servers from 1 to 1000000"
                ),
            ));
        }
        Ok(crate::scenario::Prices {
            server_hour: by("server_hour", &p.server_hour, groups, "group", 0.0)?,
            module: module.iter().map(|&m| m as u32).collect(),
            lost_call: by("lost_call", &p.lost_call, streams, "stream", 0.0)?,
            abandoned_call: by("abandoned_call", &p.abandoned_call, streams, "stream", 0.0)?,
            wait_minute: by("wait_minute", &p.wait_minute, streams, "stream", 0.0)?,
        })
    }

    /// Index by name of the groups or streams (`what`), each name usable
    /// and unique.
    fn name_index<'a>(
        &self,
        what: &str,
        names: impl Iterator<Item = &'a String>,
    ) -> R<HashMap<&'a str, usize>> {
        let mut index = HashMap::new();
        for (i, name) in names.enumerate() {
            let key = format!("{what}[{}].name", i + 1);
            check_name(name).map_err(|m| self.err(&key, m))?;
            if index.insert(name.as_str(), i).is_some() {
                return Err(self.err(
                    key,
                    format!("the name \"{name}\" is used by two {what}s: names must be unique"),
                ));
            }
        }
        Ok(index)
    }

    /// One `[[group]]`: servers, queue, overflow and trunk reservation.
    fn group(
        &self,
        g: &spec::GroupSpec,
        stream_index: &HashMap<&str, usize>,
        plan: &RunPlan,
    ) -> R<Group> {
        let k = |field: &str| format!("group \"{}\".{field}", g.name);
        let (servers, schedule) = self.servers(g, &k, plan)?;
        let shift_types = match &g.shift_types {
            None => Vec::new(),
            Some(types) => self.shift_types(types, &k, plan)?,
        };
        let queue = match &g.queue {
            None | Some(QueueSpec::Places(0)) => Queue::None,
            Some(QueueSpec::Places(q)) => {
                Queue::Limited(self.count(&k("queue"), *q, 0, MAX_COUNT)?)
            }
            Some(QueueSpec::Text(t)) if t == "unlimited" => Queue::Unlimited,
            Some(QueueSpec::Text(t)) => {
                return Err(self.err(k("queue"), format!("\"{t}\" is not a queue size: expected a whole number of waiting places or \"unlimited\"")));
            }
        };
        let overflow_after_s = match &g.overflow_after {
            None => None,
            Some(_) if queue == Queue::None => {
                return Err(self.err(
                    k("overflow_after"),
                    "only a group with waiting places (queue > 0) can pass waiting calls on",
                ));
            }
            Some(a) => Some(self.positive_duration(&k("overflow_after"), a)?),
        };
        let mut reserved_for = vec![false; stream_index.len()];
        let reserve = match &g.reserve {
            None => 0,
            Some(r) => {
                let reserve = self.count(&k("reserve.servers"), r.servers, 0, MAX_GROUP_SERVERS)?;
                if reserve >= servers {
                    return Err(self.err(k("reserve.servers"), format!("reserving {reserve} of {servers} servers leaves none for other traffic: reserve fewer than the group has")));
                }
                if r.for_streams.is_empty() {
                    return Err(self.err(
                        k("reserve.for"),
                        "name at least one stream that may use the reserved servers",
                    ));
                }
                for (j, name) in r.for_streams.iter().enumerate() {
                    match stream_index.get(name.as_str()) {
                        Some(&s) => reserved_for[s] = true,
                        None => {
                            return Err(self.err(
                                format!("{}[{}]", k("reserve.for"), j + 1),
                                format!("no stream is named \"{name}\""),
                            ));
                        }
                    }
                }
                reserve
            }
        };
        let prefer = match &g.prefer {
            None => Vec::new(),
            Some(_) if queue == Queue::None => {
                return Err(self.err(
                    k("prefer"),
                    "only a group with waiting places (queue > 0) chooses among waiting calls",
                ));
            }
            Some(names) if names.is_empty() => {
                return Err(self.err(
                    k("prefer"),
                    "the list is empty: name the streams in the order this group takes them",
                ));
            }
            Some(names) => {
                let mut prefer = Vec::with_capacity(names.len());
                for (j, name) in names.iter().enumerate() {
                    let key = format!("{}[{}]", k("prefer"), j + 1);
                    let Some(&s) = stream_index.get(name.as_str()) else {
                        return Err(self.err(key, format!("no stream is named \"{name}\"")));
                    };
                    if prefer.contains(&(s as u32)) {
                        return Err(self.err(
                            key,
                            format!("the stream \"{name}\" appears twice in prefer"),
                        ));
                    }
                    prefer.push(s as u32);
                }
                prefer
            }
        };
        let preemption = match &g.preemption {
            None => None,
            Some(text) => Some(Preemption::parse(text).ok_or_else(|| {
                self.err(
                    k("preemption"),
                    format!(
                        "\"{text}\" is not a pre-emption rule: expected \"{}\" (what happens to the interrupted call)",
                        Preemption::NAMES.join("\", \"")
                    ),
                )
            })?),
        };
        Ok(Group {
            name: g.name.clone(),
            servers,
            schedule,
            queue,
            overflow_after_s,
            reserve,
            reserved_for,
            shift_types,
            prefer,
            // Filled in once the streams are compiled (`queue_classes`).
            class_of: vec![0; stream_index.len()],
            preemption,
        })
    }

    /// A group's servers: a constant `servers`, or a schedule (`servers`
    /// as a list and/or `shrinkage`, with `interval` where either is a
    /// list) and the most servers it has present at any time.
    fn servers(
        &self,
        g: &spec::GroupSpec,
        k: &dyn Fn(&str) -> String,
        plan: &RunPlan,
    ) -> R<(u32, Option<Schedule>)> {
        use spec::ServersSpec;
        let servers = match (&g.servers, &g.shifts) {
            (Some(_), Some(_)) => {
                return Err(self.err(k("shifts"), "give servers or shifts, not both: the shifts say how many agents are scheduled"));
            }
            (None, None) => {
                return Err(self.err(k("servers"), "missing: give the group's servers (a number, or one per interval) or the shifts its agents work"));
            }
            (Some(servers), None) => servers.clone(),
            (None, Some(shifts)) => ServersSpec::Each(self.worked_shifts(shifts, g, k, plan)?),
        };
        let scheduled: Vec<u32> = match &servers {
            ServersSpec::One(n) if g.shrinkage.is_none() => {
                if g.interval.is_some() {
                    return Err(self.err(k("interval"), "an interval is for a list of servers or of shrinkage shares, one per interval: give servers = [..] or remove interval"));
                }
                return Ok((self.count(&k("servers"), *n, 1, MAX_GROUP_SERVERS)?, None));
            }
            ServersSpec::One(n) => vec![self.count(&k("servers"), *n, 1, MAX_GROUP_SERVERS)?],
            ServersSpec::Each(list) if list.is_empty() => {
                return Err(self.err(
                    k("servers"),
                    "the list of servers is empty: give one number per interval, like [12, 14, 18]",
                ));
            }
            ServersSpec::Each(list) => list
                .iter()
                .enumerate()
                .map(|(j, &n)| {
                    self.count(
                        &format!("{}[{}]", k("servers"), j + 1),
                        n,
                        0,
                        MAX_GROUP_SERVERS,
                    )
                })
                .collect::<R<Vec<u32>>>()?,
        };
        let shrinkage: Vec<f64> = match &g.shrinkage {
            None => vec![0.0],
            Some(ChanceSpec::One(a)) => vec![self.shrinkage(&k("shrinkage"), a)?],
            Some(ChanceSpec::Each(list)) if list.is_empty() => {
                return Err(self.err(k("shrinkage"), "the list of shrinkage shares is empty: give one share per interval, like [\"30%\", \"25%\"]"));
            }
            Some(ChanceSpec::Each(list)) => list
                .iter()
                .enumerate()
                .map(|(j, a)| self.shrinkage(&format!("{}[{}]", k("shrinkage"), j + 1), a))
                .collect::<R<Vec<f64>>>()?,
        };
        let entries = scheduled.len().max(shrinkage.len());
        let interval_s = match (&g.interval, entries) {
            (Some(i), _) => self.positive_duration(&k("interval"), i)?,
            // One entry lasts the whole run.
            (None, 1) => MAX_LENGTH_S,
            (None, _) => {
                return Err(self.err(k("interval"), "a list of servers or shrinkage shares needs the interval each entry covers, like interval = \"30m\""));
            }
        };
        // The shorter list's last entry holds.
        let at = |list: &[u32], i: usize| list[i.min(list.len() - 1)];
        let share_at = |i: usize| shrinkage[i.min(shrinkage.len() - 1)];
        let scheduled: Vec<u32> = (0..entries).map(|i| at(&scheduled, i)).collect();
        let shrinkage: Vec<f64> = (0..entries).map(share_at).collect();
        let present: Vec<u32> = (scheduled.iter().zip(&shrinkage))
            .map(|(&n, &s)| Schedule::present_of(n, s))
            .collect();
        let most = present.iter().copied().max().unwrap_or(0);
        if most == 0 {
            return Err(self.err(
                k("servers"),
                "no server takes calls at any time: schedule at least one (after shrinkage)",
            ));
        }
        let schedule = Schedule {
            interval_s,
            scheduled,
            shrinkage,
            present,
        };
        Ok((most, Some(schedule)))
    }

    /// The agents scheduled per `interval` by the shifts worked, through
    /// the end of the last shift and one entry of none after it (which
    /// holds from then on).
    fn worked_shifts(
        &self,
        shifts: &[spec::ShiftSpec],
        g: &spec::GroupSpec,
        k: &dyn Fn(&str) -> String,
        plan: &RunPlan,
    ) -> R<Vec<i64>> {
        let Some(interval) = &g.interval else {
            return Err(self.err(
                k("interval"),
                "shifts start, end and break on a grid: give its interval, like interval = \"30m\"",
            ));
        };
        let grid = Grid {
            interval_s: self.positive_duration(&k("interval"), interval)?,
            clock_start_s: plan.clock_start_s.unwrap_or(0.0),
        };
        if shifts.is_empty() {
            return Err(self.err(k("shifts"), "the list of shifts is empty: give at least one, like { start = \"08:00\", length = \"8h\", agents = 5 }"));
        }
        let worked = (shifts.iter().enumerate())
            .map(|(j, s)| {
                let key = format!("{}[{}]", k("shifts"), j + 1);
                let length = self.on_grid(&format!("{key}.length"), &s.length, &grid, 1)?;
                Ok(crate::shifts::Shift {
                    start: self.clock_on_grid(&format!("{key}.start"), &s.start, &grid)?,
                    length,
                    breaks: self.breaks(&key, s.breaks.as_deref(), length, &grid)?,
                    count: self.count(&format!("{key}.agents"), s.agents, 1, MAX_GROUP_SERVERS)?,
                })
            })
            .collect::<R<Vec<_>>>()?;
        let end = worked
            .iter()
            .map(crate::shifts::Shift::end)
            .max()
            .unwrap_or(0);
        if f64::from(end) * grid.interval_s > MAX_LENGTH_S * 2.0 {
            return Err(self.err(
                k("shifts"),
                "the shifts run longer than any run may: keep them within the measured period",
            ));
        }
        let cover = crate::shifts::coverage(&worked, end as usize + 1);
        let total = |i: usize| i64::from(cover[i]);
        if cover.iter().any(|&n| i64::from(n) > MAX_GROUP_SERVERS) {
            return Err(self.err(
                k("shifts"),
                format!("the shifts put more than {MAX_GROUP_SERVERS} agents on duty at once"),
            ));
        }
        Ok((0..cover.len()).map(total).collect())
    }

    /// The allowed shift kinds of a shift plan, on the grid of the
    /// reporting intervals.
    fn shift_types(
        &self,
        types: &[spec::ShiftTypeSpec],
        k: &dyn Fn(&str) -> String,
        plan: &RunPlan,
    ) -> R<Vec<crate::shifts::ShiftType>> {
        let Some(interval_s) = plan.interval_s else {
            return Err(self.err(k("shift_types"), "shift plans cover the reporting intervals: give interval = \"30m\" (or another length) in [simulation]"));
        };
        let grid = Grid {
            interval_s,
            clock_start_s: plan.clock_start_s.unwrap_or(0.0),
        };
        if types.is_empty() {
            return Err(self.err(k("shift_types"), "the list of shift types is empty: give at least one, like { length = \"8h\", earliest = \"08:00\", latest = \"12:00\" }"));
        }
        (types.iter().enumerate())
            .map(|(j, t)| {
                let key = format!("{}[{}]", k("shift_types"), j + 1);
                let length = self.on_grid(&format!("{key}.length"), &t.length, &grid, 1)?;
                let earliest =
                    self.clock_on_grid(&format!("{key}.earliest"), &t.earliest, &grid)?;
                let latest = self.clock_on_grid(&format!("{key}.latest"), &t.latest, &grid)?;
                if latest < earliest {
                    return Err(self.err(
                        format!("{key}.latest"),
                        format!("{} is before the earliest start {}", t.latest, t.earliest),
                    ));
                }
                let every = match &t.every {
                    None => 1,
                    Some(a) => self.on_grid(&format!("{key}.every"), a, &grid, 1)?,
                };
                Ok(crate::shifts::ShiftType {
                    length,
                    earliest,
                    latest,
                    every,
                    breaks: self.breaks(&key, t.breaks.as_deref(), length, &grid)?,
                    max_agents: (t.max_agents)
                        .map(|n| self.count(&format!("{key}.max_agents"), n, 1, MAX_GROUP_SERVERS))
                        .transpose()?,
                })
            })
            .collect()
    }

    /// A duration as a whole number (at least `min`) of grid intervals.
    fn on_grid(&self, key: &str, a: &Amount, grid: &Grid, min: u32) -> R<u32> {
        let s = self.duration(key, a)?;
        let n = (s / grid.interval_s).round();
        if (s - n * grid.interval_s).abs() > 1e-6 * grid.interval_s.max(1.0) {
            return Err(self.err(key, format!("{a} is not a whole number of {} intervals: shifts start, end and break on the interval grid", units::format_duration(grid.interval_s))));
        }
        if n < f64::from(min) || n > MAX_INTERVALS {
            return Err(self.err(
                key,
                format!(
                    "{a} must be at least {min} interval(s) of {} and at most {MAX_INTERVALS}",
                    units::format_duration(grid.interval_s)
                ),
            ));
        }
        Ok(n as u32)
    }

    /// A clock time as the grid interval it begins, counted from the
    /// start of the measured period.
    fn clock_on_grid(&self, key: &str, text: &str, grid: &Grid) -> R<u32> {
        let Some(t) = units::parse_time_of_day(text) else {
            return Err(self.err(
                key,
                format!(
                    "\"{text}\" is not a time of day: expected hours and minutes like \"08:00\""
                ),
            ));
        };
        let offset = t - grid.clock_start_s;
        if offset < 0.0 {
            return Err(self.err(key, format!("{text} is before the measured period begins ({}): start at or after it, or move clock_start in [simulation]", units::format_time_of_day(grid.clock_start_s))));
        }
        self.on_grid(key, &Amount::Number(offset), grid, 0)
            .map_err(|_| self.err(key, format!("{text} is not on the {} interval grid from {}: shifts start on interval boundaries", units::format_duration(grid.interval_s), units::format_time_of_day(grid.clock_start_s))))
    }

    /// The breaks of a shift of `length` grid intervals, each inside it.
    fn breaks(
        &self,
        key: &str,
        breaks: Option<&[spec::BreakSpec]>,
        length: u32,
        grid: &Grid,
    ) -> R<Vec<crate::shifts::Break>> {
        let mut out: Vec<crate::shifts::Break> = Vec::new();
        for (j, b) in breaks.unwrap_or_default().iter().enumerate() {
            let at = format!("{key}.breaks[{}]", j + 1);
            let after = self.on_grid(&format!("{at}.after"), &b.after, grid, 1)?;
            let long = self.on_grid(&format!("{at}.length"), &b.length, grid, 1)?;
            if after + long >= length {
                return Err(self.err(at, "the break must end before the shift does"));
            }
            if out.last().is_some_and(|p| after < p.after + p.length) {
                return Err(self.err(at, "breaks must follow one another without overlapping"));
            }
            out.push(crate::shifts::Break {
                after,
                length: long,
            });
        }
        Ok(out)
    }

    /// A shrinkage share: from 0 up to, not including, 100%.
    fn shrinkage(&self, key: &str, a: &Amount) -> R<f64> {
        let s = self.share(key, a)?;
        if s >= 1.0 {
            return Err(self.err(
                key,
                format!("{a} leaves nobody taking calls: shrinkage must be below 100%"),
            ));
        }
        Ok(s)
    }

    /// One `[[stream]]`: arrivals, holding law, route over the compiled
    /// groups, units, redials and patience.
    fn stream(
        &self,
        s: &spec::StreamSpec,
        group_index: &HashMap<&str, usize>,
        groups: &[Group],
    ) -> R<Stream> {
        let k = |field: &str| format!("stream \"{}\".{field}", s.name);
        let arrivals = self.arrivals(&k("arrivals"), &s.arrivals)?;
        let (holding, route, stages) = match &s.stages {
            Some(stages) => {
                for (field, given) in [
                    ("route", s.route.is_some()),
                    ("holding", s.holding.is_some()),
                    ("units", s.units.is_some()),
                    ("patience", s.patience.is_some()),
                ] {
                    if given {
                        return Err(self.err(
                            k(field),
                            format!("a stream with stages takes no {field} of its own: give it in each stage"),
                        ));
                    }
                }
                self.stages(&k("stages"), stages, group_index)?
            }
            None => {
                let Some(holding) = &s.holding else {
                    return Err(self.err(
                        k("holding"),
                        "missing: give a holding law, or stages for a call flow",
                    ));
                };
                let holding = self.law(&k("holding"), holding)?;
                let Some(names) = &s.route else {
                    return Err(self.err(
                        k("route"),
                        "missing: give the groups tried in order, or stages for a call flow",
                    ));
                };
                let route = self.route(&k("route"), names, group_index, &mut Vec::new())?;
                (holding, route, Vec::new())
            }
        };
        let units = match s.units {
            None => 1,
            Some(u) => self.count(&k("units"), u, 1, MAX_GROUP_SERVERS)?,
        };
        if route.iter().all(|&g| groups[g as usize].servers < units) {
            return Err(self.err(
                k("units"),
                format!("a call takes {units} servers but no group on the route has that many"),
            ));
        }
        let retry = match &s.retry {
            None => None,
            Some(r) => Some(self.retry(&k("retry"), r)?),
        };
        let patience = match &s.patience {
            None => None,
            Some(p) => Some(self.law(&k("patience"), p)?),
        };
        let answer_within_s = match &s.answer_within {
            None => None,
            Some(a) => Some(self.duration(&k("answer_within"), a)?),
        };
        let queued = route
            .iter()
            .any(|&g| groups[g as usize].queue != Queue::None);
        let preemptive = |g: u32| groups[g as usize].preemption.is_some();
        if !stages.is_empty()
            && let Some(&g) = route.iter().find(|&&g| preemptive(g))
        {
            return Err(self.err(
                k("stages"),
                format!(
                    "the group \"{}\" interrupts calls (preemption), and a call flow's stage cannot use such a group",
                    groups[g as usize].name
                ),
            ));
        }
        let priority = match s.priority {
            None => None,
            Some(_) if !queued && !route.iter().any(|&g| preemptive(g)) => {
                return Err(self.err(
                    k("priority"),
                    "priority orders waiting calls, and no group on the route has waiting places (queue > 0) or preemption",
                ));
            }
            Some(p) => Some(self.count(&k("priority"), p, 1, MAX_PRIORITY)?),
        };
        if !stages.is_empty() && s.seen_by.is_some() {
            return Err(self.err(
                k("seen_by"),
                "a stream with stages takes no seen_by: a call flow waits in one stage's queue at a time",
            ));
        }
        let seen_by = self.seen_by(s, &k, group_index, groups, &route, units, queued)?;
        Ok(Stream {
            name: s.name.clone(),
            arrivals,
            holding,
            route,
            units,
            retry,
            patience,
            answer_within_s,
            seed_key: name_key(&s.name),
            forecast: self.forecast(s, &k)?,
            priority,
            seen_by,
            stages,
        })
    }

    /// A stream's `seen_by` groups, in order of delay (ties in the file's
    /// order); rules in docs/semantics.md, "Queue classes and calls seen
    /// by several groups".
    #[allow(clippy::too_many_arguments)]
    fn seen_by(
        &self,
        s: &spec::StreamSpec,
        k: &dyn Fn(&str) -> String,
        group_index: &HashMap<&str, usize>,
        groups: &[Group],
        route: &[u32],
        units: u32,
        queued: bool,
    ) -> R<Vec<SeenBy>> {
        let Some(entries) = &s.seen_by else {
            return Ok(Vec::new());
        };
        if !queued {
            return Err(self.err(
                k("seen_by"),
                "seen_by shares a waiting call, and no group on the route has waiting places (queue > 0)",
            ));
        }
        if entries.is_empty() || entries.len() > MAX_SEEN_BY {
            return Err(self.err(
                k("seen_by"),
                format!("name from 1 to {MAX_SEEN_BY} groups that also see the waiting call"),
            ));
        }
        let mut seen: Vec<SeenBy> = Vec::with_capacity(entries.len());
        for (j, e) in entries.iter().enumerate() {
            let key = |field: &str| format!("{}[{}].{field}", k("seen_by"), j + 1);
            let name = &e.group;
            let Some(&gi) = group_index.get(name.as_str()) else {
                return Err(self.err(key("group"), format!("no group is named \"{name}\"")));
            };
            let grp = &groups[gi];
            if route.contains(&(gi as u32)) {
                return Err(self.err(key("group"), format!("the group \"{name}\" is on the route: a call waits there already; name groups off the route")));
            }
            if seen.iter().any(|x| x.group == gi as u32) {
                return Err(self.err(
                    key("group"),
                    format!("the group \"{name}\" appears twice in seen_by"),
                ));
            }
            if grp.queue == Queue::None {
                return Err(self.err(key("group"), format!("the group \"{name}\" has no waiting places (queue > 0): a waiting call can be seen only in a queue")));
            }
            if grp.preemption.is_some() {
                return Err(self.err(key("group"), format!("the group \"{name}\" interrupts calls (preemption), which happens on arrival along a route: put it on the route instead")));
            }
            if grp.servers < units {
                return Err(self.err(
                    key("group"),
                    format!(
                        "a call takes {units} servers and the group \"{name}\" has {}",
                        grp.servers
                    ),
                ));
            }
            let after_s = match &e.after {
                None => 0.0,
                Some(a) => self.duration(&key("after"), a)?,
            };
            seen.push(SeenBy {
                group: gi as u32,
                after_s,
            });
        }
        // Stable: equal delays keep the file's order.
        seen.sort_by(|a, b| a.after_s.total_cmp(&b.after_s));
        Ok(seen)
    }

    /// Every stream a group's `prefer` names reaches the group (on its
    /// route or in its `seen_by`).
    fn check_preferences(
        &self,
        spec: &ScenarioSpec,
        groups: &[Group],
        streams: &[Stream],
    ) -> R<()> {
        for (g, grp) in groups.iter().enumerate() {
            for (j, &s) in grp.prefer.iter().enumerate() {
                let st = &streams[s as usize];
                if !st.reach().any(|x| x as usize == g) {
                    return Err(self.err(
                        format!("group \"{}\".prefer[{}]", spec.groups[g].name, j + 1),
                        format!("the stream \"{}\" never reaches this group: name streams whose route or seen_by includes it", st.name),
                    ));
                }
            }
        }
        Ok(())
    }

    /// A route of group names at `key`: each group known and named once in
    /// `taken` (the groups of the flow so far, which it then holds).
    fn route(
        &self,
        key: &str,
        names: &[String],
        group_index: &HashMap<&str, usize>,
        taken: &mut Vec<u32>,
    ) -> R<Vec<u32>> {
        if names.is_empty() {
            return Err(self.err(key, "the route is empty: name at least one group"));
        }
        let mut route = Vec::with_capacity(names.len());
        for (j, name) in names.iter().enumerate() {
            let at = format!("{key}[{}]", j + 1);
            let gi = *group_index
                .get(name.as_str())
                .ok_or_else(|| self.err(&at, format!("no group is named \"{name}\"")))?;
            if route.contains(&(gi as u32)) {
                return Err(self.err(
                    at,
                    format!("the group \"{name}\" appears twice in the route"),
                ));
            }
            if taken.contains(&(gi as u32)) {
                return Err(self.err(
                    at,
                    format!("the group \"{name}\" already serves an earlier stage: a group serves one stage of a flow"),
                ));
            }
            route.push(gi as u32);
        }
        taken.extend(&route);
        Ok(route)
    }

    /// A stream's stages (rules in docs/semantics.md, "Call flows with
    /// stages"): the stages, the route of every group of the flow, and the
    /// fixed law at the mean total holding that stands for the flow's
    /// holding where only its mean is read.
    fn stages(
        &self,
        key: &str,
        specs: &[spec::StageSpec],
        group_index: &HashMap<&str, usize>,
    ) -> R<(Law, Vec<u32>, Vec<Stage>)> {
        if specs.is_empty() {
            return Err(self.err(
                key,
                "no stages: give at least one, or a route and a holding",
            ));
        }
        if specs.len() > MAX_STAGES {
            return Err(self.err(
                key,
                format!("{} stages: a flow has at most {MAX_STAGES}", specs.len()),
            ));
        }
        let mut taken = Vec::new();
        let mut stages: Vec<Stage> = Vec::with_capacity(specs.len());
        for (j, st) in specs.iter().enumerate() {
            let at = format!("{key}[{}]", j + 1);
            let f = |field: &str| format!("{at}.{field}");
            if st.name.is_empty() {
                return Err(self.err(f("name"), "the stage needs a name"));
            }
            if stages.iter().any(|p| p.name == st.name) {
                return Err(self.err(f("name"), format!("two stages are named \"{}\"", st.name)));
            }
            let route = self.route(&f("route"), &st.route, group_index, &mut taken)?;
            let holding = match &st.holding {
                None => None,
                Some(l) => Some(self.law(&f("holding"), l)?),
            };
            let patience = match &st.patience {
                None => None,
                Some(l) => Some(self.law(&f("patience"), l)?),
            };
            let hold = match st.hold.as_deref() {
                None | Some("stage") => Hold::Stage,
                Some("to-end") => Hold::ToEnd,
                Some(other) => {
                    return Err(self.err(
                        f("hold"),
                        format!("\"{other}\": expected \"stage\" (until the stage ends) or \"to-end\" (until the call ends)"),
                    ));
                }
            };
            if holding.is_none() && hold == Hold::Stage {
                return Err(self.err(
                    f("holding"),
                    "missing: a stage released when it ends needs a holding law (a stage without one must hold its server to the end: hold = \"to-end\")",
                ));
            }
            let last = j + 1 == specs.len();
            let finish = match &st.finish {
                None => 0.0,
                Some(_) if last => {
                    return Err(self.err(
                        f("finish"),
                        "every call ends after the last stage: finish belongs to an earlier stage",
                    ));
                }
                Some(a) => self.share(&f("finish"), a)?,
            };
            stages.push(Stage {
                name: st.name.clone(),
                route,
                holding,
                patience,
                finish,
                hold,
            });
        }
        let holding = Law::deterministic(model::flow_holding_mean(&stages)).map_err(|_| {
            self.err(
                key,
                "the flow takes no time: give at least one stage a holding law with a mean above zero",
            )
        })?;
        Ok((holding, taken, stages))
    }

    /// A stream's forecast uncertainty (`uncertainty`, `uncertainty_law`,
    /// `uncertainty_shared`; rules in docs/semantics.md, "Forecast
    /// uncertainty"). `k` makes the key path of a field.
    fn forecast(&self, s: &spec::StreamSpec, k: &dyn Fn(&str) -> String) -> R<Option<Forecast>> {
        let Some(a) = &s.uncertainty else {
            for (field, given) in [
                ("uncertainty_law", s.uncertainty_law.is_some()),
                ("uncertainty_shared", s.uncertainty_shared.is_some()),
            ] {
                if given {
                    return Err(self.err(
                        k(field),
                        format!("{field} needs uncertainty, the cv of the day's rate factor, like uncertainty = \"10%\""),
                    ));
                }
            }
            return Ok(None);
        };
        let cv = self.share(&k("uncertainty"), a).map_err(|e| match e {
            ScenarioError::Invalid { message, .. } => self.err(
                k("uncertainty"),
                format!("{message} (the cv of the day's rate factor, from 0% to 100%)"),
            ),
            other => other,
        })?;
        if !matches!(s.arrivals.law.as_str(), "poisson") {
            return Err(self.err(
                k("uncertainty"),
                format!(
                    "uncertainty applies to poisson arrivals (a rate or a peak profile), not to {} arrivals: give the forecast's spread on a stream with a rate",
                    s.arrivals.law
                ),
            ));
        }
        if cv == 0.0 {
            // A known rate: the same model as without the key.
            return Ok(None);
        }
        let law = match s.uncertainty_law.as_deref() {
            None | Some("gamma") => Law::gamma(1.0, cv),
            Some("lognormal") => Law::lognormal(1.0, cv),
            Some(other) => {
                return Err(self.err(
                    k("uncertainty_law"),
                    format!("\"{other}\" is not a law of the rate factor: expected \"gamma\" or \"lognormal\""),
                ));
            }
        }
        .map_err(|e| self.err(k("uncertainty"), e.to_string()))?;
        let (shared, key) = match &s.uncertainty_shared {
            None => (None, name_key(&s.name)),
            Some(label) => {
                check_name(label).map_err(|m| self.err(k("uncertainty_shared"), m))?;
                (Some(label.clone()), forecast_key(label))
            }
        };
        Ok(Some(Forecast { law, shared, key }))
    }

    /// Streams sharing a factor (`uncertainty_shared`) must give it the
    /// same cv and law: one factor has one law.
    fn check_shared_forecasts(&self, streams: &[Stream]) -> R<()> {
        let mut first: HashMap<&str, (&Stream, &Forecast)> = HashMap::new();
        for st in streams {
            let Some(f) = &st.forecast else { continue };
            let Some(label) = f.shared.as_deref() else {
                continue;
            };
            match first.get(label) {
                None => {
                    first.insert(label, (st, f));
                }
                Some((other, g)) => {
                    if g.law.name() != f.law.name() || g.cv() != f.cv() {
                        return Err(self.err(
                            format!("stream \"{}\".uncertainty_shared", st.name),
                            format!(
                                "the factor \"{label}\" is {} of cv {} for stream \"{}\" but {} of cv {} here: streams sharing a factor give it the same uncertainty and uncertainty_law",
                                g.law.name(),
                                units::format_share(g.cv()),
                                other.name,
                                f.law.name(),
                                units::format_share(f.cv())
                            ),
                        ));
                    }
                }
            }
        }
        Ok(())
    }

    /// A stream's `retry` table (`key` is its path).
    fn retry(&self, key: &str, r: &spec::RetrySpec) -> R<Retry> {
        let k = |field: &str| format!("{key}.{field}");
        let chances = match &r.chance {
            ChanceSpec::One(a) => vec![self.share(&k("chance"), a)?],
            ChanceSpec::Each(list) => {
                if list.is_empty() {
                    return Err(self.err(k("chance"), "the list of chances is empty"));
                }
                list.iter()
                    .enumerate()
                    .map(|(j, a)| self.share(&format!("{}[{}]", k("chance"), j + 1), a))
                    .collect::<R<Vec<f64>>>()?
            }
        };
        Ok(Retry {
            chances,
            delay: self.law(&k("delay"), &r.delay)?,
            max_attempts: self.count(&k("max_attempts"), r.max_attempts, 1, 1000)?,
        })
    }

    fn plan(&self, s: &spec::SimulationSpec) -> R<RunPlan> {
        // Without `warmup` the compiled model gets its default from the laws
        // (`Model::warmup_needed_s`), set once the streams are known.
        let warmup_s = match &s.warmup {
            None => 0.0,
            Some(a) => self.duration("simulation.warmup", a)?,
        };
        let start = match s.start.as_deref() {
            None | Some("steady") => Start::Steady,
            Some("empty") => Start::Empty,
            Some(other) => {
                return Err(self.err(
                    "simulation.start",
                    format!("\"{other}\" is not a start: expected \"steady\" (calls in progress at time 0, the default) or \"empty\" (every replication opens with no calls)"),
                ));
            }
        };
        let length_s = self.positive_duration("simulation.length", &s.length)?;
        let replications = match (s.replications, &s.precision) {
            (Some(_), Some(_)) => {
                return Err(self.err(
                    "simulation",
                    "give either replications or precision, not both",
                ));
            }
            (Some(n), None) => {
                if s.max_replications.is_some() {
                    return Err(self.err("simulation.max_replications", "max_replications goes with precision, not with a fixed number of replications"));
                }
                Replications::Fixed(self.count(
                    "simulation.replications",
                    n,
                    2,
                    MAX_REPLICATIONS,
                )?)
            }
            (None, Some(p)) => {
                let target = self.share("simulation.precision", p)?;
                if !(target > 0.0 && target < 1.0) {
                    return Err(self.err("simulation.precision", format!("{p}: expected a relative half-width above 0% and below 100%, like \"2%\"")));
                }
                let max = match s.max_replications {
                    None => DEFAULT_MAX_REPLICATIONS,
                    Some(m) => self.count("simulation.max_replications", m, 2, MAX_REPLICATIONS)?,
                };
                Replications::Precision { target, max }
            }
            (None, None) => Replications::Fixed(DEFAULT_REPLICATIONS),
        };
        let seed = match s.seed {
            None => 1,
            Some(v) if v >= 0 => v as u64,
            Some(v) => {
                return Err(self.err(
                    "simulation.seed",
                    format!("{v}: the seed must be a whole number >= 0"),
                ));
            }
        };
        let interval_s = match &s.interval {
            None => None,
            Some(a) => {
                let i = self.positive_duration("simulation.interval", a)?;
                if i > length_s {
                    return Err(self.err(
                        "simulation.interval",
                        format!("{a} is longer than the measured length"),
                    ));
                }
                if length_s / i > MAX_INTERVALS {
                    return Err(self.err("simulation.interval", format!("{a} makes more than {MAX_INTERVALS} intervals: choose a longer interval")));
                }
                Some(i)
            }
        };
        let clock_start_s = match &s.clock_start {
            None => None,
            Some(t) => Some(crate::units::parse_time_of_day(t).ok_or_else(|| {
                self.err(
                    "simulation.clock_start",
                    format!("\"{t}\" is not a time of day: expected hours and minutes like \"08:00\" or \"13:30\""),
                )
            })?),
        };
        Ok(RunPlan {
            warmup_s,
            warmup_given: s.warmup.is_some(),
            start,
            length_s,
            replications,
            seed,
            interval_s,
            clock_start_s,
        })
    }

    fn arrivals(&self, key: &str, a: &ArrivalSpec) -> R<Arrivals> {
        let unexpected = |field: &str, present: bool| -> R<()> {
            if present {
                Err(self.err(
                    format!("{key}.{field}"),
                    format!("{field} is not a parameter of {} arrivals", a.law),
                ))
            } else {
                Ok(())
            }
        };
        match a.law.as_str() {
            "poisson" => {
                unexpected("between", a.between.is_some())?;
                unexpected("count", a.count.is_some())?;
                unexpected("idle", a.idle.is_some())?;
                match (&a.rate, &a.rates) {
                    (Some(r), None) => {
                        unexpected("interval", a.interval.is_some())?;
                        Ok(Arrivals::Poisson {
                            rate: self.rate(&format!("{key}.rate"), r, false)?,
                        })
                    }
                    (None, Some(list)) => {
                        let interval_s = match &a.interval {
                            Some(i) => self.positive_duration(&format!("{key}.interval"), i)?,
                            None => return Err(self.err(format!("{key}.interval"), "a peak profile (rates = [...]) needs the interval each rate covers, like interval = \"15m\"")),
                        };
                        if list.is_empty() {
                            return Err(self.err(format!("{key}.rates"), "the profile has no rates"));
                        }
                        let rates = list
                            .iter()
                            .enumerate()
                            .map(|(j, r)| self.rate(&format!("{key}.rates[{}]", j + 1), r, true))
                            .collect::<R<Vec<f64>>>()?;
                        if rates.iter().all(|&r| r == 0.0) {
                            return Err(self.err(format!("{key}.rates"), "every rate in the profile is zero"));
                        }
                        Ok(Arrivals::Profile { interval_s, rates })
                    }
                    (Some(_), Some(_)) => Err(self.err(key, "give either rate (constant) or rates (a peak profile), not both")),
                    (None, None) => Err(self.err(key, "poisson arrivals need a rate, like rate = \"600/h\", or a profile, rates = [...] with interval")),
                }
            }
            "renewal" => {
                for (f, p) in [("rate", a.rate.is_some()), ("rates", a.rates.is_some()), ("interval", a.interval.is_some()), ("count", a.count.is_some()), ("idle", a.idle.is_some())] {
                    unexpected(f, p)?;
                }
                let between = a
                    .between
                    .as_ref()
                    .ok_or_else(|| self.err(format!("{key}.between"), "renewal arrivals need the law of the time between arrivals, like between = { law = \"gamma\", mean = \"6s\", cv = 0.5 }"))?;
                Ok(Arrivals::Renewal {
                    between: self.law(&format!("{key}.between"), between)?,
                })
            }
            "sources" => {
                for (f, p) in [("rate", a.rate.is_some()), ("rates", a.rates.is_some()), ("interval", a.interval.is_some()), ("between", a.between.is_some())] {
                    unexpected(f, p)?;
                }
                let count = match a.count {
                    Some(c) => self.count(&format!("{key}.count"), c, 1, MAX_COUNT)?,
                    None => return Err(self.err(format!("{key}.count"), "finite sources need a count, like count = 60")),
                };
                let idle = a
                    .idle
                    .as_ref()
                    .ok_or_else(|| self.err(format!("{key}.idle"), "finite sources need the law of a source's idle time, like idle = { law = \"exponential\", mean = \"20m\" }"))?;
                Ok(Arrivals::Sources {
                    count,
                    idle: self.law(&format!("{key}.idle"), idle)?,
                })
            }
            other => Err(self.err(format!("{key}.law"), format!("\"{other}\" is not an arrival law: expected \"poisson\", \"renewal\" or \"sources\""))),
        }
    }

    /// A law's table: the named law, only its own keys, then its
    /// parameters built with this file's rules (`LawSite`).
    fn law(&self, key: &str, l: &LawSpec) -> R<Law> {
        let name = l.law.as_str();
        let Some(allowed) = LawParams::keys(name) else {
            return Err(self.err(
                format!("{key}.law"),
                format!(
                    "\"{name}\" is not a law: expected one of {}",
                    dist::LAW_NAMES.join(", ")
                ),
            ));
        };
        for field in dist::all_law_keys() {
            if l.params.contains_key(*field) && !allowed.contains(field) {
                return Err(self.err(
                    format!("{key}.{field}"),
                    format!(
                        "{field} is not a parameter of the {name} law (it takes {})",
                        allowed.join(", ")
                    ),
                ));
            }
        }
        let params = LawParams::deserialize_named(name, toml::Value::Table(l.params.clone()))
            .unwrap_or_else(|| unreachable!("the law's name was found above"))
            .map_err(|e| self.err(key, one_line(e.message())))?;
        params.build(&LawSite {
            compiler: self,
            key,
        })
    }

    /// The measured values of an empirical law's data file: resolved against
    /// the scenario's folder, never the scenario itself, inside `--data-dir`
    /// when one is given, and remembered as an input.
    fn data_values(&self, key: &str, file: &str, column: Option<&str>, scale: f64) -> R<Vec<f64>> {
        let path = self.base.join(file);
        if is_same_file(&path, Path::new(&self.file)) {
            return Err(self.err(
                key,
                format!(
                    "\"{file}\" is this scenario file itself: name a CSV file of measured values"
                ),
            ));
        }
        if let Some(dir) = &self.data_dir {
            let inside = match (path.canonicalize(), dir.canonicalize()) {
                (Ok(p), Ok(d)) => p.starts_with(d),
                _ => false,
            };
            if !inside {
                return Err(self.err(
                    key,
                    format!(
                        "\"{file}\" is not a readable file inside the data folder {} (--data-dir)",
                        dir.display()
                    ),
                ));
            }
        }
        self.data_files.borrow_mut().push(path.clone());
        dist::empirical::read_column(&path, column, scale).map_err(|e| self.err(key, e.to_string()))
    }
}

/// One law's table in the file: the [`dist::LawContext`] its parameters
/// are built in, naming `key` (e.g. `stream "office".holding`) in errors.
struct LawSite<'a> {
    compiler: &'a Compiler,
    key: &'a str,
}

impl LawSite<'_> {
    fn at(&self, field: &str) -> String {
        format!("{}.{field}", self.key)
    }
}

impl dist::LawContext for LawSite<'_> {
    type Error = ScenarioError;

    fn invalid(&self, field: Option<&str>, message: String) -> ScenarioError {
        match field {
            None => self.compiler.err(self.key, message),
            Some(f) => self.compiler.err(self.at(f), message),
        }
    }

    fn positive_duration(&self, field: &str, value: &Amount) -> R<f64> {
        self.compiler.positive_duration(&self.at(field), value)
    }

    fn count(&self, field: &str, value: i64, min: i64, max: i64) -> R<u32> {
        self.compiler.count(&self.at(field), value, min, max)
    }

    fn data_values(
        &self,
        field: &str,
        file: &str,
        column: Option<&str>,
        scale: f64,
    ) -> R<Vec<f64>> {
        self.compiler
            .data_values(&self.at(field), file, column, scale)
    }
}

/// Whether both paths name one existing file (false when either is missing).
fn is_same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}

fn check_name(name: &str) -> Result<(), String> {
    if name.trim().is_empty() {
        return Err("the name is empty".into());
    }
    if name.len() > 200 || name.chars().any(char::is_control) {
        return Err(format!(
            "{name:?} is not a usable name: keep it short, with no control characters"
        ));
    }
    Ok(())
}
