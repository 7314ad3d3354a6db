//! Equations pasted as written: Leibniz derivatives in the input language,
//! LaTeX from papers (every sample's LaTeX twin, DLMF forms), and the
//! inline-form hygiene. Each check compares canonical forms exactly
//! (`RatFunc` equality is mathematical equality).

use canonode::{reduce, Input, ReduceOptions};
use std::process::Command;

fn normal_q(input: &Input<'_>) -> (Vec<String>, String) {
    let red = reduce(input, &ReduceOptions::default()).unwrap_or_else(|e| panic!("{input:?}: {e:?}"));
    let mut names = vec![red.var.clone()];
    names.extend(red.ode.params.iter().cloned());
    let q = canonode::ratfunc_text(&red.normal.q, &names, canonode::Style::Text);
    (names, q)
}

/// Leibniz forms mean the same as primes (common practice: d/dr(f dR/dr) = (f R')').
#[test]
fn leibniz_forms_equal_primes() {
    let cases = [
        (
            "var r\nparam M, omega, l\nlet f = 1 - 2*M/r\node f*(f*y')' + (omega^2 - f*l*(l+1)/r^2)*y = 0",
            "var r\nparam M, omega, l\nlet f = 1 - 2*M/r\node f*d/dr(f*dy/dr) + (omega^2 - f*l*(l+1)/r^2)*y = 0",
        ),
        ("var x\nparam E\node psi'' + (2*E - x^2)*psi = 0", "var x\nparam E\node d^2psi/dx^2 + (2*E - x^2)*psi = 0"),
        ("var x\nparam a\node (x^2*w')' + a*w = 0", "var x\nparam a\node d^2/dx^2(x^2*w) - d/dx(2*x*w) + a*w = 0"),
    ];
    for (primes, leibniz) in cases {
        assert_eq!(normal_q(&Input::Program(primes)), normal_q(&Input::Program(leibniz)), "{leibniz}");
    }
}

/// Inline, the variable comes from the derivatives when `--var` names nothing in the equation.
#[test]
fn inline_variable_from_the_derivatives() {
    let (names, _) = normal_q(&Input::Inline { equation: "d/dr(r^2*dR/dr) + (E*r^2 - l*(l+1))*R = 0", var: "z" });
    assert_eq!(names, ["r", "E", "l"]);
}

/// Quotients of declared names that begin with d stay quotients.
#[test]
fn declared_d_names_divide() {
    let a = normal_q(&Input::Program("var x\nparam da, db\node y'' + da/db*y = 0"));
    let b = normal_q(&Input::Program("var x\nparam da, db\node y'' + (da)/(db)*y = 0"));
    assert_eq!(a, b);
}

fn canonode(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_canonode")).current_dir(env!("CARGO_MANIFEST_DIR")).args(args).output().expect("the binary runs")
}

/// Names a twin spells differently from its `.ode` file (the LaTeX letter → the file's name).
const RENAMES: &[(&str, &str)] = &[("lambda", "lam"), ("V_0", "V0")];

/// Q of a LaTeX text re-expressed over the names and order of `ode_src`'s field: the
/// printed Q (the input language) is read back as `y'' + Q y = 0` in a program that
/// declares the `.ode` file's variable and parameters.
fn latex_q_in(ode_src: &str, tex: &str) -> (canonode::RatFunc, canonode::RatFunc) {
    let ode = reduce(&Input::Program(ode_src), &ReduceOptions::default()).unwrap_or_else(|e| panic!("{e:?}"));
    let red = reduce(&Input::Latex(tex), &ReduceOptions::default()).unwrap_or_else(|e| panic!("{tex}: {e:?}"));
    assert_eq!(red.var, ode.var, "the twin's variable");
    let mut names = vec![red.var.clone()];
    names.extend(red.ode.params.iter().cloned());
    let q = canonode::ratfunc_text(&red.normal.q, &names, canonode::Style::Text);
    let mut program = format!("var {}\n", ode.var);
    if !ode.ode.params.is_empty() {
        program.push_str(&format!("param {}\n", ode.ode.params.join(", ")));
    }
    for p in &red.ode.params {
        if let Some((_, to)) = RENAMES.iter().find(|(from, _)| from == p) {
            program.push_str(&format!("let {p} = {to}\n"));
        } else {
            assert!(ode.ode.params.contains(p), "the twin has a parameter '{p}' the file does not");
        }
    }
    program.push_str(&format!("ode y__'' + ({q})*y__ = 0\n"));
    let back = reduce(&Input::Program(&program), &ReduceOptions::default()).unwrap_or_else(|e| panic!("{program}: {e:?}"));
    (back.normal.q, ode.normal.q)
}

/// Every sample has a LaTeX twin (typed as its source prints it, see each file's
/// comment) whose normal form equals the `.ode` one exactly.
#[test]
fn every_sample_has_a_latex_twin_with_the_same_q() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut samples: Vec<_> =
        std::fs::read_dir(&dir).unwrap().map(|e| e.unwrap().path()).filter(|p| p.extension().is_some_and(|e| e == "ode")).collect();
    samples.sort();
    assert!(samples.len() >= 19);
    for ode_path in samples {
        let tex_path = ode_path.with_extension("tex");
        let ode_src = std::fs::read_to_string(&ode_path).unwrap();
        let tex = std::fs::read_to_string(&tex_path).unwrap_or_else(|_| panic!("{} has no LaTeX twin", ode_path.display()));
        let (from_tex, from_ode) = latex_q_in(&ode_src, &tex);
        assert!(from_tex == from_ode, "{}: the twin's Q differs", tex_path.display());
    }
}

/// The comparison can fail: a twin with one sign changed has another Q.
#[test]
fn a_wrong_twin_differs() {
    let ode = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/bessel.ode")).unwrap();
    let (a, b) = latex_q_in(&ode, r"z^{2}\frac{d^{2}w}{dz^{2}} + z\frac{dw}{dz} + (z^{2} + \nu^{2})w = 0");
    assert!(a != b);
}

fn class_of_latex(tex: &str) -> String {
    let out = canonode(&["classify", "--latex", "-e", tex, "--format", "json"]);
    assert!(out.status.success(), "{tex}: {}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    v["class"].as_str().unwrap().to_string()
}

/// DLMF forms typed as DLMF prints them give their known classes (class
/// table of the project's design notes; DLMF chapters cited per case).
#[test]
fn dlmf_forms_as_latex_give_their_classes() {
    let cases = [
        // DLMF 10.2.1 (Bessel): regular at 0, rank 1 at ∞.
        (r"z^{2}\frac{d^{2}w}{dz^{2}}+z\frac{dw}{dz}+(z^{2}-\nu^{2})w=0", "confluent-hypergeometric"),
        // DLMF 15.10.1 (Gauss): three regular points.
        (r"z(1-z)\frac{d^{2}w}{dz^{2}}+\left(c-(a+b+1)z\right)\frac{dw}{dz}-abw=0", "hypergeometric"),
        // DLMF 31.2.1 (general Heun) with the Fuchs relation left free: four regular points.
        (
            r"\frac{d^{2}w}{dz^{2}}+\left(\frac{\gamma}{z}+\frac{\delta}{z-1}+\frac{\epsilon}{z-a}\right)\frac{dw}{dz}+\frac{\alpha\beta z-q}{z(z-1)(z-a)}w=0",
            "general-heun",
        ),
        // DLMF 31.12.1 (confluent Heun).
        (
            r"\frac{d^{2}w}{dz^{2}}+\left(\frac{\gamma}{z}+\frac{\delta}{z-1}+\epsilon\right)\frac{dw}{dz}+\frac{\alpha z-q}{z(z-1)}w=0",
            "confluent-heun",
        ),
        // DLMF 30.2.1 (spheroidal wave equation): regular at ±1, rank 1 at ∞.
        (r"\frac{d}{dz}\left((1-z^{2})\frac{dw}{dz}\right)+\left(\lambda+\gamma^{2}(1-z^{2})-\frac{\mu^{2}}{1-z^{2}}\right)w=0", "confluent-heun"),
    ];
    for (tex, class) in cases {
        assert_eq!(class_of_latex(tex), class, "{tex}");
    }
}

/// Inline-form hygiene: a leading minus in -e, the names inferred printed by
/// every command, a warning when --var does not occur, `j` in values, the
/// hint for `i` in a file (hydrogen form of Landau & Lifshitz §36, from memory).
#[test]
fn inline_hygiene() {
    let eq = "-u''/2 + (l*(l+1)/(2*r^2) - Z/r)*u = E*u";
    for cmd in ["reduce", "classify"] {
        let out = canonode(&[cmd, "-e", eq]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains("inferred parameters: l, r, Z, E"), "{cmd}: {err}");
        assert!(err.contains("did you mean --var r?"), "{cmd}: {err}");
    }
    let out = canonode(&["classify", "-e", eq, "--var", "r"]);
    assert!(out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("note: variable r, unknown u, inferred parameters: l, Z, E") && !err.contains("warning"), "{err}");

    let j = canonode(&["eval", "-e", "y'' + (x - E)*y = 0", "--var", "x", "--at", "x=1,E=0.3-0.1j"]);
    let i = canonode(&["eval", "-e", "y'' + (x - E)*y = 0", "--var", "x", "--at", "x=1,E=0.3-0.1i"]);
    assert!(j.status.success(), "{}", String::from_utf8_lossy(&j.stderr));
    assert_eq!(j.stdout, i.stdout);
    assert!(String::from_utf8_lossy(&j.stderr).contains("note: variable x, unknown y, inferred parameters: E"));

    let out = canonode(&["classify", "-e", "psi'' + (omega^2 - V(r))*psi = 0", "--var", "r"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("define it with 'let V = …'"), "{}", String::from_utf8_lossy(&out.stderr));

    let dir = std::env::temp_dir().join(format!("canonode-paste-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("i.ode");
    std::fs::write(&file, "var x\nparam E\node y'' + (E + i*x)*y = 0\n").unwrap();
    let out = canonode(&["reduce", file.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("the imaginary unit is written I"));
    std::fs::remove_dir_all(&dir).ok();
}

/// Bound-state energies from `spectrum --boundary bound` on an equation as written.
fn levels(args: &[&str], at: &str) -> Vec<f64> {
    let mut all = vec!["spectrum", "--boundary", "bound", "--frequency", "E", "--at", at, "--overtones", "0..2", "--format", "json"];
    all.extend_from_slice(args);
    let out = canonode(&all);
    assert!(out.status.success(), "{args:?}: {}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let got: Vec<f64> = v["modes"].as_array().unwrap().iter().map(|m| m["omega"][0].as_f64().unwrap()).collect();
    assert_eq!(got.len(), 3, "{v}");
    got
}

/// The Pöschl–Teller well −ν(ν+1)/cosh²x (ħ = 2m = 1): E_n = −(ν − n)²
/// (Landau & Lifshitz, Quantum Mechanics §23, from memory), from the
/// equation as written, inline and as LaTeX; the map is printed.
#[test]
fn poschl_teller_well_as_written() {
    let inline = levels(&["-e", "psi'' + (E + nu*(nu+1)/cosh(x)^2)*psi = 0", "--var", "x"], "nu=3");
    let tex = levels(&["--latex", "-e", r"\frac{d^{2}\psi}{dx^{2}} + \left(E + \frac{\nu(\nu+1)}{\cosh^{2}x}\right)\psi = 0"], "nu=3");
    for got in [inline, tex] {
        for (n, e) in got.iter().enumerate() {
            let want = -(3.0 - n as f64).powi(2);
            assert!((e - want).abs() < 1e-9, "n={n}: {e} vs {want}");
        }
    }
    let out = canonode(&["classify", "-e", "psi'' + (E + nu*(nu+1)*sech(x)^2)*psi = 0", "--var", "x"]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("change of variable u = tanh(x)"), "{}", String::from_utf8_lossy(&out.stderr));
}

/// The Morse well D(e^{−2x} − 2e^{−x}) (ħ = 2m = 1, unit width):
/// E_n = −(√D − n − ½)² (textbook, e.g. Landau & Lifshitz §23 problem 4, from memory).
#[test]
fn morse_well_as_written() {
    let got = levels(&["--latex", "-e", r"-\frac{d^{2}\psi}{dx^{2}} + D\left(e^{-2x} - 2e^{-x}\right)\psi = E\psi"], "D=9");
    for (n, e) in got.iter().enumerate() {
        let want = -(3.0 - n as f64 - 0.5).powi(2);
        assert!((e - want).abs() < 1e-8, "n={n}: {e} vs {want}");
    }
}

/// Asked for more Morse levels than exist (D = 9, a = 1: three, E_n =
/// −(√D − a(n + ½))², common practice), the three come in order, each once,
/// and the fourth is said not to exist rather than the others renumbered.
#[test]
fn morse_levels_asked_beyond_the_last_one() {
    let out = canonode(&[
        "spectrum",
        "--boundary",
        "bound",
        "--frequency",
        "En",
        "--at",
        "D=9,a=1",
        "--overtones",
        "0..3",
        "--format",
        "json",
        "-e",
        "-phi'' + D*(exp(-2*a*x) - 2*exp(-a*x))*phi = En*phi",
        "--var",
        "x",
    ]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let modes = v["modes"].as_array().unwrap();
    for (n, m) in modes.iter().take(3).enumerate() {
        let e = m["omega"][0].as_f64().unwrap_or(f64::NAN);
        let want = -(3.0 - n as f64 - 0.5).powi(2);
        assert!((e - want).abs() < 1e-8, "n={n}: {e} vs {want}: {v}");
    }
    assert_eq!(modes[3]["converged"], false, "{v}");
}

/// Mathieu's equation as DLMF 28.2.1 prints it becomes, by ζ = e^{2ix}, the
/// sample in ζ exactly (samples/mathieu_exponential.ode); the class is the same.
#[test]
fn mathieu_as_written_is_the_exponential_sample() {
    let sample = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/mathieu_exponential.ode")).unwrap();
    let (from_tex, from_ode) = latex_q_in(&sample, r"\frac{d^{2}w}{dx^{2}} + (a - 2q\cos 2x)w = 0");
    assert!(from_tex == from_ode);
    let inline = reduce(&Input::Inline { equation: "w'' + (a - 2*q*cos(2*x))*w = 0", var: "x" }, &ReduceOptions::default()).unwrap();
    let ode = reduce(&Input::Program(&sample), &ReduceOptions::default()).unwrap();
    assert!(inline.normal.q == ode.normal.q);
    assert_eq!(class_of_latex(r"\frac{d^{2}w}{dz^{2}} + (a - 2q\cos 2z)w = 0"), "doubly-reduced-doubly-confluent-heun");
}

/// One characteristic value: (value, parity, index, multiplier, agreement).
type Characteristic = (f64, Option<String>, Option<u64>, f64, f64);

/// The characteristic values of `spectrum` on a periodic equation as written
/// (the default problem when the coefficients are trigonometric): (value,
/// parity, index within the parity, multiplier, check agreement) per place.
fn characteristic(args: &[&str], at: &str, overtones: &str) -> Vec<Characteristic> {
    let mut all = vec!["spectrum", "--at", at, "--overtones", overtones, "--format", "json"];
    all.extend_from_slice(args);
    let out = canonode(&all);
    assert!(out.status.success(), "{args:?}: {}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["boundary"], "periodic", "{v}");
    v["modes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| {
            assert_eq!(m["converged"], true, "{m}");
            assert_eq!(m["check"]["method"], "monodromy");
            (
                m["omega"][0].as_f64().unwrap(),
                m["family"]["parity"].as_str().map(String::from),
                m["family"]["index"].as_u64(),
                m["family"]["multiplier"].as_f64().unwrap(),
                m["check"]["agreement"].as_f64().unwrap_or(f64::NAN),
            )
        })
        .collect()
}

/// Mathieu's characteristic values from the equation as DLMF 28.2.1 prints
/// it, with no hand substitution: a₀, b₁, a₁, b₂, a₂, b₃ at q = 1 and a₀…a₂
/// at q = 5 (Abramowitz & Stegun table 20.1 / DLMF §28.17, from memory, 8
/// decimals), each confirmed by the monodromy to 1e-10; the even/odd labels
/// and periods (π for a₀, b₂, a₂; 2π for b₁, a₁, b₃) as DLMF 28.2(vi) has them.
#[test]
fn mathieu_characteristic_values_as_written() {
    let want_q1 = [
        (-0.45513860, "even", 0, 1.0),
        (-0.11024882, "odd", 1, -1.0),
        (1.85910807, "even", 1, -1.0),
        (3.91702477, "odd", 2, 1.0),
        (4.37130098, "even", 2, 1.0),
        (9.04773926, "odd", 3, -1.0),
    ];
    let inline = characteristic(&["-e", "y'' + (a - 2*q*cos(2*x))*y = 0", "--var", "x"], "q=1", "0..5");
    let tex = characteristic(&["--latex", "-e", r"\frac{d^{2}w}{dx^{2}} + (a - 2q\cos 2x)w = 0"], "q=1", "0..5");
    for got in [inline, tex] {
        assert_eq!(got.len(), want_q1.len());
        for (g, w) in got.iter().zip(want_q1) {
            assert!((g.0 - w.0).abs() < 5.1e-9, "{g:?} vs {w:?}");
            assert_eq!((g.1.as_deref(), g.2, g.3), (Some(w.1), Some(w.2), w.3), "{g:?}");
            assert!(g.4 < 1e-10, "monodromy check: {g:?}");
        }
    }
    let want_q5 = [-5.80004602, -5.79008060, 1.85818754, 2.09946045, 7.44910974];
    let got = characteristic(&["-e", "y'' + (a - 2*q*cos(2*x))*y = 0", "--var", "x"], "q=5", "0..4");
    for (g, w) in got.iter().zip(want_q5) {
        assert!((g.0 - w).abs() < 5.1e-9, "{g:?} vs {w}");
    }
}

/// The same characteristic values phrased otherwise: with cos² (cos 2x =
/// 2cos²x − 1, so a → a + q … exactly the same operator), with a named map
/// ζ = e^{ix} (the coefficients then hold only even powers: the least period
/// π is found), and shifted in phase, q cos 2x + p sin 2x = √(q² + p²) cos(2x − φ)
/// (no parity then, the same values at √(q² + p²) = 1; exact).
#[test]
fn periodic_values_phrased_otherwise() {
    let base = characteristic(&["-e", "y'' + (a - 2*q*cos(2*x))*y = 0", "--var", "x"], "q=1", "0..4");
    let squared = characteristic(&["-e", "y'' + (a + 2*q - 4*q*cos(x)^2)*y = 0", "--var", "x"], "q=1", "0..4");
    let named = characteristic(&["-e", "y'' + (a + 2*q - 4*q*cos(x)^2)*y = 0", "--var", "x", "--map", "z=exp(I*x)"], "q=1", "0..4");
    let shifted = characteristic(&["-e", "y'' + (a - 2*q*cos(2*x) - 2*p*sin(2*x))*y = 0", "--var", "x"], "q=3/5,p=4/5", "0..4");
    for other in [&squared, &named, &shifted] {
        for (g, b) in other.iter().zip(&base) {
            assert!((g.0 - b.0).abs() < 1e-11, "{g:?} vs {b:?}");
            assert_eq!(g.3, b.3, "multiplier: {g:?} vs {b:?}");
        }
    }
    assert!(shifted.iter().all(|g| g.1.is_none()), "no parity without the symmetry: {shifted:?}");
    // An argument a·x + b is a translation of the variable: cos(2x + 1/3) has Mathieu's values
    // (exact), the map names the shift, and arguments shifted differently are refused at their place.
    let phase = characteristic(&["-e", "y'' + (a - 2*q*cos(2*x + 1/3))*y = 0", "--var", "x"], "q=1", "0..4");
    for (g, b) in phase.iter().zip(&base) {
        assert!((g.0 - b.0).abs() < 1e-11 && g.3 == b.3, "{g:?} vs {b:?}");
    }
    let out = canonode(&["classify", "-e", "y'' + (a - 2*q*cos(2*x + 1/3))*y = 0", "--var", "x"]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("zeta = exp(2*I*(x + 1/6))"), "{}", String::from_utf8_lossy(&out.stderr));
    let out = canonode(&["classify", "-e", "y'' + (a - cos(2*x + 1/3) - sin(2*x))*y = 0", "--var", "x"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("shifted by different amounts"));
    // q = 0: a = n² exactly (y = cos nx, sin nx), n² doubly for n ≥ 1 (exact).
    let free = characteristic(&["-e", "y'' + (a - 2*q*cos(2*x))*y = 0", "--var", "x"], "q=0", "0..6");
    for (g, w) in free.iter().zip([0.0, 1.0, 1.0, 4.0, 4.0, 9.0, 9.0]) {
        assert!((g.0 - w).abs() < 1e-12, "{g:?} vs {w}");
    }
}

/// A periodic problem is refused, with the reason, where it does not apply.
#[test]
fn periodic_problem_where_it_does_not_apply() {
    // Real exponential coefficients are not periodic in real x.
    let out = canonode(&["spectrum", "-e", "psi'' + (E - D*(exp(-2*x) - 2*exp(-x)))*psi = 0", "--var", "x", "--at", "D=9", "--boundary", "periodic"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("not periodic"), "{}", String::from_utf8_lossy(&out.stderr));
    // Ends and seeds mean nothing for it.
    let out = canonode(&["spectrum", "-e", "y'' + (a - 2*q*cos(2*x))*y = 0", "--var", "x", "--at", "q=1", "--guess", "1"]);
    assert_eq!(out.status.code(), Some(2));
}

/// A map named with --map is used as given (no tanh form), and x itself cannot remain.
#[test]
fn named_map_and_what_cannot_be_mapped() {
    let out = canonode(&["classify", "-e", "psi'' + (E + V*exp(-2*a*x))*psi = 0", "--var", "x", "--map", "s=exp(-a*x)"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{err}");
    assert!(err.contains("change of variable s = exp(-a*x)"), "{err}");
    let out = canonode(&["classify", "-e", "psi'' + (E + x*exp(x))*psi = 0", "--var", "x"]);
    assert_eq!(out.status.code(), Some(2));
    let out = canonode(&["classify", "-e", "psi'' + (E + exp(x) + cos(x))*psi = 0", "--var", "x"]);
    assert_eq!(out.status.code(), Some(2));
    let out = canonode(&["classify", "-e", "psi'' + (E + exp(x) + exp(sqrt(2)*x))*psi = 0", "--var", "x"]);
    assert_eq!(out.status.code(), Some(2));
}

/// The Regge–Wheeler equation in the tortoise coordinate, d²ψ/dr*² + (ω² − V)ψ = 0
/// with dr*/dr = 1/f declared (Regge & Wheeler 1957; Berti, Cardoso & Starinets
/// 2009, from memory), in both languages, gives exactly the Q of the r-form sample.
#[test]
fn regge_wheeler_in_the_tortoise_coordinate() {
    let sample = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/regge_wheeler.ode")).unwrap();
    let ode = reduce(&Input::Program(&sample), &ReduceOptions::default()).unwrap();
    for declaration in ["drs/dr = 1/f", "dr/drs = f"] {
        let program = format!(
            "var r\nparam M, omega, l, s\nlet f = 1 - 2*M/r\n{declaration}\node d^2y/drs^2 + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y = 0\n"
        );
        let red = reduce(&Input::Program(&program), &ReduceOptions::default()).unwrap_or_else(|e| panic!("{declaration}: {e:?}"));
        assert!(red.normal.q == ode.normal.q, "{declaration}");
    }
    let tex = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/regge_wheeler_tortoise.tex")).unwrap();
    let (from_tex, from_ode) = latex_q_in(&sample, &tex);
    assert!(from_tex == from_ode);
    // A coordinate must be declared against the variable.
    let bad = "var r\nparam M\nlet f = 1 - 2*M/r\ndrs/dq = 1/f\node d^2y/drs^2 + y = 0\n";
    assert!(reduce(&Input::Program(bad), &ReduceOptions::default()).is_err());
}

/// Mutated LaTeX twins (characters deleted, doubled or inserted) never panic
/// through the whole reduction, and every error points into the text.
#[test]
fn mutated_latex_never_panics() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut twins: Vec<_> =
        std::fs::read_dir(&dir).unwrap().map(|e| e.unwrap().path()).filter(|p| p.extension().is_some_and(|e| e == "tex")).collect();
    twins.sort();
    let mut state = 0x9e37_79b9_7f4a_7c15u64;
    let mut next = move |n: usize| {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state % n.max(1) as u64) as usize
    };
    const INSERTS: &[&str] = &["{", "}", "\\", "^", "_", "(", ")", "\\frac", "d", "=", ",", "'", "\\left(", "\\right)", "e^{", "\\cosh", "/"];
    for path in twins {
        let text = std::fs::read_to_string(&path).unwrap();
        let chars: Vec<char> = text.chars().collect();
        for _ in 0..60 {
            let mut c = chars.clone();
            for _ in 0..1 + next(3) {
                let at = next(c.len());
                match next(3) {
                    0 => {
                        let len = 1 + next(4);
                        c.drain(at..(at + len).min(c.len()));
                    }
                    1 => {
                        let ch = c.get(at).copied().unwrap_or(' ');
                        c.insert(at, ch);
                    }
                    _ => {
                        for (k, ch) in INSERTS[next(INSERTS.len())].chars().enumerate() {
                            c.insert((at + k).min(c.len()), ch);
                        }
                    }
                }
            }
            let mutated: String = c.into_iter().collect();
            if let Err(e) = reduce(&Input::Latex(&mutated), &ReduceOptions::default()) {
                if let Some(s) = e.span {
                    assert!(s.start <= s.end && s.end <= mutated.len() && mutated.is_char_boundary(s.start), "{mutated:?}: {e:?}");
                }
            }
        }
    }
}

/// Values and the frequency may name parameters as the paper's LaTeX writes
/// them (`\ell`, `r_{h}`, `\omega`): the Schwarzschild–anti-de Sitter scalar
/// pasted from LaTeX in the horizon radius, L = 1, r₊ = 1, l = 0, gives
/// Horowitz & Hubeny's 2.7982 − 2.6712i (Phys. Rev. D 62 (2000) 024027,
/// from memory); a misspelt name is still refused with its place.
#[test]
fn latex_names_on_the_command_line() {
    let dir = std::env::temp_dir().join(format!("canonode-latex-names-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let tex = dir.join("sads.tex");
    std::fs::write(
        &tex,
        "f\\frac{d}{dr}\\left(f\\frac{d\\phi}{dr}\\right) + \\left(w^2 - f\\left(\\frac{\\ell(\\ell+1)}{r^2}+\\frac{f'}{r}\\right)\\right)\\phi = 0, \\quad f = r^2 + 1 - \\frac{r_h(r_h^2+1)}{r}\n",
    )
    .unwrap();
    let path = tex.to_str().unwrap();
    let out = canonode(&["spectrum", path, "--at", "r_{h}=1,\\ell=0", "--frequency", "w", "--format", "json"]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let m = &v["modes"][0];
    let (re, im) = (m["omega"][0].as_f64().unwrap(), m["omega"][1].as_f64().unwrap());
    assert!((re - 2.7982).abs() < 1e-4 && (im + 2.6712).abs() < 1e-4, "{re} {im}");
    let bad = canonode(&["spectrum", path, "--at", "r_{h}=1,\\ellx=0"]);
    assert!(!bad.status.success());
    let err = String::from_utf8_lossy(&bad.stderr);
    assert!(err.contains("'\\ellx' is not a parameter") && err.contains("--at:1:"), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}

/// LaTeX as papers print it, each against a plainer spelling of the same
/// equation (the same normal form exactly): a tortoise derivative with a
/// subscripted subscript (`\partial_{r_*}^2`), a function argument written
/// without brackets ahead of a derivative (`\sin\theta\frac{dS}{d\theta}`,
/// the spherical Laplacian), and the variable named only inside a cosine
/// (Mathieu's `y'' + (a - 2q\cos 2x)y = 0`, DLMF 28.2.1).
#[test]
fn latex_as_printed_in_papers() {
    let cases = [
        (
            r"\partial_{r_*}^2\psi + (\omega^2 - V)\psi = 0, \quad V = f\frac{2}{r^3}, \quad f = 1-\frac{2}{r}, \quad \frac{dr_*}{dr} = \frac{1}{f}",
            r"\frac{d^2\psi}{dr_*^2} + (\omega^2 - V)\psi = 0, \quad V = f\frac{2}{r^3}, \quad f = 1-\frac{2}{r}, \quad \frac{dr_*}{dr} = \frac{1}{f}",
        ),
        (
            r"\partial^2_{r_{*}}\psi + (\omega^2 - V)\psi = 0, \quad V = f\frac{2}{r^3}, \quad f = 1-\frac{2}{r}, \quad \frac{dr_*}{dr} = \frac{1}{f}",
            r"\frac{d^2\psi}{dr_*^2} + (\omega^2 - V)\psi = 0, \quad V = f\frac{2}{r^3}, \quad f = 1-\frac{2}{r}, \quad \frac{dr_*}{dr} = \frac{1}{f}",
        ),
        (
            r"\frac{1}{\sin\theta}\frac{d}{d\theta}\left(\sin\theta\frac{dS}{d\theta}\right) + \left(\lambda - c^2\cos^2\theta\right)S = 0",
            r"\frac{d^2S}{d\theta^2} + \frac{\cos(\theta)}{\sin(\theta)}\frac{dS}{d\theta} + \left(\lambda - c^2\cos(\theta)^2\right)S = 0",
        ),
        (r"y'' + (a - 2q\cos 2x) y = 0", r"y''(x) + (a - 2q\cos(2x)) y = 0"),
    ];
    for (printed, plain) in cases {
        assert_eq!(normal_q(&Input::Latex(printed)), normal_q(&Input::Latex(plain)), "{printed}");
    }
}

/// A power after a bracket that follows a name belongs to the bracket, as
/// in print: D(1 + x)² is D·(1 + x)², f(1 − f)² is f·(1 − f)² (common
/// practice); `f(r)²` with r the variable stays f². The `\var…` letters
/// are the letters, `\frac14` is ¼ (one digit per argument, as LaTeX
/// reads it), a font command only styles a name.
#[test]
fn latex_as_typeset_by_hand() {
    let same = |tex: &str, inline: &str| {
        let (n1, q1) = normal_q(&Input::Latex(tex));
        let (n2, q2) = normal_q(&Input::Inline { equation: inline, var: "x" });
        assert_eq!((n1, q1), (n2, q2), "{tex} against {inline}");
    };
    same(r"-y''(x) + D(1 + x)^2 y = E y", "-y'' + D*(1 + x)^2*y = E*y");
    same(r"y''(x) + \frac{k}{x(1+x)^2}y = 0", "y'' + k/(x*(1+x)^2)*y = 0");
    same(r"y''(x) + \left(E - \tfrac14 V(1 - x)^{2}\right)y = 0", "y'' + (E - V*(1 - x)^2/4)*y = 0");
    same(r"\frac{d^2y}{dx^2} + (\mathcal{E} - \varpi^2 x^2 + r_{\rm h} x)y = 0", "y'' + (E - varpi^2*x^2 + r_h*x)*y = 0");
    same(r"y''(x) + \left(a - 2q\cos 2x\right)y = 0", "y'' + (a - 2*q*cos(2*x))*y = 0");
    // \vartheta is θ, also as the variable of a derivative and inside an argument.
    let (n1, q1) = normal_q(&Input::Latex(r"\frac{d^2 y}{d\vartheta^2} + (a - 2q\cos 2\vartheta) y = 0"));
    let (n2, q2) = normal_q(&Input::Latex(r"\frac{d^2 y}{d\theta^2} + (a - 2q\cos 2\theta) y = 0"));
    assert_eq!((n1, q1), (n2, q2));
}

/// The Morse oscillator as textbooks print it, D(1 − e^{−a(x − x₀)})²
/// (ħ = 2m = 1): E_n = 2a√D(n + ½) − a²(n + ½)² (Morse 1929; common
/// practice): at D = 16, a = 1: 3.75, 9.75, 13.75.
#[test]
fn morse_oscillator_as_printed() {
    let got = levels(&["--latex", "-e", r"-\psi''(x) + D\left(1 - e^{-a(x - x_0)}\right)^2\psi(x) = E\,\psi(x)"], "D=16,a=1,x_0=0");
    for (n, e) in got.iter().enumerate() {
        let k = n as f64 + 0.5;
        let want = 8.0 * k - k * k;
        assert!((e - want).abs() < 1e-8, "n={n}: {e} vs {want}");
    }
}

/// Mathieu's equation in w = cos x (DLMF 28.2.1 with y(x) = Y(cos x)):
/// (1 − w²)Y'' − wY' + (a − 2q(2w² − 1))Y = 0. At w = ±1 the exponents are
/// 0 and ½, both square-integrable (a limit-circle end): the condition is a
/// choice and the output says so. The larger exponent at both ends gives the
/// odd functions b₁, b₂, …; the smaller, the even ones a₀, a₁, … (DLMF
/// §28.17 tables at q = 1, from memory: a₀ = −0.45513860, a₁ = 1.85910807,
/// a₂ = 4.37130098; b₁ = −0.11024882, b₂ = 3.91702477).
#[test]
fn mathieu_in_the_cosine_and_its_two_conditions() {
    let eq = "(1 - w^2)*y'' - w*y' + (a - 2*q*(2*w^2 - 1))*y = 0";
    let run = |ends: Option<&str>| -> (Vec<f64>, String) {
        let mut args = vec!["spectrum", "-e", eq, "--var", "w", "--boundary", "bound", "--at", "q=1", "--overtones", "0..2", "--format", "json"];
        let with;
        if let Some(e) = ends {
            with = format!("--ends={e}");
            args.push(&with);
        }
        let out = canonode(&args);
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        (v["modes"].as_array().unwrap().iter().map(|m| m["omega"][0].as_f64().unwrap()).collect(), v.to_string())
    };
    let (b, doc) = run(None);
    for (g, w) in b.iter().zip([-0.11024882, 3.91702477]) {
        assert!((g - w).abs() < 1e-7, "{b:?}");
    }
    assert!(doc.contains("limit-circle") && doc.contains("-1:slower..1:slower"), "{doc}");
    let (a, doc) = run(Some("-1:slower..1:slower"));
    for (g, w) in a.iter().zip([-0.45513860, 1.85910807, 4.37130098]) {
        assert!((g - w).abs() < 1e-7, "{a:?}");
    }
    assert!(!doc.contains("limit-circle"), "a condition given is no choice left: {doc}");
}

/// Past the last level of a finite well the closed form's count is said:
/// the Morse oscillator at D = 16, a = 1 has four levels (n < √D/a − ½,
/// common practice), so n = 4 and 5 are no states, not a missing guess.
#[test]
fn no_state_beyond_the_closed_forms_last() {
    let out = canonode(&[
        "spectrum",
        "--latex",
        "-e",
        r"-\psi''(x) + D\left(1 - e^{-a(x - x_0)}\right)^2\psi(x) = E\,\psi(x)",
        "--boundary",
        "bound",
        "--frequency",
        "E",
        "--at",
        "D=16,a=1,x_0=0",
        "--overtones",
        "0..5",
        "--format",
        "json",
    ]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let modes = v["modes"].as_array().unwrap();
    assert_eq!(modes.iter().filter(|m| m["converged"] == true).count(), 4, "{v}");
    for m in &modes[4..] {
        assert!(m["reason"].as_str().is_some_and(|r| r.contains("there is no state") && r.contains("has 4")), "{m}");
    }
}

/// A definition of a squared name, `N^{2} = …` (a lapse as printed), is N =
/// (…)^(1/2): its even powers in the equation are exact, and the equation is
/// the one written with the square itself (common practice).
#[test]
fn a_squared_name_defined() {
    let (n1, q1) = normal_q(&Input::Latex(
        r"\frac{1}{r}\frac{d}{dr}\left(rN^{2}\frac{dR}{dr}\right) + \left[\frac{\omega^{2}}{N^{2}} - \frac{k^{2}}{r^{2}}\right]R = 0, \qquad N^{2} = r^{2} - r_{+}^{2}",
    ));
    let (n2, q2) = normal_q(&Input::Latex(
        r"\frac{1}{r}\frac{d}{dr}\left(rF\frac{dR}{dr}\right) + \left[\frac{\omega^{2}}{F} - \frac{k^{2}}{r^{2}}\right]R = 0, \qquad F = r^{2} - r_{+}^{2}",
    ));
    assert_eq!((n1, q1), (n2, q2));
}
