//! The invariants of DEVELOPERS.md, checked on the source text so that a
//! change that breaks one fails here, with the file and line named:
//!
//! - only `cli` (and the thin binary) prints;
//! - the pipeline's stages import only from earlier stages (data flows one
//!   way: syntax, algebra, ode, analysis, series, solve, present, emit, cli);
//! - the exact layer (`algebra`) holds floats only in its documented exits
//!   (the conversions `to_f64` and the term-count estimate of the work
//!   limit), counted so the number cannot grow unseen;
//! - command-line option names (`--name`) appear only in `cli`: the library
//!   names an input of the request by `error::RequestInput`, and each front
//!   end spells it (the command line as its option, Python as its keyword);
//! - the public surface is the list chosen in `src/lib.rs`: the stage modules
//!   are private, the only public modules are the facades named in the crate
//!   documentation, and no `pub use` there re-exports a whole module.

use std::path::{Path, PathBuf};

/// The pipeline's stages in order; a stage may import from itself and from earlier ones.
const STAGES: &[&str] = &["syntax", "algebra", "ode", "analysis", "series", "solve", "present", "emit", "cli"];

/// The public modules of `src/lib.rs`: facades of chosen `pub use` items,
/// each named in the crate documentation.
const FACADES: &[&str] = &["code", "command", "numeric", "record"];

/// Lines mentioning `f64` allowed per file of the exact layer (tests excluded).
const FLOATS_IN_ALGEBRA: &[(&str, usize)] = &[("src/algebra/int.rs", 11), ("src/algebra/rational.rs", 6), ("src/algebra/ratfunc.rs", 5)];

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else { return };
    let mut entries: Vec<_> = entries.flatten().map(|e| e.path()).collect();
    entries.sort();
    for p in entries {
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|e| e == "rs") {
            out.push(p);
        }
    }
}

/// The file's lines before its unit-test module, with their numbers,
/// comments dropped (a line comment, a doc comment).
fn code_lines(path: &Path) -> Vec<(usize, String)> {
    let text = std::fs::read_to_string(path).unwrap_or_default();
    let mut out = Vec::new();
    for (i, line) in text.lines().enumerate() {
        if line.trim_start().starts_with("#[cfg(test)]") {
            break;
        }
        let code = match line.find("//") {
            // A `//` inside a string literal is rare in these files; the
            // checks below look for tokens that are not in URLs.
            Some(j) => &line[..j],
            None => line,
        };
        if !code.trim().is_empty() {
            out.push((i + 1, code.to_string()));
        }
    }
    out
}

fn rel(path: &Path) -> String {
    path.strip_prefix(root()).unwrap_or(path).to_string_lossy().replace('\\', "/")
}

fn library_files() -> Vec<PathBuf> {
    let mut files = Vec::new();
    rust_files(&root().join("src"), &mut files);
    files
}

#[test]
fn only_the_command_line_prints() {
    let mut bad = Vec::new();
    for f in library_files() {
        let r = rel(&f);
        if r.starts_with("src/cli/") || r == "src/main.rs" {
            continue;
        }
        for (n, line) in code_lines(&f) {
            for mac in ["println!", "print!(", "eprintln!", "eprint!(", "dbg!("] {
                if line.contains(mac) {
                    bad.push(format!("{r}:{n}: {}", line.trim()));
                }
            }
        }
    }
    assert!(bad.is_empty(), "printing outside src/cli:\n{}", bad.join("\n"));
}

#[test]
fn stages_import_only_from_earlier_stages() {
    let mut bad = Vec::new();
    for f in library_files() {
        let r = rel(&f);
        let Some(stage) = STAGES.iter().position(|s| r.starts_with(&format!("src/{s}/"))) else { continue };
        for (n, line) in code_lines(&f) {
            for (later, name) in STAGES.iter().enumerate().skip(stage + 1) {
                if line.contains(&format!("crate::{name}::")) || line.contains(&format!("crate::{name};")) {
                    bad.push(format!("{r}:{n}: the stage '{}' uses the later stage '{name}' ({later}): {}", STAGES[stage], line.trim()));
                }
            }
        }
    }
    assert!(bad.is_empty(), "imports against the flow of the pipeline:\n{}", bad.join("\n"));
}

#[test]
fn the_exact_layer_keeps_floats_to_its_exits() {
    let mut bad = Vec::new();
    let mut files = Vec::new();
    rust_files(&root().join("src/algebra"), &mut files);
    for f in files {
        let r = rel(&f);
        let count = code_lines(&f).iter().filter(|(_, l)| l.contains("f64") || l.contains("f32")).count();
        let allowed = FLOATS_IN_ALGEBRA.iter().find(|(p, _)| *p == r).map_or(0, |(_, c)| *c);
        if count > allowed {
            bad.push(format!("{r}: {count} lines with floats, at most {allowed} (the documented exits)"));
        }
    }
    assert!(bad.is_empty(), "floats in the exact layer beyond its documented exits:\n{}", bad.join("\n"));
}

/// True when `line` holds an option name: `--` then a lower-case letter,
/// not inside a word or a longer run of dashes.
fn names_an_option(line: &str) -> bool {
    line.match_indices("--").any(|(i, _)| {
        let before = line[..i].chars().next_back();
        let after = line[i + 2..].chars().next();
        after.is_some_and(|c| c.is_ascii_lowercase()) && !before.is_some_and(|c| c.is_alphanumeric() || c == '-' || c == '_')
    })
}

#[test]
fn option_names_stay_in_the_command_line() {
    let mut bad = Vec::new();
    for f in library_files() {
        let r = rel(&f);
        if r.starts_with("src/cli/") || r == "src/main.rs" {
            continue;
        }
        for (n, line) in code_lines(&f) {
            if names_an_option(&line) {
                bad.push(format!("{r}:{n}: {}", line.trim()));
            }
        }
    }
    assert!(bad.is_empty(), "option names outside src/cli (name the input with error::RequestInput):\n{}", bad.join("\n"));
}

#[test]
fn the_option_check_sees_prose() {
    assert!(names_an_option(r#"usage("give --guess")"#));
    assert!(names_an_option(r#"in_option("--at")"#));
    assert!(!names_an_option("a - -b; x--; // ---- rule"));
}

/// The paths a `pub use` statement names (after `pub use `), a group
/// `a::{b, c as d}` expanded, renames and a leading `crate::` dropped.
fn used_paths(statement: &str) -> Vec<String> {
    let statement: String = statement.split_whitespace().collect::<Vec<_>>().join(" ");
    let strip = |p: &str| p.split(" as ").next().unwrap_or(p).trim().trim_start_matches("crate::").to_string();
    match statement.split_once('{') {
        Some((head, group)) => {
            group.trim_end_matches('}').split(',').filter(|x| !x.trim().is_empty()).map(|x| strip(&format!("{head}{}", x.trim()))).collect()
        }
        None => vec![strip(&statement)],
    }
}

/// True when `path` (`emit::record`) names a module of the crate: a file
/// `src/emit/record.rs` or a folder with `mod.rs`.
fn names_a_module(path: &str) -> bool {
    let file = path.replace("::", "/");
    root().join(format!("src/{file}.rs")).is_file() || root().join(format!("src/{file}/mod.rs")).is_file()
}

#[test]
fn the_public_surface_is_the_curated_list() {
    let lib = root().join("src/lib.rs");
    let text = std::fs::read_to_string(&lib).expect("src/lib.rs");
    let mut bad = Vec::new();
    let lines = code_lines(&lib);
    for (n, line) in &lines {
        let Some(rest) = line.trim_start().strip_prefix("pub mod ") else { continue };
        let name = rest.trim_end_matches(['{', ';', ' ']).trim();
        if !FACADES.contains(&name) {
            bad.push(format!(
                "src/lib.rs:{n}: 'pub mod {name}' is not one of the facades {FACADES:?} (make the module private and re-export chosen items)"
            ));
        } else if !text.contains(&format!("[`{name}`]")) {
            bad.push(format!("src/lib.rs:{n}: the facade '{name}' is not named in the crate documentation"));
        }
    }
    let code: Vec<String> = lines.into_iter().map(|(_, l)| l).collect();
    for statement in code.join("\n").split(';') {
        let Some(i) = statement.find("pub use ") else { continue };
        for path in used_paths(&statement[i + "pub use ".len()..]) {
            if names_a_module(&path) {
                bad.push(format!("src/lib.rs: 'pub use {path}' re-exports a whole module (re-export its chosen items)"));
            }
        }
    }
    assert!(bad.is_empty(), "the public surface widened:\n{}", bad.join("\n"));
}

#[test]
fn the_surface_check_sees_modules() {
    assert_eq!(used_paths("crate::emit::code::{emit_code, Lang as L}"), ["emit::code::emit_code", "emit::code::Lang"]);
    assert!(names_a_module("emit::record") && names_a_module("analysis") && names_a_module("analysis::canonical"));
    assert!(!names_a_module("solve::scan::scan") && !names_a_module("ode::reduce"));
}
