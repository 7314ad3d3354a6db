//! canonode: exact normal forms of linear second-order ODEs from pasted text.
//!
//! A researcher who has separated variables in a wave equation holds a
//! linear second-order ODE with rational coefficients and symbolic
//! parameters. canonode parses it as written, lowers it to the standard form
//! y'' + p y' + q y = 0 with exact coefficients, and derives the Liouville
//! normal form ψ'' + Q ψ = 0 with Q = q − p'/2 − p²/4, the prefactor
//! y = exp(−½∫p) ψ, the principal parts of Q at its poles, changes of
//! variable and the Schrödinger form; then the singular points, exponents,
//! class and canonical parameters, series recurrences, spectra with
//! independent checks, verified C and Rust evaluators, and derivation
//! records that can be re-checked.
//!
//! The pipeline runs one way: [`syntax`] (text → syntax tree), [`ode`]
//! (lowering, normal form, changes of variable; built on the exact
//! [`algebra`] layer), [`analysis`] (singular points, class, canonical
//! forms), [`series`] (recurrences), [`solve`] (numerics: continued
//! fractions, integration, WKB, collocation, coupled equations, scans),
//! [`present`] (evaluation forms by e-graph extraction), [`emit`] (text,
//! LaTeX, JSON, code, [`record`]s), and the binary's command line (private;
//! its entry points are in [`command`]). The exact
//! layer is the single source of truth: floating point starts in `solve`
//! and in printed numbers, and never feeds back.
//!
//! ```
//! use canonode::ode::{reduce, Input, ReduceOptions};
//! use canonode::algebra::print::{ratfunc_text, Style};
//!
//! // DLMF 10.2.1, Bessel's equation.
//! let src = "var z\nparam nu\node z^2*w'' + z*w' + (z^2 - nu^2)*w = 0\n";
//! let r = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
//! // Q = 1 + (1/4 − ν²)/z² (DLMF 10.2.1 in normal form).
//! assert_eq!(ratfunc_text(&r.normal.q, r.field.names(), Style::Text), "(z^2 - nu^2 + 1/4)/z^2");
//! ```
#![deny(missing_docs)]

pub mod algebra;
pub mod analysis;
mod cli;
pub mod emit;
pub mod error;
pub mod ode;
pub mod present;
pub mod series;
pub mod solve;
pub mod syntax;

pub use emit::record;

/// The command line as a library entry point. The `cli` module itself is
/// private (its argument structures and helpers are not an API); these
/// items are public on purpose: the thin binary calls [`command::main_with_args`],
/// and tests drive every subcommand in process through
/// [`command::run_captured`], which prints nothing and returns what the
/// binary would have printed with its exit status; [`command::flag`] spells
/// an input of the request as its option, for a front end whose texts must
/// read as the command line's (the Python package's documents).
pub mod command {
    pub use crate::cli::{flag, main_with_args, run_captured, Captured};
}
