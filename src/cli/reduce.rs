//! `canonode reduce`: prints the derivation of the normal form.

use super::{run_command, Format, InputArgs};
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
    run_command(&a.input, &[], |src| {
        let red = crate::ode::reduce(&src.input(), &a.input.options())?;
        if !red.ode.inferred.is_empty() && a.format != Format::Text {
            super::err_line(&format!("note: inferred parameters: {}", red.ode.inferred.join(", ")));
        }
        Ok(match a.format {
            Format::Text => crate::emit::reduction_text(&red, &src.name),
            Format::Latex => crate::emit::reduction_latex(&red),
            Format::Json => format!("{}\n", serde_json::to_string_pretty(&crate::emit::reduction_json(&red)).unwrap_or_default()),
        })
    })
}
