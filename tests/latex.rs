//! The LaTeX of every command that offers `--format latex` (`reduce`,
//! `classify`, `eval`, `recurrence`) compiles and fits the page: for every
//! sample (and a few option cases) the fragments are put, one after another,
//! into a single minimal amsmath article and run once through `pdflatex
//! -halt-on-error`; the test fails on any error and on any overfull box (a
//! row wider than the text by more than 1 pt, or a display taller than the
//! page), naming the fragment. pdflatex is required: without it the test
//! fails with a message, unless `CANONODE_SKIP_LATEX=1` opts out (then only
//! the structural check runs, and a note says so). A structural check always
//! runs: balanced braces, `\left`/`\right` pairs and environments, `$` pairs
//! inside `\text`, and only macros from a list of standard LaTeX/amsmath ones.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// Macros of LaTeX itself and amsmath/amssymb that the fragments may use.
const ALLOWED_MACROS: &[&str] = &[
    "frac",
    "tfrac",
    "sqrt",
    "left",
    "right",
    "text",
    "mathrm",
    "begin",
    "end",
    "quad",
    "qquad",
    "in",
    "infty",
    "to",
    "prod",
    "sum",
    "big",
    "Big",
    "times",
    "cdot",
    "approx",
    "le",
    "ge",
    "ne",
    "surd",
    "sim",
    "backslash",
    "dots",
    "displaybreak",
    "operatorname",
    "sinh",
    "cosh",
    "tanh",
    "sin",
    "cos",
    "tan",
];

/// LaTeX's own Greek-letter macros (every lower-case letter with its `var` forms, and the
/// upper-case letters that differ from Latin ones; common practice).
const GREEK_MACROS: &str = "alpha beta gamma delta epsilon varepsilon zeta eta theta vartheta iota kappa lambda mu nu xi pi varpi rho varrho \
    sigma varsigma tau upsilon phi varphi chi psi omega Gamma Delta Theta Lambda Xi Pi Sigma Upsilon Phi Psi Omega";

fn allowed_macro(name: &str) -> bool {
    ALLOWED_MACROS.contains(&name) || GREEK_MACROS.split_whitespace().any(|g| g == name)
}

/// Control symbols: thin space, space, line break, braces as characters, and the
/// text-mode escapes of `_ & % # $ ^`.
const ALLOWED_SYMBOLS: &[char] = &[',', ' ', '\\', '{', '}', '_', '&', '%', '#', '$', '^'];

/// The one environment the fragments open.
const ALLOWED_ENVIRONMENTS: &[&str] = &["align*"];

fn canonode(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_canonode")).current_dir(env!("CARGO_MANIFEST_DIR")).args(args).output().expect("the binary runs");
    assert!(out.status.success(), "canonode {args:?} failed: {}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8(out.stdout).expect("UTF-8 on stdout")
}

/// The structural check of one fragment; returns the problems found.
fn structure(tex: &str) -> Vec<String> {
    let mut problems = Vec::new();
    let mut braces: Vec<usize> = Vec::new();
    let mut envs: Vec<String> = Vec::new();
    let mut lefts = 0i64;
    // Inside \text{...} a `$` opens or closes math; count per \text group.
    let mut text_depth: Vec<usize> = Vec::new();
    let mut dollars_open = false;
    let b = tex.as_bytes();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'\\' => {
                let start = i + 1;
                let mut j = start;
                while j < b.len() && b[j].is_ascii_alphabetic() {
                    j += 1;
                }
                if j == start {
                    // A control symbol.
                    let c = tex[start..].chars().next().unwrap_or(' ');
                    if !ALLOWED_SYMBOLS.contains(&c) {
                        problems.push(format!("control symbol \\{c} is not allowed"));
                    }
                    i = start + c.len_utf8();
                    continue;
                }
                let name = &tex[start..j];
                if !allowed_macro(name) {
                    problems.push(format!("macro \\{name} is not in the allowed list"));
                }
                match name {
                    "left" => lefts += 1,
                    "right" => lefts -= 1,
                    "begin" | "end" => {
                        let rest = &tex[j..];
                        let env = rest.strip_prefix('{').and_then(|r| r.split_once('}')).map(|(e, _)| e.to_string());
                        match (name, env) {
                            (_, None) => problems.push(format!("\\{name} without {{environment}}")),
                            ("begin", Some(e)) => {
                                if !ALLOWED_ENVIRONMENTS.contains(&e.as_str()) {
                                    problems.push(format!("environment {e} is not allowed"));
                                }
                                envs.push(e);
                            }
                            (_, Some(e)) => {
                                if envs.pop().as_deref() != Some(e.as_str()) {
                                    problems.push(format!("\\end{{{e}}} does not close the open environment"));
                                }
                            }
                        }
                    }
                    "text" if b.get(j) == Some(&b'{') => {
                        text_depth.push(braces.len() + 1);
                    }
                    _ => {}
                }
                if lefts < 0 {
                    problems.push("\\right without \\left".into());
                    lefts = 0;
                }
                i = j;
                continue;
            }
            b'{' => braces.push(i),
            b'}' => {
                if braces.pop().is_none() {
                    problems.push(format!("unbalanced '}}' at byte {i}"));
                }
                if text_depth.last() == Some(&(braces.len() + 1)) {
                    text_depth.pop();
                    if dollars_open {
                        problems.push("a \\text group ends inside $...$".into());
                        dollars_open = false;
                    }
                }
            }
            b'$' => {
                if text_depth.is_empty() {
                    problems.push("'$' outside \\text (the fragment is already in math mode)".into());
                } else {
                    dollars_open = !dollars_open;
                }
            }
            b'%' | b'#' => problems.push(format!("'{}' at byte {i} would be a comment or a parameter", b[i] as char)),
            _ => {}
        }
        i += 1;
    }
    if !braces.is_empty() {
        problems.push(format!("{} unclosed '{{'", braces.len()));
    }
    if lefts != 0 {
        problems.push(format!("{lefts} \\left without \\right"));
    }
    if !envs.is_empty() {
        problems.push(format!("unclosed environments: {envs:?}"));
    }
    // Characters outside ASCII need a Unicode engine or a font: not in a minimal pdflatex document.
    if let Some(c) = tex.chars().find(|c| !c.is_ascii()) {
        problems.push(format!("non-ASCII character {c:?} (pdflatex without inputenc/fonts cannot print it)"));
    }
    problems
}

const PREAMBLE: &str = "\\documentclass{article}\n\\usepackage{amsmath,amssymb}\n\\begin{document}\n";
const CLOSING: &str = "\\end{document}\n";

/// Is pdflatex here? Its absence fails the test unless `CANONODE_SKIP_LATEX=1`.
fn pdflatex_available() -> bool {
    let found = Command::new("pdflatex").arg("--version").stdout(Stdio::null()).stderr(Stdio::null()).status().is_ok_and(|s| s.success());
    if !found {
        assert!(
            std::env::var("CANONODE_SKIP_LATEX").as_deref() == Ok("1"),
            "pdflatex is not on PATH: install TeX (Debian: texlive-latex-base) or set CANONODE_SKIP_LATEX=1 to check the fragments structurally only"
        );
        // Straight to stderr, past the test harness's capture, so that the skip is seen.
        use std::io::Write;
        let note = "note: CANONODE_SKIP_LATEX=1 and no pdflatex: the LaTeX fragments were checked structurally only\n";
        let _ = std::io::stderr().write_all(note.as_bytes());
    }
    found
}

/// A problem pdflatex reported, with the fragment it belongs to.
#[derive(Debug)]
struct Problem {
    case: String,
    what: String,
}

/// Overfull boxes in a log beyond `tolerance_pt`, and errors, each with the
/// case named by the last `CASE name` line before it.
fn log_problems(log: &str, tolerance_pt: f64) -> Vec<Problem> {
    let mut case = "(preamble)".to_string();
    let mut out = Vec::new();
    let mut lines = log.lines();
    while let Some(l) = lines.next() {
        if let Some(c) = l.strip_prefix("CASE ") {
            case = c.trim().to_string();
        } else if l.starts_with("Overfull \\hbox") || l.starts_with("Overfull \\vbox") {
            let pt = l.split_once('(').and_then(|(_, r)| r.split_once("pt")).and_then(|(n, _)| n.parse::<f64>().ok()).unwrap_or(f64::INFINITY);
            if pt > tolerance_pt {
                out.push(Problem { case: case.clone(), what: l.to_string() });
            }
        } else if l.starts_with('!') {
            let more: Vec<&str> = lines.by_ref().take(3).collect();
            out.push(Problem { case: case.clone(), what: format!("{l} {}", more.join(" ")) });
        }
    }
    out
}

/// Compiles one document holding `fragments` (each announced in the log by `CASE name`); returns the log.
fn compile_all(dir: &Path, fragments: &[(String, String)]) -> String {
    let mut body = String::new();
    for (name, tex) in fragments {
        body.push_str(&format!("\\typeout{{CASE {name}}}\n{tex}\n"));
    }
    body.push_str("\\typeout{CASE (end)}\n");
    let file = dir.join("all.tex");
    std::fs::write(&file, format!("{PREAMBLE}{body}{CLOSING}")).expect("the document is written");
    let out = Command::new("pdflatex")
        .current_dir(dir)
        .args(["-halt-on-error", "-interaction=nonstopmode", "-no-shell-escape", "all.tex"])
        .stdin(Stdio::null())
        .output()
        .expect("pdflatex runs");
    let log = std::fs::read_to_string(dir.join("all.log")).unwrap_or_else(|_| String::from_utf8_lossy(&out.stdout).into_owned());
    if !out.status.success() && !log.lines().any(|l| l.starts_with('!')) {
        panic!("pdflatex failed without an error line:\n{}", String::from_utf8_lossy(&out.stdout));
    }
    log
}

/// The cases: (name, canonode arguments). Every sample through `reduce` and
/// `classify`, options that add rows (a change of variable, the Schrödinger
/// potential, boundary exponents), and `eval` and `recurrence` on several samples.
fn cases() -> Vec<(String, Vec<String>)> {
    let mut out = Vec::new();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir).expect("samples/").map(|e| e.expect("an entry").path()).collect();
    files.retain(|p| p.extension().is_some_and(|e| e == "ode"));
    files.sort();
    for f in files {
        let stem = f.file_stem().and_then(|s| s.to_str()).expect("a UTF-8 name").to_string();
        let rel = format!("samples/{stem}.ode");
        for cmd in ["reduce", "classify"] {
            out.push((format!("{stem}_{cmd}"), vec![cmd.to_string(), rel.clone(), "--format".into(), "latex".into()]));
        }
    }
    let extra: &[(&str, &[&str])] = &[
        ("rw_tortoise", &["reduce", "samples/regge_wheeler.ode", "--dxdz", "1/f"]),
        ("legendre_moebius", &["reduce", "samples/legendre.ode", "--subst", "x=(1+u)/(1-u)"]),
        ("bessel_infinity", &["classify", "samples/bessel.ode", "--at-infinity"]),
        ("rw_qnm", &["classify", "samples/regge_wheeler.ode", "--boundary", "qnm"]),
        ("teukolsky_qnm", &["classify", "samples/teukolsky_radial.ode", "--boundary", "qnm"]),
        ("halo_qnm", &["classify", "samples/demo_tamarind_halo.ode", "--boundary", "qnm"]),
        ("hydrogen_bound", &["classify", "samples/hydrogen_radial.ode", "--boundary", "bound"]),
        ("teukolsky_eval", &["eval", "samples/teukolsky_radial.ode", "--at", "r=3.5,M=1,a=0.7,omega=0.4-0.09i,m=2,s=-2,lam=4.1"]),
        ("halo_eval", &["eval", "samples/demo_tamarind_halo.ode", "--at", "r=3.1,M=1,h=0.3,omega=0.37-0.089i,l=2"]),
        ("heun_eval", &["eval", "samples/heun_general.ode", "--at", "z=0.3,a=2,q=0.5,alpha=1,beta=2,gamma=0.5,delta=0.25,epsilon=1.25"]),
        ("rw_eval", &["eval", "samples/regge_wheeler.ode", "--at", "r=7,M=1,omega=0.37-0.089i,l=2,s=2"]),
        ("teukolsky_recurrence", &["recurrence", "samples/teukolsky_radial.ode", "--about", "θ"]),
        ("rw_recurrence", &["recurrence", "samples/regge_wheeler.ode", "--about", "2*M"]),
        ("heun_recurrence", &["recurrence", "samples/heun_general.ode", "--about", "0"]),
        ("rn_recurrence", &["recurrence", "samples/reissner_nordstrom_scalar.ode", "--about", "θ"]),
        ("spheroidal_recurrence", &["recurrence", "samples/spheroidal_spin_weighted.ode", "--about", "1"]),
    ];
    for (name, args) in extra {
        let mut a: Vec<String> = args.iter().map(|s| s.to_string()).collect();
        a.extend(["--format".to_string(), "latex".to_string()]);
        out.push((name.to_string(), a));
    }
    out
}

#[test]
fn latex_fragments_compile_and_fit_the_page() {
    let have = pdflatex_available();
    let dir = std::env::temp_dir().join(format!("canonode-latex-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("a temporary directory");
    let mut failures = Vec::new();
    let mut fragments = Vec::new();
    for (name, args) in cases() {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let tex = canonode(&args);
        assert!(tex.starts_with("\\begin{align*}\n") && tex.ends_with("\\end{align*}\n"), "{name}: not one align* block:\n{tex}");
        for p in structure(&tex) {
            failures.push(format!("{name}: {p}"));
        }
        fragments.push((name, tex));
    }
    if have {
        // The checks can fail: an over-wide row and an undefined macro are both reported, with their case.
        let probe = compile_all(
            &dir,
            &[
                ("wide".into(), format!("\\begin{{align*}}\nx &= {}\n\\end{{align*}}\n", vec!["a_{1} b_{2}"; 60].join(" + "))),
                ("undefined".into(), "\\begin{align*}\nx &= \\undefinedmacro y\n\\end{align*}\n".into()),
            ],
        );
        let found = log_problems(&probe, 1.0);
        assert!(found.iter().any(|p| p.case == "wide" && p.what.contains("Overfull \\hbox")), "an over-wide row was not reported: {found:?}");
        assert!(
            found.iter().any(|p| p.case == "undefined" && p.what.contains("Undefined control sequence")),
            "an undefined macro was not reported: {found:?}"
        );
        let log = compile_all(&dir, &fragments);
        for p in log_problems(&log, 1.0) {
            let tex = fragments.iter().find(|(n, _)| *n == p.case).map(|(_, t)| t.as_str()).unwrap_or("");
            failures.push(format!("{}: {}\n{tex}", p.case, p.what));
        }
        assert!(log.contains("CASE (end)"), "pdflatex stopped before the last fragment:\n{}", failures.join("\n"));
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    if have {
        eprintln!("compiled {} fragments in one pdflatex run: no error, no overfull box", fragments.len());
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn structural_check_catches_what_would_not_compile() {
    // The check itself must fail on broken fragments (each from a real class of mistake).
    assert!(structure("\\begin{align*}\nx &= \\frac{1}{2\n\\end{align*}\n").iter().any(|p| p.contains("unclosed")));
    assert!(structure("\\begin{align*}\nx &= \\left(y\n\\end{align*}\n").iter().any(|p| p.contains("\\left without")));
    assert!(structure("\\begin{align*}\nx &= \\foo y\n\\end{align*}\n").iter().any(|p| p.contains("\\foo")));
    assert!(structure("\\begin{align*}\nx &= \\text{at $\\infty}\n\\end{align*}\n").iter().any(|p| p.contains("inside $")));
    assert!(structure("\\begin{align*}\nx &= ∞\n\\end{align*}\n").iter().any(|p| p.contains("non-ASCII")));
    assert!(structure("\\begin{align*}\nx &= 1\n\\end{align}\n").iter().any(|p| p.contains("does not close")));
    assert!(structure("\\begin{align*}\n&\\text{rank $1$ at $\\infty$} \\\\\nx &= \\frac{1}{2}\n\\end{align*}\n").is_empty());
}
