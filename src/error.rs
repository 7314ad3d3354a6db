//! Typed errors of the library. An error carries its kind, a byte span into
//! the text it came from, and a message; rendering the caret is the CLI's job.

use crate::syntax::Span;
use std::fmt;

/// Which text an error's span points into.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Origin {
    /// The equation file (or stdin, or the inline `-e` text).
    Input,
    /// The value of one input of the request (a command-line option, a
    /// keyword argument of the Python binding), e.g. the substitution.
    Option(RequestInput),
    /// The value of an input that only the front end knows (an option of the
    /// command line's own, a keyword argument); the string is the front
    /// end's name for it. The library itself never makes this origin.
    Named(String),
}

/// An input of a request that the library names in an error's origin or in
/// its prose ("give a seed with …"). The library never spells an input the
/// way a front end does: the command line renders each variant as its
/// option, the Python binding as its keyword argument ([`RequestInput::key`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum RequestInput {
    /// The point a series is taken about.
    About,
    /// The first value of a coupled problem's angular eigenvalue.
    AngularGuess,
    /// The values of the parameters.
    At,
    /// The substitution that moves infinity to 0.
    AtInfinity,
    /// The boundary conditions (quasinormal, bound, quasi-bound, periodic).
    Boundary,
    /// The angular equation of a coupled problem.
    Couple,
    /// The derivative dx/dz of the Schrödinger form's variable.
    Dxdz,
    /// The parameter the eikonal limit is taken in.
    EikonalParam,
    /// The ends of a boundary problem.
    Ends,
    /// The exponents chosen at the points of a canonical form.
    Exponents,
    /// The name of the spectral parameter.
    Frequency,
    /// A seed of the spectral parameter.
    Guess,
    /// Reading the input as LaTeX.
    Latex,
    /// The links between a coupled problem's equations; the number is the
    /// link's place (0 is the first link, and stands for the links in general).
    Link(usize),
    /// The exponential change of variable.
    Map,
    /// The numerical method.
    Method,
    /// The multipole parameter of a scattering sum.
    Multipole,
    /// The prefix of emitted names.
    Name,
    /// The real frequencies of a scattering run.
    Omega,
    /// The number of overtones.
    Overtones,
    /// The region of the complex plane searched for modes.
    Region,
    /// The series variable.
    Series,
    /// The substitution of the variable.
    Subst,
    /// The range of multipoles summed.
    SumL,
    /// The order of the WKB formula.
    WkbOrder,
}

/// Every input, in the order of [`RequestInput`]'s variants (links stand as the first).
pub const REQUEST_INPUTS: [RequestInput; 25] = [
    RequestInput::About,
    RequestInput::AngularGuess,
    RequestInput::At,
    RequestInput::AtInfinity,
    RequestInput::Boundary,
    RequestInput::Couple,
    RequestInput::Dxdz,
    RequestInput::EikonalParam,
    RequestInput::Ends,
    RequestInput::Exponents,
    RequestInput::Frequency,
    RequestInput::Guess,
    RequestInput::Latex,
    RequestInput::Link(0),
    RequestInput::Map,
    RequestInput::Method,
    RequestInput::Multipole,
    RequestInput::Name,
    RequestInput::Omega,
    RequestInput::Overtones,
    RequestInput::Region,
    RequestInput::Series,
    RequestInput::Subst,
    RequestInput::SumL,
    RequestInput::WkbOrder,
];

/// Opens a mention of an input inside library text (a private-use character).
const MENTION_OPEN: char = '\u{E000}';
/// Closes a mention of an input inside library text.
const MENTION_CLOSE: char = '\u{E001}';

impl RequestInput {
    /// The input's neutral name, in snake case: the Python keyword argument
    /// (a link's place is not part of it).
    pub fn key(self) -> &'static str {
        match self {
            RequestInput::About => "about",
            RequestInput::AngularGuess => "angular_guess",
            RequestInput::At => "at",
            RequestInput::AtInfinity => "at_infinity",
            RequestInput::Boundary => "boundary",
            RequestInput::Couple => "couple",
            RequestInput::Dxdz => "dxdz",
            RequestInput::EikonalParam => "eikonal_param",
            RequestInput::Ends => "ends",
            RequestInput::Exponents => "exponents",
            RequestInput::Frequency => "frequency",
            RequestInput::Guess => "guess",
            RequestInput::Latex => "latex",
            RequestInput::Link(_) => "link",
            RequestInput::Map => "map",
            RequestInput::Method => "method",
            RequestInput::Multipole => "multipole",
            RequestInput::Name => "name",
            RequestInput::Omega => "omega",
            RequestInput::Overtones => "overtones",
            RequestInput::Region => "region",
            RequestInput::Series => "series",
            RequestInput::Subst => "subst",
            RequestInput::SumL => "sum_l",
            RequestInput::WkbOrder => "wkb_order",
        }
    }

    /// The input named inside library prose: a typed mention that the front
    /// end replaces with its own spelling of the input ([`name_inputs`]).
    pub fn mention(self) -> String {
        match self {
            RequestInput::Link(i) => format!("{MENTION_OPEN}link#{i}{MENTION_CLOSE}"),
            other => format!("{MENTION_OPEN}{}{MENTION_CLOSE}", other.key()),
        }
    }

    /// The input a mention's inner text stands for.
    fn from_mention(inner: &str) -> Option<RequestInput> {
        if let Some(i) = inner.strip_prefix("link#") {
            return i.parse().ok().map(RequestInput::Link);
        }
        REQUEST_INPUTS.iter().copied().find(|r| !matches!(r, RequestInput::Link(_)) && r.key() == inner)
    }
}

/// `text` with every mention of an input ([`RequestInput::mention`]) spelled
/// by `name`; the front ends call it on every text of the library they show.
pub fn name_inputs(text: &str, name: impl Fn(RequestInput) -> String) -> String {
    if !text.contains(MENTION_OPEN) {
        return text.to_string();
    }
    let mut out = String::with_capacity(text.len());
    let mut rest = text;
    while let Some(i) = rest.find(MENTION_OPEN) {
        out.push_str(&rest[..i]);
        let after = &rest[i + MENTION_OPEN.len_utf8()..];
        match after.find(MENTION_CLOSE).and_then(|j| RequestInput::from_mention(&after[..j]).map(|r| (j, r))) {
            Some((j, r)) => {
                out.push_str(&name(r));
                rest = &after[j + MENTION_CLOSE.len_utf8()..];
            }
            None => {
                out.push(MENTION_OPEN);
                rest = after;
            }
        }
    }
    out.push_str(rest);
    out
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
    /// A value of the request (the parameters' values, a substitution, ...) that cannot be used.
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
    /// The same error with its span (if any) moved `offset` bytes later:
    /// for an error in a piece of a longer text.
    pub fn moved_by(mut self, offset: usize) -> Error {
        if let Some(s) = self.span {
            self.span = Some(Span::new(s.start + offset, s.end + offset));
        }
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
    /// The same error attributed to the text of one input of the request.
    pub fn in_option(mut self, input: RequestInput) -> Error {
        self.origin = Origin::Option(input);
        self
    }
    /// The same error attributed to the text of an input that only the
    /// front end knows, by the front end's own name for it.
    pub fn in_named(mut self, name: &str) -> Error {
        self.origin = Origin::Named(name.to_string());
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mentions_are_named_by_the_front_end() {
        let text = format!("give {} or {}; see {}", RequestInput::Guess.mention(), RequestInput::SumL.mention(), RequestInput::Link(2).mention());
        let named = name_inputs(&text, |r| match r {
            RequestInput::Link(i) => format!("link {i}"),
            other => other.key().to_uppercase(),
        });
        assert_eq!(named, "give GUESS or SUM_L; see link 2");
        for r in REQUEST_INPUTS {
            assert_eq!(RequestInput::from_mention(r.mention().trim_matches([MENTION_OPEN, MENTION_CLOSE])), Some(r));
        }
        // An unclosed or unknown mention is left as it is.
        let odd = format!("{MENTION_OPEN}nothing{MENTION_CLOSE} {MENTION_OPEN}guess");
        assert_eq!(name_inputs(&odd, |_| String::new()), odd);
    }
}
