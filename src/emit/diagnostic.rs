//! Turns a library error into the text a user sees: where it is (name, line,
//! column), what went wrong, the source line with carets under the offending
//! text, and any help notes. Errors only record byte spans; everything about
//! lines, columns and display lives here, shared by the command line and the
//! Python package.

use crate::error::Error;
use std::fmt::Write;

/// Source lines longer than this many characters are shown as a window
/// around the span, so that an error in a huge one-line input stays readable.
const MAX_SHOWN_CHARS: usize = 160;

/// How many characters of a long line are shown before the span.
const CONTEXT_BEFORE: usize = 50;

/// Indentation of the source and caret lines.
const GUTTER: &str = "    ";

/// Renders an error against the text it points into: `NAME:LINE:COL: error: MESSAGE`, then the source line, then a caret line under the span (^ repeated over the span's width on that line, at least one), then `  note: ...` lines.
///
/// Every line of the result ends with a newline. Spans that do not fit the
/// text are clamped rather than trusted: a start past the end points just past
/// the last character, and offsets inside a character move back to its start.
pub fn render(error: &Error, name: &str, source: &str) -> String {
    let mut out = String::new();
    match error.span {
        None => {
            let _ = writeln!(out, "{name}: error: {}", error.message);
        }
        Some(span) => {
            let place = Place::locate(source, span.start, span.end);
            let _ = writeln!(out, "{name}:{}:{}: error: {}", place.line, place.column, error.message);
            let (shown, caret) = place.excerpt(source);
            let _ = writeln!(out, "{GUTTER}{}", shown.trim_end());
            let _ = writeln!(out, "{GUTTER}{caret}");
        }
    }
    for note in &error.notes {
        let _ = writeln!(out, "  note: {note}");
    }
    out
}

/// The 1-based line and column (in characters) where `span` starts in
/// `source`, clamped as [`render`] clamps it (for callers that report the
/// place themselves, such as the Python package's `InputError`).
pub fn line_column(source: &str, span: crate::syntax::Span) -> (usize, usize) {
    let place = Place::locate(source, span.start, span.end);
    (place.line, place.column)
}

/// A span resolved to a line of the source.
struct Place {
    /// 1-based line number.
    line: usize,
    /// 1-based column, in characters.
    column: usize,
    /// Byte range of the line, without its line break.
    line_start: usize,
    line_end: usize,
    /// Byte offset of the span's start (clamped).
    start: usize,
    /// Byte offset of the span's end, cut at the end of the line.
    end: usize,
}

impl Place {
    fn locate(source: &str, start: usize, end: usize) -> Place {
        // A span at or past the end points just past the last visible
        // character, not at an empty line after a final newline.
        let visible_end = source.trim_end_matches(['\n', '\r']).len();
        let start = if start >= source.len() { visible_end } else { floor_boundary(source, start) };
        let line_start = source[..start].rfind('\n').map_or(0, |i| i + 1);
        let mut line_end = source[start..].find('\n').map_or(source.len(), |i| start + i);
        if line_end > start && source[..line_end].ends_with('\r') {
            line_end -= 1;
        }
        let end = floor_boundary(source, end.min(line_end)).max(start);
        Place {
            line: source.as_bytes()[..line_start].iter().filter(|&&b| b == b'\n').count() + 1,
            column: source[line_start..start].chars().count() + 1,
            line_start,
            line_end,
            start,
            end,
        }
    }

    /// The source line as shown (possibly a window of it) and the caret line.
    fn excerpt(&self, source: &str) -> (String, String) {
        let line = &source[self.line_start..self.line_end.max(self.start)];
        let before = self.column - 1;
        let width = source[self.start..self.end].chars().count().max(1);
        let total = line.chars().count();
        let (first, last) = if total > MAX_SHOWN_CHARS {
            let first = before.saturating_sub(CONTEXT_BEFORE);
            (first, (first + MAX_SHOWN_CHARS).min(total))
        } else {
            (0, total)
        };
        let mut shown = String::new();
        let mut caret = String::new();
        if first > 0 {
            shown.push_str("...");
            caret.push_str("   ");
        }
        for (i, c) in line.chars().enumerate().skip(first).take(last - first) {
            shown.push(if c == '\t' || !is_invisible(c) { c } else { ' ' });
            if i < before {
                caret.push(if c == '\t' { '\t' } else { ' ' });
            }
        }
        if last < total {
            shown.push_str("...");
        }
        // The window always contains the span's start (or ends just before it,
        // when the span starts past the line's last character), so the carets
        // follow directly; they stop at the window's edge.
        let visible_width = width.min(last.saturating_sub(before)).max(1);
        caret.push_str(&"^".repeat(visible_width));
        (shown, caret)
    }
}

/// Characters shown as a blank: control characters would move the terminal's
/// cursor, and zero-width ones would shift the carets by taking no column.
fn is_invisible(c: char) -> bool {
    c.is_control()
        || matches!(
            c,
            '\u{ad}' | '\u{200b}'..='\u{200f}' | '\u{2028}'..='\u{202e}' | '\u{2060}'..='\u{2064}' | '\u{feff}'
        )
}

/// The largest character boundary at or before `at` (clamped to the text).
fn floor_boundary(source: &str, at: usize) -> usize {
    let mut at = at.min(source.len());
    while !source.is_char_boundary(at) {
        at -= 1;
    }
    at
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::ErrorKind;
    use crate::syntax::Span;

    fn at(start: usize, end: usize) -> Error {
        Error::new(ErrorKind::Syntax, "bad").at(Span::new(start, end))
    }

    #[test]
    fn points_at_line_and_column() {
        let src = "var r\nlet f = 1 +\n";
        let e = Error::new(ErrorKind::Syntax, "expected an expression after '+', found end of input")
            .at(Span::new(16, 17))
            .note("a line continues when it ends in an operator");
        assert_eq!(
            render(&e, "f.ode", src),
            "f.ode:2:11: error: expected an expression after '+', found end of input\n    let f = 1 +\n              ^\n  \
             note: a line continues when it ends in an operator\n"
        );
    }

    #[test]
    fn carets_cover_the_span() {
        let src = "let f = 2x + 1";
        assert_eq!(render(&at(8, 10), "a", src), "a:1:9: error: bad\n    let f = 2x + 1\n            ^^\n");
        // A span running over several lines is underlined to the end of its first line.
        let src = "let f = (1 +\n 2";
        assert_eq!(render(&at(8, 15), "a", src), "a:1:9: error: bad\n    let f = (1 +\n            ^^^^\n");
        // An empty span still gets one caret.
        assert_eq!(render(&at(3, 3), "a", "abcdef"), "a:1:4: error: bad\n    abcdef\n       ^\n");
    }

    #[test]
    fn columns_count_characters_not_bytes() {
        let src = "param ω, λ\nlet g = ω*λ $";
        let dollar = src.find('$').unwrap();
        let out = render(&at(dollar, dollar + 1), "u", src);
        assert_eq!(out, "u:2:13: error: bad\n    let g = ω*λ $\n                ^\n");
        let omega = src.find('ω').unwrap();
        let out = render(&at(omega, omega + 'ω'.len_utf8()), "u", src);
        assert!(out.starts_with("u:1:7: error: bad\n    param ω, λ\n          ^\n"), "{out}");
    }

    #[test]
    fn tabs_are_kept_so_carets_align() {
        let src = "\tlet f =\t1 $";
        let out = render(&at(11, 12), "t", src);
        assert_eq!(out, "t:1:12: error: bad\n    \tlet f =\t1 $\n    \t       \t  ^\n");
    }

    #[test]
    fn errors_without_a_span() {
        let e = Error::new(ErrorKind::Usage, "no equation given").note("pass a file or -e TEXT").note("or use stdin");
        assert_eq!(render(&e, "canonode", "var r"), "canonode: error: no equation given\n  note: pass a file or -e TEXT\n  note: or use stdin\n");
    }

    #[test]
    fn spans_past_the_end_point_after_the_last_character() {
        assert_eq!(render(&at(50, 60), "e", "var r\n\n"), "e:1:6: error: bad\n    var r\n         ^\n");
        assert_eq!(render(&at(5, 5), "e", "var r"), "e:1:6: error: bad\n    var r\n         ^\n");
        assert_eq!(render(&at(0, 9), "e", ""), "e:1:1: error: bad\n    \n    ^\n");
    }

    #[test]
    fn odd_spans_and_line_breaks_are_tolerated() {
        // Offsets inside a character move back to its start.
        let src = "x = ω";
        assert_eq!(render(&at(5, 6), "o", src), "o:1:5: error: bad\n    x = ω\n        ^\n");
        // An end before the start, carriage returns, control characters.
        assert_eq!(render(&at(2, 1), "o", "abc\r\ndef"), "o:1:3: error: bad\n    abc\n      ^\n");
        assert_eq!(render(&at(5, 6), "o", "abc\r\nd\u{1b}f"), "o:2:1: error: bad\n    d f\n    ^\n");
        // Zero-width characters show as a blank so that the carets stay aligned.
        assert_eq!(render(&at(4, 5), "o", "a\u{200b}b"), "o:1:3: error: bad\n    a b\n      ^\n");
        assert_eq!(render(&at(3, 4), "o", "abc\r\nd"), "o:1:4: error: bad\n    abc\n       ^\n");
    }

    #[test]
    fn long_lines_are_windowed_around_the_span() {
        let src = format!("let f = {}$ + 1", "a+".repeat(10_000));
        let dollar = src.find('$').unwrap();
        let out = render(&at(dollar, dollar + 1), "w", &src);
        let lines: Vec<&str> = out.lines().collect();
        assert_eq!(lines[0], format!("w:1:{}: error: bad", dollar + 1));
        assert!(lines[1].len() < MAX_SHOWN_CHARS + 20, "{}", lines[1]);
        assert!(lines[1].starts_with("    ...a+"));
        let caret = lines[2].find('^').unwrap();
        assert_eq!(&lines[1][caret..caret + 1], "$");
        // A span at the very start of a long line shows no leading ellipsis.
        let out = render(&at(0, 3), "w", &src);
        assert!(out.lines().nth(1).unwrap().starts_with("    let f = a+a+"));
        assert!(out.lines().nth(1).unwrap().ends_with("..."));
        assert_eq!(out.lines().nth(2).unwrap(), "    ^^^");
    }

    /// A xorshift generator for the no-panic check below.
    fn xorshift(state: &mut u64) -> u64 {
        *state ^= *state << 13;
        *state ^= *state >> 7;
        *state ^= *state << 17;
        *state
    }

    #[test]
    fn arbitrary_spans_never_panic() {
        let texts = ["", "\n", "a\r\n", "ω\tλ\n\nx", "\u{1F600}\u{1F600}", "var r\nparam a\n"];
        let mut state = 0x1234_5678_9ABC_DEF1;
        for _ in 0..5_000 {
            let text = texts[(xorshift(&mut state) % texts.len() as u64) as usize];
            let start = (xorshift(&mut state) % 24) as usize;
            let end = (xorshift(&mut state) % 24) as usize;
            let out = render(&at(start, end), "r", text);
            assert_eq!(out.lines().count(), 3, "{out:?}");
            assert!(out.lines().nth(2).unwrap().contains('^'));
        }
    }
}
