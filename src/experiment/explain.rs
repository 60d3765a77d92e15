//! The assumption ladder (`explain`): from the textbook model of a design
//! (Poisson arrivals at the mean rate, exponential holding of the same
//! mean, a flat load, no redials, no abandonment) up to the scenario as
//! written, one real effect added per rung, every rung simulated on the
//! same seeds; and each effect alone on the textbook model. The paired
//! differences say how much of the gap between the book and the scenario
//! each effect accounts for. Must not parse files or print.
//!
//! # Order
//!
//! The effects are added in a fixed order, the order a planner questions
//! the book: holding-time law, arrival process (renewal streams), peak
//! profile, forecast spread (`uncertainty`), patience, redials (redials after patience: on a queue without
//! patience nobody is lost, so nobody redials). The share of the gap an
//! effect takes depends on that order when effects interact (patience
//! matters more on a peak than on a flat load); each effect alone on the
//! book model is shown beside it for that reason. Only the effects the scenario has are rungs.
//! Finite sources stay as written on every rung (their textbook model,
//! Engset, is not Poisson), and overflow is simulated as it is on every
//! rung: the formula column of `run` shows the Poisson-overflow view.

use super::compare::{self, Compared};
use super::{Accumulated, Completion, ExperimentError, RunOptions, RunResult, Runner};
use crate::dist::{Exponential, Law};
use crate::scenario::{Arrivals, Model, Queue, Replications};
use crate::stats;
use std::time::Instant;

/// A real-world effect the ladder adds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Effect {
    /// Holding times follow the scenario's laws, not exponential ones.
    HoldingLaw,
    /// Renewal arrivals instead of Poisson at the same mean rate.
    ArrivalProcess,
    /// The peak profile instead of its mean rate all through.
    PeakProfile,
    /// The forecast's spread from day to day (`uncertainty`).
    ForecastSpread,
    /// Blocked or abandoning callers redial.
    Redials,
    /// Waiting callers give up.
    Patience,
}

impl Effect {
    /// Every effect, in the ladder's order.
    pub const ORDER: [Effect; 6] = [
        Effect::HoldingLaw,
        Effect::ArrivalProcess,
        Effect::PeakProfile,
        Effect::ForecastSpread,
        Effect::Patience,
        Effect::Redials,
    ];

    /// In words, for tables.
    pub fn words(self) -> &'static str {
        match self {
            Effect::HoldingLaw => "holding-time law",
            Effect::ArrivalProcess => "arrival process",
            Effect::PeakProfile => "peak profile",
            Effect::ForecastSpread => "forecast spread",
            Effect::Redials => "redials",
            Effect::Patience => "patience",
        }
    }

    /// The JSON name.
    pub fn name(self) -> &'static str {
        match self {
            Effect::HoldingLaw => "holding_law",
            Effect::ArrivalProcess => "arrival_process",
            Effect::PeakProfile => "peak_profile",
            Effect::ForecastSpread => "forecast_spread",
            Effect::Redials => "redials",
            Effect::Patience => "patience",
        }
    }

    /// Whether `model` has this effect (some stream departs from the book
    /// there).
    fn present(self, model: &Model) -> bool {
        model.streams.iter().any(|s| match self {
            Effect::HoldingLaw => !s.holding.is_exponential(),
            Effect::ArrivalProcess => matches!(s.arrivals, Arrivals::Renewal { .. }),
            Effect::PeakProfile => matches!(s.arrivals, Arrivals::Profile { .. }),
            Effect::ForecastSpread => s.forecast.is_some(),
            Effect::Redials => s.retry.is_some(),
            Effect::Patience => s.patience.is_some(),
        })
    }
}

/// The model with only the effects in `on` kept (the others as the book
/// has them); `keep_patience` keeps patience whatever `on` says.
fn with_effects(model: &Model, on: &[Effect], keep_patience: bool) -> Model {
    let mut m = model.clone();
    let length = m.plan.length_s;
    for s in &mut m.streams {
        if !on.contains(&Effect::HoldingLaw) && !s.holding.is_exponential() {
            // A positive finite mean was validated when the law was built.
            if let Ok(e) = Exponential::new(s.holding.mean()) {
                s.holding = Law::Exponential(e);
            }
        }
        if !on.contains(&Effect::ArrivalProcess)
            && let Arrivals::Renewal { between } = &s.arrivals
        {
            s.arrivals = Arrivals::Poisson {
                rate: 1.0 / between.mean(),
            };
        }
        if !on.contains(&Effect::PeakProfile)
            && let Arrivals::Profile { .. } = s.arrivals
            && let Some(rate) = s.arrivals.mean_rate(length)
        {
            s.arrivals = Arrivals::Poisson { rate };
        }
        if !on.contains(&Effect::ForecastSpread) {
            s.forecast = None;
        }
        if !on.contains(&Effect::Redials) {
            s.retry = None;
        }
        if !on.contains(&Effect::Patience) && !keep_patience {
            s.patience = None;
        }
    }
    m
}

/// Whether taking patience away leaves a queue that grows without bound
/// (offered load at the mean rates at least its servers, no patience): the
/// book model then keeps patience, and the ladder says so.
fn patience_needed(model: &Model) -> bool {
    let length = model.plan.length_s;
    (0..model.groups.len()).any(|g| {
        model.groups[g].queue == Queue::Unlimited
            && (model.streams.iter())
                .filter(|s| s.route.first() == Some(&(g as u32)) && s.patience.is_some())
                .filter_map(|s| s.offered_traffic(length))
                .sum::<f64>()
                >= f64::from(model.groups[g].servers)
    })
}

/// One rung: its name, the effects on, its run.
#[derive(Debug, Clone)]
pub struct Rung {
    /// The effects kept on this rung (the book: none).
    pub effects: Vec<Effect>,
    /// The model run.
    pub model: Model,
    /// Its run.
    pub result: RunResult,
}

/// What `explain` found.
#[derive(Debug, Clone)]
pub struct Ladder {
    /// The effects the scenario has, in the ladder's order.
    pub effects: Vec<Effect>,
    /// The book model (rung 0), then one rung per effect added; the last is
    /// the scenario.
    pub rungs: Vec<Rung>,
    /// Per effect, the paired difference of every common figure from the
    /// rung below to its own rung (in the ladder's order).
    pub steps: Vec<Vec<Compared>>,
    /// Per effect, the paired difference of each figure between the book
    /// model and the book model with that effect alone.
    pub alone: Vec<Vec<Compared>>,
    /// The whole gap: the scenario against the book model.
    pub gap: Vec<Compared>,
    /// Patience was kept in the book model (without it a queue would grow
    /// without bound).
    pub patience_kept: bool,
    /// Replications per rung.
    pub replications: u32,
    /// Stopped on request (every rung keeps the replications all finished).
    pub partial: bool,
}

/// Build and run the ladder of `model` with `replications` on every rung
/// (the longest warm-up any rung needs, the file's seed).
///
/// # Errors
///
/// Worker threads that cannot start; a model with call flows with stages.
pub fn explain(
    model: &Model,
    replications: u32,
    opts: &RunOptions,
) -> Result<Ladder, ExperimentError> {
    if let Some(s) = model.streams.iter().find(|s| s.has_stages()) {
        return Err(ExperimentError::FlowNotExplained {
            stream: s.name.clone(),
        });
    }
    let started = Instant::now();
    let effects: Vec<Effect> = (Effect::ORDER.iter().copied())
        .filter(|e| e.present(model))
        .collect();
    let patience_kept = effects.contains(&Effect::Patience) && patience_needed(model);
    let effects: Vec<Effect> = if patience_kept {
        effects
            .into_iter()
            .filter(|&e| e != Effect::Patience)
            .collect()
    } else {
        effects
    };
    let mut models: Vec<(Vec<Effect>, Model)> = (0..=effects.len())
        .map(|k| {
            let on = &effects[..k];
            (on.to_vec(), with_effects(model, on, patience_kept))
        })
        .collect();
    // Each effect alone on the book model (the first rung already is the
    // first effect alone).
    let alone_from = models.len();
    for &e in effects.iter().skip(1) {
        models.push((vec![e], with_effects(model, &[e], patience_kept)));
    }
    // One plan for all: the file's seed, the longest warm-up any needs.
    let warmup_s = (models.iter())
        .map(|(_, m)| m.plan.warmup_s)
        .fold(0.0, f64::max);
    for (_, m) in &mut models {
        m.plan.warmup_s = warmup_s;
        m.plan.replications = Replications::Fixed(replications);
    }
    let runner = Runner::new(opts)?;
    let n = u64::from(replications);
    let planned = n * models.len() as u64;
    let layouts: Vec<_> = models.iter().map(|(_, m)| stats::layout(m)).collect();
    let mut accs: Vec<Accumulated> = models.iter().map(|_| Accumulated::default()).collect();
    let mut partial = false;
    let mut to = 0;
    while to < n && !partial {
        to = (to + compare::COMPARE_BATCH).min(n);
        for (k, (_, m)) in models.iter().enumerate() {
            if runner
                .extend(m, &layouts[k], &mut accs[k], to, planned)
                .stopped()
            {
                partial = true;
                break;
            }
        }
    }
    let paired = accs
        .iter()
        .map(|a| a.per_replication.len())
        .min()
        .unwrap_or(0);
    let completion = if partial {
        Completion::Stopped
    } else {
        Completion::Complete
    };
    let wall_s = started.elapsed().as_secs_f64();
    let mut runs: Vec<Rung> = Vec::new();
    for ((on, m), mut acc) in models.into_iter().zip(accs) {
        acc.per_replication.truncate(paired);
        acc.halves.truncate(paired);
        let result = super::outcome_of(&m, acc, wall_s, None, completion);
        runs.push(Rung {
            effects: on,
            model: m,
            result,
        });
    }
    let pair =
        |a: &Rung, b: &Rung| compare::match_figures(&a.model, &a.result, &b.model, &b.result).0;
    let alone_runs = runs.split_off(alone_from);
    let steps = (1..runs.len())
        .map(|k| pair(&runs[k - 1], &runs[k]))
        .collect();
    let mut alone: Vec<Vec<Compared>> = Vec::new();
    if runs.len() > 1 {
        alone.push(pair(&runs[0], &runs[1]));
    }
    alone.extend(alone_runs.iter().map(|r| pair(&runs[0], r)));
    let gap = match runs.last() {
        Some(last) => pair(&runs[0], last),
        None => Vec::new(),
    };
    Ok(Ladder {
        effects,
        rungs: runs,
        steps,
        alone,
        gap,
        patience_kept,
        replications: paired as u32,
        partial,
    })
}
