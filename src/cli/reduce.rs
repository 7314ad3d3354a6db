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
        let red = a.input.reduce(src)?;
        Ok(match a.format {
            Format::Text => crate::emit::reduction_text(&red, &src.name),
            Format::Latex => crate::emit::reduction_latex(&red),
            Format::Json => format!("{}\n", serde_json::to_string_pretty(&crate::emit::reduction_json(&red)).unwrap_or_default()),
        })
    })
}
