//! Mode functions on the real axis: the eigenfunction of a bound state
//! (the normal form's ψ, normalised to ∫|ψ|² dz = 1, real and positive next
//! to the first end) and the solution of a quasinormal mode (the unknown,
//! with unit leading Frobenius coefficient at the horizon). Bound states are
//! built like the shooting check (`shoot.rs`): from each end the normalisable
//! solution, continued towards the matching point in the stable direction,
//! the right piece scaled to meet the left one there; infinite ends are cut
//! where the solution has fallen below 1e-17 of its largest value (the cut is
//! moved outwards until it has). The samples are Gauss–Legendre nodes of
//! panels (8 nodes each), so the norm is a Gauss–Legendre sum.

use super::collocation::Domain;
use super::integrate::{self, Coeffs, Params, STANDARD};
use super::shoot::{end_structure, ends, from_far, End};
use super::NumOde;
use num_complex::Complex64;

/// Nodes per Gauss–Legendre panel.
const NODES: usize = 8;

/// One sampled function: (z, value) pairs in increasing z, with the
/// quadrature weight of each sample (zero where the sample is not a node).
pub type Samples = Vec<(f64, Complex64, f64)>;

/// One end's samples and (y, y') at the matching point.
type Piece = (Samples, (Complex64, Complex64));

/// The Gauss–Legendre nodes and weights on (−1, 1) (eigenvalues of the
/// Jacobi matrix, G. H. Golub and J. H. Welsch, Math. Comp. 23 (1969) 221).
fn gauss_legendre(n: usize) -> Vec<(f64, f64)> {
    let m = nalgebra::DMatrix::from_fn(n, n, |i, j| {
        if i + 1 == j || j + 1 == i {
            let k = i.max(j) as f64;
            k / (4.0 * k * k - 1.0).sqrt()
        } else {
            0.0
        }
    });
    let e = m.symmetric_eigen();
    let mut out: Vec<(f64, f64)> = (0..n).map(|i| (e.eigenvalues[i], 2.0 * e.eigenvectors[(0, i)].powi(2))).collect();
    out.sort_by(|a, b| a.0.total_cmp(&b.0));
    out
}

/// Gauss nodes of `panels` equal panels between a and b (either order), with weights, ordered from a to b.
fn nodes(a: f64, b: f64, panels: usize) -> Vec<(f64, f64)> {
    let gl = gauss_legendre(NODES);
    let h = (b - a) / panels as f64;
    let mut out = Vec::with_capacity(panels * NODES);
    for p in 0..panels {
        let mid = a + h * (p as f64 + 0.5);
        for (x, w) in &gl {
            out.push((mid + 0.5 * h * x, 0.5 * h.abs() * w));
        }
    }
    out
}

/// The normalisable solution from one end, sampled at Gauss nodes between
/// the end (or a cut far out) and z_m; returns the samples ordered from the
/// end towards z_m and (y, y') at z_m.
#[allow(clippy::too_many_arguments)]
fn piece(
    k: &Coeffs,
    end: End,
    pick: Option<Complex64>,
    z_m: f64,
    roots: &[Complex64],
    p: &Params,
    panels: usize,
    scale: f64,
) -> Result<Piece, String> {
    let mut steps = 0;
    match end {
        End::Regular(z) => {
            let h = integrate::horizon(k, z)?;
            let rho = pick.unwrap_or_else(|| h.larger_exponent());
            let reach = if h.d.is_finite() { p.start_fraction * h.d } else { (z_m - z).abs() };
            let mut out = Vec::new();
            let mut last: Option<(f64, (Complex64, Complex64))> = None;
            for (x, w) in nodes(z, z_m, panels).into_iter().chain([(z_m, 0.0)]) {
                let y = if (x - z).abs() <= reach {
                    integrate::frobenius(&h, rho, x - z)?
                } else {
                    let (x0, y0) = last.ok_or("no start for the continuation")?;
                    integrate::continue_along(k, roots, Complex64::new(x0, 0.0), Complex64::new(x, 0.0), y0.0, y0.1, p, scale, &mut steps)?
                };
                out.push((x, y.0, w));
                last = Some((x, y));
            }
            let at_m = last.ok_or("no samples")?.1;
            out.pop();
            Ok((out, at_m))
        }
        End::Infinite(dir) => {
            // Move the cut outwards until the solution there is negligible.
            let mut r = 4.0 * scale.max(1.0);
            for _ in 0..24 {
                let cut = z_m + dir * r;
                let mut y = from_far(k, dir, cut, roots, p, &mut steps)?;
                let mut x0 = cut;
                let mut out = Vec::new();
                let pts = nodes(cut, z_m, panels * 4);
                for (x, w) in pts.into_iter().chain([(z_m, 0.0)]) {
                    y = integrate::continue_along(k, roots, Complex64::new(x0, 0.0), Complex64::new(x, 0.0), y.0, y.1, p, scale, &mut steps)?;
                    out.push((x, y.0, w));
                    x0 = x;
                }
                out.pop();
                let big = out.iter().map(|s| s.1.norm()).fold(y.0.norm(), f64::max);
                if out.first().is_some_and(|s| s.1.norm() <= 1e-17 * big) {
                    return Ok((out, y));
                }
                r *= 1.5;
            }
            Err("the decaying solution did not fall below 1e-17 of its largest value within the reach tried".into())
        }
    }
}

/// The eigenfunction of the bound state at `e` on `domain`, sampled and
/// normalised (∫|ψ|² = 1, real and positive next to the first end).
pub fn bound_mode_function(ode: &NumOde, domain: Domain, e: Complex64, panels: usize) -> Result<Samples, String> {
    bound_mode_function_with(ode, domain, [None, None], e, panels)
}

/// [`bound_mode_function`] with the exponent kept at each finite end given
/// (`None`: the larger one, the normalisable solution), as a boundary
/// problem between given ends chooses them (e.g. the slower fall-off).
pub fn bound_mode_function_with(ode: &NumOde, domain: Domain, picks: [Option<Complex64>; 2], e: Complex64, panels: usize) -> Result<Samples, String> {
    let k = Coeffs::at(ode, e)?;
    let p = &STANDARD;
    let [left, right] = ends(domain);
    let (hl, _, roots) = end_structure(&k, domain)?;
    // The matching point and length scale of the shooting check (not the middle: see shoot.rs).
    let (z_m, scale) = match domain {
        Domain::Finite(a, b) => (a + p.start_fraction * (b - a), (b - a) / 8.0),
        Domain::HalfLine(a) => {
            let d = hl.as_ref().map_or(f64::INFINITY, |h| h.d);
            let d = if d.is_finite() { d } else { 1.0 + a.abs() };
            (a + p.start_fraction * d, d)
        }
        Domain::Line => (p.start_fraction, 1.0),
    };
    // Each piece scaled by its size at z_m first, so that no sum overflows.
    let unit = |(pc, y): Piece| {
        let s = y.0.norm().max(y.1.norm());
        let s = if s > 0.0 && s.is_finite() { 1.0 / s } else { 1.0 };
        (pc.into_iter().map(|(x, v, w)| (x, v * s, w)).collect::<Vec<_>>(), (y.0 * s, y.1 * s))
    };
    let (lp, ly) = unit(piece(&k, left, picks[0], z_m, &roots, p, panels, scale)?);
    let (mut rp, ry) = unit(piece(&k, right, picks[1], z_m, &roots, p, panels, scale)?);
    // Scale the right piece onto the left one at z_m (least squares on (y, y')).
    let den = ry.0.norm_sqr() + ry.1.norm_sqr();
    if den == 0.0 {
        return Err("the solution from the right end vanishes at the matching point".into());
    }
    let c = (ry.0.conj() * ly.0 + ry.1.conj() * ly.1) / den;
    let gap = ((ly.0 - c * ry.0).norm() + (ly.1 - c * ry.1).norm()) / (ly.0.norm() + ly.1.norm());
    if gap > 1e-6 {
        return Err(format!("the two pieces do not join at the matching point (relative mismatch {gap:.1e}): not an eigenvalue"));
    }
    rp.reverse();
    let mut all: Samples = lp.into_iter().chain(rp.into_iter().map(|(x, y, w)| (x, c * y, w))).collect();
    let norm: f64 = all.iter().map(|(_, y, w)| w * y.norm_sqr()).sum();
    if !(norm > 0.0 && norm.is_finite()) {
        return Err("the eigenfunction has no finite norm".into());
    }
    // Phase: real and positive at the first sample of appreciable size.
    let big = all.iter().map(|s| s.1.norm()).fold(0.0, f64::max);
    let first = all.iter().find(|s| s.1.norm() > 1e-8 * big).map(|s| s.1).unwrap_or(Complex64::new(1.0, 0.0));
    let f = (first.conj() / first.norm()) / norm.sqrt();
    for s in all.iter_mut() {
        s.1 *= f;
    }
    Ok(all)
}

/// Another construction's values `v` of the function sampled in `like` (at
/// the same z), normalised with the same quadrature weights (∫|ψ|² = 1) and
/// turned to the same phase (the overlap ∫ ψ̄ ψ_like real and positive), so
/// that the two can be compared sample by sample.
pub fn normalised_like(like: &Samples, v: Vec<Complex64>) -> Result<Samples, String> {
    if v.len() != like.len() {
        return Err("the second function has a different number of samples".into());
    }
    let norm: f64 = like.iter().zip(&v).map(|(s, y)| s.2 * y.norm_sqr()).sum();
    let overlap: Complex64 = like.iter().zip(&v).map(|(s, y)| y.conj() * s.1 * s.2).sum();
    if !(norm > 0.0 && norm.is_finite() && overlap.norm() > 0.0) {
        return Err("the second function has no finite norm or is orthogonal to the first".into());
    }
    let f = overlap / overlap.norm() / norm.sqrt();
    Ok(like.iter().zip(v).map(|(s, y)| (s.0, y * f, s.2)).collect())
}

/// The solution of a quasinormal mode (or any ω) that is the Frobenius series
/// (z − z_h)^ρ (1 + Σ c_k (z − z_h)^k) at the horizon, continued along the
/// real axis from the horizon to z_h + `reach` (default 20 times the distance
/// to the nearest other singular point); `points` equally spaced samples (weights zero).
pub fn horizon_mode_function(ode: &NumOde, horizon: f64, rho: Complex64, w: Complex64, reach: Option<f64>, points: usize) -> Result<Samples, String> {
    let k = Coeffs::at(ode, w)?;
    let p = &STANDARD;
    let h = integrate::horizon(&k, horizon)?;
    let reach = reach.unwrap_or(20.0 * if h.d.is_finite() { h.d } else { 1.0 });
    if !(reach.is_finite() && reach != 0.0) {
        return Err("the reach must be a finite non-zero distance".into());
    }
    let mut roots = h.others.clone();
    roots.push(Complex64::new(horizon, 0.0));
    let near = if h.d.is_finite() { p.start_fraction * h.d } else { reach };
    let mut out = Vec::with_capacity(points);
    // Samples beyond the series' reach continue from its value at that reach.
    let mut last: Option<(f64, (Complex64, Complex64))> = None;
    if reach.abs() > near {
        let x0 = horizon + near.copysign(reach);
        last = Some((x0, integrate::frobenius(&h, rho, x0 - horizon)?));
    }
    let mut steps = 0;
    for i in 1..=points {
        let x = horizon + reach * i as f64 / points as f64;
        let y = if (x - horizon).abs() <= near {
            integrate::frobenius(&h, rho, x - horizon)?
        } else {
            let (x0, y0) = last.ok_or("no start for the continuation")?;
            integrate::continue_along(&k, &roots, Complex64::new(x0, 0.0), Complex64::new(x, 0.0), y0.0, y0.1, p, h.d.min(reach.abs()), &mut steps)?
        };
        if !(y.0.re.is_finite() && y.0.im.is_finite()) {
            return Err(format!("the solution overflowed near z = {x}"));
        }
        out.push((x, y.0, 0.0));
        last = Some((x, y));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::super::shoot::tests::ode;
    use super::*;

    fn check(samples: &Samples, exact: &dyn Fn(f64) -> f64, what: &str) {
        let norm: f64 = samples.iter().map(|(_, y, w)| w * y.norm_sqr()).sum();
        assert!((norm - 1.0).abs() < 1e-12, "{what}: norm {norm}");
        let worst = samples.iter().map(|(x, y, _)| (y - exact(*x)).norm()).fold(0.0, f64::max);
        assert!(worst < 1e-10, "{what}: largest deviation {worst}");
    }

    // Hydrogen-like radial functions u = rR (Z = 1): u₁₀ = 2r e^{−r}, u₂₁ = r² e^{−r/2}/(2√6)
    // (textbook, e.g. Landau & Lifshitz, Quantum Mechanics §36, from memory).
    #[test]
    fn hydrogen_eigenfunctions_are_the_closed_forms() {
        let src = "var r\nparam Z, l, E\node -u''/2 + (l*(l + 1)/(2*r^2) - Z/r)*u = E*u\n";
        let s = bound_mode_function(&ode(src, &[1, 0]), Domain::HalfLine(0.0), Complex64::new(-0.5, 0.0), 24).unwrap();
        check(&s, &|r| 2.0 * r * (-r).exp(), "1s");
        let s = bound_mode_function(&ode(src, &[1, 1]), Domain::HalfLine(0.0), Complex64::new(-0.125, 0.0), 24).unwrap();
        check(&s, &|r| r * r * (-r / 2.0).exp() / (2.0 * 6f64.sqrt()), "2p");
    }

    // The Pöschl–Teller well −6 sech²x in u = tanh x: φ₀ ∝ sech²x, φ₁ ∝ tanh x sech x (Landau & Lifshitz §23,
    // from memory); the normal form's ψ = φ √(1 − u²), so ψ₀ = √(35/32)(1 − u²)^{3/2} and
    // ψ₁ = √(105/16) u (1 − u²) after normalising in u.
    #[test]
    fn poschl_teller_well_eigenfunctions_are_the_closed_forms() {
        let src = "var u\nparam V0, E\nlet g = 1 - u^2\nunknown phi\node g*(g*phi')' + (E - V0*g)*phi = 0\n";
        let o = ode(src, &[-6]);
        let s = bound_mode_function(&o, Domain::Finite(-1.0, 1.0), Complex64::new(-4.0, 0.0), 16).unwrap();
        check(&s, &|u| (35.0f64 / 32.0).sqrt() * (1.0 - u * u).powf(1.5), "ground state");
        // Positive next to the first end u = −1, where u(1 − u²) is negative: the sign flips.
        let s = bound_mode_function(&o, Domain::Finite(-1.0, 1.0), Complex64::new(-1.0, 0.0), 16).unwrap();
        check(&s, &|u| -(105.0f64 / 16.0).sqrt() * u * (1.0 - u * u), "first excited state");
    }

    /// The collocation eigenvector of state `n` on the shooting function's samples, normalised alike.
    fn collocation_like(src: &str, values: &[i64], domain: Domain, n: usize, shot: &Samples) -> Samples {
        use crate::ode::{reduce, Input, ReduceOptions};
        let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let names = red.field.names().to_vec();
        let eig = names.iter().position(|x| x == "E").unwrap();
        let mut vals = vec![crate::algebra::GRat::zero(); names.len()];
        for (i, v) in (1..names.len()).filter(|&i| i != eig).zip(values) {
            vals[i] = crate::algebra::GRat::real(crate::algebra::Rat::int((*v).into()));
        }
        let k = &red.field;
        let scale = super::super::collocation::SCALE;
        let states = super::super::collocation::try_bound_states(k, &red.normal.q, eig, &vals, domain, scale, n + 1, 1e-13, f64::INFINITY).unwrap();
        let s = &states[n];
        assert!(s.converged, "{s:?}");
        let zs: Vec<f64> = shot.iter().map(|p| p.0).collect();
        let v = super::super::collocation::try_eigenfunction(k, &red.normal.q, eig, &vals, domain, scale, s.points, s.value, &zs).unwrap();
        normalised_like(shot, v).unwrap()
    }

    // The second construction (collocation eigenvector, interpolated and normalised like the shooting function)
    // against the same closed forms: hydrogen as above to 1e-8; the Pöschl–Teller well's ψ ∝ (1 − u²)^{3/2}
    // has branch points at the ends, where Chebyshev interpolation converges only algebraically: to 1e-5.
    #[test]
    fn collocation_eigenfunctions_are_the_closed_forms_too() {
        let pt = "var u\nparam V0, E\nlet g = 1 - u^2\nunknown phi\node g*(g*phi')' + (E - V0*g)*phi = 0\n";
        let o = ode(pt, &[-6]);
        let worst = |a: &Samples, f: &dyn Fn(f64) -> f64| a.iter().map(|(x, y, _)| (y - f(*x)).norm()).fold(0.0, f64::max);
        for (n, e, f) in [
            (0, -4.0, &(|u: f64| (35.0f64 / 32.0).sqrt() * (1.0 - u * u).powf(1.5)) as &dyn Fn(f64) -> f64),
            (1, -1.0, &|u: f64| -(105.0f64 / 16.0).sqrt() * u * (1.0 - u * u)),
        ] {
            let shot = bound_mode_function(&o, Domain::Finite(-1.0, 1.0), Complex64::new(e, 0.0), 16).unwrap();
            let col = collocation_like(pt, &[-6], Domain::Finite(-1.0, 1.0), n, &shot);
            assert!(worst(&col, f) < 1e-5, "Pöschl–Teller state {n}: {}", worst(&col, f));
        }
        let h = "var r\nparam Z, l, E\node -u''/2 + (l*(l + 1)/(2*r^2) - Z/r)*u = E*u\n";
        let shot = bound_mode_function(&ode(h, &[1, 1]), Domain::HalfLine(0.0), Complex64::new(-0.125, 0.0), 24).unwrap();
        let col = collocation_like(h, &[1, 1], Domain::HalfLine(0.0), 0, &shot);
        let f = |r: f64| r * r * (-r / 2.0).exp() / (2.0 * 6f64.sqrt());
        assert!(worst(&col, &f) < 1e-8, "hydrogen 2p: {}", worst(&col, &f));
    }

    // The oscillator ψ'' + (2E − x²)ψ = 0: ψ₀ = π^{−1/4} e^{−x²/2} (textbook).
    #[test]
    fn oscillator_ground_state_on_the_line() {
        let src = "var x\nparam E\node psi'' + (2*E - x^2)*psi = 0\n";
        let s = bound_mode_function(&ode(src, &[]), Domain::Line, Complex64::new(0.5, 0.0), 16).unwrap();
        check(&s, &|x| std::f64::consts::PI.powf(-0.25) * (-x * x / 2.0).exp(), "oscillator");
    }

    // Not an eigenvalue: the pieces do not join, said plainly.
    #[test]
    fn a_non_eigenvalue_has_no_mode_function() {
        let src = "var x\nparam E\node psi'' + (2*E - x^2)*psi = 0\n";
        let e = bound_mode_function(&ode(src, &[]), Domain::Line, Complex64::new(0.7, 0.0), 16).unwrap_err();
        assert!(e.contains("do not join"), "{e}");
    }
}
