//! Polynomial (quasi-exactly solvable) solutions of Heun-class equations
//! (`spectrum --polynomial-degree`, and `--method exact` with no closed
//! form): the termination condition and the determinant condition, checked
//! against conditions derived by hand from the equations of DLMF 31.2.1 and
//! 31.12.1–3 and by substituting the terminated series back into the
//! equation with the exact algebra layer.

use canonode::{ratfunc_text, Field, Limits, Rat, RatFunc, Style};
use num_complex::Complex64;
use serde_json::Value;
use std::process::Command;

fn run(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_canonode")).args(args).current_dir(env!("CARGO_MANIFEST_DIR")).output().expect("binary runs")
}

/// `spectrum FILE --method exact --at AT [extra] --format json`, the polynomial section.
fn section(file: &str, at: &str, extra: &[&str]) -> Value {
    let mut args = vec!["spectrum", file, "--method", "exact", "--at", at, "--format", "json"];
    args.extend_from_slice(extra);
    let out = run(&args);
    assert!(out.status.success(), "{args:?}: {}", String::from_utf8_lossy(&out.stderr));
    let doc: Value = serde_json::from_slice(&out.stdout).expect("JSON");
    assert!(doc["closed_form"].is_null(), "{doc}");
    doc["polynomial_solutions"].clone()
}

fn roots(p: &Value) -> Vec<Complex64> {
    p["roots"]
        .as_array()
        .unwrap_or_else(|| panic!("{p}"))
        .iter()
        .map(|r| {
            assert!(r["residual"].as_f64().expect("checked") < 1e-9, "{r}");
            Complex64::new(r["value"][0].as_f64().unwrap(), r["value"][1].as_f64().unwrap())
        })
        .collect()
}

/// The roots of q² + b q + c.
fn quadratic(b: f64, c: f64) -> [Complex64; 2] {
    let d = Complex64::new(b * b - 4.0 * c, 0.0).sqrt();
    [(-b + d) / 2.0, (-b - d) / 2.0]
}

/// Every expected root is found (relative 1e-10), and no other.
fn same_roots(got: &[Complex64], want: &[Complex64]) {
    assert_eq!(got.len(), want.len(), "{got:?} vs {want:?}");
    for w in want {
        assert!(got.iter().any(|g| (g - w).norm() <= 1e-10 * w.norm().max(1.0)), "{w} not among {got:?}");
    }
}

#[test]
fn general_heun_degree_zero_is_q_zero() {
    // DLMF 31.2.1 with w = 1: the equation leaves (αβ z − q) = 0, so αβ = 0 and q = 0.
    let p = section("samples/heun_general.ode", "a=2,alpha=0,beta=3,gamma=1,delta=1/2,epsilon=1/3", &[]);
    assert_eq!(p["degree"], 0);
    assert_eq!(p["termination"]["at_degree"]["expression"], "alpha*beta");
    // The text report names the class and gives the same condition.
    let out = run(&["spectrum", "samples/heun_general.ode", "--method", "exact", "--at", "a=2,alpha=0,beta=3,gamma=1,delta=1/2,epsilon=1/3"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("heun class") && text.contains("polynomial solutions of degree N = 0") && text.contains("q = 0"), "{text}");
    assert_eq!(p["termination"]["holds"], true);
    let cond = p["condition"]["expression"].as_str().unwrap();
    assert!(cond == "q" || cond == "-q", "{cond}");
    same_roots(&roots(&p), &[Complex64::new(0.0, 0.0)]);
}

#[test]
fn general_heun_degree_one_by_hand() {
    // Derived here from DLMF 31.2.1 with w = 1 + c z, times z(z − 1)(z − a):
    //   z²: c(γ + δ + ε + αβ) = 0, so αβ = −(γ + δ + ε);
    //   z⁰: aγc − q = 0;  z¹: c(−γ(1 + a) − aδ − ε) + αβ − qc = 0,
    // hence q² + (γ(1 + a) + aδ + ε) q − aγαβ = 0.
    let names: Vec<String> = ["N", "a", "q", "alpha", "beta", "gamma", "delta", "epsilon"].iter().map(|s| s.to_string()).collect();
    let k = Field::new(names.clone(), Limits::default()).unwrap();
    let v = |i| k.var(i);
    let (a, q, al, be, ga, de, ep) = (v(1), v(2), v(3), v(4), v(5), v(6), v(7));
    let one = RatFunc::one();
    let b = k.add(&k.add(&k.mul(&ga, &k.add(&one, &a).unwrap()).unwrap(), &k.mul(&a, &de).unwrap()).unwrap(), &ep).unwrap();
    let hand = k
        .sub(&k.add(&k.mul(&q, &q).unwrap(), &k.mul(&b, &q).unwrap()).unwrap(), &k.mul(&k.mul(&a, &ga).unwrap(), &k.mul(&al, &be).unwrap()).unwrap())
        .unwrap();
    let want = ratfunc_text(&hand, &names, Style::Text);
    for (a, alpha, beta, gamma, delta, eps) in
        [(2.0f64, -1.0f64, 3.0f64, 1.0f64, 1.0f64, 1.0f64), (3.0, -2.0, 0.75, 0.5, 0.25, 0.75), (-1.5, 1.0, -1.25, 0.25, 0.5, 0.5)]
    {
        assert!((alpha * beta + gamma + delta + eps).abs() < 1e-15);
        let at = format!("a={a},alpha={alpha},beta={beta},gamma={gamma},delta={delta},epsilon={eps}");
        let p = section("samples/heun_general.ode", &at, &["--polynomial-degree", "1"]);
        assert_eq!(p["condition"]["expression"], want.as_str());
        let bq = gamma * (1.0 + a) + a * delta + eps;
        same_roots(&roots(&p), &quadratic(bq, -a * gamma * alpha * beta));
        // The lowest admissible degree at these values is the same.
        assert_eq!(section("samples/heun_general.ode", &at, &[])["degree"], 1);
    }
}

/// DLMF 31.3.3 (from memory; its first two equations agree with the
/// hand derivation above): R_j c_{j+1} − (Q_j + q)c_j + P_j c_{j−1} = 0 with
/// P_j = (j − 1 + α)(j − 1 + β), Q_j = j((j − 1 + γ)(1 + a) + aδ + ε),
/// R_j = a(j + 1)(j + γ), c_0 = 1, written here in a field of (z, q).
/// Returns the equation of DLMF 31.2.1 times z(z − 1)(z − a) applied to
/// w = c_0 + … + c_N z^N (c_{N+1} = 0), exactly, and the field.
fn heun_residual(p: [Rat; 6], n: usize) -> (Field, RatFunc) {
    let k = Field::new(vec!["z".into(), "q".into()], Limits::default()).unwrap();
    let c = |x: &Rat| RatFunc::rat(x);
    let [a, al, be, ga, de, ep] = p.map(|x| c(&x));
    let int = |j: i64| RatFunc::rat(&Rat::int(j.into()));
    let (z, q) = (k.var(0), k.var(1));
    let mut cs = vec![RatFunc::one()];
    for j in 0..n as i64 {
        let pj = k.mul(&k.add(&int(j - 1), &al).unwrap(), &k.add(&int(j - 1), &be).unwrap()).unwrap();
        let qj = k
            .mul(
                &int(j),
                &k.add(
                    &k.add(&k.mul(&k.add(&int(j - 1), &ga).unwrap(), &k.add(&int(1), &a).unwrap()).unwrap(), &k.mul(&a, &de).unwrap()).unwrap(),
                    &ep,
                )
                .unwrap(),
            )
            .unwrap();
        let rj = k.mul(&k.mul(&a, &int(j + 1)).unwrap(), &k.add(&int(j), &ga).unwrap()).unwrap();
        let prev = if j == 0 { RatFunc::zero() } else { cs[j as usize - 1].clone() };
        let rhs = k.sub(&k.mul(&k.add(&qj, &q).unwrap(), &cs[j as usize]).unwrap(), &k.mul(&pj, &prev).unwrap()).unwrap();
        cs.push(k.div(&rhs, &rj).unwrap());
    }
    let mut w = RatFunc::zero();
    for (j, cj) in cs.iter().enumerate() {
        w = k.add(&w, &k.mul(cj, &k.pow(&z, j as i64).unwrap()).unwrap()).unwrap();
    }
    let (w1, w2) = (k.deriv(&w, 0).unwrap(), k.deriv(&k.deriv(&w, 0).unwrap(), 0).unwrap());
    let zm1 = k.sub(&z, &RatFunc::one()).unwrap();
    let zma = k.sub(&z, &a).unwrap();
    let lead = k.mul(&k.mul(&z, &zm1).unwrap(), &zma).unwrap();
    let mid = k
        .add(
            &k.add(&k.mul(&ga, &k.mul(&zm1, &zma).unwrap()).unwrap(), &k.mul(&de, &k.mul(&z, &zma).unwrap()).unwrap()).unwrap(),
            &k.mul(&ep, &k.mul(&z, &zm1).unwrap()).unwrap(),
        )
        .unwrap();
    let last = k.sub(&k.mul(&k.mul(&al, &be).unwrap(), &z).unwrap(), &q).unwrap();
    let res = k.add(&k.add(&k.mul(&lead, &w2).unwrap(), &k.mul(&mid, &w1).unwrap()).unwrap(), &k.mul(&last, &w).unwrap()).unwrap();
    (k, res)
}

/// The numerator of E at q, and the sum of the sizes of its terms there.
fn numerator_at(e: &RatFunc, q: Complex64) -> (Complex64, f64) {
    let mut value = Complex64::new(0.0, 0.0);
    let mut size = 0.0;
    for (j, t) in e.num().to_univariate(1).iter().enumerate() {
        let (re, im) = RatFunc::from_poly(t.clone()).as_constant().expect("numeric coefficient").to_f64();
        let term = Complex64::new(re, im) * q.powi(j as i32);
        value += term;
        size += term.norm();
    }
    (value, size)
}

#[test]
fn general_heun_roots_terminate_the_series() {
    // α = −N with the Fuchs relation γ + δ + ε = α + β + 1 (DLMF 31.2.2, 31.5):
    // the series stops at N for N + 1 values of q (DLMF 31.5). Substituting
    // w back into the equation exactly leaves E(q)·z^N alone; canonode's
    // roots are the zeros of E.
    let r = |n: i64, d: i64| Rat::new(n.into(), d.into()).unwrap();
    for (n, a, beta, gamma, delta) in
        [(2usize, r(3, 1), r(1, 2), r(1, 3), r(1, 2)), (3, r(-2, 1), r(5, 4), r(3, 2), r(-1, 3)), (4, r(5, 2), r(1, 3), r(2, 1), r(1, 1))]
    {
        let alpha = r(-(n as i64), 1);
        let f = |x: &Rat| x.to_f64();
        let eps = f(&alpha) + f(&beta) + 1.0 - f(&gamma) - f(&delta);
        let eps_r = {
            // ε exactly: α + β + 1 − γ − δ.
            let k = Field::new(vec!["x".into()], Limits::default()).unwrap();
            let s = [&alpha, &beta, &r(1, 1)].iter().fold(RatFunc::zero(), |acc, x| k.add(&acc, &RatFunc::rat(x)).unwrap());
            let s = k.sub(&k.sub(&s, &RatFunc::rat(&gamma)).unwrap(), &RatFunc::rat(&delta)).unwrap();
            s.as_constant().unwrap().re
        };
        assert!((f(&eps_r) - eps).abs() < 1e-12);
        let text = |x: &Rat| x.to_string();
        let at = format!(
            "a={},alpha={},beta={},gamma={},delta={},epsilon={}",
            text(&a),
            text(&alpha),
            text(&beta),
            text(&gamma),
            text(&delta),
            text(&eps_r)
        );
        let p = section("samples/heun_general.ode", &at, &[]);
        assert_eq!(p["degree"].as_u64().unwrap() as usize, n, "{p}");
        let found = roots(&p);
        assert_eq!(found.len(), n + 1, "{p}");
        let (k, res) = heun_residual([a.clone(), alpha.clone(), beta.clone(), gamma.clone(), delta.clone(), eps_r.clone()], n);
        // Only z^N survives, exactly.
        let by_z = res.num().to_univariate(0);
        for (j, t) in by_z.iter().enumerate() {
            assert!(j == n || t.is_zero(), "z^{j} survives: {}", ratfunc_text(&res, k.names(), Style::Text));
        }
        let e = k.div(&RatFunc::from_poly(by_z[n].clone()), &RatFunc::from_poly(res.den_expanded())).unwrap();
        let e = k.div(&e, &RatFunc::rat(&Rat::int(res.scale().clone()))).unwrap();
        assert_eq!(e.num().degree(1) as usize, n + 1);
        for q in &found {
            // E(q) relative to the size of its terms.
            let (value, size) = numerator_at(&e, *q);
            assert!(value.norm() <= 1e-12 * size, "q = {q}: E = {value} (terms {size})");
        }
    }
}

#[test]
fn confluent_heun_degree_one_by_hand() {
    // Derived here from DLMF 31.12.1 with w = 1 + c z, times z(z − 1):
    //   z²: c(ε + α) = 0, so α = −ε;  z⁰: −γc − q = 0;
    //   z¹: c(γ + δ − ε) + α − qc = 0,  hence q² − (γ + δ − ε) q + αγ = 0.
    for (gamma, delta, eps) in [(0.5f64, 1.0f64 / 3.0, 2.0f64), (2.0, -0.5, 0.25), (1.5, 1.5, -1.0)] {
        let alpha = -eps;
        let p = section("samples/heun_confluent.ode", &format!("gamma={gamma},delta={delta},epsilon={eps},alpha={alpha}"), &[]);
        assert_eq!(p["degree"], 1, "{p}");
        same_roots(&roots(&p), &quadratic(-(gamma + delta - eps), alpha * gamma));
    }
}

#[test]
fn biconfluent_heun_degree_one_by_hand() {
    // Derived here from DLMF 31.12.3 with w = 1 + c z, times z:
    //   z²: c(α − 1) = 0, so α = 1;  z⁰: −γc − q = 0;
    //   z¹: −δc + α − qc = 0,  hence q² + δ q + αγ = 0.
    for (gamma, delta) in [(0.5f64, 2.0f64), (2.0, -0.5), (-1.5, 1.25)] {
        let p = section("samples/heun_biconfluent.ode", &format!("gamma={gamma},delta={delta},alpha=1"), &[]);
        assert_eq!(p["degree"], 1, "{p}");
        same_roots(&roots(&p), &quadratic(delta, gamma));
    }
}

#[test]
fn a_degree_that_cannot_stop_says_so() {
    // αβ = −3 with γ + δ + ε = 3: the series stops at N = 1, not at N = 2.
    let p = section("samples/heun_general.ode", "a=2,alpha=-1,beta=3,gamma=1,delta=1,epsilon=1", &["--polynomial-degree", "2"]);
    assert_eq!(p["degree"], 2);
    assert_eq!(p["termination"]["holds"], false);
    assert!(p["roots"].as_array().unwrap().is_empty());
    assert!(p["roots_note"].as_str().unwrap().contains("cannot stop"), "{p}");
    // No admissible degree at all: an error naming the condition.
    let out = run(&[
        "spectrum",
        "samples/heun_general.ode",
        "--method",
        "exact",
        "--at",
        "a=2,alpha=-2,beta=3,gamma=1,delta=1/2,epsilon=1/3",
        "--polynomial-degree",
        "lowest",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("polynomial solutions") && err.contains("N^2"), "{err}");
    // A bad degree is a usage error pointing at the option.
    let out = run(&["spectrum", "samples/heun_general.ode", "--method", "exact", "--at", "a=2", "--polynomial-degree", "many"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--polynomial-degree"));
}
