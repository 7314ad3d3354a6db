//! Suggested numerical methods, driven by the class and the boundary data,
//! each with the published source it follows.

use super::{Analysis, Class, Kind, Place};

/// One suggestion.
#[derive(Clone, Debug)]
pub struct Method {
    /// The method's name.
    pub method: &'static str,
    /// Why it fits this equation.
    pub reason: String,
    /// Where it is published.
    pub source: &'static str,
}

/// Methods for an analysis; `bound` is Some(true) for a bound-state problem.
pub fn suggest(a: &Analysis, bound: Option<bool>) -> Vec<Method> {
    let mut out = Vec::new();
    let inf = a.points.iter().find(|p| matches!(p.place, Place::Infinity));
    let inf_irregular = inf.is_some_and(|p| p.kind == Kind::Irregular);
    let regular_finite = a.points.iter().filter(|p| p.kind == Kind::Regular && !matches!(p.place, Place::Infinity)).count();
    let bound = bound == Some(true);
    match a.class {
        Class::ConfluentHeun if inf_irregular => out.push(Method {
            method: "continued fraction",
            reason: "two regular points and rank 1 at ∞: a Jaffé-type series about one regular point in u = (z − z₁)/(z − z₂) gives a three-term recurrence".into(),
            source: "E. W. Leaver, Proc. R. Soc. Lond. A 402 (1985) 285",
        }),
        Class::GeneralHeun | Class::Fuchsian => out.push(Method {
            method: "Frobenius series with a continued fraction",
            reason: "regular singular points only: the local series between two points gives a three-term recurrence (Heun) or longer, reduced by Gaussian elimination".into(),
            source: "E. W. Leaver, Phys. Rev. D 41 (1990) 2986",
        }),
        Class::Hypergeometric | Class::ConfluentHypergeometric | Class::ParabolicCylinder | Class::Airy => out.push(Method {
            method: "closed form",
            reason: "the equation is of hypergeometric type: its solutions and connection formulas are tabulated".into(),
            source: "DLMF chapters 9, 10, 12, 13, 15",
        }),
        Class::DoublyConfluentHeun | Class::ReducedDoublyConfluentHeun | Class::DoublyReducedDoublyConfluentHeun => out.push(Method {
            method: "two-sided Laurent series",
            reason: "irregular points at both ends: a Laurent series in z gives a two-sided recurrence whose solvability fixes a characteristic exponent".into(),
            source: "E. W. Leaver, J. Math. Phys. 27 (1986) 1238",
        }),
        Class::ConfluentHeun
        | Class::Euler
        | Class::ReducedConfluentHypergeometric
        | Class::BiconfluentHeun
        | Class::TriconfluentHeun
        | Class::ReducedConfluentHeun
        | Class::Irregular => {}
    }
    if regular_finite > 0 && inf_irregular && !bound {
        out.push(Method {
            method: "WKB estimate",
            reason: "a potential barrier between a regular point and the irregular point at ∞: third-order WKB gives first estimates of the modes"
                .into(),
            source: "B. F. Schutz & C. M. Will, ApJ 291 (1985) L33; S. Iyer & C. M. Will, Phys. Rev. D 35 (1987) 3621",
        });
        out.push(Method {
            method: "eikonal estimate",
            reason: "the peak of the potential gives ω ≈ Ω_c(l + ½) − i(n + ½)λ as a seed for root finding".into(),
            source: "V. Cardoso et al., Phys. Rev. D 79 (2009) 064016",
        });
    }
    if bound || (!inf_irregular && regular_finite == 0) {
        out.push(Method {
            method: "spectral collocation",
            reason: "normalisable boundary conditions at both ends: a Chebyshev collocation matrix gives many eigenvalues at once".into(),
            source: "J. P. Boyd, Chebyshev and Fourier Spectral Methods (2001)",
        });
    }
    out.push(Method {
        method: "direct integration",
        reason: "an independent check: Frobenius series at one end, asymptotic series at the other, integrated along a complex path and matched by a Wronskian".into(),
        source: "common practice",
    });
    out
}
