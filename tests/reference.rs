//! Canonode's normal form against the independent reference goldens.
//!
//! Every `tests/golden/<stem>.json` was computed by `scripts/reference/`
//! (sympy + python-flint, with its own parser of the input language; nothing
//! there calls canonode). For each golden this test reduces
//! `samples/<stem>.ode` with canonode and checks, against the reference:
//!
//! - Q itself: the golden's `num` and `den` texts are read back through
//!   canonode's own parser as the program `ψ'' + (N/D) ψ = 0` in the same
//!   variable order, whose p is 0 and whose Q is therefore exactly N/D; the
//!   two canonical forms must be equal (canonical forms are unique, so `==`
//!   is equality of rational functions).
//! - The expanded denominator, term for term, and the denominator factors as
//!   a multiset, both as polynomials and as printed text.
//! - Q at the golden's four points (exact decimal coordinates, evaluated
//!   exactly by canonode and rounded once), to relative 1e-14.

use canonode::{poly_text, reduce, GRat, Input, Int, Poly, Rat, RatFunc, ReduceOptions, Reduction, Style};
use serde_json::Value;
use std::path::{Path, PathBuf};

/// Names used by the read-back program; none of them is a sample's parameter.
const NUM_NAME: &str = "golden_num";
const DEN_NAME: &str = "golden_den";
const UNKNOWN_NAME: &str = "golden_psi";

/// A rational expression `text` in `var` and `params` (declaration order kept,
/// so that variable indices agree with the sample's reduction), read through
/// canonode's parser and lowering: the Q of `ψ'' + (text)·ψ = 0`.
fn read_back(var: &str, params: &[String], text: &str) -> RatFunc {
    let mut prog = format!("var {var}\n");
    if !params.is_empty() {
        prog.push_str(&format!("param {}\n", params.join(", ")));
    }
    prog.push_str(&format!("let {NUM_NAME} = {text}\n"));
    prog.push_str(&format!("unknown {UNKNOWN_NAME}\n"));
    prog.push_str(&format!("ode {UNKNOWN_NAME}'' + ({NUM_NAME})*{UNKNOWN_NAME} = 0\n"));
    let red = reduce(&Input::Program(&prog), &ReduceOptions::default()).unwrap_or_else(|e| panic!("golden text does not read back: {text:?}: {e:?}"));
    assert!(red.p.is_zero(), "the read-back program has p = 0");
    red.normal.q
}

/// `num/den` read back as one rational function.
fn read_back_quotient(var: &str, params: &[String], num: &str, den: &str) -> RatFunc {
    let text = format!("({num})/({DEN_NAME})");
    let mut prog = format!("var {var}\n");
    if !params.is_empty() {
        prog.push_str(&format!("param {}\n", params.join(", ")));
    }
    prog.push_str(&format!("let {DEN_NAME} = {den}\n"));
    prog.push_str(&format!("let {NUM_NAME} = {text}\n"));
    prog.push_str(&format!("unknown {UNKNOWN_NAME}\n"));
    prog.push_str(&format!("ode {UNKNOWN_NAME}'' + ({NUM_NAME})*{UNKNOWN_NAME} = 0\n"));
    let red = reduce(&Input::Program(&prog), &ReduceOptions::default()).unwrap_or_else(|e| panic!("golden N/D does not read back: {e:?}"));
    assert!(red.p.is_zero(), "the read-back program has p = 0");
    red.normal.q
}

/// A polynomial read back: the golden text must be a polynomial with
/// integer coefficients (the golden's D and its factors are).
fn read_back_poly(var: &str, params: &[String], text: &str) -> Poly {
    let r = read_back(var, params, text);
    assert!(r.den_factors().is_empty() && r.scale().is_one(), "golden polynomial {text:?} read back with a denominator");
    r.num().clone()
}

/// An exact real decimal with an optional sign, e.g. `-1.24`.
fn signed_decimal(text: &str) -> Rat {
    let (neg, body) = match text.strip_prefix('-') {
        Some(rest) => (true, rest),
        None => (false, text.strip_prefix('+').unwrap_or(text)),
    };
    let r = Rat::parse_decimal(body).unwrap_or_else(|| panic!("not a decimal: {text:?}"));
    if neg {
        r.neg()
    } else {
        r
    }
}

/// A golden coordinate: `a`, `a+bi` or `a-bi` with exact decimals a, b.
fn coordinate(text: &str) -> GRat {
    let Some(body) = text.strip_suffix('i') else {
        return GRat::real(signed_decimal(text));
    };
    // The sign between the parts is the last '+' or '-' after the first character.
    let cut = body
        .char_indices()
        .skip(1)
        .filter(|(_, c)| *c == '+' || *c == '-')
        .map(|(i, _)| i)
        .last()
        .unwrap_or_else(|| panic!("no real part in {text:?}"));
    GRat { re: signed_decimal(&body[..cut]), im: signed_decimal(&body[cut..]) }
}

fn strings(v: &Value) -> Vec<String> {
    v.as_array().expect("a JSON array").iter().map(|s| s.as_str().expect("a JSON string").to_string()).collect()
}

/// The multiset of denominator factors as sorted (text, multiplicity) pairs.
fn canonode_factor_texts(q: &RatFunc, names: &[String]) -> Vec<(String, u64)> {
    let mut v: Vec<(String, u64)> =
        q.den_factors().iter().map(|(f, e)| (poly_text(f.poly(), &Int::ONE, names, Style::Text), u64::from(*e))).collect();
    v.sort();
    v
}

/// `text` with the `*`-separated pieces of each term put in generator order
/// (numbers first, then names by their index in `gens`); the terms and
/// their signs are left as they are.
fn monomials_in_gens_order(text: &str, gens: &[String]) -> String {
    let rank = |piece: &str| -> usize {
        let base = piece.split('^').next().unwrap_or(piece);
        match gens.iter().position(|g| g == base) {
            Some(i) => i + 1,
            None => 0,
        }
    };
    text.split(' ')
        .map(|tok| {
            if tok == "+" || tok == "-" {
                return tok.to_string();
            }
            let (sign, body) = match tok.strip_prefix('-') {
                Some(b) => ("-", b),
                None => ("", tok),
            };
            let mut pieces: Vec<&str> = body.split('*').collect();
            pieces.sort_by_key(|p| rank(p));
            format!("{sign}{}", pieces.join("*"))
        })
        .collect::<Vec<_>>()
        .join(" ")
}

fn check_golden(root: &Path, golden_path: &PathBuf) -> Vec<String> {
    let stem = golden_path.file_stem().unwrap().to_str().unwrap();
    let golden: Value = serde_json::from_str(&std::fs::read_to_string(golden_path).expect("readable golden")).expect("golden is JSON");
    let mut problems = Vec::new();

    // Reference: sympy + python-flint (scripts/reference/ode_reference.py).
    let sample = root.join("samples").join(golden["sample"].as_str().unwrap());
    let text = std::fs::read_to_string(&sample).expect("the golden's sample exists");
    let red: Reduction =
        reduce(&Input::Program(&text), &ReduceOptions::default()).unwrap_or_else(|e| panic!("{stem}: canonode fails on the sample: {e:?}"));
    let var = golden["var"].as_str().unwrap();
    let params = strings(&golden["params"]);
    let gens = strings(&golden["gens"]);
    let names: Vec<String> = red.field.names().to_vec();
    assert_eq!(names, gens, "{stem}: variable order (golden 'gens')");
    assert_eq!(red.var, var, "{stem}: variable");
    assert_eq!(red.ode.unknown, golden["unknown"].as_str().unwrap(), "{stem}: unknown");
    let q = &red.normal.q;

    // Q = N/D exactly (sympy + python-flint reference).
    let num = golden["num"].as_str().unwrap();
    let den = golden["den"].as_str().unwrap();
    let q_ref = read_back_quotient(var, &params, num, den);
    if *q != q_ref {
        problems.push(format!(
            "{stem}: Q differs from the reference\n  canonode:  {}\n  reference: ({num})/({den})",
            canonode::ratfunc_text(q, &names, Style::Text)
        ));
    }

    // The expanded primitive denominator, with the content the golden states.
    let d_ref = read_back_poly(var, &params, den);
    if q.den_expanded() != d_ref {
        problems.push(format!(
            "{stem}: expanded denominator\n  canonode:  {}\n  reference: {den}",
            poly_text(&q.den_expanded(), &Int::ONE, &names, Style::Text)
        ));
    }
    let content = golden["den_content"].as_str().unwrap();
    if content != "1" {
        problems.push(format!("{stem}: den_content {content}: a primitive D has content 1"));
    }

    // Denominator factors as a multiset: polynomials, then printed text
    // (sympy.factor_list, each factor made primitive with a positive lex-leading term).
    let mut ref_polys: Vec<(Poly, u64)> = Vec::new();
    let mut ref_texts: Vec<(String, u64)> = Vec::new();
    for fm in golden["den_factors"].as_array().unwrap() {
        let t = fm[0].as_str().unwrap().to_string();
        let m = fm[1].as_u64().unwrap();
        ref_polys.push((read_back_poly(var, &params, &t), m));
        ref_texts.push((t, m));
    }
    ref_polys.sort();
    ref_texts.sort();
    let mut ours: Vec<(Poly, u64)> = q.den_factors().iter().map(|(f, e)| (f.poly().clone(), u64::from(*e))).collect();
    ours.sort();
    let our_texts = canonode_factor_texts(q, &names);
    if ours != ref_polys {
        problems.push(format!("{stem}: denominator factors (as polynomials)\n  canonode:  {our_texts:?}\n  reference: {ref_texts:?}"));
    } else {
        // Inside a monomial canonode prints the parameters first and the
        // variable last (`2*M*r`, src/algebra/print.rs), the reference in
        // generator order (`2*r*M`); the texts are compared with the
        // factors of each monomial put in generator order, everything else
        // (terms, their order, signs, coefficients) as printed.
        let norm = |v: &[(String, u64)]| -> Vec<(String, u64)> {
            let mut w: Vec<(String, u64)> = v.iter().map(|(t, m)| (monomials_in_gens_order(t, &names), *m)).collect();
            w.sort();
            w
        };
        if norm(&our_texts) != norm(&ref_texts) {
            problems.push(format!("{stem}: denominator factors print differently\n  canonode:  {our_texts:?}\n  reference: {ref_texts:?}"));
        }
    }

    // Q at the golden's points: exact evaluation by canonode, rounded once,
    // against the reference's exact value rounded once; relative 1e-14.
    for (k, pt) in golden["points"].as_array().unwrap().iter().enumerate() {
        let at = pt["at"].as_object().unwrap();
        let point: Vec<GRat> = names.iter().map(|n| coordinate(at[n].as_str().expect("coordinate text"))).collect();
        let want = (pt["Q"][0].as_f64().expect("real part"), pt["Q"][1].as_f64().expect("imaginary part"));
        let Some(got) = q.eval(&point) else {
            problems.push(format!("{stem}: point {k}: canonode's Q has a pole there"));
            continue;
        };
        let got = got.to_f64();
        let err = (got.0 - want.0).hypot(got.1 - want.1);
        let size = want.0.hypot(want.1);
        if err > 1e-14 * size {
            problems.push(format!("{stem}: point {k} {at:?}: Q = {got:?}, reference {want:?} (|Δ| = {err:e})"));
        }
    }
    problems
}

#[test]
fn normal_forms_match_the_reference_goldens() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut goldens: Vec<PathBuf> = std::fs::read_dir(root.join("tests/golden"))
        .expect("tests/golden exists")
        .map(|e| e.expect("a directory entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "json"))
        .collect();
    goldens.sort();
    assert!(goldens.len() >= 10, "expected the reference goldens, found {}", goldens.len());
    let problems: Vec<String> = goldens.iter().flat_map(|g| check_golden(root, g)).collect();
    assert!(problems.is_empty(), "{} mismatches against the sympy/python-flint reference:\n{}", problems.len(), problems.join("\n"));
}

#[test]
fn monomial_order_normalisation_only_reorders_within_a_monomial() {
    let gens: Vec<String> = ["r", "M", "a"].iter().map(|s| s.to_string()).collect();
    assert_eq!(monomials_in_gens_order("r^2 - 2*M*r + a^2", &gens), "r^2 - 2*r*M + a^2");
    assert_eq!(monomials_in_gens_order("-M^3*a*r", &gens), "-r*M^3*a");
    // Term order and signs are not touched.
    assert_ne!(monomials_in_gens_order("a^2 - 2*M*r + r^2", &gens), "r^2 - 2*r*M + a^2");
    assert_ne!(monomials_in_gens_order("r^2 + 2*M*r + a^2", &gens), "r^2 - 2*r*M + a^2");
}

#[test]
fn golden_coordinates_are_read_exactly() {
    // The coordinate reader itself (exact decimals, complex as a+bi).
    let c = coordinate("2.85-0.751i");
    assert_eq!(c.re, Rat::new(285.into(), 100.into()).unwrap());
    assert_eq!(c.im, Rat::new((-751).into(), 1000.into()).unwrap());
    let c = coordinate("-1.24");
    assert_eq!(c.re, Rat::new((-124).into(), 100.into()).unwrap());
    assert!(c.im.is_zero());
    let c = coordinate("-0.1+2i");
    assert_eq!(c.re, Rat::new((-1).into(), 10.into()).unwrap());
    assert_eq!(c.im, Rat::int(2.into()));
}
