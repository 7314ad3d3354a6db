//! `canonode eval`: Q evaluated exactly at a point, printed in double precision.

use super::values::{fmt_complex, parse_assignments};
use super::{run_command, Failure, Format, InputArgs};
use crate::algebra::GRat;
use crate::error::{Error, ErrorKind};
use clap::Args;

/// Arguments of `eval`.
#[derive(Args, Debug)]
pub(crate) struct EvalArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The point: a value for the variable and every parameter, e.g. 'r=3.1,M=1,omega=0.37-0.089i'.
    #[arg(long = "at", value_name = "NAME=VALUE,...")]
    at: String,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: Format,
}

pub(crate) fn run(a: &EvalArgs) -> u8 {
    let extra = [("--at".to_string(), a.at.clone())];
    run_command(&a.input, &extra, |src| {
        let (point, re, im) = compute(a, src)?;
        Ok(match a.format {
            Format::Json => format!("{}\n", serde_json::json!({ "Q": [re, im] })),
            Format::Latex => crate::emit::value_latex(&point, re, im),
            Format::Text => format!("Q = {}\n", fmt_complex(re, im)),
        })
    })
}

/// The point (names in the equation's order with their exact values) and Q there.
type Evaluated = (Vec<(String, GRat)>, f64, f64);

fn compute(a: &EvalArgs, src: &super::Source) -> Result<Evaluated, Failure> {
    let values = parse_assignments(&a.at, "--at")?;
    let red = a.input.reduce(src)?;
    let names = red.field.names();
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    for (n, v, span) in &values {
        match names.iter().position(|x| x == n) {
            Some(i) => {
                point[i] = v.clone();
                given[i] = true;
            }
            None => {
                return Err(Error::new(ErrorKind::Usage, format!("'{n}' is neither the variable nor a parameter of the equation"))
                    .at(*span)
                    .in_named("--at")
                    .note(format!("the names are: {}", names.join(", ")))
                    .into())
            }
        }
    }
    let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
    if !missing.is_empty() {
        return Err(Error::new(ErrorKind::Usage, format!("no value given for {}", missing.join(", ")))
            .at(crate::syntax::Span::new(0, a.at.len()))
            .in_named("--at")
            .into());
    }
    let q = red.normal.q.eval(&point).ok_or_else(|| {
        Error::new(ErrorKind::Usage, "Q has a pole at this point: its denominator vanishes there")
            .at(crate::syntax::Span::new(0, a.at.len()))
            .in_named("--at")
    })?;
    let (re, im) = q.to_f64();
    if !(re.is_finite() && im.is_finite()) {
        return Err(Error::new(ErrorKind::Limit, "Q at this point is beyond double precision (its magnitude exceeds about 1.8e308)")
            .at(crate::syntax::Span::new(0, a.at.len()))
            .in_named("--at")
            .into());
    }
    Ok((names.iter().cloned().zip(point).collect(), re, im))
}
