//! `canonode spectrum`: quasinormal modes by the continued fraction (alone
//! or coupled to an angular equation), bound states by collocation, with
//! convergence evidence and a second method for every value.
//!
//! JSON output (stable; tests read it). Every document has `frequency` (the
//! parameter solved for), `boundary` ("qnm" or "bound"), `method` (words)
//! and `modes`, a list of objects with:
//! - `n` — overtone (or level) number;
//! - `omega` — [re, im], or null when not converged;
//! - `converged` — bool; `reason` — why not (null when converged);
//! - `method` — "cf", "terminating", "integrate", "wkb", "eikonal" or
//!   "collocation";
//! - `evidence` — for "cf": `inversion`, `depth`, `change_on_doubling`,
//!   `residual`, `iterations`, `seed` [re, im], `seed_from`; for
//!   "collocation": `points`, `change_on_doubling`, `domain`; for the
//!   estimates: `note`;
//! - `check` — the second method, or null: {`method`: "integrate" or
//!   "shooting", `omega` [re, im] or null with `reason`, `agreement`
//!   (relative), `residual`, and for shooting `change_on_refinement`};
//!   bound states add `no_check` (why no second method ran, or null);
//! - quasinormal modes add `estimate` ({`method`: "wkb", `order`, `omega`} or null)
//!   and `coupled` (null, or for `--couple`: `eigenvalue` (its name),
//!   `value` [re, im], `depth`, `change_on_doubling`, and `links`, each
//!   linked parameter's value [re, im] at the mode).
//!
//! After a change of variable (`--subst`, `--at-infinity`) the ends are
//! decided and the spectrum solved in the physical (original) variable, and
//! every document carries `variable_change`: {`physical_variable`,
//! `written_variable`, `map` ("r = 1/t"), `ends` (left to right in the
//! physical variable, each {`physical`: number or "inf", `written`: number,
//! "inf" or null, `undecided`: why the place in the written variable cannot
//! be decided, or null}), `note` (the sentence the text prints)}.
//!
//! Quasinormal-mode documents from the continued fraction also carry
//! `horizon`, `ansatz`, `choices`, `recurrence_terms` and `notes` (words:
//! a mode sought or found next to a frequency where the recurrence's
//! leading coefficient vanishes, e.g. the algebraically special one); coupled ones a
//! `coupling` object (`angular` file, `eigenvalue`, `index`, `about`,
//! `choices`, `links`); bound-state documents `domain` and `continuum` (the
//! edge, or null on a finite interval).
//!
//! Documents of direct integration between the ends of a boundary problem
//! (`solve::boundary`, `solve::ends`: de Sitter, anti-de Sitter, massive
//! fields, `--ends`; with `--boundary bound --ends …` real eigenvalue
//! problems such as angular equations) have `boundary` "qnm",
//! "quasi-bound" or "bound", `ends` (two
//! objects: `at` — the location, a number or "infinity" —, `found` — how the end
//! was located, in words —, `condition` — "into", "out-of", "outgoing",
//! "decaying", "normalisable" or "slower"), `notes` (every choice made, in
//! words), `method`, and `modes` with `method` "integrate", `evidence`
//! {`change_on_refinement` (null when not run), `residual` (null when not
//! evaluated), `iterations`, `seed`, `seed_from`} and `check`: the second
//! method, the global spectral method's eigenvalue nearest the mode —
//! {`method` "spectral", `omega` [re, im], `agreement` (relative)}, or with
//! `omega` null and a `reason` —, or null when the mode did not converge or
//! no second method ran; `check_method` says which ran, or why none did.
//!
//! Documents of periodic problems (`--boundary periodic`, the default when
//! the coefficients are trigonometric in the real variable) have `boundary`
//! "periodic", `variable` (the one the equation was written in), `period`
//! (T, or null when the equation was given in ζ itself), `map` (text or
//! null), `symmetric` (whether parities were separated), `method` (words),
//! and `modes` ascending by real part, each with `method` "truncation",
//! `family` {`multiplier` 1 (period T) or −1 (sign change over T),
//! `parity` "even"/"odd"/null, `index` (rank within the parity, even from 0,
//! odd from 1; null without parity)}, `evidence` {`change_on_truncation`,
//! `truncation` [K, 3K/2]} and `check` {`method` "monodromy", `omega` or
//! null with `reason`, `agreement`, `residual`, `change_on_refinement`}.
//!
//! The estimates of `--method wkb` and `--method eikonal` (barrier-top
//! estimates, not iterated eigenvalues) have their own document.
//!
//! JSON (stable): `frequency`, `boundary` ("qnm"), `method` (words), `order`
//! (the WKB order, for "wkb"), `eikonal_limit` (null, or with
//! `--eikonal-param`: {`param`, `omega_c`, `lyapunov`, `peak`}) and `modes`,
//! each {`n`, `omega` [re, im] or null, `converged` (an estimate exists),
//! `reason`, `method` ("wkb" or "eikonal"), `wrong_half_plane` (Im ω ≥ 0:
//! not a decaying mode, never used as a seed), `evidence`, `check` (null)}.
//! For "wkb", `evidence` holds `note`, `pade` ({`approximant` "[p/q]",
//! `omega`, `spread`}: the Padé value of ω²(ε) at ε = 1 and its change from
//! the previous order), `spread` (|ω_N − ω_{N−1}|, the error estimate),
//! `optimal_order` (the order of least spread) and `orders`, every order's
//! {`order`, `omega`, `spread`, `pade`}.
//!
//! Every text and JSON document (not CSV) also carries the closed form of
//! `solve::closed` (rendered in `emit::spectrum`): `closed_form` — null
//! when there is none, with the reason in `closed_form_note` (a Heun-class
//! problem says so) — or {`route` (the connection formula and the maps, in
//! words), `families`: [{`family` (the exponent choices and root, in
//! words), `expression` (the spectral parameter as text in the input
//! language, in `n` and the parameters), `expression_latex` (the same in
//! LaTeX, the `NAME_latex` convention of every JSON document), `n_range` {`first`,
//! `last` (null: unbounded; −1: no member at these values), `bound` ("n <
//! EXPR" when the branch ends the family, or null), `branch` (the branch
//! condition, or null)}, `values`: [{`n`, `omega` [re, im], `method`
//! "exact", `check` (null, or the numeric mode of the same run at this
//! value: {`method`, `n`, `omega`, `agreement` (relative)})}]}]}. With
//! `--method exact` the document holds only the closed form: `modes` are its
//! values (`method` "exact", `family` the family's number from 1, `check`
//! null).
//!
//! With `--polynomial-degree N|lowest`, and with `--method exact` whenever
//! there is no closed form, the text and JSON documents also carry the
//! polynomial solutions of `solve::polynomial`: `polynomial_solutions` —
//! null with the reason in `polynomial_solutions_note`, or {`about` (the
//! expansion point), `ansatz`, `series` (u = …), `degree` (N), `degree_from`
//! (asked, or the lowest admissible, in words), `termination` {`general`
//! (γ_{N+1} with N symbolic, as {`expression`, `expression_latex`}), `at_degree` (at this
//! N, or null beyond the symbolic limit), `holds` (it vanishes at the given
//! values)}, `condition` (the determinant of the first N + 1 equations with
//! every parameter symbolic, {`expression`, `expression_latex`}, or null with the reason
//! in `condition_note`), `spectral` (the parameter solved for), `at_values`
//! (the determinant at the given values, a polynomial in it), `roots`:
//! [{`value` [re, im], `residual` (the last equation relative to its terms
//! with a_0 = 1, or null)}], `roots_note` (why there are none, or null)}.
//! With `--method exact` and no closed form `modes` is empty.

use super::values::parse_assignments;
use super::{run_command, Failure, InputArgs};
use crate::emit::DocFormat;
use crate::error::{Error, ErrorKind, Origin};
use crate::solve::request::{CoupleRequest, Method, Problem, SpectrumRequest, ANGULAR_ORIGIN};
use clap::Args;
use num_complex::Complex64;

/// Arguments of `spectrum`.
#[derive(Args, Debug)]
pub(crate) struct SpectrumArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The boundary problem (default: periodic when the coefficients are trigonometric in the real
    /// variable, else qnm).
    #[arg(long = "boundary", value_enum)]
    boundary: Option<Problem>,
    /// The two ends of the domain and their conditions, 'LEFT..RIGHT', each end
    /// a number (a real singular point, matched numerically) or 'inf', with an
    /// optional ':CONDITION' (into, out-of, outgoing, decaying, normalisable,
    /// slower, or mixed=K at a regular end: the slower fall-off plus K times
    /// the faster); default: from the outermost horizon to the next singular end outward.
    #[arg(long = "ends", value_name = "LEFT..RIGHT", allow_hyphen_values = true)]
    ends: Option<String>,
    /// Values of every parameter except the frequency, e.g. 'M=1,l=2,s=2' (none when the frequency is the only one).
    #[arg(long = "at", value_name = "NAME=VALUE,...", default_value = "")]
    at: String,
    /// Overtones, a range 'A..B' (inclusive) or one number (numbers up to 200, at most 51 in one run).
    #[arg(long = "overtones", value_name = "A..B", default_value = "0")]
    overtones: String,
    /// The method.
    #[arg(long = "method", value_enum, default_value = "auto")]
    method: Method,
    /// Polynomial solutions of degree N (or the lowest degree possible at the given values, 'lowest'):
    /// the conditions on the parameters for the Taylor series about a regular singular point to stop
    /// (Heun-class problems; --method exact gives the lowest whenever there is no closed form).
    #[arg(long = "polynomial-degree", value_name = "N|lowest")]
    polynomial_degree: Option<String>,
    /// A seed for the lowest overtone, e.g. '0.37-0.09i'.
    #[arg(long = "guess", value_name = "VALUE", allow_hyphen_values = true)]
    guess: Option<String>,
    /// Every mode in a rectangle of the complex plane, 'RE0..RE1,IM0..IM1' (no --guess needed): found by the
    /// global spectral method and, where the recurrence has a continued fraction, by the overtone ladder it seeds;
    /// each polished by the continued fraction or direct integration and checked by the other.
    #[arg(long = "region", value_name = "RE0..RE1,IM0..IM1", allow_hyphen_values = true)]
    pub(crate) region: Option<String>,
    /// With --region: intervals of the global method's coarser Chebyshev grid (the finer one has half as many again)
    /// where its eigenvalues are reported after a polish; the overtone ladder's seeds try 20 intervals first.
    #[arg(long = "grid", value_name = "N", default_value_t = crate::solve::global::DEFAULT_GRID)]
    pub(crate) grid: usize,
    /// Relative tolerance on ω.
    #[arg(long = "tol", default_value_t = 1e-10)]
    tol: f64,
    /// Write a picture of the modes found in the complex plane, SVG or PNG by the extension (a second method's confirmation marked).
    #[arg(long = "plot", value_name = "FILE.svg|FILE.png")]
    pub(crate) plot: Option<String>,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: DocFormat,
    #[command(flatten)]
    couple: CoupleArgs,
    /// The WKB order of the barrier-top estimates (1..=80; orders 1–3 are the Schutz–Will and Iyer–Will formulas).
    #[arg(long = "wkb-order", value_name = "N", default_value_t = 6)]
    pub(crate) wkb_order: usize,
    /// With --method eikonal: the parameter whose large values give the eikonal limit (e.g. the multipole index l):
    /// Ω_c and λ from the part of V growing like its square.
    #[arg(long = "eikonal-param", value_name = "NAME")]
    pub(crate) eikonal_param: Option<String>,
    /// Write every converged mode's function to FILE.csv or FILE.json: bound states normalised
    /// (∫|ψ|² = 1), quasinormal modes with unit leading coefficient at the horizon; where a second method ran,
    /// its function too (a `method` column), and the largest difference between the two in the output.
    #[arg(long = "mode-functions", value_name = "FILE")]
    pub(crate) mode_functions: Option<String>,
    /// Draw every converged mode's function (Re ψ, and Im ψ where it is not negligible) against the variable,
    /// SVG or PNG by the extension: one colour per overtone, the second method's function as points on the first's line.
    #[arg(long = "mode-plot", value_name = "FILE.svg|FILE.png")]
    pub(crate) mode_plot: Option<String>,
    /// With --mode-functions or --mode-plot for quasinormal modes and modes between the ends: how far from the horizon (the left end) to sample (default 20 times its distance to the next singular point; at most 98 % of the way to a finite right end).
    #[arg(long = "mode-reach", value_name = "DISTANCE")]
    pub(crate) mode_reach: Option<f64>,
}

/// A second equation sharing a separation constant (shared by `spectrum` and `scan`).
#[derive(Args, Debug)]
pub(crate) struct CoupleArgs {
    /// An angular equation sharing the separation constant (e.g. the spin-weighted spheroidal equation for Kerr).
    #[arg(long = "couple", value_name = "ANGULAR_FILE")]
    pub(crate) couple: Option<String>,
    /// A link between the equations, 'NAME = EXPR' (repeatable), e.g. 'lam = A + c^2 - 2*a*m*omega' and 'c = a*omega'.
    #[arg(long = "link", value_name = "NAME = EXPR", requires = "couple")]
    pub(crate) link: Vec<String>,
    /// Which angular eigenvalue: 0 is the lowest (for the spin-weighted spheroidal equation l − max(|m|, |s|)); at most 100.
    #[arg(long = "angular-index", value_name = "J", default_value_t = 0, requires = "couple")]
    pub(crate) angular_index: usize,
    /// A first value of the angular eigenvalue (default: from the terminating series where the linked parameters vanish).
    #[arg(long = "angular-guess", value_name = "VALUE", allow_hyphen_values = true, requires = "couple")]
    pub(crate) angular_guess: Option<String>,
}

impl CoupleArgs {
    /// The option values a coupled solve's errors may point into.
    pub(crate) fn option_texts(&self) -> Vec<(String, String)> {
        let mut extra: Vec<(String, String)> = self.angular_guess.iter().map(|g| ("--angular-guess".to_string(), g.clone())).collect();
        // A failing link is reported against its own text.
        extra.extend(self.link.iter().enumerate().map(|(i, l)| (super::flag(link_option(i)), l.clone())));
        extra
    }

    /// The library's request for the angular side (its source beside it),
    /// when `--couple` is given; `guess` is the parsed `--angular-guess`.
    pub(crate) fn request(
        &self,
        radial: &crate::algebra::Field,
        guess: Option<Complex64>,
    ) -> Result<Option<(super::Source, CoupleRequest)>, Failure> {
        Ok(self.read(radial)?.map(|(asrc, ared, links)| {
            let c = CoupleRequest { angular: ared, name: asrc.name.clone(), links, link_texts: self.link.clone(), index: self.angular_index, guess };
            (asrc, c)
        }))
    }

    /// The angular equation and the parsed links, when `--couple` is given.
    pub(crate) fn read(
        &self,
        radial: &crate::algebra::Field,
    ) -> Result<Option<(super::Source, crate::ode::Reduction, Vec<crate::solve::coupled::Link>)>, Failure> {
        let Some(path) = &self.couple else { return Ok(None) };
        let (asrc, ared) = read_angular(path)?;
        let links = parse_links(self, radial, &ared.field)?;
        Ok(Some((asrc, ared, links)))
    }
}

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    Error::new(ErrorKind::Usage, msg).at(crate::syntax::Span::new(0, len)).in_named(option).into()
}

pub(crate) fn run(a: &SpectrumArgs) -> u8 {
    let mut extra = vec![("--at".to_string(), a.at.clone()), ("--overtones".to_string(), a.overtones.clone())];
    extra.extend(a.guess.iter().map(|g| ("--guess".to_string(), g.clone())));
    extra.extend(a.polynomial_degree.iter().map(|g| ("--polynomial-degree".to_string(), g.clone())));
    extra.extend(a.plot.iter().map(|p| ("--plot".to_string(), p.clone())));
    extra.extend(a.mode_plot.iter().map(|p| ("--mode-plot".to_string(), p.clone())));
    extra.extend(a.couple.option_texts());
    run_command(&a.input, &extra, |src| compute(a, src))
}

/// The library's request from the arguments (option text parsed here, once).
fn request(
    a: &SpectrumArgs,
    red: &crate::ode::Reduction,
    overtones: (u32, u32),
    guess: Option<Complex64>,
    couple: Option<CoupleRequest>,
) -> Result<SpectrumRequest, Failure> {
    let values = parse_assignments(&a.at, "--at")?;
    Ok(SpectrumRequest {
        problem: a.boundary.unwrap_or_else(|| Problem::natural(red)),
        ends: match &a.ends {
            Some(t) => Some(super::points::read_ends(t).map_err(|e| e.in_named("--ends"))?),
            None => None,
        },
        frequency: a.input.frequency_name(),
        values,
        overtones,
        method: a.method,
        guess,
        tol: a.tol,
        wkb_order: a.wkb_order,
        eikonal_param: a.eikonal_param.clone(),
        mode_functions: (a.mode_functions.is_some() || a.mode_plot.is_some()).then_some(a.mode_reach),
        couple,
        // The closed form goes into text and JSON (CSV stays one line per mode).
        closed_form: a.format != DocFormat::Csv,
        polynomial: match a.polynomial_degree.as_deref() {
            None => None,
            Some("lowest") => Some(crate::solve::polynomial::Degree::Lowest),
            Some(t) => match t.trim().parse::<u32>() {
                Ok(n) if n <= crate::solve::polynomial::MAX_DEGREE => Some(crate::solve::polynomial::Degree::Exactly(n)),
                _ => {
                    return Err(usage(
                        format!("expected a degree 0..={} or 'lowest'", crate::solve::polynomial::MAX_DEGREE),
                        "--polynomial-degree",
                        t.len(),
                    ))
                }
            },
        },
    })
}

fn compute(a: &SpectrumArgs, src: &super::Source) -> Result<String, Failure> {
    // Options are checked before any work (the same rules as in `scan`).
    super::options::tolerance(a.tol)?;
    let overtones = super::options::overtones(&a.overtones)?;
    super::options::angular_index(a.couple.angular_index)?;
    let guess = super::values::parse_seed(a.guess.as_deref(), "--guess")?;
    let angular_guess = super::values::parse_seed(a.couple.angular_guess.as_deref(), "--angular-guess")?;
    if let Some(p) = &a.mode_functions {
        super::mode_file::check_path(p)?;
    }
    if let Some(p) = &a.plot {
        super::options::plot_path(p)?;
    }
    if let Some(p) = &a.mode_plot {
        super::options::picture_path(p, "--mode-plot")?;
    }
    let red = a.input.reduce(src)?;
    let (asrc, couple) = match a.couple.request(&red.field, angular_guess)? {
        Some((asrc, c)) => (Some(asrc), Some(c)),
        None => (None, None),
    };
    let req = request(a, &red, overtones, guess, couple)?;
    if let Some(text) = &a.region {
        let (out, modes, fname) = super::region::region_modes(text, a.grid, a.format, &src.name, &red, &req)?;
        write_plot(a, &fname, &modes)?;
        return Ok(out);
    }
    let report = crate::solve::request::spectrum(&red, &req).map_err(|e| match (&e.origin, &asrc) {
        // Errors of the angular equation are rendered against its own text.
        (Origin::Option(o), Some(asrc)) if *o == ANGULAR_ORIGIN => {
            let mut e = e;
            e.origin = Origin::Input;
            angular_failure(e, asrc)
        }
        // An option error without a place points at the whole option.
        _ if e.span.is_none() && super::origin_flag(&e.origin).as_deref() == Some("--at") => usage(e.message.clone(), "--at", a.at.len()),
        _ => Failure::from(e),
    })?;
    if let (Some(path), Some(f)) = (&a.mode_functions, &report.mode_functions) {
        super::mode_file::write(path, &red.var, f.normalisation, &f.modes)?;
    }
    if let (Some(path), Some(f)) = (&a.mode_plot, &report.mode_functions) {
        super::mode_file::plot(path, &red.var, &format!("mode functions ({})", src.name), &f.modes)?;
    }
    write_plot(a, &report.frequency, &report.plane_modes())?;
    Ok(match a.format {
        DocFormat::Json => format!("{}\n", serde_json::to_string_pretty(&crate::emit::spectrum::json(&report)).unwrap_or_default()),
        DocFormat::Csv => crate::emit::spectrum::csv(&report),
        DocFormat::Text => crate::emit::spectrum::text(&report, &src.name),
    })
}

/// With `--plot`: the modes in the complex plane, the fixed parameters in the title.
fn write_plot(a: &SpectrumArgs, freq: &str, modes: &[crate::solve::plot::PlaneMode]) -> Result<(), Failure> {
    let Some(path) = &a.plot else { return Ok(()) };
    let fixed = a.at.split(',').map(str::trim).filter(|t| !t.is_empty()).collect::<Vec<_>>().join(", ");
    crate::solve::plot::plot_plane(std::path::Path::new(path), modes, freq, &fixed)
        .map_err(|e| Failure::Plain(format!("error: cannot write the plot {path}: {e}"), 1))
}

pub(crate) use crate::solve::request::{for_angular_only, link_option, linked_radial};

/// Reads and reduces the angular equation of `--couple`; its errors are
/// rendered against its own text.
fn read_angular(path: &str) -> Result<(super::Source, crate::ode::Reduction), Failure> {
    let src = super::read_source(path)?;
    match crate::ode::reduce(&src.input(), &crate::ode::ReduceOptions::default()) {
        Ok(r) => Ok((src, r)),
        Err(e) => {
            let (msg, code) = super::report(&Failure::Lib(e), Some(&src), None, &[]);
            Err(Failure::Plain(msg, code))
        }
    }
}

/// Parses every `--link` over the joint names of the two equations.
fn parse_links(a: &CoupleArgs, radial: &crate::algebra::Field, angular: &crate::algebra::Field) -> Result<Vec<crate::solve::coupled::Link>, Failure> {
    if a.link.is_empty() {
        return Err(Error::new(ErrorKind::Usage, "--couple needs at least one --link tying the separation constant to the angular eigenvalue").into());
    }
    let names = crate::solve::coupled::joint_names(radial, angular);
    let joint = crate::algebra::Field::new(names, radial.limits().clone())?;
    let mut out: Vec<crate::solve::coupled::Link> = Vec::new();
    for (i, text) in a.link.iter().enumerate() {
        let l = super::points::read_link(text, &joint, radial, angular).map_err(|e| e.in_option(link_option(i)))?;
        if out.iter().any(|o| o.target == l.target) {
            return Err(Error::new(ErrorKind::Usage, format!("'{}' is linked twice", l.target)).in_option(link_option(i)).into());
        }
        out.push(l);
    }
    Ok(out)
}

/// An error of the angular equation, rendered against its own text.
pub(crate) fn angular_failure(e: Error, asrc: &super::Source) -> Failure {
    let (msg, code) = super::report(&Failure::Lib(e), Some(asrc), None, &[]);
    Failure::Plain(msg, code)
}
