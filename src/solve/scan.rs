//! Parameter surveys of quasinormal modes: every point is solved with the
//! parameters substituted exactly. A survey is a [`Walk`]: the points in
//! the order they are solved, one parameter (a line), a tensor grid of
//! several walked as a snake (so that consecutive points are neighbours in
//! the grid), or any list of points. The walk is cut into chunks fixed by
//! its length alone (never by the thread count, so that the digits do not
//! depend on it); chunks run in parallel, each mode followed from its
//! neighbour within a chunk (continuation: the previous point's modes seed
//! the next), and a chunk whose first point does not continue the chunk
//! before it is solved again from that chunk's end. Points reach the
//! caller in walk order, each as soon as it is final, so that a table
//! written from them keeps all that finished when the run is killed, and a
//! run can start again from such a table ([`survey`]'s `done`) and give
//! the same numbers as one that was never interrupted. A walk can be split
//! into shards for separate processes or cluster jobs.

use super::spectrum::{integration_check, qnm_modes_from, qnm_recurrence, substitute, Adjoined, Mode, QnmChoice, Setup, SpectrumOptions};
use crate::algebra::{GRat, Rat};
use crate::error::Result;
use crate::ode::Reduction;
use crate::series::Recurrence;
use num_complex::Complex64;
use std::collections::VecDeque;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

/// The result at one point of a survey.
#[derive(Clone, Debug)]
pub struct ScanPoint {
    /// Position in the survey's walk (the row order of its table).
    pub index: usize,
    /// The first varied parameter's value.
    pub value: f64,
    /// Every varied parameter's value, in the order of [`Walk::fields`].
    pub values: Vec<f64>,
    /// The modes (empty when the point failed), each with its integration check.
    pub modes: Vec<(Mode, Option<Complex64>)>,
    /// For a coupled problem, the angular eigenvalue at each mode (empty otherwise).
    pub angular: Vec<Option<Complex64>>,
    /// Why the point failed, when it did.
    pub error: Option<String>,
}

/// The points of a survey in the order they are solved.
#[derive(Clone, Debug)]
pub struct Walk {
    /// Field indices of the varied parameters.
    pub fields: Vec<usize>,
    /// Each point's values of the varied parameters, in the order of `fields`.
    pub points: Vec<Vec<Rat>>,
    /// The length of one pass along the last axis of a tensor grid (the
    /// whole walk for a line or a list): a step from one pass to the next
    /// changes another parameter, often by much (a multipole index), so
    /// each pass starts afresh instead of from its neighbour.
    pub pass: usize,
}

impl Walk {
    /// One parameter (field index `field`) over `grid`, in its order.
    pub fn line(field: usize, grid: &[Rat]) -> Walk {
        Walk { fields: vec![field], points: grid.iter().map(|x| vec![x.clone()]).collect(), pass: grid.len().max(1) }
    }

    /// The tensor grid of `axes` (field index, values), walked as a snake:
    /// the first axis slowest, every later one forth and back in turn, so
    /// that consecutive points differ by one step of one parameter. `None`
    /// when the grid has more than `max` points or an axis is empty.
    pub fn tensor(axes: &[(usize, Vec<Rat>)], max: usize) -> Option<Walk> {
        let sizes: Vec<usize> = axes.iter().map(|(_, v)| v.len()).collect();
        let mut total = 1usize;
        for &n in &sizes {
            total = total.checked_mul(n).filter(|&t| t <= max && n > 0)?;
        }
        let points = (0..total).map(|s| snake(&sizes, s).iter().zip(axes).map(|(&i, (_, v))| v[i].clone()).collect()).collect();
        Some(Walk { fields: axes.iter().map(|(f, _)| *f).collect(), points, pass: sizes.last().copied().unwrap_or(1).max(1) })
    }

    /// The number of points.
    pub fn len(&self) -> usize {
        self.points.len()
    }

    /// A list of points, solved in its order (one pass).
    pub fn list(fields: Vec<usize>, points: Vec<Vec<Rat>>) -> Walk {
        let pass = points.len().max(1);
        Walk { fields, points, pass }
    }
}

/// The per-axis indices of position `s` of the snake walk over a grid of
/// `sizes`: the walk of the later axes runs backwards after every odd
/// index of an earlier one.
pub fn snake(sizes: &[usize], s: usize) -> Vec<usize> {
    let mut rest: usize = sizes.iter().product();
    let mut t = s;
    let mut out = Vec::with_capacity(sizes.len());
    for &n in sizes {
        rest /= n.max(1);
        let i = t / rest.max(1);
        t %= rest.max(1);
        if i % 2 == 1 {
            t = rest - 1 - t;
        }
        out.push(i);
    }
    out
}

/// The grid a:b:step as exact rationals (a, a + step, … ≤ b).
pub fn grid(a: &Rat, b: &Rat, step: &Rat) -> Option<Vec<Rat>> {
    if step.is_zero() || step.numer().is_negative() {
        return None;
    }
    let mut out = Vec::new();
    let mut x = a.clone();
    while x.sub(b).numer().signum() <= 0 {
        out.push(x.clone());
        x = x.add(step);
        if out.len() > 100_000 {
            return None;
        }
    }
    Some(out)
}

/// The indices of shard `k` (1-based) of `n` over a grid of `len` points: contiguous blocks.
pub fn shard(len: usize, k: usize, n: usize) -> std::ops::Range<usize> {
    let start = len * (k - 1) / n;
    let end = len * k / n;
    start..end
}

/// The modes at one grid point, each with its integration check.
pub type PointModes = Vec<(Mode, Option<Complex64>)>;

/// A worker's solver for one grid point: the options carry the point's
/// parameter values and the seeds from its neighbour; the flag asks for
/// the integration check.
pub type PointSolver<'a> = Box<dyn Fn(&SpectrumOptions, bool) -> Result<SolvedPoint> + 'a>;

/// What a point solver gives: the modes with their checks, and for a
/// coupled problem the angular eigenvalue at each mode.
#[derive(Clone, Debug)]
pub struct SolvedPoint {
    /// The modes, each with its integration check.
    pub modes: PointModes,
    /// The angular eigenvalue at each mode (empty when not coupled).
    pub angular: Vec<Option<Complex64>>,
}

impl From<PointModes> for SolvedPoint {
    fn from(modes: PointModes) -> SolvedPoint {
        SolvedPoint { modes, angular: Vec::new() }
    }
}

/// What a finished point leaves for the continuation: its modes when every
/// one converged. A resumed survey is given these for the points it
/// already has.
pub type Trail = Option<Vec<Complex64>>;

/// What the consumer of a survey's points says after each one.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Flow {
    /// Go on to the next point.
    Go,
    /// Stop here (the points given so far are all the survey delivers).
    Stop,
}

/// How a survey ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SurveyEnd {
    /// Every point of the range was delivered.
    Finished,
    /// The consumer stopped the survey; `next` is the first point not delivered.
    Stopped {
        /// The walk position the survey would have delivered next.
        next: usize,
    },
}

/// A chunk still to be solved: walk positions `from..to`, and how it starts.
struct Task {
    from: usize,
    to: usize,
    /// `None`: from no neighbour (the result is final only if it continues
    /// the chunk before); `Some(seed)`: from the given seeds, or from none
    /// at the start of the range or of a pass (final as it is).
    given: Option<Trail>,
}

/// Solves walk positions `positions` in order with one solver, from the
/// seeds `start` (when given), each point continuing the last converged
/// one; `go` is asked before each point and `out` takes each result
/// (returning false to stop).
#[allow(clippy::too_many_arguments)]
fn run_chunk(
    solver: &Result<PointSolver<'_>>,
    base: &SpectrumOptions,
    walk: &Walk,
    check: bool,
    positions: std::ops::Range<usize>,
    start: Trail,
    go: &dyn Fn() -> bool,
    out: &mut dyn FnMut(ScanPoint) -> bool,
) {
    let mut prev = start;
    for i in positions {
        if !go() {
            return;
        }
        let values: Vec<f64> = walk.points[i].iter().map(|x| x.to_f64()).collect();
        let point = |solved: SolvedPoint, error| ScanPoint {
            index: i,
            value: values.first().copied().unwrap_or(f64::NAN),
            values: values.clone(),
            modes: solved.modes,
            angular: solved.angular,
            error,
        };
        let failed = || SolvedPoint::from(Vec::new());
        let p = match solver {
            Err(e) => point(failed(), Some(e.message.clone())),
            Ok(solve) => {
                let mut opts = base.clone();
                for (f, x) in walk.fields.iter().zip(&walk.points[i]) {
                    opts.values[*f] = GRat::real(x.clone());
                }
                if let Some(s) = &prev {
                    opts.seeds = s.clone();
                    opts.seeds_from = super::spectrum::SeedSource::Neighbour;
                    opts.guess = None;
                }
                // Each point's exact work has a budget of its own (the same on any thread).
                match crate::algebra::budget::with_own_budget(crate::algebra::budget::DEFAULT_BUDGET, || solve(&opts, check)) {
                    Ok(mut solved) => {
                        mark_events(&mut solved.modes, prev.as_deref());
                        point(solved, None)
                    }
                    Err(e) => point(failed(), Some(e.message)),
                }
            }
        };
        if let Some(w) = converged(&p) {
            prev = Some(w);
        }
        if !out(p) {
            return;
        }
    }
}

/// Says what happened to the followed modes at a point: two overtones at
/// one value have collided (the later one keeps no value), and a mode whose
/// root finder failed after it converged at the previous point (`prev`)
/// has disappeared.
fn mark_events(modes: &mut PointModes, prev: Option<&[Complex64]>) {
    use super::cf::StopReason;
    for i in 0..modes.len() {
        let w = modes[i].0.root.omega;
        let same = |j: usize, modes: &PointModes| {
            let r = &modes[j].0.root;
            r.converged && w.re.is_finite() && w.im.is_finite() && (r.omega - w).norm() <= 1e-8 * w.norm()
        };
        if let Some(j) = (0..modes.len()).find(|&j| j != i && (j < i || !modes[i].0.root.converged) && same(j, modes)) {
            let other = modes[j].0.n;
            let m = &mut modes[i];
            m.0.root.converged = false;
            m.0.root.stop = StopReason::Collided(other);
            m.1 = None;
        } else if !modes[i].0.root.converged && prev.is_some_and(|p| p.len() > i) {
            let r = &mut modes[i].0.root;
            if !matches!(r.stop, StopReason::Disappeared(_) | StopReason::Collided(_)) {
                r.stop = StopReason::Disappeared(Box::new(r.stop.clone()));
            }
        }
    }
}

/// The chunks of `range` still to solve after `resume` (`trail`: the
/// continuation state of the points rs..resume already solved). Chunks sit
/// at multiples of the chunk length in the whole walk, cut at the range's
/// ends, so that a shard continues its points as the whole run does. Each
/// pass of the walk starts afresh too: its first point does not continue
/// the previous pass's last.
fn plan_tasks(walk: &Walk, range: std::ops::Range<usize>, resume: usize, trail: &[Trail]) -> Vec<Task> {
    let rs = range.start;
    let len = chunk_len(walk.len());
    let pass = walk.pass.max(1);
    let rooted = |i: usize| i == rs || i.is_multiple_of(pass);
    let mut tasks = Vec::new();
    let mut cs = rs;
    while cs < range.end {
        let ce = ((cs / len + 1) * len).min((cs / pass + 1) * pass).min(range.end);
        if ce > resume {
            let given = if cs < resume {
                // Part of the chunk is done: it goes on from its last
                // converged point; with none, from where the chunk started
                // (from the chunk before when that one ended converged:
                // an unconverged first point never continues it).
                Some(trail[cs - rs..].iter().rev().find_map(|t| t.clone()).or_else(|| (!rooted(cs)).then(|| trail[cs - rs - 1].clone()).flatten()))
            } else if rooted(cs) {
                Some(None)
            } else {
                None
            };
            tasks.push(Task { from: cs.max(resume), to: ce, given });
        }
        cs = ce;
    }
    tasks
}

/// Solves the points `range` of `walk` and hands each to `sink` on the
/// calling thread, in walk order, as soon as it is final. `make` builds a
/// solver once per worker thread (exact fields are not shared between
/// threads; as many workers as rayon's current thread count). `done` is
/// the continuation state of the first points of the range, already
/// solved by an earlier run: the survey goes on after them exactly as an
/// uninterrupted run would.
pub fn survey<'a>(
    make: &(dyn Fn() -> Result<PointSolver<'a>> + Sync),
    base: &SpectrumOptions,
    walk: &Walk,
    range: std::ops::Range<usize>,
    check: bool,
    done: &[Trail],
    sink: &mut dyn FnMut(ScanPoint) -> Flow,
) -> SurveyEnd {
    let rs = range.start;
    let resume = (rs + done.len()).min(range.end);
    let trail: Vec<Trail> = done[..resume - rs].to_vec();
    let pass = walk.pass.max(1);
    let rooted = |i: usize| i == rs || i.is_multiple_of(pass);
    let tasks = plan_tasks(walk, range.clone(), resume, &trail);
    let mut trail = trail;
    let stop = AtomicBool::new(false);
    let dropped: Vec<AtomicBool> = tasks.iter().map(|_| AtomicBool::new(false)).collect();
    let next = AtomicUsize::new(0);
    let threads = rayon::current_num_threads().clamp(1, tasks.len().max(1));
    let (tx, rx) = std::sync::mpsc::channel::<(usize, ScanPoint)>();
    std::thread::scope(|scope| {
        let mut workers = 0;
        for _ in 0..threads {
            let tx = tx.clone();
            let (tasks, stop, dropped, next) = (&tasks, &stop, &dropped, &next);
            let work = move || {
                let solver = crate::algebra::budget::with_own_budget(crate::algebra::budget::DEFAULT_BUDGET, make);
                loop {
                    let t = next.fetch_add(1, Ordering::SeqCst);
                    let Some(task) = tasks.get(t) else { break };
                    let go = || !stop.load(Ordering::SeqCst) && !dropped[t].load(Ordering::SeqCst);
                    let mut sent = true;
                    run_chunk(&solver, base, walk, check, task.from..task.to, task.given.clone().flatten(), &go, &mut |p| {
                        sent = tx.send((t, p)).is_ok();
                        sent
                    });
                    if !sent || stop.load(Ordering::SeqCst) {
                        break;
                    }
                }
            };
            // The exact work nests deeply on some inputs: a large stack, as the command line's.
            if std::thread::Builder::new().stack_size(256 << 20).spawn_scoped(scope, work).is_ok() {
                workers += 1;
            }
        }
        drop(tx);
        let mut buffers: Vec<VecDeque<ScanPoint>> = tasks.iter().map(|_| VecDeque::new()).collect();
        let mut own: Option<Result<PointSolver<'a>>> = None;
        // The next result of task `t`, waiting for the workers (or, with
        // none running, solving the task here).
        let take = |t: usize, buffers: &mut Vec<VecDeque<ScanPoint>>, own: &mut Option<Result<PointSolver<'a>>>| -> Option<ScanPoint> {
            while buffers[t].is_empty() {
                match rx.recv() {
                    Ok((k, p)) => buffers[k].push_back(p),
                    Err(_) if workers == 0 => {
                        let solver = own.get_or_insert_with(|| crate::algebra::budget::with_own_budget(crate::algebra::budget::DEFAULT_BUDGET, make));
                        let task = &tasks[t];
                        let b = &mut buffers[t];
                        run_chunk(solver, base, walk, check, task.from..task.to, task.given.clone().flatten(), &|| true, &mut |p| {
                            b.push_back(p);
                            true
                        });
                        if b.is_empty() {
                            return None;
                        }
                    }
                    Err(_) => return None,
                }
            }
            buffers[t].pop_front()
        };
        'tasks: for (t, task) in tasks.iter().enumerate() {
            let at = |i: usize| -> Trail { i.checked_sub(rs).and_then(|k| trail.get(k).cloned()).flatten() };
            let again = match &task.given {
                None => match at(task.from - 1) {
                    Some(last) => {
                        if let Some(first) = take(t, &mut buffers, &mut own) {
                            let second = if task.from >= rs + 2 && !rooted(task.from - 1) { at(task.from - 2) } else { None };
                            let ok = continues(&last, second.as_deref(), converged(&first).as_deref());
                            buffers[t].push_front(first);
                            (!ok).then_some(last)
                        } else {
                            None
                        }
                    }
                    None => None,
                },
                _ => None,
            };
            // Hands a final point on; false when the consumer stops.
            let mut deliver = |p: ScanPoint, trail: &mut Vec<Trail>| -> bool {
                trail.push(converged(&p));
                sink(p) == Flow::Go
            };
            match again {
                None => {
                    for _ in task.from..task.to {
                        let Some(p) = take(t, &mut buffers, &mut own) else { break 'tasks };
                        if !deliver(p, &mut trail) {
                            break 'tasks;
                        }
                    }
                }
                Some(seed) => {
                    // The chunk started on another mode: solved again here,
                    // point by point, from the chunk before.
                    dropped[t].store(true, Ordering::SeqCst);
                    buffers[t].clear();
                    let solver = own.get_or_insert_with(make);
                    let mut go_on = true;
                    run_chunk(solver, base, walk, check, task.from..task.to, Some(seed), &|| true, &mut |p| {
                        go_on = deliver(p, &mut trail);
                        go_on
                    });
                    if !go_on {
                        break 'tasks;
                    }
                }
            }
        }
        stop.store(true, Ordering::SeqCst);
        let next = rs + trail.len();
        if next >= range.end {
            SurveyEnd::Finished
        } else {
            SurveyEnd::Stopped { next }
        }
    })
}

/// Solves every point of `grid[range]` for parameter `vary` (field index)
/// and returns them in grid order: `survey` over a line, with
/// `progress` called once per finished point.
pub fn scan<'a>(
    make: &(dyn Fn() -> Result<PointSolver<'a>> + Sync),
    base: &SpectrumOptions,
    vary: usize,
    grid: &[Rat],
    range: std::ops::Range<usize>,
    check: bool,
    progress: &(dyn Fn() + Sync),
) -> Vec<ScanPoint> {
    let mut out = Vec::new();
    survey(make, base, &Walk::line(vary, grid), range, check, &[], &mut |p| {
        progress();
        out.push(p);
        Flow::Go
    });
    out
}

/// The length of the chunks a walk of `len` points is cut into: about 16
/// chunks (enough for the cores of a workstation), at least 8 points each
/// so that most points continue a neighbour, at most 48 so that a killed
/// run loses little finished work and the workers stay busy.
fn chunk_len(len: usize) -> usize {
    len.div_ceil(16).clamp(8, 48)
}

/// The modes of a point when every one converged.
fn converged(p: &ScanPoint) -> Option<Vec<Complex64>> {
    (p.error.is_none() && !p.modes.is_empty() && p.modes.iter().all(|(m, _)| m.root.converged))
        .then(|| p.modes.iter().map(|(m, _)| m.root.omega).collect())
}

/// How the modes on the two sides of a boundary of the walk (two files of
/// a sharded survey) meet.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Join {
    /// The point after the boundary continues the ones before it (or the
    /// other way round).
    Continues,
    /// A jump: the modes after the boundary are not on the line of the
    /// ones before it (another mode, or a root finder that lost its mode).
    Jumps,
    /// Not judged: a side did not converge, or the walk turns at the
    /// boundary (no straight line of three points to extrapolate along).
    Unjudged,
}

/// A point of a survey as a boundary check sees it: its parameter values
/// and its continuation state.
pub type Seen<'a> = (&'a [f64], &'a Trail);

/// Whether the modes continue across the boundary between `a` (with `b`
/// before it) and `c` (with `d` after it): the chunk-boundary test of
/// [`survey`], extrapolated along whichever side lies on a straight,
/// evenly stepped line through the boundary.
pub fn join(b: Option<Seen<'_>>, a: Seen<'_>, c: Seen<'_>, d: Option<Seen<'_>>) -> Join {
    let (Some(wa), Some(wc)) = (a.1, c.1) else { return Join::Unjudged };
    let even = |x: &[f64], y: &[f64], z: &[f64]| -> bool {
        let scale = x.iter().chain(y).chain(z).fold(0.0f64, |m, v| m.max(v.abs())).max(1e-300);
        x.len() == y.len() && y.len() == z.len() && x.iter().zip(y).zip(z).all(|((x, y), z)| ((y - x) - (z - y)).abs() <= 1e-9 * scale)
    };
    if let Some((vb, Some(wb))) = b {
        if even(vb, a.0, c.0) {
            return if continues(wa, Some(wb), Some(wc)) { Join::Continues } else { Join::Jumps };
        }
    }
    if let Some((vd, Some(wd))) = d {
        if even(a.0, c.0, vd) {
            return if continues(wc, Some(wd), Some(wa)) { Join::Continues } else { Join::Jumps };
        }
    }
    Join::Unjudged
}

/// True when `next` continues `last` (with `second` the point before it):
/// each mode within three steps of the linear extrapolation (or within 10⁻³
/// relative when there is no previous step to measure).
fn continues(last: &[Complex64], second: Option<&[Complex64]>, next: Option<&[Complex64]>) -> bool {
    let Some(next) = next else { return false };
    if next.len() != last.len() {
        return false;
    }
    last.iter().enumerate().all(|(n, a)| {
        let (predicted, room) = match second.and_then(|s| s.get(n)) {
            Some(b) => (a + (a - b), 3.0 * (a - b).norm()),
            None => (*a, 0.0),
        };
        (next[n] - predicted).norm() <= room.max(1e-3 * a.norm())
    })
}

/// The modes of one equation at one grid point: parameters substituted
/// exactly, the recurrence derived, seeds from WKB (wkb::SEED_ORDER) when no
/// neighbour gave them, the integration check when asked.
///
/// Where the exact recurrence cannot be set up (ends that are roots of a
/// cubic, two horizons: Schwarzschild–de Sitter), quasinormal modes come
/// from the continued fraction of the numeric series between the ends, as
/// `spectrum` finds them (`series_point`).
pub fn single_point(red: &Reduction, opts: &SpectrumOptions, check: bool, quasi_bound: bool) -> Result<SolvedPoint> {
    let r = super::spectrum::substitute_for_series(red, &opts.values, &[opts.freq])?;
    match qnm_recurrence(&r, opts) {
        Ok((rec, setup)) => modes_at(red, Some(&r), &rec, setup, opts, check, quasi_bound),
        Err(e) if e.kind == crate::error::ErrorKind::Usage && !quasi_bound => {
            let why = format!("the exact recurrence could not be set up ({})", e.message);
            series_point(&r, opts, check, &why).map_err(|_| e)
        }
        Err(e) => Err(e),
    }
}

/// True when the point's quasinormal-mode problem runs from a horizon to a
/// regular boundary at infinity (anti-de Sitter) or to a second horizon (de
/// Sitter), which `spectrum` solves by the numeric series and never by the
/// exact recurrence.
fn series_end_point(red: &Reduction, opts: &SpectrumOptions) -> bool {
    let kind = super::boundary::SpectrumKind::Quasinormal;
    super::boundary::try_problem(red, &opts.values, opts.freq, kind, None).is_ok_and(|bp| super::request::horizon_to_series_end(&bp))
}

/// The quasinormal modes at a point (`r` the equation at the point's
/// values) from the numeric series between the ends of its boundary
/// problem (`request::series_between_ends`, the route `spectrum` takes
/// when the exact recurrence does not set up: seeded by the neighbour's
/// modes, else by the global spectral method), each checked by direct
/// integration between the ends when `check`; `why` says why the exact
/// recurrence did not serve.
fn series_point(r: &Reduction, opts: &SpectrumOptions, check: bool, why: &str) -> Result<SolvedPoint> {
    let kind = super::boundary::SpectrumKind::Quasinormal;
    let bp = super::boundary::try_problem(r, &opts.values, opts.freq, kind, None)?;
    let estimate = super::request::barrier_seed(r, opts, &bp);
    let report = match super::request::series_between_ends(bp, super::request::Problem::Quasinormal, opts, &r.var, why, check, &estimate) {
        Ok(report) => report,
        Err(b) => return Err(b.1),
    };
    let Some(series) = report.series else {
        return Err(crate::error::Error::new(crate::error::ErrorKind::Internal, "the numeric series gave no modes"));
    };
    // The series' modes with their checks (direct integration from 1e-4
    // away from each root, as in `spectrum`); a check that did not converge
    // leaves its columns empty.
    Ok(series
        .modes
        .into_iter()
        .map(|m| {
            let c =
                report.modes.iter().find(|e| e.n == m.n).filter(|_| check && m.root.converged).and_then(|e| e.root.converged.then_some(e.root.omega));
            (m, c)
        })
        .collect::<PointModes>()
        .into())
}

/// The modes at a point from its recurrence and set-up; `sub` is the
/// equation with the point's values substituted, made from `red` only when
/// a seed estimate or the check needs it.
fn modes_at(
    red: &Reduction,
    sub: Option<&Reduction>,
    rec: &Recurrence,
    setup: Setup,
    opts: &SpectrumOptions,
    check: bool,
    quasi_bound: bool,
) -> Result<SolvedPoint> {
    let made = std::cell::OnceCell::new();
    let r = || -> Result<&Reduction> {
        match sub {
            Some(r) => Ok(r),
            None => made.get_or_init(|| substitute(red, &opts.values, opts.freq)).as_ref().map_err(Clone::clone),
        }
    };
    if quasi_bound {
        return quasi_bound_at(r()?, rec, setup.decaying()?, opts, check);
    }
    // The WKB estimates are set up only when a seed is asked for: a point
    // continued from its neighbour has its seeds already.
    let est = std::cell::OnceCell::new();
    let horizon = setup.horizon_value;
    let first = |n: u32| {
        est.get_or_init(|| r().ok().and_then(|r| super::spectrum::barrier_estimates(r, opts, horizon, super::wkb::SEED_ORDER).ok()))
            .as_ref()
            .and_then(|e| e(n))
            .and_then(|b| b.series.seed())
    };
    let (modes, setup) = match qnm_modes_from(rec, setup.clone(), opts, &first) {
        // No estimate seeds an overtone (no barrier): the global spectral method does.
        Err(e) if e.message.starts_with(super::spectrum::NO_SEED) && opts.seeds.is_empty() && opts.guess.is_none() => {
            let (seeds, _) = super::continuation::uncoupled_seeds(r()?, opts);
            if seeds.is_empty() {
                return Err(e);
            }
            qnm_modes_from(rec, setup, &SpectrumOptions { seeds, seeds_from: super::spectrum::SeedSource::GlobalMethod, ..opts.clone() }, &first)?
        }
        other => other?,
    };
    // With an adjoined rate at infinity, the check is direct integration
    // between the ends of the boundary problem (the branch there chosen at
    // each trial ω by the same condition).
    let integ: Option<Box<dyn Fn(Complex64) -> super::integrate::IntRoot + '_>> = match (check, &setup.rate) {
        (false, _) => None,
        (true, Some(_)) => {
            let r = r()?;
            super::boundary::try_problem(r, &opts.values, opts.freq, super::boundary::SpectrumKind::Quasinormal, None)
                .ok()
                .map(|bp| Box::new(move |w| super::ends::find_root(&bp, w, opts.tol)) as Box<dyn Fn(Complex64) -> super::integrate::IntRoot + '_>)
        }
        (true, None) => integration_check(r()?, opts, &setup).ok().map(|f| Box::new(f) as Box<dyn Fn(Complex64) -> super::integrate::IntRoot + '_>),
    };
    Ok(modes
        .into_iter()
        .map(|m| {
            let c = match (&integ, m.root.converged) {
                (Some(f), true) => {
                    let c = f(super::spectrum::check_seed(m.root.omega));
                    c.converged.then_some(c.omega)
                }
                _ => None,
            };
            (m, c)
        })
        .collect::<PointModes>()
        .into())
}

/// The quasi-bound states at a point (`r` the equation at the point's
/// values): each level from its own hydrogen-like estimate (or the guess at
/// a first point), not from the neighbour's values; the check by direct
/// integration between the ends of the quasi-bound boundary problem.
fn quasi_bound_at(r: &Reduction, rec: &Recurrence, setup: Setup, opts: &SpectrumOptions, check: bool) -> Result<SolvedPoint> {
    let bp = super::boundary::try_problem(r, &opts.values, opts.freq, super::boundary::SpectrumKind::QuasiBound, None)?;
    let estimate = |n: u32| super::ends::hydrogenic_seed(&bp, n).map(|s| (s.omega, s.from));
    // The levels' spacing shrinks like (Mμ)²μ/n³ while they move with μ
    // itself: a neighbour's values are poorer seeds than each point's own
    // hydrogen-like estimates, which are used at every point.
    let own = SpectrumOptions { seeds: Vec::new(), guess: if opts.seeds.is_empty() { opts.guess } else { None }, ..opts.clone() };
    let levels = super::levels::quasi_bound_levels(rec, setup, &own, &estimate)?;
    Ok(levels
        .modes
        .into_iter()
        .zip(levels.check_offsets)
        .map(|(m, offset)| {
            let c = match (check, m.root.converged) {
                (true, true) => {
                    // Levels crowd below the continuum edge: the check starts nearer than the spacing.
                    let c = super::levels::check_level(m.root.omega, offset, &|w, spread| super::ends::find_root_near(&bp, w, spread, opts.tol));
                    c.converged.then_some(c.omega)
                }
                _ => None,
            };
            (m, c)
        })
        .collect::<PointModes>()
        .into())
}

/// The point solver of a survey of one equation (uncoupled): the
/// recurrence is derived once with the varied parameters (`varied`, field
/// indices) kept symbolic, and at each point only made numeric — the
/// exact substitution and derivation at every point were most of a
/// survey's time. A point where that derivation would not be the one of
/// the point itself (`Symbolic::at`: a singular point moves onto
/// another, a quadratic factor splits over Q, a numerator cancels a
/// pole, other exponent or horizon picks) is solved exactly as
/// `single_point` does, and so is every point when the symbolic
/// derivation fails.
///
/// With `quasi_bound` every point is a massive field's quasi-bound states
/// (the rate at infinity decaying), each level of a first point seeded by
/// its own hydrogen-like estimate, and the check runs between the ends of
/// the quasi-bound boundary problem.
///
/// After a change of variable the points are solved on the physical
/// equation, whose ends and roles decide the modes (`solve::physical`).
pub fn survey_solver<'a>(red: Reduction, varied: &[usize], quasi_bound: bool) -> PointSolver<'a> {
    let red = match super::physical::physical(&red) {
        Ok(Some((phys, _))) => phys,
        Ok(None) => red,
        // Every point says why (never solved with the ends of the written variable).
        Err(e) => return Box::new(move |_: &SpectrumOptions, _: bool| Err(e.clone())),
    };
    let sym = std::cell::OnceCell::new();
    let varied = varied.to_vec();
    Box::new(move |o: &SpectrumOptions, check: bool| {
        if !quasi_bound && series_end_point(&red, o) {
            let r = super::spectrum::substitute_for_series(&red, &o.values, &[o.freq])?;
            return series_point(&r, o, check, "the exact recurrence is not derived for a regular boundary at infinity");
        }
        let s: &Option<Symbolic> = sym.get_or_init(|| Symbolic::new(&red, o, &varied));
        match s.as_ref().and_then(|s| s.at(o)) {
            Some((rec, setup)) => modes_at(&red, None, rec, setup, o, check, quasi_bound),
            None => single_point(&red, o, check, quasi_bound),
        }
    })
}

/// A survey's equation with the fixed parameters substituted and the
/// varied ones symbolic, its analysis, and the recurrence derived from the
/// first point where the structure is generic.
struct Symbolic {
    red: Reduction,
    an: crate::analysis::Analysis,
    /// The varied parameters' field indices.
    varied: Vec<usize>,
    /// The denominator factors of p, q and Q (each in z and the varied parameters).
    factors: Vec<crate::algebra::Poly>,
    /// The numerators of p, q and Q.
    numerators: Vec<crate::algebra::Poly>,
    /// The recurrence and the choice it was derived from (`None` when the derivation failed).
    derived: std::cell::OnceCell<Option<(QnmChoice, Recurrence, Adjoined)>>,
}

impl Symbolic {
    fn new(red: &Reduction, o: &SpectrumOptions, varied: &[usize]) -> Option<Symbolic> {
        let mut keep = vec![o.freq];
        keep.extend_from_slice(varied);
        let sym = super::spectrum::substitute_for_series(red, &o.values, &keep).ok()?;
        let an = crate::analysis::analyse(&sym).ok()?;
        let mut factors: Vec<crate::algebra::Poly> = Vec::new();
        for r in [&sym.p, &sym.q, &sym.normal.q] {
            for (f, _) in r.den_factors() {
                if !factors.contains(f.poly()) {
                    factors.push(f.poly().clone());
                }
            }
        }
        // Factors that hold the frequency are not judged here: every point is solved exactly.
        if factors.iter().any(|f| f.uses_var(o.freq)) {
            return None;
        }
        let numerators = vec![sym.p.num().clone(), sym.q.num().clone(), sym.normal.q.num().clone()];
        Some(Symbolic { red: sym, an, varied: varied.to_vec(), factors, numerators, derived: std::cell::OnceCell::new() })
    }

    /// The recurrence and set-up at the options' values, when the symbolic
    /// derivation is the one of the point: every denominator factor keeps
    /// its degree in z and stays irreducible over Q (no quadratic with a
    /// rational square discriminant, none of higher degree), no two share
    /// a root, no numerator vanishes at one's roots for every frequency,
    /// and the numeric choices (exponent picks, horizon, series) are the
    /// same as where the recurrence was derived.
    fn at(&self, o: &SpectrumOptions) -> Option<(&Recurrence, Setup)> {
        let values = &o.values;
        let z = |p: &crate::algebra::Poly| -> Vec<GRat> { p.to_univariate(0).iter().map(|c| c.eval(values)).collect() };
        let mut evaluated = Vec::with_capacity(self.factors.len());
        for f in &self.factors {
            let u = trim(z(f));
            if u.len() != f.to_univariate(0).len() || u.len() > 3 || u.iter().any(|c| !c.im.is_zero()) {
                return None;
            }
            if u.len() == 3 {
                let disc = u[1].re.mul(&u[1].re).sub(&u[0].re.mul(&u[2].re).mul(&Rat::int(4.into())));
                if disc.is_zero() || (disc.numer().abs().sqrt_exact().is_some() && disc.denom().sqrt_exact().is_some()) {
                    return None;
                }
            }
            evaluated.push(u);
        }
        for (i, a) in evaluated.iter().enumerate() {
            if evaluated[..i].iter().any(|b| ugcd_degree(a, b) > 0) {
                return None;
            }
            for n in &self.numerators {
                // The numerator's coefficient of each power of ω, in z.
                let mut g = a.clone();
                for c in n.to_univariate(o.freq) {
                    g = ugcd(&g, &trim(z(&c)));
                    if g.len() <= 1 {
                        break;
                    }
                }
                if g.len() > 1 {
                    return None;
                }
            }
        }
        let choice = super::spectrum::qnm_choice(&self.red, &self.an, o).ok()?;
        let (first, rec, root) = self
            .derived
            .get_or_init(|| {
                let (rec, root) = super::spectrum::qnm_derive(&self.red, &self.an, &choice).ok()?;
                Some((choice.clone(), rec, root))
            })
            .as_ref()?;
        if !first.same_derivation(&choice) || rec.coeffs.len() < 3 || self.varied.is_empty() {
            return None;
        }
        Some((rec, super::spectrum::qnm_setup(rec, root.clone(), self.an.clone(), choice)))
    }
}

/// A univariate polynomial (coefficients from the constant up) without
/// its zero leading coefficients.
fn trim(mut u: Vec<GRat>) -> Vec<GRat> {
    while u.last().is_some_and(GRat::is_zero) {
        u.pop();
    }
    u
}

/// The gcd of two univariate polynomials over Q(i) (coefficients from the
/// constant up; empty for zero), up to a constant, by Euclid's algorithm.
fn ugcd(a: &[GRat], b: &[GRat]) -> Vec<GRat> {
    let (mut a, mut b) = (trim(a.to_vec()), trim(b.to_vec()));
    while !b.is_empty() {
        // a mod b
        let lead = b.last().expect("nonzero").clone();
        while a.len() >= b.len() {
            let Some(f) = a.last().expect("nonzero").div(&lead) else { return vec![GRat::one()] };
            let shift = a.len() - b.len();
            for (k, c) in b.iter().enumerate() {
                a[shift + k] = a[shift + k].sub(&f.mul(c));
            }
            a.pop();
            a = trim(a);
        }
        std::mem::swap(&mut a, &mut b);
    }
    a
}

/// The degree of the gcd of two univariate polynomials over Q(i).
fn ugcd_degree(a: &[GRat], b: &[GRat]) -> usize {
    ugcd(a, b).len().saturating_sub(1)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::cf::{CfRoot, StopReason};

    fn mode(w: Complex64) -> (Mode, Option<Complex64>) {
        let root = CfRoot::at(w);
        (Mode { n: 0, root, seed: (w, "test".into()), method: crate::solve::spectrum::ModeMethod::ContinuedFraction }, None)
    }

    #[test]
    fn a_chunk_that_starts_on_another_mode_is_solved_again_from_its_neighbour() {
        // A solver with two branches: seeded by a neighbour it follows the
        // mode ω = 0.4 + 0.1v − 0.1i; without a seed, past v = 0.5, it lands
        // on another mode (as a root finder from a far guess can).
        let make = || -> Result<PointSolver<'static>> {
            Ok(Box::new(|o: &SpectrumOptions, _| {
                let v = o.values[1].to_f64().0;
                let right = Complex64::new(0.4 + 0.1 * v, -0.1);
                Ok(vec![mode(if o.seeds.is_empty() && v > 0.5 { Complex64::new(0.3, -0.5) } else { right })].into())
            }))
        };
        let base = SpectrumOptions::new(2, vec![GRat::zero(); 3], (0, 0), 1e-10, None);
        let g = grid(&Rat::zero(), &Rat::one(), &Rat::new(1.into(), 10.into()).unwrap()).unwrap();
        let pool = rayon::ThreadPoolBuilder::new().num_threads(2).build().unwrap();
        let pts = pool.install(|| scan(&make, &base, 1, &g, 0..g.len(), false, &|| {}));
        assert_eq!(pts.len(), 11);
        for p in &pts {
            let w = p.modes[0].0.root.omega;
            assert!((w - Complex64::new(0.4 + 0.1 * p.value, -0.1)).norm() < 1e-12, "at {}: {w}", p.value);
        }
    }

    #[test]
    fn the_digits_do_not_depend_on_the_number_of_threads() {
        // A solver whose answer depends on its seed in the last digits (as
        // a root finder's does): the scan must give the same values with
        // one, two and three threads.
        let make = || -> Result<PointSolver<'static>> {
            Ok(Box::new(|o: &SpectrumOptions, _| {
                let v = o.values[1].to_f64().0;
                let seed = o.seeds.first().copied().unwrap_or(Complex64::new(0.0, 0.0));
                Ok(vec![mode(Complex64::new(0.4 + 0.1 * v + 1e-13 * seed.re, -0.1))].into())
            }))
        };
        let base = SpectrumOptions::new(2, vec![GRat::zero(); 3], (0, 0), 1e-10, None);
        let g = grid(&Rat::zero(), &Rat::int(4.into()), &Rat::new(1.into(), 10.into()).unwrap()).unwrap();
        let run = |threads: usize| -> Vec<Complex64> {
            let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
            pool.install(|| scan(&make, &base, 1, &g, 0..g.len(), false, &|| {})).iter().map(|p| p.modes[0].0.root.omega).collect()
        };
        let one = run(1);
        assert_eq!(one, run(2));
        assert_eq!(one, run(3));
    }

    #[test]
    fn the_snake_walk_steps_one_neighbour_at_a_time() {
        // Every point of a 3 × 4 × 5 grid once, consecutive points one step
        // of one axis apart.
        let sizes = [3, 4, 5];
        let idx: Vec<Vec<usize>> = (0..60).map(|s| snake(&sizes, s)).collect();
        let mut seen = std::collections::HashSet::new();
        for w in &idx {
            assert!(w.iter().zip(&sizes).all(|(i, n)| i < n) && seen.insert(w.clone()));
        }
        for p in idx.windows(2) {
            let d: usize = p[0].iter().zip(&p[1]).map(|(a, b)| a.abs_diff(*b)).sum();
            assert_eq!(d, 1, "{:?} → {:?}", p[0], p[1]);
        }
        assert_eq!(&idx[..7], &[vec![0, 0, 0], vec![0, 0, 1], vec![0, 0, 2], vec![0, 0, 3], vec![0, 0, 4], vec![0, 1, 4], vec![0, 1, 3]]);
        let axes: Vec<(usize, Vec<Rat>)> =
            sizes.iter().enumerate().map(|(k, &n)| (k + 1, (0..n).map(|i| Rat::int((i as i64).into())).collect())).collect();
        let w = Walk::tensor(&axes, 100).unwrap();
        assert_eq!((w.len(), w.pass), (60, 5));
        assert!(Walk::tensor(&axes, 59).is_none());
    }

    /// A solver whose last digits depend on its seeds (as a root finder's
    /// do), over parameters 1 and 2.
    fn seed_sensitive() -> Result<PointSolver<'static>> {
        Ok(Box::new(|o: &SpectrumOptions, _| {
            let (x, y) = (o.values[1].to_f64().0, o.values[2].to_f64().0);
            let seed = o.seeds.first().copied().unwrap_or(Complex64::new(0.0, 0.0));
            if x > 0.35 && x < 0.45 && y == 1.0 {
                // An unconverged point in the middle of a pass.
                let mut m = mode(Complex64::new(0.0, 0.0));
                m.0.root.converged = false;
                return Ok(vec![m].into());
            }
            Ok(vec![mode(Complex64::new(0.4 + 0.1 * x + y + 1e-13 * seed.re, -0.1 + 1e-13 * seed.im))].into())
        }))
    }

    #[test]
    fn a_survey_resumed_at_any_point_gives_the_uninterrupted_digits() {
        let base = SpectrumOptions::new(3, vec![GRat::zero(); 4], (0, 0), 1e-10, None);
        let tenth = Rat::new(1.into(), 10.into()).unwrap();
        let xs = grid(&Rat::zero(), &Rat::int(3.into()), &tenth).unwrap();
        let ys = vec![Rat::zero(), Rat::one()];
        let walk = Walk::tensor(&[(2, ys), (1, xs)], 1000).unwrap();
        let n = walk.len();
        let run = |range: std::ops::Range<usize>, done: &[Trail], stop: Option<usize>| -> (Vec<ScanPoint>, SurveyEnd) {
            let mut out = Vec::new();
            let end = survey(&seed_sensitive, &base, &walk, range, false, done, &mut |p| {
                out.push(p);
                if stop.is_some_and(|k| out.len() >= k) {
                    Flow::Stop
                } else {
                    Flow::Go
                }
            });
            (out, end)
        };
        let omegas = |v: &[ScanPoint]| -> Vec<Option<Complex64>> {
            v.iter().map(|p| p.modes[0].0.root.converged.then_some(p.modes[0].0.root.omega)).collect()
        };
        let (whole, end) = run(0..n, &[], None);
        assert_eq!(end, SurveyEnd::Finished);
        assert_eq!(whole.iter().map(|p| p.index).collect::<Vec<_>>(), (0..n).collect::<Vec<_>>());
        for cut in [1, 7, 8, 9, 30, 31, 36, 47, 60] {
            let (first, end) = run(0..n, &[], Some(cut));
            assert_eq!(end, SurveyEnd::Stopped { next: cut });
            let done: Vec<Trail> = first.iter().map(converged).collect();
            let (rest, _) = run(0..n, &done, None);
            assert_eq!(rest.first().map(|p| p.index), Some(cut));
            let joined: Vec<ScanPoint> = first.into_iter().chain(rest).collect();
            assert_eq!(omegas(&joined), omegas(&whole), "cut at {cut}");
        }
        // A shard resumed the same way.
        let (first, _) = run(20..50, &[], Some(13));
        let done: Vec<Trail> = first.iter().map(converged).collect();
        let (rest, _) = run(20..50, &done, None);
        let (shard, _) = run(20..50, &[], None);
        assert_eq!(omegas(&first.into_iter().chain(rest).collect::<Vec<_>>()), omegas(&shard));
    }

    #[test]
    fn joins_are_judged_along_a_straight_side() {
        let t = |re: f64| -> Trail { Some(vec![Complex64::new(re, -0.1)]) };
        let (b, a, c, d) = (t(0.50), t(0.51), t(0.52), t(0.53));
        let (vb, va, vc, vd) = ([0.0, 1.0], [0.0, 2.0], [0.0, 3.0], [0.0, 4.0]);
        assert_eq!(join(Some((&vb, &b)), (&va, &a), (&vc, &c), Some((&vd, &d))), Join::Continues);
        let jumped = t(0.9);
        assert_eq!(join(Some((&vb, &b)), (&va, &a), (&vc, &jumped), Some((&vd, &d))), Join::Jumps);
        // A turn on the left: judged from the right (where the whole shard
        // followed the other mode).
        let vb2 = [1.0, 2.0];
        let (jumped_next, smooth_next) = (t(0.91), t(0.53));
        assert_eq!(join(Some((&vb2, &b)), (&va, &a), (&vc, &jumped), Some((&vd, &jumped_next))), Join::Jumps);
        assert_eq!(join(Some((&vb2, &b)), (&va, &a), (&vc, &c), Some((&vd, &smooth_next))), Join::Continues);
        // Turns on both sides, or an unconverged side: not judged.
        let vd2 = [1.0, 3.0];
        assert_eq!(join(Some((&vb2, &b)), (&va, &a), (&vc, &jumped), Some((&vd2, &d))), Join::Unjudged);
        assert_eq!(join(Some((&vb, &b)), (&va, &None), (&vc, &c), Some((&vd, &d))), Join::Unjudged);
    }

    #[test]
    fn collisions_and_disappearances_are_reported_not_printed_as_values() {
        let w = Complex64::new(0.5, -0.1);
        let mut two = vec![mode(w), mode(w)];
        two[1].0.n = 1;
        two[1].1 = Some(w);
        mark_events(&mut two, Some(&[w, w]));
        assert!(two[0].0.root.converged);
        assert!(!two[1].0.root.converged && two[1].1.is_none());
        assert_eq!(two[1].0.root.stop, StopReason::Collided(0));
        assert!(two[1].0.root.stop.text().starts_with("collided with overtone 0"));
        // A root finder that failed where the mode was followed from a neighbour.
        let mut lost = vec![mode(w)];
        lost[0].0.root.converged = false;
        lost[0].0.root.stop = StopReason::RootIterations;
        let mut first = lost.clone();
        mark_events(&mut lost, Some(&[w]));
        assert!(matches!(&lost[0].0.root.stop, StopReason::Disappeared(b) if **b == StopReason::RootIterations));
        assert!(lost[0].0.root.stop.text().starts_with("disappeared along the scan"));
        // With no neighbour it stays the root finder's own failure.
        mark_events(&mut first, None);
        assert_eq!(first[0].0.root.stop, StopReason::RootIterations);
    }

    #[test]
    fn continuation_test_accepts_smooth_steps_and_rejects_jumps() {
        let c = |re: f64, im: f64| vec![Complex64::new(re, im)];
        assert!(continues(&c(0.5, -0.1), Some(&c(0.49, -0.1)), Some(&c(0.511, -0.1))));
        assert!(!continues(&c(0.5, -0.1), Some(&c(0.49, -0.1)), Some(&c(0.3, -0.5))));
        assert!(!continues(&c(0.5, -0.1), None, None));
    }
}
