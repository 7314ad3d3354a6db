//! Every mode in a rectangle of the complex plane (`spectrum --region`),
//! with no seed. Where the exact recurrence has a continued fraction, the
//! lower half-plane is climbed by the overtone ladder of `spectrum
//! --overtones` (`spectrum::cf_ladder`): the global spectral method's
//! eigenvalues on a coarse grid seed the least damped overtones, each next
//! seed is extrapolated from the two below it, every value is polished by
//! the continued fraction and checked by direct integration, and the climb
//! stops when the next seed leaves the window; a mirror-symmetric equation's
//! modes at −ω̄ are found by direct integration from the mirror image and
//! checked against it. Elsewhere (no recurrence, the upper half-plane, the
//! Re ω < 0 family of an equation without the symmetry) the modes are the
//! global method's eigenvalues (`global::modes_in`), polished by direct
//! integration. Numbered by overtone (|Im ω|) within each family, a mirror
//! beside its partner; what the search cannot exclude is said. Rendered by
//! `emit::region`.

use super::boundary::End;
use super::global::fmt_c;
use super::global::{self, Region, SpectralValue};
use super::integrate::IntRoot;
use super::plot::PlaneMode;
use super::request::{region_setup, SpectrumRequest, CONFIRMED};
use super::spectrum::{LadderEnd, Mode, ModeMethod, SpectrumOptions};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use num_complex::Complex64;

/// How a mode relates to the others in the report.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ModeFamily {
    /// Re ω > 0.
    Oscillating,
    /// Re ω = 0 (to the polish's accuracy).
    PurelyImaginary,
    /// Re ω < 0 with no partner at −ω̄ (the equation is not mirror symmetric).
    NegativeFrequency,
    /// Im ω > 0: a mode that grows in time (an instability).
    Growing,
}

impl ModeFamily {
    /// The family's name in reports.
    pub fn name(self) -> &'static str {
        match self {
            ModeFamily::Oscillating => "oscillating",
            ModeFamily::PurelyImaginary => "purely imaginary",
            ModeFamily::NegativeFrequency => "negative frequency",
            ModeFamily::Growing => "growing",
        }
    }
}

/// One reported mode.
#[derive(Clone, Debug)]
pub struct RegionRow {
    /// Its family.
    pub family: ModeFamily,
    /// Its number within the family (a mirror has its partner's).
    pub n: u32,
    /// The partner's number when this is its mirror −ω̄.
    pub mirror_of: Option<u32>,
    /// The polished value.
    pub omega: Complex64,
    /// How it was found.
    pub found: Finding,
    /// The value the polish started from.
    pub seed: Complex64,
    /// Which method polished it: the continued fraction or direct integration.
    pub polished_by: ModeMethod,
    /// The other method's value, when it ran and converged.
    pub check: Option<(ModeMethod, Complex64)>,
    /// Why there is no check, or what the check compares, in words.
    pub check_note: Option<String>,
}

/// How a reported mode was found (a closed set: every use is a `match`).
#[derive(Clone, Debug)]
pub enum Finding {
    /// An eigenvalue of the global spectral method.
    Spectral(SpectralValue),
    /// The overtone ladder: a seed extrapolated from the overtones below
    /// (where from, in words).
    Ladder(String),
    /// Direct integration from −ω̄ of its partner (a mirror-symmetric equation).
    Mirror,
    /// The ladder's overtone settled at an algebraically special point of
    /// the recurrence, exactly (`spectrum::SpecialPoint`).
    SpecialPoint,
}

impl Finding {
    /// The tag in documents: "spectral", "ladder", "mirror" or "special".
    pub fn tag(&self) -> &'static str {
        match self {
            Finding::Spectral(_) => "spectral",
            Finding::Ladder(_) => "ladder",
            Finding::Mirror => "mirror",
            Finding::SpecialPoint => "special",
        }
    }
    /// The spectral eigenvalue, when the mode was found as one.
    pub fn spectral(&self) -> Option<SpectralValue> {
        match self {
            Finding::Spectral(v) => Some(*v),
            Finding::Ladder(_) | Finding::Mirror | Finding::SpecialPoint => None,
        }
    }
}

/// An overtone the ladder sought in the window and could not settle.
#[derive(Clone, Debug)]
pub struct Unsettled {
    /// The overtone number.
    pub n: u32,
    /// The seed it was sought from.
    pub seed: Complex64,
    /// Where the seed came from, in words.
    pub seed_from: String,
    /// Why it was not settled, in words.
    pub reason: String,
    /// The nearest frequency where the recurrence degenerates (its leading
    /// coefficient vanishes), when one lies next to the seed (see
    /// `spectrum::degenerate_notes`, whose note the report carries).
    pub degenerate: Option<Complex64>,
}

/// What the region search found.
#[derive(Clone, Debug)]
pub struct RegionReport {
    /// The spectral parameter's name.
    pub frequency: String,
    /// The equation's variable.
    pub var: String,
    /// The rectangle searched.
    pub region: Region,
    /// The boundary problem's ends.
    pub ends: [End; 2],
    /// The boundary problem's choices, in words.
    pub problem_notes: Vec<String>,
    /// The method, in words.
    pub method: String,
    /// Notes on numbering, in words.
    pub notes: Vec<String>,
    /// What the search cannot exclude, in words.
    pub limits: Vec<String>,
    /// The modes, partners first, each mirror after its partner.
    pub rows: Vec<RegionRow>,
    /// Overtones sought in the window that the ladder could not settle.
    pub unsettled: Vec<Unsettled>,
    /// Values that were not confirmed, with the reason.
    pub rejected: Vec<(Complex64, String)>,
    /// The frequency scale of the problem.
    pub scale: f64,
}

impl RegionReport {
    /// The modes for a picture of the complex plane: each labelled by its
    /// number (a mirror and a purely imaginary mode say so), confirmed when
    /// the other method agreed.
    pub fn plane_modes(&self) -> Vec<PlaneMode> {
        self.rows
            .iter()
            .map(|r| {
                let label = match (r.mirror_of, r.family) {
                    (Some(m), _) => format!("n={m} (mirror)"),
                    (None, ModeFamily::PurelyImaginary) => format!("n={} (imaginary)", r.n),
                    (None, ModeFamily::NegativeFrequency) => format!("n={} (Re<0)", r.n),
                    (None, ModeFamily::Growing) => format!("n={} (growing)", r.n),
                    (None, ModeFamily::Oscillating) => format!("n={}", r.n),
                };
                let confirmed = r.check.is_some_and(|(_, w)| (w - r.omega).norm() <= CONFIRMED * r.omega.norm().max(self.scale));
                PlaneMode { label, omega: r.omega, confirmed }
            })
            .collect()
    }
}

/// The most overtones the ladder of a region search climbs.
pub const LADDER_LIMIT: u32 = 200;

/// Two values are one mode when they differ by at most this, relative.
const SAME: f64 = 1e-8;

/// The overtone ladder of a region search and its checks.
struct LadderRun {
    /// The ladder's overtones, from 0.
    modes: Vec<Mode>,
    /// Direct integration from beside each converged overtone.
    checks: Vec<Option<IntRoot>>,
    /// Where the climb stopped.
    end: LadderEnd,
    /// The global method's result on the grids that gave the seeds.
    spectral: global::Spectral,
    /// Its eigenvalues in the lower right quadrant: the seeds of overtones 0, 1, ….
    seeds: Vec<SpectralValue>,
    /// The notes on degenerate points of the recurrence next to overtones in the window.
    notes: Vec<String>,
    /// The degenerate point next to each unsettled overtone's seed, by overtone.
    degenerate: Vec<(u32, Complex64)>,
}

/// The ladder on the continued fraction: seeds from the global method's
/// eigenvalues in the lower right quadrant (the coarsest grid of
/// [`global::SEED_GRIDS`] first, `grid` when fewer than two persist there,
/// to [`global::SEED_PERSIST`]), then extrapolation, until the next seed
/// lies below the window by more than half the overtone spacing (see
/// `beyond` inside).
fn ladder_run(
    red: &Reduction,
    bp: &super::boundary::BoundaryProblem,
    opts: &SpectrumOptions,
    region: Region,
    grid: usize,
    wkb_order: usize,
) -> Result<LadderRun> {
    let (seeds, spectral) = ladder_seeds(bp, grid)?;
    let (rec, setup) = super::spectrum::qnm_recurrence(red, opts)?;
    let opts = opts.from_global(seeds.iter().map(|v| v.omega).collect(), LADDER_LIMIT - 1);
    // Barrier estimates start the ladder only where the spectral method gave fewer than two seeds.
    let estimates = if seeds.len() < 2 { super::spectrum::barrier_estimates(red, &opts, setup.horizon_value, wkb_order).ok() } else { None };
    let estimate = |n: u32| estimates.as_ref().and_then(|e| e(n)).and_then(|b| b.series.seed());
    let beyond = |modes: &[Mode], seed: Complex64| past_the_window(region, modes, seed);
    let (mut modes, end) = super::spectrum::cf_ladder(&rec, &setup, &opts, &estimate, &beyond)?;
    let integ = super::spectrum::integration_check(red, &opts, &setup).ok();
    // The notes on special and degenerate points, for the overtones sought or found in the window.
    let in_window = |m: &Mode| region.contains(if m.root.converged { m.root.omega } else { m.seed.0 });
    let all = super::spectrum::degenerate_of(&rec, &setup, &opts);
    let mut notes = Vec::new();
    for m in modes.iter_mut().filter(|m| in_window(m)) {
        notes.extend(super::spectrum::settle_special(&rec, &setup, &opts, &all, std::slice::from_mut(m))?);
    }
    let checks = modes
        .iter()
        .map(|m| match &integ {
            Some(f) if m.root.converged && m.method == super::spectrum::ModeMethod::ContinuedFraction => {
                Some(f(super::spectrum::check_seed(m.root.omega)))
            }
            _ => None,
        })
        .collect();
    let inside: Vec<Mode> = modes.iter().filter(|m| in_window(m)).cloned().collect();
    notes.extend(super::spectrum::degenerate_notes(&setup, &all, &inside));
    let degenerate = inside
        .iter()
        .filter(|m| !m.root.converged)
        .filter_map(|m| {
            let near = super::spectrum::nearest_of(&all, m.seed.0, 0.1 * m.seed.0.im.abs().max(1e-3));
            near.first().map(|p| (m.n, p.omega))
        })
        .collect();
    Ok(LadderRun { modes, checks, end, spectral, seeds, notes, degenerate })
}

/// The ladder's seeds: the global method's eigenvalues in the lower right
/// quadrant, on the coarsest grid of [`global::SEED_GRIDS`] first and on
/// `grid` when fewer than two persist there.
fn ladder_seeds(bp: &super::boundary::BoundaryProblem, grid: usize) -> Result<(Vec<SpectralValue>, global::Spectral)> {
    let grid_for = |n: usize| global::lower_right(bp, n, global::SEED_PERSIST);
    let (seeds, spectral) = grid_for(global::SEED_GRIDS[0])?;
    if seeds.len() < 2 && grid != global::SEED_GRIDS[0] {
        return grid_for(grid);
    }
    Ok((seeds, spectral))
}

/// True when a ladder's next seed lies past the window's bottom by half an
/// overtone spacing, once the last overtone sought was settled (or one
/// below the window was): a search for a later overtone can still land on
/// a missed one in the window, which the ladder files under its own
/// number; past by three spacings in any case.
fn past_the_window(region: Region, modes: &[Mode], seed: Complex64) -> bool {
    let bottom = region.im.0;
    let mut conv = modes.iter().rev().filter(|m| m.root.converged);
    let (a, b) = (conv.next(), conv.next());
    let spacing = match (a, b) {
        (Some(a), Some(b)) => (a.root.omega.im - b.root.omega.im).abs() / f64::from(a.n - b.n),
        _ => 0.0,
    };
    let settled = modes.last().is_some_and(|m| m.root.converged) || a.is_some_and(|m| m.root.omega.im < bottom);
    let past = bottom - seed.im;
    past > 0.5 * spacing && (settled || past > 3.0 * spacing)
}

/// The ladder on the continued fraction of the numeric series between the
/// ends (`solve::mobius`), for a problem with no exact recurrence (a horizon
/// that is a root of a cubic, an anti-de Sitter boundary): the same seeds
/// and stop as [`ladder_run`], each overtone checked by direct integration.
fn series_ladder_run(bp: &super::boundary::BoundaryProblem, var: &str, opts: &SpectrumOptions, region: Region, grid: usize) -> Result<LadderRun> {
    let series = super::mobius::series(bp, var)?;
    let (seeds, spectral) = ladder_seeds(bp, grid)?;
    if seeds.is_empty() {
        return Err(Error::new(ErrorKind::Usage, "the global spectral method gave no seed for the numeric series"));
    }
    let opts = opts.from_global(seeds.iter().map(|v| v.omega).collect(), LADDER_LIMIT - 1);
    let solve = |n: u32, seed: Complex64| super::cf::find_root(&series.recurrence, n as usize, seed, opts.tol, 64, 1 << 17);
    let beyond = |modes: &[Mode], seed: Complex64| past_the_window(region, modes, seed);
    let (modes, end) = super::spectrum::ladder(&opts, &|_| None, &solve, &beyond)?;
    let checks = modes
        .iter()
        // Admission asks for agreement to CONFIRMED: the check's own
        // tolerance a tenth of that (integration loses digits on strongly
        // damped modes, and a failing check is said as such).
        .map(|m| {
            m.root.converged.then(|| {
                super::ends::find_root(bp, super::spectrum::check_seed(m.root.omega), (0.1 * CONFIRMED).max(super::spectrum::check_tol(opts.tol)))
            })
        })
        .collect();
    let notes = vec![format!("the continued fraction is that of a numeric series between the ends: {}", series.description)];
    Ok(LadderRun { modes, checks, end, spectral, seeds, notes, degenerate: Vec::new() })
}

/// The family of a polished value (`zero_re`: Re ω is zero to the polish's accuracy).
fn family_of(w: Complex64, zero_re: bool) -> ModeFamily {
    if w.im > 0.0 {
        ModeFamily::Growing
    } else if zero_re {
        ModeFamily::PurelyImaginary
    } else if w.re > 0.0 {
        ModeFamily::Oscillating
    } else {
        ModeFamily::NegativeFrequency
    }
}

/// Rows for modes found by the global method and polished by direct
/// integration, numbered by |Im ω| within each family after the rows
/// already `taken` (the ladder's), a Re ω < 0 mode at −ω̄ of an oscillating
/// one listed as its mirror; a mode already taken is skipped.
fn spectral_rows(found: &[global::Found], scale: f64, taken: &mut Vec<RegionRow>) {
    let zero_re = |w: Complex64| w.re.abs() <= 1e-7 * w.norm().max(scale);
    let mut sorted: Vec<&global::Found> = found.iter().collect();
    // Re ω ≥ 0 first, so that each mirror finds its partner already numbered.
    sorted.sort_by(|p, q| {
        let (a, b) = (p.polished.omega, q.polished.omega);
        (a.re < 0.0 && !zero_re(a)).cmp(&(b.re < 0.0 && !zero_re(b))).then(a.im.abs().total_cmp(&b.im.abs()))
    });
    for f in sorted {
        let w = f.polished.omega;
        if taken.iter().any(|r| (r.omega - w).norm() <= SAME * w.norm().max(scale)) {
            continue;
        }
        let family = family_of(w, zero_re(w));
        let mirror_of = match family {
            ModeFamily::NegativeFrequency => taken
                .iter()
                .find(|r| r.family == ModeFamily::Oscillating && r.mirror_of.is_none() && (r.omega + w.conj()).norm() <= 1e-7 * w.norm().max(scale))
                .map(|r| r.n),
            ModeFamily::Oscillating | ModeFamily::PurelyImaginary | ModeFamily::Growing => None,
        };
        let n = match mirror_of {
            Some(m) => m,
            None => taken.iter().filter(|r| r.family == family && r.mirror_of.is_none()).map(|r| r.n + 1).max().unwrap_or(0),
        };
        let note = match family {
            ModeFamily::NegativeFrequency => {
                "the continued fraction is set up for Re ω ≥ 0: a mode with Re ω < 0 is polished by direct integration only"
            }
            ModeFamily::Growing => "the continued fraction is set up for the lower half-plane: a growing mode is polished by direct integration only",
            ModeFamily::Oscillating | ModeFamily::PurelyImaginary => {
                "no recurrence with a continued fraction on this problem: the evidence is the agreement of the spectral value, and of standard and refined integration"
            }
        };
        let family = if mirror_of.is_some() { ModeFamily::Oscillating } else { family };
        taken.push(RegionRow {
            family,
            n,
            mirror_of,
            omega: w,
            found: Finding::Spectral(f.spectral),
            seed: f.spectral.omega,
            polished_by: ModeMethod::Integrate,
            check: None,
            check_note: Some(note.to_string()),
        });
    }
}

/// The global method's description for the report.
fn spectral_words(sp: &global::Spectral, fname: &str, scale: f64, seeds_only: bool) -> String {
    let kept = if seeds_only {
        format!(
            "an eigenvalue is a seed when both grids agree to {:.0e} × max(|{fname}|, {scale:.3e}) — never reported as it is, only after the polish and the check",
            sp.tol
        )
    } else {
        format!("an eigenvalue is kept when both grids agree to {:.0e} × max(|{fname}|, {scale:.3e})", sp.tol)
    };
    format!(
        "the global spectral method: Chebyshev collocation on {} and {} intervals, {}; the polynomial eigenvalue problem (degree {} in {fname}) by companion linearisation, shift and invert; {kept} ({} eigenvalues of the finer grid dropped as spurious)",
        sp.grids.0, sp.grids.1, sp.factors.map, sp.degree, sp.dropped
    )
}

/// Every mode of the request's boundary problem in `region`, with `grid`
/// intervals on the global method's coarser grid (where its eigenvalues
/// are reported after a polish; the ladder's seeds try a coarse grid first).
pub fn region_modes(red: &Reduction, req: &SpectrumRequest, region: Region, grid: usize) -> Result<RegionReport> {
    let setup = region_setup(red, req)?;
    let (red, bp, opts, classic) = (&setup.red, &setup.problem, &setup.opts, setup.classic);
    let fname = setup.frequency.as_str();
    let scale = bp.scale;
    let big = 1e300;
    let lower = Region { re: (-big, big), im: (-big, 0.0) };
    let symmetric = global::mirror_symmetric(bp);
    let mut notes =
        vec!["a mode with Re ω < 0 at −ω̄ of another is its mirror image: listed right after its partner, with the partner's number".to_string()];
    let ladder = match (classic, region.clip(&lower)) {
        (true, Some(_)) => match ladder_run(red, bp, opts, region, grid, req.wkb_order) {
            Ok(run) => Some(run),
            Err(e) => {
                notes.push(format!("the overtone ladder could not run ({}): every mode comes from the global spectral method", e.message));
                None
            }
        },
        // No exact recurrence: the numeric series between the ends, where it can be set up.
        (false, Some(_)) if req.problem == super::request::Problem::Quasinormal => match series_ladder_run(bp, &red.var, opts, region, grid) {
            Ok(run) => Some(run),
            Err(e) => {
                notes.push(format!("no continued fraction on this problem ({}): every mode comes from the global spectral method", e.message));
                None
            }
        },
        _ => None,
    };
    let mut rows: Vec<RegionRow> = Vec::new();
    let mut rejected: Vec<(Complex64, String)> = Vec::new();
    let mut unsettled: Vec<Unsettled> = Vec::new();
    let mut limits: Vec<String> = Vec::new();
    let mut methods: Vec<String> = Vec::new();
    let same = |a: Complex64, b: Complex64| (a - b).norm() <= SAME * a.norm().max(scale);
    // The parts of the window left to the global method alone.
    let parts: Vec<Region> = match &ladder {
        None => vec![region],
        Some(run) => {
            let partners = ladder_rows(run, region, scale, &mut rows, &mut rejected, &mut unsettled);
            if symmetric {
                mirror_rows(bp, opts.tol, region, scale, &partners, &mut rows, &mut rejected);
            }
            methods.push(format!(
                "the overtone ladder (the seeding loop of the overtone spectrum): {}; each next overtone seeded by extrapolation from the two below it, polished by the continued fraction (the n-th inversion for overtone n) and checked by direct integration, until the next seed lies below the window",
                spectral_words(&run.spectral, fname, scale, true)
            ));
            notes.extend(run.notes.iter().cloned());
            limits.extend(ladder_limits(run, region, fname));
            if symmetric {
                notes.push(format!("the equation is symmetric under {fname} → −conj({fname}) (real coefficients, {fname} entering as i·{fname} does): each mode's mirror is found by direct integration from the mirror image of the continued fraction's value and checked against it"));
            }
            let up = Region { re: (-big, big), im: (0.0, big) };
            let left = Region { re: (-big, 0.0), im: (-big, 0.0) };
            let mut parts: Vec<Region> = region.clip(&up).into_iter().collect();
            if !symmetric {
                parts.extend(region.clip(&left));
            }
            parts
        }
    };
    for part in parts {
        let (sp, found, rej) = global::modes_in(bp, part, grid, opts.tol)?;
        spectral_rows(&found, scale, &mut rows);
        rejected.extend(rej.into_iter().filter(|(w, _)| !rows.iter().any(|r| same(r.omega, *w))));
        let what = if ladder.is_some() {
            format!("Re/Im {fname} in [{}, {}] × [{}, {}]: ", part.re.0, part.re.1, part.im.0, part.im.1)
        } else {
            String::new()
        };
        let mut words = format!("{what}{}", spectral_words(&sp, fname, scale, false));
        if bp.ends[1].nature == super::boundary::Nature::IrregularRank1 {
            words = format!("{words}; for the lower half-plane the ray to the irregular infinity is turned by ±{:.2}π into the complex plane (complex scaling), so that the outgoing solution is the recessive one along it", global::TURN / std::f64::consts::PI);
        }
        methods.push(words);
        if ladder.is_none() && part.im.0 < 0.0 {
            limits.push(format!("in double precision the discretised problem is very non-normal and only the least damped modes persist on both grids: a region reaching deep into the lower half-plane may hold further, more damped modes that are not listed (ask for them with {})", RequestInput::Overtones.mention()));
        }
    }
    // Partners first, each mirror right after its partner.
    rows.sort_by(|p, q| {
        let key = |r: &RegionRow| (r.family as u8, r.n, r.mirror_of.is_some() as u8);
        key(p).cmp(&key(q))
    });
    Ok(RegionReport {
        frequency: fname.to_string(),
        var: red.var.clone(),
        region,
        ends: bp.ends.clone(),
        problem_notes: bp.notes.clone(),
        method: methods.join("; then, "),
        notes,
        limits,
        rows,
        unsettled,
        rejected,
        scale,
    })
}

/// The ladder's overtones in the window: a row for each confirmed by direct
/// integration (to [`CONFIRMED`]), a rejection for each that was not, and
/// the overtones sought in the window that did not converge. Returns every
/// confirmed overtone with Re ω > 0, in the window or not (their mirrors
/// may lie in it).
fn ladder_rows(
    run: &LadderRun,
    region: Region,
    scale: f64,
    rows: &mut Vec<RegionRow>,
    rejected: &mut Vec<(Complex64, String)>,
    unsettled: &mut Vec<Unsettled>,
) -> Vec<(u32, Complex64)> {
    let mut confirmed = Vec::new();
    for (m, check) in run.modes.iter().zip(&run.checks) {
        if !m.root.converged {
            if region.contains(m.seed.0) {
                let degenerate = run.degenerate.iter().find(|(n, _)| *n == m.n).map(|(_, w)| *w);
                unsettled.push(Unsettled { n: m.n, seed: m.seed.0, seed_from: m.seed.1.clone(), reason: m.root.stop.text(), degenerate });
            }
            continue;
        }
        let w = m.root.omega;
        if m.method == super::spectrum::ModeMethod::SpecialPoint {
            if region.contains(w) {
                rows.push(RegionRow {
                    family: if w.re == 0.0 { ModeFamily::PurelyImaginary } else { ModeFamily::Oscillating },
                    n: m.n,
                    mirror_of: None,
                    omega: w,
                    found: Finding::SpecialPoint,
                    seed: m.seed.0,
                    polished_by: super::spectrum::ModeMethod::SpecialPoint,
                    check: None,
                    check_note: Some("exact arithmetic: the recurrence's leading coefficient and the determinant of its first equations vanish here (see the note); no numeric check is possible at this point".to_string()),
                });
            }
            continue;
        }
        let reach = CONFIRMED * w.norm().max(scale);
        let agreed = check.as_ref().filter(|c| c.converged && (c.omega - w).norm() <= reach);
        if let (Some(_), true) = (agreed, w.re > 0.0) {
            confirmed.push((m.n, w));
        }
        if !region.contains(w) {
            continue;
        }
        let Some(c) = agreed else {
            let why = match check {
                Some(c) if c.converged => format!("direct integration from beside it converged to {} instead", fmt_c(c.omega)),
                Some(c) => format!("direct integration from beside it did not converge: {}", c.reason),
                None => "direct integration could not be set up on this problem".to_string(),
            };
            rejected.push((w, format!("overtone {}'s continued-fraction root is not confirmed: {why}", m.n)));
            continue;
        };
        let found = match run.seeds.get(m.n as usize) {
            Some(v) if v.omega == m.seed.0 => Finding::Spectral(*v),
            _ => Finding::Ladder(m.seed.1.clone()),
        };
        let family = if w.re == 0.0 { ModeFamily::PurelyImaginary } else { ModeFamily::Oscillating };
        rows.push(RegionRow {
            family,
            n: m.n,
            mirror_of: None,
            omega: w,
            found,
            seed: m.seed.0,
            polished_by: ModeMethod::ContinuedFraction,
            check: Some((ModeMethod::Integrate, c.omega)),
            check_note: None,
        });
    }
    confirmed
}

/// The mirror −ω̄ of each confirmed overtone of the ladder with Re ω > 0
/// (`partners`), where it lies in the window: direct integration from the
/// mirror image, admitted when it converges there (to [`CONFIRMED`]),
/// checked against the mirrored continued-fraction value.
fn mirror_rows(
    bp: &super::boundary::BoundaryProblem,
    tol: f64,
    region: Region,
    scale: f64,
    partners: &[(u32, Complex64)],
    rows: &mut Vec<RegionRow>,
    rejected: &mut Vec<(Complex64, String)>,
) {
    for &(n, w) in partners {
        let image = -w.conj();
        if !region.contains(image) {
            continue;
        }
        let r = super::ends::find_root(bp, image, super::spectrum::check_tol(tol));
        let reach = CONFIRMED * w.norm().max(scale);
        if !r.converged || (r.omega - image).norm() > reach {
            let why = if r.converged { format!("it converged to {}", fmt_c(r.omega)) } else { format!("it did not converge: {}", r.reason) };
            rejected.push((image, format!("the mirror image of overtone {n} is not confirmed by direct integration: {why}")));
            continue;
        }
        rows.push(RegionRow {
            family: ModeFamily::Oscillating,
            n,
            mirror_of: Some(n),
            omega: r.omega,
            found: Finding::Mirror,
            seed: image,
            polished_by: ModeMethod::Integrate,
            check: Some((ModeMethod::ContinuedFraction, image)),
            check_note: Some(format!("against the mirror image of overtone {n}'s continued-fraction value")),
        });
    }
}

/// What a ladder search cannot exclude, in words.
fn ladder_limits(run: &LadderRun, region: Region, fname: &str) -> Vec<String> {
    let mut out = Vec::new();
    let deepest = run.seeds.iter().map(|v| v.omega.im).fold(0.0, f64::min);
    if run.seeds.is_empty() {
        out.push("the global spectral method gave no seed in the lower half-plane; the ladder started from estimates at the potential barrier and follows one family of modes: a mode of another family (a purely imaginary one, say) anywhere in the window is not excluded".to_string());
    } else {
        out.push(format!(
            "the global spectral method resolved the lower half-plane down to Im {fname} = {deepest:.4} (its most damped eigenvalue persisting on both grids); below, the modes are the ladder's, which follows one family: a mode of another family there (a purely imaginary one, say) is not excluded"
        ));
    }
    match run.end {
        LadderEnd::Beyond(n) => out.push(format!(
            "the ladder stopped before overtone {n}, whose seed extrapolated from the overtones below lies under the window's bottom Im {fname} = {} by more than half their spacing: the modes below are outside the window",
            region.im.0
        )),
        LadderEnd::Range => {
            out.push(format!("the ladder reached its limit of {LADDER_LIMIT} overtones inside the window: more damped modes in the window are not listed"))
        }
    }
    if let Some(last) = run.modes.iter().rev().find(|m| m.root.converged) {
        let failed_after = run.modes.iter().filter(|m| m.n > last.n).count();
        if failed_after > 0 {
            out.push(format!(
                "the last overtone the ladder settled is {} ({}); the {failed_after} sought after it did not converge, so modes more damped than it are not excluded",
                last.n,
                fmt_c(last.root.omega)
            ));
        }
    }
    out
}
