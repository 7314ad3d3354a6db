//! `canonode merge`: the tables of a sharded survey (`scan --shard … -o`)
//! put back into one, after checking that they belong to the same survey,
//! that every point is there exactly once, and that the modes continue
//! across every boundary between two files (a jump to another mode is
//! reported with its point). Nothing is written when a check fails.

use super::table::{read, read_file, Header, Row};
use super::{emit, err_line, Failure};
use crate::solve::scan::{join, Join};
use clap::Args;
use std::io::Write;

/// Arguments of `merge`.
#[derive(Args, Debug)]
pub(crate) struct MergeArgs {
    /// The tables of the shards (CSV or JSON lines, as `scan` writes them), in any order.
    #[arg(value_name = "FILE", required = true)]
    files: Vec<String>,
    /// Write the merged table to FILE instead of standard output.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    output: Option<String>,
}

/// The most problems listed before the rest are counted.
const MAX_LISTED: usize = 20;

pub(crate) fn run(a: &MergeArgs) -> u8 {
    match merge(a) {
        Ok(()) => 0,
        Err(Failure::Plain(m, code)) => {
            if !m.is_empty() {
                err_line(&m);
            }
            code
        }
        Err(Failure::Lib(e)) => {
            err_line(&format!("error: {}", e.message));
            2
        }
    }
}

fn merge(a: &MergeArgs) -> Result<(), Failure> {
    if let Some(path) = &a.output {
        super::options::writable(path, "-o")?;
    }
    let mut tables: Vec<Shard> = Vec::new();
    for path in &a.files {
        let text = read_file(path)?;
        tables.push((path.as_str(), read(path, &text, None)?));
    }
    same_survey(&tables)?;
    let h0 = tables[0].1.header.clone();
    let n = h0.points;
    let mut problems: Vec<String> = Vec::new();
    let owner = owners(&tables, n, &mut problems);
    let missing = missing_points(&owner);
    for (s, e) in &missing {
        let which = tables.iter().find(|(_, t)| t.header.rows.start <= *s && *s < t.header.rows.end);
        let why = match which {
            Some((path, t)) => {
                format!("{path} (shard {}/{}) stops before them: a run that did not finish (go on with --resume)", t.header.shard.0, t.header.shard.1)
            }
            None => "no file given holds them: a shard is missing".to_string(),
        };
        let what = if e - s == 1 { format!("point {s} is missing") } else { format!("points {s}..{} ({} points) are missing", e - 1, e - s) };
        problems.push(format!("{what}: {why}"));
    }
    let row = |i: usize| -> Option<&Row> { owner.get(i).copied().flatten().map(|(f, k)| &tables[f].1.rows[k]) };
    let unjudged = if missing.is_empty() { boundaries(&tables, &owner, &mut problems) } else { Vec::new() };
    if !problems.is_empty() {
        let more = problems.len().saturating_sub(MAX_LISTED);
        let mut msg: Vec<String> = problems.iter().take(MAX_LISTED).map(|p| format!("error: {p}")).collect();
        if more > 0 {
            msg.push(format!("error: … and {more} more problems"));
        }
        msg.push(format!("error: nothing merged ({} files, {} of {n} points present)", tables.len(), owner.iter().filter(|o| o.is_some()).count()));
        return Err(Failure::Plain(msg.join("\n"), 1));
    }
    let header = Header { shard: (1, 1), rows: 0..n, ..h0.clone() };
    let mut out = header.text(tables[0].1.layout);
    for i in 0..n {
        out.push_str(&row(i).expect("every point is present").text);
    }
    match &a.output {
        Some(path) => {
            let mut f = std::fs::File::create(path).map_err(|e| Failure::Plain(format!("-o: error: cannot write {path:?}: {e}"), 2))?;
            f.write_all(out.as_bytes()).map_err(|e| Failure::Plain(format!("-o: error: cannot write {path:?}: {e}"), 1))?;
        }
        None => emit(&out)?,
    }
    err_line(&format!(
        "merged {} files: all {n} points, each once, the modes continuous across every boundary{}",
        tables.len(),
        unjudged_note(&unjudged)
    ));
    Ok(())
}

/// A table of a shard with the path it was read from.
type Shard<'a> = (&'a str, super::table::Table);

/// Refuses tables of different layouts or of another survey than the first.
fn same_survey(tables: &[Shard]) -> Result<(), Failure> {
    let (first_path, first) = &tables[0];
    let h0 = &first.header;
    let mut problems: Vec<String> = Vec::new();
    for (path, t) in &tables[1..] {
        let h = &t.header;
        if t.layout != first.layout {
            problems.push(format!("{path}: the other format than {first_path} (CSV and JSON lines are not merged together)"));
        } else if h.survey != h0.survey || h.points != h0.points || h.parameters != h0.parameters || h.frequency != h0.frequency {
            problems.push(format!(
                "{path}: another survey than {first_path} (survey={} with {} points, against survey={} with {} points): the equation or an option that changes the numbers differs",
                h.survey, h.points, h0.survey, h0.points
            ));
        }
    }
    if problems.is_empty() {
        Ok(())
    } else {
        Err(Failure::Plain(problems.iter().map(|p| format!("error: {p}")).collect::<Vec<_>>().join("\n"), 2))
    }
}

/// A run of points held by two files: the points start..end, the two
/// files' places in the list and their lines at the first point.
struct HeldTwice {
    start: usize,
    end: usize,
    first_file: usize,
    second_file: usize,
    first_line: usize,
    second_line: usize,
}

/// For every point, the (file, row) that holds it first; points outside
/// their shard, points held twice and differing mode counts are problems.
fn owners(tables: &[Shard], n: usize, problems: &mut Vec<String>) -> Vec<Option<(usize, usize)>> {
    let mut owner: Vec<Option<(usize, usize)>> = vec![None; n];
    let mut modes: Option<(usize, usize, usize)> = None;
    let mut twice: Vec<HeldTwice> = Vec::new();
    for (f, (path, t)) in tables.iter().enumerate() {
        for (k, r) in t.rows.iter().enumerate() {
            if r.index >= n || !t.header.rows.contains(&r.index) {
                problems.push(format!(
                    "{path}:{}: point {} is outside the points {}..{} of its shard",
                    r.line, r.index, t.header.rows.start, t.header.rows.end
                ));
                continue;
            }
            match owner[r.index] {
                Some((g, j)) => match twice.last_mut() {
                    // Runs of points held twice by the same two files are reported as one range.
                    Some(t) if t.end == r.index && t.first_file == g && t.second_file == f => t.end = r.index + 1,
                    _ => twice.push(HeldTwice {
                        start: r.index,
                        end: r.index + 1,
                        first_file: g,
                        second_file: f,
                        first_line: tables[g].1.rows[j].line,
                        second_line: r.line,
                    }),
                },
                None => owner[r.index] = Some((f, k)),
            }
            if r.modes > 0 {
                match modes {
                    None => modes = Some((r.modes, f, k)),
                    Some((m, g, j)) if m != r.modes => problems.push(format!(
                        "{path}:{}: point {} has {} modes, {}:{} has {m} (different --overtones?)",
                        r.line, r.index, r.modes, tables[g].0, tables[g].1.rows[j].line
                    )),
                    Some(_) => {}
                }
            }
        }
    }
    for HeldTwice { start: s, end: e, first_file: g, second_file: f, first_line: lg, second_line: lf } in &twice {
        let what = if e - s == 1 { format!("point {s} is") } else { format!("points {s}..{} ({} points) are", e - 1, e - s) };
        let same = if tables[*g].0 == tables[*f].0 { " (the same file given twice?)" } else { "" };
        problems.push(format!("{what} there twice: {}:{lg} and {}:{lf}{same}", tables[*g].0, tables[*f].0));
    }
    owner
}

/// The runs start..end of points no file holds.
fn missing_points(owner: &[Option<(usize, usize)>]) -> Vec<(usize, usize)> {
    let mut missing: Vec<(usize, usize)> = Vec::new();
    for (i, o) in owner.iter().enumerate() {
        if o.is_none() {
            match missing.last_mut() {
                Some(r) if r.1 == i => r.1 = i + 1,
                _ => missing.push((i, i + 1)),
            }
        }
    }
    missing
}

/// The modes across every boundary between two files: a jump is a
/// problem; returns the points where the continuity is not judged.
fn boundaries(tables: &[Shard], owner: &[Option<(usize, usize)>], problems: &mut Vec<String>) -> Vec<usize> {
    let h0 = &tables[0].1.header;
    let row = |i: usize| -> Option<&Row> { owner.get(i).copied().flatten().map(|(f, k)| &tables[f].1.rows[k]) };
    let mut unjudged = Vec::new();
    for i in 1..owner.len() {
        let (Some(a_), Some(c_)) = (owner[i - 1], owner[i]) else { continue };
        if a_.0 == c_.0 {
            continue;
        }
        let seen = |j: usize| row(j).map(|r| (&r.values[..], &r.trail));
        let (Some(a), Some(c)) = (seen(i - 1), seen(i)) else { continue };
        match join(i.checked_sub(2).and_then(seen), a, c, seen(i + 1)) {
            Join::Continues => {}
            Join::Jumps => {
                let r = row(i).expect("owned");
                let path = tables[c_.0].0;
                let show = |t: &crate::solve::scan::Trail| {
                    t.as_ref().map(|w| w.iter().map(|z| super::values::fmt_complex(z.re, z.im)).collect::<Vec<_>>().join(", ")).unwrap_or_default()
                };
                problems.push(format!(
                    "{path}:{}: the modes jump at point {i} ({}), the first of its file: {} after {} at point {} — another mode; solve that shard again from a --guess near the neighbour's value",
                    r.line,
                    values_text(h0, &r.values),
                    show(c.1),
                    show(a.1),
                    i - 1
                ));
            }
            Join::Unjudged => unjudged.push(i),
        }
    }
    unjudged
}

/// The closing note's words on the points whose continuity is not judged.
fn unjudged_note(unjudged: &[usize]) -> String {
    if unjudged.is_empty() {
        return String::new();
    }
    let listed: Vec<String> = unjudged.iter().take(MAX_LISTED).map(|i| i.to_string()).collect();
    let more = if unjudged.len() > MAX_LISTED { format!(" and {} more", unjudged.len() - MAX_LISTED) } else { String::new() };
    format!(
        "; the continuity at point{} {}{more} is not judged (a side unconverged, or the walk turns there)",
        if unjudged.len() == 1 { "" } else { "s" },
        listed.join(", ")
    )
}

/// `name=value, …` of a point.
fn values_text(h: &Header, values: &[f64]) -> String {
    h.parameters.iter().zip(values).map(|(p, v)| format!("{p}={v}")).collect::<Vec<_>>().join(", ")
}
