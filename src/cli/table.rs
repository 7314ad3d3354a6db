//! The streamed tables of `scan` (and what `merge` reads): one header, then
//! every point as soon as it is final, in walk order. Reading a table back
//! gives each point's continuation state, so that a run can resume from
//! its own output and `merge` can check shards against each other.
//!
//! CSV: a first line `# canonode scan survey=ID points=N shard=K/S rows=A..B
//! frequency=NAME` (read as a comment by numpy, pandas with `comment='#'`
//! and gnuplot), the column names `index,P1,…,n,re,im,converged,check_re,
//! check_im,reason`, then one line per point and overtone (one line with
//! `n` empty for a point that failed). JSON lines: a first object
//! {`survey`, `points`, `shard` [K, S], `rows` [A, B], `parameters`,
//! `frequency`, `angular`}, then one object per point {`index`, `values`
//! {name: value}, `error`, `modes` [{`n`, `omega`, `converged`, `reason`,
//! `check`, and for a coupled problem `angular`}]}. A coupled problem's CSV
//! has the columns `angular_re,angular_im` (the angular eigenvalue at the
//! mode) before `reason`. `index` is the position in the survey's walk; `survey`
//! identifies the equation and every option that changes a number, so
//! that tables of different surveys are never mixed.

use super::Failure;
use crate::solve::scan::{ScanPoint, Trail};
use num_complex::Complex64;
use serde_json::{json, Value};

/// The streamed formats.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Layout {
    /// Comma-separated values, one line per point and overtone.
    Csv,
    /// JSON lines, one object per point.
    Lines,
}

/// What the first line of a table says.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Header {
    /// The survey's identity (a digest of the equation and the options).
    pub survey: String,
    /// The number of points in the whole walk.
    pub points: usize,
    /// Shard K of S (1/1 for a whole run).
    pub shard: (usize, usize),
    /// The walk positions this table covers.
    pub rows: std::ops::Range<usize>,
    /// The varied parameters.
    pub parameters: Vec<String>,
    /// The frequency's name.
    pub frequency: String,
    /// True for a coupled problem: each mode carries the angular eigenvalue.
    pub angular: bool,
}

/// One point read back from a table.
#[derive(Clone, Debug)]
pub(crate) struct Row {
    /// Position in the walk.
    pub index: usize,
    /// The point's text (its lines, each ending in a newline).
    pub text: String,
    /// The varied parameters' values.
    pub values: Vec<f64>,
    /// Its continuation state.
    pub trail: Trail,
    /// The number of modes (0 for a point that failed).
    pub modes: usize,
    /// The line of the table where the point starts (1-based).
    pub line: usize,
}

impl Header {
    /// The header's text (with the column line for CSV).
    pub(crate) fn text(&self, layout: Layout) -> String {
        match layout {
            Layout::Csv => format!(
                "# canonode scan survey={} points={} shard={}/{} rows={}..{} frequency={}\nindex,{},n,re,im,converged,check_re,check_im,{}reason\n",
                self.survey,
                self.points,
                self.shard.0,
                self.shard.1,
                self.rows.start,
                self.rows.end,
                self.frequency,
                self.parameters.join(","),
                if self.angular { "angular_re,angular_im," } else { "" }
            ),
            Layout::Lines => format!(
                "{}\n",
                json!({
                    "survey": self.survey,
                    "points": self.points,
                    "shard": [self.shard.0, self.shard.1],
                    "rows": [self.rows.start, self.rows.end],
                    "parameters": self.parameters,
                    "frequency": self.frequency,
                    "angular": self.angular,
                })
            ),
        }
    }
}

/// A number for a table: 17 significant digits after the point, so that
/// reading it back gives the same double.
fn num(x: f64) -> String {
    format!("{x:.17e}")
}

/// The words a converged mode carries in the reason column when its value
/// is direct integration's alone (the continued fraction did not settle
/// on it), so that no reader takes it for a checked one.
fn alone(m: &crate::solve::spectrum::Mode) -> Option<&'static str> {
    (m.method == crate::solve::spectrum::ModeMethod::Integrate)
        .then_some("direct integration alone: the continued fraction did not settle on this mode")
}

/// The text of one point.
pub(crate) fn point_text(p: &ScanPoint, layout: Layout, h: &Header) -> String {
    match layout {
        Layout::Csv => {
            let vals: Vec<String> = p.values.iter().map(|v| v.to_string()).collect();
            let lead = format!("{},{}", p.index, vals.join(","));
            let none = if h.angular { ",," } else { "" };
            let mut o = String::new();
            if let Some(e) = &p.error {
                o.push_str(&format!("{lead},,,,false,,,{none}\"{}\"\n", e.replace('"', "'")));
            }
            for (k, (m, c)) in p.modes.iter().enumerate() {
                let r = &m.root;
                let (cre, cim) = c.map(|c| (num(c.re), num(c.im))).unwrap_or_default();
                let angular = match p.angular.get(k).copied().flatten() {
                    Some(a) if h.angular => format!("{},{},", num(a.re), num(a.im)),
                    _ => none.to_string(),
                };
                if r.converged {
                    let note = alone(m).map(|w| format!("\"{w}\"")).unwrap_or_default();
                    o.push_str(&format!("{lead},{},{},{},true,{cre},{cim},{angular}{note}\n", m.n, num(r.omega.re), num(r.omega.im)));
                } else {
                    o.push_str(&format!("{lead},{},,,false,,,{none}\"{}\"\n", m.n, r.stop.text().replace('"', "'")));
                }
            }
            o
        }
        Layout::Lines => format!("{}\n", point_json(p, h, true)),
    }
}

/// A point as JSON: `values` as an object of the parameters (`keyed`) or
/// the single `value` of a one-parameter scan's document; each mode of a
/// coupled problem with its `angular` eigenvalue.
pub(crate) fn point_json(p: &ScanPoint, h: &Header, keyed: bool) -> Value {
    let ms: Vec<Value> = p
        .modes
        .iter()
        .enumerate()
        .map(|(k, (m, c))| {
            let mut v = json!({
                "n": m.n,
                "omega": if m.root.converged { json!([m.root.omega.re, m.root.omega.im]) } else { Value::Null },
                "converged": m.root.converged,
                "reason": if m.root.converged { alone(m).map_or(Value::Null, |w| Value::String(w.to_string())) } else { Value::String(m.root.stop.text()) },
                "check": c.map(|c| json!({"method": "integrate", "omega": [c.re, c.im]})),
            });
            if h.angular {
                v["angular"] = match p.angular.get(k).copied().flatten() {
                    Some(a) if m.root.converged => json!([a.re, a.im]),
                    _ => Value::Null,
                };
            }
            v
        })
        .collect();
    if keyed {
        let values: serde_json::Map<String, Value> = h.parameters.iter().zip(&p.values).map(|(n, v)| (n.clone(), json!(v))).collect();
        json!({"index": p.index, "values": values, "error": p.error, "modes": ms})
    } else {
        json!({"index": p.index, "value": p.value, "error": p.error, "modes": ms})
    }
}

/// A table read back: its layout, header and complete points, in the
/// order of the file, and the length in bytes of the part that holds them
/// (a killed run may leave a partial point after it).
pub(crate) struct Table {
    pub layout: Layout,
    pub header: Header,
    pub rows: Vec<Row>,
    pub complete_len: usize,
}

/// Reads a table written by `scan`; `overtones` is the number of modes a
/// finished point has (a point with fewer lines at the end of the file was
/// cut off). Errors name the file and the line.
pub(crate) fn read(path: &str, text: &str, overtones: Option<usize>) -> Result<Table, Failure> {
    let bad = |line: usize, msg: &str| Failure::Plain(format!("{path}:{line}: error: {msg}"), 2);
    if text.starts_with('#') {
        read_csv(path, text, overtones, &bad)
    } else if text.starts_with('{') {
        read_lines(text, &bad)
    } else {
        Err(bad(1, "not a table written by canonode scan (CSV or JSON lines with their header)"))
    }
}

/// The lines of `text` with their byte offsets and whether each is complete (ends in a newline).
fn lines(text: &str) -> Vec<(usize, &str, bool)> {
    let mut out = Vec::new();
    let mut at = 0;
    while at < text.len() {
        let (line, done, next) = match text[at..].find('\n') {
            Some(k) => (&text[at..at + k], true, at + k + 1),
            None => (&text[at..], false, text.len()),
        };
        out.push((at, line, done));
        at = next;
    }
    out
}

fn read_csv(path: &str, text: &str, overtones: Option<usize>, bad: &dyn Fn(usize, &str) -> Failure) -> Result<Table, Failure> {
    let ls = lines(text);
    let head = ls.first().map(|l| l.1).unwrap_or_default();
    let mut fields = std::collections::HashMap::new();
    for w in head.trim_start_matches('#').split_whitespace() {
        if let Some((k, v)) = w.split_once('=') {
            fields.insert(k, v);
        }
    }
    let get = |k: &str| fields.get(k).copied().ok_or_else(|| bad(1, &format!("the header has no '{k}=' (not a table written by canonode scan)")));
    let pair = |k: &str, sep: &str| -> Result<(usize, usize), Failure> {
        let v = get(k)?;
        v.split_once(sep).and_then(|(a, b)| Some((a.parse().ok()?, b.parse().ok()?))).ok_or_else(|| bad(1, &format!("cannot read '{k}={v}'")))
    };
    let Some((_, columns, true)) = ls.get(1).copied() else { return Err(bad(2, "the column names are missing")) };
    let cols: Vec<&str> = columns.split(',').collect();
    let angular = cols.len() >= 11 && cols[cols.len() - 3..] == ["angular_re", "angular_im", "reason"];
    let tail: &[&str] = if angular {
        &["n", "re", "im", "converged", "check_re", "check_im", "angular_re", "angular_im", "reason"]
    } else {
        &["n", "re", "im", "converged", "check_re", "check_im", "reason"]
    };
    if cols.len() < tail.len() + 2 || cols[0] != "index" || cols[cols.len() - tail.len()..] != *tail {
        return Err(bad(2, "unexpected column names"));
    }
    let np = cols.len() - tail.len() - 1;
    let rows_range = pair("rows", "..")?;
    let header = Header {
        survey: get("survey")?.to_string(),
        points: get("points")?.parse().map_err(|_| bad(1, "cannot read 'points='"))?,
        shard: pair("shard", "/")?,
        rows: rows_range.0..rows_range.1,
        parameters: cols[1..1 + np].iter().map(|s| s.to_string()).collect(),
        frequency: get("frequency")?.to_string(),
        angular,
    };
    let _ = path;
    let mut rows: Vec<Row> = Vec::new();
    // The point being read: (index, first line, start offset, modes, failed, values).
    type Cur = (usize, usize, usize, Vec<Option<Complex64>>, bool, Vec<f64>);
    let mut cur: Option<Cur> = None;
    let mut complete_len = ls.get(2).map(|l| l.0).unwrap_or(text.len());
    let finish = |c: Cur, end: usize, rows: &mut Vec<Row>| {
        let (index, line, start, modes, failed, values) = c;
        let trail = (!failed && !modes.is_empty() && modes.iter().all(|m| m.is_some())).then(|| modes.iter().flatten().copied().collect());
        rows.push(Row { index, text: text[start..end].to_string(), values, trail, modes: modes.len(), line });
    };
    for (k, &(at, line, done)) in ls.iter().enumerate().skip(2) {
        if !done {
            break;
        }
        let f = split_csv(line);
        if f.len() != cols.len() {
            return Err(bad(k + 1, &format!("expected {} fields, found {}", cols.len(), f.len())));
        }
        let index: usize = f[0].parse().map_err(|_| bad(k + 1, &format!("'{}' is not a point index", f[0])))?;
        let failed = f[np + 1].is_empty();
        let omega = if f[np + 4] == "true" {
            let re: f64 = f[np + 2].parse().map_err(|_| bad(k + 1, "cannot read re"))?;
            let im: f64 = f[np + 3].parse().map_err(|_| bad(k + 1, "cannot read im"))?;
            if !(re.is_finite() && im.is_finite()) {
                return Err(bad(k + 1, "a converged mode without a finite value"));
            }
            Some(Complex64::new(re, im))
        } else {
            None
        };
        match &mut cur {
            Some(c) if c.0 == index => {
                c.3.push(omega);
                c.4 |= failed;
            }
            _ => {
                if let Some(c) = cur.take() {
                    finish(c, at, &mut rows);
                    complete_len = at;
                }
                let mut values = Vec::with_capacity(np);
                for v in &f[1..=np] {
                    values.push(v.parse::<f64>().map_err(|_| bad(k + 1, &format!("'{v}' is not a parameter value")))?);
                }
                cur = Some((index, k + 1, at, if failed { Vec::new() } else { vec![omega] }, failed, values));
            }
        }
    }
    // The last point is complete when the file ends after its last line
    // and it has every overtone (or it failed).
    // A line cut off (a kill while a point was written) that may belong to
    // the last point means that point is incomplete too.
    let partial = ls.last().filter(|l| !l.2).map(|l| l.1);
    if let Some(c) = cur {
        let end = ls.iter().rev().find(|l| l.2).map(|l| l.0 + l.1.len() + 1).unwrap_or(text.len());
        let index = c.0.to_string();
        let cut = partial.is_some_and(|p| match p.split_once(',') {
            Some((lead, _)) => lead == index,
            None => index.starts_with(p),
        });
        if !cut && (c.4 || overtones.is_none_or(|n| c.3.len() == n)) {
            finish(c, end, &mut rows);
            complete_len = end;
        }
    }
    Ok(Table { layout: Layout::Csv, header, rows, complete_len })
}

/// Splits a CSV line whose only quoted field holds no quote.
fn split_csv(line: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let mut start = 0;
    let mut quoted = false;
    for (i, ch) in line.char_indices() {
        match ch {
            '"' => quoted = !quoted,
            ',' if !quoted => {
                out.push(line[start..i].trim_matches('"'));
                start = i + 1;
            }
            _ => {}
        }
    }
    out.push(line[start..].trim_matches('"'));
    out
}

fn read_lines(text: &str, bad: &dyn Fn(usize, &str) -> Failure) -> Result<Table, Failure> {
    let ls = lines(text);
    let Some(&(_, first, true)) = ls.first() else { return Err(bad(1, "the header line is incomplete")) };
    let h: Value = serde_json::from_str(first).map_err(|e| bad(1, &format!("the header is not JSON: {e}")))?;
    let uint = |v: &Value| v.as_u64().map(|x| x as usize);
    let header = (|| {
        Some(Header {
            survey: h["survey"].as_str()?.to_string(),
            points: uint(&h["points"])?,
            shard: (uint(&h["shard"][0])?, uint(&h["shard"][1])?),
            rows: uint(&h["rows"][0])?..uint(&h["rows"][1])?,
            parameters: h["parameters"].as_array()?.iter().map(|p| p.as_str().map(str::to_string)).collect::<Option<Vec<_>>>()?,
            frequency: h["frequency"].as_str()?.to_string(),
            angular: h["angular"].as_bool()?,
        })
    })()
    .ok_or_else(|| bad(1, "the header lacks survey, points, shard, rows, parameters or frequency (not a table written by canonode scan)"))?;
    let mut rows = Vec::new();
    let mut complete_len = ls.get(1).map(|l| l.0).unwrap_or(text.len());
    for (k, &(at, line, done)) in ls.iter().enumerate().skip(1) {
        if !done {
            // A line cut off by a killed run.
            break;
        }
        let v: Value = serde_json::from_str(line).map_err(|e| bad(k + 1, &format!("not a JSON object: {e}")))?;
        let index = uint(&v["index"]).ok_or_else(|| bad(k + 1, "no point index"))?;
        let modes = v["modes"].as_array().cloned().unwrap_or_default();
        let omegas: Vec<Option<Complex64>> = modes
            .iter()
            .map(|m| match (m["converged"].as_bool(), m["omega"][0].as_f64(), m["omega"][1].as_f64()) {
                (Some(true), Some(re), Some(im)) => Some(Complex64::new(re, im)),
                _ => None,
            })
            .collect();
        let trail =
            (v["error"].is_null() && !omegas.is_empty() && omegas.iter().all(|o| o.is_some())).then(|| omegas.iter().flatten().copied().collect());
        let end = at + line.len() + 1;
        let values = header
            .parameters
            .iter()
            .map(|p| v["values"][p].as_f64())
            .collect::<Option<Vec<f64>>>()
            .ok_or_else(|| bad(k + 1, "the point lacks the values of the parameters"))?;
        rows.push(Row { index, text: format!("{line}\n"), values, trail, modes: omegas.len(), line: k + 1 });
        complete_len = end;
    }
    Ok(Table { layout: Layout::Lines, header, rows, complete_len })
}

/// The largest table read back (a survey of 100 000 points with many overtones fits).
const MAX_TABLE_BYTES: u64 = 1 << 30;

/// Reads a table file, bounded in size and checked as UTF-8.
pub(crate) fn read_file(path: &str) -> Result<String, Failure> {
    use std::io::Read;
    let fail = |msg: String| Failure::Plain(format!("{path}: error: {msg}"), 2);
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(MAX_TABLE_BYTES + 1).read_to_end(&mut bytes))
        .map_err(|e| fail(format!("cannot read the file: {e}")))?;
    if bytes.len() as u64 > MAX_TABLE_BYTES {
        return Err(fail(format!("the file is larger than {MAX_TABLE_BYTES} bytes")));
    }
    String::from_utf8(bytes).map_err(|e| fail(format!("not UTF-8 text (byte {})", e.utf8_error().valid_up_to())))
}
