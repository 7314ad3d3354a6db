//! Quasi-bound levels of a massive field, found in order and each once (by
//! the continued fraction, or by direct integration between given ends). The levels crowd below the continuum edge ω = μ
//! (where χ² = μ² − ω² vanishes) with Re ω growing and |Im ω| shrinking
//! with the level number; their spacing, of order (Mμ)²μ/n³ for the
//! hydrogen-like levels, is soon far below the spread a root finder starts
//! from, so each search is started with a spread scaled to it. Level n is
//! the first root above level n − 1 in Re ω and below the edge: a root from
//! the level's own estimate that repeats a level or falls out of that
//! window is replaced by a bounded search between level n − 1 and the
//! edge, and a root that was accepted is searched below from half way back
//! to level n − 1 (a level skipped there is the one sought). A level that
//! cannot be placed says why; a duplicate is never a mode.
//!
//! The check by direct integration of each level starts at a distance
//! scaled to the distance to the nearest other level
//! ([`check_offsets`]), with the root finder's first points as near, so
//! that it finds the level on its own and cannot be drawn to a neighbour.

use super::cf::{find_root_near, CfRoot, StopReason};
use super::spectrum::{check_seed_at, numeric_recurrence, qnm_modes_from, Mode, ModeMethod, Setup, SpectrumOptions, CHECK_OFFSET};
use crate::error::Result;
use num_complex::Complex64;

/// Seeds of the search between a level and the continuum edge, evenly
/// spaced in Re ω, when the next level's own estimate does not lead to it.
const BRACKET_SEEDS: usize = 8;

/// The check of a level starts this fraction of the distance to the
/// nearest other level away from it (or [`CHECK_OFFSET`], if nearer).
const CHECK_FRACTION: f64 = 1e-2;

/// A root finder's first spread is this fraction of the expected spacing of
/// the levels around its seed.
const SPREAD_FRACTION: f64 = 0.1;

/// The levels found, with the set-up and where each level's check starts.
#[derive(Clone, Debug)]
pub struct Levels {
    /// One mode per level asked for, in order.
    pub modes: Vec<Mode>,
    /// The series set-up.
    pub setup: Setup,
    /// The relative offset at which the check by direct integration of each
    /// mode starts ([`check_offsets`]), in the order of `modes`.
    pub check_offsets: Vec<f64>,
}

/// Quasi-bound levels by the continued fraction on the decaying branch
/// (`setup` made `Setup::decaying`): with seeds (continued from a
/// neighbour), the ladder as for any overtone; otherwise the levels in
/// order ([`in_order`]) — from 0, or from the lowest level asked for when a
/// guess is given (it is that level) — each first from its own estimate
/// `first_estimate(n)` (the levels crowd below the continuum edge, where
/// extrapolation from two levels overshoots), and only those asked for kept.
pub fn quasi_bound_levels(
    rec: &crate::series::Recurrence,
    setup: Setup,
    opts: &SpectrumOptions,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
) -> Result<Levels> {
    if rec.coeffs.len() < 3 {
        return Err(super::spectrum::too_few_terms(rec, &setup));
    }
    let num = numeric_recurrence(rec, &setup, opts)?;
    let edge = num.rate.as_ref().and_then(|r| r.branch.edge());
    if !opts.seeds.is_empty() {
        let (modes, setup) = qnm_modes_from(rec, setup, opts, first_estimate)?;
        let check_offsets = check_offsets(&modes, edge, first_estimate);
        return Ok(Levels { modes, setup, check_offsets });
    }
    let solve = |n: u32, seed: Complex64, spread: f64| find_root_near(&num, n as usize, seed, spread, opts.tol, 64, 1 << 17);
    // A guess is the lowest level asked for; without one the count starts at level 0.
    let start = match opts.guess {
        Some(g) => Start { level: opts.overtones.0, guess: Some(g) },
        None => Start { level: 0, guess: None },
    };
    let all: Vec<Mode> = in_order(start, opts.overtones.1, opts.tol, edge, first_estimate, &solve)
        .into_iter()
        .map(|(n, p)| match p {
            Ok((root, seed)) => Mode { n, root, seed, method: ModeMethod::ContinuedFraction },
            Err(why) => unplaced(n, why),
        })
        .collect();
    let check_offsets = check_offsets(&all, edge, first_estimate);
    let (modes, check_offsets) = all.into_iter().zip(check_offsets).filter(|(m, _)| m.n >= opts.overtones.0).unzip();
    Ok(Levels { modes, setup, check_offsets })
}

/// The expected spacing of the levels around level n from the estimates of
/// it and its neighbours (the smaller side), if they exist and differ.
fn estimated_spacing(n: u32, estimate: &dyn Fn(u32) -> Option<(Complex64, String)>) -> Option<f64> {
    let at = |k: u32| estimate(k).map(|e| e.0);
    let here = at(n)?;
    let above = at(n + 1).map(|w| (w - here).norm());
    let below = n.checked_sub(1).and_then(at).map(|w| (here - w).norm());
    [above, below].into_iter().flatten().filter(|d| *d > 0.0 && d.is_finite()).min_by(f64::total_cmp)
}

/// Where [`in_order`] starts: level 0 from its estimate, or the level a
/// given guess is said to be.
#[derive(Clone, Copy, Debug)]
pub struct Start {
    /// The first level sought.
    pub level: u32,
    /// A guess for it (then it is sought from the guess alone).
    pub guess: Option<Complex64>,
}

/// A root finder's result as [`in_order`] reads it (the continued
/// fraction's [`CfRoot`], direct integration's `IntRoot`).
pub trait LevelRoot {
    /// The value (meaningful when found).
    fn value(&self) -> Complex64;
    /// Whether the root finder converged.
    fn found(&self) -> bool;
    /// Why not, in words.
    fn why_not(&self) -> String;
}

impl LevelRoot for CfRoot {
    fn value(&self) -> Complex64 {
        self.omega
    }
    fn found(&self) -> bool {
        self.converged
    }
    fn why_not(&self) -> String {
        self.stop.text()
    }
}

impl LevelRoot for super::integrate::IntRoot {
    fn value(&self) -> Complex64 {
        self.omega
    }
    fn found(&self) -> bool {
        self.converged
    }
    fn why_not(&self) -> String {
        self.reason.clone()
    }
}

/// One level of [`in_order`]: its root and seed (value, origin), or why it
/// could not be placed.
pub type Placed<R> = (u32, std::result::Result<(R, (Complex64, String)), String>);

/// Levels `start.level`..=`hi` in order by `solve(n, seed, relative spread)`
/// (the first from the guess, when one is given; its root is reported as
/// not placed, with the reason, when it is not a level): level n
/// is the first root above level n − 1 in Re ω (by more than ten times the
/// tolerance), below the continuum `edge` when one is known, with Re ω > 0
/// (a growing level, Im ω > 0, is kept: the report warns of it). Its own estimate is tried first; a root that repeats a
/// level or falls outside that window is replaced by the first acceptable
/// root from [`BRACKET_SEEDS`] seeds evenly spaced between level n − 1 and
/// the edge; an accepted root is searched below from half way back to
/// level n − 1 (`roots::root_between_by` in Re ω). A level whose level
/// below was not found is not sought (its number would be a guess). Every
/// search is bounded: at most 1 + [`BRACKET_SEEDS`] + `roots::BETWEEN_TRIES`
/// root finds per level, each started with a spread of a tenth of the
/// levels' estimated spacing (at most `roots::SPREAD`).
pub fn in_order<R: LevelRoot>(
    start: Start,
    hi: u32,
    tol: f64,
    edge: Option<f64>,
    estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
    solve: &dyn Fn(u32, Complex64, f64) -> R,
) -> Vec<Placed<R>> {
    let mut out: Vec<Placed<R>> = Vec::new();
    // The levels placed so far (number, value).
    let mut placed: Vec<(u32, Complex64)> = Vec::new();
    let tol = tol.max(1e-13);
    for n in start.level..=hi {
        let given = start.guess.filter(|_| n == start.level);
        if let Some((b, Err(_))) = out.last() {
            let why = format!("level {b} was not found, so level {n} cannot be told apart from the levels around it");
            out.push((n, Err(why)));
            continue;
        }
        let prev = placed.last().map(|p| p.1);
        let spacing = estimated_spacing(n, estimate);
        let spread_at = |seed: Complex64, local: Option<f64>| {
            let s = [spacing, local].into_iter().flatten().fold(f64::INFINITY, f64::min);
            if s.is_finite() {
                (SPREAD_FRACTION * s / seed.norm()).min(super::roots::SPREAD)
            } else {
                super::roots::SPREAD
            }
        };
        // Why a root is not level n (None: it is).
        let misfit = |r: &R| -> Option<String> {
            if !r.found() {
                return Some(r.why_not());
            }
            let w = r.value();
            let margin = 10.0 * tol * w.norm();
            if let Some((m, _)) = placed.iter().find(|(_, v)| (v - w).norm() <= margin) {
                return Some(format!("the root {} is level {m}'s again", text(w)));
            }
            // A level may grow (Im ω > 0: superradiance around a rotating
            // black hole); the report says so.
            if w.re <= 0.0 {
                return Some(format!("the root {} is not in the right half-plane (Re ω > 0)", text(w)));
            }
            if let Some(e) = edge.filter(|e| w.re >= *e) {
                return Some(format!("the root {} is at or above the continuum edge Re ω = {e:.12e}", text(w)));
            }
            if let Some(p) = prev.filter(|p| w.re <= p.re + margin) {
                return Some(format!("the root {} lies below level {} ({})", text(w), n - 1, text(p)));
            }
            None
        };
        let mut tried: Vec<String> = Vec::new();
        let mut found: Option<(R, (Complex64, String))> = None;
        if let Some((w, from)) = given.map(|g| (g, "the given guess".to_string())).or_else(|| estimate(n)) {
            let r = solve(n, w, spread_at(w, None));
            match misfit(&r) {
                None => found = Some((r, (w, from))),
                Some(why) => tried.push(format!("from {from} {}: {why}", text(w))),
            }
        }
        // A guess that leads to no level is reported as such, not replaced.
        if found.is_none() && given.is_none() {
            match bracket(n, prev, edge, estimate) {
                Some((lo, top, im)) => {
                    let step = (top - lo) / (BRACKET_SEEDS + 1) as f64;
                    let mut best: Option<(R, (Complex64, String))> = None;
                    for k in 1..=BRACKET_SEEDS {
                        let w = Complex64::new(lo + step * k as f64, im);
                        // Seeds above the best root so far lead only higher.
                        if best.as_ref().is_some_and(|(b, _)| w.re > b.value().re) {
                            break;
                        }
                        let r = solve(n, w, spread_at(w, Some(step)));
                        if misfit(&r).is_none() && best.as_ref().is_none_or(|(b, _)| r.value().re < b.value().re) {
                            let from =
                                format!("seed {k} of {BRACKET_SEEDS} evenly spaced in Re ω between {} and the continuum edge", bracket_floor(n));
                            best = Some((r, (w, from)));
                        }
                    }
                    match best {
                        Some(b) => found = Some(b),
                        None => tried.push(format!(
                            "none of {BRACKET_SEEDS} seeds evenly spaced in Re ω on ({lo:.12e}, {top:.12e}) led to a root above {} and below the edge",
                            bracket_floor(n)
                        )),
                    }
                }
                None => tried.push("no continuum edge is known to search below".into()),
            }
        }
        let Some((mut root, mut seed)) = found else {
            out.push((n, Err(format!("level {n} not found in order: {}", tried.join("; ")))));
            continue;
        };
        // A level skipped between level n − 1 and this root is level n.
        if let Some(p) = prev {
            let from = |mid: Complex64| {
                let r = solve(n, mid, spread_at(mid, Some(0.5 * (mid.re - p.re).abs())));
                misfit(&r).is_none().then(|| (r.value(), r))
            };
            let known = |w: Complex64| placed.iter().any(|(_, v)| (v - w).norm() <= 10.0 * tol * w.norm());
            if let Some((mid, _, r)) = super::roots::root_between_by(p, root.value(), &|w| w.re, &from, &known) {
                seed = (mid, format!("half way between level {} and the root {} reached from {}", n - 1, text(root.value()), seed.1));
                root = r;
            }
        }
        placed.push((n, root.value()));
        out.push((n, Ok((root, seed))));
    }
    out
}

/// What the bracket of level n starts from, in words.
fn bracket_floor(n: u32) -> String {
    match n.checked_sub(1) {
        Some(b) => format!("level {b}"),
        None => "four times the estimate's distance below the edge".into(),
    }
}

/// The window of Re ω where level n is sought when its estimate fails:
/// from level n − 1 (for level 0, four times the estimate's distance below
/// the edge) to the edge, with Im ω of level n − 1 or the estimate.
fn bracket(n: u32, prev: Option<Complex64>, edge: Option<f64>, estimate: &dyn Fn(u32) -> Option<(Complex64, String)>) -> Option<(f64, f64, f64)> {
    let edge = edge?;
    let est = estimate(n).map(|e| e.0);
    let (lo, im) = match (prev, est) {
        (Some(p), _) => (p.re, p.im),
        (None, Some(e)) => ((edge - 4.0 * (edge - e.re)).max(0.0), e.im),
        (None, None) => return None,
    };
    (lo < edge).then_some((lo, edge, im))
}

/// Level n with no root to report, and why (no number is attached).
fn unplaced(n: u32, why: String) -> Mode {
    let root = CfRoot::failed(Complex64::new(f64::NAN, f64::NAN), n as usize, StopReason::Rejected(why));
    Mode { n, root, seed: (Complex64::new(f64::NAN, f64::NAN), "none".into()), method: ModeMethod::ContinuedFraction }
}

/// A complex number in a reason.
fn text(w: Complex64) -> String {
    format!("{:.12e}{:+.6e}i", w.re, w.im)
}

/// Where the check by direct integration of each mode starts, relative to
/// it (`spectrum::check_seed_at`): the smaller of [`CHECK_OFFSET`] and d/100
/// relative to |ω|, d the distance to the nearest of the other converged
/// modes, the continuum `edge`, and the
/// estimated spacing to the next level (levels accumulate at the edge, so
/// the next one, not yet found, is nearer than the edge). The root finder
/// starts with as small a spread.
pub fn check_offsets(modes: &[Mode], edge: Option<f64>, estimate: &dyn Fn(u32) -> Option<(Complex64, String)>) -> Vec<f64> {
    modes
        .iter()
        .map(|m| {
            let w = m.root.omega;
            if !m.root.converged || w.norm() == 0.0 {
                return CHECK_OFFSET;
            }
            let others = modes.iter().filter(|o| o.n != m.n && o.root.converged).map(|o| (o.root.omega - w).norm());
            let to_edge = edge.map(|e| (e - w.re).abs());
            let d = others.chain(to_edge).chain(estimated_spacing(m.n, estimate)).filter(|d| *d > 0.0).fold(f64::INFINITY, f64::min);
            (CHECK_FRACTION * d / w.norm()).min(CHECK_OFFSET)
        })
        .collect()
}

/// The check of a level by direct integration: `find(seed, spread)` started
/// [`check_seed_at`] the level's offset, with the same relative spread.
pub fn check_level(omega: Complex64, offset: f64, find: &dyn Fn(Complex64, f64) -> super::integrate::IntRoot) -> super::integrate::IntRoot {
    find(check_seed_at(omega, offset), offset)
}

/// In words, for a level whose Im ω the two methods (the continued fraction
/// `cf`, direct integration `check`) do not agree on to two digits, or
/// whose check did not converge while its |Im ω| is far below Re ω: the
/// level decays so slowly that the root finders' resolution (relative to
/// |ω|) is not small beside |Im ω|; only Re ω is then determined.
pub fn im_resolution_note(n: u32, cf: Complex64, check: &super::integrate::IntRoot) -> Option<String> {
    let ratio = cf.im.abs() / cf.re.abs();
    if !check.converged {
        return (ratio < 1e-12).then(|| {
            format!(
                "level {n} decays so slowly (|Im ω|/Re ω = {ratio:.1e}) that its check by direct integration in double precision may not resolve it"
            )
        });
    }
    let off = (check.omega.im - cf.im).abs() / cf.im.abs();
    let both = format!("continued fraction {:.3e}, direct integration {:.3e}", cf.im, check.omega.im);
    let whole = (check.omega - cf).norm() / cf.norm();
    if off >= 0.5 {
        Some(format!(
            "level {n}: Im ω is not resolved ({both}): |Im ω|/Re ω = {ratio:.1e} lies below what the two methods resolve in double precision; only Re ω is determined (the two agree on ω to {whole:.1e} relative)"
        ))
    } else if off > 1e-2 {
        Some(format!("level {n}: Im ω agrees between the two methods only to {:.0}% ({both}; |Im ω|/Re ω = {ratio:.1e})", 100.0 * off))
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A made-up ladder of levels ω_k = 1 − 1/(k + 2)² − i 10⁻⁶/(k + 1)
    /// below the edge 1, and a "solver" that goes to the level nearest its
    /// seed in Re ω, or, like a too wide root finder, to the level below
    /// when the spread exceeds the spacing there.
    fn level(k: u32) -> Complex64 {
        Complex64::new(1.0 - 1.0 / f64::from(k + 2).powi(2), -1e-6 / f64::from(k + 1))
    }

    fn nearest(seed: Complex64, spread: f64) -> CfRoot {
        let k = (0..40u32).min_by(|a, b| (level(*a).re - seed.re).abs().total_cmp(&(level(*b).re - seed.re).abs())).unwrap();
        let spacing = if k == 0 { 1.0 } else { level(k).re - level(k - 1).re };
        let k = if spread * seed.norm() > spacing && k > 0 { k - 1 } else { k };
        CfRoot::at(level(k))
    }

    #[test]
    fn levels_come_in_order_and_once_even_from_estimates_that_repeat_one() {
        // Every estimate points at level 1: the levels after it come from
        // the search between the last level and the edge.
        let est = |n: u32| Some((level(n.min(1)), "a repeating estimate".to_string()));
        let found = in_order(Start { level: 0, guess: None }, 4, 1e-10, Some(1.0), &est, &|_, w, s| nearest(w, s));
        assert_eq!(found.len(), 5);
        for (k, (n, p)) in found.iter().enumerate() {
            assert_eq!(*n, k as u32);
            let (r, _) = p.as_ref().unwrap_or_else(|why| panic!("level {k}: {why}"));
            assert!((r.omega - level(k as u32)).norm() < 1e-15, "level {k}: {}", r.omega);
        }
    }

    #[test]
    fn a_level_that_cannot_be_placed_says_why_and_the_next_is_not_guessed() {
        // A solver that never converges above level 0.
        let est = |n: u32| Some((level(n), "the estimate".to_string()));
        let solve = |_: u32, w: Complex64, s: f64| {
            let r = nearest(w, s);
            if r.omega.re > level(0).re {
                CfRoot::failed(w, 0, StopReason::RootIterations)
            } else {
                r
            }
        };
        let found = in_order(Start { level: 0, guess: None }, 2, 1e-10, Some(1.0), &est, &solve);
        assert!(found[0].1.is_ok());
        let why = |k: usize| found[k].1.as_ref().err().cloned().unwrap_or_default();
        assert!(why(1).contains("not found in order") && why(1).contains("none of 8 seeds"), "{}", why(1));
        assert!(why(2).contains("level 1 was not found"), "{}", why(2));
        // Reported as not converged, with no value.
        let m = unplaced(1, why(1));
        assert!(!m.root.converged && m.root.omega.re.is_nan() && m.root.stop.text() == why(1));
    }

    #[test]
    fn the_check_starts_within_a_hundredth_of_the_nearest_level() {
        let modes: Vec<Mode> = (0..3)
            .map(|k| Mode { n: k, root: nearest(level(k), 0.0), seed: (level(k), String::new()), method: ModeMethod::ContinuedFraction })
            .collect();
        let est = |n: u32| Some((level(n), String::new()));
        let offsets = check_offsets(&modes, Some(1.0), &est);
        for (k, o) in offsets.iter().enumerate() {
            let k = k as u32;
            let next = (level(k + 1) - level(k)).norm();
            assert!(*o * level(k).norm() <= 0.0101 * next && *o <= CHECK_OFFSET, "level {k}: {o}");
        }
    }
}
