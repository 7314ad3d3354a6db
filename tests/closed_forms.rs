//! Normal forms of classical equations against closed forms written out by
//! hand, each with its source beside it; changes of variable against the
//! transformation law and Schwarzians worked out by hand for the specific
//! maps; the Schrödinger form of the Regge–Wheeler equation.
//!
//! Expected values are written as text in the input language and read by
//! canonode's parser as the Q of `ψ'' + E ψ = 0` (p = 0, so Q = E exactly);
//! equality is equality of canonical forms.

use canonode::{reduce, schwarzian, transform_q, Input, RatFunc, ReduceOptions, Reduction};
use std::path::Path;

fn sample(stem: &str) -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples").join(format!("{stem}.ode"));
    std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn reduce_sample(stem: &str, opts: &ReduceOptions) -> Reduction {
    reduce(&Input::Program(&sample(stem)), opts).unwrap_or_else(|e| panic!("{stem}: {e:?}"))
}

/// The rational expression `text` in `var` and `params` (in this order, the
/// order of the reduction it is compared with), after the `lets`.
fn expr(var: &str, params: &[&str], lets: &[(&str, &str)], text: &str) -> RatFunc {
    let mut prog = format!("var {var}\n");
    if !params.is_empty() {
        prog.push_str(&format!("param {}\n", params.join(", ")));
    }
    for (name, body) in lets {
        prog.push_str(&format!("let {name} = {body}\n"));
    }
    prog.push_str(&format!("let closed_form = {text}\nunknown closed_psi\n"));
    prog.push_str("ode closed_psi'' + (closed_form)*closed_psi = 0\n");
    let red = reduce(&Input::Program(&prog), &ReduceOptions::default()).unwrap_or_else(|e| panic!("expected value {text:?} does not read: {e:?}"));
    assert!(red.p.is_zero());
    red.normal.q
}

/// The coefficient of (z − z0)^(−2) in Q at the linear factor with root `point`.
fn double_pole_coefficient(red: &Reduction, point: &RatFunc) -> RatFunc {
    let pp = red.normal.principal.iter().find(|pp| pp.point == *point).unwrap_or_else(|| panic!("no principal part at the expected point"));
    assert_eq!(pp.order, 2, "a double pole (regular singular point)");
    pp.coeffs[0].clone()
}

fn at_infinity() -> ReduceOptions {
    ReduceOptions { at_infinity: true, ..ReduceOptions::default() }
}

fn subst(s: &str) -> ReduceOptions {
    ReduceOptions { subst: Some(s.to_string()), ..ReduceOptions::default() }
}

#[test]
fn bessel_dlmf_10_2_1() {
    // DLMF 10.2.1: z² w'' + z w' + (z² − ν²) w = 0; normal form
    // Q = 1 + (1/4 − ν²)/z² (p = 1/z, derived by hand; common practice).
    let red = reduce_sample("bessel", &ReduceOptions::default());
    assert_eq!(red.normal.q, expr("z", &["nu"], &[], "1 + (1/4 - nu^2)/z^2"));
}

#[test]
fn legendre_dlmf_14_2_1() {
    // DLMF 14.2.1: (1 − x²) w'' − 2x w' + (ν(ν+1) − μ²/(1 − x²)) w = 0;
    // Q = ((1 − x²) ν(ν+1) + 1 − μ²)/(1 − x²)² (derived by hand).
    let red = reduce_sample("legendre", &ReduceOptions::default());
    let q = expr("x", &["nu", "mu"], &[], "((1 - x^2)*nu*(nu + 1) + 1 - mu^2)/(1 - x^2)^2");
    assert_eq!(red.normal.q, q);
    // Exponents ½ ± μ/2 at x = ±1, so q0 = (1 − μ²)/4 at both (from memory:
    // the exponents of 14.2.1 itself are ±μ/2 at ±1).
    let q0 = expr("x", &["nu", "mu"], &[], "(1 - mu^2)/4");
    for point in ["1", "-1"] {
        let z0 = expr("x", &["nu", "mu"], &[], point);
        assert_eq!(double_pole_coefficient(&red, &z0), q0, "x = {point}");
    }
}

#[test]
fn airy_dlmf_9_2_1() {
    // DLMF 9.2.1: w'' = z w, already in normal form: Q = −z.
    let red = reduce_sample("airy", &ReduceOptions::default());
    assert_eq!(red.normal.q, expr("z", &[], &[], "-z"));
}

#[test]
fn hypergeometric_exponent_differences_dlmf_15_10_1() {
    // DLMF 15.10.1: z(1 − z) w'' + (c − (a + b + 1) z) w' − ab w = 0, with
    // exponent differences 1 − c at 0, c − a − b at 1 and a − b at ∞
    // (Riemann P-symbol of the equation, DLMF §15.11; from memory). At a
    // double pole, ρ(ρ − 1) + q0 = 0 has roots differing by θ with
    // q0 = (1 − θ²)/4 (DESIGN.md).
    let names = ["a", "b", "c"];
    let red = reduce_sample("hypergeometric", &ReduceOptions::default());
    let zero = expr("z", &names, &[], "0");
    let one = expr("z", &names, &[], "1");
    assert_eq!(double_pole_coefficient(&red, &zero), expr("z", &names, &[], "(1 - (1 - c)^2)/4"));
    assert_eq!(double_pole_coefficient(&red, &one), expr("z", &names, &[], "(1 - (c - a - b)^2)/4"));
    // Infinity through t = 1/z (Q̃ = t⁻⁴ Q(1/t), DESIGN.md).
    let inf = reduce_sample("hypergeometric", &at_infinity());
    assert_eq!(inf.var, "t");
    let t0 = expr("t", &names, &[], "0");
    assert_eq!(double_pole_coefficient(&inf, &t0), expr("t", &names, &[], "(1 - (a - b)^2)/4"));
}

#[test]
fn regge_wheeler_normal_form() {
    // Regge & Wheeler 1957 / common practice: f (f y')' + (ω² − V) y = 0,
    // f = 1 − 2M/r, V = f (l(l+1)/r² + (1 − s²) 2M/r³).
    let params = ["M", "omega", "l", "s"];
    let red = reduce_sample("regge_wheeler", &ReduceOptions::default());
    let q = &red.normal.q;
    let k = &red.field;

    // Q is a quartic in r over (r (r − 2M))² (common practice).
    let den = expr("r", &params, &[], "(r*(r - 2*M))^2");
    assert_eq!(RatFunc::from_poly(q.den_expanded()), den, "denominator (r(r − 2M))²");
    let numer = k.mul(q, &den).unwrap();
    assert!(numer.den_factors().is_empty(), "Q·(r(r − 2M))² is a polynomial");
    assert_eq!(numer.num().degree(0), 4, "a quartic in r");

    // Horizon r = 2M: coefficient of (r − 2M)⁻² is 1/4 + 4M²ω², i.e. exponents
    // ½ ± 2iMω (surface gravity κ = 1/(4M), textbook).
    let horizon = expr("r", &params, &[], "2*M");
    assert_eq!(double_pole_coefficient(&red, &horizon), expr("r", &params, &[], "1/4 + 4*M^2*omega^2"));
    // r = 0: q0 = 1/4 − s², exponent difference 2s (worked out by hand from
    // the equation above: p ~ −1/r, q ~ (1 − s²)/r²).
    let origin = expr("r", &params, &[], "0");
    assert_eq!(double_pole_coefficient(&red, &origin), expr("r", &params, &[], "1/4 - s^2"));
}

#[test]
fn regge_wheeler_schrodinger_form() {
    // With dr*/dr = 1/f the equation is φ_{r*r*} + (ω² − V) φ = 0 with
    // V = f (l(l+1)/r² + (1 − s²) 2M/r³) (Regge & Wheeler 1957 / common practice).
    let params = ["M", "omega", "l", "s"];
    let opts = ReduceOptions { dxdz: Some("1/f".to_string()), ..ReduceOptions::default() };
    let red = reduce_sample("regge_wheeler", &opts);
    let sch = red.schrodinger.as_ref().expect("the Schrödinger form");
    assert_eq!(sch.frequency.as_deref(), Some("omega"));
    assert!(!sch.v_depends_on_frequency, "V is free of ω");
    let f = [("f", "1 - 2*M/r")];
    assert_eq!(sch.v, expr("r", &params, &f, "f*(l*(l + 1)/r^2 + (1 - s^2)*2*M/r^3)"));
    assert_eq!(sch.dxdz, expr("r", &params, &f, "1/f"));
}

#[test]
fn teukolsky_radial_normal_form() {
    // Teukolsky, ApJ 185, 635 (1973), radial equation as written in
    // samples/teukolsky_radial.ode (equation number from memory):
    // Δ^(−s) (Δ^(s+1) R')' + ((K² − 2is(r − M)K)/Δ + 4isωr − λ) R = 0.
    // Dividing by Δ: p = (s + 1)Δ'/Δ, and with Δ' = 2(r − M), Δ'' = 2, by hand,
    // Q = (K² − 2is(r − M)K + Δ(4isωr − λ − s − 1) + (1 − s²)(r − M)²)/Δ².
    let params = ["M", "a", "omega", "m", "s", "lam"];
    let lets = [("Delta", "r^2 - 2*M*r + a^2"), ("K", "(r^2 + a^2)*omega - a*m")];
    let red = reduce_sample("teukolsky_radial", &ReduceOptions::default());
    let q = &red.normal.q;
    assert_eq!(
        *q,
        expr(
            "r",
            &params,
            &lets,
            "(K^2 - 2*I*s*(r - M)*K + Delta*(4*I*s*omega*r - lam - s - 1) \
             + (1 - s^2)*(r - M)^2)/Delta^2"
        )
    );
    // The denominator is Δ², one factor of multiplicity two.
    let delta = expr("r", &params, &[], "r^2 - 2*M*r + a^2");
    assert_eq!(q.den_factors().len(), 1);
    assert_eq!(q.den_factors()[0].1, 2);
    assert_eq!(RatFunc::from_poly(q.den_factors()[0].0.poly().clone()), delta);
    // Q → ω² as r → ∞ (K²/Δ² → ω²): Q − ω² has a numerator of lower degree in r.
    let k = &red.field;
    let rest = k.sub(q, &expr("r", &params, &[], "omega^2")).unwrap();
    assert!(rest.num().degree(0) < rest.den_expanded().degree(0));
}

#[test]
fn bessel_at_infinity_is_t_to_the_minus_4_q_of_1_over_t() {
    // t = 1/z: Q̃(t) = t⁻⁴ Q(1/t) (DESIGN.md; the Schwarzian of a Möbius map
    // is zero). With Q = 1 + (1/4 − ν²)/z² (DLMF 10.2.1):
    // Q̃ = (1 + (1/4 − ν²) t²)/t⁴, by hand.
    let red = reduce_sample("bessel", &at_infinity());
    assert_eq!(red.var, "t");
    let want = expr("t", &["nu"], &[], "(1 + (1/4 - nu^2)*t^2)/t^4");
    assert_eq!(red.normal.q, want);
    // Cross-checks with the library's own transformation law.
    let change = red.change.as_ref().expect("a change of variable");
    assert_eq!(change.g, expr("t", &["nu"], &[], "1/t"));
    assert!(change.schwarzian.is_zero(), "{{1/t, t}} = 0");
    let q_z = reduce_sample("bessel", &ReduceOptions::default()).normal.q;
    assert_eq!(transform_q(&red.field, &q_z, &change.g).unwrap(), want);
}

#[test]
fn schwarzian_of_a_mobius_map_is_zero() {
    // {(αt + β)/(γt + δ), t} = 0 (common practice), checked on one map.
    let red = reduce_sample("airy", &subst("z=(2*t + 3)/(5*t - 7)"));
    let change = red.change.as_ref().unwrap();
    assert!(schwarzian(&red.field, &change.g).unwrap().is_zero());
    assert!(change.schwarzian.is_zero());
    // Q̃ = g'² Q(g) with g' = −29/(5t − 7)², Q(z) = −z (DLMF 9.2.1), by hand.
    assert_eq!(red.normal.q, expr("t", &[], &[], "-(29/(5*t - 7)^2)^2*(2*t + 3)/(5*t - 7)"));
}

#[test]
fn airy_under_z_equals_x_squared() {
    // z = g(x) = x²: g' = 2x, g'' = 2, g''' = 0, so {g, x} = g'''/g' −
    // (3/2)(g''/g')² = −3/(2x²), by hand. Q̃ = g'² Q(g) + ½{g, x} with
    // Q(z) = −z (DLMF 9.2.1): Q̃ = −4x⁴ − 3/(4x²).
    let red = reduce_sample("airy", &subst("z=x^2"));
    assert_eq!(red.var, "x");
    let want = expr("x", &[], &[], "-4*x^4 - 3/(4*x^2)");
    assert_eq!(red.normal.q, want);
    let change = red.change.as_ref().unwrap();
    let schw_by_hand = expr("x", &[], &[], "-3/(2*x^2)");
    assert_eq!(change.schwarzian, schw_by_hand);
    assert_eq!(schwarzian(&red.field, &change.g).unwrap(), schw_by_hand);
    let q_z = reduce_sample("airy", &ReduceOptions::default()).normal.q;
    assert_eq!(transform_q(&red.field, &q_z, &change.g).unwrap(), want);
}

#[test]
fn bessel_under_z_equals_x_squared() {
    // z = x², {x², x} = −3/(2x²) (by hand, as above); with
    // Q(z) = 1 + (1/4 − ν²)/z² (DLMF 10.2.1):
    // Q̃ = 4x²(1 + (1/4 − ν²)/x⁴) − 3/(4x²) = 4x² + (1/4 − 4ν²)/x², by hand
    // (Bessel of order 2ν in the variable x², as expected).
    let red = reduce_sample("bessel", &subst("z=x^2"));
    let want = expr("x", &["nu"], &[], "4*x^2 + (1/4 - 4*nu^2)/x^2");
    assert_eq!(red.normal.q, want);
    let change = red.change.as_ref().unwrap();
    assert_eq!(change.schwarzian, expr("x", &["nu"], &[], "-3/(2*x^2)"));
    let q_z = reduce_sample("bessel", &ReduceOptions::default()).normal.q;
    assert_eq!(transform_q(&red.field, &q_z, &change.g).unwrap(), want);
}
