//! `canonode classify`: singular points, exponents and the class of an equation.

use super::values::parse_assignments;
use super::{emit, report, Failure, Format, InputArgs};
use crate::algebra::GRat;
use crate::analysis::numeric::{evaluate, Values};
use crate::error::{Error, ErrorKind};
use clap::Args;

/// Arguments of `classify`.
#[derive(Args, Debug)]
pub(crate) struct ClassifyArgs {
    #[command(flatten)]
    input: InputArgs,
    /// Parameter values for numeric locations and exponents, e.g. 'M=1,a=0.5'.
    #[arg(long = "at", value_name = "NAME=VALUE,...")]
    at: Option<String>,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: Format,
}

pub(crate) fn run(a: &ClassifyArgs) -> u8 {
    let src = match a.input.read() {
        Ok(s) => s,
        Err(f) => return fail(&f, None, a),
    };
    match compute(a, &src) {
        Ok(text) => match emit(&text) {
            Ok(()) => 0,
            Err(f) => fail(&f, Some(&src), a),
        },
        Err(f) => fail(&f, Some(&src), a),
    }
}

fn compute(a: &ClassifyArgs, src: &super::Source) -> Result<String, Failure> {
    let red = crate::ode::reduce(&src.input(), &a.input.options())?;
    let an = crate::analysis::analyse(&red)?;
    let k = &red.field;
    let numeric = match &a.at {
        Some(text) => {
            let values = parse_assignments(text, "--at")?;
            let names = k.names();
            let mut point = vec![GRat::zero(); names.len()];
            let mut given = vec![false; names.len()];
            given[0] = true;
            for (n, v, span) in &values {
                match names.iter().skip(1).position(|x| x == n) {
                    Some(i) => {
                        point[i + 1] = v.clone();
                        given[i + 1] = true;
                    }
                    None => {
                        return Err(Error::new(
                            ErrorKind::Usage,
                            format!("'{n}' is not a parameter of the equation"),
                        )
                        .at(*span)
                        .in_option("--at")
                        .note(format!("the parameters are: {}", names[1..].join(", ")))
                        .into())
                    }
                }
            }
            let missing: Vec<&str> = names
                .iter()
                .zip(&given)
                .filter(|(_, g)| !**g)
                .map(|(n, _)| n.as_str())
                .collect();
            if !missing.is_empty() {
                return Err(Error::new(
                    ErrorKind::Usage,
                    format!("no value given for {}", missing.join(", ")),
                )
                .at(crate::syntax::Span::new(0, text.len()))
                .in_option("--at")
                .into());
            }
            Some(evaluate(&an, &Values::new(point), k))
        }
        None => None,
    };
    Ok(match a.format {
        Format::Json => format!(
            "{}\n",
            serde_json::to_string_pretty(&crate::emit::analysis_json(
                k,
                &red.var,
                &red.ode.params,
                &an,
                numeric.as_deref()
            ))
            .unwrap_or_default()
        ),
        _ => crate::emit::analysis_text(k, &red.var, &an, numeric.as_deref()),
    })
}

fn fail(f: &Failure, src: Option<&super::Source>, a: &ClassifyArgs) -> u8 {
    let extra: Vec<(String, String)> =
        a.at.iter()
            .map(|t| ("--at".to_string(), t.clone()))
            .collect();
    let (msg, code) = report(f, src, Some(&a.input), &extra);
    if !msg.is_empty() {
        eprintln!("{msg}");
    }
    code
}
