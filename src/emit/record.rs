//! Derivation records: deriving, rendering, reading and comparing them.
//! The format (and an example) is documented on the public facade
//! `canonode::record` in `src/lib.rs`, which re-exports the items here.

use super::classify_report::{apparent_fields, exponent_text, formal_text, param_text, where_text};
use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::GRat;
use crate::analysis::canonical::Choices;
use crate::analysis::{Analysis, Kind, Place, PointId};
use crate::error::{Error, ErrorKind, Result};
use crate::ode::{ReduceOptions, Reduction};
use crate::series::SeriesMap;
use crate::solve::request::{ClosedSection, Method, Problem, SpectrumRequest};
use crate::syntax::Span;

/// The first line of every record: the format's name and version.
pub const HEADER: &str = "canonode-derivation 1";

/// The key of the (informational, not compared) tool version.
pub const VERSION_KEY: &str = "tool.version";

/// How the recorded recurrence is chosen; written into each record.
pub const RECURRENCE_RULE: &str = "about the first finite regular singular point at an exact location where one exists, \
in the default series variable, with the default exponents (the unknown's exponent 0 where it has one, else the first exact one; the first listed branch at an irregular point at infinity); \
failing that, about a regular root θ of an irreducible quadratic factor, adjoined as a symbol, with its first exact exponent";

/// The value of an option that was not given. It cannot be confused with a
/// given value: no expression or name of the input language contains a space
/// between two names.
const NOT_GIVEN: &str = "(not given)";

/// One `key: value` line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Entry {
    /// The field's name, e.g. `point[1].kind`.
    pub key: String,
    /// Its value, one line of text.
    pub value: String,
    /// Where the value stands in the text the record was read from (`None` for a computed record).
    pub span: Option<Span>,
}

/// A derivation record: its fields in order.
#[derive(Clone, Debug, Default)]
pub struct Record {
    entries: Vec<Entry>,
    /// The length of the text the record was read from: errors about a missing field point there.
    end: usize,
}

/// `text` with its mentions of the request's inputs spelled as the record
/// format spells them, the same for every front end: two dashes and the
/// input's key with `-` for `_` (the `option.*` fields name the same inputs
/// without the dashes). A record is a durable file, so this spelling is part
/// of its format.
fn record_spelling(text: &str) -> String {
    crate::error::name_inputs(text, |r| format!("--{}", r.key().replace('_', "-")))
}

impl Record {
    /// The fields in order.
    pub fn entries(&self) -> &[Entry] {
        &self.entries
    }

    /// The value of a field.
    pub fn get(&self, key: &str) -> Option<&str> {
        self.entry(key).map(|e| e.value.as_str())
    }

    fn entry(&self, key: &str) -> Option<&Entry> {
        self.entries.iter().find(|e| e.key == key)
    }

    fn push(&mut self, key: impl Into<String>, value: impl Into<String>) -> Result<()> {
        let (key, value) = (key.into(), record_spelling(&value.into()));
        // A record is one field a line: text from the user (the source
        // path, option values) with a control character is refused, never
        // copied raw.
        if value.chars().any(|c| c.is_control() || c == '\u{2028}' || c == '\u{2029}') {
            return Err(Error::new(ErrorKind::Usage, format!("the record field {key} would contain a control character (a line break?): {value:?}")));
        }
        self.entries.push(Entry { key, value, span: None });
        Ok(())
    }

    /// The record as text: the header, then `key: value` lines.
    pub fn render(&self) -> String {
        let mut o = format!("{HEADER}\n");
        for e in &self.entries {
            o.push_str(&e.key);
            o.push(':');
            if !e.value.is_empty() {
                o.push(' ');
                o.push_str(&e.value);
            }
            o.push('\n');
        }
        o
    }

    /// The record as text without the `tool.version` line: the derivation
    /// alone, for snapshot tests that must survive an upgrade of canonode.
    pub fn render_derivation(&self) -> String {
        let mut r = self.clone();
        r.entries.retain(|e| e.key != VERSION_KEY);
        r.render()
    }

    /// Reads a record. Errors are [`ErrorKind::Record`] with a span into `text`.
    pub fn parse(text: &str) -> Result<Record> {
        let mut lines = line_spans(text);
        let Some((first, span)) = lines.next() else {
            return Err(Error::new(ErrorKind::Record, "the record is empty")
                .at(Span::new(0, 0))
                .note(format!("a record starts with the line '{HEADER}'")));
        };
        if first != HEADER {
            let (name, _) = HEADER.rsplit_once(' ').expect("the header has a version");
            let msg = match first.strip_prefix(name).and_then(|r| r.strip_prefix(' ')) {
                Some(v) => format!("record format version {v} is not supported (this canonode reads version 1)"),
                None => "not a derivation record: the first line is not the format's header".to_string(),
            };
            return Err(Error::new(ErrorKind::Record, msg).at(span).note(format!("a record starts with the line '{HEADER}'")));
        }
        let mut rec = Record { entries: Vec::new(), end: text.len() };
        for (line, span) in lines {
            if line.trim().is_empty() || line.starts_with('#') {
                continue;
            }
            let Some((key, rest)) = line.split_once(':') else {
                return Err(Error::new(ErrorKind::Record, "expected 'key: value'").at(span));
            };
            if key.is_empty() || !key.chars().all(|c| c.is_ascii_alphanumeric() || "._-[]".contains(c)) {
                let end = span.start + key.len().max(1);
                return Err(Error::new(ErrorKind::Record, format!("'{key}' is not a field name"))
                    .at(Span::new(span.start, end.min(span.end)))
                    .note("field names are letters, digits and . _ - [ ]"));
            }
            if let Some(prev) = rec.entry(key) {
                let line_no = prev.span.map(|s| text[..s.start].matches('\n').count() + 1).unwrap_or(0);
                return Err(Error::new(ErrorKind::Record, format!("the field {key} appears twice"))
                    .at(Span::new(span.start, span.start + key.len()))
                    .note(format!("first on line {line_no}")));
            }
            let value = rest.strip_prefix(' ').unwrap_or(rest);
            let start = span.end - value.len();
            rec.entries.push(Entry { key: key.to_string(), value: value.to_string(), span: Some(Span::new(start, span.end)) });
        }
        Ok(rec)
    }

    /// A required field, or an error pointing at the end of the text.
    fn required(&self, key: &str) -> Result<&Entry> {
        self.entry(key).ok_or_else(|| {
            Error::new(ErrorKind::Record, format!("the record has no field {key}"))
                .at(Span::new(self.end, self.end))
                .note("write the record with `canonode record`")
        })
    }

    /// The source file as named in the record (relative to the record's directory).
    pub fn source_path(&self) -> Result<&str> {
        let e = self.required("source.path")?;
        if e.value.trim().is_empty() {
            return Err(Error::new(ErrorKind::Record, "the source path is empty").or_at(e.span.unwrap_or(Span::new(0, 0))));
        }
        Ok(&e.value)
    }

    /// Where a field's value stands in the text the record was read from.
    pub fn span(&self, key: &str) -> Option<Span> {
        self.entry(key).and_then(|e| e.span)
    }

    /// The recorded recurrence request (absent keys: the default rule).
    pub fn recurrence_request(&self) -> RecurrenceRequest {
        let opt = |key: &str| self.get(key).filter(|v| *v != NOT_GIVEN).map(str::to_string);
        RecurrenceRequest { about: opt("option.about"), series: opt("option.series"), exponents: opt("option.exponents") }
    }

    /// The recorded spectral set-up, when the record holds a closed form.
    pub fn spectral_texts(&self) -> Result<Option<SpectralTexts>> {
        let Some(b) = self.entry("option.boundary") else { return Ok(None) };
        let Some(problem) = Problem::from_tag(&b.value) else {
            let mut err = Error::new(ErrorKind::Record, format!("'{}' is not a kind of spectrum (qnm, bound, quasi-bound)", b.value));
            if let Some(s) = b.span {
                err = err.at(s);
            }
            return Err(err);
        };
        let ends = self.required("option.ends")?;
        let at = self.required("option.at")?;
        Ok(Some(SpectralTexts { problem, ends: (ends.value != NOT_GIVEN).then(|| ends.value.clone()), at: at.value.clone() }))
    }

    /// The options of the recorded reduction.
    pub fn options(&self) -> Result<ReduceOptions> {
        let text = |key: &str| -> Result<Option<String>> {
            let e = self.required(key)?;
            Ok(if e.value == NOT_GIVEN { None } else { Some(e.value.clone()) })
        };
        let inf = self.required("option.at-infinity")?;
        let at_infinity = match inf.value.as_str() {
            "yes" => true,
            "no" => false,
            other => {
                let mut err = Error::new(ErrorKind::Record, format!("'{other}' is not yes or no"));
                if let Some(s) = inf.span {
                    err = err.at(s);
                }
                return Err(err);
            }
        };
        let opts = ReduceOptions {
            subst: text("option.subst")?,
            at_infinity,
            dxdz: text("option.dxdz")?,
            frequency: text("option.frequency")?,
            ..ReduceOptions::default()
        };
        if opts.at_infinity && opts.subst.is_some() {
            let mut err = Error::new(ErrorKind::Record, "option.subst and option.at-infinity cannot both be given");
            if let Some(s) = inf.span {
                err = err.at(s);
            }
            return Err(err);
        }
        Ok(opts)
    }
}

/// The lines of `text` (without line breaks) with their byte spans.
fn line_spans(text: &str) -> impl Iterator<Item = (&str, Span)> {
    let mut start = 0;
    text.split_inclusive('\n').map(move |raw| {
        let line = raw.trim_end_matches('\n').trim_end_matches('\r');
        let span = Span::new(start, start + line.len());
        start += raw.len();
        (line, span)
    })
}

/// The SHA-256 of `bytes` in lower-case hexadecimal.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    sha2::Sha256::digest(bytes).iter().map(|b| format!("{b:02x}")).collect()
}

/// The texts of the recurrence a user asked a record to hold, as given
/// (`option.about`, `option.series`, `option.exponents`): absent, the
/// record holds the rule [`RECURRENCE_RULE`]'s recurrence.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct RecurrenceRequest {
    /// The expansion point as written (e.g. `2*M`).
    pub about: Option<String>,
    /// The series variable, `u=EXPR`.
    pub series: Option<String>,
    /// Exponent choices, `POINT=CHOICE,…`.
    pub exponents: Option<String>,
}

/// A recurrence asked for, read against the equation by a front end: the
/// texts as given (written into the record) and what they name.
#[derive(Clone, Debug)]
pub struct AskedRecurrence {
    /// The texts as given.
    pub texts: RecurrenceRequest,
    /// The expansion point.
    pub about: PointId,
    /// The series variable.
    pub series: SeriesMap,
    /// The exponent choices.
    pub choices: Choices,
}

/// The spectral problem whose closed form a record holds (`record --at`,
/// `--boundary`, `--ends`): written into the record as `option.boundary`,
/// `option.ends` and `option.at`, so that `check` derives it again.
#[derive(Clone, Debug)]
pub struct SpectralSetup {
    /// The kind of spectrum.
    pub problem: Problem,
    /// The ends when given: as written (`spectrum --ends`'s text, recorded)
    /// and read.
    pub ends: Option<(String, crate::solve::boundary::GivenEnds)>,
    /// The values of the other parameters as given (`NAME=VALUE,…`).
    pub at: String,
    /// The same values, read (name, exact value, span in `at`).
    pub values: Vec<(String, GRat, Span)>,
}

/// The recorded spectral set-up's texts: (`option.boundary`, `option.ends`,
/// `option.at`), when the record holds a closed form.
#[derive(Clone, Debug)]
pub struct SpectralTexts {
    /// The kind of spectrum.
    pub problem: Problem,
    /// The ends, when given.
    pub ends: Option<String>,
    /// The values' text.
    pub at: String,
}

/// Derives the record of the program `source` (a whole file in the input
/// language, or LaTeX when `source_path` ends in `.tex`), named
/// `source_path` in the record, reduced with `opts`.
pub fn derive(source: &str, source_path: &str, opts: &ReduceOptions) -> Result<Record> {
    Derivation::start(source, source_path, opts)?.finish(None, None)
}

/// A record in the making: the source reduced and analysed, so that a front
/// end can read the user's texts (an expansion point, exponent choices)
/// against the equation before the record is finished.
#[derive(Debug)]
pub struct Derivation<'a> {
    source: &'a str,
    source_path: &'a str,
    opts: &'a ReduceOptions,
    red: Reduction,
    an: Analysis,
}

impl<'a> Derivation<'a> {
    /// Reduces and analyses `source` (named `source_path` in the record) with
    /// `opts`: LaTeX when the path ends in `.tex` (as every command reads a
    /// file), else the input language.
    pub fn start(source: &'a str, source_path: &'a str, opts: &'a ReduceOptions) -> Result<Derivation<'a>> {
        let input = if source_path.ends_with(".tex") { crate::ode::Input::Latex(source) } else { crate::ode::Input::Program(source) };
        let red = crate::ode::reduce(&input, opts)?;
        let an = crate::analysis::analyse(&red)?;
        Ok(Derivation { source, source_path, opts, red, an })
    }

    /// The reduction the record is derived from.
    pub fn reduction(&self) -> &Reduction {
        &self.red
    }

    /// Its analysis.
    pub fn analysis(&self) -> &Analysis {
        &self.an
    }

    /// The record: with `asked`, the recurrence asked for (its texts written
    /// as `option.about`, `option.series`, `option.exponents`, so that
    /// `check` recomputes the same one), else the rule's; with `spectral`,
    /// the closed-form spectrum of that problem (`solve::closed`, as
    /// `spectrum --method exact` derives it): `closed.frequency`,
    /// `closed.route`, `closed.end[i]` (location and condition), and per
    /// family `closed.family[i].label`, `.expression` (the exact text in n
    /// and the parameters), `.n` (its range) and `.branch`; or `closed.none`
    /// with the reason.
    pub fn finish(&self, asked: Option<&AskedRecurrence>, spectral: Option<&SpectralSetup>) -> Result<Record> {
        let (red, an, opts) = (&self.red, &self.an, self.opts);
        let mut rec = Record::default();
        let given = |o: &Option<String>| o.clone().unwrap_or_else(|| NOT_GIVEN.to_string());
        rec.push(VERSION_KEY, env!("CARGO_PKG_VERSION"))?;
        rec.push("source.path", self.source_path)?;
        rec.push("source.sha256", sha256_hex(self.source.as_bytes()))?;
        rec.push("option.subst", given(&opts.subst))?;
        rec.push("option.at-infinity", if opts.at_infinity { "yes" } else { "no" })?;
        rec.push("option.dxdz", given(&opts.dxdz))?;
        rec.push("option.frequency", given(&opts.frequency))?;
        if let Some(a) = asked {
            rec.push("option.about", given(&a.texts.about))?;
            rec.push("option.series", given(&a.texts.series))?;
            rec.push("option.exponents", given(&a.texts.exponents))?;
        }
        reduction_fields(&mut rec, red)?;
        analysis_fields(&mut rec, red, an)?;
        match asked {
            None => recurrence_fields(&mut rec, red, an)?,
            Some(a) => requested_recurrence(&mut rec, red, a)?,
        }
        if let Some(setup) = spectral {
            closed_fields(&mut rec, red, opts, setup)?;
        }
        Ok(rec)
    }
}

/// The closed-form section of a record.
fn closed_fields(rec: &mut Record, red: &Reduction, opts: &ReduceOptions, setup: &SpectralSetup) -> Result<()> {
    rec.push("option.boundary", setup.problem.tag())?;
    rec.push("option.ends", setup.ends.as_ref().map_or_else(|| NOT_GIVEN.to_string(), |(t, _)| t.clone()))?;
    rec.push("option.at", &setup.at)?;
    let ends = setup.ends.as_ref().map(|(_, e)| *e);
    let req = SpectrumRequest {
        problem: setup.problem,
        ends,
        frequency: opts.frequency.clone(),
        values: setup.values.clone(),
        overtones: (0, 0),
        method: Method::Exact,
        guess: None,
        tol: 1e-10,
        wkb_order: 1,
        eikonal_param: None,
        mode_functions: None,
        couple: None,
        closed_form: true,
        polynomial: None,
    };
    let (fname, section) = crate::solve::request::closed_form(red, &req)?;
    rec.push("closed.frequency", fname)?;
    let form = match section {
        ClosedSection::Found { form, .. } => form,
        ClosedSection::None(why) => return rec.push("closed.none", why),
        ClosedSection::NotAsked => return rec.push("closed.none", "not derived"),
    };
    rec.push("closed.route", &form.route)?;
    for (i, e) in form.ends.iter().enumerate() {
        rec.push(format!("closed.end[{}]", i + 1), format!("{} ({})", crate::solve::boundary::location_text(e.location), e.condition.label()))?;
    }
    for (i, f) in form.families.iter().enumerate() {
        let key = |s: &str| format!("closed.family[{}].{s}", i + 1);
        rec.push(key("label"), &f.label)?;
        rec.push(key("expression"), f.value.text(&form.names))?;
        rec.push(key("n"), crate::emit::spectrum::range_text(f))?;
        if !f.range.branch.is_empty() {
            rec.push(key("branch"), &f.range.branch)?;
        }
    }
    Ok(())
}

fn reduction_fields(rec: &mut Record, red: &Reduction) -> Result<()> {
    let s = Style::Text;
    let names = red.field.names();
    let rt = |x| ratfunc_text(x, names, s);
    rec.push("variable", &red.var)?;
    rec.push("unknown", &red.ode.unknown)?;
    rec.push("parameters", if red.ode.params.is_empty() { "(none)".to_string() } else { red.ode.params.join(", ") })?;
    if let Some(c) = &red.change {
        rec.push("change.map", format!("{} = {}", c.old_var, rt(&c.g)))?;
        rec.push("change.schwarzian", rt(&c.schwarzian))?;
    }
    rec.push("standard.p", rt(&red.p))?;
    rec.push("standard.q", rt(&red.q))?;
    rec.push("normal.Q", rt(&red.normal.q))?;
    rec.push("normal.prefactor", crate::ode::prefactor_text(&red.var, red.field.names(), &red.normal.prefactor, s))?;
    if let Some(sch) = &red.schrodinger {
        rec.push("schrodinger.dxdz", rt(&sch.dxdz))?;
        rec.push("schrodinger.frequency", sch.frequency.clone().unwrap_or_else(|| "(none)".into()))?;
        rec.push("schrodinger.V", rt(&sch.v))?;
    }
    Ok(())
}

fn analysis_fields(rec: &mut Record, red: &Reduction, an: &Analysis) -> Result<()> {
    let s = Style::Text;
    let k = &red.field;
    rec.push("class", an.class.id())?;
    rec.push("class.reason", &an.reason)?;
    for (i, n) in an.notes.iter().enumerate() {
        rec.push(format!("class.note[{}]", i + 1), n)?;
    }
    for (i, p) in an.points.iter().enumerate() {
        let key = |f: &str| format!("point[{}].{f}", i + 1);
        rec.push(key("at"), where_text(k, &red.var, p, s))?;
        rec.push(key("kind"), p.kind.word())?;
        rec.push(key("pole-order"), p.pole_order.to_string())?;
        rec.push(key("rank"), p.rank.to_string())?;
        if p.removable {
            rec.push(key("removable"), "yes: Q is regular here, only the prefactor is singular")?;
        }
        if p.kind != Kind::Irregular {
            for (j, e) in p.exponents.iter().enumerate() {
                rec.push(key(&format!("psi-exponent[{}]", j + 1)), exponent_text(k, e, s))?;
            }
        }
        for (j, e) in p.unknown_exponents.iter().enumerate() {
            rec.push(key(&format!("exponent[{}]", j + 1)), exponent_text(k, e, s))?;
        }
        if let Some(n) = p.integer_difference {
            rec.push(key("integer-difference"), n.to_string())?;
            let (word, cond) = apparent_fields(k, &p.apparent);
            rec.push(
                key("apparent"),
                match cond {
                    Some(c) => format!("{word} ({c})"),
                    None => word.to_string(),
                },
            )?;
        }
        for (j, f) in formal_text(k, &red.var, p).iter().enumerate() {
            rec.push(key(&format!("formal[{}]", j + 1)), format!("psi ~ {f}"))?;
        }
    }
    match crate::analysis::canonical_form_of(red, an, &crate::analysis::canonical::Choices::default())? {
        Some(c) => {
            rec.push("canonical.form", c.form.id())?;
            rec.push("canonical.source", &c.source)?;
            rec.push("canonical.map", &c.map)?;
            rec.push("canonical.prefactor", &c.prefactor)?;
            for (j, ch) in c.choices.iter().enumerate() {
                rec.push(format!("canonical.choice[{}]", j + 1), ch)?;
            }
            for (n, p) in &c.parameters {
                rec.push(format!("canonical.param[{n}]"), param_text(k, p))?;
            }
        }
        None => rec.push("canonical.none", "no canonical form is reached for this class and configuration")?,
    }
    Ok(())
}

/// The recurrence the user asked for; its failure is an error (the request
/// names a point or choices that do not fit the equation).
fn requested_recurrence(rec: &mut Record, red: &Reduction, asked: &AskedRecurrence) -> Result<()> {
    rec.push("recurrence.rule", "as requested (option.about, option.series, option.exponents)")?;
    let r = crate::series::requested(red, &asked.about, &asked.series, &asked.choices, false, None)?;
    let about = match &asked.about {
        PointId::Roots(f) => crate::series::root_symbol(&red.field, f).1,
        PointId::At(at) => asked.texts.about.clone().unwrap_or_else(|| ratfunc_text(at, red.field.names(), Style::Text)),
        PointId::Infinity => "∞".to_string(),
    };
    recurrence_lines(rec, &format!("{} = {about}", red.var), &r)
}

fn recurrence_lines(rec: &mut Record, about: &str, r: &crate::series::Recurrence) -> Result<()> {
    rec.push("recurrence.about", about)?;
    rec.push("recurrence.series", &r.series)?;
    rec.push("recurrence.ansatz", r.ansatz_text())?;
    for (j, c) in r.choices.iter().enumerate() {
        rec.push(format!("recurrence.choice[{}]", j + 1), c)?;
    }
    rec.push("recurrence.equation", r.equation_text())?;
    for j in 0..r.coeffs.len() {
        rec.push(format!("recurrence.c[{j}]"), r.coefficient_text(j))?;
    }
    Ok(())
}

fn recurrence_fields(rec: &mut Record, red: &Reduction, an: &Analysis) -> Result<()> {
    let k = &red.field;
    rec.push("recurrence.rule", RECURRENCE_RULE)?;
    let mut why_not = Vec::new();
    for p in &an.points {
        let Place::Point { at, .. } = &p.place else { continue };
        if p.kind != Kind::Regular {
            continue;
        }
        let r = match crate::series::recurrence_at(red, at, &SeriesMap::Default, &Choices::default(), false) {
            Ok(r) => r,
            // A recurrence that does not exist about this point is part of the derivation, not a failure.
            Err(e) if e.is_bad_input() => {
                why_not.push(format!("about {}: {}", where_text(k, &red.var, p, Style::Text), e.message));
                continue;
            }
            Err(e) => return Err(e),
        };
        return recurrence_lines(rec, &where_text(k, &red.var, p, Style::Text), &r);
    }
    // No exact point: a regular root θ of an irreducible quadratic factor,
    // adjoined as a symbol (its first exact exponent), as for a horizon r₊.
    if let Some(p) = an.points.iter().find(|p| matches!(&p.place, Place::Roots(f) if f.to_univariate(0).len() == 3) && p.kind == Kind::Regular) {
        match crate::series::recurrence_about_root(red, &crate::analysis::canonical::Choices::default()) {
            Ok(r) => {
                rec.push("recurrence.exponent", format!("number {} at {}", r.exponent + 1, where_text(k, &red.var, p, Style::Text)))?;
                return recurrence_lines(rec, &format!("{} = {}", red.var, r.meaning), &r.rec);
            }
            Err(e) if e.is_bad_input() => why_not.push(format!("about {}: {}", where_text(k, &red.var, p, Style::Text), e.message)),
            Err(e) => return Err(e),
        }
    }
    if why_not.is_empty() {
        why_not.push("the equation has no finite regular singular point at an exact location or at a root of a quadratic factor".to_string());
    }
    rec.push("recurrence.none", why_not.join("; "))
}

/// What changed between a recorded and a recomputed derivation.
#[derive(Clone, Debug, Default)]
pub struct Comparison {
    /// The keys whose value differs, was added or was removed (in record order; never the version).
    pub changed: Vec<String>,
    /// A unified diff of the two records (the version line left out of the comparison); empty when they hold.
    pub diff: String,
    /// (recorded, recomputed) tool versions, when they differ.
    pub version: Option<(String, String)>,
}

impl Comparison {
    /// True when the derivation is unchanged (a different tool version alone does not count).
    pub fn holds(&self) -> bool {
        self.changed.is_empty()
    }
}

/// Compares a recorded derivation with a recomputed one; the diff is labelled
/// `recorded` and `recomputed`. See [`compare_named`] for other labels.
pub fn compare(recorded: &Record, recomputed: &Record) -> Comparison {
    compare_named(recorded, recomputed, "recorded", "recomputed")
}

/// [`compare`] with the labels of the diff's `---` and `+++` lines.
pub fn compare_named(recorded: &Record, recomputed: &Record, old_label: &str, new_label: &str) -> Comparison {
    let mut changed = Vec::new();
    for e in recorded.entries.iter().filter(|e| e.key != VERSION_KEY) {
        if recomputed.get(&e.key) != Some(e.value.as_str()) {
            changed.push(e.key.clone());
        }
    }
    for e in recomputed.entries.iter().filter(|e| e.key != VERSION_KEY) {
        if recorded.entry(&e.key).is_none() {
            changed.push(e.key.clone());
        }
    }
    let (old_v, new_v) = (recorded.get(VERSION_KEY), recomputed.get(VERSION_KEY));
    let version = match (old_v, new_v) {
        (a, b) if a == b => None,
        (a, b) => Some((a.unwrap_or("(none)").to_string(), b.unwrap_or("(none)").to_string())),
    };
    let diff = if changed.is_empty() {
        String::new()
    } else {
        // The recomputed text carries the recorded version so that the diff
        // shows only the derivation.
        let mut same_version = recomputed.clone();
        same_version.entries.retain(|e| e.key != VERSION_KEY);
        if let Some(pos) = recorded.entries.iter().position(|e| e.key == VERSION_KEY) {
            let v = recorded.entries[pos].clone();
            same_version.entries.insert(pos.min(same_version.entries.len()), Entry { span: None, ..v });
        }
        let (a, b) = (recorded.render(), same_version.render());
        similar::TextDiff::from_lines(&a, &b).unified_diff().context_radius(2).header(old_label, new_label).to_string()
    };
    Comparison { changed, diff, version }
}
