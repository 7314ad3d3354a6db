//! Derivation records: `canonode record` and `canonode check` through the
//! binary, and the `canonode::record` library API. Every sample's record is
//! deterministic (two runs in one process, two processes) and snapshotted; a
//! changed coefficient is caught and named field by field; malformed records
//! and missing sources (the corpus in `tests/bad/records/`) exit with status 2
//! and a located message.

use canonode::record::{compare, derive, Record};
use canonode::ReduceOptions;
use std::path::{Path, PathBuf};
use std::process::Command;

/// What one run of the binary printed.
struct Run {
    stdout: String,
    stderr: String,
    code: i32,
}

/// Runs `canonode ARGS` in `dir`.
fn run_in(dir: &Path, args: &[&str]) -> Run {
    let out = Command::new(env!("CARGO_BIN_EXE_canonode")).current_dir(dir).args(args).output().expect("the binary runs");
    Run {
        stdout: String::from_utf8(out.stdout).expect("UTF-8 on stdout"),
        stderr: String::from_utf8(out.stderr).expect("UTF-8 on stderr"),
        code: out.status.code().unwrap_or(-1),
    }
}

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// A fresh empty directory for one test.
fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("canonode-record-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("a temporary directory");
    dir
}

/// True when two expressions in the input language are equal as rational
/// functions: y'' + (A − B) y = 0 has Q = 0 exactly iff A = B.
fn same(a: &str, b: &str) -> bool {
    let eq = format!("y'' + (({a}) - ({b}))*y = 0");
    match canonode::reduce(&canonode::Input::Inline { equation: &eq, var: "r" }, &ReduceOptions::default()) {
        Ok(r) => r.normal.q.is_zero(),
        Err(e) => panic!("cannot compare '{a}' and '{b}': {}", e.message),
    }
}

/// The changed fields that `check` lists on its `FILE: changed: a, b` line.
fn changed_fields(stdout: &str) -> Vec<String> {
    let line = stdout.lines().find(|l| l.contains(": changed: ")).unwrap_or_else(|| panic!("no 'changed:' line in\n{stdout}"));
    line.split_once(": changed: ").expect("the marker").1.split(", ").map(str::to_string).collect()
}

#[test]
fn sample_records_are_deterministic_and_snapshotted() {
    insta::glob!("../samples", "*.ode", |path| {
        let name = path.file_name().and_then(|n| n.to_str()).expect("a UTF-8 file name");
        let rel = format!("samples/{name}");
        let text = std::fs::read_to_string(path).expect("the sample");
        // In one process: two derivations render to the same bytes.
        let a = derive(&text, &rel, &ReduceOptions::default()).unwrap_or_else(|e| panic!("{name}: {}", e.message));
        let b = derive(&text, &rel, &ReduceOptions::default()).expect("the second derivation");
        assert_eq!(a.render(), b.render(), "{name}: two derivations in one process differ");
        // Across processes: two runs of the binary print the same bytes, and the library's.
        let r1 = run_in(root(), &["record", &rel]);
        let r2 = run_in(root(), &["record", &rel]);
        assert_eq!(r1.code, 0, "{name}: {}", r1.stderr);
        assert_eq!(r1.stdout, r2.stdout, "{name}: two runs of the binary differ");
        assert_eq!(r1.stdout, a.render(), "{name}: the binary and the library differ");
        // The text reads back to the same record.
        let back = Record::parse(&r1.stdout).unwrap_or_else(|e| panic!("{name}: the record does not read back: {}", e.message));
        assert_eq!(back.render(), r1.stdout, "{name}: parse and render are not inverse");
        assert!(compare(&back, &a).holds(), "{name}: a record read back is not the same derivation");
        // The digest is the SHA-256 of the file's bytes (checked against sha2 directly, which the
        // record uses; the value of one sample is also fixed below by an independent tool).
        assert_eq!(a.get("source.sha256").map(str::len), Some(64), "{name}: no SHA-256");
        insta::assert_snapshot!("record", r1.stdout);
    });
}

#[test]
fn digest_is_sha256_of_the_source_bytes() {
    // The SHA-256 of the three bytes "abc" from FIPS 180-2, appendix B.1.
    assert_eq!(canonode::record::sha256_hex(b"abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    // And the empty input (FIPS 180-2 test vectors, common practice).
    assert_eq!(canonode::record::sha256_hex(b""), "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
    // The record's field is the digest of the file's bytes.
    let text = std::fs::read_to_string(root().join("samples/bessel.ode")).expect("the sample");
    let rec = derive(&text, "samples/bessel.ode", &ReduceOptions::default()).expect("Bessel derives");
    assert_eq!(rec.get("source.sha256"), Some(canonode::record::sha256_hex(text.as_bytes()).as_str()));
}

/// The record of `samples/NAME` with default options.
fn sample_record(name: &str) -> Record {
    let text = std::fs::read_to_string(root().join("samples").join(name)).expect("the sample");
    derive(&text, name, &ReduceOptions::default()).unwrap_or_else(|e| panic!("{name}: {}", e.message))
}

#[test]
fn record_contents_of_published_equations() {
    let rec = sample_record("regge_wheeler.ode");
    // Regge–Wheeler is a confluent Heun equation: regular points r = 0, 2M and rank 1 at ∞
    // (common practice; DLMF 31.12.1 for the form).
    assert_eq!(rec.get("class"), Some("confluent-heun"));
    assert_eq!(rec.get("point[2].at"), Some("r = 2*M"));
    // Horizon exponents of the unknown ±2iMω, i.e. ±iω/(2κ) with κ = 1/(4M) (from memory).
    assert_eq!(rec.get("point[2].exponent[1]"), Some("2*I*M*omega"));
    assert_eq!(rec.get("point[2].exponent[2]"), Some("-2*I*M*omega"));
    assert_eq!(rec.get("point[3].rank"), Some("1"));
    assert_eq!(rec.get("canonical.source"), Some("DLMF 31.12.1"));
    // The default recurrence is stated and has three terms about r = 0.
    assert_eq!(rec.get("recurrence.about"), Some("r = 0"));
    assert_eq!(rec.get("recurrence.equation"), Some("c0(n)*a[n+1] + c1(n)*a[n] + c2(n)*a[n-1] = 0"));
    assert!(rec.get("recurrence.rule").is_some_and(|r| r.contains("first finite regular singular point")));
    // Airy (DLMF 9.2.1) has no finite singular point: the record says why there is no recurrence.
    let airy = std::fs::read_to_string(root().join("samples/airy.ode")).expect("the sample");
    let rec = derive(&airy, "airy.ode", &ReduceOptions::default()).expect("Airy derives");
    assert_eq!(rec.get("class"), Some("airy"));
    assert!(rec.get("recurrence.none").is_some_and(|r| r.contains("no finite regular singular point")));
    assert!(rec.get("recurrence.c[0]").is_none());
}

#[test]
fn options_are_recorded_and_rechecked() {
    let dir = temp_dir("options");
    std::fs::copy(root().join("samples/regge_wheeler.ode"), dir.join("rw.ode")).expect("copied");
    let r = run_in(&dir, &["record", "rw.ode", "--dxdz", "1/f", "-o", "rw.deriv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let rec = Record::parse(&std::fs::read_to_string(dir.join("rw.deriv")).expect("written")).expect("a record");
    assert_eq!(rec.get("option.dxdz"), Some("1/f"));
    assert_eq!(rec.get("option.subst"), Some("(not given)"));
    // Regge & Wheeler (1957): V = f (l(l+1)/r² + (1 − s²) 2M/r³) with f = 1 − 2M/r.
    let v = rec.get("schrodinger.V").expect("V is recorded");
    assert!(same(v, "(1 - 2*M/r)*((l^2 + l)/r^2 + (1 - s^2)*2*M/r^3)"), "V = {v}");
    let c = run_in(&dir, &["check", "rw.deriv"]);
    assert_eq!((c.code, c.stdout.as_str()), (0, "rw.deriv: holds\n"), "{}", c.stderr);
    // At infinity: z = 1/t is a recorded option too.
    let r = run_in(&dir, &["record", "rw.ode", "--at-infinity", "-o", "inf.deriv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let rec = Record::parse(&std::fs::read_to_string(dir.join("inf.deriv")).expect("written")).expect("a record");
    assert_eq!(rec.get("option.at-infinity"), Some("yes"));
    assert_eq!(rec.get("change.map"), Some("r = 1/t"));
    assert_eq!(run_in(&dir, &["check", "inf.deriv"]).code, 0);
}

#[test]
fn a_horizon_at_a_quadratic_root_gets_its_recurrence() {
    // The Teukolsky radial equation's singular points r± are the roots of
    // Δ = r² − 2Mr + a², irreducible over Q(M, a): the record adjoins r₊ = θ
    // and holds the three-term recurrence of Leaver 1985 (Kerr radial
    // series in u = (r − r₊)/(r − r₋)), free of the common factor of the
    // parameters.
    let rec = sample_record("teukolsky_radial.ode");
    assert_eq!(rec.get("recurrence.about"), Some("r = θ, a root of r^2 - 2*M*r + a^2"));
    assert_eq!(rec.get("recurrence.series"), Some("u=(r - (θ))/(r - (2*M - θ))"));
    assert_eq!(rec.get("recurrence.equation"), Some("c0(n)*a[n+1] + c1(n)*a[n] + c2(n)*a[n-1] = 0"));
    let c0 = rec.get("recurrence.c[0]").expect("c0");
    assert!(c0.starts_with("(M^2 - a^2)*n^2"), "{c0}");
    // Asked for by name, with the ingoing exponent: recorded and re-checked.
    let dir = temp_dir("theta");
    std::fs::copy(root().join("samples/teukolsky_radial.ode"), dir.join("k.ode")).expect("copied");
    let r = run_in(&dir, &["record", "k.ode", "--about", "θ", "--exponents", "θ=2,inf=1", "-o", "k.deriv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let text = std::fs::read_to_string(dir.join("k.deriv")).expect("written");
    assert!(text.contains("recurrence.about: r = θ, a root of r^2 - 2*M*r + a^2\n"), "{text}");
    assert!(text.contains("recurrence.choice[1]: at r = θ: exponent (-I*M^2*omega*θ"), "{text}");
    let c = run_in(&dir, &["check", "k.deriv"]);
    assert_eq!((c.code, c.stdout.as_str()), (0, "k.deriv: holds\n"), "{}", c.stderr);
    // An equation without such a root says so (exit 2, naming --about).
    std::fs::copy(root().join("samples/regge_wheeler.ode"), dir.join("rw.ode")).expect("copied");
    let r = run_in(&dir, &["record", "rw.ode", "--about", "θ"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("--about") && r.stderr.contains("no regular singular point is a root"), "{}", r.stderr);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn requested_recurrence_is_recorded_and_rechecked() {
    // The quasinormal-mode recurrence of Regge–Wheeler about the horizon
    // (ingoing exponent, outgoing branch) is Leaver 1985's: with 2M = 1 and
    // ρ = −iω, α_n = n² + (2ρ + 2)n + 2ρ + 1, i.e. n² + (2 − 4iMω)n + 1 − 4iMω.
    let dir = temp_dir("about");
    std::fs::copy(root().join("samples/regge_wheeler.ode"), dir.join("rw.ode")).expect("copied");
    let r = run_in(&dir, &["record", "rw.ode", "--about", "2*M", "--exponents", "2*M=2,inf=1", "-o", "rw.deriv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let text = std::fs::read_to_string(dir.join("rw.deriv")).expect("written");
    let rec = Record::parse(&text).expect("a record");
    assert_eq!(rec.get("option.about"), Some("2*M"));
    assert_eq!(rec.get("option.exponents"), Some("2*M=2,inf=1"));
    assert_eq!(rec.get("recurrence.about"), Some("r = 2*M"));
    let c0 = rec.get("recurrence.c[0]").expect("three terms");
    assert!(same(c0, "n^2 + (2 - 4*I*M*omega)*n + 1 - 4*I*M*omega"), "c0 = {c0}");
    let c = run_in(&dir, &["check", "rw.deriv"]);
    assert_eq!((c.code, c.stdout.as_str()), (0, "rw.deriv: holds\n"), "{}", c.stderr);
    // The request is part of the record: asking for the other exponent at
    // the horizon in the record changes the recurrence, and check names it.
    std::fs::write(dir.join("rw.deriv"), text.replace("option.exponents: 2*M=2,inf=1", "option.exponents: 2*M=1,inf=1")).expect("edited");
    let c = run_in(&dir, &["check", "rw.deriv"]);
    assert_eq!(c.code, 1, "{}{}", c.stdout, c.stderr);
    let changed = changed_fields(&c.stdout);
    assert!(changed.iter().any(|f| f == "recurrence.c[0]"), "{changed:?}");
    // A choice that does not exist is bad input, located in the record's line.
    std::fs::write(dir.join("rw.deriv"), text.replace("option.exponents: 2*M=2,inf=1", "option.exponents: 2*M=7")).expect("edited");
    let c = run_in(&dir, &["check", "rw.deriv"]);
    assert_eq!(c.code, 2, "{}{}", c.stdout, c.stderr);
    assert!(c.stderr.contains("rw.deriv:11:") && c.stderr.contains("choice 7 does not exist"), "{}", c.stderr);
    // And on the command line, against the option's text.
    let r = run_in(&dir, &["record", "rw.ode", "--about", "2*M", "--exponents", "2*M=7"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.starts_with("--exponents:1:1: error: choice 7"), "{}", r.stderr);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn changed_coefficient_is_caught_and_named() {
    let dir = temp_dir("changed");
    let eqs = dir.join("eqs");
    std::fs::create_dir_all(eqs.join("records")).expect("a subdirectory");
    let original = std::fs::read_to_string(root().join("samples/bessel.ode")).expect("the sample");
    std::fs::write(eqs.join("bessel.ode"), &original).expect("copied");
    let r = run_in(&dir, &["record", "eqs/bessel.ode", "-o", "eqs/records/bessel.deriv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.is_empty(), "with -o nothing goes to stdout");
    let recorded = std::fs::read_to_string(eqs.join("records/bessel.deriv")).expect("written");
    // The source path is relative to the record's directory.
    assert!(recorded.contains("\nsource.path: ../bessel.ode\n"), "{recorded}");

    // Unchanged: exit 0, also after moving the directory (the path is relative).
    let moved = dir.join("moved");
    std::fs::rename(&eqs, &moved).expect("moved");
    let c = run_in(&moved, &["check", "records/bessel.deriv"]);
    assert_eq!((c.code, c.stdout.as_str(), c.stderr.as_str()), (0, "records/bessel.deriv: holds\n", ""));

    // A different version alone is mentioned but holds.
    let other_version = recorded.replace("\ntool.version: ", "\ntool.version: 0.0.0-");
    std::fs::write(moved.join("records/old.deriv"), other_version).expect("written");
    let c = run_in(&moved, &["check", "records/old.deriv"]);
    assert_eq!(c.code, 0, "{}{}", c.stdout, c.stderr);
    assert!(c.stdout.contains("note: recorded with canonode 0.0.0-") && c.stdout.contains("(the version is not compared)"), "{}", c.stdout);
    assert!(c.stdout.ends_with("records/old.deriv: holds\n"), "{}", c.stdout);

    // DLMF 10.2.1 with z² → 4z² in the coefficient of w: Q = 4 + (1/4 − ν²)/z². The double-pole
    // coefficient at z = 0 is unchanged, so the exponents ±ν there are too (Frobenius, common
    // practice); Q → 4 at ∞ changes the formal solutions to exp(±2iz) and the canonical map.
    let changed = original.replace("(z^2 - nu^2)*w", "(4*z^2 - nu^2)*w");
    assert_ne!(changed, original, "the sample's equation line changed");
    std::fs::write(moved.join("bessel.ode"), &changed).expect("written");
    let c = run_in(&moved, &["check", "records/bessel.deriv"]);
    assert_eq!(c.code, 1, "{}{}", c.stdout, c.stderr);
    let fields = changed_fields(&c.stdout);
    for f in ["source.sha256", "standard.q", "normal.Q", "point[2].formal[1]", "point[2].formal[2]"] {
        assert!(fields.iter().any(|x| x == f), "{f} not named as changed: {fields:?}");
    }
    for f in ["standard.p", "normal.prefactor", "class", "point[1].exponent[1]", "point[1].exponent[2]", "point[1].kind", "tool.version"] {
        assert!(!fields.iter().any(|x| x == f), "{f} named as changed: {fields:?}");
    }
    // A unified diff of the fields.
    assert!(c.stdout.contains("\n--- records/bessel.deriv (recorded)\n+++ records/bessel.deriv (recomputed from "), "{}", c.stdout);
    assert!(c.stdout.contains("\n@@ -"), "{}", c.stdout);
    assert!(c.stdout.contains("\n-standard.q: (z^2 - nu^2)/z^2\n") && c.stdout.contains("\n+standard.q: (4*z^2 - nu^2)/z^2\n"), "{}", c.stdout);
    assert!(c.stdout.contains("\n-point[2].formal[1]: psi ~ exp(I*z)*z^(0) * (1 + ...)\n"), "{}", c.stdout);
    assert!(c.stdout.contains("\n+point[2].formal[1]: psi ~ exp(2*I*z)*z^(0) * (1 + ...)\n"), "{}", c.stdout);
    assert!(!c.stdout.contains("\n-tool.version") && !c.stdout.contains("\n+tool.version"), "{}", c.stdout);

    // The library says the same.
    let old = Record::parse(&recorded).expect("a record");
    let new = derive(&changed, "../bessel.ode", &old.options().expect("options")).expect("derives");
    assert_eq!(compare(&old, &new).changed, fields);

    // Several records: each is reported, and the status is the worst.
    std::fs::write(moved.join("airy.ode"), std::fs::read_to_string(root().join("samples/airy.ode")).expect("sample")).expect("written");
    assert_eq!(run_in(&moved, &["record", "airy.ode", "-o", "records/airy.deriv"]).code, 0);
    let c = run_in(&moved, &["check", "records/airy.deriv", "records/bessel.deriv"]);
    assert_eq!(c.code, 1);
    assert!(c.stdout.starts_with("records/airy.deriv: holds\nrecords/bessel.deriv: changed: "), "{}", c.stdout);
    let c = run_in(&moved, &["check", "records/airy.deriv", "records/none.deriv", "records/bessel.deriv"]);
    assert_eq!(c.code, 2, "bad input outranks a change");
    assert!(c.stdout.contains("records/bessel.deriv: changed: ") && c.stderr.starts_with("records/none.deriv: error: cannot read"), "{}", c.stderr);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn record_needs_a_file() {
    let r = run_in(root(), &["record", "-e", "z*w'' + w = 0"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("give an equation file"), "{}", r.stderr);
    let r = run_in(root(), &["record", "samples/no_such_file.ode"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.starts_with("samples/no_such_file.ode: error: cannot read the file"), "{}", r.stderr);
    // Bad input in the equation is reported as by `reduce`.
    let r = run_in(root(), &["record", "tests/bad/syntax_bad_number.ode"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.starts_with("tests/bad/syntax_bad_number.ode:4:"), "{}", r.stderr);
    assert!(r.stdout.is_empty());
}

#[test]
fn empty_record_is_located() {
    let dir = temp_dir("empty");
    std::fs::write(dir.join("empty.deriv"), "").expect("written");
    let c = run_in(&dir, &["check", "empty.deriv"]);
    assert_eq!(c.code, 2);
    assert!(c.stderr.starts_with("empty.deriv:1:1: error: the record is empty"), "{}", c.stderr);
    let _ = std::fs::remove_dir_all(&dir);
}

/// Splits `NAME:LINE:COL: error: ...` into its name and checks that line and column are numbers.
fn located(first_line: &str) -> Option<&str> {
    let (head, _) = first_line.split_once(": error: ")?;
    let mut parts = head.rsplitn(3, ':');
    let (col, line, name) = (parts.next()?, parts.next()?, parts.next()?);
    (col.parse::<usize>().is_ok() && line.parse::<usize>().is_ok()).then_some(name)
}

#[test]
fn bad_records() {
    insta::glob!("bad/records/*.deriv", |path| {
        let name = path.file_name().and_then(|n| n.to_str()).expect("a UTF-8 file name");
        let text = std::fs::read_to_string(path).expect("a readable corpus file");
        assert!(text.lines().take(2).any(|l| l.starts_with("# exercises: ")), "{name}: no '# exercises: ...' line at the top");
        let rel = format!("tests/bad/records/{name}");
        let c = run_in(root(), &["check", &rel]);
        assert_eq!(c.code, 2, "{name}: {}{}", c.stdout, c.stderr);
        assert!(c.stdout.is_empty(), "{name}: printed on stdout: {}", c.stdout);
        let first = c.stderr.lines().next().unwrap_or_default();
        let at = located(first).unwrap_or_else(|| panic!("{name}: the message is not located: {first}"));
        // A source that no longer parses is blamed in the source; everything else in the record.
        let want = if name.starts_with("source_bad_input") { "tests/bad/records/../syntax_bad_number.ode" } else { rel.as_str() };
        assert_eq!(at, want, "{name}: {first}");
        insta::assert_snapshot!(format!("{}[exit status {}]", c.stderr, c.code));
    });
}

#[test]
fn closed_form_is_recorded_and_rederived() {
    // Hydrogen, E = −Z²/(2(n + l + 1)²) (textbook, e.g. Landau & Lifshitz
    // §36, from memory), and the Pöschl–Teller barrier, ω = ±√(V0 − α²/4) −
    // iα(n + ½) (V. Ferrari & B. Mashhoon, Phys. Rev. D 30 (1984) 295).
    let dir = temp_dir("closed");
    for f in ["hydrogen_radial.ode", "poschl_teller.ode"] {
        std::fs::copy(root().join("samples").join(f), dir.join(f)).expect("copied");
    }
    let r = run_in(&dir, &["record", "hydrogen_radial.ode", "--at", "Z=1,l=0", "--boundary", "bound", "-o", "h.deriv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let text = std::fs::read_to_string(dir.join("h.deriv")).expect("written");
    let rec = Record::parse(&text).expect("a record");
    assert_eq!(rec.get("option.boundary"), Some("bound"));
    assert_eq!(rec.get("option.at"), Some("Z=1,l=0"));
    assert_eq!(rec.get("closed.frequency"), Some("E"));
    assert_eq!(rec.get("closed.end[1]"), Some("0 (normalisable)"));
    assert_eq!(rec.get("closed.end[2]"), Some("∞ (normalisable)"));
    let e = rec.get("closed.family[1].expression").expect("a family");
    assert!(same(e, "-Z^2/(2*(n + l + 1)^2)"), "{e}");
    assert_eq!(rec.get("closed.family[1].n"), Some("n = 0, 1, 2, ..."));
    assert!(rec.get("closed.family[2].expression").is_none());
    let c = run_in(&dir, &["check", "h.deriv"]);
    assert_eq!((c.code, c.stdout.as_str()), (0, "h.deriv: holds\n"), "{}", c.stderr);

    let r = run_in(&dir, &["record", "poschl_teller.ode", "--at", "V0=1,alpha=1/2", "-o", "p.deriv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let ptext = std::fs::read_to_string(dir.join("p.deriv")).expect("written");
    let prec = Record::parse(&ptext).expect("a record");
    assert_eq!(prec.get("option.boundary"), Some("qnm"));
    let fams: Vec<&str> = (1..=2).map(|i| prec.get(&format!("closed.family[{i}].expression")).expect("two families")).collect();
    for (f, s) in fams.iter().zip(["", "-"]) {
        assert!(same(f, &format!("{s}sqrt(4*V0 - alpha^2)/2 - I*alpha*(n + 1/2)")), "{f}");
    }
    let c = run_in(&dir, &["check", "p.deriv"]);
    assert_eq!((c.code, c.stdout.as_str()), (0, "p.deriv: holds\n"), "{}", c.stderr);

    // A tampered expression: check re-derives the right one and says so.
    let tampered = text.replace(&format!("closed.family[1].expression: {e}"), "closed.family[1].expression: -1/2*Z^2/(l + n + 2)^2");
    assert_ne!(tampered, text);
    std::fs::write(dir.join("h.deriv"), &tampered).expect("edited");
    let c = run_in(&dir, &["check", "h.deriv"]);
    assert_eq!(c.code, 1, "{}{}", c.stdout, c.stderr);
    assert_eq!(changed_fields(&c.stdout), vec!["closed.family[1].expression".to_string()]);
    assert!(c.stdout.contains("the closed-form spectrum re-derived does not match the recorded one"), "{}", c.stdout);
    assert!(c.stdout.contains("-closed.family[1].expression: -1/2*Z^2/(l + n + 2)^2\n"), "{}", c.stdout);
    assert!(c.stdout.contains(&format!("+closed.family[1].expression: {e}\n")), "{}", c.stdout);
    // A tampered set-up: the other values re-derive another range, and a
    // bad kind of spectrum is bad input located in the record.
    std::fs::write(dir.join("h.deriv"), text.replace("option.boundary: bound", "option.boundary: sideways")).expect("edited");
    let c = run_in(&dir, &["check", "h.deriv"]);
    assert_eq!(c.code, 2, "{}{}", c.stdout, c.stderr);
    assert!(c.stderr.contains("h.deriv:") && c.stderr.contains("'sideways' is not a kind of spectrum"), "{}", c.stderr);
    std::fs::write(dir.join("h.deriv"), text.replace("option.at: Z=1,l=0", "option.at: Z=1,l=zero")).expect("edited");
    let c = run_in(&dir, &["check", "h.deriv"]);
    assert_eq!(c.code, 2, "{}{}", c.stdout, c.stderr);
    assert!(c.stderr.contains("h.deriv:"), "{}", c.stderr);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_latex_source_is_recorded_and_checked() {
    // A `.tex` source is read as LaTeX by `record` and `check`, as by every
    // other command: its record holds the same normal form as its `.ode`
    // twin's (Bessel's equation, DLMF 10.2.1), and the round trip holds.
    let dir = temp_dir("latex");
    for f in ["bessel.tex", "bessel.ode"] {
        std::fs::copy(root().join("samples").join(f), dir.join(f)).unwrap();
    }
    let tex = run_in(&dir, &["record", "bessel.tex", "-o", "bessel_tex.deriv"]);
    assert_eq!(tex.code, 0, "{}", tex.stderr);
    let ode = run_in(&dir, &["record", "bessel.ode", "-o", "bessel_ode.deriv"]);
    assert_eq!(ode.code, 0, "{}", ode.stderr);
    let q = |name: &str| {
        let text = std::fs::read_to_string(dir.join(name)).unwrap();
        text.lines().find(|l| l.starts_with("normal.Q:")).map(|l| l.to_string()).unwrap_or_else(|| panic!("no normal.Q in {text}"))
    };
    let (a, b) = (q("bessel_tex.deriv"), q("bessel_ode.deriv"));
    assert!(same(a.trim_start_matches("normal.Q:").trim(), b.trim_start_matches("normal.Q:").trim()), "{a} against {b}");
    let check = run_in(&dir, &["check", "bessel_tex.deriv"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    std::fs::remove_dir_all(&dir).ok();
}
