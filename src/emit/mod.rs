//! The `emit` stage: turns derivations into documents — the plain-text
//! derivation, LaTeX for papers and JSON with a stable schema. Pure
//! functions from values to strings (and C/Rust evaluators, [`code`]); only the CLI writes them anywhere.

mod classify_report;
pub mod code;
pub(crate) mod report;

pub use classify_report::{analysis_json, analysis_latex, analysis_text, canonical_json, canonical_text, class_name};
pub use report::{reduction_json, reduction_latex, reduction_text};
