//! The scenario file as written: serde types that mirror the TOML, unknown keys
//! rejected. Nothing here is checked beyond its type; `compile` turns these into
//! a validated `Model`.

pub use crate::units::Amount;
use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use std::fmt;

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

/// `servers = 12` or `servers = [12, 14, 18]` (one per interval).
#[derive(Debug, Clone, PartialEq)]
pub enum ServersSpec {
    /// The same number all the time.
    One(i64),
    /// One number per interval; the last holds after the list ends.
    Each(Vec<i64>),
}

impl<'de> Deserialize<'de> for ServersSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = ServersSpec;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a whole number of servers or a list of them, one per interval")
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<ServersSpec, E> {
                Ok(ServersSpec::One(v))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<ServersSpec, E> {
                Ok(ServersSpec::One(i64::try_from(v).unwrap_or(i64::MAX)))
            }
            fn visit_seq<A: de::SeqAccess<'de>>(self, mut seq: A) -> Result<ServersSpec, A::Error> {
                let mut list = Vec::new();
                while let Some(Whole(n)) = seq.next_element::<Whole>()? {
                    list.push(n);
                }
                Ok(ServersSpec::Each(list))
            }
        }
        d.deserialize_any(V)
    }
}

/// One entry of a list of servers: a whole number, with a message that
/// says so.
struct Whole(i64);

impl<'de> Deserialize<'de> for Whole {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = Whole;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a whole number of servers")
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Whole, E> {
                Ok(Whole(v))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Whole, E> {
                Ok(Whole(i64::try_from(v).unwrap_or(i64::MAX)))
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
    /// Prices of servers, lost calls and waiting (`size --goal cost`).
    pub prices: Option<PricesSpec>,
}

/// `[prices]`: each kind of price is one number for every group (or
/// stream), or a table by name.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PricesSpec {
    /// Per server (agent) and hour present, by group.
    pub server_hour: Option<PriceMap>,
    /// Servers come in packs of this many, by group (sizes round up).
    pub module: Option<PriceMap>,
    /// Per call never served, by stream.
    pub lost_call: Option<PriceMap>,
    /// Per call abandoned while waiting, by stream (on top of lost_call).
    pub abandoned_call: Option<PriceMap>,
    /// Per minute that answered callers waited, by stream.
    pub wait_minute: Option<PriceMap>,
}

/// One number for all, or one per name.
#[derive(Debug, Clone, Deserialize)]
#[serde(untagged)]
pub enum PriceMap {
    /// The same for every group or stream.
    All(f64),
    /// By name.
    By(std::collections::BTreeMap<String, f64>),
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
    /// The clock time at which the measured period begins ("08:00"), for
    /// labels only.
    pub clock_start: Option<String>,
}

/// `[[group]]`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GroupSpec {
    /// Unique name.
    pub name: String,
    /// Number of servers (circuits, ports, agents), or one number per
    /// `interval` (a schedule); absent when `shifts` say it.
    pub servers: Option<ServersSpec>,
    /// The shifts worked: the agents scheduled over time, instead of
    /// `servers`.
    pub shifts: Option<Vec<ShiftSpec>>,
    /// The kinds of shift a shift plan may use (`size --per-interval`).
    pub shift_types: Option<Vec<ShiftTypeSpec>>,
    /// The interval each entry of a `servers` or `shrinkage` list covers
    /// (the grid of `shifts`).
    pub interval: Option<Amount>,
    /// Share of the scheduled servers not taking calls, one or per interval.
    pub shrinkage: Option<ChanceSpec>,
    /// Waiting places; absent or 0: blocked calls are cleared.
    pub queue: Option<QueueSpec>,
    /// A waiting call may move on along its route after this wait.
    pub overflow_after: Option<Amount>,
    /// Trunk reservation.
    pub reserve: Option<ReserveSpec>,
    /// The group's order of preference over the streams whose waiting
    /// calls it takes, most preferred first.
    pub prefer: Option<Vec<String>>,
    /// Pre-emptive priority: an arriving call of higher priority that finds
    /// every server busy interrupts a call of lower priority, which is then
    /// "resume"d, "restart"ed or "lose"s (lost).
    pub preemption: Option<String>,
}

/// One shift worked: `{ start = "08:00", length = "8h", agents = 6,
/// breaks = [{ after = "4h", length = "30m" }] }`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ShiftSpec {
    /// Clock time the shift starts.
    pub start: String,
    /// Length, breaks included.
    pub length: Amount,
    /// Agents working it.
    pub agents: i64,
    /// Breaks inside it.
    pub breaks: Option<Vec<BreakSpec>>,
}

/// A break inside a shift.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BreakSpec {
    /// Time from the shift's start to the break's.
    pub after: Amount,
    /// Length of the break.
    pub length: Amount,
}

/// A kind of shift a plan may use: `{ length = "8h", earliest = "08:00",
/// latest = "12:00", every = "30m", breaks = [...] }`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ShiftTypeSpec {
    /// Length, breaks included.
    pub length: Amount,
    /// Earliest clock time a shift of this kind may start.
    pub earliest: String,
    /// Latest clock time it may start.
    pub latest: String,
    /// Time between allowed starts (default: the reporting interval).
    pub every: Option<Amount>,
    /// The most agents all shifts of this kind may have together.
    pub max_agents: Option<i64>,
    /// Breaks inside it.
    pub breaks: Option<Vec<BreakSpec>>,
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
    /// Holding-time law (absent when `stages` give the flow).
    pub holding: Option<LawSpec>,
    /// Groups tried in order (absent when `stages` give the flow).
    pub route: Option<Vec<String>>,
    /// A call flow: the stages each call passes through, in order, instead
    /// of one `route` and `holding`.
    pub stages: Option<Vec<StageSpec>>,
    /// Servers one call occupies.
    pub units: Option<i64>,
    /// Redial behaviour after a busy signal or an abandoned wait.
    pub retry: Option<RetrySpec>,
    /// Patience law of a waiting caller.
    pub patience: Option<LawSpec>,
    /// Target answer time for `service_level`.
    pub answer_within: Option<Amount>,
    /// Forecast uncertainty: the cv of the day's random rate factor (mean
    /// 1, one draw per replication), like "10%".
    pub uncertainty: Option<Amount>,
    /// The law of that factor: "gamma" (the default) or "lognormal".
    pub uncertainty_law: Option<String>,
    /// Streams naming the same label share one factor per day (one cause,
    /// like the weather, moves them together); without it each stream
    /// draws its own.
    pub uncertainty_shared: Option<String>,
    /// Priority of the stream's waiting calls: a lower number is answered
    /// first (1 before 2); without it, after every stream that has one.
    pub priority: Option<i64>,
    /// Groups that also see the stream's waiting calls, each after a delay.
    pub seen_by: Option<Vec<SeenBySpec>>,
}

/// `seen_by = [{ group = "bilingual", after = "20s" }]`: from `after`
/// (default 0) after the call started waiting, the group may take it.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SeenBySpec {
    /// The group's name.
    pub group: String,
    /// Delay from the start of the wait; absent: at once.
    pub after: Option<Amount>,
}

/// One stage of a call flow: `{ name = "menu", route = ["ports"], holding
/// = { law = "deterministic", mean = "40s" }, finish = "30%" }`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StageSpec {
    /// Name, unique within the stream.
    pub name: String,
    /// Groups tried in order at this stage.
    pub route: Vec<String>,
    /// Time spent in the stage once its server is seized (absent: none,
    /// for a stage held to the end that only seizes, like a trunk).
    pub holding: Option<LawSpec>,
    /// Patience of a caller waiting at this stage.
    pub patience: Option<LawSpec>,
    /// Share of callers served at this stage whose call ends after it
    /// (finished in the menu).
    pub finish: Option<Amount>,
    /// How long the stage's server is held: "stage" (the default: until the
    /// stage ends) or "to-end" (until the call ends, like a trunk).
    pub hold: Option<String>,
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

/// A law as written: `{ law = "lognormal", mean = "3m", cv = 1.1 }`: the
/// law's name and its other keys.
///
/// Read here: a key that no law takes is refused at its line, and each
/// value is checked against the type its key has in the laws' parameter
/// structs (`dist::LawParams`), so that a wrong type is reported at the
/// value. Which keys the named law takes, and their values, are checked
/// when compiling, with messages that name the law.
#[derive(Debug, Clone)]
pub struct LawSpec {
    /// The law's name.
    pub law: String,
    /// The other keys, each of a type some law takes for it.
    pub params: toml::Table,
}

impl<'de> Deserialize<'de> for LawSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = LawSpec;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("struct LawSpec")
            }
            fn visit_map<A: de::MapAccess<'de>>(self, mut map: A) -> Result<LawSpec, A::Error> {
                let mut law = None;
                let mut params = toml::Table::new();
                while let Some(key) = map.next_key_seed(LawKey)? {
                    if key == "law" {
                        law = Some(map.next_value::<String>()?);
                    } else {
                        let value = map.next_value_seed(LawValue(&key))?;
                        params.insert(key, value);
                    }
                }
                let law = law.ok_or_else(|| de::Error::missing_field("law"))?;
                Ok(LawSpec { law, params })
            }
        }
        d.deserialize_map(V)
    }
}

/// A key of a law's table: `law` or a key some law takes.
struct LawKey;

impl<'de> de::DeserializeSeed<'de> for LawKey {
    type Value = String;
    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<String, D::Error> {
        let key = String::deserialize(d)?;
        let known = crate::dist::all_law_keys();
        if known.contains(&key.as_str()) {
            Ok(key)
        } else {
            Err(de::Error::unknown_field(&key, known))
        }
    }
}

/// A parameter's value, of the type the first law that takes its key
/// gives it (the laws agree: `tests` below checks it).
struct LawValue<'k>(&'k str);

impl<'de> de::DeserializeSeed<'de> for LawValue<'_> {
    type Value = toml::Value;
    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<toml::Value, D::Error> {
        let value = toml::Value::deserialize(d)?;
        match type_check(self.0, &value) {
            None | Some(Ok(())) => Ok(value),
            Some(Err(message)) => Err(de::Error::custom(message)),
        }
    }
}

/// Whether `value` has the type `key` has in the first law that takes it
/// (`None`: no law takes it).
fn type_check(key: &str, value: &toml::Value) -> Option<Result<(), String>> {
    use crate::dist::{LAW_NAMES, LawParams};
    let name = LAW_NAMES
        .iter()
        .find(|n| LawParams::keys(n).is_some_and(|k| k.contains(&key)))?;
    let mut one = toml::Table::new();
    one.insert(key.to_string(), value.clone());
    let checked = LawParams::deserialize_named(name, toml::Value::Table(one))?;
    Some(checked.map(drop).map_err(|e| e.message().to_string()))
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

#[cfg(test)]
mod tests {
    use crate::dist::{LAW_NAMES, LawParams};

    #[test]
    fn every_law_gives_a_shared_key_the_same_type() {
        // Samples of each type a parameter may have: one must be accepted
        // by exactly the same laws that take the key.
        let samples = [
            toml::Value::Float(1.5),
            toml::Value::Integer(3),
            toml::Value::String("3m".into()),
            toml::Value::Boolean(true),
        ];
        for key in crate::dist::all_law_keys().iter().skip(1) {
            for v in &samples {
                let verdicts: Vec<bool> = LAW_NAMES
                    .iter()
                    .filter(|n| LawParams::keys(n).is_some_and(|k| k.contains(key)))
                    .map(|n| {
                        let mut one = toml::Table::new();
                        one.insert(key.to_string(), v.clone());
                        LawParams::deserialize_named(n, toml::Value::Table(one))
                            .is_some_and(|r| r.is_ok())
                    })
                    .collect();
                assert!(
                    verdicts.windows(2).all(|w| w[0] == w[1]),
                    "laws disagree on the type of {key} for {v}"
                );
            }
        }
    }
}
