//! Printing of exact values as text in the input language (so that output
//! can be pasted back into a file) and as LaTeX. Polynomials are collected in
//! powers of the variable (variable 0), with the parameter coefficients in
//! declaration order; denominators are printed in their factored form.

use super::int::Int;
use super::poly::{Mono, Poly, MAX_VARS};
use super::ratfunc::RatFunc;
use super::rational::{GRat, Rat};

/// Output notation.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Style {
    /// The input language: `*`, `^`, `I`.
    Text,
    /// LaTeX math mode.
    Latex,
}

/// A Greek letter for a symbol the program introduces (a root of a
/// factor): as text, as LaTeX, and as typed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Letter {
    /// As printed in text output.
    pub text: &'static str,
    /// As printed in LaTeX output.
    pub latex: &'static str,
    /// As typed in an option (ASCII).
    pub ascii: &'static str,
}

/// The letter for the roots of a factor: θ, unless the equation already
/// names something θ (an angle), then η, then ϖ.
pub fn root_letter(names: &[String]) -> Letter {
    free_letter(
        names,
        &[
            Letter { text: "θ", latex: "\\theta", ascii: "theta" },
            Letter { text: "η", latex: "\\eta", ascii: "eta" },
            Letter { text: "ϖ", latex: "\\varpi", ascii: "varpi" },
        ],
    )
}

/// The letter for a multiple of a root (φ = c·θ): φ, then χ, then ϱ.
pub fn scaled_root_letter(names: &[String]) -> Letter {
    free_letter(
        names,
        &[
            Letter { text: "φ", latex: "\\varphi", ascii: "phi" },
            Letter { text: "χ", latex: "\\chi", ascii: "chi" },
            Letter { text: "ϱ", latex: "\\varrho", ascii: "varrho" },
        ],
    )
}

/// The first of `candidates` that no name of `names` spells (as text or
/// ASCII); the last when all are taken.
fn free_letter(names: &[String], candidates: &[Letter]) -> Letter {
    let taken = |l: &Letter| names.iter().any(|n| n == l.text || n == l.ascii);
    *candidates.iter().find(|l| !taken(l)).unwrap_or(&candidates[candidates.len() - 1])
}

/// LaTeX for a symbol name: Greek names become commands, a trailing
/// `_suffix` or digits become a subscript, other multi-letter names upright.
pub fn latex_name(name: &str) -> String {
    const GREEK: &[&str] = crate::syntax::GREEK_LETTERS;
    let unicode: &[(&str, &str)] = &[
        ("α", "alpha"),
        ("β", "beta"),
        ("γ", "gamma"),
        ("δ", "delta"),
        ("ε", "epsilon"),
        ("θ", "theta"),
        ("κ", "kappa"),
        ("λ", "lambda"),
        ("μ", "mu"),
        ("ν", "nu"),
        ("ξ", "xi"),
        ("ρ", "rho"),
        ("σ", "sigma"),
        ("τ", "tau"),
        ("φ", "phi"),
        ("χ", "chi"),
        ("ψ", "psi"),
        ("ω", "omega"),
        ("Δ", "Delta"),
        ("Λ", "Lambda"),
        ("Ω", "Omega"),
        ("Γ", "Gamma"),
        ("Θ", "Theta"),
        ("Φ", "Phi"),
        ("Ψ", "Psi"),
    ];
    let (base, sub) = match name.find('_') {
        Some(i) if i > 0 && i + 1 < name.len() => (&name[..i], Some(&name[i + 1..])),
        _ => {
            let cut = name.trim_end_matches(|c: char| c.is_ascii_digit());
            if !cut.is_empty() && cut.len() < name.len() {
                (cut, Some(&name[cut.len()..]))
            } else {
                (name, None)
            }
        }
    };
    let body = if let Some((_, g)) = unicode.iter().find(|(u, _)| *u == base) {
        format!("\\{g}")
    } else if GREEK.contains(&base) {
        format!("\\{base}")
    } else if base == "lam" {
        "\\lambda".to_string()
    } else if base.chars().count() == 1 {
        base.to_string()
    } else {
        format!("\\mathrm{{{}}}", base.replace('_', "\\_"))
    };
    match sub {
        Some(s) => format!("{body}_{{{}}}", s.replace('_', "\\_")),
        None => body,
    }
}

fn mono_text(m: Mono, names: &[String], style: Style) -> Vec<String> {
    // Parameters first in declaration order, the variable last.
    let mut order: Vec<usize> = (1..names.len().min(MAX_VARS)).collect();
    order.push(0);
    let mut out = Vec::new();
    for i in order {
        let e = m.exp(i);
        if e == 0 {
            continue;
        }
        let n = match style {
            Style::Text => names[i].clone(),
            Style::Latex => latex_name(&names[i]),
        };
        out.push(match (style, e) {
            (_, 1) => n,
            (Style::Text, e) => format!("{n}^{e}"),
            (Style::Latex, e) => format!("{n}^{{{e}}}"),
        });
    }
    out
}

fn rat_abs_text(r: &Rat, style: Style) -> String {
    let n = r.numer().abs();
    match (style, r.is_integer()) {
        (_, true) => n.to_string(),
        (Style::Text, false) => format!("{}/{}", n, r.denom()),
        (Style::Latex, false) => format!("\\frac{{{}}}{{{}}}", n, r.denom()),
    }
}

/// One signed term: returns (negative?, magnitude text).
fn term_text(c: &GRat, m: Mono, names: &[String], style: Style) -> (bool, String) {
    let vars = mono_text(m, names, style);
    let join = match style {
        Style::Text => "*",
        Style::Latex => " ",
    };
    let unit = match style {
        Style::Text => "I",
        Style::Latex => "i",
    };
    let (neg, coeff): (bool, Option<String>) = if c.im.is_zero() {
        let one = c.re.numer().abs().is_one() && c.re.is_integer();
        (c.re.numer().is_negative(), if one { None } else { Some(rat_abs_text(&c.re, style)) })
    } else if c.re.is_zero() {
        let one = c.im.numer().abs().is_one() && c.im.is_integer();
        let mag = if one { unit.to_string() } else { format!("{}{join}{unit}", rat_abs_text(&c.im, style)) };
        (c.im.numer().is_negative(), Some(mag))
    } else {
        let s = GRat { re: c.re.clone(), im: c.im.clone() };
        let inner = sum_text(&[(s, Mono::ONE)], names, style);
        let wrapped = match style {
            Style::Text => format!("({inner})"),
            Style::Latex => format!("\\left({inner}\\right)"),
        };
        (false, Some(wrapped))
    };
    let mut parts: Vec<String> = Vec::new();
    if let Some(cf) = coeff {
        parts.push(cf);
    }
    parts.extend(vars);
    if parts.is_empty() {
        parts.push("1".to_string());
    }
    (neg, parts.join(join))
}

fn sum_text(terms: &[(GRat, Mono)], names: &[String], style: Style) -> String {
    if terms.is_empty() {
        return "0".to_string();
    }
    let mut out = String::new();
    for (k, (c, m)) in terms.iter().enumerate() {
        // A complex coefficient a + b i is split into its two real terms.
        let pieces: Vec<GRat> = if !c.re.is_zero() && !c.im.is_zero() && m.is_one() {
            vec![GRat::real(c.re.clone()), GRat { re: Rat::zero(), im: c.im.clone() }]
        } else {
            vec![c.clone()]
        };
        for (j, piece) in pieces.iter().enumerate() {
            let (neg, t) = term_text(piece, *m, names, style);
            if k == 0 && j == 0 {
                if neg {
                    out.push('-');
                }
            } else {
                out.push_str(if neg { " - " } else { " + " });
            }
            out.push_str(&t);
        }
    }
    out
}

/// Coefficients as Gaussian rationals `c / scale`.
pub(crate) fn scaled_terms(p: &Poly, scale: &Int) -> Vec<(GRat, Mono)> {
    p.terms()
        .iter()
        .map(|(m, c)| {
            let g = GRat { re: Rat::new(c.re.clone(), scale.clone()).expect("scale"), im: Rat::new(c.im.clone(), scale.clone()).expect("scale") };
            (g, *m)
        })
        .collect()
}

/// A polynomial divided by a positive integer, collected in powers of variable 0.
pub fn poly_text(p: &Poly, scale: &Int, names: &[String], style: Style) -> String {
    if p.is_zero() {
        return "0".to_string();
    }
    let coeffs = p.to_univariate(0);
    let nonzero = coeffs.iter().filter(|c| !c.is_zero()).count();
    if nonzero == 1 || !p.uses_var(0) {
        return sum_text(&scaled_terms(p, scale), names, style);
    }
    let mut out = String::new();
    for (k, c) in coeffs.iter().enumerate().rev() {
        if c.is_zero() {
            continue;
        }
        let z = mono_text(Mono::var(0, k as u32), names, style).join("");
        let terms = scaled_terms(c, scale);
        let (neg, body) = if terms.len() == 1 {
            let (c1, m1) = &terms[0];
            let mono = Mono::var(0, k as u32);
            term_text(c1, m1.mul(mono), names, style)
        } else {
            let inner = sum_text(&terms, names, style);
            let wrapped = match style {
                Style::Text => format!("({inner})"),
                Style::Latex => format!("\\left({inner}\\right)"),
            };
            if k == 0 {
                // A constant term continues the sum without parentheses.
                if out.is_empty() {
                    out.push_str(&inner);
                } else if let Some(rest) = inner.strip_prefix('-') {
                    out.push_str(" - ");
                    out.push_str(rest);
                } else {
                    out.push_str(" + ");
                    out.push_str(&inner);
                }
                continue;
            }
            let body = {
                match style {
                    Style::Text => format!("{wrapped}*{z}"),
                    Style::Latex => format!("{wrapped} {z}"),
                }
            };
            (false, body)
        };
        if out.is_empty() {
            if neg {
                out.push('-');
            }
        } else {
            out.push_str(if neg { " - " } else { " + " });
        }
        out.push_str(&body);
    }
    out
}

/// True when the text of a polynomial needs parentheses as a factor.
fn is_compound(p: &Poly) -> bool {
    if p.len() > 1 {
        return true;
    }
    match p.terms().first() {
        Some((m, c)) => (!c.re.is_zero() && !c.im.is_zero()) || !(m.is_one() || c.re.abs().is_one() || c.im.abs().is_one()),
        None => false,
    }
}

/// The factors `fᵢ^eᵢ` of the denominator, parenthesised where needed; with
/// `bare_single` a lone factor to the first power is left bare (it stands
/// alone in a LaTeX `\frac`).
fn den_factor_texts(r: &RatFunc, names: &[String], style: Style, bare_single: bool) -> Vec<String> {
    let lone = bare_single && r.den_factors().len() == 1 && r.den_factors()[0].1 == 1;
    let mut parts = Vec::new();
    for (f, e) in r.den_factors() {
        let t = poly_text(f.poly(), &Int::ONE, names, style);
        let t = if is_compound(f.poly()) && !lone {
            match style {
                Style::Text => format!("({t})"),
                Style::Latex => format!("\\left({t}\\right)"),
            }
        } else {
            t
        };
        parts.push(match (style, e) {
            (_, 1) => t,
            (Style::Text, e) => format!("{t}^{e}"),
            (Style::Latex, e) => format!("{t}^{{{e}}}"),
        });
    }
    parts
}

/// The factored denominator `∏ fᵢ^eᵢ` (without the integer scale).
pub fn den_text(r: &RatFunc, names: &[String], style: Style) -> String {
    let parts = den_factor_texts(r, names, style, false);
    if parts.is_empty() {
        return "1".to_string();
    }
    match style {
        Style::Text => parts.join("*"),
        Style::Latex => parts.join(" "),
    }
}

/// `\frac{N}{D}` as a physicist writes it: N with integer coefficients, the
/// integer scale in front of the factored D (no fractions inside fractions),
/// and the sign of a one-term numerator in front.
fn ratfunc_latex(r: &RatFunc, names: &[String]) -> String {
    let mut num = poly_text(r.num(), &Int::ONE, names, Style::Latex);
    let mut sign = "";
    if r.num().len() == 1 {
        if let Some(rest) = num.strip_prefix('-') {
            num = rest.to_string();
            sign = "-";
        }
    }
    let mut den = Vec::new();
    if !r.scale().is_one() {
        den.push(r.scale().to_string());
    }
    den.extend(den_factor_texts(r, names, Style::Latex, r.scale().is_one()));
    format!("{sign}\\frac{{{num}}}{{{}}}", den.join(" "))
}

/// A rational function as `N/D` (text), with `N` carrying rational
/// coefficients and `D` primitive and factored, or as `\frac{N}{D}` (LaTeX)
/// with the integer scale moved into `D`.
pub fn ratfunc_text(r: &RatFunc, names: &[String], style: Style) -> String {
    if r.den_factors().is_empty() {
        return poly_text(r.num(), r.scale(), names, style);
    }
    match style {
        Style::Text => {
            let n = poly_text(r.num(), r.scale(), names, style);
            let d = den_text(r, names, style);
            let n = if r.num().len() > 1 { format!("({n})") } else { n };
            let d = if r.den_factors().len() > 1 || (r.den_factors()[0].1 == 1 && is_compound(r.den_factors()[0].0.poly())) {
                if r.den_factors().len() == 1 {
                    d
                } else {
                    format!("({d})")
                }
            } else {
                d
            };
            format!("{n}/{d}")
        }
        Style::Latex => ratfunc_latex(r, names),
    }
}

/// A Gaussian rational as text (`3/2 - 1/4*I`) or LaTeX.
pub fn grat_text(c: &GRat, style: Style) -> String {
    sum_text(&[(c.clone(), Mono::ONE)], &[], style)
}

/// `(z - z0)` for printing, with `z` alone when z0 = 0 and `z + c` for z0 = −c.
pub fn shifted(v: &str, at: &str, style: Style) -> String {
    let simple = |t: &str| !t.contains(" + ") && !t.contains(" - ");
    let (l, r) = match style {
        Style::Text => ("(", ")"),
        Style::Latex => ("\\left(", "\\right)"),
    };
    if at == "0" {
        v.to_string()
    } else if let Some(neg) = at.strip_prefix('-').filter(|t| simple(t)) {
        format!("{l}{v} + {neg}{r}")
    } else if simple(at) {
        format!("{l}{v} - {at}{r}")
    } else {
        format!("{l}{v} - {l}{at}{r}{r}")
    }
}

/// `s` in parentheses unless it is a single name or number.
pub fn wrap(s: String, style: Style) -> String {
    if s.chars().all(|c| c.is_alphanumeric() || c == '_' || c == '\\' || c == '{' || c == '}') {
        s
    } else {
        match style {
            Style::Text => format!("({s})"),
            Style::Latex => format!("\\left({s}\\right)"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::algebra::{Field, Limits};

    #[test]
    fn prints_collected_and_factored() {
        let names: Vec<String> = ["r", "M"].iter().map(|s| s.to_string()).collect();
        let k = Field::new(names.clone(), Limits::default()).unwrap();
        let r = k.var(0);
        let m = k.var(1);
        let two = RatFunc::from_poly(Poly::int(2));
        let f = k.sub(&r, &k.mul(&two, &m).unwrap()).unwrap();
        let q = k.div(&k.add(&k.mul(&r, &r).unwrap(), &m).unwrap(), &k.mul(&k.mul(&f, &f).unwrap(), &k.mul(&r, &two).unwrap()).unwrap()).unwrap();
        assert_eq!(ratfunc_text(&q, &names, Style::Text), "(1/2*r^2 + 1/2*M)/(r*(r - 2*M)^2)");
        // LaTeX: integer coefficients over the scale times the factors, no fraction inside a fraction.
        assert_eq!(ratfunc_text(&q, &names, Style::Latex), "\\frac{r^{2} + M}{2 r \\left(r - 2 M\\right)^{2}}");
        // A lone factor needs no parentheses; the sign of a one-term numerator goes in front.
        let minus_m = k.div(&k.neg(&m), &k.mul(&two, &f).unwrap()).unwrap();
        assert_eq!(ratfunc_text(&minus_m, &names, Style::Latex), "-\\frac{M}{2 \\left(r - 2 M\\right)}");
        let over_f = k.div(&m, &f).unwrap();
        assert_eq!(ratfunc_text(&over_f, &names, Style::Latex), "\\frac{M}{r - 2 M}");
        assert_eq!(latex_name("omega"), "\\omega");
        assert_eq!(latex_name("r_h"), "r_{h}");
        assert_eq!(latex_name("lam"), "\\lambda");
    }
}
