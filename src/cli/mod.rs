//! The command line: the only module that reads files, writes to the
//! terminal or chooses an exit status. Each subcommand is one file with a
//! `run` function; this file holds the argument definitions shared by them.

mod check;
mod classify;
mod emit;
mod eval;
mod merge;
mod mode_file;
mod options;
pub(crate) mod points;
mod record;
mod recurrence;
mod reduce;
mod region;
mod scan;
mod scatter;
mod spectrum;
mod table;
mod values;

use crate::emit::diagnostic;
use crate::error::{Error, ErrorKind, Origin, RequestInput};
use crate::ode::{Input, ReduceOptions};
use clap::{Args, Parser, Subcommand, ValueEnum};
use std::ffi::OsString;
use std::io::{Read, Write};
use std::process::ExitCode;

/// Exact normal forms of linear second-order ODEs from pasted text.
#[derive(Parser, Debug)]
#[command(name = "canonode", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Derive the standard form, the normal form ψ'' + Qψ = 0, its principal parts and the prefactor.
    Reduce(reduce::ReduceArgs),
    /// Evaluate Q at a point: every variable and parameter given a (complex) value.
    Eval(eval::EvalArgs),
    /// Singular points with their kinds, ranks and exponents, and the class of the equation.
    Classify(classify::ClassifyArgs),
    /// The series recurrence about a regular singular point (Frobenius/Jaffé-type ansatz).
    Recurrence(recurrence::RecurrenceArgs),
    /// Quasinormal modes (continued fraction, checked by direct integration), bound states, coupled equations.
    Spectrum(spectrum::SpectrumArgs),
    /// Quasinormal modes over a survey of one or more parameters (parallel, continuation, streamed tables, resume, shards, SVG/PNG plot).
    Scan(scan::ScanArgs),
    /// Put the tables of a sharded scan back into one, checking that every point is there once and the modes continue across the shards.
    Merge(merge::MergeArgs),
    /// Transmission and reflection (greybody factors) at real frequencies, absorption cross-sections (parallel, streamed).
    Scatter(scatter::ScatterArgs),
    /// Write a derivation record (plain text, one field a line) to commit beside a paper's code.
    Record(record::RecordArgs),
    /// Re-derive derivation records from their sources and show what changed as a unified diff.
    Check(check::CheckArgs),
    /// C or Rust source evaluating Q, the potential and recurrence coefficients (verified exactly).
    Emit(emit::EmitArgs),
}

/// Output formats.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum Format {
    /// Plain text in the input language's notation.
    Text,
    /// LaTeX (amsmath).
    Latex,
    /// JSON with a stable schema.
    Json,
}

/// Where the equation comes from, and the transformations applied to it.
#[derive(Args, Debug, Clone)]
pub(crate) struct InputArgs {
    /// The equation file, or '-' for standard input.
    #[arg(value_name = "FILE", required_unless_present = "equation")]
    file: Option<String>,
    /// An inline equation 'LHS = RHS' instead of a file; undeclared names become parameters.
    #[arg(short = 'e', long = "equation", value_name = "EQUATION", conflicts_with = "file", allow_hyphen_values = true)]
    equation: Option<String>,
    /// The independent variable of an inline equation.
    #[arg(long = "var", value_name = "NAME", default_value = "z", requires = "equation")]
    var: String,
    /// Read the input as LaTeX mathematics (implied by a file name ending in .tex).
    #[arg(long = "latex")]
    latex: bool,
    /// Change the variable: OLD=EXPR, with EXPR rational in a new variable (e.g. 'z=1/t').
    #[arg(long = "subst", value_name = "OLD=EXPR", conflicts_with = "at_infinity")]
    subst: Option<String>,
    /// Look at the point at infinity through z = 1/t.
    #[arg(long = "at-infinity")]
    at_infinity: bool,
    /// dx/dz for the Schrödinger form, in the equation's variable (e.g. '1/f' for the tortoise coordinate).
    #[arg(long = "dxdz", value_name = "EXPR")]
    dxdz: Option<String>,
    /// Name the change of variable for exp/sinh/cosh/tanh/sech/sin/cos/tan coefficients: NEW=exp(ARG), e.g. 'zeta=exp(2*alpha*x)'.
    #[arg(long = "map", value_name = "NEW=exp(ARG)")]
    map: Option<String>,
    /// The frequency parameter ω in V = ω² − W (default: omega, ω or w when declared).
    #[arg(long = "frequency", value_name = "NAME")]
    frequency: Option<String>,
}

/// The text of the input and its display name.
pub(crate) struct Source {
    pub name: String,
    pub text: String,
    pub inline_var: Option<String>,
    /// True when the text is LaTeX mathematics.
    pub latex: bool,
}

impl Source {
    pub(crate) fn input(&self) -> Input<'_> {
        match (&self.inline_var, self.latex) {
            (_, true) => Input::Latex(&self.text),
            (Some(v), false) => Input::Inline { equation: &self.text, var: v },
            (None, false) => Input::Program(&self.text),
        }
    }
}

/// A failure to report: a library error with the text it points into, or an I/O problem.
pub(crate) enum Failure {
    /// An error of the library, rendered against its source.
    Lib(Error),
    /// A message with its exit status.
    Plain(String, u8),
}

impl From<Error> for Failure {
    fn from(e: Error) -> Failure {
        Failure::Lib(e)
    }
}

impl InputArgs {
    pub(crate) fn read(&self) -> Result<Source, Failure> {
        if let Some(eq) = &self.equation {
            return Ok(Source { name: "<equation>".into(), text: eq.clone(), inline_var: Some(self.var.clone()), latex: self.latex });
        }
        let mut src = read_source(&self.file.clone().unwrap_or_else(|| "-".into()))?;
        src.latex |= self.latex;
        Ok(src)
    }
}

/// Reads an input file ('-' for standard input): size-limited, UTF-8 checked.
pub(crate) fn read_source(file: &str) -> Result<Source, Failure> {
    let file = file.to_string();
    let limit = crate::syntax::ParseLimits::default().max_bytes as u64;
    let mut bytes = Vec::new();
    let res = if file == "-" {
        std::io::stdin().take(limit + 1).read_to_end(&mut bytes)
    } else {
        std::fs::File::open(&file).and_then(|f| f.take(limit + 1).read_to_end(&mut bytes))
    };
    if let Err(e) = res {
        return Err(Failure::Plain(format!("{file}: error: cannot read the file: {e}"), 2));
    }
    let name = if file == "-" { "<stdin>".to_string() } else { file };
    if bytes.len() as u64 > limit {
        return Err(Failure::Plain(format!("{name}: error: the input is larger than the limit of {limit} bytes"), 2));
    }
    match String::from_utf8(bytes) {
        Ok(text) => {
            let latex = name.ends_with(".tex");
            Ok(Source { name, text, inline_var: None, latex })
        }
        Err(e) => {
            let at = e.utf8_error().valid_up_to();
            let text = String::from_utf8_lossy(e.as_bytes()).into_owned();
            let err = Error::new(ErrorKind::Syntax, "the input is not valid UTF-8").at(crate::syntax::Span::new(at, at + 1));
            Err(Failure::Plain(diagnostic::render(&err, &name, &text).trim_end().to_string(), 2))
        }
    }
}

impl InputArgs {
    /// The reduction every command starts from, with the notes a user of the
    /// inline or LaTeX form needs on stderr: the names taken as parameters,
    /// and a warning when the variable does not occur in the coefficients
    /// while a parameter looks like it could be the variable.
    pub(crate) fn reduce(&self, src: &Source) -> Result<crate::ode::Reduction, Failure> {
        let opts = self.options();
        let red = crate::ode::reduce(&src.input(), &opts)?;
        for line in inference_notes(&red, src.inline_var.is_some() || src.latex) {
            eprintln!("{line}");
        }
        if let Some(map) = &red.map {
            eprintln!(
                "note: change of variable {} (transcendental coefficients made rational; the equation is in {})",
                crate::ode::exp_map_text(map, &red.ode),
                map.new_var
            );
        }
        Ok(red)
    }

    pub(crate) fn options(&self) -> ReduceOptions {
        ReduceOptions {
            subst: self.subst.clone(),
            at_infinity: self.at_infinity,
            dxdz: self.dxdz.clone(),
            frequency: self.frequency_name(),
            map: self.map.clone(),
            ..ReduceOptions::default()
        }
    }

    /// The frequency parameter named with --frequency.
    /// A name as LaTeX writes it (`\omega`) is the equation's name for it.
    pub(crate) fn frequency_name(&self) -> Option<String> {
        self.frequency.as_deref().map(values::param_name)
    }

    /// The field index of the parameter named with --frequency (`None`
    /// when not given), or an error when it is not a parameter of `red`.
    pub(crate) fn frequency_index(&self, red: &crate::ode::Reduction) -> Result<Option<usize>, Failure> {
        let Some(name) = self.frequency_name() else { return Ok(None) };
        match red.field.names().iter().skip(1).position(|n| *n == name) {
            Some(i) => Ok(Some(i + 1)),
            None => Err(crate::error::Error::new(crate::error::ErrorKind::Usage, format!("'{name}' is not a parameter of the equation"))
                .in_option(crate::error::RequestInput::Frequency)
                .into()),
        }
    }

    /// The text a command-line option's error points into.
    pub(crate) fn option_text(&self, option: &str) -> Option<String> {
        match option {
            "--subst" => self.subst.clone(),
            "--at-infinity" => Some(String::new()),
            "--dxdz" => self.dxdz.clone(),
            "--frequency" => self.frequency.clone(),
            "--map" => self.map.clone(),
            _ => None,
        }
    }
}

/// The notes on inferred names for an input whose names were inferred.
pub(crate) fn inference_notes(red: &crate::ode::Reduction, inferred_input: bool) -> Vec<String> {
    let mut out = Vec::new();
    if !inferred_input {
        return out;
    }
    // The variable as written; under a map, the one the equation is solved in too.
    let var = match &red.map {
        Some(m) => format!("{} (solved in {}, see the change of variable)", m.old_var, red.ode.var),
        None => red.ode.var.clone(),
    };
    if !red.ode.inferred.is_empty() {
        out.push(format!("note: variable {var}, unknown {}, inferred parameters: {}", red.ode.unknown, red.ode.inferred.join(", ")));
    } else {
        out.push(format!("note: variable {var}, unknown {}", red.ode.unknown));
    }
    if !red.ode.p.uses_var(0) && !red.ode.q.uses_var(0) {
        // Names physicists use for a variable, most common first.
        const LIKELY: &[&str] = &["r", "x", "z", "t", "u", "rs", "r_star", "rho", "theta", "zeta", "y", "s"];
        let candidate = LIKELY.iter().find(|n| red.ode.inferred.iter().any(|p| p == *n));
        match candidate {
            Some(c) => out.push(format!(
                "warning: the variable '{}' does not occur in the coefficients, while '{c}' is taken as a parameter: did you mean --var {c}?",
                red.ode.var
            )),
            None => out.push(format!("warning: the variable '{}' does not occur in the coefficients: they are constants", red.ode.var)),
        }
    }
    out
}

/// The command line's option for an input of the request: the one place
/// that spells the library's inputs as options.
pub fn flag(input: RequestInput) -> String {
    let name = match input {
        RequestInput::About => "--about",
        RequestInput::AngularGuess => "--angular-guess",
        RequestInput::At => "--at",
        RequestInput::AtInfinity => "--at-infinity",
        RequestInput::Boundary => "--boundary",
        RequestInput::Couple => "--couple",
        RequestInput::Dxdz => "--dxdz",
        RequestInput::EikonalParam => "--eikonal-param",
        RequestInput::Ends => "--ends",
        RequestInput::Exponents => "--exponents",
        RequestInput::Frequency => "--frequency",
        RequestInput::Guess => "--guess",
        RequestInput::Latex => "--latex",
        RequestInput::Link(0) => "--link",
        RequestInput::Link(i) => return format!("--link #{}", i + 1),
        RequestInput::Map => "--map",
        RequestInput::Method => "--method",
        RequestInput::Multipole => "--multipole",
        RequestInput::Name => "--name",
        RequestInput::Omega => "--omega",
        RequestInput::Overtones => "--overtones",
        RequestInput::Region => "--region",
        RequestInput::Series => "--series",
        RequestInput::Subst => "--subst",
        RequestInput::SumL => "--sum-l",
        RequestInput::WkbOrder => "--wkb-order",
    };
    name.to_string()
}

/// The option an error's origin names, if it names one.
pub(crate) fn origin_flag(origin: &Origin) -> Option<String> {
    match origin {
        Origin::Input => None,
        Origin::Option(r) => Some(flag(*r)),
        Origin::Named(n) => Some(n.clone()),
    }
}

/// The library's text with its mentions of inputs spelled as options.
pub(crate) fn named(text: &str) -> String {
    crate::error::name_inputs(text, flag)
}

/// Renders a failure for stderr and gives its exit status.
pub(crate) fn report(f: &Failure, src: Option<&Source>, args: Option<&InputArgs>, extra: &[(String, String)]) -> (String, u8) {
    match f {
        Failure::Plain(m, code) => (m.clone(), *code),
        Failure::Lib(e) => {
            let code = if e.is_bad_input() { 2 } else { 1 };
            let text = match &e.origin {
                Origin::Input => match src {
                    Some(s) => diagnostic::render(e, &s.name, &s.text),
                    None => diagnostic::render(e, "<input>", ""),
                },
                Origin::Option(_) | Origin::Named(_) => {
                    let o = origin_flag(&e.origin).unwrap_or_default();
                    let t = args
                        .and_then(|a| a.option_text(&o))
                        .or_else(|| extra.iter().find(|(n, _)| *n == o).map(|(_, t)| t.clone()))
                        .unwrap_or_default();
                    diagnostic::render(e, &o, &t)
                }
            };
            (text.trim_end().to_string(), code)
        }
    }
}

/// The shape every subcommand shares: read the input, compute the text,
/// print it; on failure render the error against the text it points into
/// (the input or one of the `extra` option values) and return its status.
pub(crate) fn run_command(input: &InputArgs, extra: &[(String, String)], compute: impl FnOnce(&Source) -> Result<String, Failure>) -> u8 {
    let fail = |f: &Failure, src: Option<&Source>| -> u8 {
        let (msg, code) = report(f, src, Some(input), extra);
        if !msg.is_empty() {
            err_line(&msg);
        }
        code
    };
    let src = match input.read() {
        Ok(s) => s,
        Err(f) => return fail(&f, None),
    };
    // The exact work of one command is bounded (a limit error, not minutes of arithmetic).
    let computed = crate::algebra::budget::with_budget(crate::algebra::budget::DEFAULT_BUDGET, || compute(&src));
    match computed.and_then(|text| emit(&text)) {
        Ok(()) => 0,
        Err(f) => fail(&f, Some(&src)),
    }
}

thread_local! {
    /// Standard output and error of an in-process run ([`run_captured`]);
    /// `None` when they go to the terminal.
    static CAPTURE: std::cell::RefCell<Option<(String, String)>> = const { std::cell::RefCell::new(None) };
}

/// True while an in-process run captures the output on this thread.
pub(crate) fn capturing() -> bool {
    CAPTURE.with(|c| c.borrow().is_some())
}

/// Writes a message and a newline to standard error (or the capture).
pub(crate) fn err_line(msg: &str) {
    let msg = &named(msg);
    let captured = CAPTURE.with(|c| match c.borrow_mut().as_mut() {
        Some((_, err)) => {
            err.push_str(msg);
            err.push('\n');
            true
        }
        None => false,
    });
    if !captured {
        eprintln!("{msg}");
    }
}

/// Writes to stdout; a closed pipe ends the program quietly.
pub(crate) fn emit(text: &str) -> Result<(), Failure> {
    let text = &named(text);
    let captured = CAPTURE.with(|c| match c.borrow_mut().as_mut() {
        Some((out, _)) => {
            out.push_str(text);
            true
        }
        None => false,
    });
    if captured {
        return Ok(());
    }
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Err(Failure::Plain(String::new(), 0)),
        Err(e) => Err(Failure::Plain(format!("error: cannot write the output: {e}"), 1)),
    }
}

/// Runs the program on the given arguments and returns its exit status. The
/// work runs on a thread with a large stack so that deeply nested (but
/// within-limit) input cannot overflow it.
pub fn main_with_args(args: Vec<OsString>) -> ExitCode {
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    let worker = std::thread::Builder::new().stack_size(512 << 20).spawn(move || run(cli));
    let code = match worker.map(|h| h.join()) {
        Ok(Ok(code)) => code,
        Ok(Err(_)) => {
            eprintln!("error: internal failure (a bug in canonode; please report it with the input)");
            1
        }
        Err(e) => {
            eprintln!("error: cannot start the worker thread: {e}");
            1
        }
    };
    ExitCode::from(code)
}

/// What an in-process run printed, and its exit status.
#[derive(Clone, Debug, Default)]
pub struct Captured {
    /// The exit status (0 success, 1 internal failure or a changed record, 2 bad input).
    pub code: u8,
    /// Everything written to standard output.
    pub stdout: String,
    /// Everything written to standard error.
    pub stderr: String,
}

/// Runs the program on the given arguments (the first is the program name)
/// on the calling thread and returns what it printed: the same work and
/// messages as the binary, for tests that drive every subcommand in
/// process. Files named by the arguments are still read and written. The
/// caller provides a thread with a large stack when the input may nest
/// deeply, as the binary does.
pub fn run_captured(args: Vec<OsString>) -> Captured {
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let text = e.render().to_string();
            let (stdout, stderr) = if code == 0 { (text, String::new()) } else { (String::new(), text) };
            return Captured { code, stdout, stderr };
        }
    };
    CAPTURE.with(|c| *c.borrow_mut() = Some((String::new(), String::new())));
    // The capture is taken back even when the command panics, so that a
    // later run on this thread prints normally.
    struct Reset;
    impl Drop for Reset {
        fn drop(&mut self) {
            let _ = CAPTURE.try_with(|c| c.borrow_mut().take());
        }
    }
    let reset = Reset;
    let code = run(cli);
    let (stdout, stderr) = CAPTURE.with(|c| c.borrow_mut().take()).unwrap_or_default();
    drop(reset);
    Captured { code, stdout, stderr }
}

fn run(cli: Cli) -> u8 {
    match cli.command {
        Command::Reduce(a) => reduce::run(&a),
        Command::Eval(a) => eval::run(&a),
        Command::Classify(a) => classify::run(&a),
        Command::Recurrence(a) => recurrence::run(&a),
        Command::Spectrum(a) => spectrum::run(&a),
        Command::Scan(a) => scan::run(&a),
        Command::Merge(a) => merge::run(&a),
        Command::Scatter(a) => scatter::run(&a),
        Command::Record(a) => record::run(&a),
        Command::Check(a) => check::run(&a),
        Command::Emit(a) => emit::run(&a),
    }
}
