//! The bad-input corpus: every file in `tests/bad/` is a complete program
//! whose first problem is the one its name and its `# exercises:` comment
//! describe. The test runs the library on each file to check the kind of
//! error, then runs the compiled binary, as a user would, and snapshots what
//! it prints on stderr together with its exit status.

use canonode::{reduce, ErrorKind, Input, ReduceOptions};
use std::path::Path;
use std::process::Command;

/// The error kind a corpus file must produce, from its name's prefix.
fn expected_kind(stem: &str) -> ErrorKind {
    const PREFIXES: &[(&str, ErrorKind)] = &[
        ("syntax_", ErrorKind::Syntax),
        ("limit_", ErrorKind::Limit),
        ("name_", ErrorKind::UnknownName),
        ("structure_", ErrorKind::Structure),
        ("nonlinear_", ErrorKind::Nonlinear),
        ("inhomogeneous", ErrorKind::Inhomogeneous),
        ("order_", ErrorKind::NotSecondOrder),
        ("not_rational_", ErrorKind::NotRational),
        ("division_by_zero", ErrorKind::DivisionByZero),
    ];
    PREFIXES
        .iter()
        .find(|(p, _)| stem.starts_with(p))
        .map(|(_, k)| *k)
        .unwrap_or_else(|| panic!("tests/bad/{stem}.ode: the name starts with no known prefix"))
}

/// The same for LaTeX: every `tests/bad/*.tex` (first line `% exercises: …`)
/// read as LaTeX, by the library and by the binary (a `.tex` file is LaTeX).
#[test]
fn bad_latex_inputs() {
    insta::glob!("bad/*.tex", |path| {
        let out = check_corpus_file(path, ".tex", "% exercises: ", |t| Input::Latex(t));
        insta::assert_snapshot!(out);
    });
}

/// Runs one corpus file through the library (an error of the kind its name
/// promises, located in the text) and the binary (exit 2, nothing on stdout, a
/// diagnostic naming the file); returns what to snapshot.
fn check_corpus_file(path: &Path, ext: &str, comment: &str, input: fn(&str) -> Input<'_>) -> String {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let name = path.file_name().and_then(|n| n.to_str()).expect("a UTF-8 file name");
    let stem = name.trim_end_matches(ext);
    let text = std::fs::read_to_string(path).expect("a readable corpus file");
    assert!(text.starts_with(comment), "{name}: the file must start with a '{comment}...' comment");
    let err = match reduce(&input(&text), &ReduceOptions::default()) {
        Ok(_) => panic!("{name}: reduced without error"),
        Err(e) => e,
    };
    assert!(err.is_bad_input(), "{name}: an internal error: {err:?}");
    assert_eq!(err.kind, expected_kind(stem), "{name}: {}", err.message);
    if let Some(span) = err.span {
        assert!(span.start <= span.end && span.end <= text.len(), "{name}: span {span:?} outside the text");
    }
    let rel = format!("tests/bad/{name}");
    let out = Command::new(env!("CARGO_BIN_EXE_canonode")).current_dir(root).args(["reduce", &rel]).output().expect("the binary runs");
    let stderr = String::from_utf8(out.stderr).expect("UTF-8 on stderr");
    assert_eq!(out.status.code(), Some(2), "{name}: {stderr}");
    assert!(out.stdout.is_empty(), "{name}: printed on stdout");
    assert!(stderr.starts_with(&format!("{rel}:")), "{name}: the diagnostic does not start with the file name: {stderr}");
    let shown = format!("{stderr}[exit status {}]", out.status.code().unwrap_or(-1));
    shown
}

#[test]
fn bad_inputs() {
    insta::glob!("bad/*.ode", |path| {
        let out = check_corpus_file(path, ".ode", "# exercises: ", |t| Input::Program(t));
        insta::assert_snapshot!(out);
    });
}
