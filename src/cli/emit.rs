//! `canonode emit`: C or Rust source evaluating Q, the Schrödinger potential
//! and the recurrence coefficients in complex double precision, each form
//! verified exactly before it is written; `--stats` prints operation counts.

use super::recurrence::SeriesArgs;
use super::{run_command, Failure, InputArgs};
use crate::emit::code::{emit_code, emit_functions, prefix_from_source, CodeRequest, EmitWhat, Lang};
use clap::Args;

/// Arguments of `emit`.
#[derive(Args, Debug)]
pub(crate) struct EmitArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The language of the source.
    #[arg(long = "lang", value_enum)]
    lang: Lang,
    /// Which functions.
    #[arg(long = "what", value_enum, default_value = "q")]
    what: EmitWhat,
    /// Prefix of every emitted name (default: from the file name).
    #[arg(long = "name", value_name = "PREFIX")]
    name: Option<String>,
    /// Write the source to FILE instead of standard output.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    output: Option<String>,
    /// Print operation counts (emitted, plain Horner, naive) instead of the source
    /// (the source is still written when -o is given).
    #[arg(long = "stats")]
    stats: bool,
    /// The expansion point of the recurrence, as `classify` prints it.
    #[arg(long = "about", value_name = "POINT")]
    about: Option<String>,
    #[command(flatten)]
    series: SeriesArgs,
}

pub(crate) fn run(a: &EmitArgs) -> u8 {
    let extra = a.series.option_texts(a.about.as_deref().unwrap_or(""));
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn compute(a: &EmitArgs, src: &super::Source) -> Result<String, Failure> {
    let needs = |what: &str, option: &str| Failure::Plain(format!("error: --what {what} needs {option}"), 2);
    if a.what == EmitWhat::Potential && a.input.dxdz.is_none() {
        return Err(needs("potential", "--dxdz EXPR (dx/dz of the Schrödinger form, e.g. '1/f')"));
    }
    if a.what == EmitWhat::Recurrence && a.about.is_none() {
        return Err(needs("recurrence", "--about POINT (the expansion point, as `classify` prints it)"));
    }
    let prefix = a.name.clone().unwrap_or_else(|| prefix_from_source(&src.name));
    if !crate::emit::code::valid_prefix(&prefix) {
        return Err(Failure::Plain(
            format!("error: --name '{prefix}' is not an identifier: use ASCII letters, digits and _, not starting with a digit"),
            2,
        ));
    }
    let red = a.input.reduce(src)?;
    let rec = match (&a.about, matches!(a.what, EmitWhat::Recurrence | EmitWhat::All)) {
        (Some(about), true) => Some(a.series.derive(&red, about, a.input.frequency_index(&red)?)?),
        _ => None,
    };
    let (functions, skipped, params) = emit_functions(&red, &src.name, a.input.dxdz.as_deref(), a.what, rec.as_ref());
    let req = CodeRequest { lang: a.lang, prefix, source: src.name.clone(), params, functions, skipped, limits: Default::default() };
    let out = emit_code(&req)?;
    if let Some(path) = &a.output {
        std::fs::write(path, &out.text).map_err(|e| Failure::Plain(format!("{path}: error: cannot write the file: {e}"), 1))?;
    }
    if a.stats {
        let mut s = String::from("function    form            mul  (const)  add  div  total  flops\n");
        for (kind, ch) in &out.choices {
            for (form, c) in [("naive", ch.naive), ("plain Horner", ch.horner), ("emitted", ch.emitted)] {
                s.push_str(&format!(
                    "{:<11} {:<14} {:>4} {:>8} {:>4} {:>4} {:>6} {:>6}\n",
                    kind.suffix(),
                    form,
                    c.mul,
                    c.scale,
                    c.add,
                    c.div,
                    c.total(),
                    c.flops()
                ));
            }
            s.push_str(&format!(
                "  ({}: chosen {}; e-graph {} nodes, {} iterations, stop: {})\n",
                kind.suffix(),
                ch.origin,
                ch.egraph_nodes,
                ch.iterations,
                ch.stop
            ));
        }
        return Ok(s);
    }
    if a.output.is_some() {
        return Ok(String::new());
    }
    Ok(out.text)
}
