//! Bound states by shooting: the second method beside collocation. At a
//! trial value E of the spectral parameter the normalisable solution is
//! built from each end of the interval — at a regular singular end the
//! Frobenius series with the exponent of larger real part (from the local
//! indicial equation at this E), at an irregular z = ±∞ of rank 1 the
//! asymptotic series of the decaying branch exp(μz) z^ν, at rank 2 the
//! decaying branch's Riccati expansion — and continued by Taylor steps to a
//! matching point, where their normalised Wronskian vanishes exactly at an
//! eigenvalue. The pieces are those of `integrate` (the quasinormal check);
//! roots are found by the same two-pass Muller search, seeded by each
//! collocation eigenvalue.

use super::collocation::{BoundState, Domain};
use super::integrate::{self, Asymptote, Coeffs, Far, Horizon, IntRoot, Leading, Params};
use super::NumOde;
use crate::algebra::{Field, GRat, RatFunc};
use crate::error::Result;
use num_complex::Complex64;

/// One end of the interval, as the shooting sees it.
#[derive(Clone, Copy, Debug)]
pub(super) enum End {
    /// A finite end: it must be a regular singular point.
    Regular(f64),
    /// z → ±∞ along the real axis (the sign given).
    Infinite(f64),
}

pub(super) fn ends(domain: Domain) -> [End; 2] {
    match domain {
        Domain::Finite(a, b) => [End::Regular(a), End::Regular(b)],
        Domain::HalfLine(a) => [End::Regular(a), End::Infinite(1.0)],
        Domain::Line => [End::Infinite(-1.0), End::Infinite(1.0)],
    }
}

/// The normal form ψ'' + Qψ = 0 cleared of denominators and made numeric
/// in the spectral parameter (field index `eig`): collocation solves the
/// same equation, so "normalisable" means the same at both methods.
pub fn try_bound_ode(k: &Field, q: &RatFunc, values: &[GRat], eig: usize) -> Result<NumOde> {
    super::try_num_ode(k, &RatFunc::zero(), q, values, eig)
}

/// What the second method says about one collocation eigenvalue.
#[derive(Clone, Debug)]
pub enum BoundCheck {
    /// No second method for these end types; why.
    Unavailable(String),
    /// The refinement converged, nearer its seed than any neighbouring
    /// collocation eigenvalue.
    Agrees(IntRoot),
    /// The refinement did not converge (the last iterate and the reason).
    Unconverged(IntRoot),
    /// The refinement converged on a value nearer to the neighbouring
    /// collocation eigenvalue given than to its seed: another state.
    Elsewhere(IntRoot, Complex64),
}

/// The normalised mismatch at E (zero at a bound state), `None` where it
/// cannot be evaluated.
#[cfg(test)]
fn mismatch(ode: &NumOde, domain: Domain, e: Complex64) -> Option<Complex64> {
    evaluate(ode, domain, e, &integrate::STANDARD).ok().map(|(v, _)| v)
}

/// Refines the collocation eigenvalue `state` by Muller's method on the
/// shooting mismatch, to relative tolerance `tol`, and classifies the result.
pub fn refine(ode: &NumOde, domain: Domain, state: &BoundState, tol: f64) -> BoundCheck {
    if let Err(e) = supported(ode, domain, state.value) {
        return BoundCheck::Unavailable(e);
    }
    let root = integrate::find_root_by(&|w, p| evaluate(ode, domain, w, p), state.value, tol, integrate::MAX_ITER);
    if !root.converged {
        return BoundCheck::Unconverged(root);
    }
    let own = (root.omega - state.value).norm();
    match state.neighbours.iter().find(|v| (root.omega - **v).norm() < own) {
        Some(v) => BoundCheck::Elsewhere(root, *v),
        None => BoundCheck::Agrees(root),
    }
}

/// Ok when every end is of a type the shooting handles (at E), otherwise
/// the end that is not.
fn supported(ode: &NumOde, domain: Domain, e: Complex64) -> std::result::Result<(), String> {
    let k = Coeffs::at(ode, e)?;
    for end in ends(domain) {
        match end {
            End::Regular(z) => {
                integrate::horizon(&k, z).map_err(|m| format!("the end {z} is not a regular singular point ({m})"))?;
            }
            End::Infinite(dir) => {
                let l = Leading::new(&k, dir)?;
                // The Riccati start is written for any integer rank, but
                // only ranks 1 and 2 are checked against exact spectra.
                if l.rank > 2 {
                    return Err(format!("z = ∞ has Poincaré rank {} (shooting handles ranks 1 and 2)", l.rank));
                }
            }
        }
    }
    Ok(())
}

/// The normalised Wronskian at E of the two ends' normalisable solutions at
/// the matching point, and the Taylor steps it took.
fn evaluate(ode: &NumOde, domain: Domain, e: Complex64, p: &Params) -> std::result::Result<(Complex64, usize), String> {
    if !(e.re.is_finite() && e.im.is_finite()) {
        return Err("E is not finite".into());
    }
    let k = Coeffs::at(ode, e)?;
    let [left, right] = ends(domain);
    let (hl, hr, roots) = end_structure(&k, domain)?;
    // The matching point: a Frobenius start's distance from the (left)
    // finite end, as for a horizon, or that many units from the origin on
    // the whole line. Never the middle: for an even potential the two
    // solutions there are mirror images, |W| equals the normalisation at
    // every E, and the normalised mismatch would have no zero.
    let z_m = match domain {
        Domain::Finite(a, b) => a + p.start_fraction * (b - a),
        Domain::HalfLine(a) => {
            let d = hl.as_ref().map_or(f64::INFINITY, |h| h.d);
            a + p.start_fraction * if d.is_finite() { d } else { 1.0 + a.abs() }
        }
        Domain::Line => p.start_fraction,
    };
    let mut steps = 0;
    let mut solution = |end: End, h: &Option<Horizon>| match (end, h) {
        (End::Regular(_), Some(h)) => from_regular(&k, h, z_m, &roots, p, &mut steps),
        (End::Infinite(dir), _) => from_far(&k, dir, z_m, &roots, p, &mut steps),
        (End::Regular(z), None) => Err(format!("no local structure at {z}")),
    };
    let one = solution(left, &hl)?;
    let two = solution(right, &hr)?;
    Ok((integrate::normalised_wronskian(one, two, integrate::Norm::Vectors)?, steps))
}

/// The local structure at each regular end (`None` at an infinite one) and
/// the zeros of A, exact at a regular end (the deflated others beside it).
#[allow(clippy::type_complexity)]
pub(super) fn end_structure(k: &Coeffs, domain: Domain) -> std::result::Result<(Option<Horizon>, Option<Horizon>, Vec<Complex64>), String> {
    let [left, right] = ends(domain);
    let local = |end: End| match end {
        End::Regular(z) => integrate::horizon(k, z).map(Some),
        End::Infinite(_) => Ok(None),
    };
    let (hl, hr) = (local(left)?, local(right)?);
    let roots: Vec<Complex64> = match (&hl, &hr) {
        (Some(h), _) | (None, Some(h)) => h.others.iter().copied().chain([Complex64::new(h.z, 0.0)]).collect(),
        (None, None) => crate::analysis::numeric::try_roots(&k.a).map_err(|e| format!("the zeros of A cannot be computed: {e}"))?,
    };
    Ok((hl, hr, roots))
}

/// The solution with the larger exponent at the regular end `h`, summed as
/// its Frobenius series a fraction of the way to the nearest other zero of A
/// (at most to z_m) and continued along the real axis to z_m.
pub(super) fn from_regular(
    k: &Coeffs,
    h: &Horizon,
    z_m: f64,
    roots: &[Complex64],
    p: &Params,
    steps: &mut usize,
) -> std::result::Result<(Complex64, Complex64), String> {
    let dist = z_m - h.z;
    let reach = if h.d.is_finite() { p.start_fraction * h.d } else { dist.abs() };
    let delta = dist.signum() * reach.min(dist.abs());
    let (y, dy) = integrate::frobenius(h, h.larger_exponent(), delta)?;
    // A step is at most `phase_step` local wavelengths, 1/√|C/A| at z_m.
    let at = |v: &[Complex64]| v.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, c| acc * z_m + c);
    let wave = (at(&k.c) / at(&k.a)).norm().sqrt().max(1e-3);
    let (from, to) = (Complex64::new(h.z + delta, 0.0), Complex64::new(z_m, 0.0));
    integrate::continue_along(k, roots, from, to, y, dy, p, p.phase_step / wave, steps)
}

/// The solution that decays towards z = `dir`·∞, at z_m: the asymptotic
/// series at rank 1, the Riccati expansion's start at rank 2, continued
/// inwards along the real axis.
pub(super) fn from_far(
    k: &Coeffs,
    dir: f64,
    z_m: f64,
    roots: &[Complex64],
    p: &Params,
    steps: &mut usize,
) -> std::result::Result<(Complex64, Complex64), String> {
    let lead = Leading::new(k, dir)?;
    let (zm, ray) = (Complex64::new(z_m, 0.0), Complex64::new(dir, 0.0));
    // The branches part by a factor e over a length r with |u − u'| r^R ~ 1;
    // start four of those out, and no nearer than the finite structure.
    let scale = 1.0 + z_m.abs() + roots.iter().map(|r| (r - zm).norm()).fold(0.0, f64::max);
    let r0 = (4.0 / lead.gap(Complex64::new(1.0, 0.0))).powf(1.0 / lead.rank as f64).max(scale);
    // The damping is counted from the first far point tried, not from z_m,
    // which may be the origin (no logarithm there) and lies where the
    // asymptotic picture no longer holds.
    let z_ref = zm + ray * r0;
    if lead.rank == 1 {
        let (mu, nu) = lead.mu_nu();
        let far = Far::new(k, mu, nu)?;
        integrate::from_infinity(k, &Asymptote::Series(&far), roots, zm, ray, r0, z_ref, p, steps)
    } else {
        integrate::from_infinity(k, &Asymptote::Leading(&lead), roots, zm, ray, r0, z_ref, p, steps)
    }
}

#[cfg(test)]
pub(super) mod tests {
    use super::*;
    use crate::ode::{reduce, Input, ReduceOptions};

    /// The numeric normal form of `src` with the spectral parameter `E` last
    /// (shared with the mode-function tests).
    pub(in crate::solve) fn ode(src: &str, values: &[i64]) -> NumOde {
        let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let names = red.field.names().to_vec();
        let eig = names.iter().position(|n| n == "E").unwrap();
        let mut vals = vec![GRat::zero(); names.len()];
        for (i, v) in (1..names.len()).filter(|&i| i != eig).zip(values) {
            vals[i] = GRat::real(crate::algebra::Rat::int((*v).into()));
        }
        try_bound_ode(&red.field, &red.normal.q, &vals, eig).unwrap()
    }

    const OSCILLATOR: &str = "var x\nparam E\node psi'' + (2*E - x^2)*psi = 0\n";

    fn state(value: f64, neighbours: &[f64]) -> BoundState {
        let c = |x: f64| Complex64::new(x, 0.0);
        BoundState {
            n: 0,
            value: c(value),
            converged: true,
            change: 0.0,
            points: 0,
            neighbours: neighbours.iter().map(|x| c(*x)).collect(),
            reason: None,
        }
    }

    #[test]
    fn oscillator_mismatch_vanishes_at_n_plus_half_and_not_beside() {
        // ψ'' + (2E − x²)ψ = 0: bound states at E = n + ½ (textbook).
        let o = ode(OSCILLATOR, &[]);
        for n in 0..4 {
            let e = n as f64 + 0.5;
            let at = mismatch(&o, Domain::Line, Complex64::new(e, 0.0)).unwrap();
            let beside = mismatch(&o, Domain::Line, Complex64::new(e + 0.1, 0.0)).unwrap();
            assert!(at.norm() <= 1e-10, "n={n}: {at}");
            assert!(beside.norm() >= 1e-2, "n={n}: {beside}");
        }
    }

    #[test]
    fn riccati_start_has_the_oscillator_power() {
        // The decaying branch at +∞ is exp(−x²/2) x^(E − ½) (DLMF 12.9.1 with
        // z = √2 x, a = −E); at −∞ it is the same function of |x|.
        let o = ode(OSCILLATOR, &[]);
        let e = Complex64::new(1.3, 0.0);
        for dir in [1.0, -1.0] {
            let l = Leading::new(&Coeffs::at(&o, e).unwrap(), dir).unwrap();
            assert_eq!(l.rank, 2);
            let (u0, u1) = l.mu_nu();
            assert!((u0 + 1.0).norm() < 1e-15 && u1.norm() < 1e-15, "{u0} {u1}");
            assert!((l.gap(Complex64::new(2.0, 0.0)) - 4.0).abs() < 1e-14);
        }
    }

    #[test]
    fn hydrogen_refinement_from_a_rough_seed() {
        // −u''/2 + (l(l+1)/(2r²) − Z/r)u = Eu: E = −Z²/(2n²) (textbook); Z = 1, l = 1, n = 2.
        let src = "var r\nparam Z, l, E\node -u''/2 + (l*(l + 1)/(2*r^2) - Z/r)*u = E*u\n";
        let o = ode(src, &[1, 1]);
        match refine(&o, Domain::HalfLine(0.0), &state(-0.12, &[-0.0555]), 1e-12) {
            BoundCheck::Agrees(r) => assert!((r.omega.re + 0.125).abs() < 1e-12 && r.omega.im.abs() < 1e-12, "{r:?}"),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn a_refinement_on_a_neighbour_is_not_a_check() {
        // Seeded between the oscillator's E = ½ and E = 3/2, with both as the
        // neighbouring collocation values: wherever it lands is nearer one of them.
        let o = ode(OSCILLATOR, &[]);
        match refine(&o, Domain::Line, &state(1.1, &[0.5, 1.5]), 1e-12) {
            BoundCheck::Elsewhere(r, v) => assert!((r.omega - v).norm() < 1e-9, "{r:?} {v}"),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn unsupported_ends_say_so() {
        // A linear potential: z = ∞ of rank 3/2. A quartic one: rank 3.
        for (src, rank) in [("var r\nparam E\node u'' + (2*E - 2*r - 2/r^2)*u = 0\n", "3/2"), ("var x\nparam E\node u'' + (2*E - x^4)*u = 0\n", "3")]
        {
            let o = ode(src, &[]);
            let domain = if rank == "3" { Domain::Line } else { Domain::HalfLine(0.0) };
            match refine(&o, domain, &state(2.0, &[]), 1e-12) {
                BoundCheck::Unavailable(why) => assert!(why.contains(&format!("rank {rank}")), "{why}"),
                other => panic!("{other:?}"),
            }
        }
    }
}
