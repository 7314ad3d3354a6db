//! Validation of the options several subcommands share, done once before
//! any work starts: the same rules and messages in every subcommand, each
//! error naming its option (and pointing into its text where it can).

use super::Failure;
use crate::algebra::Rat;
use crate::error::{Error, ErrorKind};
use crate::syntax::Span;

/// The largest overtone (or level) number: the n-th inversion of the
/// continued fraction costs work growing with n, and no published table
/// goes further.
pub(crate) const MAX_OVERTONE: u32 = 200;

/// The most overtones one run may ask for (A..B with B − A below this).
pub(crate) const MAX_OVERTONE_COUNT: u32 = 51;

/// The largest angular eigenvalue index (`--angular-index`): the angular
/// continued fraction's inversion grows with the index.
pub(crate) const MAX_ANGULAR_INDEX: usize = 100;

/// The most points of a `--vary` grid.
pub(crate) const MAX_GRID_POINTS: usize = 100_000;

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    Error::new(ErrorKind::Usage, msg).at(Span::new(0, len.max(1))).in_named(option).into()
}

/// `--tol`: a relative tolerance strictly between 0 and 10⁻².
pub(crate) fn tolerance(tol: f64) -> Result<f64, Failure> {
    if tol.is_finite() && tol > 0.0 && tol < 1e-2 {
        Ok(tol)
    } else {
        Err(Error::new(ErrorKind::Usage, format!("{tol:e} is not a sensible relative tolerance (between 0 and 1e-2)")).in_named("--tol").into())
    }
}

/// `--overtones`: one number or an inclusive range `A..B` with
/// A ≤ B ≤ [`MAX_OVERTONE`] and at most [`MAX_OVERTONE_COUNT`] overtones.
pub(crate) fn overtones(text: &str) -> Result<(u32, u32), Failure> {
    let bad = |msg: &str| usage(msg, "--overtones", text.len());
    let num = |t: &str| -> Result<u32, Failure> {
        let t = t.trim();
        if t.is_empty() || !t.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad("expected an overtone number or a range such as 0..7"));
        }
        match t.parse::<u32>() {
            Ok(n) if n <= MAX_OVERTONE => Ok(n),
            _ => Err(bad(&format!("overtone numbers go up to {MAX_OVERTONE}"))),
        }
    };
    let (a, b) = match text.split_once("..") {
        Some((x, y)) => (num(x)?, num(y)?),
        None => {
            let n = num(text)?;
            (n, n)
        }
    };
    if a > b {
        return Err(bad("expected a range A..B with A ≤ B"));
    }
    if b - a >= MAX_OVERTONE_COUNT {
        return Err(bad(&format!("at most {MAX_OVERTONE_COUNT} overtones in one run")));
    }
    Ok((a, b))
}

/// `--angular-index`: at most [`MAX_ANGULAR_INDEX`].
pub(crate) fn angular_index(j: usize) -> Result<usize, Failure> {
    if j <= MAX_ANGULAR_INDEX {
        Ok(j)
    } else {
        Err(usage(format!("angular indices go up to {MAX_ANGULAR_INDEX}"), "--angular-index", j.to_string().len()))
    }
}

/// `--vary NAME=A:B:STEP`: exactly three exact decimals with STEP > 0 and
/// A ≤ B, at most [`MAX_GRID_POINTS`] points; NAME must be a parameter of
/// the equation (`names`, index 0 the variable) other than the frequency
/// (index `freq`). Returns the name, its field index and the grid.
pub(crate) fn vary(text: &str, names: &[String], freq: usize) -> Result<(String, usize, Vec<Rat>), Failure> {
    let bad = |msg: &str| usage(msg, "--vary", text.len());
    let Some((vname, spec)) = text.split_once('=') else { return Err(bad("expected NAME=A:B:STEP")) };
    let vname = super::values::param_name(vname);
    let vname = vname.as_str();
    let Some(vary) = names.iter().skip(1).position(|n| n == vname).map(|i| i + 1) else {
        return Err(bad(&format!("'{vname}' is not a parameter of the equation")));
    };
    if vary == freq {
        return Err(bad(&format!("'{vname}' is the frequency being solved for; vary another parameter")));
    }
    let fields: Vec<&str> = spec.split(':').collect();
    if fields.len() != 3 {
        return Err(bad(&format!("expected NAME=A:B:STEP (three fields), found {} field{}", fields.len(), if fields.len() == 1 { "" } else { "s" })));
    }
    let mut parts = Vec::new();
    for f in fields {
        match super::values::read_value(f) {
            Ok(v) if v.im.is_zero() => parts.push(v.re),
            Ok(_) => return Err(bad(&format!("'{}' is not real", f.trim()))),
            Err(m) => return Err(bad(&m)),
        }
    }
    let (x0, x1, dx) = (&parts[0], &parts[1], &parts[2]);
    if dx.is_zero() || dx.numer().is_negative() {
        return Err(bad("the step must be positive"));
    }
    if x0.sub(x1).numer().signum() > 0 {
        return Err(bad("the grid is empty: its start is above its end"));
    }
    // The count is bounded before the grid is built.
    let count = x1.sub(x0).div(dx).map(|q| q.to_f64()).unwrap_or(f64::INFINITY);
    if !(count < MAX_GRID_POINTS as f64) {
        return Err(bad(&format!("the grid has more than {MAX_GRID_POINTS} points")));
    }
    let g = crate::solve::scan::grid(x0, x1, dx).ok_or_else(|| bad(&format!("the grid has more than {MAX_GRID_POINTS} points")))?;
    Ok((vname.to_string(), vary, g))
}

/// An output path (`--plot`, `-o`) checked writable before the work starts:
/// an existing file is opened for writing (not truncated), a new one is
/// created and removed again.
/// A `--plot` path: FILE.svg or FILE.png, writable (checked before any work).
pub(crate) fn plot_path(path: &str) -> Result<(), Failure> {
    picture_path(path, "--plot")
}

/// A picture's path given with `option`: SVG or PNG, writable.
pub(crate) fn picture_path(path: &str, option: &str) -> Result<(), Failure> {
    let lower = path.to_ascii_lowercase();
    if !(lower.ends_with(".svg") || lower.ends_with(".png")) {
        return Err(crate::error::Error::new(crate::error::ErrorKind::Usage, "the plot is written as SVG or PNG: give FILE.svg or FILE.png")
            .at(crate::syntax::Span::new(0, path.len().max(1)))
            .in_named(option)
            .into());
    }
    writable(path, option)
}

pub(crate) fn writable(path: &str, option: &str) -> Result<(), Failure> {
    let p = std::path::Path::new(path);
    let fail = |e: std::io::Error| Failure::Plain(format!("{option}: error: cannot write {path:?}: {e}"), 2);
    if path.is_empty() {
        return Err(Failure::Plain(format!("{option}: error: the path is empty"), 2));
    }
    if p.is_dir() {
        return Err(Failure::Plain(format!("{option}: error: {path:?} is a directory"), 2));
    }
    let existed = p.exists();
    std::fs::OpenOptions::new().write(true).create(true).truncate(false).open(p).map_err(fail)?;
    if !existed {
        let _ = std::fs::remove_file(p);
    }
    Ok(())
}

/// `--shard K/N`, `auto` or `auto/N`: shard K (1-based) of N over a walk
/// of `len` points, 1 ≤ K ≤ N ≤ `len`. `auto` takes K and N from the
/// job-array variables of a batch scheduler (`env` looks a variable up):
/// Slurm (`SLURM_ARRAY_TASK_ID`, `_MIN`, `_STEP`, `_COUNT`), Grid Engine
/// (`SGE_TASK_ID`, `_FIRST`, `_LAST`, `_STEPSIZE`) or AWS Batch
/// (`AWS_BATCH_JOB_ARRAY_INDEX` from 0, `AWS_BATCH_JOB_ARRAY_SIZE`);
/// `auto/N` takes only K, also from LSF (`LSB_JOBINDEX`), PBS
/// (`PBS_ARRAY_INDEX`, Torque's `PBS_ARRAYID`), numbered from 1, or a
/// Kubernetes indexed job (`JOB_COMPLETION_INDEX`, from 0).
pub(crate) fn shard(text: &str, len: usize, env: &dyn Fn(&str) -> Option<String>) -> Result<(usize, usize), Failure> {
    let bad = |msg: String| usage(msg, "--shard", text.len());
    let int = |v: &str| -> Result<i64, Failure> {
        let t = env(v).unwrap_or_default();
        t.trim().parse().map_err(|_| bad(format!("the job-array variable {v} is {t:?}, not a whole number")))
    };
    let set = |v: &str| env(v).is_some_and(|t| !t.trim().is_empty() && t.trim() != "undefined");
    // (K, N when the scheduler says it, the variable read)
    let from_env = || -> Result<(i64, Option<i64>, &'static str), Failure> {
        if set("SLURM_ARRAY_TASK_ID") {
            let step = if set("SLURM_ARRAY_TASK_STEP") { int("SLURM_ARRAY_TASK_STEP")?.max(1) } else { 1 };
            let min = if set("SLURM_ARRAY_TASK_MIN") { int("SLURM_ARRAY_TASK_MIN")? } else { 0 };
            let n = if set("SLURM_ARRAY_TASK_COUNT") { Some(int("SLURM_ARRAY_TASK_COUNT")?) } else { None };
            return Ok(((int("SLURM_ARRAY_TASK_ID")? - min) / step + 1, n, "SLURM_ARRAY_TASK_ID"));
        }
        if set("SGE_TASK_ID") {
            let step = if set("SGE_TASK_STEPSIZE") { int("SGE_TASK_STEPSIZE")?.max(1) } else { 1 };
            let first = if set("SGE_TASK_FIRST") { int("SGE_TASK_FIRST")? } else { 1 };
            let n = if set("SGE_TASK_LAST") { Some((int("SGE_TASK_LAST")? - first) / step + 1) } else { None };
            return Ok(((int("SGE_TASK_ID")? - first) / step + 1, n, "SGE_TASK_ID"));
        }
        if set("AWS_BATCH_JOB_ARRAY_INDEX") {
            let n = if set("AWS_BATCH_JOB_ARRAY_SIZE") { Some(int("AWS_BATCH_JOB_ARRAY_SIZE")?) } else { None };
            return Ok((int("AWS_BATCH_JOB_ARRAY_INDEX")? + 1, n, "AWS_BATCH_JOB_ARRAY_INDEX"));
        }
        for v in ["LSB_JOBINDEX", "PBS_ARRAY_INDEX", "PBS_ARRAYID"] {
            // LSF sets LSB_JOBINDEX to 0 outside a job array.
            if set(v) && !(v == "LSB_JOBINDEX" && int(v)? == 0) {
                return Ok((int(v)?, None, v));
            }
        }
        if set("JOB_COMPLETION_INDEX") {
            return Ok((int("JOB_COMPLETION_INDEX")? + 1, None, "JOB_COMPLETION_INDEX"));
        }
        Err(bad("no job-array variable is set (SLURM_ARRAY_TASK_ID, SGE_TASK_ID, AWS_BATCH_JOB_ARRAY_INDEX, LSB_JOBINDEX, PBS_ARRAY_INDEX, PBS_ARRAYID, JOB_COMPLETION_INDEX): give K/N".into()))
    };
    let number = |t: &str| -> Result<i64, Failure> { t.trim().parse().map_err(|_| bad("expected K/N, auto or auto/N (e.g. 2/4)".into())) };
    let (k, n, source) = match text.trim().split_once('/') {
        None if text.trim() == "auto" => {
            let (k, n, v) = from_env()?;
            let Some(n) = n else { return Err(bad(format!("{v} gives the index but not the count of the job array: write --shard auto/N"))) };
            (k, n, Some(v))
        }
        Some((k, n)) if k.trim() == "auto" => {
            let (k, _, v) = from_env()?;
            (k, number(n)?, Some(v))
        }
        Some((k, n)) => (number(k)?, number(n)?, None),
        None => return Err(bad("expected K/N, auto or auto/N (e.g. 2/4)".into())),
    };
    if k < 1 || k > n || n < 1 || n as usize > len.max(1) {
        let from = source.map(|v| format!(" (K from {v})")).unwrap_or_default();
        return Err(bad(format!("shard {k}/{n}{from}: expected 1 ≤ K ≤ N ≤ {}, the number of points", len.max(1))));
    }
    Ok((k as usize, n as usize))
}
