//! Polynomial (quasi-exactly solvable) solutions of problems with no
//! Gamma-function closed form (Heun's class): the Taylor series of the
//! unknown about a finite regular singular point, with the exponent 0
//! there and exponent 0 (or the branch the ansatz picks) elsewhere, obeys a
//! three-term recurrence α_n a_{n+1} + β_n a_n + γ_n a_{n−1} = 0; it stops
//! at degree N when γ_{N+1} = 0 (which fixes one parameter, an exponent
//! relation) and the determinant of the first N + 1 equations vanishes, a
//! polynomial in the remaining parameters (DLMF 31.5: of degree N + 1 in
//! the accessory parameter q of Heun's equation). Both conditions are exact
//! (`series::termination`); floats start with the roots of the determinant
//! in the spectral parameter at the given values of the others.

use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{Field, GRat, RatFunc};
use crate::analysis::canonical::Choices;
use crate::analysis::{Kind, Place};
use crate::error::Result;
use crate::ode::Reduction;
use crate::series::SeriesMap;
use crate::series::{termination, Termination};
use num_complex::Complex64;

/// The highest degree tried when looking for the lowest admissible one.
pub const MAX_DEGREE: u32 = 60;

/// The highest degree whose determinant is also derived with every
/// parameter symbolic (beyond it only its value at the given parameters).
pub const SYMBOLIC_DEGREE: u32 = 6;

/// Which degree N the polynomial is asked for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Degree {
    /// The lowest N ≤ [`MAX_DEGREE`] whose condition γ_{N+1} = 0 holds at the given values.
    Lowest,
    /// This N.
    Exactly(u32),
}

/// One root of the determinant in the spectral parameter, with the check
/// that the series stops there.
#[derive(Clone, Debug)]
pub struct RootCheck {
    /// The value of the spectral parameter.
    pub value: Complex64,
    /// With a_0 = 1 and a_1..a_N from the first N equations, the size of
    /// the last equation relative to its terms (None when some α_k vanishes).
    pub residual: Option<f64>,
}

/// The polynomial solutions of one degree.
#[derive(Clone, Debug)]
pub struct PolynomialSolutions {
    /// The expansion point, as `classify` prints it.
    pub about: String,
    /// The ansatz in the input language (`y = prefactor * sum(a[n]*u^n)`).
    pub ansatz: String,
    /// The series variable, `u = …`.
    pub series: String,
    /// The degree N.
    pub degree: u32,
    /// How N was chosen, in words.
    pub chosen: String,
    /// Names for the expressions: the degree symbol N, then the parameters.
    pub names: Vec<String>,
    /// γ_{N+1} with N symbolic (variable 0).
    pub general: RatFunc,
    /// The two conditions at this N (the determinant with every parameter symbolic, when derived).
    pub termination: Option<Termination>,
    /// Why the symbolic determinant was not derived.
    pub symbolic_note: Option<String>,
    /// γ_{N+1} at the given values (zero when the series can stop at N).
    pub last_at_values: RatFunc,
    /// The spectral parameter's name.
    pub spectral: String,
    /// The determinant at the given values: a polynomial in the spectral parameter.
    pub at_values: RatFunc,
    /// Its roots with their checks, or why there are none.
    pub roots: std::result::Result<Vec<RootCheck>, String>,
}

impl PolynomialSolutions {
    /// An expression of the section as text or LaTeX.
    pub fn show(&self, r: &RatFunc, style: Style) -> String {
        ratfunc_text(r, &self.names, style)
    }

    /// Whether the series can stop at N at the given values.
    pub fn holds(&self) -> bool {
        self.last_at_values.is_zero()
    }
}

/// Substitutes the values that are `Some`.
fn substitute(k: &Field, r: &RatFunc, vals: &[Option<GRat>]) -> Result<RatFunc> {
    let mut out = r.clone();
    for (i, v) in vals.iter().enumerate() {
        if let Some(v) = v {
            if out.uses_var(i) {
                out = k.compose(&out, i, &RatFunc::constant(v))?;
            }
        }
    }
    Ok(out)
}

/// The polynomial solutions of the unknown of `red` at the degree asked
/// for; `values` holds every parameter's value (index as in the field;
/// the spectral one, `freq`, is left symbolic). `Ok(Err(why))` when the
/// equation has none of this kind.
pub fn derive(red: &Reduction, freq: usize, values: &[GRat], degree: Degree) -> Result<std::result::Result<PolynomialSolutions, String>> {
    let an = crate::analysis::analyse(red)?;
    let names = red.field.names();
    let mut why = Vec::new();
    for sp in an.points.iter().filter(|p| p.kind == Kind::Regular) {
        let Place::Point { at, .. } = &sp.place else { continue };
        let about = ratfunc_text(at, names, Style::Text);
        let u = crate::ode::fresh_name("u", names);
        let series = format!("{u}={}", crate::algebra::print::shifted(&red.var, &about, Style::Text));
        let map = SeriesMap::Given { map: red.field.sub(&red.field.var(0), at)?, text: series };
        let rec = match crate::series::recurrence_at(red, at, &map, &Choices::default(), false) {
            Ok(r) => r,
            Err(e) => {
                why.push(format!("about {about}: {}", e.message));
                continue;
            }
        };
        if rec.coeffs.len() != 3 {
            why.push(format!("about {about}: the Taylor series has a {}-term recurrence, not three", rec.coeffs.len()));
            continue;
        }
        let k = &rec.field;
        // The recurrence's variables by name: n, then the parameters.
        let vals: Vec<Option<GRat>> =
            k.names().iter().map(|n| names.iter().position(|m| m == n).filter(|&j| j > 0 && j != freq).map(|j| values[j].clone())).collect();
        let Some(kf) = k.names().iter().position(|n| *n == names[freq]) else {
            why.push(format!("about {about}: the recurrence does not hold {}", names[freq]));
            continue;
        };
        let mut shown = k.names().to_vec();
        shown[0] = crate::ode::fresh_name("N", names);
        // γ_{N+1} with N symbolic.
        let next = k.add(&k.var(0), &RatFunc::one())?;
        let general = k.compose(&rec.coeffs[2], 0, &next)?;
        let subbed: Vec<RatFunc> = rec.coeffs.iter().map(|c| substitute(k, c, &vals)).collect::<Result<_>>()?;
        let (n, chosen) = match degree {
            Degree::Exactly(n) => (n, "the degree asked for".to_string()),
            Degree::Lowest => {
                let general_at = substitute(k, &general, &vals)?;
                let mut found = None;
                for n in 0..=MAX_DEGREE {
                    if k.compose(&general_at, 0, &RatFunc::rat(&crate::algebra::Rat::int((n as i64).into())))?.is_zero() {
                        found = Some(n);
                        break;
                    }
                }
                let Some(n) = found else {
                    return Ok(Err(format!(
                        "the Taylor series about {about} stops at degree N only where {} = 0, which no N ≤ {MAX_DEGREE} satisfies at these values",
                        ratfunc_text(&general, &shown, Style::Text)
                    )));
                };
                (n, format!("the lowest N ≤ {MAX_DEGREE} with the termination condition holding at these values"))
            }
        };
        let at_values_t = termination(k, &subbed, n)?;
        let (termination_sym, symbolic_note) = if n > SYMBOLIC_DEGREE {
            (None, Some(format!("with every parameter symbolic only up to degree {SYMBOLIC_DEGREE}")))
        } else {
            match termination(k, &rec.coeffs, n) {
                Ok(t) => (Some(t), None),
                Err(e) => (None, Some(format!("with every parameter symbolic: {}", e.message))),
            }
        };
        let roots = if at_values_t.last.is_zero() {
            roots(k, &rec.coeffs, &vals, kf, n, &at_values_t.determinant)
        } else {
            Err(format!("the series cannot stop at degree {n} at these values (γ_(N+1) ≠ 0)"))
        };
        return Ok(Ok(PolynomialSolutions {
            about,
            ansatz: rec.ansatz_text(),
            series: rec.series.clone(),
            degree: n,
            chosen,
            names: shown,
            general,
            termination: termination_sym,
            symbolic_note,
            last_at_values: at_values_t.last,
            spectral: names[freq].clone(),
            at_values: at_values_t.determinant,
            roots,
        }));
    }
    Ok(Err(if why.is_empty() { "no finite regular singular point to expand about".into() } else { why.join("; ") }))
}

/// The roots of the determinant `det` (a polynomial in variable `kf` alone)
/// and the check that the series stops at each.
fn roots(k: &Field, coeffs: &[RatFunc], vals: &[Option<GRat>], kf: usize, n: u32, det: &RatFunc) -> std::result::Result<Vec<RootCheck>, String> {
    let name = &k.names()[kf];
    if det.is_zero() {
        return Err(format!("the determinant vanishes identically at these values: the series stops at degree {n} for every {name}"));
    }
    if det.num().uses_var(0) || (1..k.names().len()).any(|i| i != kf && det.uses_var(i)) {
        return Err("the determinant holds parameters without values".into());
    }
    let zero = vec![Complex64::new(0.0, 0.0); k.names().len()];
    let c: Vec<Complex64> = det
        .num()
        .to_univariate(kf)
        .into_iter()
        .map(|p| crate::solve::eval_at(&RatFunc::from_poly(p), &zero).unwrap_or(Complex64::new(f64::NAN, 0.0)))
        .collect();
    if c.len() < 2 {
        return Err(format!("the determinant is a nonzero constant at these values: no {name} gives a polynomial of degree {n}"));
    }
    let found = crate::analysis::numeric::try_roots(&c).map_err(|e| format!("the roots of the determinant were not found: {e}"))?;
    let mut point: Vec<Complex64> =
        vals.iter().map(|v| v.as_ref().map_or(Complex64::new(0.0, 0.0), |g| Complex64::new(g.to_f64().0, g.to_f64().1))).collect();
    Ok(found
        .into_iter()
        .map(|w| {
            point[kf] = w;
            RootCheck { value: w, residual: residual(coeffs, &mut point, n) }
        })
        .collect())
}

/// The last equation of the first N + 1 (relative to its terms) with a_0 = 1
/// and a_1..a_N from the others, at `point` (the index slot is overwritten).
fn residual(coeffs: &[RatFunc], point: &mut [Complex64], n: u32) -> Option<f64> {
    let at = |point: &mut [Complex64], j: u32| -> Option<Vec<Complex64>> {
        point[0] = Complex64::new(j as f64, 0.0);
        coeffs.iter().map(|c| crate::solve::eval_at(c, point)).collect()
    };
    let (mut prev, mut cur) = (Complex64::new(0.0, 0.0), Complex64::new(1.0, 0.0));
    for j in 0..n {
        let c = at(point, j)?;
        if c[0].norm() == 0.0 {
            return None;
        }
        let next = -(c[1] * cur + c[2] * prev) / c[0];
        (prev, cur) = (cur, next);
    }
    let c = at(point, n)?;
    let (x, y) = (c[1] * cur, c[2] * prev);
    let scale = x.norm() + y.norm();
    let r = if scale == 0.0 { 0.0 } else { (x + y).norm() / scale };
    r.is_finite().then_some(r)
}
