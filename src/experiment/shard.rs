//! Shards: a run split into slices of replications that any batch scheduler
//! can run as separate processes, and an exact merge. A part file holds the
//! raw per-replication figure values of its slice (exact floats), with the
//! model's fingerprint, the program version and the part format's version;
//! merged in replication order they give the unsharded result bit for bit.

use super::{Accumulated, ExperimentError, Outcome, RunOptions, Runner, outcome_of};
use crate::scenario::Model;
use crate::stats::{self, Obs, Scope};
use serde::{Deserialize, Serialize};
use std::time::Instant;
use thiserror::Error;

/// Version of the part format; parts of another version are refused.
pub const PART_FORMAT_VERSION: u32 = 2;
/// The `format` field of every part.
pub const PART_FORMAT: &str = "busyhour-part";

/// A shard specification that cannot be used, or parts that do not merge.
#[derive(Debug, Error, PartialEq)]
pub enum ShardError {
    /// Not `I/N` with 1 <= I <= N.
    #[error("--shard '{0}': expected I/N with 1 <= I <= N, like 3/8")]
    Spec(String),
    /// More shards than replications.
    #[error(
        "--shard {index}/{count}: the run has only {replications} replications; use at most that many shards"
    )]
    TooMany {
        /// I.
        index: u32,
        /// N.
        count: u32,
        /// Replications in the run.
        replications: u64,
    },
    /// A part from another program or part-format version.
    #[error(
        "{file}: part format {found} from busyhour {program}; this is busyhour {ours} reading part format {PART_FORMAT_VERSION}: rerun that shard with this version"
    )]
    Version {
        /// The part file.
        file: String,
        /// Its format version.
        found: u32,
        /// Its program version.
        program: String,
        /// This program's version.
        ours: &'static str,
    },
    /// A part of a different scenario, seed or replication plan.
    #[error("{file}: this part comes from a different run ({what}) than {first}")]
    Foreign {
        /// The part file.
        file: String,
        /// The first part, for comparison.
        first: String,
        /// What differs.
        what: String,
    },
    /// A replication appears in two parts.
    #[error(
        "{file}: replication {replication} is also in {other}: a part was given twice or shards overlap"
    )]
    Duplicate {
        /// The part file.
        file: String,
        /// The other part.
        other: String,
        /// The replication index.
        replication: u64,
    },
    /// Replications are missing.
    #[error(
        "replications {from} to {to} of {total} are missing: rerun shard {shard} of {count} (no part covers them)"
    )]
    Missing {
        /// First missing.
        from: u64,
        /// Last missing.
        to: u64,
        /// Replications in the run.
        total: u64,
        /// The shard that should hold them (1-based).
        shard: u64,
        /// Shards in the run.
        count: u64,
    },
    /// The part is not a complete part file.
    #[error("{file}: not a complete busyhour part file: {reason}")]
    Unreadable {
        /// The part file.
        file: String,
        /// Why.
        reason: String,
    },
    /// The scenario no longer matches the parts.
    #[error(
        "{file}: the scenario has changed since the parts were made (fingerprint {found}, parts {expected}); merge with the scenario the parts were run from"
    )]
    Changed {
        /// The scenario file.
        file: String,
        /// Its fingerprint now.
        found: String,
        /// The parts' fingerprint.
        expected: String,
    },
    /// The parts hold no values for the figures this build reports.
    #[error("{file}: the part's figures do not match this scenario's ({reason})")]
    Layout {
        /// The part file.
        file: String,
        /// What differs.
        reason: String,
    },
}

/// `I/N`: this process runs shard I (1-based) of N.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ShardSpec {
    /// 1-based shard index.
    pub index: u32,
    /// Number of shards.
    pub count: u32,
}

impl ShardSpec {
    /// Parse `I/N`.
    pub fn parse(text: &str) -> Result<ShardSpec, ShardError> {
        let bad = || ShardError::Spec(text.to_string());
        let (i, n) = text.split_once('/').ok_or_else(bad)?;
        let index: u32 = i.trim().parse().map_err(|_| bad())?;
        let count: u32 = n.trim().parse().map_err(|_| bad())?;
        if index < 1 || index > count {
            return Err(bad());
        }
        Ok(ShardSpec { index, count })
    }

    /// The replications of this shard: contiguous blocks, sizes differing by
    /// at most one.
    pub fn range(&self, replications: u64) -> (u64, u64) {
        let n = u64::from(self.count);
        let i = u64::from(self.index - 1);
        (i * replications / n, (i + 1) * replications / n)
    }
}

/// A fingerprint of everything that decides a replication's numbers: the
/// compiled model (laws, data, routes, warm-up, length, intervals and seed),
/// as FNV-1a of its debug form. The replication plan is left out: the parts
/// carry their own count.
pub fn fingerprint(model: &Model) -> String {
    let mut m = model.clone();
    m.plan.replications = crate::scenario::Replications::Fixed(0);
    // Where the data files lie is not what decides the numbers (their
    // values are in the laws).
    m.data_files.clear();
    format!("{:016x}", crate::scenario::name_key(&format!("{m:?}")))
}

/// One part file.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Part {
    /// Always "busyhour-part".
    pub format: String,
    /// Part format version.
    pub format_version: u32,
    /// Program version that wrote it.
    pub program_version: String,
    /// The scenario file as given on the command line.
    pub file: String,
    /// Master seed.
    pub seed: u64,
    /// For a sweep: what it varies, as given (`scale=...` or `servers=...`).
    pub sweep: Option<String>,
    /// Replications in the whole run (per step of a sweep).
    pub replications_total: u64,
    /// This shard, 1-based.
    pub shard_index: u32,
    /// Shards in the run.
    pub shard_count: u32,
    /// First replication index in this part.
    pub first_replication: u64,
    /// One entry for a run; one per step of a sweep.
    pub steps: Vec<PartStep>,
    /// Events processed.
    pub events: u64,
    /// Whether the shard was interrupted (such a part cannot be merged).
    pub partial: bool,
}

/// The replications of one model (a run, or one step of a sweep) in a part.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PartStep {
    /// The swept value (none for a plain run).
    pub value: Option<f64>,
    /// Model fingerprint.
    pub fingerprint: String,
    /// Figure names in layout order, as "scope:index:name".
    pub figures: Vec<String>,
    /// Per replication, each figure's observation as [numerator,
    /// denominator] (see [`stats::Obs`]; null where undefined).
    pub values: Vec<Vec<[Option<f64>; 2]>>,
    /// Per replication and group, carried traffic in the first and second
    /// half of the measured period (the transient check).
    pub halves: Vec<Vec<[f64; 2]>>,
}

/// The models of a run (one, no value) or of a sweep's steps.
pub type Steps = [(Option<f64>, Model)];

fn figure_keys(model: &Model) -> Vec<String> {
    stats::layout(model)
        .iter()
        .map(|f| match f.scope {
            Scope::Stream(s) => format!("stream:{s}:{}", f.name()),
            Scope::Group(g) => format!("group:{g}:{}", f.name()),
            Scope::StreamInterval(b, s) => format!("stream-interval:{b}:{s}:{}", f.name()),
            Scope::GroupInterval(b, g) => format!("group-interval:{b}:{g}:{}", f.name()),
        })
        .collect()
}

/// Run one shard of a fixed number of replications of every model in
/// `steps` (one for a run, one per step of a sweep).
pub fn run_shard(
    steps: &Steps,
    file: &str,
    sweep: Option<String>,
    replications: u64,
    shard: ShardSpec,
    opts: &RunOptions,
) -> Result<Result<Part, ShardError>, ExperimentError> {
    if u64::from(shard.count) > replications {
        return Ok(Err(ShardError::TooMany {
            index: shard.index,
            count: shard.count,
            replications,
        }));
    }
    let runner = Runner::new(opts)?;
    let (from, to) = shard.range(replications);
    let planned = (to - from) * steps.len() as u64;
    let mut events = 0;
    let mut partial = false;
    let mut out = Vec::new();
    for (value, model) in steps {
        let layout = stats::layout(model);
        let mut acc = Accumulated::default();
        if !runner.run_range(model, &layout, from, to, planned, &mut acc) {
            partial = true;
        }
        events += acc.events;
        out.push(PartStep {
            value: *value,
            fingerprint: fingerprint(model),
            figures: figure_keys(model),
            halves: acc
                .halves
                .iter()
                .map(|h| h.iter().map(|&(a, b)| [a, b]).collect())
                .collect(),
            values: acc
                .per_replication
                .iter()
                .map(|v| {
                    v.iter()
                        .map(|o| {
                            [
                                o.num.is_finite().then_some(o.num),
                                o.den.is_finite().then_some(o.den),
                            ]
                        })
                        .collect()
                })
                .collect(),
        });
        if partial {
            break;
        }
    }
    let seed = steps.first().map_or(0, |(_, m)| m.plan.seed);
    Ok(Ok(Part {
        format: PART_FORMAT.into(),
        format_version: PART_FORMAT_VERSION,
        program_version: env!("CARGO_PKG_VERSION").into(),
        file: file.into(),
        seed,
        sweep,
        replications_total: replications,
        shard_index: shard.index,
        shard_count: shard.count,
        first_replication: from,
        steps: out,
        events,
        partial,
    }))
}

/// Read a part from JSON text; `file` names it in errors.
pub fn read_part(text: &str, file: &str) -> Result<Part, ShardError> {
    // Check the version before the full structure, so an old or new format
    // gets the version message rather than a field-by-field complaint.
    let probe: serde_json::Value =
        serde_json::from_str(text).map_err(|e| ShardError::Unreadable {
            file: file.into(),
            reason: e.to_string(),
        })?;
    if probe.get("format").and_then(|v| v.as_str()) != Some(PART_FORMAT) {
        return Err(ShardError::Unreadable {
            file: file.into(),
            reason: "it has no \"format\": \"busyhour-part\" field".into(),
        });
    }
    let version = probe
        .get("format_version")
        .and_then(|v| v.as_u64())
        .unwrap_or(0);
    let program = probe
        .get("program_version")
        .and_then(|v| v.as_str())
        .unwrap_or("?")
        .to_string();
    if version != u64::from(PART_FORMAT_VERSION) || program != env!("CARGO_PKG_VERSION") {
        return Err(ShardError::Version {
            file: file.into(),
            found: version as u32,
            program,
            ours: env!("CARGO_PKG_VERSION"),
        });
    }
    let part: Part = serde_json::from_value(probe).map_err(|e| ShardError::Unreadable {
        file: file.into(),
        reason: e.to_string(),
    })?;
    if part.partial {
        return Err(ShardError::Unreadable {
            file: file.into(),
            reason: "the shard was interrupted before it finished; rerun it".into(),
        });
    }
    let expected = ShardSpec {
        index: part.shard_index.max(1),
        count: part.shard_count.max(1),
    }
    .range(part.replications_total);
    if part.shard_index < 1
        || part.shard_index > part.shard_count
        || part.first_replication != expected.0
        || part.steps.is_empty()
        || part.steps.iter().any(|st| {
            st.values.len() as u64 != expected.1 - expected.0
                || st.halves.len() != st.values.len()
                || st.values.iter().any(|v| v.len() != st.figures.len())
        })
    {
        return Err(ShardError::Unreadable {
            file: file.into(),
            reason: "its replications do not match its shard number".into(),
        });
    }
    Ok(part)
}

/// Merge parts (each with its file name) of one run or sweep into the
/// outcomes of the unsharded run, one per step. `steps` are the models the
/// parts were run with (see [`model_for`]); `scenario_file` names the
/// scenario in errors.
pub fn merge(
    steps: &Steps,
    scenario_file: &str,
    parts: &[(String, Part)],
) -> Result<Vec<Outcome>, ShardError> {
    let started = Instant::now();
    let Some((first_name, first)) = parts.first() else {
        return Err(ShardError::Unreadable {
            file: "(none)".into(),
            reason: "no part files given".into(),
        });
    };
    for (name, p) in parts {
        let what =
            if p.seed != first.seed || p.sweep != first.sweep || p.steps.len() != first.steps.len()
            {
                Some("scenario, seed or sweep")
            } else if p
                .steps
                .iter()
                .zip(&first.steps)
                .any(|(a, b)| a.fingerprint != b.fingerprint)
            {
                Some("scenario or seed")
            } else if p.replications_total != first.replications_total {
                Some("number of replications")
            } else if p.shard_count != first.shard_count {
                Some("number of shards")
            } else {
                None
            };
        if let Some(what) = what {
            return Err(ShardError::Foreign {
                file: name.clone(),
                first: first_name.clone(),
                what: what.into(),
            });
        }
    }
    if steps.len() != first.steps.len() {
        return Err(ShardError::Layout {
            file: first_name.clone(),
            reason: format!(
                "{} steps in the parts, {} asked for",
                first.steps.len(),
                steps.len()
            ),
        });
    }
    for ((_, model), step) in steps.iter().zip(&first.steps) {
        let found = fingerprint(model);
        if found != step.fingerprint {
            return Err(ShardError::Changed {
                file: scenario_file.into(),
                found,
                expected: step.fingerprint.clone(),
            });
        }
        let keys = figure_keys(model);
        if keys != step.figures {
            return Err(ShardError::Layout {
                file: first_name.clone(),
                reason: format!(
                    "{} figures in the part, {} in the scenario",
                    step.figures.len(),
                    keys.len()
                ),
            });
        }
    }
    let total = first.replications_total;
    let mut owner: Vec<Option<usize>> = vec![None; total as usize];
    for (k, (name, p)) in parts.iter().enumerate() {
        for r in p.first_replication..p.first_replication + p.steps[0].values.len() as u64 {
            if let Some(other) = owner[r as usize] {
                return Err(ShardError::Duplicate {
                    file: name.clone(),
                    other: parts[other].0.clone(),
                    replication: r,
                });
            }
            owner[r as usize] = Some(k);
        }
    }
    if let Some(from) = owner.iter().position(Option::is_none) {
        let to = owner[from..]
            .iter()
            .position(Option::is_some)
            .map_or(total, |n| (from + n) as u64)
            - 1;
        let count = u64::from(first.shard_count);
        return Err(ShardError::Missing {
            from: from as u64,
            to,
            total,
            shard: (0..count)
                .find(|i| (i + 1) * total / count > from as u64)
                .map_or(count, |i| i + 1),
            count,
        });
    }
    let mut ordered: Vec<&Part> = parts.iter().map(|(_, p)| p).collect();
    ordered.sort_by_key(|p| p.first_replication);
    let events: u64 = ordered.iter().map(|p| p.events).sum();
    let wall_s = started.elapsed().as_secs_f64();
    Ok(steps
        .iter()
        .enumerate()
        .map(|(i, (_, model))| {
            let mut acc = Accumulated {
                events: if i == 0 { events } else { 0 },
                ..Accumulated::default()
            };
            for p in &ordered {
                for h in &p.steps[i].halves {
                    acc.halves.push(h.iter().map(|&[a, b]| (a, b)).collect());
                }
                for v in &p.steps[i].values {
                    acc.per_replication.push(
                        v.iter()
                            .map(|[n, d]| Obs {
                                num: n.unwrap_or(f64::NAN),
                                den: d.unwrap_or(f64::NAN),
                            })
                            .collect(),
                    );
                }
            }
            outcome_of(model, acc, wall_s, None, false)
        })
        .collect())
}

/// The model a set of parts was run with: the scenario with the parts' seed.
pub fn model_for(model: &Model, parts: &[(String, Part)]) -> Model {
    let mut m = model.clone();
    if let Some((_, p)) = parts.first() {
        m.plan.seed = p.seed;
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shard_ranges_cover_every_replication_once() {
        for total in [1u64, 7, 40, 41, 1000] {
            for count in 1..=7u32.min(total as u32) {
                let mut next = 0;
                for index in 1..=count {
                    let (a, b) = ShardSpec { index, count }.range(total);
                    assert_eq!(a, next);
                    assert!(b > a);
                    next = b;
                }
                assert_eq!(next, total);
            }
        }
        assert!(ShardSpec::parse("0/3").is_err());
        assert!(ShardSpec::parse("4/3").is_err());
        assert!(ShardSpec::parse("x").is_err());
        assert_eq!(
            ShardSpec::parse("2/3"),
            Ok(ShardSpec { index: 2, count: 3 })
        );
    }
}
