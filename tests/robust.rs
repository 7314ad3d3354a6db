//! Regression tests of the hostile-user reproducers: every command returns
//! within its bound with a result or a located error (exit 2), never a
//! panic, a hang or a non-finite or unconverged number printed as a result.
//! Each test is named after what it caught and runs the command in process
//! (`canonode::cli::run_captured`), as the binary would.

use std::time::Duration;

mod common;
use common::{non_finite, run_bounded};

/// Generous: a hang detector for a test build, not a timing assertion.
const BOUND: Duration = Duration::from_secs(60);

/// Runs a command; fails on a hang, a panic or a non-finite number in the output.
fn run(args: &[&str]) -> canonode::cli::Captured {
    let c = run_bounded(args, BOUND).unwrap_or_else(|| panic!("HANG (> {BOUND:?}): canonode {args:?}"));
    for text in [&c.stdout, &c.stderr] {
        if let Some(ctx) = non_finite(text) {
            panic!("non-finite number printed by canonode {args:?}: …{ctx}…\n{text}");
        }
    }
    c
}

fn sample(name: &str) -> String {
    format!("{}/samples/{name}", env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn regression_schur_cycles_on_a_companion_matrix_with_roots_of_equal_modulus() {
    // The roots of z⁴ − 5 all have modulus 5^(1/4); nalgebra's unlimited
    // Schur iteration cycled on its companion matrix.
    let c = run(&["classify", "-e", "(z^4 - 5)*w'' + omega*w = 0", "--boundary", "bound"]);
    assert_eq!(c.code, 0, "{}", c.stderr);
    assert!(c.stdout.contains("a root of z^4 - 5"), "{}", c.stdout);
    let c = run(&["spectrum", "-e", "(z^4 - 5)*w'' + omega^2*w = 0", "--at", ""]);
    assert_eq!(c.code, 2, "{}", c.stderr);
    assert!(c.stderr.contains("error"), "{}", c.stderr);
}

#[test]
fn roots_of_equal_modulus_are_found() {
    // z⁴ − 5 = 0: z = 5^(1/4)·i^k (exact).
    use num_complex::Complex64;
    let c = [Complex64::new(-5.0, 0.0), Complex64::new(0.0, 0.0), Complex64::new(0.0, 0.0), Complex64::new(0.0, 0.0), Complex64::new(1.0, 0.0)];
    let roots = canonode::analysis::numeric::try_roots(&c).expect("roots");
    let r = 5f64.powf(0.25);
    for want in [Complex64::new(-r, 0.0), Complex64::new(0.0, -r), Complex64::new(0.0, r), Complex64::new(r, 0.0)] {
        assert!(roots.iter().any(|z| (z - want).norm() < 1e-12), "{want} not in {roots:?}");
    }
    // z⁸ − 1 (the eighth roots of unity, also of equal modulus).
    let mut c = vec![Complex64::new(0.0, 0.0); 9];
    c[0] = Complex64::new(-1.0, 0.0);
    c[8] = Complex64::new(1.0, 0.0);
    let roots = canonode::analysis::numeric::try_roots(&c).expect("roots");
    assert_eq!(roots.len(), 8);
    for z in roots {
        assert!((z.powu(8) - 1.0).norm() < 1e-12, "{z}");
    }
}
