//! Closed-form teletraffic formulas. A leaf module: depends on nothing else in
//! the crate.
