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
    let mut tables = Vec::new();
    for path in &a.files {
        let text = read_file(path)?;
        tables.push((path.as_str(), read(path, &text, None)?));
    }
    let (first_path, first) = &tables[0];
    let layout = first.layout;
    let h0 = first.header.clone();
    let mut problems: Vec<String> = Vec::new();
    for (path, t) in &tables[1..] {
        let h = &t.header;
        if t.layout != layout {
            problems.push(format!("{path}: the other format than {first_path} (CSV and JSON lines are not merged together)"));
        } else if h.survey != h0.survey || h.points != h0.points || h.parameters != h0.parameters || h.frequency != h0.frequency {
            problems.push(format!(
                "{path}: another survey than {first_path} (survey={} with {} points, against survey={} with {} points): the equation or an option that changes the numbers differs",
                h.survey, h.points, h0.survey, h0.points
            ));
        }
    }
    if !problems.is_empty() {
        return Err(Failure::Plain(problems.iter().map(|p| format!("error: {p}")).collect::<Vec<_>>().join("\n"), 2));
    }
    let n = h0.points;
    // Every point exactly once, and of a file that claims it.
    let mut owner: Vec<Option<(usize, usize)>> = vec![None; n];
    let mut modes: Option<(usize, usize, usize)> = None;
    // (first point, end, first file, second file, their lines at the first point)
    let mut twice: Vec<(usize, usize, usize, usize, usize, usize)> = Vec::new();
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
                    Some(t) if t.1 == r.index && t.2 == g && t.3 == f => t.1 = r.index + 1,
                    _ => twice.push((r.index, r.index + 1, g, f, tables[g].1.rows[j].line, r.line)),
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
    for (s, e, g, f, lg, lf) in &twice {
        let what = if e - s == 1 { format!("point {s} is") } else { format!("points {s}..{} ({} points) are", e - 1, e - s) };
        let same = if tables[*g].0 == tables[*f].0 { " (the same file given twice?)" } else { "" };
        problems.push(format!("{what} there twice: {}:{lg} and {}:{lf}{same}", tables[*g].0, tables[*f].0));
    }
    let mut missing: Vec<(usize, usize)> = Vec::new();
    for (i, o) in owner.iter().enumerate() {
        if o.is_none() {
            match missing.last_mut() {
                Some(r) if r.1 == i => r.1 = i + 1,
                _ => missing.push((i, i + 1)),
            }
        }
    }
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
    // The modes across every boundary between two files.
    let row = |i: usize| -> Option<&Row> { owner.get(i).copied().flatten().map(|(f, k)| &tables[f].1.rows[k]) };
    let mut unjudged = Vec::new();
    if missing.is_empty() {
        for i in 1..n {
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
                        t.as_ref()
                            .map(|w| w.iter().map(|z| super::values::fmt_complex(z.re, z.im)).collect::<Vec<_>>().join(", "))
                            .unwrap_or_default()
                    };
                    problems.push(format!(
                        "{path}:{}: the modes jump at point {i} ({}), the first of its file: {} after {} at point {} — another mode; solve that shard again from a --guess near the neighbour's value",
                        r.line,
                        values_text(&h0, &r.values),
                        show(c.1),
                        show(a.1),
                        i - 1
                    ));
                }
                Join::Unjudged => unjudged.push(i),
            }
        }
    }
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
    let mut out = header.text(layout);
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
    let note = if unjudged.is_empty() {
        String::new()
    } else {
        let listed: Vec<String> = unjudged.iter().take(MAX_LISTED).map(|i| i.to_string()).collect();
        let more = if unjudged.len() > MAX_LISTED { format!(" and {} more", unjudged.len() - MAX_LISTED) } else { String::new() };
        format!(
            "; the continuity at point{} {}{more} is not judged (a side unconverged, or the walk turns there)",
            if unjudged.len() == 1 { "" } else { "s" },
            listed.join(", ")
        )
    };
    err_line(&format!("merged {} files: all {n} points, each once, the modes continuous across every boundary{note}", tables.len()));
    Ok(())
}

/// `name=value, …` of a point.
fn values_text(h: &Header, values: &[f64]) -> String {
    h.parameters.iter().zip(values).map(|(p, v)| format!("{p}={v}")).collect::<Vec<_>>().join(", ")
}
