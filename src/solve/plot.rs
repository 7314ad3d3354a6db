//! Pictures of results, SVG or PNG by the file's extension, drawn with
//! plotters and a built-in font so that they look the same on every
//! machine: a survey's modes as curves (the complex plane, Re ω and Im ω
//! against the last varied parameter) or, for a two-parameter grid, as
//! colour maps of Re ω and Im ω; a spectrum's modes in the complex plane;
//! the curves of a scattering run. Every legend is drawn in a strip below
//! the charts (`with_legend`), never over the data.

use super::scan::ScanPoint;
use super::spectrum::Mode;
use num_complex::Complex64;
use plotters::prelude::*;

/// The font of the plots' text, compiled in so that a plot looks the same
/// on every machine (DejaVu Sans; its licence is in `src/solve/font/`).
static FONT: &[u8] = include_bytes!("font/DejaVuSans.ttf");

/// Registers the built-in font as "sans-serif" for plotters (once per process).
fn register_font() {
    static REGISTER: std::sync::Once = std::sync::Once::new();
    REGISTER.call_once(|| {
        // The font is a constant of the build: failure here is a packaging bug.
        plotters::style::register_font("sans-serif", plotters::style::FontStyle::Normal, FONT).map_err(|_| ()).expect("the built-in font is valid");
    });
}

/// A drawing area of plotters.
pub(crate) type Area<DB> = plotters::drawing::DrawingArea<DB, plotters::coord::Shift>;

/// A picture that can be drawn on any plotters backend.
pub(crate) trait Figure {
    /// Draws the picture on `root` (the whole canvas).
    fn draw<DB: DrawingBackend>(&self, root: Area<DB>) -> Result<(), String>;
}

/// Writes a figure as SVG or PNG by the file's extension, `size` pixels,
/// with the built-in font.
pub(crate) fn write_figure<F: Figure>(path: &std::path::Path, size: (u32, u32), fig: &F) -> Result<(), String> {
    register_font();
    let ext = path.extension().and_then(|e| e.to_str()).map(|e| e.to_ascii_lowercase());
    match ext.as_deref() {
        Some("svg") => fig.draw(SVGBackend::new(path, size).into_drawing_area()),
        Some("png") => fig.draw(BitMapBackend::new(path, size).into_drawing_area()),
        _ => Err("the plot is written as SVG or PNG: give FILE.svg or FILE.png".into()),
    }
}

/// The mark of a legend entry, drawn as the data are.
#[derive(Clone, Copy, Debug)]
pub(crate) enum Mark {
    /// A filled circle.
    Dot(RGBAColor),
    /// A cross (the check drawn over a result).
    Cross(RGBAColor),
    /// An open square.
    Square(RGBAColor),
    /// An open circle (a second method's samples over a curve).
    Ring(RGBAColor),
    /// A line segment (a curve).
    Line(RGBAColor),
    /// A filled square (a colour of a colour map).
    Swatch(RGBAColor),
}

/// The height of one row of a legend strip, in pixels.
const LEGEND_ROW: u32 = 24;
/// The width of an entry's mark and the gap after its text, in pixels.
const LEGEND_MARK: i32 = 30;
const LEGEND_GAP: i32 = 24;

fn legend_font() -> TextStyle<'static> {
    TextStyle::from(("sans-serif", 14).into_font())
        .pos(plotters::style::text_anchor::Pos::new(plotters::style::text_anchor::HPos::Left, plotters::style::text_anchor::VPos::Center))
}

/// Splits off a strip at the bottom of `root` and draws the legend
/// `entries` there, in rows as wide as the canvas (an entry never broken),
/// each row centred; returns the area above it for the charts, so that no
/// entry can cover data. With no entries the whole area is returned.
pub(crate) fn with_legend<DB: DrawingBackend>(root: &Area<DB>, entries: &[(Mark, String)]) -> Result<Area<DB>, String> {
    if entries.is_empty() {
        return Ok(root.clone());
    }
    let style = legend_font();
    let (width, height) = root.dim_in_pixel();
    let room = width as i32 - 40;
    // Rows of (entry, its width), filled greedily in order.
    let mut rows: Vec<Vec<(usize, i32)>> = vec![Vec::new()];
    let mut used = 0;
    for (i, (_, text)) in entries.iter().enumerate() {
        let (tw, _) = root.estimate_text_size(text, &style).map_err(|e| e.to_string())?;
        let w = LEGEND_MARK + tw as i32 + LEGEND_GAP;
        let last = rows.last_mut().expect("one row at least");
        if !last.is_empty() && used + w > room {
            rows.push(Vec::new());
            used = 0;
        }
        rows.last_mut().expect("one row at least").push((i, w));
        used += w;
    }
    let strip_h = (rows.len() as u32 * LEGEND_ROW + 12).min(height / 2);
    let (charts, strip) = root.split_vertically(height - strip_h);
    for (r, row) in rows.iter().enumerate() {
        let total: i32 = row.iter().map(|(_, w)| w).sum::<i32>() - LEGEND_GAP;
        let mut x = (width as i32 - total).max(0) / 2;
        let y = 6 + r as i32 * LEGEND_ROW as i32 + LEGEND_ROW as i32 / 2;
        for &(i, w) in row {
            let (mark, text) = &entries[i];
            let c = (x + 10, y);
            match *mark {
                Mark::Dot(col) => strip.draw(&Circle::new(c, 6, col.filled())),
                Mark::Cross(col) => strip.draw(&Cross::new(c, 4, col.stroke_width(2))),
                Mark::Square(col) => strip.draw(&Rectangle::new([(c.0 - 6, c.1 - 6), (c.0 + 6, c.1 + 6)], col.stroke_width(2))),
                Mark::Ring(col) => strip.draw(&Circle::new(c, 4, col.stroke_width(1))),
                Mark::Line(col) => strip.draw(&PathElement::new(vec![(c.0 - 10, c.1), (c.0 + 12, c.1)], col.stroke_width(2))),
                Mark::Swatch(col) => strip.draw(&Rectangle::new([(c.0 - 8, c.1 - 7), (c.0 + 8, c.1 + 7)], col.filled())),
            }
            .map_err(|e| e.to_string())?;
            if let Mark::Swatch(_) = mark {
                strip.draw(&Rectangle::new([(c.0 - 8, c.1 - 7), (c.0 + 8, c.1 + 7)], BLACK.stroke_width(1))).map_err(|e| e.to_string())?;
            }
            strip.draw(&Text::new(text.clone(), (x + LEGEND_MARK, y), style.clone())).map_err(|e| e.to_string())?;
            x += w;
        }
    }
    Ok(charts)
}

/// The range of an axis over `values`, padded by 8 % (at least 1e-6), with
/// `top` times the padding again above (room for labels over the points).
pub(crate) fn axis_range(values: impl Iterator<Item = f64>, top: f64) -> (f64, f64) {
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| (a.min(x), b.max(x)));
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.08).max(1e-6);
    (lo - pad, hi + (1.0 + top) * pad)
}

/// One mode of a spectrum in the complex plane.
#[derive(Clone, Debug)]
pub struct PlaneMode {
    /// Its label (the overtone, e.g. "n=0").
    pub label: String,
    /// The value.
    pub omega: Complex64,
    /// Whether a second method confirmed it.
    pub confirmed: bool,
}

/// Writes the modes of a spectrum in the complex plane (Re ω across, Im ω
/// up), SVG or PNG by the extension: filled circles for the modes a second
/// method confirmed, open squares for the others, each labelled; `fixed`
/// (the fixed parameters as text) goes in the title.
pub fn plot_plane(path: &std::path::Path, modes: &[PlaneMode], freq: &str, fixed: &str) -> Result<(), String> {
    struct Plane<'a>(&'a [PlaneMode], &'a str, &'a str);
    impl Figure for Plane<'_> {
        fn draw<DB: DrawingBackend>(&self, root: Area<DB>) -> Result<(), String> {
            let (modes, freq, fixed) = (self.0, self.1, self.2);
            root.fill(&WHITE).map_err(|e| e.to_string())?;
            let mut entries = Vec::new();
            if modes.iter().any(|m| m.confirmed) {
                entries.push((Mark::Dot(BLUE.to_rgba()), "confirmed by a second method".to_string()));
            }
            if modes.iter().any(|m| !m.confirmed) {
                entries.push((Mark::Square(RED.to_rgba()), "one method only".to_string()));
            }
            let area = with_legend(&root, &entries)?;
            let (x0, x1) = axis_range(modes.iter().map(|m| m.omega.re), 0.0);
            let (y0, y1) = axis_range(modes.iter().map(|m| m.omega.im), 1.0);
            let context = if fixed.is_empty() { freq.to_string() } else { format!("{freq}; {fixed}") };
            let mut chart = ChartBuilder::on(&area)
                .caption(format!("modes in the complex plane ({context})"), ("sans-serif", 18))
                .margin(12)
                .x_label_area_size(36)
                .y_label_area_size(64)
                .build_cartesian_2d(x0..x1, y0..y1)
                .map_err(|e| e.to_string())?;
            chart.configure_mesh().x_desc(format!("Re {freq}")).y_desc(format!("Im {freq}")).draw().map_err(|e| e.to_string())?;
            let at = |m: &PlaneMode| (m.omega.re, m.omega.im);
            let sure: Vec<(f64, f64)> = modes.iter().filter(|m| m.confirmed).map(at).collect();
            let single: Vec<(f64, f64)> = modes.iter().filter(|m| !m.confirmed).map(at).collect();
            chart.draw_series(sure.into_iter().map(|p| Circle::new(p, 6, BLUE.filled()))).map_err(|e| e.to_string())?;
            chart
                .draw_series(single.into_iter().map(|p| EmptyElement::at(p) + Rectangle::new([(-6, -6), (6, 6)], RED.stroke_width(2))))
                .map_err(|e| e.to_string())?;
            chart
                .draw_series(modes.iter().map(|m| EmptyElement::at(at(m)) + Text::new(m.label.clone(), (8, -18), ("sans-serif", 13).into_font())))
                .map_err(|e| e.to_string())?;
            root.present().map_err(|e| e.to_string())
        }
    }
    write_figure(path, (800, 600), &Plane(modes, freq, fixed))
}

/// Writes curves (name, points (x, y)) against x, SVG or PNG by the
/// extension, one colour each, named in the legend below the chart.
pub fn plot_curves(path: &std::path::Path, title: &str, xlabel: &str, ylabel: &str, curves: &[(String, Vec<(f64, f64)>)]) -> Result<(), String> {
    struct Curves<'a>(&'a str, &'a str, &'a str, &'a [(String, Vec<(f64, f64)>)]);
    impl Figure for Curves<'_> {
        fn draw<DB: DrawingBackend>(&self, root: Area<DB>) -> Result<(), String> {
            let (title, xlabel, ylabel, curves) = (self.0, self.1, self.2, self.3);
            root.fill(&WHITE).map_err(|e| e.to_string())?;
            let colours = [BLUE, RED, GREEN, MAGENTA, CYAN, BLACK];
            let colour = |i: usize| colours[i % colours.len()];
            let entries: Vec<(Mark, String)> =
                curves.iter().enumerate().map(|(i, (name, _))| (Mark::Line(colour(i).to_rgba()), name.clone())).collect();
            let area = with_legend(&root, &entries)?;
            // The abscissa exactly as asked (the ends of a frequency grid).
            let (x0, x1) =
                curves.iter().flat_map(|c| c.1.iter().map(|p| p.0)).fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| (a.min(x), b.max(x)));
            let (x0, x1) = if x0.is_finite() { (x0, x1.max(x0 + 1e-9)) } else { (0.0, 1.0) };
            let (y0, y1) = axis_range(curves.iter().flat_map(|c| c.1.iter().map(|p| p.1)), 0.0);
            let mut chart = ChartBuilder::on(&area)
                .caption(title, ("sans-serif", 18))
                .margin(14)
                .x_label_area_size(40)
                .y_label_area_size(64)
                .build_cartesian_2d(x0..x1, y0..y1)
                .map_err(|e| e.to_string())?;
            chart.configure_mesh().x_desc(xlabel).y_desc(ylabel).draw().map_err(|e| e.to_string())?;
            for (i, (_, pts)) in curves.iter().enumerate() {
                chart.draw_series(LineSeries::new(pts.iter().copied(), colour(i).stroke_width(2))).map_err(|e| e.to_string())?;
            }
            root.present().map_err(|e| e.to_string())
        }
    }
    write_figure(path, (900, 560), &Curves(title, xlabel, ylabel, curves))
}

/// One sampled function of a mode-function picture.
#[derive(Clone, Debug)]
pub struct Curve {
    /// The legend's text.
    pub label: String,
    /// The colour's number (one per overtone).
    pub colour: usize,
    /// Draw as points (the second method) rather than a line.
    pub marks: bool,
    /// (z, Re ψ, Im ψ).
    pub points: Vec<(f64, f64, f64)>,
}

/// Writes a picture of mode functions, SVG or PNG by the extension: Re ψ
/// against the variable `var`, and Im ψ in a second panel when it is not
/// negligible (above 1e-12 of the largest |Re ψ|); the legend below the charts.
pub fn plot_functions(path: &std::path::Path, var: &str, title: &str, curves: &[Curve]) -> Result<(), String> {
    struct Functions<'a>(&'a [Curve], &'a str, &'a str);
    impl Figure for Functions<'_> {
        fn draw<DB: DrawingBackend>(&self, root: Area<DB>) -> Result<(), String> {
            let (curves, var, title) = (self.0, self.1, self.2);
            root.fill(&WHITE).map_err(|e| e.to_string())?;
            let colours = [BLUE, RED, GREEN, MAGENTA, CYAN, BLACK];
            let colour = |c: &Curve| colours[c.colour % colours.len()];
            let entries: Vec<(Mark, String)> = curves
                .iter()
                .map(|c| (if c.marks { Mark::Ring(colour(c).to_rgba()) } else { Mark::Line(colour(c).to_rgba()) }, c.label.clone()))
                .collect();
            let area = with_legend(&root, &entries)?;
            let big_re = curves.iter().flat_map(|c| c.points.iter().map(|p| p.1.abs())).fold(0.0, f64::max);
            let big_im = curves.iter().flat_map(|c| c.points.iter().map(|p| p.2.abs())).fold(0.0, f64::max);
            let parts: Vec<(&str, usize)> = if big_im > 1e-12 * big_re { vec![("Re", 1), ("Im", 2)] } else { vec![("Re", 1)] };
            let areas = area.titled(title, ("sans-serif", 18)).map_err(|e| e.to_string())?.split_evenly((parts.len(), 1));
            let (x0, x1) = axis_range(curves.iter().flat_map(|c| c.points.iter().map(|p| p.0)), 0.0);
            for (part, (name, k)) in areas.iter().zip(parts) {
                let pick = |p: &(f64, f64, f64)| if k == 1 { p.1 } else { p.2 };
                let (y0, y1) = axis_range(curves.iter().flat_map(|c| c.points.iter().map(pick)), 0.0);
                let mut chart = ChartBuilder::on(part)
                    .margin(12)
                    .x_label_area_size(36)
                    .y_label_area_size(72)
                    .build_cartesian_2d(x0..x1, y0..y1)
                    .map_err(|e| e.to_string())?;
                chart.configure_mesh().x_desc(var).y_desc(format!("{name} ψ")).draw().map_err(|e| e.to_string())?;
                for c in curves {
                    let col = colour(c);
                    let pts = c.points.iter().map(|p| (p.0, pick(p)));
                    if c.marks {
                        // About 60 marks along the curve, so that the line under them stays visible.
                        let every = (c.points.len() / 60).max(1);
                        chart.draw_series(pts.step_by(every).map(|p| Circle::new(p, 3, col.stroke_width(1)))).map_err(|e| e.to_string())?;
                    } else {
                        chart.draw_series(LineSeries::new(pts, col.stroke_width(2))).map_err(|e| e.to_string())?;
                    }
                }
            }
            root.present().map_err(|e| e.to_string())
        }
    }
    write_figure(path, (900, 700), &Functions(curves, var, title))
}

/// The points of a plot's series: (x, y) pairs.
type Series = Vec<(f64, f64)>;

/// Writes a survey's plot, SVG or PNG by the file's extension: the modes
/// in the complex plane, and Re ω and Im ω against the last varied
/// parameter (`params`, the survey's varied parameters), one series per
/// method (continued fraction, direct integration). A survey of several
/// parameters gets one colour per pass (a value of the other parameters,
/// in the legend); `fixed` (the fixed parameters as text) goes in the titles.
pub fn plot_survey(path: &std::path::Path, points: &[ScanPoint], params: &[String], freq: &str, fixed: &str) -> Result<(), String> {
    struct Survey<'a>(&'a [ScanPoint], &'a [String], &'a str, &'a str);
    impl Figure for Survey<'_> {
        fn draw<DB: DrawingBackend>(&self, root: Area<DB>) -> Result<(), String> {
            draw_survey(root, self.0, self.1, self.2, self.3)
        }
    }
    // Each extra row of legend entries (many passes) gets its own room.
    let passes = points
        .iter()
        .map(|p| p.values[..p.values.len().saturating_sub(1)].iter().map(|v| v.to_bits()).collect::<Vec<_>>())
        .collect::<std::collections::BTreeSet<_>>()
        .len();
    write_figure(path, (1200, 500 + 24 * (passes as u32 / 6).min(20)), &Survey(points, params, freq, fixed))
}

fn draw_survey<DB: DrawingBackend>(root: Area<DB>, points: &[ScanPoint], params: &[String], freq: &str, fixed: &str) -> Result<(), String> {
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    // The passes: points with the same values of all but the last parameter.
    let mut groups: Vec<(Vec<f64>, Vec<&ScanPoint>)> = Vec::new();
    for p in points {
        let key = p.values[..p.values.len().saturating_sub(1)].to_vec();
        match groups.iter_mut().find(|(k, _)| *k == key) {
            Some(g) => g.1.push(p),
            None => groups.push((key, vec![p])),
        }
    }
    let several = groups.len() > 1 || params.len() > 1;
    // Pale enough for the check's crosses to show on top.
    let colour = |g: usize| if several { Palette99::pick(g).mix(0.55) } else { BLUE.mix(0.45) };
    let cross = if several { BLACK } else { RED };
    let mut entries: Vec<(Mark, String)> = groups
        .iter()
        .enumerate()
        .map(|(g, (key, _))| {
            let label = if several {
                params.iter().zip(key).map(|(n, v)| format!("{n}={v}")).collect::<Vec<_>>().join(", ")
            } else {
                "continued fraction".to_string()
            };
            (Mark::Dot(colour(g)), label)
        })
        .collect();
    if points.iter().any(|p| p.modes.iter().any(|m| m.1.is_some())) {
        entries.push((Mark::Cross(cross.to_rgba()), "direct integration".to_string()));
    }
    let area = with_legend(&root, &entries)?;
    let areas = area.split_evenly((1, 3));
    // The abscissa: the last varied parameter.
    fn x(p: &ScanPoint) -> f64 {
        p.values.last().copied().unwrap_or(p.value)
    }
    type Pick = dyn Fn(&ScanPoint, &(Mode, Option<Complex64>)) -> Option<(f64, f64)>;
    let series = |g: &[&ScanPoint], f: &Pick| -> Series { g.iter().flat_map(|p| p.modes.iter().filter_map(move |m| f(p, m))).collect() };
    let cf_pick: [&Pick; 3] = [
        &|_, (m, _)| m.root.converged.then_some((m.root.omega.re, m.root.omega.im)),
        &|p, (m, _)| m.root.converged.then_some((x(p), m.root.omega.re)),
        &|p, (m, _)| m.root.converged.then_some((x(p), m.root.omega.im)),
    ];
    let int_pick: [&Pick; 3] = [&|_, (_, c)| c.map(|c| (c.re, c.im)), &|p, (_, c)| c.map(|c| (x(p), c.re)), &|p, (_, c)| c.map(|c| (x(p), c.im))];
    let param = params.last().map(String::as_str).unwrap_or("");
    let context = if fixed.is_empty() { freq.to_string() } else { format!("{freq}; {fixed}") };
    let panels: [(&str, &str, &str); 3] = [("modes in the complex plane", "Re ω", "Im ω"), ("Re ω", param, "Re ω"), ("Im ω", param, "Im ω")];
    for (k, (area, (title, xl, yl))) in areas.iter().zip(panels).enumerate() {
        let all: Series = series(&points.iter().collect::<Vec<_>>(), cf_pick[k]);
        // Room above the highest point for its overtone's name.
        let (x0, x1) = axis_range(all.iter().map(|p| p.0), 0.0);
        let (y0, y1) = axis_range(all.iter().map(|p| p.1), 1.0);
        let mut chart = ChartBuilder::on(area)
            .caption(format!("{title} ({context})"), ("sans-serif", 18))
            .margin(12)
            .x_label_area_size(36)
            .y_label_area_size(56)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(|e| e.to_string())?;
        chart.configure_mesh().x_desc(xl).y_desc(yl).draw().map_err(|e| e.to_string())?;
        for (g, (_, members)) in groups.iter().enumerate() {
            let c = colour(g);
            chart.draw_series(series(members, cf_pick[k]).into_iter().map(move |p| Circle::new(p, 6, c.filled()))).map_err(|e| e.to_string())?;
        }
        // Each overtone named beside its last converged point.
        let mut names: Vec<((f64, f64), String)> = Vec::new();
        for (_, members) in &groups {
            let mut last: Vec<(u32, (f64, f64))> = Vec::new();
            for p in members {
                for m in &p.modes {
                    if let Some(xy) = cf_pick[k](p, m) {
                        match last.iter_mut().find(|(n, _)| *n == m.0.n) {
                            Some(l) => l.1 = xy,
                            None => last.push((m.0.n, xy)),
                        }
                    }
                }
            }
            names.extend(last.into_iter().map(|(n, xy)| (xy, format!("n={n}"))));
        }
        chart
            .draw_series(names.into_iter().map(|(xy, t)| EmptyElement::at(xy) + Text::new(t, (-12, -20), ("sans-serif", 13).into_font())))
            .map_err(|e| e.to_string())?;
        // The check over the results, in one colour.
        let int: Series = series(&points.iter().collect::<Vec<_>>(), int_pick[k]);
        chart.draw_series(int.into_iter().map(move |p| Cross::new(p, 3, cross.stroke_width(2)))).map_err(|e| e.to_string())?;
    }
    root.present().map_err(|e| e.to_string())
}

/// The viridis colour scale at t ∈ [0, 1] (clamped), linear between nine
/// samples of it (the scale of matplotlib, values from memory): dark
/// violet to yellow, its lightness rising steadily.
fn viridis(t: f64) -> RGBColor {
    const STOPS: [(u8, u8, u8); 9] =
        [(68, 1, 84), (71, 44, 122), (59, 81, 139), (44, 113, 142), (33, 144, 141), (39, 173, 129), (92, 200, 99), (170, 220, 50), (253, 231, 37)];
    let t = if t.is_finite() { t.clamp(0.0, 1.0) } else { 0.0 };
    let x = t * (STOPS.len() - 1) as f64;
    let i = (x.floor() as usize).min(STOPS.len() - 2);
    let f = x - i as f64;
    let mix = |a: u8, b: u8| (f64::from(a) + (f64::from(b) - f64::from(a)) * f).round() as u8;
    let (a, b) = (STOPS[i], STOPS[i + 1]);
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// The colour of "no value" in a colour map: a mid grey, which the
/// viridis scale of the values never takes.
const NO_VALUE: RGBColor = RGBColor(190, 190, 190);

/// The sorted distinct values of one coordinate of the points, and the cell
/// edges around them (half-way between neighbours; a lone value gets a cell
/// of width 1 around it).
fn cells(values: impl Iterator<Item = f64>) -> (Vec<f64>, Vec<f64>) {
    let mut v: Vec<f64> = values.filter(|x| x.is_finite()).collect();
    v.sort_by(f64::total_cmp);
    v.dedup();
    let mut edges = Vec::with_capacity(v.len() + 1);
    match v.len() {
        0 => {}
        1 => edges.extend([v[0] - 0.5, v[0] + 0.5]),
        n => {
            edges.push(v[0] - (v[1] - v[0]) / 2.0);
            edges.extend(v.windows(2).map(|w| (w[0] + w[1]) / 2.0));
            edges.push(v[n - 1] + (v[n - 1] - v[n - 2]) / 2.0);
        }
    }
    (v, edges)
}

/// Writes a two-parameter survey as colour maps, SVG or PNG by the
/// extension: for each overtone a row of two maps, Re ω and Im ω over the
/// grid (the first varied parameter across, the second up), each with its
/// colour bar (viridis); a point where the mode has no value (not
/// converged, or the point failed) is drawn grey, and the legend says so
/// with their count. `fixed` (the fixed parameters as text) goes in the
/// titles. An error when the points are not over two parameters.
pub fn plot_map(path: &std::path::Path, points: &[ScanPoint], params: &[String], freq: &str, fixed: &str) -> Result<(), String> {
    if params.len() != 2 || points.iter().any(|p| p.values.len() != 2) {
        return Err("a colour map needs a survey of exactly two parameters".into());
    }
    let mut overtones: Vec<u32> = points.iter().flat_map(|p| p.modes.iter().map(|m| m.0.n)).collect();
    overtones.sort_unstable();
    overtones.dedup();
    if overtones.is_empty() {
        return Err("no point of the survey has a mode to draw".into());
    }
    struct Map<'a>(&'a [ScanPoint], &'a [String], &'a str, &'a str, &'a [u32]);
    impl Figure for Map<'_> {
        fn draw<DB: DrawingBackend>(&self, root: Area<DB>) -> Result<(), String> {
            draw_map(root, self.0, self.1, self.2, self.3, self.4)
        }
    }
    write_figure(path, (1200, 40 + 440 * overtones.len() as u32), &Map(points, params, freq, fixed, &overtones))
}

fn draw_map<DB: DrawingBackend>(
    root: Area<DB>,
    points: &[ScanPoint],
    params: &[String],
    freq: &str,
    fixed: &str,
    overtones: &[u32],
) -> Result<(), String> {
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    let (_, xe) = cells(points.iter().map(|p| p.values[0]));
    let (_, ye) = cells(points.iter().map(|p| p.values[1]));
    let (xs, ys) = (cells(points.iter().map(|p| p.values[0])).0, cells(points.iter().map(|p| p.values[1])).0);
    let cell = |v: f64, grid: &[f64], edges: &[f64]| -> Option<(f64, f64)> {
        let i = grid.binary_search_by(|g| g.total_cmp(&v)).ok()?;
        Some((edges[i], edges[i + 1]))
    };
    let value = |p: &ScanPoint, n: u32| -> Option<Complex64> {
        p.modes.iter().find(|m| m.0.n == n).filter(|m| p.error.is_none() && m.0.root.converged).map(|m| m.0.root.omega)
    };
    let missing: Vec<usize> = overtones.iter().map(|&n| points.iter().filter(|p| value(p, n).is_none()).count()).collect();
    let counts = overtones.iter().zip(&missing).map(|(n, k)| format!("{k} at n={n}")).collect::<Vec<_>>().join(", ");
    let entries = vec![(
        Mark::Swatch(NO_VALUE.to_rgba()),
        format!("no value (the mode did not converge, or the point failed): {counts}, of {} points", points.len()),
    )];
    let area = with_legend(&root, &entries)?;
    let rows = area.split_evenly((overtones.len(), 2));
    let context = if fixed.is_empty() { freq.to_string() } else { format!("{freq}; {fixed}") };
    for (r, &n) in overtones.iter().enumerate() {
        for (c, part) in ["Re", "Im"].iter().enumerate() {
            let panel = &rows[2 * r + c];
            let pick = |w: Complex64| if c == 0 { w.re } else { w.im };
            let vals: Vec<f64> = points.iter().filter_map(|p| value(p, n)).map(pick).collect();
            let (lo, hi) = vals.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| (a.min(x), b.max(x)));
            let (lo, hi) = if !lo.is_finite() {
                (0.0, 1.0)
            } else if hi - lo <= 1e-12 * hi.abs().max(lo.abs()).max(1e-300) {
                let d = 1e-9 * lo.abs().max(1e-12);
                (lo - d, hi + d)
            } else {
                (lo, hi)
            };
            let colour = |v: f64| viridis((v - lo) / (hi - lo));
            let (title_area, body) = panel.split_vertically(30);
            title_area
                .draw(&Text::new(
                    format!("{part} {freq}, n={n} ({context})"),
                    (panel.dim_in_pixel().0 as i32 / 2, 16),
                    TextStyle::from(("sans-serif", 18).into_font()).pos(plotters::style::text_anchor::Pos::new(
                        plotters::style::text_anchor::HPos::Center,
                        plotters::style::text_anchor::VPos::Center,
                    )),
                ))
                .map_err(|e| e.to_string())?;
            let (map_area, bar_area) = body.split_horizontally(body.dim_in_pixel().0 - 120);
            let mut chart = ChartBuilder::on(&map_area)
                .margin(10)
                .x_label_area_size(40)
                .y_label_area_size(60)
                .build_cartesian_2d(xe[0]..xe[xe.len() - 1], ye[0]..ye[ye.len() - 1])
                .map_err(|e| e.to_string())?;
            chart
                .configure_mesh()
                .disable_mesh()
                .label_style(("sans-serif", 12))
                .x_desc(params[0].as_str())
                .y_desc(params[1].as_str())
                .draw()
                .map_err(|e| e.to_string())?;
            chart
                .draw_series(points.iter().filter_map(|p| {
                    let (x0, x1) = cell(p.values[0], &xs, &xe)?;
                    let (y0, y1) = cell(p.values[1], &ys, &ye)?;
                    let fill = match value(p, n) {
                        Some(w) => colour(pick(w)).filled(),
                        None => NO_VALUE.filled(),
                    };
                    Some(Rectangle::new([(x0, y0), (x1, y1)], fill))
                }))
                .map_err(|e| e.to_string())?;
            // The colour bar: the scale from lo to hi, labelled on its right.
            // The labels on the bar's right, left-aligned, so that the
            // panel's edge is the only bound on their length.
            let mut bar = ChartBuilder::on(&bar_area)
                .margin_top(10)
                .margin_bottom(50)
                .margin_left(8)
                .right_y_label_area_size(84)
                .build_cartesian_2d(0.0..1.0, lo..hi)
                .map_err(|e| e.to_string())?;
            let steps = 100;
            bar.draw_series((0..steps).map(|k| {
                let (a, b) = (lo + (hi - lo) * k as f64 / steps as f64, lo + (hi - lo) * (k + 1) as f64 / steps as f64);
                Rectangle::new([(0.0, a), (1.0, b)], colour((a + b) / 2.0).filled())
            }))
            .map_err(|e| e.to_string())?;
            // The axis after the colours, so that no colour covers a label.
            bar.configure_mesh().disable_mesh().disable_x_axis().y_labels(6).y_label_style(("sans-serif", 12)).draw().map_err(|e| e.to_string())?;
        }
    }
    root.present().map_err(|e| e.to_string())
}
