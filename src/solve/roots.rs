//! Complex root finding shared by the numerical methods: Muller's method
//! (D. E. Muller, Math. Tables Aids Comput. 10 (1956) 208) with a step cap
//! and step halving where the function cannot be evaluated, reporting why it
//! stopped.

use num_complex::Complex64;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

fn finite(z: Complex64) -> bool {
    z.re.is_finite() && z.im.is_finite()
}

/// Muller's method from `seed` (start points ± `spread`·|seed|) to relative
/// tolerance `tol`; returns the last iterate, the iterations used, and Ok or
/// The relative spread of Muller's first three points about a seed
/// (± 1e-3 |seed|) in the root finders built on [`muller`], unless a caller
/// knows the roots lie closer together (levels below a continuum edge).
pub const SPREAD: f64 = 1e-3;

/// Below this magnitude the root finders' relative tolerance becomes
/// absolute (tol × 1e-3), so that a root at zero (a zero eigenvalue) can
/// converge.
pub const ABSOLUTE_BELOW: f64 = 1e-3;

/// the reason it stopped.
pub fn muller(
    f: &dyn Fn(Complex64) -> Result<Complex64, String>,
    seed: Complex64,
    spread: f64,
    tol: f64,
    max_iter: usize,
) -> (Complex64, usize, Result<(), String>) {
    let h = Complex64::new(spread * seed.norm().max(1e-3), 0.0);
    let mut x = [seed - h, seed + h, seed];
    let mut y = [ZERO; 3];
    for i in 0..3 {
        match f(x[i]) {
            Ok(v) => y[i] = v,
            Err(e) => return (seed, 0, Err(format!("the function cannot be evaluated at the start point {}: {e}", x[i]))),
        }
    }
    for it in 1..=max_iter {
        let (h1, h2) = (x[1] - x[0], x[2] - x[1]);
        let (d1, d2) = ((y[1] - y[0]) / h1, (y[2] - y[1]) / h2);
        let a = (d2 - d1) / (h2 + h1);
        let b = a * h2 + d2;
        let c = y[2];
        let disc = (b * b - 4.0 * a * c).sqrt();
        let den = if (b + disc).norm() > (b - disc).norm() { b + disc } else { b - disc };
        let mut dx = if den.norm() == 0.0 { h * 1e-3 } else { -2.0 * c / den };
        if !finite(dx) {
            return (x[2], it, Err("the Muller step is not finite (the function is locally flat)".into()));
        }
        let cap = 0.5 * x[2].norm().max(1e-3);
        if dx.norm() > cap {
            dx *= cap / dx.norm();
        }
        let mut tries = 0;
        let (xn, yn) = loop {
            let xn = x[2] + dx;
            match f(xn) {
                Ok(v) => break (xn, v),
                Err(e) => {
                    tries += 1;
                    if tries > 8 {
                        return (x[2], it, Err(format!("the function cannot be evaluated near {xn}: {e}")));
                    }
                    dx *= 0.5;
                }
            }
        };
        x = [x[1], x[2], xn];
        y = [y[1], y[2], yn];
        if dx.norm() <= tol * xn.norm().max(ABSOLUTE_BELOW) || yn == ZERO {
            return (xn, it, Ok(()));
        }
    }
    (x[2], max_iter, Err(format!("no convergence within {max_iter} Muller iterations")))
}

/// The most searches [`root_between`] makes between two overtones.
pub const BETWEEN_TRIES: usize = 4;

/// The root nearest below the overtone at `prev` when a step of an overtone
/// ladder was not paced by two overtones: `root` may lie past a mode, so
/// `solve` (a converged root in the lower right quadrant, with whatever the
/// caller keeps of it, or `None`) is started half way between `prev` and
/// `root`. A root there strictly between the two in Im ω that `known` (the
/// modes already found) does not hold replaces `root`, and the halving goes
/// on, at most [`BETWEEN_TRIES`] times, until the start half way leads to
/// no root between. Overtones are numbered by |Im ω|, so the root between
/// is the overtone sought. Without this, a lone overtone followed by a
/// blind seed below it skips every other mode of an evenly spaced ladder
/// whose step equals the fundamental's |Im ω| (a BTZ black hole), and the
/// spacing learnt from the wrong pair then keeps the skip. Returns the last
/// replacement (its start, its value, the caller's root), if any.
pub fn root_between<R>(
    prev: Complex64,
    root: Complex64,
    solve: &dyn Fn(Complex64) -> Option<(Complex64, R)>,
    known: &dyn Fn(Complex64) -> bool,
) -> Option<(Complex64, Complex64, R)> {
    root_between_by(prev, root, &|w| -w.im, solve, known)
}

/// [`root_between`] for modes numbered by any real `order` of ω that grows
/// from `prev` to `root` (−Im ω for overtones, Re ω for quasi-bound levels
/// below a continuum edge): a root strictly between the two in that order
/// (by more than 1e-6 of their gap), in the right half-plane and not
/// `known`, replaces `root`, at most [`BETWEEN_TRIES`] times.
pub fn root_between_by<R>(
    prev: Complex64,
    root: Complex64,
    order: &dyn Fn(Complex64) -> f64,
    solve: &dyn Fn(Complex64) -> Option<(Complex64, R)>,
    known: &dyn Fn(Complex64) -> bool,
) -> Option<(Complex64, Complex64, R)> {
    let mut current = root;
    let mut found = None;
    for _ in 0..BETWEEN_TRIES {
        let gap = order(current) - order(prev);
        if !(gap > 0.0) {
            break;
        }
        let mid = 0.5 * (prev + current);
        let Some((w, r)) = solve(mid) else { break };
        let margin = 1e-6 * gap;
        let between = order(w) > order(prev) + margin && order(w) < order(current) - margin && w.re >= 0.0;
        if !between || known(w) {
            break;
        }
        current = w;
        found = Some((mid, w, r));
    }
    found
}

/// Where a real function `f`, of one sign at 0, first changes sign above 0:
/// found by doubling from `start` (at most 80 times) until the sign differs,
/// then by 100 bisections. `None` when `f` cannot be evaluated, is zero at
/// 0, or keeps its sign. A continuum edge (χ² = μ² − ω² = 0, the coefficient
/// A₀(ω) = 0 at an irregular infinity) is found so; for a function with
/// several sign changes, the one found is the first the doubling passes.
pub fn first_sign_change(f: &dyn Fn(f64) -> Option<f64>, start: f64) -> Option<f64> {
    // Positive or not (a NaN is no value).
    let side = |x: f64| f(x).filter(|v| !v.is_nan()).map(|v| v > 0.0);
    let v0 = f(0.0).filter(|v| *v != 0.0 && !v.is_nan())?;
    let s0 = v0 > 0.0;
    let mut hi = start;
    for _ in 0..80 {
        if side(hi)? != s0 {
            break;
        }
        hi *= 2.0;
    }
    if side(hi)? == s0 {
        return None;
    }
    let mut lo = 0.0;
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if side(mid)? == s0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(lo)
}

/// How fast |f| grows away from a root w₀ of f: log₂ of |f(w₀ + 2d)| over
/// |f(w₀ + d)| (d = 1e-3 |w₀| along the real and the imaginary direction,
/// averaged), about the root's multiplicity (1 at a simple root, 2 at a
/// double one); `None` where f cannot be evaluated or vanishes there.
pub fn growth_order(f: &dyn Fn(Complex64) -> Option<Complex64>, w0: Complex64) -> Option<f64> {
    let d = 1e-3 * w0.norm().max(ABSOLUTE_BELOW);
    let mut sum = 0.0;
    for dir in [Complex64::new(1.0, 0.0), Complex64::new(0.0, 1.0)] {
        let (a, b) = (f(w0 + dir * d)?.norm(), f(w0 + dir * (2.0 * d))?.norm());
        if a == 0.0 || !(a.is_finite() && b.is_finite()) {
            return None;
        }
        sum += (b / a).log2();
    }
    Some(sum / 2.0)
}

/// Points on each circle of [`derivative_at`].
const CIRCLE: usize = 8;

/// ∂f/∂ω at w from the mean of f e^(−iθ) on circles of radius r and 2r
/// about it (r = 1e-3 |w|), the two combined to cancel the r² term: exact
/// for an analytic f up to terms of order (r/R)⁸ (R the distance to the
/// nearest singularity) and r⁴, and for f an analytic function times a
/// smooth positive normalisation (a normalised mismatch) still zero where
/// the analytic factor has a double zero.
fn derivative_at(f: &dyn Fn(Complex64) -> Option<Complex64>, w: Complex64) -> Option<Complex64> {
    let r = 1e-3 * w.norm().max(ABSOLUTE_BELOW);
    let mean = |radius: f64| -> Option<Complex64> {
        let mut acc = ZERO;
        for k in 0..CIRCLE {
            let e = Complex64::from_polar(1.0, 2.0 * std::f64::consts::PI * k as f64 / CIRCLE as f64);
            acc += f(w + e * radius)? / e;
        }
        Some(acc / (CIRCLE as f64 * radius))
    };
    let (one, two) = (mean(r)?, mean(2.0 * r)?);
    Some((one * 4.0 - two) / 3.0)
}

/// A double root of f near `w0` (where Muller's method, converging only
/// linearly there, stops about √(rounding) away): the zero of f's
/// derivative ([`derivative_at`]) by Muller from `w0`, to relative `tol`,
/// at most 60 steps. `None` when it does not converge within 1e-4 |w0|
/// of `w0`.
pub fn double_root(f: &dyn Fn(Complex64) -> Option<Complex64>, w0: Complex64, tol: f64) -> Option<Complex64> {
    let g = |w: Complex64| derivative_at(f, w).ok_or_else(|| "the derivative cannot be evaluated".to_string());
    let (w, _, stop) = muller(&g, w0, 1e-4, tol, 60);
    (stop.is_ok() && (w - w0).norm() <= 1e-4 * w0.norm().max(ABSOLUTE_BELOW)).then_some(w)
}

#[cfg(test)]
mod double_root_tests {
    use super::*;

    #[test]
    fn a_double_root_is_found_to_rounding_and_its_order_is_two() {
        // f = (ω − w₀)² (ω + 3) e^ω times a smooth positive normalisation.
        let w0 = Complex64::new(0.3, -2.5);
        let f = |w: Complex64| Some((w - w0) * (w - w0) * (w + 3.0) * w.exp() / (1.0 + w.norm_sqr()).sqrt());
        let start = w0 + Complex64::new(2e-8, -1e-8);
        assert!((growth_order(&f, start).unwrap() - 2.0).abs() < 0.1);
        let w = double_root(&f, start, 1e-13).unwrap();
        assert!((w - w0).norm() < 1e-11 * w0.norm(), "{w}");
        // A simple root grows like the first power.
        let g = |w: Complex64| Some((w - w0) * (w + 3.0));
        assert!((growth_order(&g, w0).unwrap() - 1.0).abs() < 0.1);
    }
}
