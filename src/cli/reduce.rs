//! `canonode reduce`: prints the derivation of the normal form.

use super::{emit, report, Failure, Format, InputArgs};
use clap::Args;

/// Arguments of `reduce`.
#[derive(Args, Debug)]
pub(crate) struct ReduceArgs {
    #[command(flatten)]
    input: InputArgs,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: Format,
}

pub(crate) fn run(a: &ReduceArgs) -> u8 {
    let src = match a.input.read() {
        Ok(s) => s,
        Err(f) => return fail(&f, None, a),
    };
    let result = crate::ode::reduce(&src.input(), &a.input.options());
    let red = match result {
        Ok(r) => r,
        Err(e) => return fail(&Failure::Lib(e), Some(&src), a),
    };
    let text = match a.format {
        Format::Text => crate::emit::reduction_text(&red, &src.name),
        Format::Latex => crate::emit::reduction_latex(&red),
        Format::Json => format!("{}\n", serde_json::to_string_pretty(&crate::emit::reduction_json(&red)).unwrap_or_default()),
    };
    if !red.ode.inferred.is_empty() && a.format != Format::Text {
        eprintln!("note: inferred parameters: {}", red.ode.inferred.join(", "));
    }
    match emit(&text) {
        Ok(()) => 0,
        Err(f) => fail(&f, Some(&src), a),
    }
}

fn fail(f: &Failure, src: Option<&super::Source>, a: &ReduceArgs) -> u8 {
    let (msg, code) = report(f, src, Some(&a.input), &[]);
    if !msg.is_empty() {
        eprintln!("{msg}");
    }
    code
}
