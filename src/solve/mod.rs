//! The `solve` stage: numbers from the exact derivation — continued
//! fractions on the derived recurrences, first estimates from the
//! Schrödinger potential. Floating point lives here and never flows back
//! into the exact layer.

pub mod cf;
pub mod wkb;
