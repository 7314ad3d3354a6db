//! Formal solutions at an irregular singular point: ψ ~ exp(S(x)) x^ρ with
//! u = S' solving the Riccati equation u² + u' + Q = 0, expanded in half-integer
//! steps of the local parameter (DESIGN.md: at infinity Q → A + B/z + … gives
//! ψ ~ exp(±√(−A) z) z^(∓B/(2√(−A)))).

use crate::algebra::{Field, Rat, RatFunc};
use crate::error::Result;

/// One formal solution's leading data.
#[derive(Clone, Debug)]
pub struct Formal {
    /// Terms of the exponent S: (power of the local parameter, coefficient), highest first.
    pub exponent: Vec<(Rat, RatFunc)>,
    /// The power ρ of the local parameter.
    pub rho: RatFunc,
    /// The leading coefficient u₀ of S' (its sign tells the branch).
    pub lead: RatFunc,
    /// The power of the local parameter that u₀ multiplies in S'.
    pub lead_power: Rat,
}

/// Solves for the formal solutions given Q's expansion `c[i]` multiplying
/// x^(L + σ i), i = 0, 1, …, with `sigma` = +1 at a finite point (x = z − z₀,
/// increasing powers) and −1 at infinity (x = z, decreasing powers).
/// Returns `None` when √(−c₀) is not exact in the parameter field.
pub fn formal_solutions(k: &Field, c: &[RatFunc], lead: i64, sigma: i64) -> Result<Option<Vec<Formal>>> {
    let Some(c0) = c.first() else { return Ok(None) };
    let Some(u0) = k.sqrt_exact(&k.neg(c0))? else {
        return Ok(None);
    };
    // u = Σ u_j x^(L/2 + σ j/2); the 1/x term sits at j = σ(−2 − L).
    let jrho = sigma * (-2 - lead);
    if jrho < 0 {
        return Ok(None);
    }
    let half = Rat::new(1.into(), 2.into()).expect("nonzero");
    let mut out = Vec::new();
    for branch in [u0.clone(), k.neg(&u0)] {
        let mut u: Vec<RatFunc> = vec![branch.clone()];
        let two_u0 = k.mul(&RatFunc::rat(&Rat::int(2.into())), &branch)?;
        for j in 1..=jrho {
            // Coefficient of x^(L + σ j/2) in u² + u' + Q.
            let mut s = RatFunc::zero();
            for a in 1..j {
                s = k.add(&s, &k.mul(&u[a as usize], &u[(j - a) as usize])?)?;
            }
            // u' term: u_m (L/2 + σ m/2) x^(L/2 + σ m/2 − 1) lands at J = −σL + m − 2σ.
            let m = j + sigma * lead + 2 * sigma;
            if m >= 0 && m < j {
                let e = Rat::new((lead + sigma * m).into(), 2.into()).expect("nonzero");
                s = k.add(&s, &k.mul(&u[m as usize], &RatFunc::rat(&e))?)?;
            }
            if j % 2 == 0 {
                let i = (j / 2) as usize;
                if let Some(ci) = c.get(i) {
                    s = k.add(&s, ci)?;
                }
            }
            u.push(k.neg(&k.div(&s, &two_u0)?));
        }
        let mut exponent = Vec::new();
        for (j, uj) in u.iter().enumerate().take(jrho as usize) {
            if uj.is_zero() {
                continue;
            }
            // ∫ x^e = x^(e+1)/(e+1), e = L/2 + σ j/2.
            let e1 = Rat::new((lead + sigma * j as i64 + 2).into(), 2.into()).expect("nonzero");
            exponent.push((e1.clone(), k.div(uj, &RatFunc::rat(&e1))?));
        }
        let lead_power = Rat::new(lead.into(), 2.into()).expect("nonzero");
        let _ = &half;
        out.push(Formal { exponent, rho: u[jrho as usize].clone(), lead: branch, lead_power });
    }
    Ok(Some(out))
}
