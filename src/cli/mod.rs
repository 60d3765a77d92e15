//! Command-line front ends of the binary: argument definitions, unit
//! parsing and printing only; every figure comes from the library.

pub mod calc;
