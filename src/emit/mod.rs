//! The `emit` stage: turns derivations into documents — the plain-text
//! derivation, LaTeX for papers and JSON with a stable schema. Pure
//! functions from values to strings; only the CLI writes them anywhere.

mod report;

pub use report::{reduction_json, reduction_latex, reduction_text};
