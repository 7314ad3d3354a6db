//! The `emit` stage: turns derivations into documents — the plain-text
//! derivation, LaTeX for papers, JSON with a stable schema, derivation
//! records to commit and re-check, and C/Rust evaluators ([`code`]). Pure
//! functions from values to strings; only the CLI writes them anywhere.

mod classify_report;
pub mod code;
pub mod diagnostic;
pub mod latex;
pub mod numbers;
pub mod record;
pub mod region;
pub(crate) mod report;
pub mod scatter;
pub mod spectrum;

/// The formats of the documents of `spectrum`, `scatter` and a region's
/// modes (also the command line's `--format` values of those subcommands).
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum DocFormat {
    /// A table (with the evidence, where there is some).
    Text,
    /// JSON (schemas at the top of the subcommands' files in `src/cli`).
    Json,
    /// One line per mode or per frequency.
    Csv,
}

pub use classify_report::{analysis_json, analysis_latex, analysis_text, canonical_json, canonical_text, BoundaryPicks};
pub use report::{recurrence_latex, reduction_json, reduction_latex, reduction_text, value_latex};
