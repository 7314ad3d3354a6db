//! `canonode recurrence`: the series recurrence about a regular singular point.

use super::{run_command, Failure, Format, InputArgs};
use clap::Args;

/// Arguments of `recurrence`.
#[derive(Args, Debug)]
pub(crate) struct RecurrenceArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The expansion point, as `classify` prints it (e.g. '2*M'), or 'θ' for a root of a quadratic factor (adjoined).
    #[arg(long = "about", value_name = "POINT")]
    about: String,
    #[command(flatten)]
    series: SeriesArgs,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: Format,
}

/// How the series is set up (shared with `emit`).
#[derive(Args, Debug)]
pub(crate) struct SeriesArgs {
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
}

impl SeriesArgs {
    /// The option texts errors may point into, with `--about`'s.
    pub(crate) fn option_texts(&self, about: &str) -> Vec<(String, String)> {
        let mut extra = vec![("--about".to_string(), about.to_string())];
        extra.extend(self.series.iter().map(|t| ("--series".to_string(), t.clone())));
        extra.extend(self.exponents.iter().map(|t| ("--exponents".to_string(), t.clone())));
        extra
    }

    /// The recurrence about `about` with these choices.
    pub(crate) fn derive(&self, red: &crate::ode::Reduction, about: &str, freq: Option<usize>) -> Result<crate::series::Recurrence, Failure> {
        let an = crate::analysis::analyse(red)?;
        let asked = super::points::asked_about(red, &an, about, self.series.as_deref(), self.exponents.as_deref())?;
        let rec = crate::series::requested(red, &asked.about, &asked.series, &asked.choices, self.normal, freq).map_err(|e| {
            if super::origin_flag(&e.origin).as_deref() == Some("--about") && e.span.is_none() {
                e.at(crate::syntax::Span::new(0, about.len()))
            } else {
                e
            }
        })?;
        Ok(rec)
    }
}

pub(crate) fn run(a: &RecurrenceArgs) -> u8 {
    let extra = a.series.option_texts(&a.about);
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn compute(a: &RecurrenceArgs, src: &super::Source) -> Result<String, Failure> {
    let red = a.input.reduce(src)?;
    let rec = a.series.derive(&red, &a.about, a.input.frequency_index(&red)?)?;
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
            // Each expression with its LaTeX beside it (`coefficient`, `coefficient_latex`).
            let v = crate::emit::latex::with_latex(v, &["ansatz", "prefactor", "series", "coefficient"]);
            format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default())
        }
        Format::Latex => crate::emit::recurrence_latex(&rec),
        Format::Text => {
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
