//! `canonode recurrence`: the series recurrence about a regular singular point.

use super::{run_command, Failure, Format, InputArgs};
use clap::Args;

/// Arguments of `recurrence`.
#[derive(Args, Debug)]
pub(crate) struct RecurrenceArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The expansion point, as `classify` prints it (e.g. '2*M').
    #[arg(long = "about", value_name = "POINT")]
    about: String,
    /// The series variable, a Möbius map vanishing at the point: 'u=(r - 2*M)/r'
    /// (default: u = (z − z_h)/(z − z₂) with z₂ the other finite singular point).
    #[arg(long = "series", value_name = "u=MOBIUS")]
    series: Option<String>,
    /// Exponent choices POINT=CHOICE,... (1 or 2 in the order `classify` lists them; 'inf' for ∞).
    #[arg(long = "exponents", value_name = "POINT=CHOICE,...")]
    exponents: Option<String>,
    /// Expand the normal-form ψ instead of the unknown.
    #[arg(long = "normal")]
    normal: bool,
    /// Output format (text or json).
    #[arg(long = "format", value_enum, default_value = "text")]
    format: Format,
}

pub(crate) fn run(a: &RecurrenceArgs) -> u8 {
    let mut extra = vec![("--about".to_string(), a.about.clone())];
    extra.extend(a.series.iter().map(|t| ("--series".to_string(), t.clone())));
    extra.extend(a.exponents.iter().map(|t| ("--exponents".to_string(), t.clone())));
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn compute(a: &RecurrenceArgs, src: &super::Source) -> Result<String, Failure> {
    let red = crate::ode::reduce(&src.input(), &a.input.options())?;
    let choices = super::classify::parse_choices(a.exponents.as_deref())?;
    let rec = crate::series::recurrence(&red, &a.about, a.series.as_deref(), &choices, a.normal).map_err(|e| {
        if e.origin == crate::error::Origin::Option("--about".into()) && e.span.is_none() {
            e.at(crate::syntax::Span::new(0, a.about.len()))
        } else {
            e
        }
    })?;
    let n = rec.index();
    Ok(match a.format {
        Format::Json => {
            let v = serde_json::json!({
                "function": rec.function,
                "ansatz": rec.ansatz_text(),
                "prefactor": rec.prefactor,
                "series": rec.series,
                "choices": rec.choices,
                "terms": rec.coeffs.len(),
                "index": n,
                "coefficients": (0..rec.coeffs.len()).map(|j| serde_json::json!({"multiplies": rec.subscript(j), "coefficient": rec.coefficient_text(j)})).collect::<Vec<_>>(),
            });
            format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default())
        }
        _ => {
            let mut o = String::new();
            o.push_str(&format!("ansatz      {} = {} * Σ a_{n} u^{n},   {}\n", rec.function, rec.prefactor, rec.series));
            for c in &rec.choices {
                o.push_str(&format!("  choice    {c}\n"));
            }
            o.push_str(&format!("\n{}-term recurrence   {}   ({n} ≥ 0, a[{n}] = 0 for {n} < 0)\n", rec.coeffs.len(), rec.equation_text()));
            for j in 0..rec.coeffs.len() {
                o.push_str(&format!("  c{j}({n}) = {}\n", rec.coefficient_text(j)));
            }
            o
        }
    })
}
