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

pub mod dist;
pub mod engine;
pub mod experiment;
pub mod files;
pub mod formulas;
pub mod records;
pub mod report;
pub mod scenario;
pub mod stats;
pub mod textbook;
pub mod units;
