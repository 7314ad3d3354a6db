//! Checks of `classify` and `recurrence` against published equations: the
//! singular structure, exponents, classes and canonical parameters of
//! DLMF's forms and of the black-hole samples. Each check names its source.

use canonode::{reduce, Input, ReduceOptions};
use serde_json::Value;
use std::process::Command;

fn run(args: &[&str]) -> Value {
    let out = Command::new(env!("CARGO_BIN_EXE_canonode")).args(args).current_dir(env!("CARGO_MANIFEST_DIR")).output().expect("binary runs");
    assert!(out.status.success(), "{args:?} failed: {}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("valid JSON")
}

fn classify(sample: &str, extra: &[&str]) -> Value {
    let path = format!("samples/{sample}.ode");
    let mut args = vec!["classify", path.as_str(), "--format", "json"];
    args.extend_from_slice(extra);
    run(&args)
}

fn classify_text(program: &str, extra: &[&str]) -> Value {
    let dir = std::env::temp_dir().join(format!("canonode-classify-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("eq{}.ode", program.len()));
    std::fs::write(&path, program).unwrap();
    let p = path.to_string_lossy().to_string();
    let mut args = vec!["classify", p.as_str(), "--format", "json"];
    args.extend_from_slice(extra);
    run(&args)
}

/// True when two expressions in the input language are equal as rational
/// functions: y'' + (A − B) y = 0 has Q = 0 exactly iff A = B.
fn same(a: &str, b: &str) -> bool {
    let eq = format!("y'' + (({a}) - ({b}))*y = 0");
    match reduce(&Input::Inline { equation: &eq, var: "zz_" }, &ReduceOptions::default()) {
        Ok(r) => r.normal.q.is_zero(),
        Err(e) => panic!("cannot compare '{a}' and '{b}': {}", e.message),
    }
}

fn point<'a>(v: &'a Value, wher: &str) -> &'a Value {
    v["singular_points"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["where"] == wher)
        .unwrap_or_else(|| panic!("no point '{wher}' in {}", v["singular_points"]))
}

fn exps(p: &Value, key: &str) -> Vec<String> {
    p[key].as_array().unwrap().iter().map(|e| e["exact"].as_str().unwrap().to_string()).collect()
}

fn assert_set(got: &[String], want: &[&str]) {
    assert_eq!(got.len(), want.len(), "{got:?} vs {want:?}");
    for w in want {
        assert!(got.iter().any(|g| same(g, w)), "{w} not among {got:?}");
    }
}

fn param(v: &Value, name: &str) -> String {
    v["canonical"]["parameters"][name]["exact"].as_str().unwrap_or_else(|| panic!("no parameter {name} in {}", v["canonical"])).to_string()
}

#[test]
fn gauss_hypergeometric_exponents_dlmf_15_10() {
    // DLMF 15.10.1: exponents {0, 1−c} at 0, {0, c−a−b} at 1, {a, b} at ∞.
    let v = classify("hypergeometric", &[]);
    assert_eq!(v["class"], "hypergeometric");
    assert_set(&exps(point(&v, "z = 0"), "unknown_exponents"), &["0", "1 - c"]);
    assert_set(&exps(point(&v, "z = 1"), "unknown_exponents"), &["0", "c - a - b"]);
    assert_set(&exps(point(&v, "z = ∞"), "unknown_exponents"), &["a", "b"]);
    // Seen through the normal form: 1/2 ± θ/2 with θ the exponent difference.
    assert_set(&exps(point(&v, "z = 0"), "exponents"), &["1/2 + (1 - c)/2", "1/2 - (1 - c)/2"]);
    assert_set(&exps(point(&v, "z = 1"), "exponents"), &["1/2 + (c - a - b)/2", "1/2 - (c - a - b)/2"]);
    assert_set(&exps(point(&v, "z = ∞"), "exponents"), &["1/2 + (a - b)/2", "1/2 - (a - b)/2"]);
    for n in ["a", "b", "c"] {
        assert!(same(&param(&v, n), n), "DLMF 15.10.1 round trip of {n}");
    }
}

#[test]
fn regge_wheeler_structure() {
    // Regular points r = 0 and r = 2M, rank 1 at ∞ (confluent Heun); at the
    // horizon ψ ~ (r − 2M)^(1/2 ± 2iMω) and y ~ (r − 2M)^(±2iMω): surface
    // gravity κ = 1/(4M), textbook.
    let v = classify("regge_wheeler", &[]);
    assert_eq!(v["class"], "confluent-heun");
    assert_eq!(point(&v, "r = 0")["kind"], "regular");
    let h = point(&v, "r = 2*M");
    assert_eq!(h["kind"], "regular");
    assert_set(&exps(h, "exponents"), &["1/2 + 2*I*M*omega", "1/2 - 2*I*M*omega"]);
    assert_set(&exps(h, "unknown_exponents"), &["2*I*M*omega", "-2*I*M*omega"]);
    let inf = point(&v, "r = ∞");
    assert_eq!(inf["kind"], "irregular");
    assert_eq!(inf["rank"], 1);
}

#[test]
fn regge_wheeler_labels_for_quasinormal_modes() {
    // With e^(−iωt): y ~ (r − 2M)^(−2iMω) = e^(−iω r*) falls into the horizon,
    // e^(+iωr) leaves to infinity (common practice).
    let v = classify("regge_wheeler", &["--boundary", "qnm", "--at", "M=1,omega=0.37,l=2,s=2"]);
    let h = point(&v, "r = 2*M");
    let labels: Vec<&str> = h["labels"].as_array().unwrap().iter().map(|l| l.as_str().unwrap_or("")).collect();
    let ex = exps(h, "unknown_exponents");
    let ingoing = ex[labels.iter().position(|l| *l == "ingoing").unwrap()].clone();
    assert!(same(&ingoing, "-2*I*M*omega"));
    // The canonical form keeps the chosen exponents: δ = 1 + 2ρ_h = 1 − 4iMω.
    assert!(same(&param(&v, "delta"), "1 - 4*I*M*omega"));
    assert_eq!(v["canonical"]["form"], "confluent-heun");
}

#[test]
fn teukolsky_horizon_exponents_match_teukolsky_press() {
    // Teukolsky & Press 1974: at r₊, R ~ Δ^(−s) e^(−ikr*) and R ~ e^(+ikr*)
    // with k = ω − mΩ_H, Ω_H = a/(r₊² + a²), dr*/dr = (r² + a²)/Δ, so the
    // exponents in (r − r₊) are −s − iK and +iK, K = k(r₊² + a²)/(r₊ − r₋).
    let (m, a, w, mm, s) = (1.0f64, 0.6f64, 0.45f64, 2.0f64, -2.0f64);
    let v = classify("teukolsky_radial", &["--at", "M=1,a=0.6,omega=0.45,m=2,s=-2,lam=3.5"]);
    assert_eq!(v["class"], "confluent-heun");
    let rp = m + (m * m - a * a).sqrt();
    let rm = m - (m * m - a * a).sqrt();
    let k = w - mm * a / (rp * rp + a * a);
    let big_k = k * (rp * rp + a * a) / (rp - rm);
    let pts = v["singular_points"].as_array().unwrap();
    let at_rp = pts.iter().find(|p| p["value"].as_array().is_some_and(|x| (x[0].as_f64().unwrap() - rp).abs() < 1e-9)).expect("r+ listed");
    let mut got: Vec<(f64, f64)> =
        at_rp["unknown_exponents"].as_array().unwrap().iter().map(|e| (e["value"][0].as_f64().unwrap(), e["value"][1].as_f64().unwrap())).collect();
    got.sort_by(|x, y| x.0.partial_cmp(&y.0).unwrap());
    let mut want = vec![(-s, -big_k), (0.0, big_k)];
    want.sort_by(|x, y| x.0.partial_cmp(&y.0).unwrap());
    for (g, w) in got.iter().zip(&want) {
        assert!((g.0 - w.0).abs() < 1e-9 && (g.1 - w.1).abs() < 1e-9, "{got:?} vs {want:?}");
    }
    let inf = point(&v, "r = ∞");
    assert_eq!(inf["rank"], 1);
}

#[test]
fn classical_classes() {
    // DLMF 10.2.1, hydrogen (textbook): confluent hypergeometric; DLMF 9.2.1
    // Airy: rank 3/2 at ∞; oscillator: rank 2; DLMF 14.2.1 Legendre:
    // hypergeometric; Mathieu (DLMF 28.2.1) in ζ = e^(2ix): rank ½ at 0 and ∞.
    assert_eq!(classify("bessel", &[])["class"], "confluent-hypergeometric");
    assert_eq!(classify("hydrogen_radial", &[])["class"], "confluent-hypergeometric");
    let airy = classify("airy", &[]);
    assert_eq!(airy["class"], "airy");
    assert_eq!(point(&airy, "z = ∞")["rank"], 1.5);
    let osc = classify("harmonic_oscillator", &[]);
    assert_eq!(osc["class"], "parabolic-cylinder");
    assert_eq!(point(&osc, "x = ∞")["rank"], 2);
    assert_eq!(classify("legendre", &[])["class"], "hypergeometric");
    assert_eq!(classify("mathieu_exponential", &[])["class"], "doubly-reduced-doubly-confluent-heun");
}

#[test]
fn dlmf_heun_round_trips() {
    // DLMF 31.2.1 with the Fuchs relation ε = α + β + 1 − γ − δ imposed
    // (DLMF 31.2.2): every parameter comes back exactly.
    let general = "var z\nparam a, q, alpha, beta, gamma, delta\nlet epsilon = alpha + beta + 1 - gamma - delta\n\
                   ode w'' + (gamma/z + delta/(z-1) + epsilon/(z-a))*w' + (alpha*beta*z - q)/(z*(z-1)*(z-a))*w = 0\n";
    let v = classify_text(general, &[]);
    assert_eq!(v["class"], "general-heun");
    for (n, want) in [("a", "a"), ("q", "q"), ("gamma", "gamma"), ("delta", "delta"), ("epsilon", "alpha + beta + 1 - gamma - delta")] {
        assert!(same(&param(&v, n), want), "31.2.1 {n}: {}", param(&v, n));
    }
    let (al, be) = (param(&v, "alpha"), param(&v, "beta"));
    assert!((same(&al, "alpha") && same(&be, "beta")) || (same(&al, "beta") && same(&be, "alpha")), "31.2.1 α, β: {al}, {be}");
    // DLMF 31.12.1–31.12.4 as written in the samples.
    for (sample, class, names) in [
        ("heun_confluent", "confluent-heun", &["q", "alpha", "gamma", "delta", "epsilon"][..]),
        ("heun_doubly_confluent", "doubly-confluent-heun", &["q", "alpha", "gamma", "delta"][..]),
        ("heun_biconfluent", "biconfluent-heun", &["q", "alpha", "gamma", "delta"][..]),
        ("heun_triconfluent", "triconfluent-heun", &["q", "alpha", "gamma"][..]),
    ] {
        let v = classify(sample, &[]);
        assert_eq!(v["class"], class, "{sample}");
        assert_eq!(v["canonical"]["form"], class, "{sample}");
        for n in names {
            assert!(same(&param(&v, n), n), "{sample}: {n} came back as {}", param(&v, n));
        }
    }
}

#[test]
fn heun_recognised_after_a_map() {
    // The confluent Heun equation (DLMF 31.12.1) written in r = 2x with
    // points at 0 and 2: the canonical map r = 2x brings the parameters back.
    let prog = "var r\nparam q, alpha, gamma, delta, epsilon\nlet x = r/2\n\
                ode w'' + (gamma/r + delta/(r-2) + epsilon/2)*w' + (alpha*x - q)/(4*x*(x-1))*w = 0\n";
    let v = classify_text(prog, &[]);
    assert_eq!(v["class"], "confluent-heun");
    assert_eq!(v["canonical"]["map"], "r = 2*x");
    for n in ["q", "alpha", "gamma", "delta", "epsilon"] {
        assert!(same(&param(&v, n), n), "{n}: {}", param(&v, n));
    }
}

#[test]
fn apparent_singularity_is_detected() {
    // y'' − (2/z) y' = 0 has the solutions 1 and z³ (Wronskian 3z²): the
    // exponents at 0 are {0, 3} and there is no logarithm (constructed).
    let v = classify_text("var z\node y'' - 2/z*y' = 0\n", &[]);
    let p = point(&v, "z = 0");
    assert_eq!(p["integer_difference"], 3);
    assert_eq!(p["apparent"], "yes");
    assert!(v["notes"].as_array().unwrap().iter().any(|n| n.as_str().unwrap().contains("apparent")));
    // A Heun-type equation with an extra point z = t of exponents {0, 2}
    // (p has −1/(z − t)): apparent exactly under a condition on the
    // accessory parameter; the condition found must vanish on the values
    // that make the point apparent and not elsewhere (constructed).
    let sym = classify_text("var z\nparam t, c\node y'' - 1/(z-t)*y' + c/(z*(z-t))*y = 0\n", &[]);
    let pt = point(&sym, "z = t");
    assert_eq!(pt["integer_difference"], 2);
    assert_eq!(pt["apparent"], "when");
    let cond = pt["apparent_condition"].as_str().unwrap().trim_end_matches(" = 0").to_string();
    // Frobenius by hand at z = t with y = Σ cₖ (z − t)^k and ρ = 0: the
    // resonance at k = 2 is log-free iff c(c − t)... is checked numerically:
    for (t, c, apparent) in [("1", "0", true), ("1", "1", true), ("1", "2", false), ("2", "3", false)] {
        let v = classify_text(&format!("var z\node y'' - 1/(z-{t})*y' + {c}/(z*(z-{t}))*y = 0\n"), &[]);
        let got = point(&v, &format!("z = {t}"))["apparent"].as_str().unwrap().to_string();
        assert_eq!(got == "yes", apparent, "t={t}, c={c}: {got}");
        let value = cond.replace('t', &format!("({t})")).replace('c', &format!("({c})"));
        assert_eq!(same(&value, "0"), apparent, "condition {cond} at t={t}, c={c}");
    }
}

#[test]
fn regge_wheeler_recurrence_matches_leaver() {
    // Leaver 1985 (units 2M = 1, ρ = −iω, ε = s² − 1):
    // α_n = n² + (2ρ + 2)n + 2ρ + 1,
    // β_n = −(2n² + (8ρ + 2)n + 8ρ² + 4ρ + l(l + 1) − ε),
    // γ_n = n² + 4ρn + 4ρ² − ε − 1, for y = (r − 2M)^(−2iMω) r^(4iMω) e^(iωr) Σ aₙ ((r − 2M)/r)ⁿ.
    let v = run(&[
        "recurrence",
        "samples/regge_wheeler.ode",
        "--about",
        "2*M",
        "--series",
        "u=(r-2*M)/r",
        "--exponents",
        "2*M=2,inf=1",
        "--format",
        "json",
    ]);
    assert_eq!(v["terms"], 3);
    let c: Vec<String> = v["coefficients"].as_array().unwrap().iter().map(|x| x["coefficient"].as_str().unwrap().replace('M', "(1/2)")).collect();
    let rho = "(-I*omega)";
    let alpha = format!("n^2 + (2*{rho} + 2)*n + 2*{rho} + 1");
    let beta = format!("-(2*n^2 + (8*{rho} + 2)*n + 8*{rho}^2 + 4*{rho} + l*(l + 1) - (s^2 - 1))");
    let gamma = format!("n^2 + 4*{rho}*n + 4*{rho}^2 - (s^2 - 1) - 1");
    // Up to one overall normalisation λ: c₀ = λα, c₁ = λβ, c₂ = λγ.
    assert!(same(&format!("({}) * ({beta})", c[0]), &format!("({}) * ({alpha})", c[1])), "β/α");
    assert!(same(&format!("({}) * ({gamma})", c[0]), &format!("({}) * ({alpha})", c[2])), "γ/α");
}

#[test]
fn a_massive_field_s_recurrence_adjoins_its_decay_rate_and_tends_to_leaver_s() {
    // A massive scalar on Schwarzschild: at infinity the formal solutions are
    // e^(±χr) with χ² = μ² − ω², not exact in the parameters, so χ is
    // adjoined as a symbol (μ² = ω² + χ²). At μ = 0 the outgoing branch is
    // χ = −iω, and the recurrence must become Leaver's (1985, s = 0, units
    // 2M = 1, ρ = −iω) for the same ingoing exponent at the horizon.
    let v = run(&["recurrence", "tests/boundary/massive_scalar_schwarzschild.ode", "--about", "2*M", "--exponents", "2*M=2", "--format", "json"]);
    assert_eq!(v["terms"], 3);
    let choices: Vec<&str> = v["choices"].as_array().unwrap().iter().map(|c| c.as_str().unwrap()).collect();
    assert!(choices.iter().any(|c| c.contains("χ = √(mu^2 - omega^2)") && c.contains("mu^2 = omega^2 + χ^2")), "{choices:?}");
    let c: Vec<String> = v["coefficients"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x["coefficient"].as_str().unwrap().replace('M', "(1/2)").replace('χ', "(-I*omega)"))
        .collect();
    let rho = "(-I*omega)";
    let alpha = format!("n^2 + (2*{rho} + 2)*n + 2*{rho} + 1");
    let beta = format!("-(2*n^2 + (8*{rho} + 2)*n + 8*{rho}^2 + 4*{rho} + l*(l + 1) + 1)");
    let gamma = format!("n^2 + 4*{rho}*n + 4*{rho}^2");
    assert!(same(&format!("({}) * ({beta})", c[0]), &format!("({}) * ({alpha})", c[1])), "β/α");
    assert!(same(&format!("({}) * ({gamma})", c[0]), &format!("({}) * ({alpha})", c[2])), "γ/α");
    // With no parameter named like a frequency, the option names it.
    let out = Command::new(env!("CARGO_BIN_EXE_canonode"))
        .args(["recurrence", "-e", "(1-2/r)*((1-2/r)*u')' + (nu^2 - (1-2/r)*(2/r^3 + m^2))*u = 0", "--var", "r", "--about", "2"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("name the frequency with --frequency"), "{err}");
}

#[test]
fn confluent_heun_quasinormal_series_is_three_term() {
    // Leaver 1985: for the confluent Heun class with quasinormal-mode
    // boundary conditions and u = (z − z_h)/(z − z₂) the recurrence has three terms.
    for sample in ["regge_wheeler", "heun_confluent"] {
        let about = if sample == "regge_wheeler" { "2*M" } else { "1" };
        let v = run(&["recurrence", &format!("samples/{sample}.ode"), "--about", about, "--format", "json"]);
        assert_eq!(v["terms"], 3, "{sample}");
    }
}

#[test]
fn methods_name_their_sources() {
    let v = classify("regge_wheeler", &[]);
    let m = v["methods"].as_array().unwrap();
    assert!(m.iter().any(|x| x["method"] == "continued fraction" && x["source"].as_str().unwrap().contains("Leaver")));
    assert!(m.iter().all(|x| !x["source"].as_str().unwrap().is_empty()));
}

#[test]
fn hypergeometric_reached_by_a_moebius_map() {
    // Gauss's equation (DLMF 15.10.1) after z = (2x − 1)/(x + 1): three finite
    // regular points and an ordinary point at ∞; a Möbius map must bring it
    // back to the hypergeometric form, keeping the exponent differences
    // {1 − c, c − a − b, a − b} up to sign and order (DLMF 15.10, 15.8).
    let v = run(&["classify", "samples/hypergeometric.ode", "--subst", "z=(2*x-1)/(x+1)", "--format", "json"]);
    assert_eq!(v["class"], "hypergeometric");
    assert_eq!(v["canonical"]["form"], "hypergeometric");
    let (a, b, c) = (param(&v, "a"), param(&v, "b"), param(&v, "c"));
    let got = [format!("1 - ({c})"), format!("({c}) - ({a}) - ({b})"), format!("({a}) - ({b})")];
    for want in ["1 - c", "c - a - b", "a - b"] {
        assert!(got.iter().any(|g| same(&format!("({g})^2"), &format!("({want})^2"))), "exponent difference {want} lost: a = {a}, b = {b}, c = {c}");
    }
    // The difference field of the JSON at each finite point.
    for p in v["singular_points"].as_array().unwrap() {
        assert!(p["difference"].is_string(), "{p}");
    }
}

#[test]
fn kerr_radial_recurrence_about_the_adjoined_horizon_is_three_term() {
    // Leaver 1985: the Teukolsky radial equation in u = (r − r₊)/(r − r₋)
    // with the ingoing exponent at r₊ and the outgoing branch at ∞ gives a
    // three-term recurrence. r± are the roots of r² − 2Mr + a² (irreducible
    // over Q(M, a)); `--about θ` adjoins r₊ = θ, r₋ = 2M − θ.
    let v = run(&["recurrence", "samples/teukolsky_radial.ode", "--about", "θ", "--exponents", "θ=2,inf=1", "--format", "json"]);
    assert_eq!(v["terms"], 3, "{v}");
    assert_eq!(v["series"], "u=(r - (θ))/(r - (2*M - θ))");
    // A fixed series variable: --series is refused about θ.
    let out = Command::new(env!("CARGO_BIN_EXE_canonode"))
        .args(["recurrence", "samples/teukolsky_radial.ode", "--about", "θ", "--series", "u=r"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("series variable is fixed"));
}

#[test]
fn horizon_choices_at_roots_of_higher_degree_carry_their_own_name() {
    // The horizons of Schwarzschild–de Sitter (roots of a cubic, Kottler 1918)
    // and of Kerr (r± roots of Δ = r² − 2Mr + a², Teukolsky 1973): the
    // ingoing choice is made at θ, never reported "at ∞"; infinity keeps its
    // own (outgoing) choice where it is irregular.
    for (sample, inf_choice) in [("schwarzschild_de_sitter_scalar", false), ("teukolsky_radial", true)] {
        let out = Command::new(env!("CARGO_BIN_EXE_canonode"))
            .args(["classify", &format!("samples/{sample}.ode"), "--boundary", "qnm"])
            .current_dir(env!("CARGO_MANIFEST_DIR"))
            .output()
            .unwrap();
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(text.contains("at θ: the ingoing exponent"), "{sample}: {text}");
        assert!(!text.contains("at ∞: the ingoing"), "{sample}: {text}");
        assert_eq!(text.contains("at ∞: the outgoing branch"), inf_choice, "{sample}: {text}");
    }
}

#[test]
fn points_are_named_by_their_exact_place_not_their_printed_text() {
    // The same horizon r = 2M written three ways (and infinity written two
    // ways) gives the same recurrence byte for byte: points and choices are
    // read into the analysis's exact places, not matched as text.
    let args = |about: &str, exps: &str| {
        run(&["recurrence", "samples/regge_wheeler.ode", "--about", about, "--exponents", exps, "--format", "json"])["coefficients"].clone()
    };
    let want = args("2*M", "2*M=2,inf=1");
    assert_eq!(args("M*2", "M + M=2,∞=1"), want);
    assert_eq!(args("(4*M)/2", "2*M=2,infinity=1"), want);
    // A different choice gives a different recurrence (the test can fail).
    assert_ne!(args("2*M", "2*M=1,inf=1"), want);
    // A point that is not singular, a choice given twice and an unreadable
    // point are located inside the option, with exit status 2.
    let fail = |extra: &[&str]| {
        let mut a = vec!["recurrence", "samples/regge_wheeler.ode"];
        a.extend_from_slice(extra);
        let out = Command::new(env!("CARGO_BIN_EXE_canonode")).args(&a).current_dir(env!("CARGO_MANIFEST_DIR")).output().expect("binary runs");
        assert_eq!(out.status.code(), Some(2), "{a:?}");
        String::from_utf8_lossy(&out.stderr).into_owned()
    };
    let e = fail(&["--about", "3*M"]);
    assert!(e.starts_with("--about:1:1: error: '3*M' is not a singular point of the equation; the points are: 0, 2*M, ∞"), "{e}");
    let e = fail(&["--about", "2*M", "--exponents", "2*M=2,0=1,M*2=1"]);
    assert!(e.starts_with("--exponents:1:11: error: 'M*2' is chosen twice"), "{e}");
    let e = fail(&["--about", "2*M", "--exponents", "2*M=2,1/r=1"]);
    assert!(e.starts_with("--exponents:1:7: error:") && e.contains("is not a singular point"), "{e}");
}

#[test]
fn only_points_with_horizon_physics_are_called_ingoing() {
    // A 5-dimensional Schwarzschild–Tangherlini scalar (f = 1 − r_h²/r²,
    // V = f(l(l + 2)/r² + 3f/(4r²) + 3f'/(2r)), common practice): r = −r_h
    // has exponents ±iω/(2κ) like the horizon, but the centre r = 0 lies
    // between, so it is no horizon of the domain r > r_h. Pöschl–Teller in
    // u = tanh x keeps both ends u = ±1, nothing between them.
    let program =
        "var r\nparam rh, w, l\nlet f = 1 - rh^2/r^2\nlet V = f*(l*(l+2)/r^2 + 3/4*f/r^2 + 3/2*f'/r)\node f*(f*psi')' + (w^2 - V)*psi = 0\n";
    let v = classify_text(program, &["--boundary", "qnm", "--at", "rh=1,l=0,w=1/2"]);
    let said: Vec<&str> = v["boundary"]["choices"].as_array().unwrap().iter().map(|c| c.as_str().unwrap()).collect();
    assert!(said.iter().any(|c| c.starts_with("at rh: the ingoing exponent")), "{said:?}");
    assert!(said.iter().any(|c| c.starts_with("at -rh: exponent number") && c.contains("not a horizon of the domain")), "{said:?}");
    assert!(!said.iter().any(|c| c.starts_with("at -rh: the ingoing")), "{said:?}");
    let out = Command::new(env!("CARGO_BIN_EXE_canonode"))
        .args(["spectrum", "-e", "psi'' + (w^2 - V0/cosh(x)^2)*psi = 0", "--var", "x", "--at", "V0=1", "--format", "json"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("binary runs");
    let doc: Value = serde_json::from_slice(&out.stdout).expect("JSON");
    let text = doc.to_string();
    assert!(text.contains("at 1: the ingoing exponent") && text.contains("at -1: the ingoing exponent"), "{text}");
}
