//! `canonode scan`: quasinormal modes over a survey — one parameter, a
//! tensor grid of several (`--vary` given more than once) or the points of
//! a file (`--points`) — in parallel, with continuation, a progress bar,
//! shards (also from a batch scheduler's job-array variables), a plot, and
//! tables streamed point by point (`src/cli/table.rs`) that a killed run
//! can `--resume`.

use super::table::{point_json, point_text, Header, Layout};
use super::values::parse_assignments;
use super::{run_command, Failure, InputArgs};
use crate::algebra::{GRat, Rat};
use crate::error::{Error, ErrorKind};
use crate::solve::plot::{plot_map, plot_survey};
use crate::solve::scan::{survey, survey_solver, Flow, PointSolver, ScanPoint, SurveyEnd, Trail, Walk};
use crate::solve::spectrum::SpectrumOptions;
use clap::{Args, ValueEnum};
use std::io::IsTerminal;
use std::io::Write;

/// Output formats of `scan`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum ScanFormat {
    /// One line per point and overtone, streamed (layout at the top of `src/cli/table.rs`).
    Csv,
    /// JSON lines: a header object, then one object per point, streamed.
    Jsonl,
    /// One JSON document at the end: {`parameter`, `frequency`, `points` [{`index`, `value`, `error`, `modes` [{`n`, `omega`, `converged`, `reason`, `check`}]}]} (with several parameters `parameters` and each point's `values`).
    Json,
}

/// How `scan --plot` draws a survey.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum PlotStyle {
    /// Colour maps for a grid of two --vary parameters with at least 5 values each, curves otherwise.
    Auto,
    /// Re ω and Im ω against the last varied parameter, one colour per value of the others.
    Curves,
    /// Colour maps of Re ω and Im ω over a grid of two --vary parameters, one row per overtone.
    Map,
}

/// The boundary problems a survey solves at every point.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum ScanProblem {
    /// Quasinormal modes: the wave leaves the domain through both ends.
    Qnm,
    /// Quasi-bound states: into the horizon, decaying at an irregular infinity.
    QuasiBound,
}

impl ScanProblem {
    fn problem(self) -> crate::solve::request::Problem {
        match self {
            ScanProblem::Qnm => crate::solve::request::Problem::Quasinormal,
            ScanProblem::QuasiBound => crate::solve::request::Problem::QuasiBound,
        }
    }
}

/// Arguments of `scan`.
#[derive(Args, Debug)]
pub(crate) struct ScanArgs {
    #[command(flatten)]
    input: InputArgs,
    /// A parameter and its grid, NAME=START:STOP:STEP (exact decimals), e.g. 'q=0:0.9:0.05'; given again, a tensor grid walked as a snake (the first slowest).
    #[arg(long = "vary", value_name = "NAME=A:B:STEP", required_unless_present = "points")]
    vary: Vec<String>,
    /// A file of points instead of --vary: a line of parameter names, then one line of values per point (commas or spaces; '#' starts a comment), solved in the file's order.
    #[arg(long = "points", value_name = "FILE", conflicts_with = "vary")]
    points: Option<String>,
    /// Values of the other parameters (not the frequency, not the varied one).
    #[arg(long = "at", value_name = "NAME=VALUE,...", default_value = "")]
    at: String,
    /// Overtones, 'A..B' or one number.
    #[arg(long = "overtones", value_name = "A..B", default_value = "0")]
    overtones: String,
    /// Only part K of N of the survey (contiguous blocks), e.g. '2/4'; 'auto' reads K and N from a job array (Slurm, Grid Engine, AWS Batch), 'auto/N' reads K (also LSF, PBS, Kubernetes).
    #[arg(long = "shard", value_name = "K/N|auto|auto/N")]
    shard: Option<String>,
    /// Write the table to FILE (streamed: each point as it is finished) instead of standard output.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    output: Option<String>,
    /// Continue the table in --output FILE from where a killed or stopped run left it.
    #[arg(long = "resume", requires = "output")]
    resume: bool,
    /// Stop after N new points (a later run with --resume goes on).
    #[arg(long = "stop-after", value_name = "N")]
    stop_after: Option<usize>,
    /// Write a plot of the scanned modes, SVG or PNG by the extension.
    #[arg(long = "plot", value_name = "FILE.svg|FILE.png")]
    plot: Option<String>,
    /// How --plot draws the survey.
    #[arg(long = "plot-style", value_enum, default_value = "auto", requires = "plot")]
    plot_style: PlotStyle,
    /// Skip the direct-integration check at every point.
    #[arg(long = "no-check")]
    no_check: bool,
    /// The boundary problem at every point: qnm (the default) or quasi-bound
    /// (a massive field's states decaying at infinity).
    #[arg(long = "boundary", value_enum, default_value = "qnm")]
    boundary: ScanProblem,
    /// Relative tolerance on ω.
    #[arg(long = "tol", default_value_t = 1e-10)]
    tol: f64,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "csv")]
    format: ScanFormat,
    /// A seed for the lowest overtone at the first grid point, e.g. '0.37-0.09i' (later points follow their neighbour).
    #[arg(long = "guess", value_name = "VALUE", allow_hyphen_values = true)]
    guess: Option<String>,
    #[command(flatten)]
    couple: super::spectrum::CoupleArgs,
}

pub(crate) fn run(a: &ScanArgs) -> u8 {
    let mut extra: Vec<(String, String)> = a.vary.iter().map(|v| ("--vary".to_string(), v.clone())).collect();
    extra.push(("--at".to_string(), a.at.clone()));
    extra.extend(a.shard.iter().map(|s| ("--shard".to_string(), s.clone())));
    extra.extend(a.guess.iter().map(|g| ("--guess".to_string(), g.clone())));
    extra.extend(a.plot.iter().map(|p| ("--plot".to_string(), p.clone())));
    if a.plot_style == PlotStyle::Map {
        extra.push(("--plot-style".to_string(), "map".to_string()));
    }
    extra.extend(a.couple.option_texts());
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    let e = Error::new(ErrorKind::Usage, msg);
    // A span only where the option's text is shown (none for a choice among values).
    let e = if len == 0 { e } else { e.at(crate::syntax::Span::new(0, len)) };
    e.in_named(option).into()
}

fn compute(a: &ScanArgs, src: &super::Source) -> Result<String, Failure> {
    // Checked before any work (the same rules as in `spectrum`), so that a
    // long scan is never lost to a bad option or file name.
    if let Some(path) = &a.plot {
        super::options::plot_path(path)?;
    }
    let tol = super::options::tolerance(a.tol)?;
    let (o0, o1) = super::options::overtones(&a.overtones)?;
    let index = super::options::angular_index(a.couple.angular_index)?;
    let guess = super::values::parse_seed(a.guess.as_deref(), "--guess")?;
    let angular_guess = super::values::parse_seed(a.couple.angular_guess.as_deref(), "--angular-guess")?;
    let red = a.input.reduce(src)?;
    let names = red.field.names().to_vec();
    let (fname, freq) = frequency_of(a, &names)?;
    let walk = survey_walk(a, &names, freq)?;
    let vnames: Vec<String> = walk.fields.iter().map(|&f| names[f].clone()).collect();
    let map = map_style(a, &walk)?;
    let coupled = a.couple.read(&red.field)?;
    let links = coupled.as_ref().map(|c| c.2.clone()).unwrap_or_default();
    let FixedValues { point, angular_at } = fixed_values_of(a, &names, freq, &walk, &links, coupled.as_ref().map(|c| c.1.field.names()))?;
    let (range, part) = match &a.shard {
        None => (0..walk.len(), (1, 1)),
        Some(s) => {
            let (k, n) = super::options::shard(s, walk.len(), &|v| std::env::var(v).ok())?;
            (crate::solve::scan::shard(walk.len(), k, n), (k, n))
        }
    };
    if a.stop_after == Some(0) {
        return Err(usage("--stop-after takes at least one point", "--stop-after", 1));
    }
    let layout = match a.format {
        ScanFormat::Csv => Some(Layout::Csv),
        ScanFormat::Jsonl => Some(Layout::Lines),
        ScanFormat::Json => None,
    };
    if a.resume && layout.is_none() {
        return Err(usage("--resume continues a streamed table: use --format csv or jsonl", "--format", 4));
    }
    if let (ScanProblem::QuasiBound, Some(_)) = (a.boundary, &coupled) {
        return Err(usage("a coupled scan surveys quasinormal modes only: --boundary qnm", "--boundary", 0));
    }
    let base = SpectrumOptions::new(freq, point, (o0, o1), tol, guess);
    // A coupled scan sets its angular problem up at the first point here, so
    // that a bad angular equation is reported against its own text before
    // any work starts.
    if let (Some((asrc, ared, _)), Some(first_point)) = (&coupled, walk.points.get(range.start)) {
        let first = AngularCheck { base: &base, fields: &walk.fields, first_point, angular_at: &angular_at, links: &links, names: &names };
        first.set_up(&red.field, ared, a.couple.angular_index, angular_guess).map_err(|e| super::spectrum::angular_failure(e, asrc))?;
    }
    let header = Header {
        survey: survey_id(a, src, &walk),
        points: walk.len(),
        shard: part,
        rows: range.clone(),
        parameters: vnames.clone(),
        frequency: fname.clone(),
        angular: coupled.is_some(),
    };
    // The output: standard output, or a file (new, or resumed from its last complete point).
    let (done, mut file) = open_output(a, &header, layout, (o1 - o0 + 1) as usize)?;
    if done.len() >= range.len() {
        super::err_line(&format!("note: the table already holds all {} points", range.len()));
        return Ok(String::new());
    }
    let total = (range.len() - done.len()) as u64;
    let bar = if std::io::stderr().is_terminal() && !super::capturing() { Some(indicatif::ProgressBar::new(total)) } else { None };
    let opts = a.input.options();
    // The angular source as read (its text, and whether it is LaTeX).
    let angular_text = coupled.as_ref().map(|c| (c.0.text.clone(), c.0.latex));
    let fields = walk.fields.clone();
    let make = || -> crate::error::Result<PointSolver<'_>> {
        let red = crate::ode::reduce(&src.input(), &opts)?;
        // After a change of variable every point is solved on the physical
        // equation, coupled or not (`solve::physical`); spatial infinity
        // written at a finite point is moved back to infinity as `spectrum`
        // moves it (the side decided at the first point's values).
        let red = match crate::solve::physical::physical(&red)? {
            Some((p, _)) => p,
            None if angular_text.is_none() => {
                let mut values = base.values.clone();
                if let Some(first) = walk.points.get(range.start) {
                    for (f, x) in fields.iter().zip(first) {
                        values[*f] = GRat::real(x.clone());
                    }
                }
                crate::solve::physical::irregular_to_infinity(&red, &values, freq)?.map_or(red, |(m, _)| m)
            }
            None => red,
        };
        match &angular_text {
            None => Ok(survey_solver(red, &fields, a.boundary == ScanProblem::QuasiBound)),
            Some((text, latex)) => {
                let input = if *latex { crate::ode::Input::Latex(text) } else { crate::ode::Input::Program(text) };
                let ared = crate::ode::reduce(&input, &crate::ode::ReduceOptions::default())?;
                let (names, links, at) = (names.clone(), links.clone(), angular_at.clone());
                Ok(Box::new(move |o: &SpectrumOptions, check: bool| {
                    let c = crate::solve::coupled::try_coupling(
                        &red.field,
                        &ared,
                        &links,
                        &fixed_values(&names, o, &at, &links),
                        o.freq,
                        index,
                        angular_guess,
                    )?;
                    let none = |_: u32| None;
                    let modes = if o.seeds.is_empty() && o.guess.is_none() {
                        // No seed (the first point, or after a failed one): from the uncoupled limit.
                        let mut c = c;
                        crate::solve::continuation::continued_spectrum(&red, &mut c, o, check)?.1
                    } else {
                        crate::solve::coupled::coupled_spectrum(&red, &c, o, check, &none)?.1
                    };
                    let angular = modes.iter().map(|m| m.angular.as_ref().filter(|a| a.root.converged).map(|a| a.root.omega)).collect();
                    let modes = modes.into_iter().map(|m| (m.mode, m.check.filter(|c| c.converged).map(|c| c.omega))).collect();
                    Ok(crate::solve::scan::SolvedPoint { modes, angular })
                }))
            }
        }
    };
    let keep = a.plot.is_some() || layout.is_none();
    let mut kept: Vec<ScanPoint> = Vec::new();
    let mut failure: Option<Failure> = None;
    let mut fresh = 0usize;
    let end = survey(&make, &base, &walk, range.clone(), !a.no_check, &done, &mut |p| {
        if let Some(b) = &bar {
            b.inc(1);
        }
        if let Some(l) = layout {
            let text = point_text(&p, l, &header);
            let written = match &mut file {
                Some(f) => f.write_all(super::named(&text).as_bytes()).map_err(|e| Failure::Plain(format!("error: cannot write the table: {e}"), 1)),
                None => super::emit(&text),
            };
            if let Err(f) = written {
                failure = Some(f);
                return Flow::Stop;
            }
        }
        if keep {
            kept.push(p);
        }
        fresh += 1;
        if a.stop_after.is_some_and(|n| fresh >= n) {
            Flow::Stop
        } else {
            Flow::Go
        }
    });
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    if let Some(f) = failure {
        return Err(f);
    }
    if let SurveyEnd::Stopped { next } = end {
        let how = match &a.output {
            Some(path) => format!("; `-o {path} --resume` with the same options goes on"),
            None => String::new(),
        };
        super::err_line(&format!("note: stopped after {fresh} new points as asked (--stop-after); the next is point {next}{how}"));
    }
    finish(a, map, &kept, &header, layout, file)
}

/// A coupled survey's first point, where its angular problem is set up before any work.
struct AngularCheck<'a> {
    base: &'a SpectrumOptions,
    fields: &'a [usize],
    first_point: &'a [Rat],
    angular_at: &'a [(String, GRat)],
    links: &'a [crate::solve::coupled::Link],
    names: &'a [String],
}

impl AngularCheck<'_> {
    /// Sets the angular problem up at the first point (its errors are the angular equation's).
    fn set_up(
        &self,
        radial: &crate::algebra::Field,
        angular: &crate::ode::Reduction,
        index: usize,
        guess: Option<num_complex::Complex64>,
    ) -> crate::error::Result<()> {
        let mut first = self.base.clone();
        for (f, x) in self.fields.iter().zip(self.first_point) {
            first.values[*f] = GRat::real(x.clone());
        }
        let fixed = fixed_values(self.names, &first, self.angular_at, self.links);
        crate::solve::coupled::try_coupling(radial, angular, self.links, &fixed, first.freq, index, guess).map(|_| ())
    }
}

/// The frequency's name and field index: named, or a conventional name.
fn frequency_of(a: &ScanArgs, names: &[String]) -> Result<(String, usize), Failure> {
    // Valued: the parameters given in --at and those varied (a points
    // file's header is read later: with one, the name is not inferred).
    let at: Vec<String> = parse_assignments(&a.at, "--at")?.into_iter().map(|(n, _, _)| n).collect();
    let varied = a.vary.iter().filter_map(|v| v.split_once('=')).map(|(n, _)| super::values::param_name(n));
    let valued: Vec<String> = at.into_iter().chain(varied).collect();
    let valued: Vec<&str> = valued.iter().map(String::as_str).collect();
    let infer = a.points.is_none() && a.couple.couple.is_none();
    let (freq, fname) = crate::solve::request::spectral_parameter(names, a.input.frequency_name().as_deref(), &valued, infer, false)?;
    Ok((fname, freq))
}

/// The survey's points: a points file, or the grid of the `--vary` axes.
fn survey_walk(a: &ScanArgs, names: &[String], freq: usize) -> Result<Walk, Failure> {
    if let Some(path) = &a.points {
        return points_file(path, names, freq);
    }
    let mut axes: Vec<(usize, Vec<Rat>)> = Vec::new();
    for v in &a.vary {
        let (vname, field, g) = super::options::vary(v, names, freq)?;
        if axes.iter().any(|(f, _)| *f == field) {
            return Err(usage(format!("'{vname}' is varied twice"), "--vary", v.len()));
        }
        axes.push((field, g));
    }
    let max = super::options::MAX_GRID_POINTS;
    Walk::tensor(&axes, max).ok_or_else(|| usage(format!("the grid has more than {max} points"), "--vary", a.vary.last().map_or(1, |v| v.len())))
}

/// The values fixed over the survey: the radial point (the frequency and
/// the varied parameters left at 0) and the angular equation's own values.
struct FixedValues {
    point: Vec<GRat>,
    angular_at: Vec<(String, GRat)>,
}

/// Reads `--at` against the equation: every parameter that is neither
/// solved for, varied nor linked needs a value.
fn fixed_values_of(
    a: &ScanArgs,
    names: &[String],
    freq: usize,
    walk: &Walk,
    links: &[crate::solve::coupled::Link],
    angular_names: Option<&[String]>,
) -> Result<FixedValues, Failure> {
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    given[freq] = true;
    for &f in &walk.fields {
        given[f] = true;
    }
    let mut solved = vec![freq];
    solved.extend(&walk.fields);
    for i in super::spectrum::linked_radial(links, names, &solved, "solved for or varied")? {
        given[i] = true;
    }
    // Values of the angular equation's own parameters (not the radial one's).
    let mut angular_at: Vec<(String, GRat)> = Vec::new();
    for (n, v, span) in parse_assignments(&a.at, "--at")? {
        if super::spectrum::for_angular_only(&n, span, links, names, angular_names)? {
            angular_at.push((n, v));
            continue;
        }
        match names.iter().skip(1).position(|x| *x == n) {
            Some(i) if i + 1 != freq && !walk.fields.contains(&(i + 1)) => {
                point[i + 1] = v;
                given[i + 1] = true;
            }
            _ => return Err(Error::new(ErrorKind::Usage, format!("'{n}' is not a parameter to fix here")).at(span).in_named("--at").into()),
        }
    }
    let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
    if !missing.is_empty() {
        return Err(usage(format!("no value given for {}", missing.join(", ")), "--at", a.at.len()));
    }
    Ok(FixedValues { point, angular_at })
}

/// The table's destination: standard output (the header written), or a
/// file, new or resumed from its last complete point (`modes` per point);
/// returns the trails of the points already there and the open file.
fn open_output(a: &ScanArgs, header: &Header, layout: Option<Layout>, modes: usize) -> Result<(Vec<Trail>, Option<std::fs::File>), Failure> {
    let mut done: Vec<Trail> = Vec::new();
    let mut file: Option<std::fs::File> = None;
    if let Some(path) = &a.output {
        let exists = std::path::Path::new(path).exists();
        if exists && !a.resume {
            return Err(Failure::Plain(format!("-o: error: {path:?} exists: add --resume to continue it, or remove it"), 2));
        }
        let mut start_over = true;
        if a.resume && exists {
            let text = super::table::read_file(path)?;
            if !text.is_empty() {
                let t = super::table::read(path, &text, Some(modes))?;
                check_resumable(path, &t, header, layout)?;
                done = t.rows.iter().map(|r| r.trail.clone()).collect();
                let f = std::fs::OpenOptions::new()
                    .write(true)
                    .open(path)
                    .map_err(|e| Failure::Plain(format!("-o: error: cannot write {path:?}: {e}"), 2))?;
                f.set_len(t.complete_len as u64).map_err(|e| Failure::Plain(format!("-o: error: cannot write {path:?}: {e}"), 2))?;
                start_over = false;
            }
        }
        super::options::writable(path, "-o")?;
        let mut f = std::fs::OpenOptions::new()
            .create(true)
            .append(true)
            .open(path)
            .map_err(|e| Failure::Plain(format!("-o: error: cannot write {path:?}: {e}"), 2))?;
        if start_over {
            if let Some(l) = layout {
                f.write_all(super::named(&header.text(l)).as_bytes())
                    .map_err(|e| Failure::Plain(format!("-o: error: cannot write {path:?}: {e}"), 1))?;
            }
        }
        file = Some(f);
    } else if let Some(l) = layout {
        super::emit(&header.text(l))?;
    }
    Ok((done, file))
}

/// After the walk: the plot, and the JSON document (to the file or returned).
fn finish(
    a: &ScanArgs,
    map: bool,
    kept: &[ScanPoint],
    header: &Header,
    layout: Option<Layout>,
    mut file: Option<std::fs::File>,
) -> Result<String, Failure> {
    let (vnames, fname) = (&header.parameters, &header.frequency);
    if let Some(path) = &a.plot {
        // The fixed parameters in the titles, as given.
        let fixed = a.at.split(',').map(str::trim).filter(|t| !t.is_empty()).collect::<Vec<_>>().join(", ");
        let draw = if map { plot_map } else { plot_survey };
        draw(std::path::Path::new(path), kept, vnames, fname, &fixed)
            .map_err(|e| Failure::Plain(format!("error: cannot write the plot {path}: {e}"), 1))?;
    }
    if layout.is_some() {
        return Ok(String::new());
    }
    let pts: Vec<serde_json::Value> = kept.iter().map(|p| point_json(p, header, vnames.len() > 1)).collect();
    let doc = if vnames.len() > 1 {
        serde_json::json!({"parameters": vnames, "frequency": fname, "points": pts})
    } else {
        serde_json::json!({"parameter": vnames[0], "frequency": fname, "points": pts})
    };
    let text = format!("{}\n", serde_json::to_string_pretty(&doc).unwrap_or_default());
    match (&mut file, &a.output) {
        (Some(f), Some(path)) => {
            f.write_all(super::named(&text).as_bytes()).map_err(|e| Failure::Plain(format!("error: cannot write {path:?}: {e}"), 1))?;
            Ok(String::new())
        }
        _ => Ok(text),
    }
}

/// Whether `--plot` draws colour maps: asked for with `--plot-style map`
/// (refused, before any work, unless the survey is a grid of two `--vary`
/// parameters), or chosen by `auto` for such a grid with at least 5 values
/// on each axis (fewer make a poor map and clear curves).
fn map_style(a: &ScanArgs, walk: &Walk) -> Result<bool, Failure> {
    let grid2 = a.points.is_none() && a.vary.len() == 2;
    let sizes = || -> (usize, usize) {
        let distinct = |k: usize| walk.points.iter().map(|p| p[k].clone()).collect::<std::collections::BTreeSet<_>>().len();
        (distinct(0), distinct(1))
    };
    match a.plot_style {
        PlotStyle::Curves => Ok(false),
        PlotStyle::Auto => Ok(a.plot.is_some() && grid2 && {
            let (x, y) = sizes();
            x >= 5 && y >= 5
        }),
        PlotStyle::Map if grid2 => Ok(true),
        PlotStyle::Map => Err(usage("a colour map needs a grid of exactly two --vary parameters", "--plot-style", 3)),
    }
}

/// Refuses to resume a table of another survey, shard or format, or one
/// whose points are not the first ones of its rows in order.
fn check_resumable(path: &str, t: &super::table::Table, header: &Header, layout: Option<Layout>) -> Result<(), Failure> {
    let bad = |msg: String| Failure::Plain(format!("{path}: error: cannot resume: {msg}"), 2);
    if Some(t.layout) != layout {
        return Err(bad("the file is in the other format (--format csv or jsonl)".into()));
    }
    if t.header.survey != header.survey || t.header.points != header.points || t.header.parameters != header.parameters {
        return Err(bad(format!(
            "the file is the table of another survey (survey={}, this one is survey={}): the equation or an option that changes the numbers differs",
            t.header.survey, header.survey
        )));
    }
    if t.header.shard != header.shard || t.header.rows != header.rows {
        return Err(bad(format!(
            "the file holds shard {}/{} (points {}..{}), this run is shard {}/{}",
            t.header.shard.0, t.header.shard.1, t.header.rows.start, t.header.rows.end, header.shard.0, header.shard.1
        )));
    }
    for (k, r) in t.rows.iter().enumerate() {
        if r.index != header.rows.start + k {
            return Err(bad(format!(
                "line {}: point {} where point {} was expected (the points must run in walk order)",
                r.line,
                r.index,
                header.rows.start + k
            )));
        }
    }
    Ok(())
}

/// The identity of a survey: the SHA-256 (first 16 hex digits) of the
/// equation's text and of every option that changes a number (not the
/// shard, output, format or plot), so that tables of different surveys are
/// never resumed or merged together.
fn survey_id(a: &ScanArgs, src: &super::Source, walk: &Walk) -> String {
    let mut input = a.input.clone();
    input.file = None;
    let points: Vec<String> = walk.points.iter().map(|p| p.iter().map(|x| x.to_string()).collect::<Vec<_>>().join(",")).collect();
    let key = format!(
        "{}\u{0}{:?}\u{0}{:?}\u{0}{}\u{0}{}\u{0}{}\u{0}{}\u{0}{:e}\u{0}{:?}\u{0}{:?}\u{0}{:?}",
        src.text,
        input,
        walk.fields,
        points.join(";"),
        a.at,
        a.overtones,
        a.no_check,
        a.tol,
        a.guess,
        a.couple.option_texts(),
        src.latex
    );
    // The default problem keeps the identities of earlier tables.
    let key = match a.boundary.problem() {
        crate::solve::request::Problem::Quasinormal => key,
        other => format!("{key}\u{0}{}", other.tag()),
    };
    crate::emit::record::sha256_hex(key.as_bytes())[..16].to_string()
}

/// Reads `--points FILE`: a line of parameter names, then one point a
/// line (commas or whitespace between exact real decimals; '#' starts a
/// comment). Errors name the file, line and column.
fn points_file(path: &str, names: &[String], freq: usize) -> Result<Walk, Failure> {
    let src = super::read_source(path)?;
    let bad = |line: usize, msg: String| Failure::Plain(format!("{}:{line}: error: {msg}", src.name), 2);
    let mut fields: Vec<usize> = Vec::new();
    let mut points: Vec<Vec<Rat>> = Vec::new();
    for (k, raw) in src.text.lines().enumerate() {
        let line = raw.split('#').next().unwrap_or("").trim();
        if line.is_empty() {
            continue;
        }
        let words: Vec<&str> = line.split(|c: char| c == ',' || c.is_whitespace()).filter(|w| !w.is_empty()).collect();
        if fields.is_empty() {
            for w in &words {
                let Some(f) = names.iter().skip(1).position(|n| n == w).map(|i| i + 1) else {
                    return Err(bad(k + 1, format!("'{w}' is not a parameter of the equation (the first line names the varied parameters)")));
                };
                if f == freq {
                    return Err(bad(k + 1, format!("'{w}' is the frequency being solved for; vary another parameter")));
                }
                if fields.contains(&f) {
                    return Err(bad(k + 1, format!("'{w}' is named twice")));
                }
                fields.push(f);
            }
            continue;
        }
        if words.len() != fields.len() {
            return Err(bad(k + 1, format!("expected {} values, found {}", fields.len(), words.len())));
        }
        let mut p = Vec::new();
        for w in words {
            match super::values::read_value(w) {
                Ok(v) if v.im.is_zero() => p.push(v.re),
                Ok(_) => return Err(bad(k + 1, format!("'{w}' is not real"))),
                Err(m) => return Err(bad(k + 1, m)),
            }
        }
        points.push(p);
        if points.len() > super::options::MAX_GRID_POINTS {
            return Err(bad(k + 1, format!("more than {} points", super::options::MAX_GRID_POINTS)));
        }
    }
    if points.is_empty() {
        return Err(Failure::Plain(format!("{}: error: no points (a line of parameter names, then one line of values per point)", src.name), 2));
    }
    Ok(Walk::list(fields, points))
}

/// The fixed values of a coupled point: the radial parameters at the
/// point's values (not the frequency, not the linked ones) and the angular
/// equation's own.
fn fixed_values(names: &[String], o: &SpectrumOptions, angular_at: &[(String, GRat)], links: &[crate::solve::coupled::Link]) -> Vec<(String, GRat)> {
    let mut out: Vec<(String, GRat)> = names
        .iter()
        .enumerate()
        .skip(1)
        .filter(|(i, n)| *i != o.freq && !links.iter().any(|l| l.target == **n))
        .map(|(i, n)| (n.clone(), o.values[i].clone()))
        .collect();
    out.extend(angular_at.iter().cloned());
    out
}
