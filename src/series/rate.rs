//! A square root adjoined as a symbol at an irregular infinity of rank 1.
//!
//! Where Q → −P at infinity with P not a perfect square (a massive field:
//! P = μ² − ω²), the formal solutions there are e^(±√P z) z^ν and their
//! leading coefficient is not in the parameter field. A fresh symbol χ with
//! χ² = P is adjoined exactly by eliminating a parameter other than the
//! spectral one: when some parameter p enters P linearly, or only through
//! p² (as a mass usually does), and the whole equation holds p the same way,
//! p (or p²) is replaced everywhere by its expression in χ and the others.
//! The leading coefficient at infinity is then ±χ exactly, and the series
//! stage runs unchanged with χ as one more symbol. The branch of χ is not
//! decided here: the series uses the formal solution e^(−χz), and the
//! numeric stage evaluates χ(ω) on the branch its end condition picks.

use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{Field, Poly, RatFunc};
use crate::analysis::{analyse, Place};
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;

/// The equation rewritten with an adjoined symbol χ, χ² = P.
#[derive(Debug)]
pub struct AdjoinedRate {
    /// The rewritten equation: its field is the original one with χ
    /// appended last (the eliminated parameter keeps its index and no
    /// longer occurs).
    pub red: Reduction,
    /// χ's field index (the original field's length).
    pub index: usize,
    /// χ's name.
    pub symbol: String,
    /// P, in the original field.
    pub square: RatFunc,
    /// The eliminated parameter's field index.
    pub eliminated: usize,
    /// The 1-based number of the formal solution e^(−χz) at infinity in the
    /// rewritten equation's analysis (the pick at "∞").
    pub branch: usize,
    /// What χ stands for and what was substituted, in words.
    pub meaning: String,
    /// The rewritten equation's analysis.
    pub analysis: crate::analysis::Analysis,
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// −lim Q at infinity when Q tends to a nonzero value there (an irregular
/// point of rank 1), else `None`.
fn limit_at_infinity(k: &Field, q: &RatFunc) -> Result<Option<RatFunc>> {
    let num = q.num().to_univariate(0);
    let den = q.den_expanded().mul_int(q.scale()).to_univariate(0);
    if q.is_zero() || num.len() != den.len() {
        return Ok(None);
    }
    let lead = |v: &[Poly]| RatFunc::from_poly(v.last().cloned().unwrap_or_else(|| Poly::int(0)));
    Ok(Some(k.neg(&k.div(&lead(&num), &lead(&den))?)))
}

/// `p` with variable `i` occurring only in powers divisible by `e`, in the
/// powers divided by `e`; `None` when another power occurs.
fn deflate(p: &Poly, i: usize, e: usize) -> Option<Poly> {
    let u = p.to_univariate(i);
    if u.iter().enumerate().any(|(j, c)| j % e != 0 && !c.is_zero()) {
        return None;
    }
    let kept: Vec<Poly> = u.into_iter().step_by(e).collect();
    Some(Poly::from_univariate(i, &kept))
}

/// `r` with x_i^e replaced by `s` (every power of x_i in `r` a multiple of e).
fn substitute_power(k: &Field, r: &RatFunc, i: usize, e: usize, s: &RatFunc) -> Result<Option<RatFunc>> {
    let (Some(num), Some(den)) = (deflate(r.num(), i, e), deflate(&r.den_expanded().mul_int(r.scale()), i, e)) else { return Ok(None) };
    let q = k.div(&RatFunc::from_poly(num), &RatFunc::from_poly(den))?;
    Ok(Some(k.compose(&q, i, s)?))
}

/// A parameter to eliminate: its index, the power e ∈ {1, 2} through which
/// it enters P = (a x^e + b)/d, and the expression of x^e in χ.
struct Elimination {
    index: usize,
    power: usize,
    value: RatFunc,
}

/// The parameters (not the variable, not `freq`) that P holds linearly or
/// through their square alone, with a nonzero coefficient free of the
/// others first; each with x^e = (χ² d − b)/a in the field `kc` (χ at `chi`).
fn eliminations(kc: &Field, square: &RatFunc, freq: usize, chi: usize) -> Result<Vec<Elimination>> {
    let mut out: Vec<(bool, Elimination)> = Vec::new();
    let d = RatFunc::from_poly(square.den_expanded().mul_int(square.scale()));
    for i in 1..chi {
        if i == freq || !square.num().uses_var(i) || d.uses_var(i) {
            continue;
        }
        let u = square.num().to_univariate(i);
        let power = match u.len() {
            2 => 1,
            3 if u[1].is_zero() => 2,
            _ => continue,
        };
        let (a, b) = (RatFunc::from_poly(u[power].clone()), RatFunc::from_poly(u[0].clone()));
        let chi2 = kc.pow(&kc.var(chi), 2)?;
        let value = kc.div(&kc.sub(&kc.mul(&chi2, &d)?, &b)?, &a)?;
        out.push((a.as_constant().is_some(), Elimination { index: i, power, value }));
    }
    out.sort_by_key(|(constant, _)| !*constant);
    Ok(out.into_iter().map(|(_, e)| e).collect())
}

/// True when Q tends at infinity to a value −P whose square root is not
/// exact (an irregular point of rank 1 with no exact leading coefficient):
/// the case [`adjoin_rate`] is for. Cheap: no analysis.
pub fn needs_rate(red: &Reduction) -> Result<bool> {
    let k = &red.field;
    match limit_at_infinity(k, &red.normal.q)? {
        Some(p) => Ok(k.sqrt_exact(&p)?.is_none()),
        None => Ok(false),
    }
}

/// The parameter [`adjoin_rate`] would eliminate, when `red` needs a rate
/// and one can be adjoined: a caller substituting values must keep it
/// symbolic (with its value, P can no longer be solved for it).
pub fn rate_parameter(red: &Reduction, freq: usize) -> Result<Option<usize>> {
    if !needs_rate(red)? {
        return Ok(None);
    }
    Ok(adjoin_rate(red, freq).ok().map(|a| a.eliminated))
}

/// Adjoins χ = √P at the irregular infinity of `red` (`freq` the spectral
/// parameter's field index): see the module notes. An error says plainly
/// why it cannot be done exactly.
pub fn adjoin_rate(red: &Reduction, freq: usize) -> Result<AdjoinedRate> {
    let k = &red.field;
    let Some(square) = limit_at_infinity(k, &red.normal.q)? else {
        return Err(usage("infinity is not an irregular point of rank 1 (Q does not tend to a nonzero value there): no square root to adjoin"));
    };
    if k.sqrt_exact(&square)?.is_some() {
        return Err(Error::new(ErrorKind::Internal, "the leading coefficient at ∞ is exact: nothing to adjoin"));
    }
    let ptext = ratfunc_text(&square, k.names(), Style::Text);
    let mut names = k.names().to_vec();
    if names.len() >= crate::algebra::MAX_VARS {
        return Err(Error::new(ErrorKind::Limit, "too many symbols to adjoin the square root at ∞"));
    }
    let symbol = crate::ode::fresh_name("χ", &names);
    names.push(symbol.clone());
    let chi = names.len() - 1;
    let kc = Field::new(names, k.limits().clone())?;
    let cannot = |why: &str| {
        usage(format!(
            "the formal solutions at ∞ have the leading coefficient ±√({ptext}), not exact in the parameters; a symbol χ with χ² = {ptext} is adjoined by eliminating a parameter other than {} that enters it linearly or through its square alone, {why}",
            k.names()[freq]
        ))
    };
    let found = eliminations(&kc, &square, freq, chi)?;
    if found.is_empty() {
        return Err(cannot("and none does"));
    }
    for el in found {
        let (Some(p), Some(q)) =
            (substitute_power(&kc, &red.p, el.index, el.power, &el.value)?, substitute_power(&kc, &red.q, el.index, el.power, &el.value)?)
        else {
            continue;
        };
        let red2 = rewritten(red, &kc, p, q)?;
        let an = analyse(&red2)?;
        let Some(inf) = an.points.iter().find(|p| matches!(p.place, Place::Infinity)) else { continue };
        let minus = kc.neg(&kc.var(chi));
        let Some(b) = inf.formal.iter().position(|f| f.lead == minus && f.exponent.len() == 1) else { continue };
        let name = &k.names()[el.index];
        let sub = if el.power == 1 { name.clone() } else { format!("{name}^2") };
        let meaning = format!("{symbol} = √({ptext}), adjoined as a symbol: {sub} = {} throughout", ratfunc_text(&el.value, kc.names(), Style::Text));
        return Ok(AdjoinedRate { red: red2, index: chi, symbol, square, eliminated: el.index, branch: b + 1, meaning, analysis: an });
    }
    Err(cannot("but the equation holds each such parameter otherwise as well (or the rewritten one has no formal solution e^(−χz))"))
}

/// The reduction of the equation y'' + p y' + q y = 0 in the field `kc`.
fn rewritten(red: &Reduction, kc: &Field, p: RatFunc, q: RatFunc) -> Result<Reduction> {
    let normal = crate::ode::normal_form(kc, &p, &q)?;
    let ode = crate::ode::LinearOde {
        field: Field::new(kc.names().to_vec(), kc.limits().clone())?,
        var: red.var.clone(),
        unknown: red.ode.unknown.clone(),
        params: kc.names()[1..].to_vec(),
        inferred: Vec::new(),
        p: p.clone(),
        q: q.clone(),
        lets: Vec::new(),
    };
    let field = Field::new(kc.names().to_vec(), kc.limits().clone())?;
    Ok(Reduction { ode, field, var: red.var.clone(), p, q, normal, change: None, schrodinger: None, map: None, family: None })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ode::{reduce, Input, ReduceOptions};

    const MASSIVE: &str = "var r\nparam M, mu, l, omega\nlet f = 1 - 2*M/r\node f*(f*u')' + (omega^2 - f*(l*(l+1)/r^2 + 2*M/r^3 + mu^2))*u = 0\n";

    #[test]
    fn a_mass_is_eliminated_for_the_decay_rate() {
        let red = reduce(&Input::Program(MASSIVE), &ReduceOptions::default()).unwrap();
        assert!(needs_rate(&red).unwrap());
        let a = adjoin_rate(&red, 4).unwrap();
        assert_eq!(a.eliminated, 2);
        assert_eq!(a.index, 5);
        assert!(a.meaning.contains("mu^2 = "), "{}", a.meaning);
        // The rewritten equation no longer holds μ, and its leading
        // coefficient at ∞ is ±χ exactly.
        assert!(!a.red.p.uses_var(2) && !a.red.q.uses_var(2));
        assert!(!needs_rate(&a.red).unwrap());
        // χ² = P: μ² − ω² at μ = 3/10, ω = 1/5 is 1/20.
        let k = &red.field;
        let g = |n: i64, d: i64| crate::algebra::GRat::real(crate::algebra::Rat::new(n.into(), d.into()).unwrap());
        let v = a.square.eval(&[g(0, 1), g(1, 1), g(3, 10), g(0, 1), g(1, 5)]).unwrap();
        assert_eq!(v, g(1, 20), "{}", ratfunc_text(&a.square, k.names(), Style::Text));
    }

    #[test]
    fn an_odd_occurrence_elsewhere_is_said_plainly() {
        // μ enters P through μ², but the equation also holds μ alone.
        let src = "var r\nparam M, mu, omega\nlet f = 1 - 2*M/r\node f*(f*u')' + (omega^2 - f*(mu/r^3 + mu^2))*u = 0\n";
        let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let e = adjoin_rate(&red, 3).unwrap_err();
        assert!(e.message.contains("otherwise as well"), "{}", e.message);
    }
}
