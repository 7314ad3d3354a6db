//! LaTeX documents that fit the page. Every `--format latex` fragment is one
//! amsmath `align*` built by [`Align`]: equations whose right-hand side is
//! wider than [`LINE_BUDGET`] are broken at top-level `+`/`−` signs onto
//! continuation rows (`&\qquad + …`); a term that is itself too wide is
//! opened up first — a fraction with a long numerator becomes
//! `\frac{1}{D}\big(N₁ + N₂ + …\big)`, a long parenthesised sum becomes
//! `\big(…\big)` (delimiters that may span rows) — and broken inside. Prose
//! rows are wrapped at spaces. Widths are estimated, conservatively, from
//! the characters and macros of the LaTeX (see [`width`]); the unit is
//! about the width of one letter of a 10 pt math font (5 pt).
//!
//! [`expr_latex`] turns an expression of the input language (as the text
//! reports print it) into LaTeX, and [`prose_latex`] puts a sentence of a
//! report into `\text{…}` with its Unicode symbols as math.

use crate::algebra::print::latex_name;
use crate::syntax::{BinOp, Expr, ExprKind, Func, ParseLimits};

/// The width of one line, in units of about 5 pt: 62 units ≈ 310 pt, for a
/// text width of about 345 pt (LaTeX's `article` at 10 pt), leaving room for
/// the estimate's error.
pub const LINE_BUDGET: f64 = 62.0;

/// The indent of a continuation row (`\qquad`, 2 em = 20 pt).
const INDENT: f64 = 4.0;

/// Estimated printed width of math-mode LaTeX, in units of about 5 pt (one
/// lower-case italic letter). Conservative: capitals, Greek letters and
/// binary operators with their spacing count more than one unit;
/// superscripts count 0.72 of their content; a fraction counts its wider
/// part. Unknown macros count as a letter.
pub fn width(tex: &str) -> f64 {
    let mut m = Meter { b: tex.as_bytes(), i: 0 };
    m.math(false)
}

struct Meter<'a> {
    b: &'a [u8],
    i: usize,
}

impl Meter<'_> {
    /// Reads up to the end (or the `}` closing the current group when `group`), returning the width.
    fn math(&mut self, group: bool) -> f64 {
        let mut w = 0.0;
        while self.i < self.b.len() {
            let c = self.b[self.i];
            self.i += 1;
            w += match c {
                b'}' if group => return w,
                b'{' => self.math(true),
                b'\\' => self.control(),
                b'^' | b'_' => 0.72 * self.argument(),
                b'+' | b'-' | b'=' | b'<' | b'>' => 2.7,
                b':' => 1.6,
                b',' | b';' => 0.7,
                b'(' | b')' | b'[' | b']' | b'|' => 0.8,
                b'\'' => 0.5,
                b'.' => 0.5,
                b'0'..=b'9' => 1.0,
                b'A'..=b'Z' => 1.6,
                b'a'..=b'z' => 1.1,
                b'*' | b'/' => 1.0,
                b' ' | b'&' | b'$' | b'\n' => 0.0,
                _ => 1.1,
            };
        }
        w
    }

    /// One argument: a group or a single token.
    fn argument(&mut self) -> f64 {
        match self.b.get(self.i) {
            Some(b'{') => {
                self.i += 1;
                self.math(true)
            }
            Some(b'\\') => {
                self.i += 1;
                self.control()
            }
            Some(_) => {
                self.i += 1;
                1.1
            }
            None => 0.0,
        }
    }

    /// The raw text of the next `{…}` group (after the macro name), advancing past it.
    fn raw_group(&mut self) -> &[u8] {
        if self.b.get(self.i) != Some(&b'{') {
            return &[];
        }
        let start = self.i + 1;
        let mut depth = 0usize;
        while self.i < self.b.len() {
            match self.b[self.i] {
                b'\\' => self.i += 1,
                b'{' => depth += 1,
                b'}' => {
                    depth -= 1;
                    if depth == 0 {
                        self.i += 1;
                        return &self.b[start..self.i - 1];
                    }
                }
                _ => {}
            }
            self.i += 1;
        }
        &self.b[start..]
    }

    /// After a backslash: a control word or symbol.
    fn control(&mut self) -> f64 {
        let start = self.i;
        while self.i < self.b.len() && self.b[self.i].is_ascii_alphabetic() {
            self.i += 1;
        }
        if self.i == start {
            // A control symbol.
            let c = self.b.get(self.i).copied().unwrap_or(b' ');
            self.i += 1;
            return match c {
                b',' => 0.35,
                b';' => 0.6,
                b' ' => 0.7,
                b'!' => -0.35,
                b'\\' => 0.0,
                _ => 1.1,
            };
        }
        let name = &self.b[start..self.i];
        match name {
            b"frac" | b"tfrac" | b"dfrac" => {
                let scale = if name == b"tfrac" { 0.75 } else { 1.0 };
                let a = self.argument();
                let b = self.argument();
                scale * a.max(b) + 0.5
            }
            b"sqrt" => self.argument() + 1.8,
            b"left" | b"right" | b"big" | b"Big" | b"bigg" | b"Bigg" | b"bigl" | b"bigr" | b"Bigl" | b"Bigr" => {
                // The delimiter that follows: a character or a control symbol such as `\{`.
                match self.b.get(self.i) {
                    Some(b'.') => {
                        self.i += 1;
                        0.0
                    }
                    Some(b'\\') => {
                        self.i += 2;
                        1.0
                    }
                    Some(_) => {
                        self.i += 1;
                        1.0
                    }
                    None => 0.0,
                }
            }
            b"text" | b"mathrm" | b"operatorname" => {
                let g = self.raw_group().to_vec();
                text_width(&String::from_utf8_lossy(&g))
            }
            b"qquad" => 4.0,
            b"quad" => 2.0,
            b"to" | b"in" | b"approx" | b"le" | b"ge" | b"ne" | b"cdot" | b"times" => 2.7,
            b"infty" => 2.0,
            b"sum" | b"prod" => 2.6,
            b"begin" | b"end" => {
                self.raw_group();
                0.0
            }
            _ if name.first().is_some_and(u8::is_ascii_uppercase) => 1.6,
            _ => 1.25,
        }
    }
}

/// Width of `\text{…}` content: about one unit a character (a roman letter
/// of 10 pt is 4.4–5 pt wide, a capital up to 7.5 pt), math inside `$…$` measured as math.
fn text_width(t: &str) -> f64 {
    let mut w = 0.0;
    for (k, piece) in t.split('$').enumerate() {
        if k % 2 == 1 {
            w += width(piece);
        } else {
            let mut chars = piece.chars().peekable();
            while let Some(c) = chars.next() {
                if c == '\\' {
                    // An escaped character or a control word counts as one character.
                    while chars.peek().is_some_and(|c| c.is_ascii_alphabetic()) {
                        chars.next();
                    }
                    if chars.peek() == Some(&'{') {
                        chars.next();
                        if chars.peek() == Some(&'}') {
                            chars.next();
                        }
                    }
                    w += 1.0;
                } else if c.is_ascii_uppercase() {
                    w += 1.5;
                } else if c == ' ' || c == 'i' || c == 'l' || c == '.' || c == ',' {
                    w += 0.6;
                } else {
                    w += 0.95;
                }
            }
        }
    }
    w
}

/// True when the control word `\\word` (not a longer word) starts at byte `j`.
fn word_at(b: &[u8], j: usize, word: &[u8]) -> bool {
    b.get(j) == Some(&b'\\') && b[j + 1..].starts_with(word) && !b.get(j + 1 + word.len()).is_some_and(u8::is_ascii_alphabetic)
}

/// The byte offset just past the `{…}` group or `\left…\right` pair opening at `i`, if it closes.
fn skip_balanced(s: &str, i: usize) -> Option<usize> {
    let b = s.as_bytes();
    let mut depth = 0i64;
    let mut j = i;
    // Past a delimiter after \left or \right: a character or a control symbol.
    let past_delim = |j: usize| if b.get(j) == Some(&b'\\') { j + 2 } else { j + 1 };
    while j < b.len() {
        if word_at(b, j, b"left") {
            depth += 1;
            j = past_delim(j + 5);
            continue;
        }
        if word_at(b, j, b"right") {
            depth -= 1;
            j = past_delim(j + 6);
            if depth == 0 {
                return Some(j.min(b.len()));
            }
            continue;
        }
        match b[j] {
            b'\\' => j += 1,
            b'{' => depth += 1,
            b'}' => {
                depth -= 1;
                if depth == 0 {
                    return Some(j + 1);
                }
            }
            _ => {}
        }
        j += 1;
    }
    None
}

/// A term of a sum with its sign: `""` (a first term without one), `"+"` or `"-"`.
pub type Term = (&'static str, String);

/// The top-level terms of a sum printed with ` + ` / ` - ` between terms and an
/// optional leading `-`: (sign, term) with sign `""`, `"+"` or `"-"`.
pub fn terms(s: &str) -> Vec<Term> {
    let s = s.trim();
    let b = s.as_bytes();
    let mut out = Vec::new();
    let (mut sign, mut start) = if let Some(rest) = s.strip_prefix('-') { ("-", s.len() - rest.len()) } else { ("", 0) };
    let mut j = start;
    while j < b.len() {
        match b[j] {
            b'{' => match skip_balanced(s, j) {
                Some(e) => {
                    j = e;
                    continue;
                }
                None => return vec![("", s.to_string())],
            },
            b'\\' if word_at(b, j, b"left") => match skip_balanced(s, j) {
                Some(e) => {
                    j = e;
                    continue;
                }
                None => return vec![("", s.to_string())],
            },
            b'\\' => {
                j += 2;
                continue;
            }
            b' ' if b[j..].starts_with(b" + ") || b[j..].starts_with(b" - ") => {
                out.push((sign, s[start..j].to_string()));
                sign = if b[j + 1] == b'+' { "+" } else { "-" };
                j += 3;
                start = j;
                continue;
            }
            _ => {}
        }
        j += 1;
    }
    out.push((sign, s[start..].to_string()));
    out
}

/// The pieces of an over-wide term that can be broken inside: (before, the
/// inner sum's terms, after), so that `before + inner + after` is the term.
fn opening(term: &str) -> Option<(String, Vec<Term>, String)> {
    let delims = |inner: &str| if inner.contains("\\frac") { ("\\Big(", "\\Big)") } else { ("\\big(", "\\big)") };
    // A fraction with a sum in the numerator: (1/D)·(N broken).
    if term.starts_with("\\frac{") {
        let num_end = skip_balanced(term, 5)?;
        if term.as_bytes().get(num_end) != Some(&b'{') {
            return None;
        }
        let den_end = skip_balanced(term, num_end)?;
        if den_end == term.len() {
            let num = &term[6..num_end - 1];
            let den = &term[num_end + 1..den_end - 1];
            let inner = terms(num);
            if inner.len() >= 2 {
                let (l, r) = delims(num);
                return Some((format!("\\frac{{1}}{{{den}}}{l}"), inner, r.to_string()));
            }
        }
        return None;
    }
    // The widest top-level \left( … \right) group.
    let b = term.as_bytes();
    let mut best: Option<(usize, usize, f64)> = None;
    let mut j = 0;
    while j < b.len() {
        if b[j..].starts_with(b"\\left(") {
            let e = skip_balanced(term, j)?;
            let w = width(&term[j..e]);
            if best.is_none_or(|(_, _, bw)| w > bw) {
                best = Some((j, e, w));
            }
            j = e;
            continue;
        }
        match b[j] {
            b'{' => j = skip_balanced(term, j)?,
            b'\\' => j += 2,
            _ => j += 1,
        }
    }
    let (s, e, _) = best?;
    if !term[..e].ends_with("\\right)") {
        return None;
    }
    let inner = &term[s + "\\left(".len()..e - "\\right)".len()];
    let parts = terms(inner);
    if parts.len() >= 2 {
        let (l, r) = delims(inner);
        return Some((format!("{}{l}", &term[..s]), parts, format!("{r}{}", &term[e..])));
    }
    // A lone fraction in parentheses (a coefficient): open the fraction, drop the parentheses.
    if parts.len() == 1 && parts[0].0.is_empty() {
        let (pre, inner_terms, post) = opening(&parts[0].1)?;
        return Some((format!("{}{pre}", &term[..s]), inner_terms, format!("{post}{}", &term[e..])));
    }
    None
}

/// The term with its sign as printed at the start of a row or after another term.
fn signed(sign: &str, term: &str, first: bool) -> String {
    match (sign, first) {
        ("", _) => term.to_string(),
        ("-", true) => format!("-{term}"),
        (s, _) => format!("{s} {term}"),
    }
}

/// Breaks `terms` into chunks each at most `avail` wide where possible; a
/// chunk starts with its sign, and a row may end after any chunk.
fn chunks(parts: &[Term], avail: f64, first: bool) -> Vec<String> {
    let mut out = Vec::new();
    for (k, (sign, term)) in parts.iter().enumerate() {
        let is_first = first && k == 0;
        let whole = signed(sign, term, is_first);
        if width(&whole) <= avail {
            out.push(whole);
            continue;
        }
        let product = factors(term).len() >= 2;
        match opening(term).filter(|_| !product) {
            Some((pre, inner, post)) => {
                let mut sub = chunks(&inner, avail, true);
                if let Some(f) = sub.first_mut() {
                    *f = signed(sign, &format!("{pre}{f}"), is_first);
                }
                if let Some(l) = sub.last_mut() {
                    l.push_str(&post);
                }
                out.extend(sub);
            }
            None => {
                // A wide product: a row may end between its factors (the next row starts with ×).
                let fs = factors(term);
                if fs.len() < 2 {
                    out.push(whole);
                    continue;
                }
                let mut cur = match (*sign, is_first) {
                    ("", _) => String::new(),
                    ("-", true) => "-".to_string(),
                    (s, _) => format!("{s} "),
                };
                let mut fresh = true;
                for f in fs {
                    if !fresh && width(&cur) + width(&f) > avail {
                        out.push(std::mem::replace(&mut cur, "\\times ".to_string()));
                    } else if !fresh {
                        cur.push(' ');
                    }
                    cur.push_str(&f);
                    fresh = false;
                }
                out.push(cur);
            }
        }
    }
    out
}

/// The factors of a product printed with spaces between factors: splits at
/// top-level spaces before a parenthesised factor, a power of `e` or a fraction.
fn factors(term: &str) -> Vec<String> {
    let b = term.as_bytes();
    let mut out = Vec::new();
    let mut start = 0;
    let mut j = 0;
    while j < b.len() {
        if b[j] == b'{' || word_at(b, j, b"left") {
            match skip_balanced(term, j) {
                Some(e) => j = e,
                None => return vec![term.to_string()],
            }
            continue;
        }
        if b[j] == b'\\' {
            j += 2;
            continue;
        }
        if b[j] == b' ' && (b[j + 1..].starts_with(b"\\left(") || b[j + 1..].starts_with(b"e^") || b[j + 1..].starts_with(b"\\frac")) {
            out.push(term[start..j].to_string());
            start = j + 1;
        }
        j += 1;
    }
    out.push(term[start..].to_string());
    out
}

/// The rows of `rhs` broken to fit `avail` units after the alignment point:
/// the first row's text and the continuation rows' texts (without `&\qquad`).
pub fn break_sum(rhs: &str, avail: f64) -> Vec<String> {
    if width(rhs) <= avail {
        return vec![rhs.to_string()];
    }
    let parts = terms(rhs);
    let cs = chunks(&parts, avail - INDENT, true);
    let mut rows: Vec<String> = Vec::new();
    let mut cur = String::new();
    for c in cs {
        let room = if rows.is_empty() { avail } else { avail - INDENT };
        if !cur.is_empty() && width(&cur) + width(&c) > room {
            rows.push(std::mem::take(&mut cur));
        }
        if !cur.is_empty() {
            cur.push(' ');
        }
        cur.push_str(&c);
    }
    rows.push(cur);
    rows
}

/// One row of an [`Align`].
enum Row {
    /// `lhs &REL rhs` with an optional note after the last row of rhs.
    Relation { lhs: String, rel: String, rhs: String, note: String },
    /// A sentence (already LaTeX text-mode content) after the alignment point.
    Prose(String),
    /// Math after the alignment point, broken like a right-hand side.
    Math(String),
    /// A place where a page may break (between groups of rows).
    Break,
}

/// An amsmath `align*` whose rows fit the page: relations `lhs = rhs`
/// aligned at the relation, long right-hand sides broken at top-level
/// signs, prose rows wrapped.
#[derive(Default)]
pub struct Align {
    rows: Vec<Row>,
}

impl Align {
    /// A new, empty environment.
    pub fn new() -> Align {
        Align::default()
    }

    /// `lhs = rhs`.
    pub fn eq(&mut self, lhs: impl Into<String>, rhs: impl Into<String>) {
        self.rel(lhs, "=", rhs, "");
    }

    /// `lhs REL rhs` followed by `note` (math, e.g. `\quad (r \to 0)`).
    pub fn rel(&mut self, lhs: impl Into<String>, rel: &str, rhs: impl Into<String>, note: &str) {
        self.rows.push(Row::Relation { lhs: lhs.into(), rel: rel.to_string(), rhs: rhs.into(), note: note.to_string() });
    }

    /// Math that stands alone after the alignment point.
    pub fn math(&mut self, m: impl Into<String>) {
        self.rows.push(Row::Math(m.into()));
    }

    /// A sentence of a report (plain text, Unicode symbols allowed; see [`prose_latex`]).
    pub fn prose(&mut self, text: &str) {
        self.rows.push(Row::Prose(text.to_string()));
    }

    /// Items (math) separated by commas, as many a row as fit.
    pub fn list(&mut self, items: &[String]) {
        let mut cur = String::new();
        for it in items {
            if !cur.is_empty() && width(&cur) + width(it) + 1.0 > LINE_BUDGET - 2.0 * INDENT {
                self.rows.push(Row::Math(std::mem::replace(&mut cur, "\\qquad ".to_string()) + ","));
                cur.push_str(it);
                continue;
            }
            if !cur.is_empty() {
                cur.push_str(",\\ ");
            }
            cur.push_str(it);
        }
        if !cur.is_empty() {
            self.rows.push(Row::Math(cur));
        }
    }

    /// Starts a new group of rows: the page may break before it (`\displaybreak[0]`).
    pub fn group(&mut self) {
        if !self.rows.is_empty() {
            self.rows.push(Row::Break);
        }
    }

    /// The environment's text.
    pub fn finish(self) -> String {
        let lhs_w = self.rows.iter().map(|r| if let Row::Relation { lhs, .. } = r { width(lhs) } else { 0.0 }).fold(0.0, f64::max);
        let avail = LINE_BUDGET - lhs_w;
        let mut out: Vec<String> = Vec::new();
        for row in self.rows {
            match row {
                Row::Relation { lhs, rel, rhs, note } => {
                    let avail_here = avail - width(&rel) - 1.0;
                    let mut parts = break_sum(&rhs, avail_here - width(&note));
                    if let Some(l) = parts.last_mut() {
                        l.push_str(&note);
                    }
                    for (k, p) in parts.into_iter().enumerate() {
                        out.push(if k == 0 { format!("{lhs} &{rel} {p}") } else { format!("&\\qquad {p}") });
                    }
                }
                Row::Math(m) => {
                    for (k, p) in break_sum(&m, avail).into_iter().enumerate() {
                        out.push(if k == 0 { format!("&{p}") } else { format!("&\\qquad {p}") });
                    }
                }
                Row::Break => {
                    if let Some(last) = out.last_mut() {
                        last.push_str(" \\displaybreak[0]");
                    }
                }
                Row::Prose(t) => {
                    for (k, line) in wrap_prose(&t, avail - INDENT).into_iter().enumerate() {
                        out.push(match (k, line) {
                            (0, Line::Text(l)) => format!("&\\text{{{l}}}"),
                            (_, Line::Text(l)) => format!("&\\qquad\\text{{{l}}}"),
                            (_, Line::Math(m)) => format!("&\\qquad {m}"),
                        });
                    }
                }
            }
        }
        format!("\\begin{{align*}}\n{}\n\\end{{align*}}\n", out.join(" \\\\\n"))
    }
}

/// One line of a wrapped sentence.
enum Line {
    /// `\text{…}` content.
    Text(String),
    /// Math too wide for a line of text, broken as a sum and set on its own rows.
    Math(String),
}

/// A sentence as `\text{…}` content in lines of at most `avail` units, broken at spaces
/// outside `$…$`; math wider than a line gets rows of its own.
fn wrap_prose(t: &str, avail: f64) -> Vec<Line> {
    let tex = prose_latex(t);
    let mut words: Vec<String> = Vec::new();
    let mut in_math = false;
    let mut cur = String::new();
    for c in tex.chars() {
        if c == '$' {
            in_math = !in_math;
        }
        if c == ' ' && !in_math {
            words.push(std::mem::take(&mut cur));
        } else {
            cur.push(c);
        }
    }
    words.push(cur);
    let mut lines: Vec<Line> = Vec::new();
    let mut line = String::new();
    for w in words {
        // Math wider than a line: text before it ends the line, the math gets rows, text after starts a line.
        if let [before, m, after] = w.splitn(3, '$').collect::<Vec<_>>()[..] {
            if width(m) > avail - INDENT {
                line.push_str(if line.is_empty() { "" } else { " " });
                line.push_str(before);
                if !line.is_empty() {
                    lines.push(Line::Text(std::mem::take(&mut line)));
                }
                lines.extend(break_sum(m, avail - INDENT).into_iter().map(Line::Math));
                line.push_str(after);
                continue;
            }
        }
        if !line.is_empty() && text_width(&line) + 0.6 + text_width(&w) > avail {
            lines.push(Line::Text(std::mem::take(&mut line)));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(&w);
    }
    if !line.is_empty() || lines.is_empty() {
        lines.push(Line::Text(line));
    }
    lines
}

/// Unicode symbols of the reports and their LaTeX (math mode).
const SYMBOLS: &[(char, &str)] = &[
    ('∞', "\\infty"),
    ('−', "-"),
    ('·', "\\cdot"),
    ('×', "\\times"),
    ('≈', "\\approx"),
    ('≤', "\\le"),
    ('≥', "\\ge"),
    ('≠', "\\ne"),
    ('→', "\\to"),
    ('√', "\\surd"),
    ('½', "\\tfrac{1}{2}"),
    ('′', "'"),
    ('Σ', "\\Sigma"),
    ('∏', "\\prod"),
    ('⁰', "^{0}"),
    ('¹', "^{1}"),
    ('²', "^{2}"),
    ('³', "^{3}"),
    ('⁴', "^{4}"),
    ('₀', "_{0}"),
    ('₁', "_{1}"),
    ('₂', "_{2}"),
    ('₃', "_{3}"),
    ('ₙ', "_{n}"),
    ('ⁿ', "^{n}"),
    ('ᵢ', "_{i}"),
    ('ⱼ', "_{j}"),
];

/// A sentence of a report as `\text{…}` content: a word that is an
/// expression of the input language with an operator (`2*M`, `exp(I*x)`)
/// as `$…$` math, the characters special in text mode escaped, Unicode
/// Greek letters and symbols as `$…$`, `…` as `\dots`. A character without
/// a LaTeX form is written as `?`.
pub fn prose_latex(t: &str) -> String {
    let words: Vec<&str> = t.split(' ').collect();
    let mut out: Vec<String> = Vec::new();
    let mut i = 0;
    while i < words.len() {
        // The longest run of words from here (at most MAX_SPAN_WORDS) that is one expression or equation.
        let last = (i + MAX_SPAN_WORDS).min(words.len());
        let found = (i..last).rev().find_map(|j| span_latex(&words[i..=j].join(" ")).map(|m| (j, m)));
        match found {
            Some((j, m)) => {
                out.push(m);
                i = j + 1;
            }
            None => {
                out.push(plain_latex(words[i]));
                i += 1;
            }
        }
    }
    // Adjacent math pieces ("$a$$b$") merge.
    out.join(" ").replace("$$", "")
}

/// The most words one expression in a sentence may span (longer ones stay
/// text): bounds the parsing work of a sentence to linear in its length.
const MAX_SPAN_WORDS: usize = 80;

/// Words of a sentence as `$…$` math when they are an equation of two
/// expressions of the input language (`r = 2*M`), or an expression with an
/// operator — a product, a power or a call: `2*M`, `x^2`, `exp(x)`; a lone
/// quotient such as `γ/x` may be prose. Punctuation around them stays text.
fn span_latex(w: &str) -> Option<String> {
    // Either the words with trailing punctuation as text, or also without
    // their outer parentheses (as many as leave the rest balanced).
    let plain_end = w.trim_end_matches([',', ':', ';', '.']).len();
    let balance = |t: &str| t.matches('(').count() as i64 - t.matches(')').count() as i64;
    let lead = w.len() - w.trim_start_matches('(').len();
    let mut end = w.trim_end_matches([',', ':', ';', '.', ')']).len().max(lead);
    while end < w.len() && balance(&w[lead..end]) > 0 && w[end..].starts_with(')') {
        end += 1;
    }
    let mut start = lead;
    while start > 0 && balance(&w[start..end]) < 0 {
        start -= 1;
    }
    // A word of prose at either end would be read as a name: `exponent -2*x` is not a difference.
    let wordy = |t: &str| t.len() > 1 && t.chars().all(|c| c.is_ascii_alphabetic());
    let words: Vec<&str> = w.split(' ').collect();
    if words.len() > 1 && (wordy(words[0].trim_start_matches('(')) || wordy(words[words.len() - 1].trim_end_matches([',', ':', ';', '.', ')']))) {
        return None;
    }
    for (a, b) in [(0, plain_end), (start, end)] {
        let core = &w[a..b];
        let call = core.find('(').is_some_and(|i| i > 0 && core[..i].chars().all(|c| c.is_ascii_alphabetic()) && core.ends_with(')'));
        // An equation of two expressions (`r = 2*M`) is math too.
        let equation = core.contains(" = ") && core.matches('=').count() == 1;
        if !(core.contains(['*', '^']) || call || equation) || core.contains(['∞', '…']) {
            continue;
        }
        let m = match (expr_latex(core), equation_latex(core)) {
            (Some(m), _) => m,
            (None, Some((l, r))) => format!("{l} = {r}"),
            (None, None) => continue,
        };
        return Some(format!("{}${m}${}", plain_latex(&w[..a]), plain_latex(&w[b..])));
    }
    None
}

/// Text-mode LaTeX of plain text (see [`prose_latex`]).
fn plain_latex(t: &str) -> String {
    let mut out = String::new();
    for c in t.chars() {
        match c {
            '\\' => out.push_str("$\\backslash$"),
            '{' | '}' | '_' | '&' | '%' | '#' | '$' => {
                out.push('\\');
                out.push(c);
            }
            '^' => out.push_str("\\^{}"),
            '~' => out.push_str("$\\sim$"),
            '<' | '>' | '|' => {
                out.push('$');
                out.push(c);
                out.push('$');
            }
            '…' => out.push_str("\\dots{}"),
            '–' => out.push_str("--"),
            '—' => out.push_str("---"),
            c if c.is_ascii() => out.push(c),
            c => {
                let s = c.to_string();
                let tex = SYMBOLS.iter().find(|(u, _)| *u == c).map(|(_, t)| t.to_string()).or_else(|| {
                    let g = latex_name(&s);
                    g.starts_with('\\').then_some(g)
                });
                match tex {
                    Some(m) => {
                        out.push('$');
                        out.push_str(&m);
                        out.push('$');
                    }
                    None => out.push('?'),
                }
            }
        }
    }
    out
}

/// Binding strength of an expression when printed (higher binds tighter).
fn prec(e: &Expr) -> u8 {
    if leading_minus(e) {
        return 2;
    }
    match &e.kind {
        ExprKind::Binary(BinOp::Add | BinOp::Sub, ..) => 1,
        ExprKind::Neg(_) => 2,
        ExprKind::Binary(BinOp::Mul, ..) => 3,
        ExprKind::Binary(BinOp::Div, ..) => 4,
        ExprKind::Binary(BinOp::Pow, ..) => 5,
        ExprKind::Number(n) if n.contains(['e', 'E']) => 3,
        _ => 6,
    }
}

/// A product whose first factor is negated (`-2*x`): printed as `-2 x`, binding like a negation.
fn leading_minus(e: &Expr) -> bool {
    match &e.kind {
        ExprKind::Binary(BinOp::Mul, a, _) => matches!(a.kind, ExprKind::Neg(_)) || leading_minus(a),
        _ => false,
    }
}

fn paren(t: String) -> String {
    format!("\\left({t}\\right)")
}

/// An expression tree as LaTeX.
fn tree_latex(e: &Expr) -> String {
    let sub = |x: &Expr, min: u8| if prec(x) < min { paren(tree_latex(x)) } else { tree_latex(x) };
    match &e.kind {
        ExprKind::Number(n) => match n.split_once(['e', 'E']) {
            Some((m, x)) => format!("{m}\\times 10^{{{}}}", x.trim_start_matches('+')),
            None => n.clone(),
        },
        ExprKind::Imag => "i".into(),
        ExprKind::Name(n) => latex_name(n),
        ExprKind::Neg(x) => format!("-{}", sub(x, 3)),
        ExprKind::Binary(op, a, b) => match op {
            BinOp::Add => match &b.kind {
                ExprKind::Neg(x) => format!("{} - {}", tree_latex(a), sub(x, 3)),
                _ => {
                    let r = tree_latex(b);
                    match r.strip_prefix('-') {
                        Some(rest) => format!("{} - {rest}", tree_latex(a)),
                        None => format!("{} + {r}", tree_latex(a)),
                    }
                }
            },
            BinOp::Sub => format!("{} - {}", tree_latex(a), sub(b, 3)),
            BinOp::Mul => {
                // A negated first factor gives its sign to the product.
                let l = match &a.kind {
                    ExprKind::Neg(x) => format!("-{}", sub(x, 3)),
                    _ if leading_minus(a) => tree_latex(a),
                    _ => sub(a, 3),
                };
                let r = sub(b, 3);
                // A number after a factor needs a visible product.
                if r.starts_with(|c: char| c.is_ascii_digit()) {
                    format!("{l} \\cdot {r}")
                } else {
                    format!("{l} {r}")
                }
            }
            BinOp::Div => format!("\\frac{{{}}}{{{}}}", tree_latex(a), tree_latex(b)),
            BinOp::Pow => format!("{}^{{{}}}", sub(a, 6), tree_latex(b)),
        },
        ExprKind::Prime(x, k) => format!("{}{}", sub(x, 6), "'".repeat(*k as usize)),
        ExprKind::Sqrt(x) => format!("\\sqrt{{{}}}", tree_latex(x)),
        ExprKind::Call(Func::Exp, x) => format!("e^{{{}}}", tree_latex(x)),
        ExprKind::Call(f @ (Func::Sech | Func::Csch), x) => format!("\\operatorname{{{}}}{}", f.name(), paren(tree_latex(x))),
        ExprKind::Call(f, x) => format!("\\{}{}", f.name(), paren(tree_latex(x))),
        ExprKind::Derivative { body, wrt, order } => {
            let v = latex_name(&wrt.name);
            let (d, dv) = if *order == 1 { ("d".to_string(), format!("d{v}")) } else { (format!("d^{{{order}}}"), format!("d{v}^{{{order}}}")) };
            format!("\\frac{{{d}}}{{{dv}}}{}", sub(body, 6))
        }
    }
}

/// An expression of the input language (as the text reports print it) in
/// LaTeX; `None` when the text is not one expression.
pub fn expr_latex(text: &str) -> Option<String> {
    let limits = ParseLimits { max_depth: 200, ..ParseLimits::default() };
    let e = crate::syntax::parse_expr(text.trim(), &limits).ok()?;
    Some(tree_latex(&e))
}

/// An equation `a = b` of the input language in LaTeX as (lhs, rhs); `None` when either side is not an expression.
pub fn equation_latex(text: &str) -> Option<(String, String)> {
    let (l, r) = text.split_once('=')?;
    Some((expr_latex(l)?, expr_latex(r)?))
}

/// Math-mode LaTeX for a text field of a JSON document: an expression
/// ([`expr_latex`]), an equation `a = b` ([`equation_latex`]), else prose
/// as `\text{…}` ([`prose_latex`]).
pub fn field_latex(text: &str) -> String {
    if let Some(e) = expr_latex(text) {
        return e;
    }
    if let Some((l, r)) = equation_latex(text) {
        return format!("{l} = {r}");
    }
    format!("\\text{{{}}}", prose_latex(text))
}

/// A JSON document with the LaTeX of its expressions beside them: every
/// member named in `keys` whose value is a string (or null, or an array of
/// strings) gets a sibling `NAME_latex` right after it with the
/// [`field_latex`] of each string (null for null), at any depth. The
/// convention of every JSON document that carries expressions.
pub fn with_latex(doc: serde_json::Value, keys: &[&str]) -> serde_json::Value {
    use serde_json::Value;
    match doc {
        Value::Object(m) => {
            let mut out = serde_json::Map::new();
            for (k, v) in m {
                let tex = if keys.contains(&k.as_str()) {
                    match &v {
                        Value::String(t) => Some(Value::String(field_latex(t))),
                        Value::Null => Some(Value::Null),
                        Value::Array(a) if a.iter().all(Value::is_string) => {
                            Some(Value::Array(a.iter().map(|t| Value::String(field_latex(t.as_str().unwrap_or_default()))).collect()))
                        }
                        _ => None,
                    }
                } else {
                    None
                };
                let name = format!("{k}_latex");
                out.insert(k, with_latex(v, keys));
                if let Some(t) = tex {
                    out.insert(name, t);
                }
            }
            Value::Object(out)
        }
        Value::Array(a) => Value::Array(a.into_iter().map(|v| with_latex(v, keys)).collect()),
        other => other,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splits_at_top_level_signs_only() {
        let t = terms("-a^{2} + \\left(b - c\\right) x - \\frac{d + e}{f}");
        assert_eq!(t, vec![("-", "a^{2}".to_string()), ("+", "\\left(b - c\\right) x".to_string()), ("-", "\\frac{d + e}{f}".to_string())]);
    }

    #[test]
    fn long_sums_are_broken_and_keep_every_term() {
        let long: Vec<String> = (1..40).map(|k| format!("{k} M^{{{k}}} r")).collect();
        let rhs = long.join(" + ");
        let rows = break_sum(&rhs, 50.0);
        assert!(rows.len() > 1);
        for r in &rows {
            assert!(width(r) <= 50.0, "{r}");
        }
        // Nothing lost or reordered: the rows joined give the sum back.
        assert_eq!(rows.join(" "), rhs);
    }

    #[test]
    fn a_long_numerator_becomes_one_over_the_denominator() {
        let num: Vec<String> = (1..30).map(|k| format!("{k} a^{{{k}}}")).collect();
        let rhs = format!("\\frac{{{}}}{{4 r^{{2}}}}", num.join(" - "));
        let rows = break_sum(&rhs, 50.0);
        assert!(rows[0].starts_with("\\frac{1}{4 r^{2}}\\big(1 a^{1}"), "{rows:?}");
        assert!(rows.last().is_some_and(|r| r.ends_with("\\big)")));
        assert!(rows[1..].iter().all(|r| r.starts_with("- ")));
    }

    #[test]
    fn input_language_to_latex() {
        assert_eq!(
            expr_latex("x^(s + 1)*(x - 1)^(-2*I*M*omega)*exp(2*I*M*omega*x)").as_deref(),
            Some("x^{s + 1} \\left(x - 1\\right)^{-2 i M \\omega} e^{2 i M \\omega x}")
        );
        assert_eq!(expr_latex("(1/2*r - M)/r").as_deref(), Some("\\frac{\\frac{1}{2} r - M}{r}"));
        assert_eq!(equation_latex("u = -2*x + 1"), Some(("u".to_string(), "-2 x + 1".to_string())));
        assert_eq!(expr_latex("x^(-2*I*M*omega) - -3*y + -2*z").as_deref(), Some("x^{-2 i M \\omega} - \\left(-3 y\\right) - 2 z"));
        assert_eq!(expr_latex("not an (expression"), None);
    }

    #[test]
    fn prose_is_escaped() {
        assert_eq!(prose_latex("rank 1 at ∞, x^(1/2) w_1"), "rank 1 at $\\infty$, $x^{\\frac{1}{2}}$ w\\_1");
        assert_eq!(prose_latex("at 2*M: exponent -2*I*omega (as asked)"), "at $2 M$: exponent $-2 i \\omega$ (as asked)");
        assert_eq!(prose_latex("at r = 0: exponent s + 1 of"), "at $r = 0$: exponent s + 1 of");
        assert_eq!(prose_latex("a^(b c"), "a\\^{}(b c");
        assert_eq!(prose_latex("exponent -2*I*omega of"), "exponent $-2 i \\omega$ of");
        assert_eq!(prose_latex("λ = √(−1)"), "$\\lambda$ = $\\surd$($-$1)");
    }
}
