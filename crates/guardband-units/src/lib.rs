//! Physical dimensions, the unit table and the bridge to `uom` for guardband.
//!
//! This crate knows nothing about source text beyond a unit's spelling: it turns
//! `mA/um^2` into a factor to SI and a dimension, names dimensions for humans,
//! and converts checked SI values into `uom` quantities for the physics layer.

mod bridge;
mod dimension;
mod kind;
mod parse;
mod table;

pub use bridge::{UomQuantity, to_uom};
pub use dimension::{Base, Dimension};
pub use kind::{QuantityKind, TempSense};
pub use parse::{ParsedUnit, UnitError, edit_distance, parse_unit};
pub use table::{PREFIXES, Prefix, UNITS, UnitDef};
