//! `canonode classify`: singular points, exponents and the class of an equation.

use super::values::parse_assignments;
use super::{run_command, Failure, Format, InputArgs};
use crate::algebra::GRat;
use crate::analysis::labels::Boundary;
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
    /// Pick the exponents of a boundary problem: quasinormal modes or bound states.
    #[arg(long = "boundary", value_enum)]
    boundary: Option<Boundary>,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: Format,
}

pub(crate) fn run(a: &ClassifyArgs) -> u8 {
    let mut extra: Vec<(String, String)> = a.at.iter().map(|t| ("--at".to_string(), t.clone())).collect();
    extra.extend(a.exponents.iter().map(|t| ("--exponents".to_string(), t.clone())));
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn compute(a: &ClassifyArgs, src: &super::Source) -> Result<String, Failure> {
    let red = a.input.reduce(src)?;
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
                            .in_named("--at")
                            .note(format!("the parameters are: {}", names[1..].join(", ")))
                            .into())
                    }
                }
            }
            let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
            if !missing.is_empty() {
                return Err(Error::new(ErrorKind::Usage, format!("no value given for {}", missing.join(", ")))
                    .at(crate::syntax::Span::new(0, text.len()))
                    .in_named("--at")
                    .note("classify evaluates the points and exponents at a complete set of values, the spectral parameter's included (any value, e.g. 1/2); without --at the analysis stays exact in every parameter")
                    .into());
            }
            values_point = Some(point.clone());
            Some(evaluate(&an, &Values::new(point), k))
        }
        None => None,
    };
    let mut choices = match &a.exponents {
        Some(t) => super::points::read_choices(&red, &an, t).map_err(|e| e.in_option(crate::error::RequestInput::Exponents))?,
        None => crate::analysis::canonical::Choices::default(),
    };
    // Labels need a frequency: the one named, or omega/ω/w when declared.
    let freq_name =
        a.input.frequency_name().or_else(|| ["omega", "ω", "w"].iter().find(|n| red.ode.params.iter().any(|p| p == *n)).map(|s| s.to_string()));
    let freq = match &freq_name {
        Some(f) => match k.names().iter().skip(1).position(|n| n == f) {
            Some(i) => Some(i + 1),
            None => return Err(Error::new(ErrorKind::Usage, format!("'{f}' is not a parameter of the equation")).in_named("--frequency").into()),
        },
        None => None,
    };
    let label_point = values_point.clone().unwrap_or_else(|| crate::analysis::labels::generic_values(k.names().len(), freq.unwrap_or(usize::MAX)));
    let labels = freq.map(|f| crate::analysis::labels::label(k, &an, f, &label_point, values_point.is_some())).transpose()?;
    let mut boundary_said = Vec::new();
    if let Some(b) = a.boundary {
        if b == Boundary::Qnm && labels.is_none() {
            return Err(
                Error::new(ErrorKind::Usage, "--boundary qnm needs a frequency: name it with --frequency (no parameter is called omega)").into()
            );
        }
        let kind = b;
        let crate::analysis::labels::ExponentPicks { picks, said } =
            crate::analysis::labels::boundary_choices(k, &an, labels.as_ref(), kind, &label_point)?;
        choices.fill(picks);
        boundary_said = said;
    }
    let canon = crate::analysis::canonical_form_of(&red, &an, &choices)?;
    let methods = crate::analysis::methods::suggest(&an, a.boundary.map(|b| b == Boundary::Bound));
    let vals = values_point.map(Values::new);
    let bname = a.boundary.map(|b| if b == Boundary::Qnm { "quasinormal modes" } else { "bound states" });
    Ok(match a.format {
        Format::Json => {
            let mut v = crate::emit::analysis_json(k, &red.var, &red.ode.params, &an, numeric.as_deref(), labels.as_ref());
            v["canonical"] = match &canon {
                Some(c) => crate::emit::canonical_json(k, c, vals.as_ref()),
                None => serde_json::Value::Null,
            };
            v["boundary"] = match bname {
                Some(n) => serde_json::json!({"kind": n, "choices": boundary_said}),
                None => serde_json::Value::Null,
            };
            v["methods"] = serde_json::Value::Array(
                methods.iter().map(|m| serde_json::json!({"method": m.method, "reason": m.reason, "source": m.source})).collect(),
            );
            format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default())
        }
        Format::Latex => {
            let picks = bname.map(|kind| crate::emit::BoundaryPicks { kind, choices: &boundary_said });
            crate::emit::analysis_latex(k, &red.var, &red.ode.unknown, &an, canon.as_ref(), picks.as_ref())
        }
        _ => {
            let mut t = crate::emit::analysis_text(k, &red.var, &an, numeric.as_deref(), labels.as_ref());
            if let Some(n) = bname {
                t.push_str(&format!("\nboundary conditions for {n}\n"));
                for s in &boundary_said {
                    t.push_str(&format!("  {s}\n"));
                }
                if boundary_said.is_empty() {
                    t.push_str("  no point could be labelled: choose exponents with --exponents\n");
                }
            }
            match &canon {
                Some(c) => t.push_str(&crate::emit::canonical_text(k, &red.ode.unknown, c, vals.as_ref())),
                None => t.push_str("\ncanonical form   none reached for this class and configuration\n"),
            }
            t.push_str("\nsuggested methods\n");
            for m in &methods {
                t.push_str(&format!("  {}: {}  [{}]\n", m.method, m.reason, m.source));
            }
            t
        }
    })
}
