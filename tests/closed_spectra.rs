//! Closed-form spectra (`spectrum`'s `closed_form`): each family's exact
//! expression evaluated against the published formula (source beside each)
//! and against the numeric modes of the same run (collocation, the
//! terminating recurrence or direct integration) to ≥ 10 digits, at several
//! parameter points.

use num_complex::Complex64;
use serde_json::Value;
use std::process::Command;

fn run(args: &[&str]) -> Value {
    let out = Command::new(env!("CARGO_BIN_EXE_canonode")).args(args).current_dir(env!("CARGO_MANIFEST_DIR")).output().expect("binary runs");
    assert!(out.status.success(), "{args:?}: {}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("JSON")
}

/// `spectrum INPUT… --boundary bound --at AT --overtones OV` as JSON, to 1e-12.
fn bound(input: &[&str], at: &str, overtones: &str) -> Value {
    let mut args = vec!["spectrum"];
    args.extend_from_slice(input);
    args.extend_from_slice(&["--boundary", "bound", "--at", at, "--overtones", overtones, "--tol", "1e-12", "--format", "json"]);
    run(&args)
}

fn c(v: &Value) -> Complex64 {
    Complex64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap())
}

/// Every exact value of every family: (family index, n, ω).
fn exact(doc: &Value) -> Vec<(usize, u64, Complex64)> {
    let fams = doc["closed_form"]["families"].as_array().unwrap_or_else(|| panic!("no closed form: {}", doc["closed_form_note"]));
    let mut out = Vec::new();
    for (i, f) in fams.iter().enumerate() {
        for x in f["values"].as_array().unwrap() {
            assert_eq!(x["method"], "exact");
            out.push((i, x["n"].as_u64().unwrap(), c(&x["omega"])));
        }
    }
    out
}

fn close(a: Complex64, b: Complex64, rel: f64) -> bool {
    (a - b).norm() <= rel * b.norm().max(1.0)
}

/// The formula's values are among the exact ones (1e-12), and every
/// converged numeric mode of the run is an exact value to 1e-10, which
/// the document's own `check` also records; returns how many numeric modes matched.
fn agree(doc: &Value, want: &[Complex64]) -> usize {
    let ex = exact(doc);
    for w in want {
        assert!(ex.iter().any(|(_, _, e)| close(*e, *w, 1e-12)), "formula value {w} not among {ex:?}");
    }
    let mut matched = 0;
    for m in doc["modes"].as_array().unwrap() {
        if m["converged"] != true {
            continue;
        }
        let w = c(&m["omega"]);
        assert!(ex.iter().any(|(_, _, e)| close(w, *e, 1e-10)), "numeric mode {w} ({}) is no exact value: {ex:?}", m["method"]);
        matched += 1;
    }
    for f in doc["closed_form"]["families"].as_array().unwrap() {
        for x in f["values"].as_array().unwrap() {
            if let Some(a) = x["check"]["agreement"].as_f64() {
                assert!(a <= 1e-10, "{x}");
            }
        }
    }
    matched
}

fn cx(re: f64, im: f64) -> Complex64 {
    Complex64::new(re, im)
}

#[test]
fn hydrogen() {
    // E = −Z²/(2(n + l + 1)²) (textbook, e.g. Landau & Lifshitz §36, from memory).
    for (z, l) in [(1.0f64, 0u32), (2.0, 1), (1.5, 2)] {
        let doc = bound(&["samples/hydrogen_radial.ode"], &format!("Z={z},l={l}"), "0..2");
        let want: Vec<Complex64> = (0..3).map(|n| cx(-z * z / (2.0 * (n as f64 + l as f64 + 1.0).powi(2)), 0.0)).collect();
        assert_eq!(agree(&doc, &want), 3, "Z={z} l={l}");
        assert_eq!(doc["closed_form"]["families"][0]["expression"], "-1/2*Z^2/(l + n + 1)^2");
    }
}

#[test]
fn three_dimensional_oscillator() {
    // ψ'' + (2E − r² − l(l+1)/r²)ψ = 0: E = 2n + l + 3/2 (textbook, from memory); folded by x = r².
    for l in [1u32, 2, 3] {
        let doc = bound(&["-e", "psi'' + (2*E - r^2 - l*(l+1)/r^2)*psi = 0", "--var", "r", "--frequency", "E"], &format!("l={l}"), "0..2");
        let want: Vec<Complex64> = (0..3).map(|n| cx(2.0 * n as f64 + l as f64 + 1.5, 0.0)).collect();
        assert_eq!(agree(&doc, &want), 3, "l={l}");
    }
}

#[test]
fn oscillator_on_the_whole_line() {
    // ψ'' + (2E/ħω − x²)ψ = 0 on (−∞, ∞) in units ħ = m = ω = 1: E = k + ½ (textbook);
    // the even levels (k = 2n) and the odd ones (k = 2n + 1) as two families, each from
    // the half-line with ψ'(0) = 0 or ψ(0) = 0, checked against collocation on the line.
    for w2 in ["1", "4"] {
        let doc = bound(&["-e", "psi'' + (2*E - w2*x^2)*psi = 0", "--var", "x", "--frequency", "E"], &format!("w2={w2}"), "0..3");
        let w: f64 = w2.parse::<f64>().unwrap().sqrt();
        let want: Vec<Complex64> = (0..4).map(|k| cx(w * (k as f64 + 0.5), 0.0)).collect();
        assert_eq!(agree(&doc, &want), 4, "w2={w2}: {}", doc["closed_form_note"]);
        let fams = doc["closed_form"]["families"].as_array().unwrap();
        assert_eq!(fams.len(), 2);
        assert!(fams[0]["family"].as_str().unwrap().starts_with("even") && fams[1]["family"].as_str().unwrap().starts_with("odd"));
    }
    // An odd potential term: no half-line reduction, said so.
    let doc = bound(&["-e", "psi'' + (2*E - x^2 - x^3/10)*psi = 0", "--var", "x", "--frequency", "E"], "", "0");
    assert!(doc["closed_form"].is_null(), "{}", doc["closed_form"]);
}

#[test]
fn morse_well() {
    // ψ'' + (E − D(e^{−2x} − 2e^{−x}))ψ = 0: E_n = −(√D − n − ½)², n < √D − ½
    // (P. M. Morse, Phys. Rev. 34 (1929) 57).
    for d in [9.0f64, 12.25, 16.0] {
        let doc = bound(
            &["--latex", "-e", r"-\frac{d^{2}\psi}{dx^{2}} + D\left(e^{-2x} - 2e^{-x}\right)\psi = E\psi", "--frequency", "E"],
            &format!("D={d}"),
            "0..2",
        );
        let levels = ((d.sqrt() - 0.5).ceil() as u32).min(3);
        let want: Vec<Complex64> = (0..levels).map(|n| cx(-(d.sqrt() - n as f64 - 0.5).powi(2), 0.0)).collect();
        assert!(agree(&doc, &want) >= 2, "D={d}");
        // The family ends where √D − n − ½ changes sign.
        let fam = &doc["closed_form"]["families"][0];
        assert_eq!(fam["n_range"]["last"].as_u64().unwrap(), ((d.sqrt() - 0.5).ceil() as u64) - 1, "{fam}");
    }
}

#[test]
fn morse_levels_up_to_the_continuum_are_found_and_checked() {
    // V = D(1 − e^(−ax))², ħ = 2m = 1: E_n = ω₀(n + ½) − ω₀²(n + ½)²/(4D),
    // ω₀ = 2a√D (textbook, from memory). D = 8, a = 1: three levels, the
    // last 0.108 below the continuum edge D. Written with exp(−ax) unbounded
    // as x → −∞, the equation is taken in ζ = e^(−ax) (ζ = ∞ irregular of
    // rank 1, where the solvers' irregular end lies) rather than tanh(ax/2);
    // every level is found and checked by a second method.
    let (d, a) = (8.0f64, 1.0f64);
    let w0 = 2.0 * a * d.sqrt();
    let want: Vec<Complex64> = (0..3).map(|n| cx(w0 * (n as f64 + 0.5) - w0 * w0 * (n as f64 + 0.5).powi(2) / (4.0 * d), 0.0)).collect();
    let doc = bound(&["-e", "psi'' + (E - D*(1-exp(-a*x))^2)*psi = 0", "--var", "x"], "D=8,a=1", "0..2");
    assert_eq!(agree(&doc, &want), 3);
    for m in doc["modes"].as_array().unwrap() {
        let ag = m["check"]["agreement"].as_f64().unwrap_or_else(|| panic!("no check: {m}"));
        assert!(ag < 1e-9, "{m}");
    }
}

#[test]
fn poschl_teller_well() {
    // α² g (g φ')' + (E − V0 g) φ = 0 with g = 1 − u², u = tanh(αx): the well
    // V0/cosh²(αx), V0 = −α²ν(ν + 1): E_n = −α²(ν − n)², n < ν (Landau &
    // Lifshitz §23, from memory; with α = 1, E_n = −(ν − n)²).
    let prog = "var u\nparam V0, alpha, E\nlet g = 1 - u^2\nunknown phi\node alpha^2*g*(g*phi')' + (E - V0*g)*phi = 0\n";
    let dir = std::env::temp_dir().join(format!("canonode-closed-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("well.ode");
    std::fs::write(&path, prog).unwrap();
    for (nu, alpha) in [(2.0f64, 1.0f64), (3.0, 1.0), (2.0, 0.7)] {
        let v0 = -alpha * alpha * nu * (nu + 1.0);
        let doc = bound(&[path.to_str().unwrap()], &format!("V0={v0},alpha={alpha}"), "0..1");
        let want: Vec<Complex64> = (0..2).map(|n| cx(-alpha * alpha * (nu - n as f64).powi(2), 0.0)).collect();
        assert_eq!(agree(&doc, &want), 2, "ν={nu} α={alpha}");
    }
}

#[test]
fn poschl_teller_barrier() {
    // ω = ±√(V0 − α²/4) − iα(n + ½) (V. Ferrari & B. Mashhoon, Phys. Rev. D 30 (1984) 295).
    for (v0, a) in [(1.0f64, 0.5f64), (2.0, 0.3), (3.7, 1.1)] {
        let doc = run(&["spectrum", "samples/poschl_teller.ode", "--at", &format!("V0={v0},alpha={a}"), "--overtones", "0..2", "--format", "json"]);
        let mut want = Vec::new();
        for n in 0..3 {
            for s in [1.0, -1.0] {
                want.push(cx(s * (v0 - a * a / 4.0).sqrt(), -a * (n as f64 + 0.5)));
            }
        }
        assert_eq!(agree(&doc, &want), 3, "V0={v0} α={a}");
        let fams = doc["closed_form"]["families"].as_array().unwrap();
        assert_eq!(fams.len(), 2);
        assert_eq!(fams[0]["expression"], "-I*alpha*n - 1/2*I*alpha + 1/2*sqrt(4*V0 - alpha^2)");
    }
}

#[test]
fn btz() {
    // ω = ±k − 2i r₊(n + 1), massless scalar, L = 1 (D. Birmingham, I. Sachs &
    // S. N. Solodukhin, Phys. Rev. Lett. 88 (2002) 151301); numeric check by
    // direct integration from a seed near the fundamental mode.
    for (rp, k) in [(1.0f64, 1.0f64), (1.5, 2.0), (0.7, 0.3)] {
        let guess = format!("{}{:+}i", k * 1.03, -2.0 * rp * 0.97);
        let doc = run(&[
            "spectrum",
            "tests/boundary/btz_scalar.ode",
            "--at",
            &format!("rp={rp},k={k}"),
            "--guess",
            &guess,
            "--tol",
            "1e-12",
            "--format",
            "json",
        ]);
        let want = [cx(k, -2.0 * rp), cx(-k, -2.0 * rp)];
        assert_eq!(agree(&doc, &want), 1, "rp={rp} k={k}");
        let fams = doc["closed_form"]["families"].as_array().unwrap();
        assert!(fams.iter().any(|f| f["expression"] == "-2*I*rp*n - 2*I*rp + k"), "{fams:?}");
    }
}

#[test]
fn de_sitter_static_patch() {
    // Derived here from the hypergeometric solution: with x = r², the
    // regular solution is R = x^(l/2) (1 − x)^(−iω/2) F(a, b; l + 3/2; x),
    // a = (l + Δ₊ − iω)/2, b = (l + Δ₋ − iω)/2, Δ± = 3/2 ± √(9/4 − m²) (the
    // indicial exponents at ∞ of the massive wave equation); the term
    // (1 − x)^(c − a − b) = (1 − x)^(iω) would come out of the horizon, and its
    // coefficient Γ(c)Γ(a + b − c)/(Γ(a)Γ(b)) (DLMF 15.10.21) vanishes iff
    // a = −n or b = −n: ω = −i(l + Δ± + 2n). Numeric check: direct
    // integration from a seed near each family's fundamental mode.
    for (l, m) in [(1.0f64, 1.0f64), (2.0, 0.5), (3.0, 1.2)] {
        let d = (2.25 - m * m).sqrt();
        for delta in [1.5 + d, 1.5 - d] {
            let w0 = cx(0.0, -(l + delta));
            let guess = format!("0.003{:+}i", w0.im * 1.004);
            let doc = run(&[
                "spectrum",
                "tests/boundary/de_sitter_static_scalar.ode",
                "--at",
                &format!("l={l},m={m}"),
                "--ends",
                "0..1",
                "--guess",
                &guess,
                "--tol",
                "1e-12",
                "--overtones",
                "0",
                "--format",
                "json",
            ]);
            let want: Vec<Complex64> = (0..1).map(|n| cx(0.0, -(l + delta + 2.0 * n as f64))).collect();
            assert_eq!(agree(&doc, &want), 1, "l={l} m={m} Δ={delta}");
        }
    }
}

#[test]
fn global_anti_de_sitter() {
    // Massless scalar in global AdS₄, L = 1: ω = l + 3 + 2n (exact; the
    // normalisable fall-off Δ = 3). The closed form in ω, and the same
    // problem in E = ω² solved by collocation as the numeric check.
    for l in [1u32, 2, 3] {
        let doc = run(&[
            "spectrum",
            "tests/boundary/ads4_global_scalar.ode",
            "--at",
            &format!("l={l}"),
            "--ends",
            "0..inf",
            "--method",
            "exact",
            "--overtones",
            "0..2",
            "--format",
            "json",
        ]);
        let want: Vec<Complex64> = (0..3).map(|n| cx(l as f64 + 3.0 + 2.0 * n as f64, 0.0)).collect();
        agree(&doc, &want);
        let doc = bound(
            &["-e", "(1+r^2)*((1+r^2)*u')' + (E - (1+r^2)*(l*(l+1)/r^2 + 2))*u = 0", "--var", "r", "--frequency", "E"],
            &format!("l={l}"),
            "0..2",
        );
        let want: Vec<Complex64> = want.iter().map(|w| w * w).collect();
        assert_eq!(agree(&doc, &want), 3, "l={l}");
    }
}

#[test]
fn heun_class_problems_say_so() {
    // Schwarzschild (Regge–Wheeler) is confluent Heun: no closed form, said plainly.
    let doc = run(&["spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--format", "json"]);
    assert!(doc["closed_form"].is_null());
    let note = doc["closed_form_note"].as_str().unwrap();
    assert!(note.contains("heun") && note.contains("Heun's"), "{note}");
}

#[test]
fn closed_forms_carry_their_latex_beside_the_text() {
    // Hydrogen: E_n = −Z²/(2(l + n + 1)²) (textbook, e.g. Landau & Lifshitz §36); the JSON
    // gives the expression as text and, in the `NAME_latex` convention, as LaTeX.
    let doc = run(&["spectrum", "samples/hydrogen_radial.ode", "--at", "Z=1,l=0", "--boundary", "bound", "--method", "exact", "--format", "json"]);
    let fam = &doc["closed_form"]["families"][0];
    assert_eq!(fam["expression"], "-1/2*Z^2/(l + n + 1)^2");
    assert_eq!(fam["expression_latex"], "-\\frac{Z^{2}}{2 \\left(l + n + 1\\right)^{2}}");
}

#[test]
fn normal_modes_without_a_horizon_are_numbered_by_frequency() {
    // Massless scalar in global AdS₄, L = 1: ω = l + 3 + 2n (exact; the same
    // problem as above). With no horizon and no --ends the natural domain is
    // from the centre to the boundary; the modes are real and numbered by ω,
    // in the radial variable r = tan ρ as written with trigonometric
    // coefficients in ρ (V = l(l + 1)/sin²ρ + 2/cos²ρ for Δ = 3, common
    // practice), and as a real eigenvalue problem in ω (polynomial: ω²).
    // At l = 0 the centre is an ordinary point at these values, singular
    // for the family: still an end.
    for l in [0u32, 1, 2, 3] {
        let at = format!("l={l}");
        let want: Vec<Complex64> = (0..4).map(|n| cx(l as f64 + 3.0 + 2.0 * n as f64, 0.0)).collect();
        let docs = [
            run(&["spectrum", "tests/boundary/ads4_global_scalar.ode", "--at", &at, "--overtones", "0..3", "--format", "json"]),
            run(&[
                "spectrum",
                "-e",
                "psi'' + (om^2 - l*(l+1)/sin(x)^2 - 2/cos(x)^2)*psi = 0",
                "--var",
                "x",
                "--at",
                &at,
                "--overtones",
                "0..3",
                "--format",
                "json",
            ]),
            bound(&["tests/boundary/ads4_global_scalar.ode"], &at, "0..3"),
        ];
        for doc in &docs {
            let modes = doc["modes"].as_array().unwrap();
            assert_eq!(modes.len(), 4, "l={l}: {doc}");
            for (m, w) in modes.iter().zip(&want) {
                assert_eq!(m["converged"], true, "l={l}: {m}");
                assert!(close(c(&m["omega"]), *w, 1e-9), "l={l}: n={} is {} not {w}", m["n"], m["omega"]);
            }
        }
    }
}

#[test]
fn de_sitter_double_modes_where_the_two_families_meet() {
    // The families ω = −i(l + Δ± + 2n) of `de_sitter_static_patch` (derived
    // there from the hypergeometric solution) coincide when Δ₊ − Δ₋ =
    // 2√(9/4 − m²) is an even integer: at m² = 9/4 every mode is double, at
    // m² = 5/4 (Δ± = 5/2, 1/2) every one but the least damped. The
    // connection coefficient then has a double zero, and so do the mismatch
    // and the continued fraction's inversions: the values are the zeros of
    // their derivatives, said in a note, and agree with the formula.
    for (l, m, first, doubles_from) in [(1u32, "3/2", 2.5f64, 0usize), (2, "3/2", 3.5, 0), (1, "1.118033988749895", 1.5, 1)] {
        let at = format!("l={l},m={m}");
        let doc = run(&["spectrum", "tests/boundary/de_sitter_static_scalar.ode", "--at", &at, "--overtones", "0..2", "--format", "json"]);
        let modes = doc["modes"].as_array().unwrap();
        for (n, m) in modes.iter().enumerate() {
            let w = cx(0.0, -(first + 2.0 * n as f64));
            assert_eq!(m["converged"], true, "{at}: {m}");
            assert!(close(c(&m["omega"]), w, 1e-9), "{at} n={n}: {} is not {w}", m["omega"]);
            let said = m.to_string().contains("double root");
            assert_eq!(said, n >= doubles_from, "{at} n={n}: {m}");
        }
    }
}

#[test]
fn de_sitter_modes_at_resonances_of_the_horizon_exponents() {
    // The families ω = −i(l + Δ± + 2n) of `de_sitter_static_patch` (derived
    // there from the hypergeometric solution) for the massless field (Δ± = 3,
    // 0) and the conformally coupled one (m² = 2: Δ± = 2, 1). Every mode is
    // then an integer times −i, where the horizon's exponents ±iω/2 differ by
    // an integer: direct integration's mismatch has no clean root there, and
    // each check (or a value no method settles at the point itself) is the
    // limit of direct integration's modes of nearby problems. The first six
    // overtones, numbered by damping, with and without --ends.
    for (l, m, deltas) in
        [(1u32, "0", [3.0, 0.0]), (2, "0", [3.0, 0.0]), (1, "1.4142135623730951", [2.0, 1.0]), (2, "1.4142135623730951", [2.0, 1.0])]
    {
        let mut want: Vec<f64> =
            deltas.iter().flat_map(|d| (0..8).map(move |n| f64::from(l) + d + 2.0 * f64::from(n))).filter(|x| *x > 0.0).collect();
        want.sort_by(f64::total_cmp);
        want.dedup();
        for ends in [None, Some("0..1")] {
            let at = format!("l={l},m={m}");
            let mut args = vec!["spectrum", "tests/boundary/de_sitter_static_scalar.ode", "--at", &at, "--overtones", "0..5", "--format", "json"];
            if let Some(e) = ends {
                args.extend_from_slice(&["--ends", e]);
            }
            let doc = run(&args);
            let modes = doc["modes"].as_array().unwrap();
            assert_eq!(modes.len(), 6);
            for (m, w) in modes.iter().zip(&want) {
                let w = cx(0.0, -w);
                assert_eq!(m["converged"], true, "{at} {ends:?}: {m}");
                assert!(close(c(&m["omega"]), w, 1e-9), "{at} {ends:?} n={}: {} is not {w}", m["n"], m["omega"]);
                // Its check agrees; without one it is direct integration's
                // (the limit itself, or a root its two integrations agree on,
                // where the global method, the check between given ends, sees
                // only the least damped modes).
                match m["check"]["agreement"].as_f64() {
                    Some(a) => assert!(a <= 1e-9, "{at} {ends:?}: {m}"),
                    None => assert_eq!(m["method"], "integrate", "{at} {ends:?}: {m}"),
                }
            }
        }
    }
}

#[test]
fn de_sitter_static_patch_without_a_guess_starts_from_the_least_damped_mode() {
    // The two families ω = −i(l + Δ± + 2n) of the test above (derived there
    // from the hypergeometric solution), l = 1, m = 1/2: Δ₋ = 3/2 − √2 gives
    // the least damped mode. Without a guess the first three overtones,
    // numbered by damping, are −i(l + Δ₋), −i(l + Δ₋ + 2), −i(l + Δ₊).
    let (l, d) = (1.0f64, 2f64.sqrt());
    let want = [cx(0.0, -(l + 1.5 - d)), cx(0.0, -(l + 1.5 - d + 2.0)), cx(0.0, -(l + 1.5 + d))];
    let doc = run(&[
        "spectrum",
        "tests/boundary/de_sitter_static_scalar.ode",
        "--at",
        "l=1,m=1/2",
        "--ends",
        "0..1",
        "--overtones",
        "0..2",
        "--format",
        "json",
    ]);
    let modes = doc["modes"].as_array().unwrap();
    for (m, w) in modes.iter().zip(&want) {
        assert_eq!(m["converged"], true, "{m}");
        assert!(close(c(&m["omega"]), *w, 1e-9), "n={}: {} is not {w}", m["n"], m["omega"]);
    }
    // Without --ends: horizons at ±1 about a regular centre at r = 0 (f even
    // in r) are read as de Sitter's, the static patch between the centre and
    // the horizon; the output says so and names --ends for the region
    // beyond. The same modes, for l = 1 and for l = 0 (where r = 0 is an
    // ordinary point of Q and the potential's sign decides nothing).
    for (at, l) in [("l=1,m=1/2", 1.0f64), ("l=0,m=1/2", 0.0)] {
        let want = [cx(0.0, -(l + 1.5 - d)), cx(0.0, -(l + 1.5 - d + 2.0))];
        let doc = run(&["spectrum", "tests/boundary/de_sitter_static_scalar.ode", "--at", at, "--overtones", "0..1", "--format", "json"]);
        assert_eq!(doc["ends"][0]["at"].as_f64(), Some(0.0), "{doc}");
        for (m, w) in doc["modes"].as_array().unwrap().iter().zip(&want) {
            assert_eq!(m["converged"], true, "{m}");
            assert!(close(c(&m["omega"]), *w, 1e-9), "{at} n={}: {} is not {w}", m["n"], m["omega"]);
        }
    }
    let out = Command::new(env!("CARGO_BIN_EXE_canonode"))
        .args(["spectrum", "tests/boundary/de_sitter_static_scalar.ode", "--at", "l=0,m=1/2"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("binary runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("taken as the static patch of a de Sitter-like space"), "{text}");
    assert!(text.contains("name the ends with --ends"), "{text}");
}

#[test]
fn interleaved_families_are_numbered_together() {
    // The de Sitter static patch of the test above, in the tortoise
    // coordinate x (r = tanh x, f = sech²x): V = l(l+1)/sinh²x + (m² − 2)/cosh²x.
    // At l = 1, m² = 1/2 the two families −i(l + 3/2 ∓ √(9/4 − m²) + 2n)
    // interleave: by damping the modes are −i(l + Δ₋), −i(l + Δ₋ + 2),
    // −i(l + Δ₊), −i(l + Δ₋ + 4) (Natário & Schiappa 2004, derived from the
    // hypergeometric solution in the test above). The global method resolves
    // only the first two and the ladder's extrapolation passes over −i(l + Δ₊);
    // the closed form's values then seed the numeric table, which lists all
    // four, each polished and checked numerically.
    let s = (9.0f64 / 4.0 - 0.5).sqrt();
    let want = [-(2.5 - s), -(4.5 - s), -(2.5 + s), -(6.5 - s)];
    let doc = run(&[
        "spectrum",
        "-e",
        "psi'' + (w^2 - l*(l+1)/sinh(x)^2 - (m2-2)/cosh(x)^2)*psi = 0",
        "--var",
        "x",
        "--at",
        "l=1,m2=1/2",
        "--overtones",
        "0..3",
        "--format",
        "json",
    ]);
    let modes = doc["modes"].as_array().unwrap();
    assert_eq!(modes.len(), 4, "{doc}");
    for (m, im) in modes.iter().zip(want) {
        assert_eq!(m["converged"], true, "{m}");
        assert!(close(c(&m["omega"]), cx(0.0, im), 1e-9), "n={}: {} is not {im}i", m["n"], m["omega"]);
    }
    assert!(modes[2]["evidence"]["seed_from"].as_str().unwrap_or("").contains("closed form"), "{}", modes[2]);
    // No exact value is passed over by the numeric table any more.
    for fam in doc["closed_form"]["families"].as_array().unwrap() {
        for v in fam["values"].as_array().unwrap() {
            assert!(v["numeric_passed_over_from"].is_null(), "{v}");
        }
    }
}

#[test]
fn a_centre_that_is_an_ordinary_point_can_be_an_end() {
    // Global AdS₄, massless scalar, l = 0: Q has no pole at r = 0 (ψ = r·φ is
    // analytic there), so the centre is an ordinary point; given as an end,
    // its exponents are 0 and 1 and the regular solution ψ(0) = 0 takes the
    // larger. ω = l + 3 + 2n = 3, 5, 7, 9 (exact, as above).
    let doc =
        run(&["spectrum", "tests/boundary/ads4_global_scalar.ode", "--at", "l=0", "--ends", "0..inf", "--overtones", "0..3", "--format", "json"]);
    let modes = doc["modes"].as_array().unwrap();
    assert_eq!(modes.len(), 4, "{doc}");
    for (n, m) in modes.iter().enumerate() {
        let want = cx(3.0 + 2.0 * n as f64, 0.0);
        assert_eq!(m["converged"], true, "{m}");
        assert!(close(c(&m["omega"]), want, 1e-9), "n={n}: {} not {want}", m["omega"]);
    }
}

#[test]
fn kratzer_levels_where_the_square_root_is_rational() {
    // −½g'' − 2D(a/q − a²/(2q²))g = Eg is hydrogen-like with Z = 2Da and
    // ν(ν + 1) = 2Da²: E_n = −2D²a²/(n + ½ + ½√(1 + 8Da²))² (derived here;
    // Kratzer's molecular potential, common practice). At D = a = 1 the root
    // is 3 and the level n = 1 is where the family's reduced form a + b√r has
    // a vanishing denominator (n² + n = 2Da²): every level is still there,
    // and just beside that point too.
    for at in ["Dd=1,a0=1", "Dd=1.0000001,a0=1", "Dd=2,a0=1"] {
        let doc = bound(&["-e", "-1/2*g'' - 2*Dd*(a0/q - a0^2/(2*q^2))*g = Ee*g", "--var", "q"], at, "0..4");
        let (d, a): (f64, f64) = match at {
            "Dd=1,a0=1" => (1.0, 1.0),
            "Dd=2,a0=1" => (2.0, 1.0),
            _ => (1.0000001, 1.0),
        };
        let s = (1.0 + 8.0 * d * a * a).sqrt();
        let want: Vec<Complex64> = (0..5).map(|n| cx(-2.0 * d * d * a * a / (n as f64 + 0.5 + 0.5 * s).powi(2), 0.0)).collect();
        let ex = exact(&doc);
        assert_eq!(ex.len(), 5, "{at}: {ex:?}");
        for (i, w) in want.iter().enumerate() {
            assert!(close(ex[i].2, *w, 1e-12), "{at} n={i}: {} against {w}", ex[i].2);
        }
        assert!(agree(&doc, &want) >= 1, "{at}");
    }
}

#[test]
fn potentials_with_different_limits_at_the_two_ends() {
    // Two square roots of the energy in the exponents (the potential tends
    // to different values at the two ends): the condition is squared to
    // remove the second, and only roots on both branches are kept. ħ = 2m = 1
    // (common practice, e.g. Cooper, Khare & Sukhatme, Phys. Rep. 251 (1995)
    // 267, table of shape-invariant potentials, from memory):
    // Rosen–Morse II, −l(l+1)sech²x + 2B tanh x: E_n = −(l − n)² − B²/(l − n)²;
    // Eckart, l(l+1)/sinh²r − 2Z coth r: E_n = −(n + l + 1)² − Z²/(n + l + 1)²;
    // Hulthén, −V₀e^(−r/a)/(1 − e^(−r/a)): E_n = −((V₀a² − (n + 1)²)/(2a(n + 1)))².
    let rm = bound(
        &["--latex", "-e", r"-\psi''(x) + \left[-l(l+1)\,\mathrm{sech}^2 x + 2B\tanh x\right]\psi = E\psi", "--frequency", "E"],
        "l=4,B=2",
        "0..2",
    );
    let want: Vec<Complex64> = (0..3)
        .map(|n| {
            let m = 4.0 - n as f64;
            cx(-m * m - 4.0 / (m * m), 0.0)
        })
        .collect();
    assert!(agree(&rm, &want) >= 3);
    let eckart =
        bound(&["--latex", "-e", r"-u''(r) + \left[\frac{l(l+1)}{\sinh^2 r} - 2Z\coth r\right]u = E\,u", "--frequency", "E"], "l=0,Z=10", "0..2");
    let want: Vec<Complex64> = (0..3)
        .map(|n| {
            let m = n as f64 + 1.0;
            cx(-m * m - 100.0 / (m * m), 0.0)
        })
        .collect();
    assert!(agree(&eckart, &want) >= 3);
    let hulthen = bound(
        &["--latex", "-e", r"-\frac{d^{2}\phi}{dr^{2}} - V_0\,\frac{e^{-r/a}}{1-e^{-r/a}}\,\phi = E\,\phi", "--frequency", "E"],
        "V_0=9,a=1",
        "0..1",
    );
    let want: Vec<Complex64> = (0..2)
        .map(|n| {
            let m = n as f64 + 1.0;
            cx(-((9.0 - m * m) / (2.0 * m)).powi(2), 0.0)
        })
        .collect();
    assert!(agree(&hulthen, &want) >= 2);
    // Only the levels that exist: V₀a² = 9 holds two (n + 1 < 3).
    assert_eq!(exact(&hulthen).len(), 2, "{}", hulthen["closed_form"]);
}
