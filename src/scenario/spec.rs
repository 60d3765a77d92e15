//! The scenario file as written: serde types that mirror the TOML, unknown keys
//! rejected. Nothing here is checked beyond its type; `compile` turns these into
//! a validated `Model`.

use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use std::fmt;

/// A number or a text with a unit, as the user wrote it ("3m" or 180).
#[derive(Debug, Clone, PartialEq)]
pub enum Amount {
    /// A bare number.
    Number(f64),
    /// A text such as "3m", "420/h" or "1%".
    Text(String),
}

impl fmt::Display for Amount {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            // Scientific notation for huge or tiny numbers, so that 1e300
            // does not print as 301 digits.
            Amount::Number(x) if *x != 0.0 && !(1e-6..1e15).contains(&x.abs()) => {
                write!(f, "{x:e}")
            }
            Amount::Number(x) => write!(f, "{x}"),
            Amount::Text(t) => write!(f, "\"{t}\""),
        }
    }
}

impl<'de> Deserialize<'de> for Amount {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = Amount;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a number or a text with a unit such as \"3m\", \"420/h\" or \"1%\"")
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Amount, E> {
                Ok(Amount::Number(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Amount, E> {
                Ok(Amount::Number(v as f64))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Amount, E> {
                Ok(Amount::Number(v))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Amount, E> {
                Ok(Amount::Text(v.to_string()))
            }
        }
        d.deserialize_any(V)
    }
}

/// `queue = 0`, `queue = 12` or `queue = "unlimited"`.
#[derive(Debug, Clone, PartialEq)]
pub enum QueueSpec {
    /// A fixed number of waiting places (0: a loss system).
    Places(i64),
    /// The text the user wrote; only "unlimited" is valid.
    Text(String),
}

impl<'de> Deserialize<'de> for QueueSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = QueueSpec;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a whole number of waiting places or \"unlimited\"")
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<QueueSpec, E> {
                Ok(QueueSpec::Places(v))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<QueueSpec, E> {
                Ok(QueueSpec::Places(i64::try_from(v).unwrap_or(i64::MAX)))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<QueueSpec, E> {
                Ok(QueueSpec::Text(v.to_string()))
            }
        }
        d.deserialize_any(V)
    }
}

/// One share or a list of shares (`chance = "70%"` or `chance = ["80%", "60%"]`).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(untagged)]
pub enum ChanceSpec {
    /// The same chance for every redial.
    One(Amount),
    /// The chance for the first, second, ... redial; the last repeats.
    Each(Vec<Amount>),
}

/// The whole file.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScenarioSpec {
    /// Optional one-line title shown in reports.
    pub title: Option<String>,
    /// How to run it.
    pub simulation: SimulationSpec,
    /// Circuit or agent groups.
    #[serde(default, rename = "group")]
    pub groups: Vec<GroupSpec>,
    /// Traffic streams.
    #[serde(default, rename = "stream")]
    pub streams: Vec<StreamSpec>,
}

/// `[simulation]`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SimulationSpec {
    /// Discarded at the start of each replication.
    pub warmup: Option<Amount>,
    /// Measured period per replication.
    pub length: Amount,
    /// Fixed number of replications.
    pub replications: Option<i64>,
    /// Relative 95% half-width to reach instead of a fixed number.
    pub precision: Option<Amount>,
    /// Cap on replications when `precision` is given.
    pub max_replications: Option<i64>,
    /// Master seed.
    pub seed: Option<i64>,
    /// Report figures per interval of this length too.
    pub interval: Option<Amount>,
    /// `"steady"` (calls in progress seated at time 0, the default) or `"empty"`.
    pub start: Option<String>,
}

/// `[[group]]`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GroupSpec {
    /// Unique name.
    pub name: String,
    /// Number of servers (circuits, ports, agents).
    pub servers: i64,
    /// Waiting places; absent or 0: blocked calls are cleared.
    pub queue: Option<QueueSpec>,
    /// A waiting call may move on along its route after this wait.
    pub overflow_after: Option<Amount>,
    /// Trunk reservation.
    pub reserve: Option<ReserveSpec>,
}

/// `reserve = { servers = R, for = [streams] }`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReserveSpec {
    /// The last R free servers are kept for the named streams.
    pub servers: i64,
    /// Streams allowed to take the reserved servers.
    #[serde(rename = "for")]
    pub for_streams: Vec<String>,
}

/// `[[stream]]`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StreamSpec {
    /// Unique name.
    pub name: String,
    /// How calls arrive.
    pub arrivals: ArrivalSpec,
    /// Holding-time law.
    pub holding: LawSpec,
    /// Groups tried in order.
    pub route: Vec<String>,
    /// Servers one call occupies.
    pub units: Option<i64>,
    /// Redial behaviour after a busy signal or an abandoned wait.
    pub retry: Option<RetrySpec>,
    /// Patience law of a waiting caller.
    pub patience: Option<LawSpec>,
    /// Target answer time for `service_level`.
    pub answer_within: Option<Amount>,
}

/// `arrivals = { law = ..., ... }`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ArrivalSpec {
    /// "poisson", "renewal" or "sources".
    pub law: String,
    /// Poisson: the constant rate.
    pub rate: Option<Amount>,
    /// Poisson peak profile: length of each rate's interval.
    pub interval: Option<Amount>,
    /// Poisson peak profile: one rate per interval.
    pub rates: Option<Vec<Amount>>,
    /// Renewal: the law of the time between arrivals.
    pub between: Option<LawSpec>,
    /// Finite sources: how many.
    pub count: Option<i64>,
    /// Finite sources: the law of a source's idle time.
    pub idle: Option<LawSpec>,
}

/// A law as written: `{ law = "lognormal", mean = "3m", cv = 1.1 }`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LawSpec {
    /// The law's name.
    pub law: String,
    /// Mean (a duration).
    pub mean: Option<Amount>,
    /// Coefficient of variation.
    pub cv: Option<f64>,
    /// Shape parameter (gamma, weibull).
    pub shape: Option<f64>,
    /// Number of phases (erlang).
    pub k: Option<i64>,
    /// Empirical: CSV file relative to the scenario file.
    pub file: Option<String>,
    /// Empirical: the column to read.
    pub column: Option<String>,
    /// Empirical: factor applied to every value (e.g. 60 for minutes).
    pub scale: Option<f64>,
}

/// `retry = { chance, delay, max_attempts }`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RetrySpec {
    /// Chance that a blocked caller redials (per redial, last repeats).
    pub chance: ChanceSpec,
    /// Law of the delay before a redial.
    pub delay: LawSpec,
    /// Attempts in all, the first included.
    pub max_attempts: i64,
}
