//! `canonode emit`: the emitted C and Rust evaluators compile without
//! warnings (`cc -std=c99 -Wall -Wextra -Werror`, `rustc -D warnings`) and
//! agree with canonode's exact evaluation (Gaussian-rational evaluation of the
//! canonical RatFunc) to a relative error of 1e-12 at random points; the op
//! counts meet their targets; bad requests exit 2.

use canonode::{reduce, GRat, Input, Int, Rat, RatFunc, ReduceOptions, Reduction};
use std::path::{Path, PathBuf};
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_canonode");

/// A scratch directory under the system temp dir, removed on drop.
struct Scratch(PathBuf);

impl Scratch {
    fn new(tag: &str) -> Scratch {
        let nanos = std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH).map(|d| d.as_nanos()).unwrap_or(0);
        let p = std::env::temp_dir().join(format!("canonode-emit-{tag}-{}-{nanos}", std::process::id()));
        std::fs::create_dir_all(&p).unwrap();
        Scratch(p)
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn samples() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/samples")).unwrap().map(|e| e.unwrap().path()).collect();
    v.retain(|p| p.extension().is_some_and(|e| e == "ode"));
    v.sort();
    v
}

fn canonode(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(BIN).args(args).output().unwrap();
    (out.status.code().unwrap_or(-1), String::from_utf8_lossy(&out.stdout).into_owned(), String::from_utf8_lossy(&out.stderr).into_owned())
}

mod common;
use common::Rng;

/// A deterministic pseudo-random point of dyadic rationals k/16, |k| ≤ 48 (exact
/// as doubles, so the compiled code and the exact evaluation see the same point).
fn random_point(rng: &mut Rng, n: usize) -> Vec<GRat> {
    let mut dyadic = || Rat::new(Int::from(rng.range(-48, 48)), Int::from(16)).unwrap();
    (0..n).map(|_| GRat { re: dyadic(), im: dyadic() }).collect()
}

/// Points where every output is finite and not tiny or huge (away from poles and zeros).
/// A parameter point and the expected outputs there.
type Sample = (Vec<GRat>, Vec<(f64, f64)>);

fn points(outputs: &[RatFunc], nvars: usize, count: usize, seed: u64) -> Vec<Sample> {
    let mut rng = Rng::new(seed);
    let mut out = Vec::new();
    let mut tries = 0;
    while out.len() < count {
        tries += 1;
        assert!(tries < 10_000, "no usable points");
        let x = random_point(&mut rng, nvars);
        let vals: Option<Vec<(f64, f64)>> = outputs.iter().map(|r| r.eval(&x).map(|v| v.to_f64())).collect();
        let Some(vals) = vals else { continue };
        if vals.iter().all(|(a, b)| (a.hypot(*b)) > 1e-6 && a.hypot(*b) < 1e12) {
            out.push((x, vals));
        }
    }
    out
}

fn doubles(x: &[GRat]) -> Vec<(f64, f64)> {
    x.iter().map(|g| g.to_f64()).collect()
}

/// The deps directory holding this test binary, where cargo put num_complex's rlib.
fn deps_dir() -> PathBuf {
    std::env::current_exe().unwrap().parent().unwrap().to_path_buf()
}

fn num_complex_rlibs() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(deps_dir())
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.file_name().and_then(|n| n.to_str()).is_some_and(|n| n.starts_with("libnum_complex-") && n.ends_with(".rlib")))
        .collect();
    v.sort();
    assert!(!v.is_empty(), "no num_complex rlib next to {}", deps_dir().display());
    v
}

fn run_checked(cmd: &mut Command, what: &str) -> String {
    let out = cmd.output().unwrap_or_else(|e| panic!("{what}: cannot run: {e}"));
    assert!(out.status.success(), "{what} failed:\n{}\n{}", String::from_utf8_lossy(&out.stdout), String::from_utf8_lossy(&out.stderr));
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// One call of an emitted function: which, the argument index set and the number of outputs.
#[derive(Clone, Copy)]
enum Call {
    Value(&'static str),
    Recurrence(usize),
}

fn c_lit(x: f64) -> String {
    format!("{x:.17e}")
}

/// Compiles the C source with a main that evaluates `fname` at the points and prints the results.
fn run_c(dir: &Path, code: &str, prefix: &str, call: Call, pts: &[Vec<(f64, f64)>]) -> Vec<Vec<(f64, f64)>> {
    std::fs::write(dir.join("emitted.c"), code).unwrap();
    run_checked(
        Command::new("cc").args(["-std=c99", "-Wall", "-Wextra", "-Werror", "-c", "emitted.c", "-o", "emitted.o"]).current_dir(dir),
        "cc emitted.c",
    );
    let np = pts[0].len() - 1;
    let mut m = String::from("#include <stdio.h>\n#include <complex.h>\n#include \"emitted.c\"\nint main(void)\n{\n");
    m.push_str(&format!("    double complex p[{}] = {{0}};\n", np.max(1)));
    for x in pts {
        for (i, (re, im)) in x[1..].iter().enumerate() {
            m.push_str(&format!("    p[{i}] = {} + {}*I;\n", c_lit(*re), c_lit(*im)));
        }
        let arg = format!("({} + {}*I)", c_lit(x[0].0), c_lit(x[0].1));
        match call {
            Call::Value(f) => {
                m.push_str(&format!("    {{ double complex v = {prefix}_{f}({arg}, p); printf(\"%.17e %.17e\\n\", creal(v), cimag(v)); }}\n"))
            }
            Call::Recurrence(k) => m.push_str(&format!(
                "    {{ double complex c[{k}]; {prefix}_recurrence({arg}, p, c); for (int j = 0; j < {k}; j++) printf(\"%.17e %.17e\\n\", creal(c[j]), cimag(c[j])); }}\n"
            )),
        }
    }
    m.push_str("    return 0;\n}\n");
    std::fs::write(dir.join("main.c"), m).unwrap();
    run_checked(Command::new("cc").args(["-std=c99", "-Wall", "-Wextra", "-Werror", "main.c", "-o", "main_c"]).current_dir(dir), "cc main.c");
    parse_results(&run_checked(&mut Command::new(dir.join("main_c")), "C evaluator"), call)
}

/// Compiles the Rust source as a library with `-D warnings`, then a main that evaluates it.
fn run_rust(dir: &Path, code: &str, prefix: &str, call: Call, pts: &[Vec<(f64, f64)>]) -> Vec<Vec<(f64, f64)>> {
    std::fs::write(dir.join("emitted.rs"), code).unwrap();
    let deps = format!("dependency={}", deps_dir().display());
    let mut last_err = String::new();
    let mut chosen = None;
    for rlib in num_complex_rlibs() {
        let ext = format!("num_complex={}", rlib.display());
        let out = Command::new("rustc")
            .args([
                "--edition",
                "2021",
                "-D",
                "warnings",
                "--crate-type",
                "rlib",
                "--crate-name",
                "emitted",
                "emitted.rs",
                "-L",
                &deps,
                "--extern",
                &ext,
            ])
            .current_dir(dir)
            .output()
            .unwrap();
        if out.status.success() {
            chosen = Some(ext);
            break;
        }
        last_err = String::from_utf8_lossy(&out.stderr).into_owned();
    }
    let ext = chosen.unwrap_or_else(|| panic!("rustc emitted.rs failed:\n{last_err}\n{code}"));
    let np = pts[0].len() - 1;
    let c = |(re, im): (f64, f64)| format!("Complex64::new({}, {})", c_lit(re), c_lit(im));
    let mut m = String::from("use num_complex::Complex64;\nfn main() {\n");
    for x in pts {
        let ps: Vec<String> = x[1..].iter().map(|v| c(*v)).collect();
        m.push_str(&format!("    let p: [Complex64; {np}] = [{}];\n", ps.join(", ")));
        match call {
            Call::Value(f) => {
                m.push_str(&format!("    {{ let v = emitted::{prefix}_{f}({}, &p); println!(\"{{:.17e}} {{:.17e}}\", v.re, v.im); }}\n", c(x[0])))
            }
            Call::Recurrence(_) => m.push_str(&format!(
                "    for v in emitted::{prefix}_recurrence({}, &p) {{ println!(\"{{:.17e}} {{:.17e}}\", v.re, v.im); }}\n",
                c(x[0])
            )),
        }
    }
    m.push_str("}\n");
    std::fs::write(dir.join("main.rs"), m).unwrap();
    run_checked(
        Command::new("rustc")
            .args([
                "--edition",
                "2021",
                "-D",
                "warnings",
                "main.rs",
                "-o",
                "main_rs",
                "-L",
                &deps,
                "-L",
                ".",
                "--extern",
                &ext,
                "--extern",
                "emitted=libemitted.rlib",
            ])
            .current_dir(dir),
        "rustc main.rs",
    );
    parse_results(&run_checked(&mut Command::new(dir.join("main_rs")), "Rust evaluator"), call)
}

fn parse_results(text: &str, call: Call) -> Vec<Vec<(f64, f64)>> {
    let k = match call {
        Call::Value(_) => 1,
        Call::Recurrence(k) => k,
    };
    let vals: Vec<(f64, f64)> = text
        .lines()
        .map(|l| {
            let mut it = l.split_whitespace().map(|t| t.parse::<f64>().unwrap());
            (it.next().unwrap(), it.next().unwrap())
        })
        .collect();
    vals.chunks(k).map(|c| c.to_vec()).collect()
}

fn rel_err(got: (f64, f64), want: (f64, f64)) -> f64 {
    (got.0 - want.0).hypot(got.1 - want.1) / want.0.hypot(want.1)
}

/// Emits, compiles and runs in both languages, comparing with exact values.
fn check(file: &str, args: &[&str], call: Call, outputs: &[RatFunc], nvars: usize, tag: &str) {
    let prefix = "ev";
    let mut pts = points(outputs, nvars, 24, 0x5eed ^ tag.len() as u64);
    pts.sort_by_key(|(x, _)| format!("{x:?}"));
    let dbl: Vec<Vec<(f64, f64)>> = pts.iter().map(|(x, _)| doubles(x)).collect();
    for lang in ["c", "rust"] {
        let dir = Scratch::new(&format!("{tag}-{lang}"));
        let mut a = vec!["emit", file, "--lang", lang, "--name", prefix];
        a.extend_from_slice(args);
        let (code, text, err) = canonode(&a);
        assert_eq!(code, 0, "{file} {args:?}: {err}");
        let got = if lang == "c" { run_c(&dir.0, &text, prefix, call, &dbl) } else { run_rust(&dir.0, &text, prefix, call, &dbl) };
        assert_eq!(got.len(), pts.len());
        for ((x, want), g) in pts.iter().zip(&got) {
            for (w, v) in want.iter().zip(g) {
                let e = rel_err(*v, *w);
                assert!(e <= 1e-12, "{file} ({lang}) at {x:?}: got {v:?}, exact {w:?}, relative error {e:e}");
            }
        }
    }
}

fn reduced(file: &Path, dxdz: Option<&str>) -> Reduction {
    let src = std::fs::read_to_string(file).unwrap();
    reduce(&Input::Program(&src), &ReduceOptions { dxdz: dxdz.map(String::from), ..ReduceOptions::default() }).unwrap()
}

#[test]
fn q_of_every_sample_compiles_and_matches_exact_values() {
    for f in samples() {
        let red = reduced(&f, None);
        let tag = f.file_stem().unwrap().to_string_lossy().into_owned();
        check(f.to_str().unwrap(), &[], Call::Value("q"), std::slice::from_ref(&red.normal.q), red.field.names().len(), &tag);
    }
}

#[test]
fn regge_wheeler_potential_matches_exact_values() {
    // dr*/dr = 1/f, the tortoise coordinate named in the sample's header.
    let f = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/regge_wheeler.ode"));
    let red = reduced(f, Some("1/f"));
    let v = red.schrodinger.as_ref().unwrap().v.clone();
    check(f.to_str().unwrap(), &["--what", "potential", "--dxdz", "1/f"], Call::Value("potential"), &[v], red.field.names().len(), "rw-potential");
}

#[test]
fn regge_wheeler_recurrence_about_the_horizon_matches_exact_values() {
    // The horizon r = 2M with the ingoing exponent and the outgoing branch at infinity (README's example).
    let f = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/regge_wheeler.ode"));
    let red = reduced(f, None);
    let an = canonode::analyse(&red).unwrap();
    let asked = canonode::command::asked_about(&red, &an, "2*M", None, Some("2*M=2,inf=1")).unwrap();
    let rec = canonode::requested(&red, &asked.about, &asked.series, &asked.choices, false, None).unwrap();
    let args = ["--what", "recurrence", "--about", "2*M", "--exponents", "2*M=2,inf=1"];
    check(f.to_str().unwrap(), &args, Call::Recurrence(rec.coeffs.len()), &rec.coeffs, rec.field.names().len(), "rw-recurrence");
}

#[test]
fn kerr_recurrence_about_the_adjoined_horizon_matches_exact_values() {
    // The Teukolsky radial equation's horizon r₊ is a root θ of r² − 2Mr + a²:
    // `--about θ` adjoins it (θ is the last parameter) and the three-term
    // recurrence of Leaver 1985 (ingoing at r₊, outgoing at ∞) is emitted
    // and compared with the exact coefficients at random points, θ included.
    let f = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/teukolsky_radial.ode"));
    let red = reduced(f, None);
    let an = canonode::analyse(&red).unwrap();
    let choices = canonode::command::read_choices(&red, &an, "θ=2,inf=1").unwrap();
    let root = canonode::recurrence_about_root(&red, &choices).unwrap();
    let rec = root.rec;
    assert_eq!((rec.coeffs.len(), root.exponent), (3, 1));
    assert_eq!(root.meaning, "θ, a root of r^2 - 2*M*r + a^2");
    assert_eq!(rec.field.names().last().map(String::as_str), Some("θ"));
    let args = ["--what", "recurrence", "--about", "θ", "--exponents", "θ=2,inf=1"];
    check(f.to_str().unwrap(), &args, Call::Recurrence(rec.coeffs.len()), &rec.coeffs, rec.field.names().len(), "kerr-recurrence");
}

#[test]
fn hostile_parameter_names_still_compile_and_match() {
    // Keywords of C and Rust, num-complex's field name re, a Greek letter and a name
    // that sanitises like it (λ and lambda), Greek capital iota (no ASCII spelling, it
    // looks like C's I; the input language reserves I itself), and names that look
    // like the emitted locals and the recurrence index (p_lambda, n).
    let dir = Scratch::new("hostile-src");
    let path = dir.0.join("hostile names.ode");
    let src = "var z\nparam int, Ι, re, λ, lambda, fn, complex, p_lambda, n\node w'' + (int*z^2 + Ι*z + I*re*z + re/(z - λ) + lambda*fn/(z + complex)^2 + p_lambda*n)*w = 0\n";
    std::fs::write(&path, src).unwrap();
    let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
    check(path.to_str().unwrap(), &[], Call::Value("q"), std::slice::from_ref(&red.normal.q), red.field.names().len(), "hostile");
    // The default prefix comes from the file name with the space replaced.
    let (code, text, err) = canonode(&["emit", path.to_str().unwrap(), "--lang", "rust"]);
    assert_eq!(code, 0, "{err}");
    assert!(text.contains("pub fn hostile_names_q("), "{text}");
}

#[test]
fn op_counts_meet_their_targets() {
    // Emitted ≤ plain Horner on every sample (flops and operation count); on the
    // Teukolsky radial equation (its lets Delta and K as building blocks) at least 3 times
    // fewer operations than the naive form.
    for f in samples() {
        let red = reduced(&f, None);
        let named: Vec<_> = red.ode.lets.iter().map(|(_, v)| v.clone()).collect();
        let ch = canonode::choose(&red.field, std::slice::from_ref(&red.normal.q), &named, &Default::default()).unwrap();
        assert!(ch.emitted.flops() <= ch.horner.flops() && ch.emitted.total() <= ch.horner.total(), "{}: {ch:?}", f.display());
        assert_eq!(ch.program.to_ratfuncs(&red.field).unwrap(), vec![red.normal.q.clone()]);
        if f.ends_with("teukolsky_radial.ode") {
            assert!(3 * ch.emitted.total() <= ch.naive.total(), "teukolsky: {} vs naive {}", ch.emitted.total(), ch.naive.total());
        }
    }
}

#[test]
fn stats_are_printed_and_deterministic() {
    let f = concat!(env!("CARGO_MANIFEST_DIR"), "/samples/hypergeometric.ode");
    let (code, a, err) = canonode(&["emit", f, "--lang", "c", "--stats"]);
    assert_eq!(code, 0, "{err}");
    assert!(a.contains("plain Horner") && a.contains("naive") && a.contains("emitted"), "{a}");
    let (_, b, _) = canonode(&["emit", f, "--lang", "c", "--stats"]);
    assert_eq!(a, b);
}

#[test]
fn bad_requests_exit_2_with_a_message() {
    let f = concat!(env!("CARGO_MANIFEST_DIR"), "/samples/regge_wheeler.ode");
    let cases: &[(&[&str], &str)] = &[
        (&["--what", "recurrence"], "--about"),
        (&["--what", "potential"], "--dxdz"),
        (&["--what", "recurrence", "--about", "3*M"], "not a singular point"),
        (&["--name", "9lives"], "not an identifier"),
        (&["--what", "recurrence", "--about", "2*M", "--exponents", "2*M=7"], "choice 7"),
    ];
    for (extra, needle) in cases {
        let mut a = vec!["emit", f, "--lang", "c"];
        a.extend_from_slice(extra);
        let (code, out, err) = canonode(&a);
        assert_eq!(code, 2, "{extra:?}: {out}{err}");
        assert!(err.contains(needle), "{extra:?}: {err}");
        assert!(out.is_empty(), "{extra:?}: no code on failure");
    }
    // `all` without --about or --dxdz emits Q and says what it skipped.
    let (code, out, _) = canonode(&["emit", f, "--lang", "c", "--what", "all"]);
    assert_eq!(code, 0);
    assert!(out.contains("Not emitted: the potential") && out.contains("Not emitted: the recurrence"), "{out}");
}
