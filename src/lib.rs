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
//! The pipeline runs one way: syntax (text → syntax tree), the equation
//! stage (lowering, normal form, changes of variable; built on the exact
//! layer), analysis (singular points, class, canonical forms), series
//! (recurrences), numerics (continued fractions, integration, WKB,
//! collocation, coupled equations, scans), evaluation forms (e-graph
//! extraction), documents (text, LaTeX, JSON, code, derivation records),
//! and the binary's command line (private; its entry points are in
//! [`command`]). The exact layer is the single source of truth: floating
//! point starts in the numerics and in printed numbers, and never feeds
//! back.
//!
//! # The public surface
//!
//! The stage modules are private; the list below, re-exported from this
//! file, is the library's API, by pipeline stage:
//!
//! - **Errors** — every failure is an [`Error`] of an [`ErrorKind`] with a
//!   span into the text named by its [`Origin`] (the input, or one
//!   [`RequestInput`] of the request); [`Result`]; [`name_inputs`] spells the
//!   mentions of request inputs in a message. [`Span`] is a byte range.
//! - **The exact layer** — [`Int`], [`Rat`], [`GRat`], [`Poly`] and
//!   [`RatFunc`] in a [`Field`] (the variable names and the [`Limits`]);
//!   [`ratfunc_text`] and [`poly_text`] print them in a [`Style`].
//! - **The equation** — [`reduce`] takes an [`Input`] and [`ReduceOptions`]
//!   to a [`Reduction`] (standard form, normal form, changes of variable);
//!   [`schwarzian`] and [`transform_q`] are the changes of variable alone;
//!   [`read_expression`] reads an expression beside the equation exactly.
//! - **Analysis** — [`analyse`] gives the singular points ([`Analysis`]),
//!   each with its identity [`PointId`];
//!   [`canonical_form_of`] the canonical form ([`Canonical`]) under exponent
//!   [`Choices`]; [`suggest`] the suggested [`SuggestedMethod`]s;
//!   [`label`] and [`boundary_choices`] the boundary labels and exponent
//!   picks ([`Boundary`], [`ExponentPicks`]) at values, [`generic_values`]
//!   when none are given.
//! - **Series** — [`recurrence_at`] and [`requested`] derive a [`Recurrence`]
//!   about a point in a series variable ([`SeriesMap`]),
//!   [`recurrence_about_root`] about a root of a quadratic factor
//!   ([`RootRecurrence`]).
//! - **Numerics** — the facade [`numeric`]: the spectrum, region, scattering
//!   and survey workflows and the pieces benchmarks time.
//! - **Evaluation forms** — [`choose`] picks the cheapest evaluation form
//!   ([`Choice`]) within [`SearchLimits`].
//! - **Documents** — the reports of a reduction ([`reduction_text`],
//!   [`reduction_latex`], [`reduction_json`]), of an analysis
//!   ([`analysis_text`], [`analysis_latex`], [`analysis_json`], with
//!   [`BoundaryPicks`]) and of a canonical form ([`canonical_text`],
//!   [`canonical_json`]); the JSON documents of a spectrum
//!   ([`spectrum_json`]), a region search ([`region_json`]) and a scattering
//!   run ([`scatter_head_json`], [`scatter_point_json`]); an error rendered
//!   against its text ([`render_diagnostic`], [`line_column`]). The
//!   facades [`code`] (C and Rust evaluators) and [`record`] (derivation
//!   records) hold the rest.
//! - **The command line** — the facade [`command`].
//!
//! The facades are the only public modules (`tests/tidy.rs` fails on any
//! other `pub mod` here), so the surface cannot widen unseen.
//!
//! ```
//! use canonode::{ratfunc_text, reduce, Input, ReduceOptions, Style};
//!
//! // DLMF 10.2.1, Bessel's equation.
//! let src = "var z\nparam nu\node z^2*w'' + z*w' + (z^2 - nu^2)*w = 0\n";
//! let r = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
//! // Q = 1 + (1/4 − ν²)/z² (DLMF 10.2.1 in normal form).
//! assert_eq!(ratfunc_text(&r.normal.q, r.field.names(), Style::Text), "(z^2 - nu^2 + 1/4)/z^2");
//! ```
#![deny(missing_docs)]

mod algebra;
mod analysis;
mod cli;
mod emit;
mod error;
mod ode;
mod present;
mod series;
mod solve;
mod syntax;

// Errors.
pub use error::{name_inputs, Error, ErrorKind, Origin, RequestInput, Result};
pub use syntax::Span;

// The exact layer.
pub use algebra::print::{poly_text, ratfunc_text, Style};
pub use algebra::{Field, GRat, Int, Limits, Poly, Rat, RatFunc};

// The equation.
pub use ode::{read_expression, reduce, schwarzian, transform_q, Input, ReduceOptions, Reduction};

// Analysis.
pub use analysis::canonical::{Canonical, Choices};
pub use analysis::labels::{boundary_choices, generic_values, label, Boundary, ExponentPicks};
pub use analysis::methods::{suggest, Method as SuggestedMethod};
pub use analysis::{analyse, canonical_form_of, Analysis, PointId};

// Series.
pub use series::{recurrence_about_root, recurrence_at, requested, Recurrence, RootRecurrence, SeriesMap};

// Evaluation forms.
pub use present::{choose, Choice, SearchLimits};

// Documents.
pub use emit::diagnostic::{line_column, render as render_diagnostic};
pub use emit::region::json as region_json;
pub use emit::scatter::{head_json as scatter_head_json, point_json as scatter_point_json};
pub use emit::spectrum::json as spectrum_json;
pub use emit::{
    analysis_json, analysis_latex, analysis_text, canonical_json, canonical_text, reduction_json, reduction_latex, reduction_text, BoundaryPicks,
};

/// Numerics (floating point starts here): the workflows of the command
/// line's `spectrum` (with its region search), `scatter` and `scan` as
/// library calls, and the pieces of the quasinormal-mode route that tests and
/// benchmarks drive on their own.
pub mod numeric {
    // The spectrum: one call from a reduction and a request to a report.
    pub use crate::solve::request::{spectrum, CoupleRequest, Method, Problem, SpectrumReport, SpectrumRequest, ANGULAR_ORIGIN};
    pub use crate::solve::spectrum::{SeedSource, SpectrumOptions};
    // Coupled equations: the joint parameter names, a link, an angular equation.
    pub use crate::solve::coupled::{joint_names, try_angular, Link};
    // Boundary problems between given ends.
    pub use crate::solve::boundary::{Condition, GivenEnds, Location, Weight};
    // Every mode in a window of the complex plane.
    pub use crate::solve::global::Region;
    pub use crate::solve::region::{region_modes, RegionReport};
    // Real-frequency scattering.
    pub use crate::solve::scatter::{problem as scatter_problem, scatter_at, scatter_setup, ScatterRequest, ScatterSetup};
    // Surveys over a parameter.
    pub use crate::solve::scan::{grid, scan, survey_solver, PointSolver};
    // The pieces of the quasinormal-mode route: the recurrence, its
    // continued fraction, the barrier estimates, exact substitution.
    pub use crate::solve::cf::{find_root, try_numeric};
    pub use crate::solve::spectrum::{barrier_estimates, qnm_modes, qnm_recurrence, substitute};
    pub use crate::solve::wkb::SEED_ORDER;
    // Values: a rational function at complex values, the analysis at
    // values, polynomial roots.
    pub use crate::analysis::numeric::{evaluate, try_roots, Values};
    pub use crate::solve::eval_at;
}

/// C and Rust evaluators of a reduction's functions (the `emit` command).
pub mod code {
    pub use crate::emit::code::{
        emit_code, emit_functions, prefix_from_source, valid_prefix, CodeRequest, EmitWhat, Emitted, FunctionKind, FunctionSpec, Lang,
    };
}

pub mod record {
    //! Derivation records: a plain-text, line-oriented, deterministic account of
    //! one derivation (normal form, singular points, class, canonical
    //! parameters, a series recurrence) that can be committed beside the code
    //! of a paper and re-checked later, by `canonode check` or in a test.
    //!
    //! A record is a header line [`HEADER`] and then one field per line,
    //! `key: value`. Multi-valued things have indexed keys (`point[2].exponent[1]`,
    //! `recurrence.c[0]`), so a changed value is named by its key. Every value is
    //! exact text in the input language, produced by the same printers as the
    //! `reduce` and `classify` reports. Blank lines and lines starting with `#`
    //! are ignored when a record is read. The field `tool.version` is
    //! informational: [`compare`] reports a different version but does not count
    //! it as a change.
    //!
    //! The source file is named by `source.path` (relative to the record's
    //! directory, with `/` separators) and pinned by `source.sha256`, the SHA-256
    //! of its bytes; `option.*` hold the options of the reduction. The recurrence
    //! follows a fixed rule, stated in the record ([`RECURRENCE_RULE`]). A record
    //! written with a spectral set-up ([`Derivation::finish`]) ends with the
    //! closed-form spectrum of that boundary problem (`closed.*`), which
    //! `check` derives again and compares as text like every other field.
    //!
    //! ```
    //! use canonode::ReduceOptions;
    //! use canonode::record::{compare, derive, Record};
    //!
    //! // DLMF 10.2.1, Bessel's equation.
    //! let src = "var z\nparam nu\node z^2*w'' + z*w' + (z^2 - nu^2)*w = 0\n";
    //! let rec = derive(src, "bessel.ode", &ReduceOptions::default()).unwrap();
    //! // Its normal form is Q = 1 + (1/4 − ν²)/z² (DLMF 10.2.1).
    //! assert_eq!(rec.get("normal.Q"), Some("(z^2 - nu^2 + 1/4)/z^2"));
    //! // One regular point at z = 0 with exponents ±ν, and rank 1 at ∞.
    //! assert_eq!(rec.get("class"), Some("confluent-hypergeometric"));
    //! assert_eq!(rec.get("point[1].at"), Some("z = 0"));
    //! assert_eq!(rec.get("point[1].exponent[1]"), Some("nu"));
    //! assert_eq!(rec.get("point[1].exponent[2]"), Some("-nu"));
    //! assert_eq!(rec.get("point[2].rank"), Some("1"));
    //!
    //! // The rendered text reads back to the same record.
    //! let text = rec.render();
    //! assert!(text.starts_with("canonode-derivation 1\n"));
    //! let again = Record::parse(&text).unwrap();
    //! assert!(compare(&again, &rec).holds());
    //! // For a snapshot test (insta::assert_snapshot!) the version line is left out.
    //! assert!(!rec.render_derivation().contains("tool.version"));
    //!
    //! // Changing a coefficient changes the derivation, and the diff names it.
    //! let changed = "var z\nparam nu\node z^2*w'' + 2*z*w' + (z^2 - nu^2)*w = 0\n";
    //! let rec2 = derive(changed, "bessel.ode", &ReduceOptions::default()).unwrap();
    //! let cmp = compare(&rec, &rec2);
    //! assert!(!cmp.holds());
    //! assert!(cmp.changed.iter().any(|k| k == "standard.p"));
    //! assert!(cmp.diff.contains("-standard.p: 1/z\n+standard.p: 2/z\n"));
    //! ```

    pub use crate::emit::record::{
        compare, compare_named, derive, sha256_hex, AskedRecurrence, Comparison, Derivation, Entry, Record, RecurrenceRequest, SpectralSetup, HEADER,
        RECURRENCE_RULE,
    };
}

/// The command line as a library entry point. The `cli` module itself is
/// private (its argument structures and helpers are not an API); these
/// items are public on purpose: the thin binary calls [`command::main_with_args`],
/// and tests drive every subcommand in process through
/// [`command::run_captured`], which prints nothing and returns what the
/// binary would have printed with its exit status; [`command::flag`] spells
/// an input of the request as its option, for a front end whose texts must
/// read as the command line's (the Python package's documents); and
/// [`command::read_point`], [`command::read_choices`], [`command::read_series`],
/// [`command::read_ends`], [`command::read_link`], [`command::asked_about`], [`command::asked_recurrence`]
/// and [`command::derive_record`] read the texts a user writes for points, ends,
/// exponent choices and series variables into the analysis's identities,
/// as every front end must read them alike.
pub mod command {
    pub use crate::cli::points::{asked_about, asked_recurrence, derive_record, read_choices, read_ends, read_link, read_point, read_series};
    pub use crate::cli::{flag, main_with_args, run_captured, Captured};
}
