//! A mode that sits at a resonance of a horizon's exponents, taken as the
//! limit of the modes of nearby problems.
//!
//! Where the two exponents at a horizon differ by an integer, the solution
//! the horizon's condition asks for is defined only as a limit, and the
//! root searches of direct integration (and the continued fraction's
//! inversions) see no clean zero there: the de Sitter static patch's
//! massless and conformally coupled fields have every mode at such a
//! point. Off the resonance the mode is an ordinary simple root, and it
//! moves analytically with the equation's parameters. So one parameter is
//! moved by ±h, ±2h, ±3h, the mode is found at each of the six nearby
//! problems, and the symmetric means S(jh) = (ω(jh) + ω(−jh))/2, which are
//! even in h, are extrapolated to h = 0 (Richardson on h², three levels);
//! the difference from the two-level extrapolation estimates the error.

use crate::algebra::{GRat, Rat};
use num_complex::Complex64;

/// The relative steps tried for a parameter, in order: the step is this
/// fraction of max(|value|, 1); a larger one where the mode at the smaller
/// one still sat too close to the resonance for the root search.
const STEPS: [(i64, i64); 3] = [(1, 100), (1, 25), (1, 8)];

/// How far (relative) the mode of the first nearby problem must have moved
/// from the value at the resonance for the step to count as leaving it, and
/// how far it may move for the step to count as small.
const MOVED: (f64, f64) = (1e-5, 0.25);

/// The extrapolated value of a mode at a resonance, and how it was got.
#[derive(Debug, Clone)]
pub struct Limit {
    /// The limit of the nearby modes.
    pub omega: Complex64,
    /// The parameter that was moved.
    pub name: String,
    /// Its value.
    pub value: f64,
    /// The step h: the modes were found at value ± h, ± 2h, ± 3h.
    pub step: f64,
    /// |three-level − two-level extrapolation| / |ω|: the error estimate.
    pub error: f64,
}

impl Limit {
    /// The limit in words, for a note; `alone` when no method settled a
    /// root at the value itself (else direct integration's check did not).
    pub fn words(&self, alone: bool) -> String {
        let who =
            if alone { "neither the continued fraction nor direct integration settles on a root" } else { "direct integration finds no clean root" };
        format!(
            "at a resonance of the horizon's exponents, where the condition there is defined only as a limit: {who} at this value, so direct integration solved the six nearby problems {} = {} ± h, ± 2h, ± 3h (h = {:.1e}) and their modes were extrapolated to h = 0 (Richardson in h²), estimated error {:.0e}",
            self.name, self.value, self.step, self.error
        )
    }
}

/// The limit at h = 0 of the modes near `target` of the problems with one
/// parameter (not one of `fixed`: the variable's slot, the spectral
/// parameter) moved to value ± h, ± 2h, ± 3h,
/// found by `solve` (a point of parameter values and a seed → the mode, or
/// `None` where its search did not converge). The parameters are tried in
/// order, each with the steps of [`STEPS`] until the first nearby mode has
/// left the resonance; at most 3 steps and 6 solves each. `None` when no
/// parameter gives six converged nearby modes.
pub fn limit(
    point: &[GRat],
    names: &[String],
    fixed: &[usize],
    target: Complex64,
    solve: &dyn Fn(&[GRat], Complex64) -> Option<Complex64>,
) -> Option<Limit> {
    let scale = target.norm();
    for (p, v) in point.iter().enumerate() {
        let (re, im) = v.to_f64();
        if fixed.contains(&p) || im != 0.0 || !re.is_finite() {
            continue;
        }
        // The step's unit: |value| when it is at least 1 (exactly, as a rational), else 1.
        let unit = if re.abs() >= 1.0 {
            if re < 0.0 {
                v.re.neg()
            } else {
                v.re.clone()
            }
        } else {
            Rat::one()
        };
        for (num, den) in STEPS {
            let Some(h) = Rat::new(num.into(), den.into()).map(|f| unit.mul(&f)) else { continue };
            let at = |j: i64| {
                let mut pt = point.to_vec();
                pt[p] = v.add(&GRat::real(h.mul(&Rat::int(j.into()))));
                pt
            };
            let Some(first) = solve(&at(1), target) else { continue };
            let moved = (first - target).norm() / scale;
            if !(MOVED.0..=MOVED.1).contains(&moved) {
                continue;
            }
            // The other five, each seeded by a straight line through the
            // value at the resonance and the nearest mode found on its side.
            let mut plus = vec![first];
            let mut minus: Vec<Complex64> = Vec::new();
            let Some(m1) = solve(&at(-1), target - (first - target)) else { break };
            minus.push(m1);
            let mut complete = true;
            for j in 2..=3i64 {
                let jf = j as f64;
                let sp = target + (plus[0] - target) * jf;
                let sm = target + (minus[0] - target) * jf;
                match (solve(&at(j), sp), solve(&at(-j), sm)) {
                    (Some(a), Some(b)) => {
                        plus.push(a);
                        minus.push(b);
                    }
                    _ => {
                        complete = false;
                        break;
                    }
                }
            }
            if !complete {
                break;
            }
            let s: Vec<Complex64> = (0..3).map(|j| (plus[j] + minus[j]) * 0.5).collect();
            // Lagrange weights at h² = 0 for the nodes h², 4h², 9h² (and h², 4h²).
            let three = s[0] * 1.5 - s[1] * 0.6 + s[2] * 0.1;
            let two = (s[0] * 4.0 - s[1]) / 3.0;
            return Some(Limit { omega: three, name: names[p].clone(), value: re, step: h.to_f64(), error: (three - two).norm() / scale });
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_limit_of_an_analytic_family_is_its_value_at_zero() {
        // ω(t) = −2i + t + t² + 0.3 t³ about t = 0 (exact solution as the solve).
        let point = vec![GRat::real(Rat::int(5.into())), GRat::zero()];
        let names = vec!["a".to_string(), "w".to_string()];
        let target = Complex64::new(0.0, -2.0);
        let solve = |pt: &[GRat], _seed: Complex64| {
            let t = pt[0].to_f64().0 - 5.0;
            (t != 0.0).then(|| target + Complex64::new(t + t * t + 0.3 * t * t * t, 0.0))
        };
        let l = limit(&point, &names, &[1], target, &solve).unwrap();
        assert!((l.omega - target).norm() < 1e-12, "{l:?}");
        assert_eq!(l.name, "a");
        // The first step, 5/100, moved the mode by 1.3 %.
        assert!((l.step - 0.05).abs() < 1e-15);
    }

    #[test]
    fn a_parameter_that_does_not_move_the_mode_is_passed_over() {
        let point = vec![GRat::real(Rat::int(2.into())), GRat::real(Rat::int(3.into())), GRat::zero()];
        let names = vec!["a".to_string(), "b".to_string(), "w".to_string()];
        let target = Complex64::new(0.0, -3.0);
        // Only b moves the mode; with a moved the search finds the resonance itself.
        let solve = |pt: &[GRat], _seed: Complex64| {
            let b = pt[1].to_f64().0 - 3.0;
            Some(target + Complex64::new(0.0, -b))
        };
        let l = limit(&point, &names, &[2], target, &solve).unwrap();
        assert_eq!(l.name, "b");
        assert!((l.omega - target).norm() < 1e-12);
        // No parameter moves it: no limit.
        assert!(limit(&point, &names, &[2], target, &|_, _| Some(target)).is_none());
    }
}
