//! busyhour: teletraffic engineering for real traffic.
//!
//! Size circuit groups and agent groups by discrete-event simulation with
//! honest 95% confidence intervals, beside the closed-form answers (Erlang B,
//! Erlang C, Erlang A, Engset, overflow moments, Kaufman-Roberts) wherever a
//! formula applies.
//!
//! Data flows one way: file -> [`scenario`] -> `Model` -> [`engine`] (one
//! replication) -> [`stats`] summary -> [`experiment`] (many replications) ->
//! [`report`]. [`formulas`] is a leaf that `report` and `experiment` call.
//! [`api`] strings these together for programs that embed the library (the
//! Python package in `python/`), as the binary's handlers do.
//!
//! # Example
//!
//! Load a scenario, run it, read an estimate beside its closed form:
//!
//! ```
//! use busyhour::experiment::{self, RunOptions};
//! use busyhour::formulas::erlang_b;
//! use busyhour::stats::{Figure, Scope};
//!
//! let text = r#"
//! [simulation]
//! length = "1h"
//! replications = 20
//! seed = 7
//!
//! [[group]]
//! name = "trunks"
//! servers = 10
//!
//! [[stream]]
//! name = "office"
//! arrivals = { law = "poisson", rate = "120/h" }
//! holding = { law = "lognormal", mean = "3m", cv = 1.5 }
//! route = ["trunks"]
//! "#;
//! let model = busyhour::scenario::parse(text, "example.toml", ".".as_ref(), "example")?;
//! let outcome = experiment::run(&model, None, &RunOptions::default())?;
//! let loss = outcome.get_figure(Scope::Stream(0), Figure::Loss).unwrap();
//! // 6 E on 10 trunks: Erlang B is 4.31% for any holding-time law
//! // (insensitivity), and the 95% interval of the simulation says how sure
//! // the estimate is.
//! let book = erlang_b::blocking(10, 6.0)?;
//! assert!(loss.low <= loss.mean && loss.mean <= loss.high);
//! assert!((loss.mean - book).abs() < 0.02, "{} vs {book}", loss.mean);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```
//!
//! # Panics and errors
//!
//! Anything a user's file or flag can reach returns a typed error (`thiserror`
//! enums, one per module); a panic is always a bug in busyhour. Internal
//! invariants of the engine are checked with `debug_assert!`.
//!
//! # Cautions
//!
//! Every figure is an estimate under the model's stated assumptions. Where a
//! design carries emergency or life-safety calls, keep margin, validate against
//! measured traffic and defer to local regulation and licensed practice.
#![forbid(unsafe_code)]
// Constructors reject NaN with `!(x > 0.0)`, which clippy would rewrite into
// a comparison that lets NaN through.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

pub mod api;
pub mod dist;
pub mod engine;
pub mod experiment;
pub mod files;
pub mod formulas;
pub mod records;
pub mod report;
pub mod scenario;
pub mod shifts;
pub mod stats;
pub mod textbook;
pub mod units;

/// The safety caution every output carries (reports, JSON, CSV, charts,
/// `calc` answers and the scenarios `records` writes): here, beside no
/// module, so that analysis and presentation can both name it.
pub const CAUTION: &str = "Estimates under the stated model assumptions, not guarantees. \
Where the design carries emergency or life-safety calls, keep margin, validate against \
measured traffic, and defer to local regulation and licensed practice.";
