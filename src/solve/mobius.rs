//! A numeric series between two numeric ends: the continued fraction of any
//! [`BoundaryProblem`] whose ends the exact layer cannot hold (roots of a
//! cubic or higher factor, two horizons), built from the numeric equation.
//!
//! The behaviour chosen at both ends is factored out of ψ as the global
//! spectral method does ([`super::global::factors`], each exponent affine in
//! ω, fitted at two frequencies and checked at a third;
//! `global::factored` gives the remainder's equation in z as
//! polynomials in (z, ω)). A Möbius variable
//!
//! u = (z − z₀)(z₁ − z_p) / ((z − z_p)(z₁ − z₀))
//!
//! sends the left end z₀ to 0, the right end z₁ to 1 and a pole z_p to ∞
//! (at an infinite right end u = (z − z₀)/(z − z_p); with z_p = ∞ the map is
//! linear). The pole is chosen among the other zeros of A and infinity so
//! that the other singular points lie as far outside the unit disc as
//! possible; the smallest |u| among them is the series' convergence radius
//! R > 1. The equation in u, cleared of denominators and with the factors
//! common to its three coefficients at u = 0 and u = 1 divided out, gives the
//! recurrence for v = Σ aₙ uⁿ coefficient by coefficient of uⁿ, with
//! coefficients polynomials in (n, ω) with complex double coefficients, of
//! however many terms; the continued fraction reduces it to three terms by
//! Gaussian elimination ([`super::cf::inversion`]).
//!
//! The mode condition is that v's series converges at u = 1 and beyond,
//! i.e. that aₙ is the minimal solution: the solution that obeys the chosen
//! condition at the far end is analytic there, so its coefficients fall as
//! R⁻ⁿ, while the other behaves as (1 − u)^δ (δ the exponent difference
//! after factoring, a regular far end) or with an essential singularity (an
//! irregular one), with coefficients ~ n^(−δ−1) or e^(±c√n). The tail of
//! the continued fraction is therefore the root of smaller modulus of the
//! recurrence's characteristic equation at the truncation depth (→ 1/R for a
//! regular far end; the ratio of the dominant solution tends to 1 with a
//! power-law correction); a recurrence with three terms from the start uses
//! the tail of [`super::cf`] solved order by order in n^(−1/2), whose odd
//! orders vanish at a regular far end.
//!
//! At an anti-de Sitter boundary (a regular infinity whose exponents differ
//! by an integer k) the same criterion holds: with the normalisable exponent
//! factored out, the other solution is (1 − u)^(−k) times a series, with a
//! logarithm in general — singular at u = 1, its coefficients grow like
//! n^(k−1) — while the normalisable one is analytic out to R. So the
//! minimal solution is the mode, and no partial sum of the series at u = 1
//! is needed (the sum there is what the minimal solution makes converge).

use super::boundary::{BoundaryProblem, Location, Nature};
use super::cf::{Crowding, NPoly, NumRecurrence, Precision};
use super::global::{divide_common, factored, factors, Bi};
use crate::error::{Error, ErrorKind, Result};
use num_complex::Complex64;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

/// A convergence radius below which the other singular points crowd the
/// unit circle: the recurrence's characteristic roots then nearly coincide
/// and solving it in doubles loses five to eight digits (measured on
/// Schwarzschild–de Sitter, radius 1.23 down to 1.04), so it is solved in
/// double-double arithmetic; at 1.41 (Schwarzschild–anti-de Sitter, r₊ = L)
/// doubles keep thirteen digits or more.
const CROWDED: f64 = 1.3;

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

fn cx(x: f64) -> Complex64 {
    Complex64::new(x, 0.0)
}

/// The point of the z-plane sent to u = ∞.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Pole {
    /// A finite point (another singular point of the equation).
    At(Complex64),
    /// The point at infinity (the map is linear).
    Infinity,
}

/// The numeric series between the two ends of a boundary problem.
#[derive(Clone, Debug)]
pub struct MobiusSeries {
    /// min |u| over the other singular points (∞ when there are none).
    pub radius: f64,
    /// The recurrence for the series' coefficients, numeric in (n, ω).
    pub recurrence: NumRecurrence,
    /// The map, the factored behaviour and the radius, in words (for the report).
    pub description: String,
}

/// u = (αz + β)/(γz + δ).
#[derive(Clone, Copy, Debug)]
struct Map {
    alpha: Complex64,
    beta: Complex64,
    gamma: Complex64,
    delta: Complex64,
}

impl Map {
    /// The map sending z₀ → 0, z₁ → 1 and the pole → ∞ (`None` for an
    /// infinite right end with an infinite pole).
    fn new(z0: f64, z1: Location, pole: Pole) -> Option<Map> {
        let a = cx(z0);
        match (z1, pole) {
            (Location::At(b), Pole::At(p)) => {
                let b = cx(b);
                Some(Map { alpha: b - p, beta: -a * (b - p), gamma: b - a, delta: -p * (b - a) })
            }
            (Location::At(b), Pole::Infinity) => Some(Map { alpha: cx(1.0), beta: -a, gamma: ZERO, delta: cx(b) - a }),
            (Location::Infinity, Pole::At(p)) => Some(Map { alpha: cx(1.0), beta: -a, gamma: cx(1.0), delta: -p }),
            (Location::Infinity, Pole::Infinity) => None,
        }
    }

    /// u at a finite z (∞ maps to α/γ).
    fn at(&self, z: Complex64) -> Complex64 {
        (self.alpha * z + self.beta) / (self.gamma * z + self.delta)
    }
}

/// The finite singular points other than the two ends (each a possible pole).
fn others(bp: &BoundaryProblem, z0: f64) -> Vec<Complex64> {
    let near = |x: Complex64, y: Complex64| (x - y).norm() <= 1e-9 * y.norm().max(1.0);
    let mut out: Vec<Complex64> = Vec::new();
    for z in &bp.zeros {
        let end = near(*z, cx(z0)) || matches!(bp.ends[1].location, Location::At(b) if near(*z, cx(b)));
        if !end && !out.iter().any(|o| near(*o, *z)) {
            out.push(*z);
        }
    }
    out
}

/// The pole that puts every other singular point farthest from the unit
/// disc, with the radius and the point that sets it.
fn best_pole(bp: &BoundaryProblem, z0: f64) -> Option<(Map, Pole, f64, Option<Complex64>)> {
    let points = others(bp, z0);
    let finite_right = matches!(bp.ends[1].location, Location::At(_));
    let mut candidates: Vec<Pole> = points.iter().map(|p| Pole::At(*p)).collect();
    if finite_right {
        candidates.push(Pole::Infinity);
    }
    let mut best: Option<(Map, Pole, f64, Option<Complex64>)> = None;
    for pole in candidates {
        let Some(map) = Map::new(z0, bp.ends[1].location, pole) else { continue };
        let mut radius = f64::INFINITY;
        let mut nearest = None;
        for z in &points {
            if Pole::At(*z) == pole {
                continue;
            }
            let r = map.at(*z).norm();
            if r < radius {
                radius = r;
                nearest = Some(*z);
            }
        }
        // z = ∞ is a singular point of ψ (it behaves as a power there) unless it is the pole or an end.
        if finite_right && pole != Pole::Infinity {
            let r = (map.alpha / map.gamma).norm();
            if r < radius {
                radius = r;
                nearest = None;
            }
        }
        if best.as_ref().is_none_or(|b| radius > b.2) {
            best = Some((map, pole, radius, nearest));
        }
    }
    best
}

/// hᵏ.
fn power(h: &Bi, k: usize) -> Bi {
    let mut out = Bi::in_s(&[cx(1.0)]);
    for _ in 0..k {
        out = out.mul(h);
    }
    out
}

/// A complex number for the report.
fn text(z: Complex64) -> String {
    let r = |x: f64| {
        let s = format!("{x:.6}");
        let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
        if s == "-0" {
            "0".to_string()
        } else {
            s
        }
    };
    if z.im.abs() <= 1e-12 * z.re.abs().max(1.0) {
        r(z.re)
    } else {
        format!("{}{}{}i", r(z.re), if z.im < 0.0 { "-" } else { "+" }, r(z.im.abs()))
    }
}

/// The numeric series between the ends of `bp` (a finite left end; a finite
/// right end or infinity), or why it cannot be set up; `var` names the
/// variable in the description.
pub fn series(bp: &BoundaryProblem, var: &str) -> Result<MobiusSeries> {
    let Location::At(z0) = bp.ends[0].location else { return Err(usage("the left end must be finite")) };
    let f = factors(bp).map_err(|e| usage(format!("the behaviour at the ends cannot be factored out: {}", e.message)))?;
    let (map, pole, radius, nearest) =
        best_pole(bp, z0).ok_or_else(|| usage("no point can be sent to u = ∞ (an infinite right end needs another singular point)"))?;
    if radius <= 1.0 + 1e-6 {
        return Err(usage(format!("no Möbius pole puts every other singular point outside the unit disc (best convergence radius {radius:.4})")));
    }
    let anchor = match pole {
        Pole::At(p) => p,
        Pole::Infinity => ZERO,
    };
    let [p2, p1, p0] = factored(bp, &f, anchor)?;
    // z = g(u)/h(u), dz/du = Δ/h², h' = −γ.
    let g = Bi::in_s(&[-map.beta, map.delta]);
    let h = Bi::in_s(&[map.alpha, -map.gamma]);
    let det = map.alpha * map.delta - map.beta * map.gamma;
    let ((r2, n2), (r1, n1), (r0, n0)) = (p2.lift(&g, &h), p1.lift(&g, &h), p0.lift(&g, &h));
    let m = (n2 as isize - 3).max(n1 as isize - 2).max(n0 as isize).max(0) as usize;
    let c2 = r2.mul(&power(&h, m + 4 - n2));
    let c1 = r2.mul(&power(&h, m + 3 - n2)).scale(-2.0 * map.gamma).add(&r1.mul(&power(&h, m + 2 - n1)).scale(det));
    let c0 = r0.mul(&power(&h, m - n0)).scale(det * det);
    let mut c = [c2, c1, c0];
    divide_common(&mut c, &[0.0, 1.0])?;
    let mut recurrence = recurrence_of(&c)?;
    if radius < CROWDED {
        recurrence.precision = Precision::DoubleDouble;
        // The exponents at a finite regular end sum to 1 (normal form): the
        // other one less the chosen ρ is 1 − 2ρ.
        let gap = match bp.ends[1].location {
            Location::At(_) => [cx(1.0) - 2.0 * f.right.c0, -2.0 * f.right.c1],
            Location::Infinity => [ZERO, ZERO],
        };
        recurrence.crowding = Some(Crowding { radius, gap });
    }
    if recurrence.terms.len() == 2 && bp.ends[1].location == Location::Infinity {
        // A two-term recurrence: the series converges to the far end's
        // wanted behaviour only where it terminates, a_{N+1} = 0, i.e.
        // β_N(ω) = 0. A zero third term makes the k-th inversion exactly
        // β_k, whose roots are those of the series ending at degree k.
        // (Between two finite ends the caller takes the exact recurrence
        // about a horizon instead, which solves the terminating condition
        // exactly.)
        let nw = recurrence.terms.iter().flat_map(|t| t.c.iter().map(|r| r.len())).max().unwrap_or(1);
        recurrence.terms.push(super::cf::NPoly { c: vec![vec![ZERO; nw]] });
    }
    if recurrence.terms.len() < 3 {
        return Err(usage(format!("the series' recurrence has {} terms: no continued fraction", recurrence.terms.len())));
    }
    let pole_text = match pole {
        Pole::At(p) => format!("{var} = {}", text(p)),
        Pole::Infinity => format!("{var} = ∞"),
    };
    // x − p in words: "x" for p = 0, "x + 1" for p = −1.
    let diff = |x: &str, p: Complex64| -> String {
        let t = text(p);
        match t.strip_prefix('-') {
            _ if t == "0" => x.to_string(),
            Some(rest) => format!("{x} + {rest}"),
            None => format!("{x} − {t}"),
        }
    };
    // The series variable's name in words: u, unless the equation's is u.
    let u = ["u", "v", "s"].into_iter().find(|n| *n != var).unwrap_or("u");
    let map_text = match (bp.ends[1].location, pole) {
        (Location::At(b), Pole::At(p)) => {
            let bt = text(cx(b));
            format!("{u} = ({})({})/(({})({}))", diff(var, cx(z0)), diff(&bt, p), diff(var, p), diff(&bt, cx(z0)))
        }
        (Location::At(b), Pole::Infinity) => format!("{u} = ({})/({})", diff(var, cx(z0)), diff(&text(cx(b)), cx(z0))),
        (Location::Infinity, Pole::At(p)) => format!("{u} = ({})/({})", diff(var, cx(z0)), diff(var, p)),
        (Location::Infinity, Pole::Infinity) => String::new(),
    };
    let limit = match nearest {
        Some(z) => format!("{var} = {}", text(z)),
        None => format!("{var} = ∞"),
    };
    let radius_text = match (radius.is_finite(), bp.ends[1].nature) {
        // Leaver's condition: the mode's series converges at u = 1 itself, not beyond.
        (true, Nature::IrregularRank1) => format!(
            "the other singular points lie at |{u}| ≥ {radius:.6} (set by {limit}); the far end is irregular, so the mode's series converges up to {u} = 1"
        ),
        (true, _) => format!("convergence radius {radius:.6} (set by {limit})"),
        (false, _) => "no other singular point".to_string(),
    };
    let description = format!(
        "ψ = (behaviour chosen at both ends) × Σ aₙ {u}ⁿ, {map_text} (Möbius: the left end → 0, the right end → 1, {pole_text} → ∞); {radius_text}; {}-term recurrence with complex double coefficients",
        recurrence.terms.len()
    );
    Ok(MobiusSeries { radius, recurrence, description })
}

/// The recurrence Σⱼ cⱼ(n, ω) a_{n+1−j} = 0 of c₂ v'' + c₁ v' + c₀ v = 0 for
/// v = Σ aₘ uᵐ: the coefficient of u^(n+1+s) where s is the lowest shift
/// (cₖ's row i moves aₘ to u^(m+i−k)).
fn recurrence_of(c: &[Bi; 3]) -> Result<NumRecurrence> {
    let size = c.iter().map(|p| p.size()).fold(0.0, f64::max);
    if size == 0.0 || !size.is_finite() {
        return Err(usage("the series' equation vanishes identically or is not finite"));
    }
    // Rows below rounding are zero (the remainder of the divisions above).
    let live = |p: &Bi, i: usize| p.0.get(i).is_some_and(|r| r.iter().any(|x| x.norm() > 1e-11 * size));
    let mut shifts: Vec<isize> = Vec::new();
    for (k, p) in c.iter().enumerate() {
        let order = 2 - k as isize;
        for i in 0..p.0.len() {
            if live(p, i) {
                shifts.push(i as isize - order);
            }
        }
    }
    let (lo, hi) = (*shifts.iter().min().unwrap_or(&0), *shifts.iter().max().unwrap_or(&0));
    let k = (hi - lo + 1) as usize;
    let nw = c.iter().map(|p| p.deg_w()).max().unwrap_or(0) + 1;
    let mut terms = Vec::with_capacity(k);
    for j in 0..k {
        let s = lo + j as isize;
        // m = n + e₁ with e₁ = 1 − j; m − 1 = n + e₂.
        let (e1, e2) = (1.0 - j as f64, -(j as f64));
        let mut out = NPoly { c: vec![vec![ZERO; nw]; 3] };
        let row = |p: &Bi, i: isize| -> Vec<Complex64> {
            if i >= 0 && live(p, i as usize) {
                (0..nw).map(|b| p.get(i as usize, b) / size).collect()
            } else {
                vec![ZERO; nw]
            }
        };
        let (r2, r1, r0) = (row(&c[0], s + 2), row(&c[1], s + 1), row(&c[2], s));
        for b in 0..nw {
            out.c[2][b] += r2[b];
            out.c[1][b] += r2[b] * (e1 + e2) + r1[b];
            out.c[0][b] += r2[b] * (e1 * e2) + r1[b] * e1 + r0[b];
        }
        terms.push(out);
    }
    Ok(NumRecurrence { terms, rate: None, precision: Precision::Double, crowding: None })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_recurrence_of_the_hypergeometric_equation() {
        // u(1 − u) v'' + (c − (a + b + 1)u) v' − ab v = 0 (DLMF 15.10.1) with
        // a = ω, b = 2, c = 3/2: aₙ₊₁/aₙ = (n + a)(n + b)/((n + 1)(n + c))
        // (DLMF 15.2.1), i.e. (n + 1)(n + c) aₙ₊₁ − (n + a)(n + b) aₙ = 0.
        let (b, c) = (2.0, 1.5);
        let c2 = Bi(vec![vec![ZERO], vec![cx(1.0)], vec![cx(-1.0)]]);
        let c1 = Bi(vec![vec![cx(c)], vec![cx(-(b + 1.0)), cx(-1.0)]]);
        let c0 = Bi(vec![vec![ZERO, cx(-b)]]);
        let rec = recurrence_of(&[c2, c1, c0]).unwrap();
        assert_eq!(rec.terms.len(), 2);
        let w = Complex64::new(0.3, -0.7);
        let size = b + 1.0; // the largest coefficient, which the recurrence was divided by
        for n in 0..5 {
            let nf = f64::from(n);
            let got: Vec<Complex64> = rec.terms.iter().map(|t| t.at_n(nf).iter().rev().fold(ZERO, |acc, x| acc * w + x) * size).collect();
            let want = [Complex64::from((nf + 1.0) * (nf + c)), -(nf + w) * (nf + b)];
            for (g, x) in got.iter().zip(want) {
                assert!((g - x).norm() < 1e-12, "n={n}: {got:?} vs {want:?}");
            }
        }
    }
}
