//! Checks of the global spectral method (`spectrum --region`, and the
//! seeds `spectrum` takes from it when no estimate exists) against
//! published quasinormal modes. Each check names its source; values
//! recalled from memory say so.

use serde_json::Value;
use std::process::Command;

fn run(args: &[&str]) -> (Value, i32, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_canonode")).args(args).current_dir(env!("CARGO_MANIFEST_DIR")).output().expect("binary runs");
    let code = out.status.code().unwrap_or(-1);
    let stderr = String::from_utf8_lossy(&out.stderr).to_string();
    let v = serde_json::from_slice(&out.stdout).unwrap_or(Value::Null);
    (v, code, stderr)
}

/// The report of `spectrum PATH --at AT --region REGION --format json`.
fn region(path: &str, at: &str, rect: &str) -> Value {
    let reg = format!("--region={rect}");
    let args = ["spectrum", path, "--at", at, reg.as_str(), "--format", "json"];
    let (v, code, err) = run(&args);
    assert_eq!(code, 0, "{args:?}: {err}");
    v
}

fn c(v: &Value) -> (f64, f64) {
    (v[0].as_f64().unwrap(), v[1].as_f64().unwrap())
}

#[test]
fn schwarzschild_lowest_modes_with_no_guess_are_leavers() {
    // Leaver 1985; Berti, Cardoso & Starinets 2009 tables, s = l = 2, M = 1,
    // 8 decimals (the values tests/spectrum.rs checks the continued fraction
    // against): every mode in the region, none missing, none spurious.
    let want = [(0.37367168, -0.08896232), (0.34671100, -0.27391488), (0.30105345, -0.47827698), (0.25150496, -0.70514820)];
    let v = region("samples/regge_wheeler.ode", "M=1,l=2,s=2", "-1..1,-0.8..0");
    let ms = v["modes"].as_array().unwrap();
    // Each mode and its mirror image −ω̄ (the equation is real).
    assert_eq!(ms.len(), 2 * want.len(), "{ms:#?}");
    for (n, w) in want.iter().enumerate() {
        let m = &ms[2 * n];
        assert_eq!(m["family"], "oscillating");
        assert_eq!(m["n"], n as u64);
        assert!(m["mirror_of"].is_null());
        let (re, im) = c(&m["omega"]);
        assert!((re - w.0).abs() <= 5.1e-9 && (im - w.1).abs() <= 5.1e-9, "n={n}: {re} {im} vs {w:?}");
        assert_eq!(m["polished_by"], "cf");
        // A spectral value (a seed persisting to 1e-3 on the coarse grids)
        // is close already; a ladder seed is extrapolated from two overtones.
        match m["found_by"].as_str().unwrap() {
            "spectral" => assert!(m["polish_distance"].as_f64().unwrap() < 1e-3, "{m}"),
            by => assert_eq!(by, "ladder", "{m}"),
        }
        assert_eq!(m["check"]["method"], "integrate");
        assert!(m["check"]["difference"].as_f64().unwrap() < 1e-8, "{m}");
        let mirror = &ms[2 * n + 1];
        assert_eq!(mirror["mirror_of"], n as u64);
        assert_eq!(mirror["found_by"], "mirror");
        assert!(mirror["check"]["difference"].as_f64().unwrap() < 1e-8, "{mirror}");
        let (mre, mim) = c(&mirror["omega"]);
        assert!((mre + re).abs() < 1e-8 && (mim - im).abs() < 1e-8, "{mirror}");
    }
    assert!(v["not_confirmed"].as_array().unwrap().is_empty(), "{}", v["not_confirmed"]);
}

/// The converged overtones of `spectrum --overtones RANGE` (continued
/// fraction, no guess): (n, ω).
fn ladder(path: &str, at: &str, range: &str) -> Vec<(u64, (f64, f64))> {
    let args = ["spectrum", path, "--at", at, "--overtones", range, "--format", "json"];
    let (v, code, err) = run(&args);
    assert_eq!(code, 0, "{args:?}: {err}");
    v["modes"].as_array().unwrap().iter().filter(|m| m["converged"] == true).map(|m| (m["n"].as_u64().unwrap(), c(&m["omega"]))).collect()
}

#[test]
fn a_deep_window_holds_the_twelve_lowest_modes_and_the_special_point() {
    // Schwarzschild s = l = 2, M = 1, Re ω ∈ [−2, 2], Im ω ∈ [−3.2, 0], no
    // guess. The overtones 0…12 except 8 (n = 8 sits at the algebraically
    // special frequency Ω = −i(l − 1)l(l + 1)(l + 2)/12 = −2i, Chandrasekhar,
    // where the recurrence degenerates; Maassen van den Brink, Phys. Rev. D
    // 62 (2000) 064009: the Regge–Wheeler equation has no mode at Ω itself,
    // from memory) equal the continued fraction of `--overtones` to ≥ 8
    // digits, each with its mirror −ω̄; overtone 8 is reported at Ω exactly,
    // as the special point; and nothing else: no spurious mode.
    let v = region("samples/regge_wheeler.ode", "M=1,l=2,s=2", "-2..2,-3.2..0");
    let all = ladder("samples/regge_wheeler.ode", "M=1,l=2,s=2", "0..12");
    assert_eq!(all.iter().map(|(n, _)| *n).collect::<Vec<_>>(), (0..=12).collect::<Vec<_>>());
    assert_eq!(all[8].1, (0.0, -2.0), "the special point is exact");
    let want: Vec<_> = all.into_iter().filter(|(n, _)| *n != 8).collect();
    let ms = v["modes"].as_array().unwrap();
    assert_eq!(ms.len(), 2 * want.len() + 1, "{ms:#?}");
    for (n, w) in &want {
        let size = w.0.hypot(w.1);
        let m = ms.iter().find(|m| m["n"] == *n && m["mirror_of"].is_null()).unwrap_or_else(|| panic!("overtone {n} missing"));
        let (re, im) = c(&m["omega"]);
        assert!((re - w.0).hypot(im - w.1) <= 1e-8 * size, "n={n}: {re} {im} vs {w:?}");
        assert_eq!(m["family"], "oscillating");
        assert_eq!(m["polished_by"], "cf");
        assert_eq!(m["check"]["method"], "integrate");
        assert!(m["check"]["difference"].as_f64().unwrap() < 1e-8 * size, "{m}");
        let mirror = ms.iter().find(|m| m["mirror_of"] == *n).unwrap_or_else(|| panic!("overtone {n}'s mirror missing"));
        let (mre, mim) = c(&mirror["omega"]);
        assert!((mre + w.0).hypot(mim - w.1) <= 1e-8 * size, "mirror of {n}: {mre} {mim}");
    }
    // The least damped ones come from the spectral method, the rest from the ladder.
    assert_eq!(ms[0]["found_by"], "spectral");
    assert_eq!(ms.iter().find(|m| m["n"] == 12 && m["mirror_of"].is_null()).unwrap()["found_by"], "ladder");
    // n = 0 against Leaver 1985 (Proc. R. Soc. A 402, 285; from memory).
    let (re, im) = c(&ms[0]["omega"]);
    assert!((re - 0.37367168).abs() <= 5.1e-9 && (im + 0.08896232).abs() <= 5.1e-9, "{re} {im}");
    // Overtone 8 is reported at the algebraically special point, exactly, with the note.
    let un = v["unsettled"].as_array().unwrap();
    assert!(un.is_empty(), "{un:#?}");
    let special = ms.iter().find(|m| m["n"] == 8).expect("overtone 8");
    assert_eq!(c(&special["omega"]), (0.0, -2.0));
    assert_eq!(
        (special["found_by"].as_str(), special["polished_by"].as_str(), special["family"].as_str()),
        (Some("special"), Some("special"), Some("purely imaginary"))
    );
    assert!(special["check"].is_null() && special["check_note"].as_str().unwrap().contains("no numeric check"), "{special}");
    let notes: Vec<&str> = v["notes"].as_array().unwrap().iter().map(|n| n.as_str().unwrap()).collect();
    assert!(notes.iter().any(|n| n.starts_with("overtone 8 ") && n.contains("algebraically special")), "{notes:#?}");
    assert!(v["not_confirmed"].as_array().unwrap().is_empty(), "{}", v["not_confirmed"]);
    // What the search cannot exclude is said: the ladder stopped below the window.
    let limits: Vec<&str> = v["limits"].as_array().unwrap().iter().map(|n| n.as_str().unwrap()).collect();
    assert!(limits.iter().any(|l| l.contains("not excluded")), "{limits:#?}");
    assert!(limits.iter().any(|l| l.contains("stopped before overtone 13") || l.contains("stopped before overtone 14")), "{limits:#?}");
}

#[test]
fn a_stable_black_hole_has_no_mode_in_the_upper_half_plane() {
    // Schwarzschild is linearly stable (Regge & Wheeler 1957; Vishveshwara
    // 1970): no mode with Im ω > 0. Likewise Schwarzschild–anti-de Sitter.
    for (path, at) in [("samples/regge_wheeler.ode", "M=1,l=2,s=2"), ("tests/boundary/schwarzschild_ads_scalar.ode", "M=1,L=1,l=0")] {
        let v = region(path, at, "-3..3,0.01..3");
        assert!(v["modes"].as_array().unwrap().is_empty(), "{path}: {}", v["modes"]);
    }
    let args = ["spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--region=-3..3,0.01..3"];
    let out = Command::new(env!("CARGO_BIN_EXE_canonode")).args(args).current_dir(env!("CARGO_MANIFEST_DIR")).output().unwrap();
    assert!(String::from_utf8_lossy(&out.stdout).contains("no modes in this region"));
}

#[test]
fn schwarzschild_anti_de_sitter_with_no_guess() {
    // Horowitz & Hubeny, Phys. Rev. D 62 (2000) 024027, massless scalar,
    // l = 0, L = 1, r₊ = 1 (M = 1): 2.7982 − 2.6712i, then 4.7585 − 5.0376i,
    // 6.7193 − 7.3945i (from memory; the spacing of these modes is nearly
    // constant). No exact recurrence here: the overtone ladder runs on the
    // continued fraction of the numeric series between the ends, checked by
    // direct integration, deeper than the spectral method alone reaches.
    let v = region("tests/boundary/schwarzschild_ads_scalar.ode", "M=1,L=1,l=0", "0..10,-8..0");
    let ms = v["modes"].as_array().unwrap();
    assert_eq!(ms.len(), 3, "{ms:#?}");
    for (m, (wre, wim)) in ms.iter().zip([(2.7982, -2.6712), (4.7585, -5.0376), (6.7193, -7.3945)]) {
        let (re, im) = c(&m["omega"]);
        assert!((re - wre).abs() < 6e-5 && (im - wim).abs() < 6e-5, "{re} {im}");
        assert_eq!(m["polished_by"], "cf");
        assert_eq!(m["check"]["method"], "integrate");
        assert!(m["check"]["difference"].as_f64().unwrap() < 1e-8, "{m}");
    }
    let notes: Vec<&str> = v["notes"].as_array().unwrap().iter().map(|n| n.as_str().unwrap()).collect();
    assert!(notes.iter().any(|n| n.contains("numeric series between the ends")), "{notes:#?}");
}

#[test]
fn charged_field_modes_are_not_mirror_images() {
    // A charged scalar breaks ω → −ω̄: the modes with Re ω < 0 form their own
    // family. At e = 0 the field is neutral, and the fundamental mode is the
    // continued fraction's for the neutral sample (two programs, one value).
    let v = region("tests/boundary/charged_scalar_reissner_nordstrom.ode", "M=1,Q=0.5,e=0.3,l=1", "-1..1,-0.4..0");
    let ms = v["modes"].as_array().unwrap();
    let fam = |f: &str| ms.iter().filter(|m| m["family"] == f).count();
    assert_eq!(fam("oscillating"), 2, "{ms:#?}");
    assert_eq!(fam("negative frequency"), 2, "{ms:#?}");
    assert!(ms.iter().all(|m| m["mirror_of"].is_null()));
    let (p, n) = (c(&ms[0]["omega"]), c(&ms.iter().find(|m| m["family"] == "negative frequency").unwrap()["omega"]));
    assert!((p.0 + n.0).abs() > 1e-2, "{p:?} {n:?}");
    let neutral = region("tests/boundary/charged_scalar_reissner_nordstrom.ode", "M=1,Q=0.5,e=0,l=1", "0..1,-0.2..0");
    let (re, im) = c(&neutral["modes"][0]["omega"]);
    let args = ["spectrum", "samples/reissner_nordstrom_scalar.ode", "--at", "M=1,q=0.5,l=1", "--format", "json"];
    let (cf, code, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    let (cre, cim) = c(&cf["modes"][0]["omega"]);
    assert!((re - cre).abs() < 1e-9 && (im - cim).abs() < 1e-9, "{re} {im} vs {cre} {cim}");
}

#[test]
fn the_spectral_method_seeds_when_no_estimate_exists() {
    // The Teukolsky radial equation at a = 0 with λ = l(l+1) − s(s+1) = 4
    // (s = −2, l = 2) has no barrier to seed from; its modes are
    // Schwarzschild's, 0.37367168 − 0.08896232i and 0.34671100 − 0.27391488i
    // (Leaver 1985).
    let args = ["spectrum", "samples/teukolsky_radial.ode", "--at", "M=1,a=0,m=2,s=-2,lam=4", "--overtones", "0..1", "--format", "json"];
    let (v, code, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    for (m, w) in v["modes"].as_array().unwrap().iter().zip([(0.37367168, -0.08896232), (0.34671100, -0.27391488)]) {
        let (re, im) = c(&m["omega"]);
        assert!((re - w.0).abs() <= 5.1e-9 && (im - w.1).abs() <= 5.1e-9, "{re} {im}");
        assert!(m["evidence"]["seed_from"].as_str().unwrap().contains("global spectral method"), "{m}");
    }
}

#[test]
fn bad_regions_are_usage_errors() {
    for r in ["1..0,-1..0", "0..1", "0..1,a..b", "0..1,-1"] {
        let reg = format!("--region={r}");
        let (_, code, err) = run(&["spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", reg.as_str()]);
        assert_eq!(code, 2, "{r}: {err}");
        assert!(err.contains("--region"), "{err}");
    }
}
