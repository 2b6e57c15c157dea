//! The physics behind the rules, written with `uom` quantities so that each
//! formula is unit-checked at compile time. Empirical formulas that are
//! stated in non-SI units (Preece, IPC-2221) convert at their boundary.

pub mod conductor;
pub mod startup;
pub mod statistics;
pub mod thermal;
