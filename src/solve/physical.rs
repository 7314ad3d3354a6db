//! The physical variable of a spectrum. A reduction whose variable was
//! changed (`ode::Change`: old = g(new), e.g. r = 1/t to look at infinity)
//! poses the same boundary problem as the equation in its original
//! variable, and the roles of its ends — the outer black-hole horizon, a
//! cosmological horizon, an anti-de Sitter boundary, spatial infinity, a
//! centre — and the domain between them belong to that variable: "outer"
//! is the largest physical radius and "outgoing" is e^(+iωr), whatever
//! order the change puts the points in (t = 1/r makes the largest root in t
//! the innermost horizon and sends r = ∞ to the finite point t = 0).
//!
//! So a spectrum is decided and solved on the original equation
//! ([`physical`]; its eigenvalues do not depend on the variable), and the
//! report says where each end lies in the variable the equation is written
//! in, read back through the exact map ([`Chart`]): the preimages of the
//! end under g at the given values. Where there is not exactly one real
//! preimage (g is not one-to-one there) or the map moves with the spectral
//! parameter, the report says that the place cannot be decided instead of
//! guessing one. Ends given in the written variable are carried the other
//! way, forward through g ([`Chart::to_physical`]).

use super::boundary::{Condition, Location};
use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{Field, GRat, RatFunc};
use crate::error::Result;
use crate::ode::Reduction;
use num_complex::Complex64;

/// The exact change of variable of a reduction, old = g(new), and the
/// names on both sides.
#[derive(Debug)]
pub struct Chart {
    /// The physical (original) variable.
    pub physical: String,
    /// The variable the equation is written in.
    pub written: String,
    /// The map as text, `r = 1/t`.
    pub map: String,
    /// g in the written variable's field.
    g: RatFunc,
    /// Why the spectrum is solved in another variable than the written one
    /// when no change was asked for ([`irregular_to_infinity`]).
    pub reason: Option<String>,
}

/// Where a physical end lies in the variable the equation is written in.
#[derive(Clone, Debug, PartialEq)]
pub enum WrittenPlace {
    /// A finite real point.
    At(f64),
    /// The point at infinity.
    Infinity,
    /// No single place: the reason, in words.
    Undecided(String),
}

/// One end of the domain in both variables, for the report.
#[derive(Clone, Debug)]
pub struct ChartEnd {
    /// Where the end lies in the physical variable.
    pub physical: Location,
    /// Where it lies in the written variable.
    pub written: WrittenPlace,
}

/// What a report says about a change of variable: the map and the ends
/// in both variables.
#[derive(Clone, Debug)]
pub struct ChangeReport {
    /// The physical variable.
    pub physical: String,
    /// The variable the equation is written in.
    pub written: String,
    /// The map as text.
    pub map: String,
    /// The ends of the domain (left, right in the physical variable); empty
    /// when the problem has no two ends (a periodic one).
    pub ends: Vec<ChartEnd>,
    /// Why the variable was changed when no change was asked for.
    pub reason: Option<String>,
}

/// The equation in its physical variable and the chart back to the written
/// one, when the reduction's variable was changed; `None` otherwise (the
/// equation is already in its physical variable). The physical reduction
/// is the lowered equation before the change: its p and q, their normal
/// form, and no Schrödinger form (the spectrum builds its own).
pub fn physical(red: &Reduction) -> Result<Option<(Reduction, Chart)>> {
    let Some(change) = &red.change else { return Ok(None) };
    let ode = &red.ode;
    let field = Field::new(ode.field.names().to_vec(), ode.field.limits().clone())?;
    let normal = crate::ode::normal_form(&field, &ode.p, &ode.q)?;
    let copy = crate::ode::LinearOde {
        field: Field::new(ode.field.names().to_vec(), ode.field.limits().clone())?,
        var: ode.var.clone(),
        unknown: ode.unknown.clone(),
        params: ode.params.clone(),
        inferred: ode.inferred.clone(),
        p: ode.p.clone(),
        q: ode.q.clone(),
        lets: ode.lets.clone(),
    };
    let phys = Reduction {
        ode: copy,
        field,
        var: ode.var.clone(),
        p: ode.p.clone(),
        q: ode.q.clone(),
        normal,
        change: None,
        schrodinger: None,
        map: red.map.clone(),
        family: None,
    };
    let map = format!("{} = {}", change.old_var, ratfunc_text(&change.g, red.field.names(), Style::Text));
    let chart = Chart { physical: change.old_var.clone(), written: change.new_var.clone(), map, g: change.g.clone(), reason: None };
    Ok(Some((phys, chart)))
}

/// An equation written in a variable that puts spatial infinity at a
/// finite point (x = 2M/r, u = 1 − 2M/r): a real irregular singular point
/// x₀ of rank 1 (pole order 4 of Q, a root of a linear factor) while x = ∞
/// is not irregular. The spectrum's ends and their roles are decided where
/// that point is infinity: in t with x = x₀ + s/t, s = ±1 the side of x₀
/// on which the nearest other real singular point lies at the values
/// (so that it has t > 0). The equation in t and the chart back to x;
/// `None` when the equation has no such point (or its variable was
/// changed or mapped already).
pub fn irregular_to_infinity(red: &Reduction, values: &[GRat], freq: usize) -> Result<Option<(Reduction, Chart)>> {
    if red.change.is_some() || red.map.is_some() {
        return Ok(None);
    }
    let (field, q) = (&red.field, &red.normal.q);
    // At x = ∞ Q ~ x^d: regular (or ordinary) for d ≤ −2.
    let d = i64::from(q.num().degree(0)) - i64::from(q.den_expanded().degree(0));
    if d > -2 {
        return Ok(None);
    }
    let quartic: Vec<&crate::algebra::Poly> =
        q.den_factors().iter().filter(|(f, e)| *e == 4 && f.poly().degree(0) == 1).map(|(f, _)| f.poly()).collect();
    let [linear] = quartic.as_slice() else { return Ok(None) };
    // x₀ = −b/a for the factor a·x + b (a, b free of x).
    let (mut a, mut b) = (Vec::new(), Vec::new());
    for (m, c) in linear.terms() {
        if m.exp(0) == 1 {
            a.push((m.with_exp(0, 0), c.clone()));
        } else {
            b.push((*m, c.clone()));
        }
    }
    let (a, b) = (crate::algebra::Poly::from_terms(a), crate::algebra::Poly::from_terms(b));
    let x0 = field.div(&field.neg(&RatFunc::from_poly(b)), &RatFunc::from_poly(a))?;
    let Some(at) = x0.eval(values).map(|v| v.to_f64()) else { return Ok(None) };
    if at.1 != 0.0 || !at.0.is_finite() {
        return Ok(None);
    }
    let x0_value = at.0;
    // The nearest other real singular point decides the side.
    let mut nearest: Option<f64> = None;
    for (f, _) in q.den_factors() {
        if std::ptr::eq(f.poly(), *linear) {
            continue;
        }
        let (c, _) = numeric_coefficients(f.poly(), values, freq);
        if c.len() < 2 {
            continue;
        }
        let Ok(roots) = crate::analysis::numeric::try_roots(&c) else { continue };
        for r in roots.into_iter().filter(|r| is_real(*r) && (r.re - x0_value).abs() > 1e-9 * x0_value.abs().max(1.0)) {
            if nearest.is_none_or(|n| (r.re - x0_value).abs() < (n - x0_value).abs()) {
                nearest = Some(r.re);
            }
        }
    }
    let sign: i64 = if nearest.is_some_and(|n| n < x0_value) { -1 } else { 1 };
    let names = field.names();
    let Some(t) = ["t", "s", "tau", "t_1"].into_iter().find(|n| !names.iter().any(|m| m == n)) else { return Ok(None) };
    let mut new_names = vec![t.to_string()];
    new_names.extend(names[1..].iter().cloned());
    let new_field = Field::new(new_names.clone(), field.limits().clone())?;
    let s = RatFunc::rat(&crate::algebra::Rat::int(sign.into()));
    // x = x₀ + s/t in t's field; t = s/(x − x₀) in x's.
    let g = new_field.add(&x0, &new_field.mul(&s, &new_field.inv(&new_field.var(0))?)?)?;
    let back = field.mul(&s, &field.inv(&field.sub(&field.var(0), &x0)?)?)?;
    let (p, q) = crate::ode::change_variable(&new_field, &red.p, &red.q, &g)?;
    let normal = crate::ode::normal_form(&new_field, &p, &q)?;
    let ode = &red.ode;
    let copy = crate::ode::LinearOde {
        field: Field::new(new_names, field.limits().clone())?,
        var: t.to_string(),
        unknown: ode.unknown.clone(),
        params: ode.params.clone(),
        inferred: ode.inferred.clone(),
        p: p.clone(),
        q: q.clone(),
        lets: Vec::new(),
    };
    let moved = Reduction { ode: copy, field: new_field, var: t.to_string(), p, q, normal, change: None, schrodinger: None, map: None, family: None };
    let x = &red.var;
    let x0_text = ratfunc_text(&x0, names, Style::Text);
    let map = format!("{t} = {}", ratfunc_text(&back, names, Style::Text));
    let reason = format!(
        "{x} = {x0_text} is an irregular singular point of rank 1, spatial infinity brought to a finite point (as x = 0 is for x = 2M/r), and {x} = ∞ is not: the spectrum is solved in {t}, where that point is at infinity"
    );
    Ok(Some((moved, Chart { physical: t.to_string(), written: x.clone(), map, g: back, reason: Some(reason) })))
}

/// A polynomial's coefficients in the variable (low degree first) at the
/// values, and whether it depends on the spectral parameter there.
fn numeric_coefficients(p: &crate::algebra::Poly, values: &[GRat], freq: usize) -> (Vec<Complex64>, bool) {
    let np = super::try_npoly(p, 1.0, values, freq);
    let moves = np.c.iter().any(|row| row.iter().skip(1).any(|c| c.norm() > 0.0));
    let mut c: Vec<Complex64> = np.c.iter().map(|row| row.first().copied().unwrap_or_default()).collect();
    while c.last().is_some_and(|x| x.norm() == 0.0) {
        c.pop();
    }
    (c, moves)
}

/// True when a root is real (to the tolerance the boundary problem uses).
fn is_real(z: Complex64) -> bool {
    z.im.abs() <= 1e-9 * z.re.abs().max(1.0)
}

impl Chart {
    /// g = N/D at the values: N's and D's coefficients in the written
    /// variable (D with g's integer scale), or `None` when the map depends
    /// on the spectral parameter.
    fn parts(&self, values: &[GRat], freq: usize) -> Option<(Vec<Complex64>, Vec<Complex64>)> {
        let (num, a) = numeric_coefficients(self.g.num(), values, freq);
        let (den, b) = numeric_coefficients(&self.g.den_expanded(), values, freq);
        // The positive integer part of the denominator scales g's values, not its roots.
        let scale = crate::algebra::Rat::int(self.g.scale().clone()).to_f64();
        let den: Vec<Complex64> = den.into_iter().map(|c| c * scale).collect();
        // The denominator's scale divides the whole fraction: it does not move the roots.
        (!(a || b || den.is_empty())).then_some((num, den))
    }

    /// Where the physical end `end` lies in the written variable: the one
    /// real preimage under g at the values, or why there is none.
    pub fn written_place(&self, end: Location, values: &[GRat], freq: usize) -> WrittenPlace {
        let Some((num, den)) = self.parts(values, freq) else {
            return WrittenPlace::Undecided(format!("the map {} moves with the spectral parameter", self.map));
        };
        // Preimages of a finite r₀: the roots of N − r₀D; of ∞: the roots of D,
        // and the written ∞ when N has the higher degree.
        let (poly, at_infinity) = match end {
            Location::At(r0) => {
                let n = num.len().max(den.len());
                let p: Vec<Complex64> =
                    (0..n).map(|i| num.get(i).copied().unwrap_or_default() - r0 * den.get(i).copied().unwrap_or_default()).collect();
                let mut p = p;
                while p.last().is_some_and(|x| x.norm() <= 1e-14 * (1.0 + r0.abs())) {
                    p.pop();
                }
                // Degree lost in N − r₀D: the written ∞ maps to r₀.
                let lost = p.len() < n;
                (p, lost)
            }
            Location::Infinity => (den.clone(), num.len() > den.len()),
        };
        let roots = match poly.len() {
            0 => return WrittenPlace::Undecided(format!("every point of {} maps there", self.written)),
            1 => Vec::new(),
            _ => match crate::analysis::numeric::try_roots(&poly) {
                Ok(r) => r,
                Err(e) => return WrittenPlace::Undecided(format!("its preimages under {} were not found: {e}", self.map)),
            },
        };
        let mut real: Vec<f64> = roots.into_iter().filter(|z| is_real(*z)).map(|z| z.re).collect();
        // A root of N − r₀D that is also a root of D is no preimage.
        real.retain(|t| end == Location::Infinity || super::integrate::horner(&den, Complex64::new(*t, 0.0)).norm() > 1e-12);
        real.sort_by(f64::total_cmp);
        real.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * a.abs().max(1.0));
        match (real.as_slice(), at_infinity) {
            ([t], false) => WrittenPlace::At(*t),
            ([], true) => WrittenPlace::Infinity,
            ([], false) => WrittenPlace::Undecided(format!("no real point of {} maps there under {}", self.written, self.map)),
            _ => WrittenPlace::Undecided(format!("several real points of {} map there under {} (it is not one-to-one)", self.written, self.map)),
        }
    }

    /// The physical place of a place `at` given in the written variable
    /// (g(at), ∞ at a pole of g): how ends given in the written variable
    /// are carried to the physical one; `None` when the map moves with the
    /// spectral parameter.
    pub fn to_physical(&self, at: Location, values: &[GRat], freq: usize) -> Option<Location> {
        let (num, den) = self.parts(values, freq)?;
        match at {
            Location::At(t) => {
                let (n, d) = (super::integrate::horner(&num, Complex64::new(t, 0.0)), super::integrate::horner(&den, Complex64::new(t, 0.0)));
                if d.norm() <= 1e-14 * n.norm().max(1e-300) {
                    return Some(Location::Infinity);
                }
                let r = n / d;
                (r.re.is_finite() && r.im.abs() <= 1e-12 * r.re.abs().max(1.0)).then_some(Location::At(r.re))
            }
            Location::Infinity => match num.len().cmp(&den.len()) {
                std::cmp::Ordering::Greater => Some(Location::Infinity),
                std::cmp::Ordering::Equal => {
                    let r = num[num.len() - 1] / den[den.len() - 1];
                    (r.im.abs() <= 1e-12 * r.re.abs().max(1.0)).then_some(Location::At(r.re))
                }
                std::cmp::Ordering::Less => Some(Location::At(0.0)),
            },
        }
    }

    /// The given ends (in the written variable) carried to the physical
    /// one, left to right there (a map that reverses the order swaps them
    /// with their conditions); `None` when an end has no physical place.
    pub fn ends_to_physical(
        &self,
        given: &[(Location, Option<Condition>); 2],
        values: &[GRat],
        freq: usize,
    ) -> Option<[(Location, Option<Condition>); 2]> {
        let a = (self.to_physical(given[0].0, values, freq)?, given[0].1);
        let b = (self.to_physical(given[1].0, values, freq)?, given[1].1);
        let swap = match (a.0, b.0) {
            (Location::Infinity, _) => true,
            (Location::At(x), Location::At(y)) => x > y,
            (Location::At(_), Location::Infinity) => false,
        };
        Some(if swap { [b, a] } else { [a, b] })
    }

    /// The report's account of the change for the physical ends `ends`.
    pub fn report(&self, ends: &[Location], values: &[GRat], freq: usize) -> ChangeReport {
        let ends = ends.iter().map(|&e| ChartEnd { physical: e, written: self.written_place(e, values, freq) }).collect();
        ChangeReport { physical: self.physical.clone(), written: self.written.clone(), map: self.map.clone(), ends, reason: self.reason.clone() }
    }
}

impl ChangeReport {
    /// The account in one sentence, as printed.
    pub fn sentence(&self) -> String {
        let (r, t) = (&self.physical, &self.written);
        let mut s = self.reason.as_ref().map(|r| format!("{r}: ")).unwrap_or_default();
        s += &format!(
            "the equation is written in {t} with {}; the ends, their roles (outer horizon, infinity, ingoing, outgoing, centre) and the domain are decided in {r}, the physical variable, and the spectrum is solved there (it does not depend on the variable)",
            self.map
        );
        let places: Vec<String> = self
            .ends
            .iter()
            .map(|e| {
                let physical = match e.physical {
                    Location::At(x) => format!("{r} ≈ {}", super::boundary::location_text(Location::At(x))),
                    Location::Infinity => format!("{r} = ∞"),
                };
                match &e.written {
                    WrittenPlace::At(x) => format!("{physical} is {t} ≈ {}", super::boundary::location_text(Location::At(*x))),
                    WrittenPlace::Infinity => format!("{physical} is {t} = ∞"),
                    WrittenPlace::Undecided(why) => format!("where {physical} lies in {t} cannot be decided: {why}"),
                }
            })
            .collect();
        if !places.is_empty() {
            s.push_str(": ");
            s.push_str(&places.join(", "));
        }
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ode::{reduce, Input, ReduceOptions};

    fn chart(subst: &str) -> Chart {
        let opts = ReduceOptions { subst: Some(subst.to_string()), ..ReduceOptions::default() };
        let red = reduce(&Input::Inline { equation: "y'' + (w^2 - 1/r^2)*y = 0", var: "r" }, &opts).expect("reduces");
        physical(&red).expect("physical").expect("a change").1
    }

    /// Preimages under r = 1/t (exact: t₀ = 1/r₀, ∞ ↦ 0, 0 ↦ ∞) and under
    /// r = t², which is not one-to-one.
    #[test]
    fn ends_are_carried_through_the_map() {
        let values = vec![GRat::zero(), GRat::zero()];
        let c = chart("r=1/t");
        assert_eq!(c.written_place(Location::At(4.0), &values, 1), WrittenPlace::At(0.25));
        assert_eq!(c.written_place(Location::Infinity, &values, 1), WrittenPlace::At(0.0));
        assert_eq!(c.written_place(Location::At(0.0), &values, 1), WrittenPlace::Infinity);
        assert_eq!(c.to_physical(Location::At(0.5), &values, 1), Some(Location::At(2.0)));
        assert_eq!(c.to_physical(Location::At(0.0), &values, 1), Some(Location::Infinity));
        let given = [(Location::At(0.0), Some(Condition::Outgoing)), (Location::At(0.5), Some(Condition::IntoHorizon))];
        let ends = c.ends_to_physical(&given, &values, 1).expect("ends");
        assert_eq!(ends, [(Location::At(2.0), Some(Condition::IntoHorizon)), (Location::Infinity, Some(Condition::Outgoing))]);
        let c = chart("r=1/(2*t)");
        assert_eq!(c.to_physical(Location::At(0.25), &values, 1), Some(Location::At(2.0)));
        assert_eq!(c.written_place(Location::At(2.0), &values, 1), WrittenPlace::At(0.25));
        let c = chart("r=t^2");
        assert!(matches!(c.written_place(Location::At(4.0), &values, 1), WrittenPlace::Undecided(_)));
        assert_eq!(c.to_physical(Location::At(-2.0), &values, 1), Some(Location::At(4.0)));
    }
}
