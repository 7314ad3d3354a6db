//! `canonode record`: writes the derivation record of an equation file (see
//! `emit::record`), to stdout or to a `.deriv` file whose source path is then
//! written relative to the record's directory.

use super::{emit, report, Failure, InputArgs};
use clap::Args;
use std::path::{Component, Path, PathBuf};

/// Arguments of `record`.
#[derive(Args, Debug)]
pub(crate) struct RecordArgs {
    #[command(flatten)]
    input: InputArgs,
    /// Write the record to this file (conventionally FILE.deriv) instead of stdout;
    /// the source path in it is then relative to the file's directory.
    #[arg(short = 'o', long = "output", value_name = "FILE.deriv")]
    output: Option<String>,
    /// Record the recurrence about this point (as printed, e.g. '2*M') instead of the default rule.
    #[arg(long = "about", value_name = "POINT")]
    about: Option<String>,
    /// The series variable of that recurrence, 'u=EXPR' (as `recurrence --series`).
    #[arg(long = "series", value_name = "u=EXPR", requires = "about")]
    series: Option<String>,
    /// Exponent choices of that recurrence, POINT=CHOICE,… (as `recurrence --exponents`).
    #[arg(long = "exponents", value_name = "POINT=CHOICE,...", requires = "about")]
    exponents: Option<String>,
    /// Record the closed-form spectrum too, for these values of every parameter except the
    /// spectral one (as `spectrum --at`); they pick the exponents and branches.
    #[arg(long = "at", value_name = "NAME=VALUE,...")]
    at: Option<String>,
    /// With --at: the kind of spectrum (as `spectrum --boundary`).
    #[arg(long = "boundary", value_enum, default_value = "qnm", requires = "at")]
    boundary: crate::solve::request::Problem,
    /// With --at: the two ends and their conditions (as `spectrum --ends`).
    #[arg(long = "ends", value_name = "LEFT..RIGHT", allow_hyphen_values = true, requires = "at")]
    ends: Option<String>,
}

pub(crate) fn run(a: &RecordArgs) -> u8 {
    let extra: Vec<(String, String)> =
        [("--about", &a.about), ("--series", &a.series), ("--exponents", &a.exponents), ("--at", &a.at), ("--ends", &a.ends)]
            .iter()
            .filter_map(|(n, v)| v.as_ref().map(|v| (n.to_string(), v.clone())))
            .collect();
    let fail = |f: &Failure, src: Option<&super::Source>| -> u8 {
        let (msg, code) = report(f, src, Some(&a.input), &extra);
        if !msg.is_empty() {
            super::err_line(&msg);
        }
        code
    };
    if a.input.equation.is_some() || a.input.file.as_deref() == Some("-") {
        let msg = "error: a record names the file it was derived from: give an equation file, not -e or standard input";
        return fail(&Failure::Plain(msg.into(), 2), None);
    }
    let src = match a.input.read() {
        Ok(s) => s,
        Err(f) => return fail(&f, None),
    };
    let path = match &a.output {
        Some(out) => match relative_to_output(&src.name, out) {
            Ok(p) => p,
            Err(f) => return fail(&f, None),
        },
        None => src.name.replace(std::path::MAIN_SEPARATOR, "/"),
    };
    let req = crate::emit::record::RecurrenceRequest { about: a.about.clone(), series: a.series.clone(), exponents: a.exponents.clone() };
    if let Some(out) = &a.output {
        // Checked before the derivation, so that no work is lost to a bad path.
        if let Err(f) = super::options::writable(out, "--output") {
            return fail(&f, None);
        }
    }
    let spectral = match &a.at {
        Some(at) => match super::values::parse_assignments(at, "--at") {
            Ok(values) => {
                let ends = match &a.ends {
                    Some(t) => match super::points::read_ends(t) {
                        Ok(e) => Some((t.clone(), e)),
                        Err(e) => return fail(&e.in_named("--ends").into(), Some(&src)),
                    },
                    None => None,
                };
                Some(crate::emit::record::SpectralSetup { problem: a.boundary, ends, at: at.clone(), values })
            }
            Err(e) => return fail(&e.into(), Some(&src)),
        },
        None => None,
    };
    let derived = crate::algebra::budget::with_budget(crate::algebra::budget::DEFAULT_BUDGET, || {
        super::points::derive_record(&src.text, &path, &a.input.options(), &req, spectral.as_ref())
    });
    let rec = match derived {
        Ok(r) => r,
        Err(e) => return fail(&e.into(), Some(&src)),
    };
    let text = rec.render();
    let done = match &a.output {
        Some(out) => write_file(out, &text),
        None => emit(&text),
    };
    match done {
        Ok(()) => 0,
        Err(f) => fail(&f, Some(&src)),
    }
}

/// The path of `source` as seen from the directory of `output`, with `/`
/// separators, so that `check` finds the source wherever the two are moved together.
fn relative_to_output(source: &str, output: &str) -> Result<String, Failure> {
    let cannot = |what: &str, p: &Path, e: std::io::Error| Failure::Plain(format!("{}: error: cannot resolve the {what}: {e}", p.display()), 2);
    let src = Path::new(source).canonicalize().map_err(|e| cannot("source path", Path::new(source), e))?;
    let out_dir = match Path::new(output).parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let dir = out_dir.canonicalize().map_err(|e| cannot("output directory", &out_dir, e))?;
    let (s, d): (Vec<Component>, Vec<Component>) = (src.components().collect(), dir.components().collect());
    let common = s.iter().zip(&d).take_while(|(a, b)| a == b).count();
    let mut parts: Vec<String> = vec!["..".to_string(); d.len() - common];
    for c in &s[common..] {
        match c.as_os_str().to_str() {
            Some(t) => parts.push(t.to_string()),
            None => return Err(Failure::Plain(format!("{source}: error: the source path is not valid UTF-8"), 2)),
        }
    }
    Ok(parts.join("/"))
}

/// Writes `text` to `path` through a temporary file beside it, so that a
/// failed write never leaves a truncated record in place of a good one.
fn write_file(path: &str, text: &str) -> Result<(), Failure> {
    let tmp = format!("{path}.tmp{}", std::process::id());
    let res = std::fs::write(&tmp, text).and_then(|_| std::fs::rename(&tmp, path));
    res.map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        Failure::Plain(format!("{path}: error: cannot write the record: {e}"), 1)
    })
}
