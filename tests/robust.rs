//! Regression tests of the hostile-user reproducers: every command returns
//! within its bound with a result or a located error (exit 2), never a
//! panic, a hang or a non-finite or unconverged number printed as a result.
//! Each test is named after what it caught and runs the command in process
//! (`canonode::command::run_captured`), as the binary would.

use std::time::Duration;

mod common;
use common::{non_finite, run_bounded};

/// Generous: a hang detector for a test build, not a timing assertion.
const BOUND: Duration = Duration::from_secs(60);

/// Runs a command; fails on a hang, a panic or a non-finite number in the
/// output (the results; messages may quote the user's own text).
fn run(args: &[&str]) -> canonode::command::Captured {
    let c = run_bounded(args, BOUND).unwrap_or_else(|| panic!("HANG (> {BOUND:?}): canonode {args:?}"));
    if let Some(ctx) = non_finite(&c.stdout) {
        panic!("non-finite number printed by canonode {args:?}: …{ctx}…\n{}", c.stdout);
    }
    c
}

/// A fresh scratch directory holding one file `name` with `text`; returns
/// the directory (to remove) and the file's path.
fn scratch(tag: &str, name: &str, text: &str) -> (std::path::PathBuf, String) {
    let dir = std::env::temp_dir().join(format!("canonode-robust-{tag}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    (dir, path.to_string_lossy().into_owned())
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
    // With no horizon the spectrum is the normal modes between the outer
    // real root and infinity: it must finish, with its check by the other method.
    let c = run(&["spectrum", "-e", "(z^4 - 5)*w'' + omega^2*w = 0", "--at", ""]);
    assert_eq!(c.code, 0, "{}", c.stderr);
    assert!(c.stdout.contains("a real root of z^4 - 5") && c.stdout.contains("check: global spectral method"), "{}", c.stdout);
}

#[test]
fn roots_of_equal_modulus_are_found() {
    // z⁴ − 5 = 0: z = 5^(1/4)·i^k (exact).
    use num_complex::Complex64;
    let c = [Complex64::new(-5.0, 0.0), Complex64::new(0.0, 0.0), Complex64::new(0.0, 0.0), Complex64::new(0.0, 0.0), Complex64::new(1.0, 0.0)];
    let roots = canonode::numeric::try_roots(&c).expect("roots");
    let r = 5f64.powf(0.25);
    for want in [Complex64::new(-r, 0.0), Complex64::new(0.0, -r), Complex64::new(0.0, r), Complex64::new(r, 0.0)] {
        assert!(roots.iter().any(|z| (z - want).norm() < 1e-12), "{want} not in {roots:?}");
    }
    // z⁸ − 1 (the eighth roots of unity, also of equal modulus).
    let mut c = vec![Complex64::new(0.0, 0.0); 9];
    c[0] = Complex64::new(-1.0, 0.0);
    c[8] = Complex64::new(1.0, 0.0);
    let roots = canonode::numeric::try_roots(&c).expect("roots");
    assert_eq!(roots.len(), 8);
    for z in roots {
        assert!((z.powu(8) - 1.0).norm() < 1e-12, "{z}");
    }
}

const KERR: [&str; 6] = ["--couple", "", "--link", "lam = A + a^2*omega^2 - 2*a*m*omega", "--link", "c = a*omega"];

/// `args` followed by the Kerr coupling of the samples (Teukolsky radial and
/// spin-weighted spheroidal equations).
fn with_kerr<'a>(args: &[&'a str], angular: &'a str) -> Vec<&'a str> {
    let mut v = args.to_vec();
    v.extend(KERR);
    let i = v.len() - 5;
    v[i] = angular;
    v
}

#[test]
fn regression_coupled_scan_with_an_empty_grid_panicked() {
    let (radial, angular) = (sample("teukolsky_radial.ode"), sample("spheroidal_spin_weighted.ode"));
    let args = with_kerr(&["scan", &radial, "--vary", "a=0.5:0.1:0.1", "--at", "M=1,m=2,s=-2"], &angular);
    let c = run(&args);
    assert_eq!(c.code, 2, "{}", c.stderr);
    assert!(c.stderr.contains("--vary") && c.stderr.contains("empty"), "{}", c.stderr);
}

#[test]
fn regression_scan_accepted_any_tolerance() {
    // --tol 1e300 made every seed "converge" (a wrong mode printed as a result).
    let rw = sample("regge_wheeler.ode");
    for tol in ["1e300", "0", "-1", "NaN", "inf", "0.5"] {
        for cmd in ["scan", "spectrum"] {
            let mut args = vec![cmd, rw.as_str(), "--at"];
            if cmd == "scan" {
                args.extend(["l=2,s=2", "--vary", "M=1:1:0.1"]);
            } else {
                args.push("M=1,l=2,s=2");
            }
            let tol_arg = format!("--tol={tol}");
            args.extend(["--guess", "5-5i", tol_arg.as_str()]);
            let c = run_bounded(&args, BOUND).expect("no hang");
            assert_eq!(c.code, 2, "{cmd} --tol {tol}: {}", c.stdout);
            assert!(c.stderr.contains("--tol"), "{cmd} --tol {tol}: {}", c.stderr);
        }
    }
}

#[test]
fn regression_grids_are_validated_before_work() {
    let rw = sample("regge_wheeler.ode");
    for (vary, why) in [
        ("M=2:1:0.1", "empty"),
        ("M=1:2:0.5:7", "three fields"),
        ("omega=1:2:0.5", "frequency"),
        ("M=1:2:0", "positive"),
        ("M=1:2:-0.5", "positive"),
        ("M=0:1e9:1e-9", "more than"),
        ("M=1e100000:2:1", "out of range"),
        ("q=1:2:1", "not a parameter"),
    ] {
        let c = run(&["scan", &rw, "--vary", vary, "--at", "l=2,s=2"]);
        assert_eq!(c.code, 2, "{vary}: {}", c.stdout);
        assert!(c.stderr.contains("--vary") && c.stderr.contains(why), "{vary}: {}", c.stderr);
    }
}

#[test]
fn regression_unwritable_plot_reported_only_after_the_scan() {
    let rw = sample("regge_wheeler.ode");
    let c = run(&["scan", &rw, "--vary", "M=1:1.5:0.5", "--at", "l=2,s=2", "--plot", "/nonexistent-dir/x.svg"]);
    assert_eq!(c.code, 2, "{}", c.stderr);
    assert!(c.stderr.contains("--plot") && c.stdout.is_empty(), "{}", c.stderr);
}

#[test]
fn regression_huge_indices_ran_for_minutes() {
    let rw = sample("regge_wheeler.ode");
    let c = run(&["spectrum", &rw, "--at", "M=1,l=2,s=2", "--overtones", "4294967295"]);
    assert_eq!(c.code, 2);
    assert!(c.stderr.contains("--overtones") && c.stderr.contains("200"), "{}", c.stderr);
    let (radial, angular) = (sample("teukolsky_radial.ode"), sample("spheroidal_spin_weighted.ode"));
    let args = with_kerr(&["spectrum", &radial, "--at", "M=1,a=0.5,m=2,s=-2", "--angular-index", "18446744073709551615"], &angular);
    let c = run(&args);
    assert_eq!(c.code, 2);
    assert!(c.stderr.contains("--angular-index") && c.stderr.contains("100"), "{}", c.stderr);
}

#[test]
fn regression_huge_values_echoed_as_inf() {
    let rw = sample("regge_wheeler.ode");
    let c = run(&["spectrum", &rw, "--at", "M=1,l=2,s=2", "--guess", "1e100000"]);
    assert_eq!(c.code, 2);
    assert!(c.stderr.contains("--guess") && c.stderr.contains("out of range"), "{}", c.stderr);
    // Q overflowed to -inf; a value past the range is refused, one inside it
    // whose Q overflows is an error too.
    let c = run(&["eval", &rw, "--at", "r=3,M=1e308,l=2,s=2,omega=1"]);
    assert_eq!(c.code, 2, "{}", c.stdout);
    assert!(c.stderr.contains("--at"), "{}", c.stderr);
    let c = run(&["eval", "-e", "y'' + a^3*y = 0", "--at", "z=1,a=1e200"]);
    assert_eq!(c.code, 2, "{}", c.stdout);
    assert!(c.stderr.contains("beyond double precision"), "{}", c.stderr);
    // Exact values of 1e99999 took up to a minute.
    let c = run(&["eval", "-e", "y'' + a^50*y = 0", "--at", "z=1,a=1e99999"]);
    assert_eq!(c.code, 2, "{}", c.stdout);
}

#[test]
fn regression_integrate_printed_nan_and_the_wrong_csv_method() {
    let rw = sample("regge_wheeler.ode");
    let c = run(&["spectrum", &rw, "--at", "M=1,l=2,s=2", "--method", "integrate"]);
    assert_eq!(c.code, 0, "{}", c.stderr);
    assert!(c.stdout.contains("[integrate]") && c.stdout.contains("0.37367"), "{}", c.stdout);
    let c = run(&["spectrum", &rw, "--at", "M=1,l=2,s=2", "--method", "integrate", "--format", "csv"]);
    let row = c.stdout.lines().nth(1).expect("a row");
    assert_eq!(row.split(',').nth(4), Some("integrate"), "{}", c.stdout);
    let c = run(&["spectrum", &rw, "--at", "M=1,l=2,s=2", "--method", "integrate", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&c.stdout).expect("json");
    assert_eq!(v["modes"][0]["method"], "integrate");
    assert!(v["modes"][0]["evidence"]["change_on_doubling"].is_null());
}

#[test]
fn regression_record_with_a_substitution_ran_for_half_a_minute() {
    // The Teukolsky record with r = a/(1 − x) spent 15–40 s in exact
    // arithmetic; the command's work budget stops it with a limit error.
    let t = sample("teukolsky_radial.ode");
    // The record keeps what was derived and says, in its recurrence field,
    // that the recurrence hit the limit (or the whole command stops on it).
    let c = run(&["record", &t, "--subst", "r=a/(1-x)"]);
    let noted = c.code == 0 && c.stdout.lines().any(|l| l.starts_with("recurrence.none:") && l.contains("work limit"));
    assert!(noted || (c.code == 2 && c.stderr.contains("work limit")), "{}{}", c.stdout, c.stderr);
    // Without the substitution it is well within the budget.
    let c = run(&["record", &t]);
    assert_eq!(c.code, 0, "{}", c.stderr);
}

#[test]
fn regression_classify_printed_non_finite_values() {
    // Values whose powers overflow doubles: never NaN or inf in the report.
    let rw = sample("regge_wheeler.ode");
    let c = run(&["classify", &rw, "--at", "M=1e300,omega=1e300,l=1e300,s=2"]);
    assert!(c.code == 0 || c.code == 2, "{}", c.stderr);
    let c = run(&["classify", &rw, "--at", "M=1e300,omega=1e300,l=1e300,s=2", "--format", "json"]);
    assert!(c.code == 0 || c.code == 2, "{}", c.stderr);
}

#[test]
fn regression_a_newline_in_the_source_path_broke_the_emitted_code() {
    let (dir, p) = scratch("path", "eq\nint broken = ;\\", "var z\nparam a\node w'' + a*z*w = 0\n");
    for lang in ["c", "rust"] {
        let c = run(&["emit", &p, "--lang", lang, "--name", "airy"]);
        assert_eq!(c.code, 0, "{}", c.stderr);
        // Every line that mentions the path is a comment, the path on one line.
        assert!(!c.stdout.lines().any(|l| l.starts_with("int broken")), "{}", c.stdout);
        assert!(c.stdout.contains("eqU+000Aint broken = ;U+005C"), "{}", c.stdout);
    }
    // A record names its source on one line: such a path is refused (exit 2).
    let c = run(&["record", &p]);
    assert_eq!(c.code, 2, "{}{}", c.stdout, c.stderr);
    assert!(c.stderr.contains("control character"), "{}", c.stderr);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn regression_a_far_resonance_made_the_no_logarithm_check_quadratic() {
    // Found by the command fuzz: with b = −40 the exponent difference at
    // z = −3 is a large integer, and the Frobenius check ran for minutes.
    let (dir, p) = scratch("res", "eq.ode", "var z\nparam a, b, nu\node (-1/7)*(z - (-6/2))*1/((z^2 + 3))*w'' + b^2*w' + a^3*w = 0\n");
    let c = run(&["spectrum", &p, "--frequency", "a", "--tol", "1e-8", "--overtones", "1", "--at", "b=-40,nu=1"]);
    assert_eq!(c.code, 2, "{}", c.stdout);
    let c = run(&["classify", &p, "--at", "b=-40,nu=1,a=1"]);
    assert_eq!(c.code, 0, "{}", c.stderr);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn regression_collocation_on_a_mapped_oscillator_took_half_a_minute() {
    // Found by the command fuzz: the oscillator in t = 1/x never converged,
    // and the doubling went on to 769 points (dense complex eigenvalue
    // problems of 10 s and more); the grid now stops at 384 points. The
    // domain is now decided in x, the physical variable, where the lowest
    // level is E = 1/2 (the oscillator's n + 1/2, common practice).
    let c = run(&["spectrum", &sample("harmonic_oscillator.ode"), "--subst", "x=1/t", "--boundary", "bound", "--at", "", "--format", "csv"]);
    assert_eq!(c.code, 0, "{}", c.stderr);
    let row = c.stdout.lines().nth(1).expect("a row");
    let e: f64 = row.split(',').nth(1).and_then(|x| x.parse().ok()).expect("a value");
    assert!(row.contains(",true,") && (e - 0.5).abs() < 1e-9, "{}", c.stdout);
}

#[test]
fn regression_a_seed_scan_where_nothing_integrates_ran_for_a_minute() {
    // Schwarzschild–de Sitter with 9ΛM² ≫ 1 has no black-hole horizon; the
    // end found is a negative root, and no trial frequency integrates. The
    // seed scan of the complex plane stops at its work limit and says so.
    let sds = sample("schwarzschild_de_sitter_scalar.ode");
    let c = run(&["spectrum", &sds, "--tol", "1e-6", "--overtones", "1", "--method", "integrate", "--at", "M=3,Lambda=1.5,l=0.8", "--format", "csv"]);
    assert_eq!(c.code, 0, "{}", c.stderr);
    assert!(c.stdout.contains(",false,") && c.stdout.contains("stopped at its work limit"), "{}", c.stdout);
}

#[test]
fn regression_exact_work_on_a_scan_s_worker_threads_had_no_budget() {
    // A value of 1e-300 (an exact rational with a 300-digit denominator) in
    // a charged black hole seen from infinity: a scan point's exact work now
    // has the command's budget on whichever thread solves it.
    let rn = sample("reissner_nordstrom_scalar.ode");
    let args =
        ["scan", &rn, "--at-infinity", "--tol", "1e-6", "--overtones", "0", "--guess", "0.37-0.09i", "--vary", "q=1:1.2:0.1", "--at", "M=3,l=1e-300"];
    let c = run(&args);
    assert_eq!(c.code, 0, "{}", c.stderr);
    let rows: Vec<&str> = c.stdout.lines().filter(|l| !l.starts_with('#') && !l.starts_with("index")).collect();
    assert_eq!(rows.len(), 3, "{}", c.stdout);
    assert!(rows.iter().all(|l| l.contains(",false,")), "{}", c.stdout);
}
