//! The path of direct integration between two finite ends, in the complex
//! plane of the independent variable.
//!
//! Between two horizons the wanted solution at each end is carried towards
//! the other end, and an error made on the way (rounding where the series
//! is summed, a Taylor step's truncation) is amplified by the growth of the
//! other solution relative to the wanted one. Locally the two solutions
//! behave like exp(∫λ±) with λ± the roots of A λ² + B λ + C = 0 (the
//! characteristic roots of A y'' + B y' + C y = 0, common practice), so
//! the amplification along a path is exp(max Re ∫(λ_other − λ_wanted) dz).
//! On the real axis, for a damped mode, it is exp(2|Im ω| Δr*) with Δr* the
//! span of the tortoise coordinate between the start points: far horizons
//! (a small cosmological constant) make it larger than 1/ε of double
//! precision. Starting each series on an arc about its end, where the
//! exponent difference ~ ±iω/κ turns the phase into growth, and matching at
//! a point off the axis, brings it back down.
//!
//! That estimate only decides whether other routes are tried. The routes
//! themselves are judged by the error actually committed: the Wronskian of
//! the two solutions, each normalised at its own end, is the same function
//! of ω on every route, so what the standard and refined discretisations
//! disagree on is error.
//!
//! A [`Route`] is fixed once per root search (at the seed), so that the
//! mismatch is the same function of ω at every trial value. The loop made
//! by the route and the real segment between the ends must enclose no
//! singular point (winding number zero about each), so the solutions are
//! the real-axis ones continued.

use super::integrate::Coeffs;
use num_complex::Complex64;
use std::f64::consts::PI;

/// How the two solutions between finite ends a < b are started and matched.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Route {
    /// The left series starts at a + δ_L e^(i·left_turn).
    pub left_turn: f64,
    /// The right series starts at b − δ_R e^(i·right_turn).
    pub right_turn: f64,
    /// The matching point: the middle of the two start points moved by
    /// i·lift·(b − a)/2.
    pub lift: f64,
    /// ln of the fixed scale the Wronskian is divided by on a complex
    /// route: its natural size on the route at the seed (the largest
    /// product of the two solutions' sizes met, from [`Judge::measure`]). Off the axis
    /// the two solutions' sizes at the matching point change by orders of
    /// magnitude within a small change of ω, so a mismatch normalised by
    /// them is far from analytic and the root search stalls; the
    /// Wronskian itself (each solution normalised at its own end) is
    /// analytic in ω and, divided by a constant, stays so.
    pub scale: f64,
}

impl Route {
    /// Both series started on the real axis and matched half way between them.
    pub const REAL: Route = Route { left_turn: 0.0, right_turn: 0.0, lift: 0.0, scale: 0.0 };

    /// Whether the route leaves the real axis.
    pub fn is_complex(&self) -> bool {
        self.left_turn != 0.0 || self.right_turn != 0.0 || self.lift != 0.0
    }

    /// The two start points and the matching point for distances δ_L, δ_R
    /// from the ends.
    pub fn points(&self, a: f64, b: f64, dl: f64, dr: f64) -> (Complex64, Complex64, Complex64) {
        let sl = a + dl * Complex64::from_polar(1.0, self.left_turn);
        let sr = b - dr * Complex64::from_polar(1.0, self.right_turn);
        let zm = 0.5 * (sl + sr) + Complex64::new(0.0, self.lift * 0.5 * (b - a));
        (sl, sr, zm)
    }

    /// The route in words, for a report.
    pub fn text(&self) -> String {
        let deg = |x: f64| x * 180.0 / PI;
        format!(
            "integrated along a path in the complex plane: the series started {:.0}° and {:.0}° off the axis about the two ends, matched at a point lifted {:.2} of the half-width off it",
            deg(self.left_turn),
            deg(self.right_turn),
            self.lift
        )
    }
}

/// Turns tried at each end (radians) and lifts of the matching point.
const TURNS: [f64; 11] =
    [0.0, -PI / 6.0, PI / 6.0, -PI / 3.0, PI / 3.0, -PI / 2.0, PI / 2.0, -2.0 * PI / 3.0, 2.0 * PI / 3.0, -5.0 * PI / 6.0, 5.0 * PI / 6.0];
const LIFTS: [f64; 5] = [0.0, -0.25, 0.25, -0.5, 0.5];

/// Rounds of the coordinate descent over the right turn, the left turn
/// and the lift (each round at most some 40 routes, fewer once measured).
const ROUNDS: usize = 2;

/// The most routes a root search tries, best first.
const CANDIDATES: usize = 3;

/// Below this amplification (natural log; e^7 ≈ 1e3) the real route is kept.
const GOOD_ENOUGH: f64 = 7.0;

/// A complex route must beat the real one by this much (natural log) to be taken.
const GAIN_NEEDED: f64 = 2.0;

/// What a route further from the real one must gain over the best so far
/// (natural log) to replace it: among routes about as good, the plainer.
const STEP_GAIN: f64 = 1.0;

/// The most steps of one cost integral (bounded; each step a fraction of
/// the distance to the nearest singular point).
const COST_STEPS: usize = 4000;

/// λ_other − λ_wanted at z, on the branch nearest `prev`.
fn difference(k: &Coeffs, z: Complex64, prev: Complex64) -> Option<Complex64> {
    let [a, b, c] = k.values(z);
    if a.norm() == 0.0 {
        return None;
    }
    let d = (b * b - 4.0 * a * c).sqrt() / a;
    let d = if (d - prev).norm() <= (-d - prev).norm() { d } else { -d };
    (d.re.is_finite() && d.im.is_finite()).then_some(d)
}

/// The largest growth (natural log) of the other solution relative to the
/// wanted one, from `start` (where the wanted solution is t^ρ_wanted, t the
/// distance to the end, and the other t^ρ_other) along the straight line
/// to `to`. `None` when the line passes too near a singular point.
fn growth(k: &Coeffs, zeros: &[Complex64], end: f64, start: Complex64, to: Complex64, exponents: (Complex64, Complex64), near: f64) -> Option<f64> {
    let (wanted, other) = exponents;
    // At the start the difference is about (ρ_other − ρ_wanted)/t.
    let mut prev = (other - wanted) / (start - end);
    let total = (to - start).norm();
    if total == 0.0 {
        return Some(0.0);
    }
    let dir = (to - start) / total;
    let dist = |z: Complex64| zeros.iter().map(|r| (z - r).norm()).fold(f64::INFINITY, f64::min);
    let (mut done, mut g, mut worst) = (0.0, 0.0_f64, 0.0_f64);
    let mut d0 = difference(k, start, prev)?;
    prev = d0;
    for _ in 0..COST_STEPS {
        let z = start + dir * done;
        let r = dist(z);
        if r < near {
            return None;
        }
        let h = (0.2 * r).min(total - done);
        let d1 = difference(k, z + dir * h, prev)?;
        g += 0.5 * ((d0 + d1) * dir * h).re;
        worst = worst.max(g);
        prev = d1;
        d0 = d1;
        done += h;
        if done >= total * (1.0 - 1e-12) {
            return Some(worst);
        }
    }
    None
}

/// The winding number of the closed polygon `pts` about `p`.
fn winding(pts: &[Complex64], p: Complex64) -> i64 {
    let mut turn = 0.0;
    for i in 0..pts.len() {
        let (u, v) = (pts[i] - p, pts[(i + 1) % pts.len()] - p);
        turn += (v / u).arg();
    }
    (turn / (2.0 * PI)).round() as i64
}

/// Whether the loop of the route (real segment, arc about b, the two
/// lines, arc about a) encloses no singular point.
fn encloses_none(route: &Route, zeros: &[Complex64], a: f64, b: f64, dl: f64, dr: f64) -> bool {
    let (sl, sr, zm) = route.points(a, b, dl, dr);
    let arc = |centre: f64, radius: f64, sign: f64, to: f64| -> Vec<Complex64> {
        (0..=16).map(|j| centre + sign * radius * Complex64::from_polar(1.0, to * f64::from(j) / 16.0)).collect()
    };
    let mut pts: Vec<Complex64> = vec![Complex64::new(a + dl, 0.0)];
    pts.extend(arc(b, dr, -1.0, route.right_turn));
    pts.push(sr);
    pts.push(zm);
    pts.push(sl);
    pts.extend(arc(a, dl, 1.0, route.left_turn).into_iter().rev());
    zeros.iter().chain([Complex64::new(a, 0.0), Complex64::new(b, 0.0)].iter()).all(|z| winding(&pts, *z) == 0)
}

/// What a route is judged by: the coefficients at the seed, the singular
/// points, the ends a < b, the distances of the start points from them,
/// the (wanted, other) exponents at each end, and a measure of a route.
pub(super) struct Judge<'a> {
    /// The coefficients of the equation at the seed.
    pub k: &'a Coeffs,
    /// Where an end's (or the lift's) natural scale is finer than the
    /// fixed grid, the geometric grid on it alone (a second search, whose
    /// descent takes another path).
    pub fine_only: bool,
    /// The singular points (zeros of A).
    pub zeros: &'a [Complex64],
    /// The ends a < b.
    pub ends: (f64, f64),
    /// The distances of the start points from the ends.
    pub dists: (f64, f64),
    /// (wanted, other) exponent at the left and at the right end.
    pub exps: [(Complex64, Complex64); 2],
    /// ln of the error of the Wronskian (each solution normalised at its
    /// own end, the same function of ω on every route) committed on a
    /// route, and ln of its natural size there (the largest product of the
    /// two solutions' sizes met); `None` where the route cannot be
    /// integrated.
    pub measure: &'a dyn Fn(&Route) -> Option<(f64, f64)>,
}

impl Judge<'_> {
    /// ln of the growth of the other solution relative to the wanted one on
    /// the real route, the worse of the two ends (the characteristic roots'
    /// estimate, cheap: it decides whether other routes are tried at all).
    fn real_growth(&self) -> Option<f64> {
        let ((a, b), (dl, dr)) = (self.ends, self.dists);
        let (sl, sr, zm) = Route::REAL.points(a, b, dl, dr);
        let near = 0.05 * dl.min(dr);
        let gl = growth(self.k, self.zeros, a, sl, zm, self.exps[0], near)?;
        let gr = growth(self.k, self.zeros, b, sr, zm, self.exps[1], near)?;
        Some(gl.max(gr))
    }

    /// The turns tried at the left and the right end and the lifts tried,
    /// each on the scale where the other solution's size relative to the
    /// wanted one changes by about e: turning the start by θ about an end
    /// whose exponents differ by Δ changes it by e^(−Im Δ·θ), and lifting
    /// the matching point by y by e^(−Im Δλ·y), Δλ the difference of the
    /// characteristic roots there. Where that scale is finer than the
    /// fixed grids ([`TURNS`], [`LIFTS`]), as at a far cosmological horizon
    /// (small surface gravity, large Δ), the fixed grid is joined by a
    /// geometric one from it: ±u, ±3u, ±9u, … up to the fixed grid's finest.
    fn grids(&self) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
        let geometric = |unit: f64, fixed: &[f64]| -> Vec<f64> {
            if !(unit.is_finite() && unit > 0.0) || unit >= fixed[1].abs() {
                return fixed.to_vec();
            }
            // The fine grid alone: ±u, ±3u, … up to the fixed grid's widest.
            let widest = fixed[fixed.len() - 1].abs();
            let mut v = if self.fine_only { vec![0.0] } else { fixed.to_vec() };
            let mut t = unit;
            while t < if self.fine_only { widest } else { fixed[1].abs() } {
                v.extend([-t, t]);
                t *= 3.0;
            }
            if self.fine_only {
                v.extend([-widest, widest]);
            }
            v
        };
        let turns = |(wanted, other): (Complex64, Complex64)| geometric(1.0 / (other - wanted).im.abs(), &TURNS);
        let ((a, b), (dl, dr)) = (self.ends, self.dists);
        let (_, _, zm) = Route::REAL.points(a, b, dl, dr);
        let half = 0.5 * (b - a);
        let lift_unit = difference(self.k, zm, Complex64::new(0.0, 0.0)).map_or(f64::INFINITY, |d| 1.0 / (d.im.abs() * half));
        (turns(self.exps[0]), turns(self.exps[1]), geometric(lift_unit, &LIFTS))
    }

    /// The measure of an admissible route.
    fn admissible(&self, route: &Route) -> Option<(f64, f64)> {
        let ((a, b), (dl, dr)) = (self.ends, self.dists);
        if route.is_complex() && !encloses_none(route, self.zeros, a, b, dl, dr) {
            return None;
        }
        (self.measure)(route)
    }
}

/// The routes for a root search at the seed `judge` was made for, best
/// first: the real one alone when the other solution grows by less than
/// e^7 on it; otherwise the admissible routes of least [`Judge::measure`],
/// found by coordinate descent over the turn at the right end, at the
/// left, and the lift ([`TURNS`], [`LIFTS`], at most [`ROUNDS`] rounds),
/// those that gain at least e^2 over the real route, at most
/// [`CANDIDATES`] of them (the real route when none does). The measure at
/// the seed is an estimate (the difference of two integrations, near
/// rounding on good routes), so the search tries the next route when one
/// does not converge.
pub(super) fn choose(judge: &Judge) -> Vec<Route> {
    match judge.real_growth() {
        Some(g) if g > GOOD_ENOUGH => {}
        _ => return vec![Route::REAL],
    }
    let Some((real, _)) = judge.admissible(&Route::REAL) else { return vec![Route::REAL] };
    let mut best = (real, Route::REAL);
    let mut seen: Vec<(f64, Route)> = Vec::new();
    let mut consider = |route: Route, best: &mut (f64, Route)| {
        if route == best.1 || seen.iter().any(|(_, r)| Route { scale: 0.0, ..*r } == route) {
            return;
        }
        if let Some((c, size)) = judge.admissible(&route) {
            seen.push((c, Route { scale: size, ..route }));
            // A plainer route is kept unless the new one gains e^1.
            if c < best.0 - STEP_GAIN {
                *best = (c, Route { scale: size, ..route });
            }
        }
    };
    let (left_turns, right_turns, lifts) = judge.grids();
    for _round in 0..ROUNDS {
        let from = best.1;
        for &t in &right_turns {
            consider(Route { right_turn: t, scale: 0.0, ..best.1 }, &mut best);
        }
        for &t in &left_turns {
            consider(Route { left_turn: t, scale: 0.0, ..best.1 }, &mut best);
        }
        for &l in &lifts {
            consider(Route { lift: l, scale: 0.0, ..best.1 }, &mut best);
        }
        if best.1 == from {
            break;
        }
    }
    let mut ranked: Vec<(f64, Route)> = seen.into_iter().filter(|(c, _)| *c <= real - GAIN_NEEDED).collect();
    ranked.sort_by(|a, b| a.0.total_cmp(&b.0));
    // The descent's pick first (plainer among those about as good).
    if best.0 <= real - GAIN_NEEDED {
        ranked.retain(|(_, r)| *r != best.1);
        ranked.insert(0, best);
    }
    let routes: Vec<Route> = ranked.into_iter().take(CANDIDATES).map(|(_, r)| r).collect();
    if routes.is_empty() {
        vec![Route::REAL]
    } else {
        routes
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_loop_about_a_point_winds_once() {
        let sq = [Complex64::new(-1.0, -1.0), Complex64::new(1.0, -1.0), Complex64::new(1.0, 1.0), Complex64::new(-1.0, 1.0)];
        assert_eq!(winding(&sq, Complex64::new(0.0, 0.0)), 1);
        assert_eq!(winding(&sq, Complex64::new(3.0, 0.0)), 0);
    }

    #[test]
    fn the_real_route_encloses_nothing_and_a_wide_lift_can() {
        let zeros = [Complex64::new(5.0, 3.0)];
        assert!(encloses_none(&Route::REAL, &zeros, 0.0, 10.0, 1.0, 1.0));
        // Lifted by the half-width 5: the matching point is at 5 + 5i, above the zero at 5 + 3i.
        assert!(!encloses_none(&Route { lift: 1.0, ..Route::REAL }, &zeros, 0.0, 10.0, 1.0, 1.0));
    }
}
