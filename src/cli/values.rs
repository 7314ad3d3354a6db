//! Reading of command-line values: `name=value` lists whose values are exact
//! complex decimals such as `0.37-0.089i`.

use crate::algebra::GRat;
use crate::error::{Error, ErrorKind, Result};
use crate::syntax::Span;

/// A complex double given to `option` (a seed such as `--guess`), read
/// exactly by [`parse_complex`] and rounded once; `None` when not given.
pub(crate) fn parse_seed(text: Option<&str>, option: &str) -> Result<Option<num_complex::Complex64>> {
    let Some(t) = text else { return Ok(None) };
    let v = read_value(t).map_err(|m| Error::new(ErrorKind::Usage, m).at(Span::new(0, t.len().max(1))).in_named(option))?;
    let (re, im) = v.to_f64();
    Ok(Some(num_complex::Complex64::new(re, im)))
}

/// The largest magnitude of a value given on the command line: double
/// precision with room for a few products.
const MAX_MAGNITUDE: f64 = 1e300;
/// The smallest magnitude of a nonzero value given on the command line.
const MIN_MAGNITUDE: f64 = 1e-300;
/// The longest value given on the command line, in characters.
const MAX_VALUE_CHARS: usize = 400;

/// Reads one complex value of an option exactly, bounded in length and
/// magnitude (so that exact arithmetic on it stays cheap and its double is
/// finite); the error message says what is wrong.
pub(crate) fn read_value(text: &str) -> std::result::Result<GRat, String> {
    let t = text.trim();
    if t.chars().count() > MAX_VALUE_CHARS {
        return Err(format!("the value is longer than {MAX_VALUE_CHARS} characters"));
    }
    let v = parse_complex(t).ok_or_else(|| format!("'{t}' is not a number (write e.g. 3.1, 2e-3, 13/4, 0.37-0.089i)"))?;
    for part in [&v.re, &v.im] {
        let x = part.to_f64().abs();
        if !part.is_zero() && !(MIN_MAGNITUDE..=MAX_MAGNITUDE).contains(&x) {
            return Err(format!("'{t}' is out of range: values are 0 or between 1e-300 and 1e300 in magnitude"));
        }
    }
    Ok(v)
}

pub(crate) use crate::algebra::parse_complex;

/// A parameter's name as given on the command line: as LaTeX writes it
/// (`\ell`, `r_{+}`) it is the equation's name for it (`l`, `r_plus`).
pub(crate) fn param_name(written: &str) -> String {
    let written = written.trim();
    if written.contains(['\\', '{']) {
        crate::syntax::latex_name(written).unwrap_or_else(|| written.to_string())
    } else {
        written.to_string()
    }
}

/// Parses `name=value,name=value,...`; spans point into `text`.
pub(crate) fn parse_assignments(text: &str, option: &str) -> Result<Vec<(String, GRat, Span)>> {
    let mut out: Vec<(String, GRat, Span)> = Vec::new();
    let mut start = 0;
    for piece in text.split(',') {
        let span = Span::new(start, start + piece.len());
        start += piece.len() + 1;
        if piece.trim().is_empty() {
            continue;
        }
        let Some(eq) = piece.find('=') else {
            return Err(Error::new(ErrorKind::Usage, format!("expected NAME=VALUE, found '{}'", piece.trim())).at(span).in_named(option));
        };
        let name = param_name(&piece[..eq]);
        let value = &piece[eq + 1..];
        let vspan = Span::new(span.start + eq + 1, span.end);
        let v = read_value(value).map_err(|m| Error::new(ErrorKind::Usage, m).at(vspan).in_named(option))?;
        if out.iter().any(|(n, _, _)| *n == name) {
            return Err(Error::new(ErrorKind::Usage, format!("'{name}' is given twice")).at(span).in_named(option));
        }
        out.push((name, v, span));
    }
    Ok(out)
}

pub(crate) use crate::emit::numbers::fmt_complex;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::algebra::Rat;

    #[test]
    fn complex_values() {
        let v = parse_complex("0.37-0.089i").unwrap();
        assert_eq!(v.re, Rat::parse_decimal("0.37").unwrap());
        assert_eq!(v.im, Rat::parse_decimal("0.089").unwrap().neg());
        assert_eq!(parse_complex("-2i").unwrap().im, Rat::int((-2).into()));
        assert_eq!(parse_complex("1e-3").unwrap().re, Rat::parse_decimal("0.001").unwrap());
        assert_eq!(parse_complex("1e-3+i").unwrap().im, Rat::one());
        assert!(parse_complex("abc").is_none());
        assert!(parse_complex("").is_none());
    }

    #[test]
    fn seventeen_digits() {
        assert_eq!(crate::emit::numbers::fmt17(0.1), "0.10000000000000001");
        assert_eq!(crate::emit::numbers::fmt17(2.0), "2");
        assert_eq!(crate::emit::numbers::fmt17(-1.5e-9), "-1.5e-9");
        assert_eq!(fmt_complex(0.25, -0.5), "0.25-0.5i");
    }
}
