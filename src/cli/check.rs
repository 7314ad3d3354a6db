//! `canonode check`: re-derives each derivation record from the source it
//! names with the recorded options and prints what changed as a unified
//! diff. Exit status 0 when every record holds, 1 when one changed (or on an
//! internal failure), 2 on bad input (an unreadable or malformed record, a
//! missing source); every file is checked and reported.

use super::{emit, Failure};
use crate::emit::diagnostic;
use crate::emit::record::{compare_named, Record};
use crate::error::{Error, ErrorKind, Origin};
use clap::Args;
use std::path::Path;

/// Arguments of `check`.
#[derive(Args, Debug)]
pub(crate) struct CheckArgs {
    /// The records to check.
    #[arg(value_name = "FILE.deriv", required = true)]
    records: Vec<String>,
}

pub(crate) fn run(a: &CheckArgs) -> u8 {
    let mut worst = 0u8;
    for file in &a.records {
        let code = match check_one(file) {
            Ok(code) => code,
            Err((msg, code)) => {
                if !msg.is_empty() {
                    super::err_line(msg.trim_end());
                }
                code
            }
        };
        // Bad input (2) outranks a changed derivation (1).
        worst = worst.max(code);
    }
    worst
}

/// Reads a file with the same limits and UTF-8 check as an equation file.
fn read(path: &str) -> Result<super::Source, Failure> {
    super::read_source(path)
}

fn plain(f: Failure) -> (String, u8) {
    match f {
        Failure::Plain(m, c) => (m, c),
        Failure::Lib(e) => {
            let code = if e.is_bad_input() { 2 } else { 1 };
            (e.message, code)
        }
    }
}

/// Checks one record: its exit status, or a rendered failure with its status.
fn check_one(file: &str) -> Result<u8, (String, u8)> {
    let rec_src = read(file).map_err(plain)?;
    let against_record = |e: &Error| (diagnostic::render(e, file, &rec_src.text), if e.is_bad_input() { 2 } else { 1 });
    let recorded = Record::parse(&rec_src.text).map_err(|e| against_record(&e))?;
    let rel = recorded.source_path().map_err(|e| against_record(&e))?;
    let dir = Path::new(file).parent().unwrap_or(Path::new(""));
    let source_file = dir.join(rel);
    let source_name = source_file.to_string_lossy().into_owned();
    let source = read(&source_name).map_err(|f| {
        let msg = plain(f).0;
        let why = msg.split_once(": error: ").map_or(msg.as_str(), |(_, w)| w);
        let why = format!("looked for {source_name}: {why}");
        let e = Error::new(ErrorKind::Record, format!("the source {rel} cannot be read"))
            .at(recorded.span("source.path").unwrap_or(crate::syntax::Span::new(0, 0)))
            .note(why);
        against_record(&e)
    })?;
    let opts = recorded.options().map_err(|e| against_record(&e))?;
    let spectral = recorded.spectral_texts().map_err(|e| against_record(&e))?;
    let recomputed = crate::algebra::budget::with_budget(crate::algebra::budget::DEFAULT_BUDGET, || {
        // The recorded values are read as `record --at` read them.
        let setup = match spectral {
            Some(t) => Some(crate::emit::record::SpectralSetup {
                problem: t.problem,
                values: super::values::parse_assignments(&t.at, "--at")?,
                ends: match t.ends {
                    Some(text) => {
                        let e = super::points::read_ends(&text).map_err(|e| e.in_option(crate::error::RequestInput::Ends))?;
                        Some((text, e))
                    }
                    None => None,
                },
                at: t.at,
            }),
            None => None,
        };
        super::points::derive_record(&source.text, rel, &opts, &recorded.recurrence_request(), setup.as_ref())
    })
    .map_err(|e| match &e.origin {
        // A recorded option's value that no longer works: point into the record's line.
        Origin::Option(_) | Origin::Named(_) => {
            let o = super::origin_flag(&e.origin).unwrap_or_default();
            let key = format!("option.{}", o.trim_start_matches('-'));
            let at = recorded.span(&key);
            let mut moved = Error { origin: Origin::Input, ..e.clone() };
            moved.span = match (at, e.span) {
                (Some(line), Some(s)) => Some(crate::syntax::Span::new(line.start + s.start, line.start + s.end)),
                (Some(line), None) => Some(line),
                (None, s) => s,
            };
            against_record(&moved)
        }
        Origin::Input => (diagnostic::render(&e, &source_name, &source.text), if e.is_bad_input() { 2 } else { 1 }),
    })?;
    let cmp = compare_named(&recorded, &recomputed, &format!("{file} (recorded)"), &format!("{file} (recomputed from {source_name})"));
    let mut out = String::new();
    if let Some((old, new)) = &cmp.version {
        out.push_str(&format!("{file}: note: recorded with canonode {old}, checked with {new} (the version is not compared)\n"));
    }
    let code = if cmp.holds() {
        out.push_str(&format!("{file}: holds\n"));
        0
    } else {
        out.push_str(&format!("{file}: changed: {}\n", cmp.changed.join(", ")));
        let closed: Vec<&str> = cmp.changed.iter().filter(|k| k.starts_with("closed.")).map(String::as_str).collect();
        if !closed.is_empty() {
            out.push_str(&format!("{file}: the closed-form spectrum re-derived does not match the recorded one ({})\n", closed.join(", ")));
        }
        out.push_str(&cmp.diff);
        if !cmp.diff.ends_with('\n') {
            out.push('\n');
        }
        1
    };
    match emit(&out) {
        Ok(()) => Ok(code),
        Err(f) => Err(plain(f)),
    }
}
