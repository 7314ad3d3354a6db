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
    /// Exponent choices for the canonical form: POINT=CHOICE,... with POINT as printed
    /// (e.g. '0', '2*M', 'inf') and CHOICE 1 or 2 (the order in which exponents are listed).
    #[arg(long = "exponents", value_name = "POINT=CHOICE,...")]
    exponents: Option<String>,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: Format,
}

fn parse_choices(text: Option<&str>) -> Result<crate::analysis::canonical::Choices, Failure> {
    let mut c = crate::analysis::canonical::Choices::default();
    let Some(text) = text else { return Ok(c) };
    let mut start = 0;
    for piece in text.split(',') {
        let span = crate::syntax::Span::new(start, start + piece.len());
        start += piece.len() + 1;
        if piece.trim().is_empty() {
            continue;
        }
        let Some((pt, ch)) = piece.rsplit_once('=') else {
            return Err(Error::new(ErrorKind::Usage, "expected POINT=CHOICE, e.g. 0=2 or inf=1").at(span).in_option("--exponents").into());
        };
        let Ok(n) = ch.trim().parse::<usize>() else {
            return Err(Error::new(ErrorKind::Usage, format!("'{}' is not a choice: write 1 or 2", ch.trim()))
                .at(span)
                .in_option("--exponents")
                .into());
        };
        if n != 1 && n != 2 {
            return Err(Error::new(ErrorKind::Usage, format!("choice {n} does not exist: each point has exponents 1 and 2"))
                .at(span)
                .in_option("--exponents")
                .into());
        }
        c.picks.push((pt.trim().to_string(), n));
    }
    Ok(c)
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
    let mut values_point = None;
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
                        return Err(Error::new(ErrorKind::Usage, format!("'{n}' is not a parameter of the equation"))
                            .at(*span)
                            .in_option("--at")
                            .note(format!("the parameters are: {}", names[1..].join(", ")))
                            .into())
                    }
                }
            }
            let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
            if !missing.is_empty() {
                return Err(Error::new(ErrorKind::Usage, format!("no value given for {}", missing.join(", ")))
                    .at(crate::syntax::Span::new(0, text.len()))
                    .in_option("--at")
                    .into());
            }
            values_point = Some(point.clone());
            Some(evaluate(&an, &Values::new(point), k))
        }
        None => None,
    };
    let choices = parse_choices(a.exponents.as_deref())?;
    let canon = crate::analysis::canonical(&red, &an, &choices)?;
    let vals = values_point.map(Values::new);
    Ok(match a.format {
        Format::Json => {
            let mut v = crate::emit::analysis_json(k, &red.var, &red.ode.params, &an, numeric.as_deref());
            v["canonical"] = match &canon {
                Some(c) => crate::emit::canonical_json(k, c, vals.as_ref()),
                None => serde_json::Value::Null,
            };
            format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default())
        }
        _ => {
            let mut t = crate::emit::analysis_text(k, &red.var, &an, numeric.as_deref());
            match &canon {
                Some(c) => t.push_str(&crate::emit::canonical_text(k, &red.ode.unknown, c, vals.as_ref())),
                None => t.push_str("\ncanonical form   none reached for this class and configuration\n"),
            }
            t
        }
    })
}

fn fail(f: &Failure, src: Option<&super::Source>, a: &ClassifyArgs) -> u8 {
    let mut extra: Vec<(String, String)> = a.at.iter().map(|t| ("--at".to_string(), t.clone())).collect();
    extra.extend(a.exponents.iter().map(|t| ("--exponents".to_string(), t.clone())));
    let (msg, code) = report(f, src, Some(&a.input), &extra);
    if !msg.is_empty() {
        eprintln!("{msg}");
    }
    code
}
