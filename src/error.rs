//! Typed errors of the library. An error carries its kind, a byte span into
//! the text it came from, and a message; rendering the caret is the CLI's job.

use crate::syntax::Span;
use std::fmt;

/// Which text an error's span points into.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Origin {
    /// The equation file (or stdin, or the inline `-e` text).
    Input,
    /// The value of a command-line option, e.g. `--subst`; the string names the option.
    Option(String),
}

/// What went wrong, broadly. Bad input is everything but [`ErrorKind::Internal`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum ErrorKind {
    /// The text does not follow the grammar.
    Syntax,
    /// A name that was never declared.
    UnknownName,
    /// A statement that breaks the file's structure (two `var` lines, no `ode`, ...).
    Structure,
    /// The equation is not linear in the unknown.
    Nonlinear,
    /// The equation has a term free of the unknown.
    Inhomogeneous,
    /// The equation has no second derivative of the unknown.
    NotSecondOrder,
    /// A coefficient is not a rational function of the variable (and parameters).
    NotRational,
    /// A division by something that is identically zero.
    DivisionByZero,
    /// A size limit (degree, terms, coefficient size, nesting depth, input size) was hit.
    Limit,
    /// A command-line value (`--at`, `--subst`, ...) that cannot be used.
    Usage,
    /// A derivation record (`.deriv` file) that does not follow its format.
    Record,
    /// A failure of canonode itself, not of the input.
    Internal,
}

/// A canonode error.
#[derive(Clone, Debug, PartialEq)]
pub struct Error {
    /// The kind of failure.
    pub kind: ErrorKind,
    /// What failed, in one sentence (lower case start, no final period).
    pub message: String,
    /// Where, as a byte range into the text named by `origin`; `None` when no place applies.
    pub span: Option<Span>,
    /// Which text the span points into.
    pub origin: Origin,
    /// Further lines of help: what was expected, or why.
    pub notes: Vec<String>,
}

impl Error {
    /// A new error of `kind` with `message`, pointing nowhere yet.
    pub fn new(kind: ErrorKind, message: impl Into<String>) -> Error {
        Error { kind, message: message.into(), span: None, origin: Origin::Input, notes: Vec::new() }
    }
    /// The same error pointing at `span`.
    pub fn at(mut self, span: Span) -> Error {
        self.span = Some(span);
        self
    }
    /// The same error with a span only if it has none yet.
    pub fn or_at(mut self, span: Span) -> Error {
        if self.span.is_none() {
            self.span = Some(span);
        }
        self
    }
    /// The same error with an extra note.
    pub fn note(mut self, note: impl Into<String>) -> Error {
        self.notes.push(note.into());
        self
    }
    /// The same error attributed to a command-line option's text.
    pub fn in_option(mut self, option: &str) -> Error {
        self.origin = Origin::Option(option.to_string());
        self
    }
    /// True when the input (not canonode) is at fault.
    pub fn is_bad_input(&self) -> bool {
        self.kind != ErrorKind::Internal
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for Error {}

/// Results of the library.
pub type Result<T> = std::result::Result<T, Error>;
