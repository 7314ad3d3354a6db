//! A change of variable (`--at-infinity`, `--subst`) does not change a
//! boundary problem: its ends, their roles (outer horizon, infinity,
//! ingoing, outgoing) and the domain are decided in the physical variable,
//! and the spectrum equals the one of the equation as first written. Each
//! check names its source; values recalled from memory say so.

use canonode::command::run_captured;
use serde_json::Value;

fn run(args: &[&str]) -> (u8, String, String) {
    let mut all = vec!["canonode".into()];
    all.extend(args.iter().map(|a| a.into()));
    let c = run_captured(all);
    (c.code, c.stdout, c.stderr)
}

fn json(args: &[&str]) -> Value {
    let (code, out, err) = run(args);
    assert_eq!(code, 0, "{args:?}: {err}");
    serde_json::from_str(&out).unwrap_or_else(|e| panic!("{args:?}: {e}: {out}"))
}

/// The first mode's ω, which must have converged.
fn fundamental(doc: &Value) -> (f64, f64) {
    let m = &doc["modes"][0];
    assert_eq!(m["converged"], true, "{doc}");
    (m["omega"][0].as_f64().expect("re"), m["omega"][1].as_f64().expect("im"))
}

#[test]
fn reissner_nordstrom_seen_from_infinity_has_the_same_fundamental() {
    // Without a change the fundamental (l = 1, q = 0.5, M = 1) is checked by
    // direct integration in the same run; with r = 1/t the horizon is the
    // smaller root of the two in t, and r = ∞ the finite point t = 0.
    let rn = "samples/reissner_nordstrom_scalar.ode";
    let at = "M=1,q=0.5,l=1";
    let plain = json(&["spectrum", rn, "--at", at, "--format", "json"]);
    let (re, im) = fundamental(&plain);
    let check = &plain["modes"][0]["check"];
    assert_eq!(check["method"], "integrate", "{plain}");
    let (cre, cim) = (check["omega"][0].as_f64().unwrap(), check["omega"][1].as_f64().unwrap());
    assert!((cre - re).abs() < 1e-10 && (cim - im).abs() < 1e-10, "{plain}");
    let seen = json(&["spectrum", rn, "--at-infinity", "--at", at, "--format", "json"]);
    let (sre, sim) = fundamental(&seen);
    assert!((sre - re).abs() <= 1e-10 * re.abs() && (sim - im).abs() <= 1e-10 * re.abs(), "{sre} {sim} vs {re} {im}");
    // The ends in both variables: r₊ = M + √(M² − q²) is t = 1/r₊, r = ∞ is t = 0.
    let change = &seen["variable_change"];
    assert_eq!(change["physical_variable"], "r", "{change}");
    assert_eq!(change["written_variable"], "t", "{change}");
    let r_plus = 1.0 + (1.0f64 - 0.25).sqrt();
    let ends = change["ends"].as_array().expect("ends");
    assert!((ends[0]["physical"].as_f64().unwrap() - r_plus).abs() < 1e-12, "{change}");
    assert!((ends[0]["written"].as_f64().unwrap() - 1.0 / r_plus).abs() < 1e-12, "{change}");
    assert_eq!(ends[1]["physical"], "inf", "{change}");
    assert!(ends[1]["written"].as_f64().is_some_and(|t| t.abs() < 1e-14), "{change}");
    // The words say what is true in r: the outer root, chosen ingoing, outgoing at r = ∞.
    let (_, text, _) = run(&["spectrum", rn, "--at-infinity", "--at", at]);
    assert!(text.contains("the outer real root") && text.contains("r ≈ 1.866025403784 is t ≈ 0.535898384862"), "{text}");
    assert!(text.contains("at ∞: the outgoing branch"), "{text}");
}

#[test]
fn regge_wheeler_seen_from_infinity_gives_leaver_s_fundamental() {
    // Leaver 1985 (from memory), Schwarzschild s = 2, l = 2, M = 1:
    // 0.37367168 − 0.08896232i, to half a unit in the last place.
    let doc = json(&["spectrum", "samples/regge_wheeler.ode", "--at-infinity", "--at", "s=2,l=2,M=1", "--format", "json"]);
    let (re, im) = fundamental(&doc);
    assert!((re - 0.37367168).abs() <= 5.1e-9 && (im + 0.08896232).abs() <= 5.1e-9, "{re} {im}");
}

#[test]
fn ends_given_in_the_written_variable_are_carried_to_the_physical_one() {
    // In t = 1/r the horizon r = 2 is t = 1/2 and infinity is t = 0, written
    // left to right in t; the map reverses the order, so they become 2..∞ in
    // r with their conditions. Leaver 1985 (from memory) as above.
    let args =
        ["spectrum", "samples/regge_wheeler.ode", "--at-infinity", "--at", "s=2,l=2,M=1", "--ends", "0:outgoing..0.5:into", "--format", "json"];
    let doc = json(&args);
    let (re, im) = fundamental(&doc);
    assert!((re - 0.37367168).abs() <= 5.1e-9 && (im + 0.08896232).abs() <= 5.1e-9, "{re} {im}");
}

#[test]
fn a_map_that_is_not_one_to_one_says_where_it_cannot_place_an_end() {
    // r = x² has two real preimages of the horizon r = 2: the spectrum is
    // the physical one (Leaver 1985, from memory), the place in x is not guessed.
    let doc = json(&["spectrum", "samples/regge_wheeler.ode", "--subst", "r=x^2", "--at", "s=2,l=2,M=1", "--format", "json"]);
    let (re, im) = fundamental(&doc);
    assert!((re - 0.37367168).abs() <= 5.1e-9 && (im + 0.08896232).abs() <= 5.1e-9, "{re} {im}");
    let horizon = &doc["variable_change"]["ends"][0];
    assert!(horizon["written"].is_null(), "{horizon}");
    assert!(horizon["undecided"].as_str().is_some_and(|s| s.contains("not one-to-one")), "{horizon}");
}

#[test]
fn classify_seen_from_infinity_picks_the_outer_horizon_and_the_outgoing_wave() {
    // In t = 1/r the larger root of q²t² − 2Mt + 1 is the inner horizon; the
    // labels are decided at the outer one, t = 1/r₊, and t = 0 is r = ∞.
    let rn = "samples/reissner_nordstrom_scalar.ode";
    let at = "M=1,q=0.5,l=1,omega=0.3";
    let doc = json(&["classify", rn, "--at-infinity", "--boundary", "qnm", "--at", at, "--format", "json"]);
    let choices: Vec<&str> = doc["boundary"]["choices"].as_array().expect("choices").iter().filter_map(Value::as_str).collect();
    assert_eq!(choices, ["at 0 (r = ∞): the outgoing branch (number 2)", "at θ (r ≈ 1.8660254038): the ingoing exponent (number 2)"], "{doc}");
    // The branch picked at t = 0 is e^(+iω/t) = e^(+iωr): outgoing with e^(−iωt).
    let zero = &doc["singular_points"][0];
    assert_eq!(zero["where"], "t = 0", "{zero}");
    let branch = zero["formal_solutions"][1].as_str().expect("a formal solution");
    assert!(branch.starts_with("exp(I*omega*t^(-1))"), "{branch}");
    // At t = 1/r₊ the ingoing exponent of the unknown is −iω/(2κ₊), κ₊ =
    // (r₊ − r₋)/(2r₊²) the surface gravity (common practice): exponent number 2 there.
    let (code, text, err) = run(&["classify", rn, "--at-infinity", "--boundary", "qnm", "--at", at]);
    assert_eq!(code, 0, "{err}");
    let (rp, rm) = (1.0 + 0.75f64.sqrt(), 1.0 - 0.75f64.sqrt());
    let kappa = (rp - rm) / (2.0 * rp * rp);
    let line = text.lines().find(|l| l.trim_start().starts_with(&format!("at {:.10}+0.0000000000i:", 1.0 / rp))).expect("the values at 1/r₊");
    let second = line.rsplit(", ").next().expect("two exponents");
    let im: f64 = second.trim().trim_end_matches('i').split_once('-').and_then(|(_, x)| x.parse().ok()).expect("an imaginary part");
    assert!((im - 0.3 / (2.0 * kappa)).abs() < 1e-9, "{line}");
    assert!(text.contains("exponents of the unknown:  1 outgoing,  2 ingoing"), "{text}");
}

#[test]
fn the_library_s_recurrence_of_an_equation_seen_from_infinity_is_the_physical_one() {
    // `numeric::qnm_modes` on a reduction in t = 1/r: the horizon r = 2M
    // and the outgoing wave at r = ∞ are picked in r, and the continued
    // fraction gives Leaver's 1985 fundamental (from memory), s = 2, l = 2, M = 1.
    use canonode::numeric::{qnm_modes, SpectrumOptions};
    use canonode::{reduce, GRat, Input, Rat, ReduceOptions};
    let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/samples/regge_wheeler.ode")).expect("sample");
    let red = reduce(&Input::Program(&text), &ReduceOptions { at_infinity: true, ..ReduceOptions::default() }).expect("reduces");
    assert_eq!(red.var, "t");
    let g = |x: i64| GRat::real(Rat::int(x.into()));
    // The field is (t, M, omega, l, s).
    let opts = SpectrumOptions::new(2, vec![g(0), g(1), g(0), g(2), g(2)], (0, 0), 1e-10, Some(num_complex::Complex64::new(0.37, -0.09)));
    let (modes, setup) = qnm_modes(&red, &opts, &|_| None).expect("modes");
    assert_eq!(setup.horizon_value, 2.0, "{}", setup.horizon);
    assert!(setup.choices.iter().any(|c| c.contains("at ∞: the outgoing branch")), "{:?}", setup.choices);
    let w = modes[0].root.omega;
    assert!(modes[0].root.converged && (w.re - 0.37367168).abs() <= 5.1e-9 && (w.im + 0.08896232).abs() <= 5.1e-9, "{w}");
}

#[test]
fn a_region_search_seen_from_infinity_finds_the_physical_mode_and_says_where_the_ends_are() {
    // Leaver 1985 (from memory): the one mode of Schwarzschild s = 2, l = 2
    // in the window, found in r; the notes place the ends in t.
    let args = ["spectrum", "samples/regge_wheeler.ode", "--at-infinity", "--at", "s=2,l=2,M=1", "--region", "0.2..0.5,-0.2..0", "--format", "json"];
    let doc = json(&args);
    let notes: Vec<&str> = doc["notes"].as_array().expect("notes").iter().filter_map(Value::as_str).collect();
    assert!(notes.iter().any(|n| n.starts_with("the equation is written in t with r = 1/t") && n.contains("r ≈ 2 is t ≈ 0.5")), "{notes:?}");
    let text = doc.to_string();
    assert!(text.contains("0.373671684"), "{text}");
}

#[test]
fn kerr_seen_from_infinity_coupled_to_its_angular_equation() {
    // Leaver 1985, s = −2, l = m = 2, n = 0, a/M = 0.5 (also Berti, Cardoso
    // & Starinets 2009): 0.46412 − 0.08564i, to half a unit in the last
    // place, with the radial equation written in t = 1/r, in a spectrum
    // and in a two-point scan.
    let couple = ["--couple", "samples/spheroidal_spin_weighted.ode", "--link", "lam = A + a^2*omega^2 - 2*a*m*omega", "--link", "c = a*omega"];
    let mut args =
        vec!["spectrum", "samples/teukolsky_radial.ode", "--at-infinity", "--at", "M=1,a=0.5,m=2,s=-2", "--guess", "0.46-0.085i", "--format", "json"];
    args.extend_from_slice(&couple);
    let (re, im) = fundamental(&json(&args));
    assert!((re - 0.46412).abs() <= 5e-6 && (im + 0.08564).abs() <= 5e-6, "{re} {im}");
    let mut args = vec![
        "scan",
        "samples/teukolsky_radial.ode",
        "--at-infinity",
        "--at",
        "M=1,m=2,s=-2",
        "--guess",
        "0.46-0.085i",
        "--vary",
        "a=0.5:0.6:0.1",
        "--format",
        "json",
    ];
    args.extend_from_slice(&couple);
    let doc = json(&args);
    let first = &doc["points"][0]["modes"][0];
    assert_eq!(first["converged"], true, "{doc}");
    let (sre, sim) = (first["omega"][0].as_f64().unwrap(), first["omega"][1].as_f64().unwrap());
    assert!((sre - re).abs() <= 1e-9 && (sim - im).abs() <= 1e-9, "{sre} {sim} vs {re} {im}");
}
