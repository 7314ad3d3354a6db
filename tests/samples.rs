//! The sample corpus through the binary: every file in `samples/` is reduced
//! in the three output formats and the output is snapshotted, then a few
//! option cases (point at infinity, a change of variable, the Schrödinger
//! form, `eval`, an inline equation, standard input) are run. Where a sample's
//! normal form is known from its source, the value of Q at a point is checked
//! against that formula, computed here independently in floating point.

use canonode::{reduce, GRat, Input, Int, Rat, ReduceOptions};
use num_complex::Complex64;
use std::io::Write;
use std::path::Path;
use std::process::{Command, Stdio};

/// What one run of the binary printed.
struct Run {
    stdout: String,
    stderr: String,
    code: i32,
}

impl Run {
    /// The text of a snapshot: stdout, then stderr when there is any, then the exit status.
    fn snapshot(&self) -> String {
        let mut s = self.stdout.clone();
        if !self.stderr.is_empty() {
            s.push_str("--- stderr ---\n");
            s.push_str(&self.stderr);
        }
        s.push_str(&format!("[exit status {}]", self.code));
        s
    }
}

/// Runs `canonode ARGS` in the crate's root, feeding `stdin` when given.
fn run(args: &[&str], stdin: Option<&str>) -> Run {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_canonode"));
    cmd.current_dir(env!("CARGO_MANIFEST_DIR")).args(args).stdout(Stdio::piped()).stderr(Stdio::piped());
    cmd.stdin(if stdin.is_some() { Stdio::piped() } else { Stdio::null() });
    let mut child = cmd.spawn().expect("the binary starts");
    if let Some(text) = stdin {
        child.stdin.take().expect("a stdin pipe").write_all(text.as_bytes()).expect("stdin written");
    }
    let out = child.wait_with_output().expect("the binary finishes");
    Run {
        stdout: String::from_utf8(out.stdout).expect("UTF-8 on stdout"),
        stderr: String::from_utf8(out.stderr).expect("UTF-8 on stderr"),
        code: out.status.code().unwrap_or(-1),
    }
}

/// Runs and requires success.
fn run_ok(args: &[&str], stdin: Option<&str>) -> Run {
    let r = run(args, stdin);
    assert_eq!(r.code, 0, "canonode {args:?} failed:\n{}", r.stderr);
    r
}

/// Q at a point from `canonode eval ... --format json`.
fn eval_q(args: &[&str]) -> Complex64 {
    let mut all = vec!["eval"];
    all.extend_from_slice(args);
    all.extend_from_slice(&["--format", "json"]);
    let r = run_ok(&all, None);
    let v: serde_json::Value = serde_json::from_str(&r.stdout).expect("eval prints JSON");
    let q = v["Q"].as_array().expect("Q is [re, im]");
    Complex64::new(q[0].as_f64().expect("re"), q[1].as_f64().expect("im"))
}

fn assert_close(got: Complex64, want: Complex64, what: &str) {
    let err = (got - want).norm() / want.norm().max(1.0);
    assert!(err < 1e-12, "{what}: got {got}, expected {want} (relative error {err:e})");
}

#[test]
fn samples_all_formats() {
    insta::glob!("../samples", "*.ode", |path| {
        let name = path.file_name().and_then(|n| n.to_str()).expect("a UTF-8 file name");
        let rel = format!("samples/{name}");
        let text = run_ok(&["reduce", &rel], None);
        assert!(text.stdout.starts_with(&format!("equation      {rel}\n")), "{name}: the report does not name its input");
        insta::assert_snapshot!("text", text.snapshot());
        let latex = run_ok(&["reduce", &rel, "--format", "latex"], None);
        insta::assert_snapshot!("latex", latex.snapshot());
        let json = run_ok(&["reduce", &rel, "--format", "json"], None);
        let v: serde_json::Value = serde_json::from_str(&json.stdout).unwrap_or_else(|e| panic!("{name}: invalid JSON: {e}"));
        assert!(v["normal_form"]["Q"].is_string(), "{name}: no normal_form.Q in the JSON");
        insta::assert_snapshot!("json", json.snapshot());
    });
}

#[test]
fn samples_classification() {
    insta::glob!("../samples", "*.ode", |path| {
        let name = path.file_name().and_then(|n| n.to_str()).expect("a UTF-8 file name");
        let rel = format!("samples/{name}");
        let text = run_ok(&["classify", &rel], None);
        assert!(text.stdout.starts_with("class   "), "{name}: no class line");
        insta::assert_snapshot!("classify_text", text.snapshot());
        let json = run_ok(&["classify", &rel, "--format", "json"], None);
        let v: serde_json::Value = serde_json::from_str(&json.stdout).unwrap_or_else(|e| panic!("{name}: invalid JSON: {e}"));
        assert!(v["class"].is_string() && v["singular_points"].is_array(), "{name}: classify JSON lacks class or points");
        insta::assert_snapshot!("classify_json", json.snapshot());
        let latex = run_ok(&["classify", &rel, "--format", "latex"], None);
        assert!(
            latex.stdout.starts_with("\\begin{align*}") && latex.stdout.trim_end().ends_with("\\end{align*}"),
            "{name}: LaTeX is not one align* block"
        );
        insta::assert_snapshot!("classify_latex", latex.snapshot());
    });
}

#[test]
fn bessel_at_infinity() {
    let r = run_ok(&["reduce", "samples/bessel.ode", "--at-infinity"], None);
    insta::assert_snapshot!(r.snapshot());
    // DLMF 10.2.1 has the normal form Q(z) = 1 + (1/4 - nu^2)/z^2; with z = 1/t
    // (a Möbius map, Schwarzian 0) Q_t = Q(1/t)/t^4 = (1 + (1/4 - nu^2) t^2)/t^4.
    let (t, nu) = (0.3f64, 0.7f64);
    let want = (1.0 + (0.25 - nu * nu) * t * t) / t.powi(4);
    let got = eval_q(&["samples/bessel.ode", "--at-infinity", "--at", "t=0.3,nu=0.7"]);
    assert_close(got, Complex64::new(want, 0.0), "Bessel at infinity");
}

#[test]
fn airy_at_infinity() {
    let r = run_ok(&["reduce", "samples/airy.ode", "--at-infinity"], None);
    insta::assert_snapshot!(r.snapshot());
    // DLMF 9.2.1: w'' = z w, so Q(z) = -z; with z = 1/t, Q_t = -(1/t)/t^4 = -1/t^5.
    let got = eval_q(&["samples/airy.ode", "--at-infinity", "--at", "t=1.5"]);
    assert_close(got, Complex64::new(-1.0 / 1.5f64.powi(5), 0.0), "Airy at infinity");
}

#[test]
fn legendre_moebius_substitution() {
    // x = (1+u)/(1-u) sends x = 1, -1, infinity to u = 0, infinity, 1.
    let r = run_ok(&["reduce", "samples/legendre.ode", "--subst", "x=(1+u)/(1-u)"], None);
    insta::assert_snapshot!(r.snapshot());
    // From DLMF 14.2.1 the normal form is Q(x) = ((1 - x^2) nu (nu+1) + 1 - mu^2)/(1 - x^2)^2;
    // a Möbius map has Schwarzian 0, so Q_u = Q(g(u)) g'(u)^2 with g' = 2/(1-u)^2.
    let (u, nu, mu) = (0.25f64, 1.5f64, 0.5f64);
    let x = (1.0 + u) / (1.0 - u);
    let qx = ((1.0 - x * x) * nu * (nu + 1.0) + 1.0 - mu * mu) / (1.0 - x * x).powi(2);
    let g1 = 2.0 / (1.0 - u).powi(2);
    let got = eval_q(&["samples/legendre.ode", "--subst", "x=(1+u)/(1-u)", "--at", "u=0.25,nu=1.5,mu=0.5"]);
    assert_close(got, Complex64::new(qx * g1 * g1, 0.0), "Legendre after x = (1+u)/(1-u)");
}

#[test]
fn regge_wheeler_tortoise() {
    let r = run_ok(&["reduce", "samples/regge_wheeler.ode", "--dxdz", "1/f"], None);
    insta::assert_snapshot!(r.snapshot());
    // Regge & Wheeler (1957), general spin: with dx/dr = 1/f the equation is
    // phi_xx + (omega^2 - V) phi = 0 with V = f (l(l+1)/r^2 + (1 - s^2) 2M/r^3).
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/regge_wheeler.ode")).expect("the sample");
    let opts = ReduceOptions { dxdz: Some("1/f".into()), ..ReduceOptions::default() };
    let red = reduce(&Input::Program(&text), &opts).expect("the sample reduces");
    let sch = red.schrodinger.expect("a Schrödinger form");
    assert_eq!(sch.frequency.as_deref(), Some("omega"));
    assert!(!sch.v_depends_on_frequency);
    // r = 31/10, M = 1, omega = 37/100, l = 2, s = 3.
    let rat = |n: i64, d: i64| GRat::real(Rat::new(Int::from(n), Int::from(d)).expect("nonzero denominator"));
    let names = red.field.names().to_vec();
    let value = |n: &str| match n {
        "r" => rat(31, 10),
        "M" => rat(1, 1),
        "omega" => rat(37, 100),
        "l" => rat(2, 1),
        "s" => rat(3, 1),
        other => panic!("unexpected name {other}"),
    };
    let point: Vec<GRat> = names.iter().map(|n| value(n)).collect();
    let (r, m, l, s) = (3.1f64, 1.0f64, 2.0f64, 3.0f64);
    let f = 1.0 - 2.0 * m / r;
    let want = f * (l * (l + 1.0) / (r * r) + (1.0 - s * s) * 2.0 * m / r.powi(3));
    let (re, im) = sch.v.eval(&point).expect("V is finite at the point").to_f64();
    assert_close(Complex64::new(re, im), Complex64::new(want, 0.0), "Regge–Wheeler potential");
}

#[test]
fn regge_wheeler_eval() {
    let at = "r=3.1,M=1,omega=0.37-0.089i,l=2,s=2";
    let text = run_ok(&["eval", "samples/regge_wheeler.ode", "--at", at], None);
    insta::assert_snapshot!("text", text.snapshot());
    let json = run_ok(&["eval", "samples/regge_wheeler.ode", "--at", at, "--format", "json"], None);
    insta::assert_snapshot!("json", json.snapshot());
    // With f = 1 - 2M/r the equation f (f y')' + (omega^2 - V) y = 0 has
    // p = f'/f, q = (omega^2 - V)/f^2, hence Q = q - p'/2 - p^2/4
    // = (omega^2 - V)/f^2 - f''/(2f) + f'^2/(4 f^2), V as in Regge & Wheeler (1957).
    let (r, m, l, s) = (3.1f64, 1.0f64, 2.0f64, 2.0f64);
    let w = Complex64::new(0.37, -0.089);
    let f = 1.0 - 2.0 * m / r;
    let f1 = 2.0 * m / (r * r);
    let f2 = -4.0 * m / r.powi(3);
    let v = f * (l * (l + 1.0) / (r * r) + (1.0 - s * s) * 2.0 * m / r.powi(3));
    let want = (w * w - v) / (f * f) - f2 / (2.0 * f) + f1 * f1 / (4.0 * f * f);
    assert_close(eval_q(&["samples/regge_wheeler.ode", "--at", at]), want, "Regge–Wheeler Q");
}

#[test]
fn inline_bessel_infers_its_parameter() {
    let eq = "z^2*w'' + z*w' + (z^2 - nu^2)*w = 0";
    let r = run_ok(&["reduce", "-e", eq, "--var", "z"], None);
    assert!(r.stdout.contains("inferred      nu"), "the inferred parameter is not shown:\n{}", r.stdout);
    insta::assert_snapshot!(r.snapshot());
    let json = run_ok(&["reduce", "-e", eq, "--var", "z", "--format", "json"], None);
    assert_eq!(json.stderr, "note: variable z, unknown w, inferred parameters: nu\n");
    // DLMF 10.2.1: Q = 1 + (1/4 - nu^2)/z^2.
    let got = eval_q(&["-e", eq, "--var", "z", "--at", "z=2,nu=3"]);
    assert_close(got, Complex64::new(1.0 + (0.25 - 9.0) / 4.0, 0.0), "inline Bessel");
}

#[test]
fn standard_input() {
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/airy.ode")).expect("the sample");
    let r = run_ok(&["reduce", "-"], Some(&text));
    assert!(r.stdout.starts_with("equation      <stdin>\n"));
    insta::assert_snapshot!(r.snapshot());
}
