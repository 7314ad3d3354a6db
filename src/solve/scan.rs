//! Parameter scans of quasinormal modes: every grid point is solved with the
//! parameters substituted exactly, in parallel (rayon) over contiguous
//! chunks of the grid, each mode followed from its neighbour within a chunk
//! (continuation: the previous point's mode seeds the next). A grid can be
//! split into shards for separate processes or cluster jobs.

use super::spectrum::{integration_check, qnm_modes_from, qnm_recurrence, substitute, Mode, SpectrumOptions};
use crate::algebra::{GRat, Rat};
use crate::error::Result;
use crate::ode::Reduction;
use num_complex::Complex64;
use rayon::prelude::*;

/// The result at one grid point.
#[derive(Clone, Debug)]
pub struct ScanPoint {
    /// Position in the full grid.
    pub index: usize,
    /// The varied parameter's value.
    pub value: f64,
    /// The modes (empty when the point failed), each with its integration check.
    pub modes: Vec<(Mode, Option<Complex64>)>,
    /// Why the point failed, when it did.
    pub error: Option<String>,
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
pub type PointSolver<'a> = Box<dyn Fn(&SpectrumOptions, bool) -> Result<PointModes> + 'a>;

/// Solves every point of `grid[range]` for parameter `vary` (field index).
/// `make` builds a solver once per worker (exact fields are not shared
/// between threads); `progress` is called once per finished point.
pub fn scan<'a>(
    make: &(dyn Fn() -> Result<PointSolver<'a>> + Sync),
    base: &SpectrumOptions,
    vary: usize,
    grid: &[Rat],
    range: std::ops::Range<usize>,
    check: bool,
    progress: &(dyn Fn() + Sync),
) -> Vec<ScanPoint> {
    let idx: Vec<usize> = range.collect();
    // The chunks depend on the grid alone, never on the number of threads,
    // so that every point is continued from the same neighbour (and gives
    // the same digits) however the work is spread.
    let chunks: Vec<&[usize]> = idx.chunks(chunk_len(grid.len())).collect();
    let run_chunk = |c: &[usize], start: Option<Vec<Complex64>>, tick: bool| -> Vec<ScanPoint> {
        let solver = match make() {
            Ok(r) => r,
            Err(e) => {
                return c
                    .iter()
                    .map(|&i| ScanPoint { index: i, value: grid[i].to_f64(), modes: Vec::new(), error: Some(e.message.clone()) })
                    .collect();
            }
        };
        let mut prev = start;
        let mut res = Vec::new();
        for &i in c.iter() {
            let mut opts = base.clone();
            opts.values[vary] = GRat::real(grid[i].clone());
            if let Some(s) = &prev {
                opts.seeds = s.clone();
                opts.guess = None;
            }
            let p = match solver(&opts, check) {
                Ok(modes) => ScanPoint { index: i, value: grid[i].to_f64(), modes, error: None },
                Err(e) => ScanPoint { index: i, value: grid[i].to_f64(), modes: Vec::new(), error: Some(e.message) },
            };
            if let Some(w) = converged(&p) {
                prev = Some(w);
            }
            if tick {
                progress();
            }
            res.push(p);
        }
        res
    };
    let mut parts: Vec<Vec<ScanPoint>> = chunks.par_iter().map(|c| run_chunk(c, None, true)).collect();
    // Every chunk but the first started without a neighbour. Where its first
    // point does not continue the previous chunk (not converged, or far from
    // the extrapolation of the previous chunk's last two points), the chunk
    // is solved again, point by point, from the previous chunk's end, so that
    // a scan never silently jumps to another mode at a chunk boundary.
    for k in 1..parts.len() {
        let (before, after) = parts.split_at_mut(k);
        let prev_chunk = &before[k - 1];
        let Some(last) = prev_chunk.last().and_then(converged) else { continue };
        let second = prev_chunk.len().checked_sub(2).and_then(|i| converged(&prev_chunk[i]));
        if !continues(&last, second.as_deref(), after[0].first().and_then(converged).as_deref()) {
            after[0] = run_chunk(chunks[k], Some(last), false);
        }
    }
    let mut out: Vec<ScanPoint> = parts.into_iter().flatten().collect();
    out.sort_by_key(|p| p.index);
    out
}

/// The length of the chunks a grid of `len` points is split into: at most
/// 16 chunks (enough for the cores of a workstation), at least 8 points
/// each, so that most points continue a neighbour.
fn chunk_len(len: usize) -> usize {
    len.div_ceil(16).max(8)
}

/// The modes of a point when every one converged.
fn converged(p: &ScanPoint) -> Option<Vec<Complex64>> {
    (p.error.is_none() && !p.modes.is_empty() && p.modes.iter().all(|(m, _)| m.root.converged))
        .then(|| p.modes.iter().map(|(m, _)| m.root.omega).collect())
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
pub fn single_point(red: &Reduction, opts: &SpectrumOptions, check: bool) -> Result<PointModes> {
    let r = substitute(red, &opts.values, opts.freq)?;
    let (rec, setup) = qnm_recurrence(&r, opts)?;
    let est = super::spectrum::barrier_estimates(&r, opts, setup.horizon_value, super::wkb::SEED_ORDER).ok();
    let first = |n: u32| est.as_ref().and_then(|e| e(n)).and_then(|b| b.series.seed());
    let (modes, setup) = qnm_modes_from(&rec, setup, opts, &first)?;
    let integ = if check { integration_check(&r, opts, &setup).ok() } else { None };
    Ok(modes
        .into_iter()
        .map(|m| {
            let c = match (&integ, m.root.converged) {
                (Some(f), true) => {
                    let c = f(m.root.omega * Complex64::new(1.0 + 1e-4, 1e-4));
                    c.converged.then_some(c.omega)
                }
                _ => None,
            };
            (m, c)
        })
        .collect())
}

/// The font of the plots' text, compiled in so that a plot looks the same
/// on every machine (DejaVu Sans; its licence is in `src/solve/font/`).
static FONT: &[u8] = include_bytes!("font/DejaVuSans.ttf");

/// Registers the built-in font as "sans-serif" for plotters (once per process).
pub(crate) fn register_font() {
    static REGISTER: std::sync::Once = std::sync::Once::new();
    REGISTER.call_once(|| {
        // The font is a constant of the build: failure here is a packaging bug.
        plotters::style::register_font("sans-serif", plotters::style::FontStyle::Normal, FONT).map_err(|_| ()).expect("the built-in font is valid");
    });
}

/// Writes a plot, SVG or PNG by the file's extension: the modes in the
/// complex plane, and Re ω and Im ω against the varied parameter, one series
/// per method (continued fraction, direct integration).
pub fn plot(path: &std::path::Path, points: &[ScanPoint], param: &str, freq: &str) -> std::result::Result<(), String> {
    use plotters::prelude::*;
    register_font();
    let ext = path.extension().and_then(|e| e.to_str()).map(|e| e.to_ascii_lowercase());
    match ext.as_deref() {
        Some("svg") => draw(SVGBackend::new(path, (1200, 500)).into_drawing_area(), points, param, freq),
        Some("png") => draw(BitMapBackend::new(path, (1200, 500)).into_drawing_area(), points, param, freq),
        _ => Err("the plot is written as SVG or PNG: give FILE.svg or FILE.png".into()),
    }
}

fn draw<DB: plotters::prelude::DrawingBackend>(
    root: plotters::drawing::DrawingArea<DB, plotters::coord::Shift>,
    points: &[ScanPoint],
    param: &str,
    freq: &str,
) -> std::result::Result<(), String> {
    use plotters::prelude::*;
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    let areas = root.split_evenly((1, 3));
    let series = |f: &dyn Fn(&ScanPoint, &(Mode, Option<Complex64>)) -> Option<(f64, f64)>| -> Vec<(f64, f64)> {
        points.iter().flat_map(|p| p.modes.iter().filter_map(move |m| f(p, m))).collect()
    };
    let cf_plane = series(&|_, (m, _)| m.root.converged.then_some((m.root.omega.re, m.root.omega.im)));
    let int_plane = series(&|_, (_, c)| c.map(|c| (c.re, c.im)));
    let cf_re = series(&|p, (m, _)| m.root.converged.then_some((p.value, m.root.omega.re)));
    let int_re = series(&|p, (_, c)| c.map(|c| (p.value, c.re)));
    let cf_im = series(&|p, (m, _)| m.root.converged.then_some((p.value, m.root.omega.im)));
    let int_im = series(&|p, (_, c)| c.map(|c| (p.value, c.im)));
    let range = |v: &[(f64, f64)], axis: usize| -> (f64, f64) {
        let it = v.iter().map(|p| if axis == 0 { p.0 } else { p.1 });
        let (lo, hi) = it.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| (a.min(x), b.max(x)));
        if !lo.is_finite() {
            return (0.0, 1.0);
        }
        let pad = ((hi - lo) * 0.08).max(1e-6);
        // Room at the top for the legend (upper right), so it hides no point.
        if axis == 1 {
            (lo - pad, hi + 4.0 * pad)
        } else {
            (lo - pad, hi + pad)
        }
    };
    let panels: [(&str, &str, &str, &Vec<(f64, f64)>, &Vec<(f64, f64)>); 3] = [
        ("modes in the complex plane", "Re ω", "Im ω", &cf_plane, &int_plane),
        ("Re ω", param, "Re ω", &cf_re, &int_re),
        ("Im ω", param, "Im ω", &cf_im, &int_im),
    ];
    for (area, (title, xl, yl, cf, int)) in areas.iter().zip(panels) {
        let (x0, x1) = range(cf, 0);
        let (y0, y1) = range(cf, 1);
        let mut chart = ChartBuilder::on(area)
            .caption(format!("{title} ({freq})"), ("sans-serif", 18))
            .margin(12)
            .x_label_area_size(36)
            .y_label_area_size(56)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(|e| e.to_string())?;
        chart.configure_mesh().x_desc(xl).y_desc(yl).draw().map_err(|e| e.to_string())?;
        chart
            .draw_series(cf.iter().map(|p| Circle::new(*p, 4, BLUE.filled())))
            .map_err(|e| e.to_string())?
            .label("continued fraction")
            .legend(|(x, y)| Circle::new((x, y), 4, BLUE.filled()));
        chart
            .draw_series(int.iter().map(|p| Cross::new(*p, 5, RED.stroke_width(1))))
            .map_err(|e| e.to_string())?
            .label("direct integration")
            .legend(|(x, y)| Cross::new((x, y), 5, RED.stroke_width(1)));
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.8))
            .border_style(BLACK)
            .draw()
            .map_err(|e| e.to_string())?;
    }
    root.present().map_err(|e| e.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::cf::{CfRoot, StopReason};

    fn mode(w: Complex64) -> (Mode, Option<Complex64>) {
        let root = CfRoot {
            omega: w,
            converged: true,
            depth: 64,
            depth_change: 0.0,
            residual: 0.0,
            iterations: 1,
            stop: StopReason::Converged,
            inversion: 0,
        };
        (Mode { n: 0, root, seed: (w, "test".into()), method: "cf" }, None)
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
                Ok(vec![mode(if o.seeds.is_empty() && v > 0.5 { Complex64::new(0.3, -0.5) } else { right })])
            }))
        };
        let base = SpectrumOptions { freq: 2, values: vec![GRat::zero(); 3], overtones: (0, 0), tol: 1e-10, guess: None, seeds: Vec::new() };
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
                Ok(vec![mode(Complex64::new(0.4 + 0.1 * v + 1e-13 * seed.re, -0.1))])
            }))
        };
        let base = SpectrumOptions { freq: 2, values: vec![GRat::zero(); 3], overtones: (0, 0), tol: 1e-10, guess: None, seeds: Vec::new() };
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
    fn continuation_test_accepts_smooth_steps_and_rejects_jumps() {
        let c = |re: f64, im: f64| vec![Complex64::new(re, im)];
        assert!(continues(&c(0.5, -0.1), Some(&c(0.49, -0.1)), Some(&c(0.511, -0.1))));
        assert!(!continues(&c(0.5, -0.1), Some(&c(0.49, -0.1)), Some(&c(0.3, -0.5))));
        assert!(!continues(&c(0.5, -0.1), None, None));
    }
}
