//! Closed-form teletraffic formulas. A leaf module: depends on nothing else in
//! the crate.
//!
//! Owns Erlang B, Erlang C, Erlang A, Engset, overflow moments with the
//! equivalent random method and per-parcel losses by Kuczura's interrupted
//! Poisson process, Kaufman-Roberts multi-rate blocking, and M/G/N
//! mean waits (Pollaczek-Khinchine, Allen-Cunneen, Cosmetatos), the finite
//! queue M/M/N/K(+M), the redial fixed point of a loss group, and the exact
//! transient of an agent group on a schedule (`transient`), and the
//! per-class mean waits of non-pre-emptive priority on M/M/N (Cobham,
//! `priority`). Must not touch
//! simulation, files or printing.
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
//! reaches them). Each module's tests name the independent reference they
//! are checked against.
//!
//! # Limits
//!
//! Up to [`erlang_b::MAX_FORMULA_SERVERS`] servers or agents (the recursions take
//! one step per server), [`multirate::MAX_CAPACITY`] channels for
//! Kaufman-Roberts, and queues up to [`erlang_a::MAX_QUEUE`] callers for
//! Erlang A; beyond, [`FormulaError::OutOfRange`].
//!
//! # Example
//!
//! ```
//! use busyhour::formulas::{erlang_b, erlang_c};
//! // 10 erlangs at 1% loss need 18 circuits.
//! assert_eq!(erlang_b::servers_for(10.0, 0.01)?, 18);
//! // 80% of calls answered within 20 s, 3-minute calls: 14 agents.
//! assert_eq!(erlang_c::agents_for_service_level(10.0, 180.0, 20.0, 0.8)?, 14);
//! # Ok::<(), busyhour::formulas::FormulaError>(())
//! ```

pub mod chains;
pub mod delay_goals;
pub mod engset;
pub mod erlang_a;
pub mod erlang_b;
pub mod erlang_c;
mod error;
pub mod finite_queue;
pub mod multirate;
pub mod overflow;
pub mod priority;
pub mod queue_general;
pub mod redial_fixed_point;
mod scaled;
pub mod transient;

pub use error::FormulaError;
