//! Closed-form teletraffic formulas. A leaf module: depends on nothing else in
//! the crate.
//!
//! Owns Erlang B, Erlang C, Erlang A, Engset, overflow moments with the
//! equivalent random method, and Kaufman-Roberts multi-rate blocking. Must
//! not touch simulation, files or printing.
//!
//! Units: traffic in erlangs, times in seconds, shares between 0 and 1,
//! servers (agents, circuits) as `u32`. Every function validates its
//! arguments (NaN included) and returns `Result<_, FormulaError>`; none
//! panics on any input.
//!
//! # Accuracy
//!
//! Relative error below `1e-9` for up to 10,000 servers and 10,000 erlangs,
//! by positive-term recursions (never factorials) in extended range, so
//! nothing overflows; figures below `f64`'s smallest normal number (about
//! `2.2e-308`) are returned as 0 or subnormal ([`erlang_b::ln_blocking`]
//! reaches them).

pub mod engset;
pub mod erlang_a;
pub mod erlang_b;
pub mod erlang_c;
mod error;
pub mod multirate;
pub mod overflow;
mod scaled;

pub use error::FormulaError;
