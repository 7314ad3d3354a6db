//! Surveys: tensor grids and files of points, tables streamed point by
//! point, resumed after a stop or a kill, sharded (also from job-array
//! variables) and merged back with their checks. The physics is that of
//! the Reissner–Nordström sample (charged black hole, scalar field); the
//! expected tables are the ones the same program computes by the plain
//! one-parameter scan and by an uninterrupted run (consistency checks;
//! the modes themselves are checked against published values in
//! tests/spectrum.rs).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const RN: &str = "samples/reissner_nordstrom_scalar.ode";

fn canonode(args: &[&str], env: &[(&str, &str)]) -> Output {
    let mut c = Command::new(env!("CARGO_BIN_EXE_canonode"));
    c.args(args).current_dir(env!("CARGO_MANIFEST_DIR"));
    for (k, v) in env {
        c.env(k, v);
    }
    c.output().expect("binary runs")
}

fn ok(args: &[&str]) -> String {
    let o = canonode(args, &[]);
    assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
    String::from_utf8(o.stdout).unwrap()
}

/// A fresh directory for one test's files.
fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("canonode-survey-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn path(p: &Path) -> String {
    p.to_string_lossy().to_string()
}

/// The data lines of a CSV table: (index, parameter values, n, re, im).
fn rows(csv: &str) -> Vec<(usize, Vec<f64>, u32, f64, f64)> {
    let mut lines = csv.lines();
    assert!(lines.next().unwrap().starts_with("# canonode scan survey="), "{csv}");
    let cols: Vec<&str> = lines.next().unwrap().split(',').collect();
    let np = cols.len() - 8;
    lines
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            assert_eq!(f[np + 4], "true", "unconverged: {l}");
            let num = |s: &str| s.parse::<f64>().unwrap();
            (f[0].parse().unwrap(), f[1..=np].iter().map(|s| num(s)).collect(), f[np + 1].parse().unwrap(), num(f[np + 2]), num(f[np + 3]))
        })
        .collect()
}

fn close(a: (f64, f64), b: (f64, f64)) -> bool {
    ((a.0 - b.0).powi(2) + (a.1 - b.1).powi(2)).sqrt() <= 1e-10 * (b.0 * b.0 + b.1 * b.1).sqrt()
}

#[test]
fn a_two_parameter_survey_equals_the_one_parameter_scans_it_contains() {
    // Charge q × multipole index l, two overtones: every point of the
    // tensor grid (walked as a snake) equals the plain scan over q at that
    // l, to 1e-10 relative.
    let grid = ok(&["scan", RN, "--vary", "q=0:0.8:0.1", "--vary", "l=1:3:1", "--at", "M=1", "--overtones", "0..1", "--no-check"]);
    let pts = rows(&grid);
    assert_eq!(pts.len(), 9 * 3 * 2);
    // The walk: l runs forth and back as q steps, so neighbours are neighbours in the grid.
    let walk: Vec<(f64, f64)> = pts.iter().filter(|r| r.2 == 0).map(|r| (r.1[0], r.1[1])).collect();
    assert_eq!(&walk[..6], &[(0.0, 1.0), (0.0, 2.0), (0.0, 3.0), (0.1, 3.0), (0.1, 2.0), (0.1, 1.0)]);
    for (k, r) in pts.iter().enumerate() {
        assert_eq!(r.0, k / 2, "rows in walk order");
    }
    for l in ["1", "2", "3"] {
        let line = rows(&ok(&["scan", RN, "--vary", "q=0:0.8:0.1", "--at", &format!("M=1,l={l}"), "--overtones", "0..1", "--no-check"]));
        assert_eq!(line.len(), 18);
        for (_, v, n, re, im) in line {
            let twin = pts.iter().find(|r| r.1 == vec![v[0], l.parse().unwrap()] && r.2 == n).expect("the point is in the survey");
            assert!(close((twin.3, twin.4), (re, im)), "q={} l={l} n={n}: {:?} against {:?}", v[0], (twin.3, twin.4), (re, im));
        }
    }
    // The same points from a file, in the file's order, give the same numbers.
    let d = dir("points");
    let f = d.join("points.txt");
    std::fs::write(&f, "# q and l\nq, l\n0.3 2\n0.4, 2\n0.4 3\n").unwrap();
    let filed = rows(&ok(&["scan", RN, "--points", &path(&f), "--at", "M=1", "--overtones", "0..1", "--no-check"]));
    assert_eq!(filed.len(), 6);
    for (_, v, n, re, im) in filed {
        let twin = pts.iter().find(|r| (r.1[0] - v[0]).abs() < 1e-15 && r.1[1] == v[1] && r.2 == n).unwrap();
        assert!(close((twin.3, twin.4), (re, im)), "{v:?}");
    }
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_massive_survey_equals_its_one_parameter_scans_and_each_point_s_own_derivation() {
    // A neutral scalar of mass μ on the charged black hole, quasinormal
    // modes (outgoing at infinity), l = 2, n = 0: the survey over charge ×
    // field mass runs on the continued fraction with χ = √(μ² − ω²) adjoined
    // (derived once with q and μ symbolic). Every grid point equals the
    // plain scan over q at that μ and `spectrum`'s own derivation at the
    // point, to 1e-10 relative; at μ = 0 the massless sample's modes come
    // back (the outgoing branch χ = −iω), and the check column is direct
    // integration between the ends.
    const MASSIVE: &str = "tests/boundary/massive_scalar_reissner_nordstrom.ode";
    let grid = rows(&ok(&["scan", MASSIVE, "--vary", "q=0:0.4:0.1", "--vary", "mu=0:0.3:0.1", "--at", "M=1,l=2", "--no-check"]));
    assert_eq!(grid.len(), 5 * 4);
    for mu in ["0", "0.1", "0.2", "0.3"] {
        let m: f64 = mu.parse().unwrap();
        let line = rows(&ok(&["scan", MASSIVE, "--vary", "q=0:0.4:0.1", "--at", &format!("M=1,l=2,mu={mu}"), "--no-check"]));
        assert_eq!(line.len(), 5);
        for (_, v, n, re, im) in line {
            let twin = grid.iter().find(|r| r.1 == vec![v[0], m] && r.2 == n).expect("the point is in the survey");
            assert!(close((twin.3, twin.4), (re, im)), "q={} μ={mu}: {:?} against {:?}", v[0], (twin.3, twin.4), (re, im));
        }
    }
    for (_, v, _, re, im) in grid.iter().filter(|r| r.1[0] == 0.3 || r.1[1] == 0.0) {
        let at = format!("M=1,q={},mu={},l=2", v[0], v[1]);
        let doc: serde_json::Value = serde_json::from_str(&ok(&["spectrum", MASSIVE, "--at", &at, "--format", "json", "--tol", "1e-12"])).unwrap();
        assert_eq!(doc["modes"][0]["method"], "cf", "{doc}");
        let w = &doc["modes"][0]["omega"];
        assert!(close((*re, *im), (w[0].as_f64().unwrap(), w[1].as_f64().unwrap())), "at {at}: ({re}, {im}) against {w}");
        if v[1] == 0.0 {
            let massless: serde_json::Value =
                serde_json::from_str(&ok(&["spectrum", RN, "--at", &format!("M=1,q={},l=2", v[0]), "--format", "json", "--tol", "1e-12"])).unwrap();
            let w = &massless["modes"][0]["omega"];
            assert!(close((*re, *im), (w[0].as_f64().unwrap(), w[1].as_f64().unwrap())), "μ = 0, q = {}: ({re}, {im}) against {w}", v[0]);
        }
    }
    // The check column: direct integration agrees to 1e-8 relative.
    let checked = ok(&["scan", MASSIVE, "--vary", "mu=0.1:0.2:0.1", "--at", "M=1,q=0.3,l=2"]);
    for l in checked.lines().skip(2) {
        let f: Vec<f64> = l.split(',').skip(3).take(5).filter_map(|x| x.parse().ok()).collect();
        assert_eq!(f.len(), 4, "{l}");
        assert!(((f[0] - f[2]).powi(2) + (f[1] - f[3]).powi(2)).sqrt() < 1e-8 * f[0].hypot(f[1]), "{l}");
    }
}

// The long axis last: the walk runs along it, so that most shard boundaries
// lie on a straight stretch where the continuity can be judged.
const SURVEY: [&str; 9] = ["--vary", "l=1:2:1", "--vary", "q=0:0.9:0.05", "--at", "M=1", "--overtones", "0..1", "--no-check"];

fn survey_args<'a>(extra: &[&'a str]) -> Vec<&'a str> {
    let mut a = vec!["scan", RN];
    a.extend_from_slice(&SURVEY);
    a.extend_from_slice(extra);
    a
}

#[test]
fn a_stopped_survey_resumed_gives_the_uninterrupted_table() {
    let d = dir("resume");
    for format in ["csv", "jsonl"] {
        let full = d.join(format!("full.{format}"));
        let part = d.join(format!("part.{format}"));
        let (full_s, part_s) = (path(&full), path(&part));
        let o = canonode(&survey_args(&["--format", format, "-o", &full_s]), &[]);
        assert!(o.status.success() && o.stdout.is_empty(), "{}", String::from_utf8_lossy(&o.stderr));
        // A point budget stops the run part-way; the table holds exactly those points.
        let o = canonode(&survey_args(&["--format", format, "-o", &part_s, "--stop-after", "9"]), &[]);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        assert!(String::from_utf8_lossy(&o.stderr).contains("--resume"), "{}", String::from_utf8_lossy(&o.stderr));
        let text = std::fs::read_to_string(&part).unwrap();
        assert!(text.len() < std::fs::read_to_string(&full).unwrap().len());
        // A kill while a point was being written leaves half a line: cut one.
        std::fs::write(&part, &text[..text.len() - 25]).unwrap();
        // Without --resume an existing table is not overwritten.
        let o = canonode(&survey_args(&["--format", format, "-o", &part_s]), &[]);
        assert_eq!(o.status.code(), Some(2));
        assert!(String::from_utf8_lossy(&o.stderr).contains("--resume"));
        ok(&survey_args(&["--format", format, "-o", &part_s, "--resume"]));
        assert_eq!(std::fs::read_to_string(&part).unwrap(), std::fs::read_to_string(&full).unwrap(), "{format}");
        // Resuming a finished table does nothing.
        ok(&survey_args(&["--format", format, "-o", &part_s, "--resume"]));
        assert_eq!(std::fs::read_to_string(&part).unwrap(), std::fs::read_to_string(&full).unwrap());
        // A table of another survey (here another tolerance) is not resumed.
        let o = canonode(&survey_args(&["--format", format, "-o", &part_s, "--resume", "--tol", "1e-9"]), &[]);
        assert_eq!(o.status.code(), Some(2));
        assert!(String::from_utf8_lossy(&o.stderr).contains("another survey"), "{}", String::from_utf8_lossy(&o.stderr));
    }
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_killed_survey_resumed_gives_the_uninterrupted_table() {
    // The process is killed (SIGKILL on Unix) once part of its table is
    // on disk; the resumed table equals an uninterrupted run's to 1e-10
    // (in fact to the last digit: the same points continue the same
    // neighbours).
    let d = dir("kill");
    let full = d.join("full.csv");
    let part = d.join("part.csv");
    let args = |out: &Path| {
        let mut a: Vec<String> = ["scan", RN, "--vary", "q=0:0.9:0.025", "--vary", "l=1:3:1", "--at", "M=1", "--overtones", "0..1"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        a.extend(["-o".to_string(), path(out)]);
        a
    };
    let o = Command::new(env!("CARGO_BIN_EXE_canonode")).args(args(&full)).current_dir(env!("CARGO_MANIFEST_DIR")).output().unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let mut child = Command::new(env!("CARGO_BIN_EXE_canonode")).args(args(&part)).current_dir(env!("CARGO_MANIFEST_DIR")).spawn().unwrap();
    let started = std::time::Instant::now();
    while std::fs::read_to_string(&part).map(|t| t.lines().count()).unwrap_or(0) < 20 && started.elapsed().as_secs() < 60 {
        std::thread::sleep(std::time::Duration::from_millis(2));
    }
    child.kill().unwrap();
    child.wait().unwrap();
    let kept = std::fs::read_to_string(&part).unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_canonode")).args(args(&part)).arg("--resume").current_dir(env!("CARGO_MANIFEST_DIR")).output().unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let (a, b) = (rows(&std::fs::read_to_string(&part).unwrap()), rows(&std::fs::read_to_string(&full).unwrap()));
    assert_eq!(a.len(), b.len(), "kept {} lines before the kill", kept.lines().count());
    for (x, y) in a.iter().zip(&b) {
        assert_eq!((x.0, &x.1, x.2), (y.0, &y.1, y.2));
        assert!(close((x.3, x.4), (y.3, y.4)), "{x:?} {y:?}");
    }
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn four_shards_merged_equal_the_whole_run_and_bad_sets_are_reported() {
    let d = dir("shards");
    let whole = rows(&ok(&survey_args(&[])));
    let shard = |k: usize| -> String {
        let f = path(&d.join(format!("part{k}.csv")));
        // Shards 1 and 2 from Slurm's variables (an array 0-3), 3 from Grid
        // Engine's (1-4), 4 given by hand.
        let env: Vec<(&str, String)> = match k {
            1 | 2 => vec![("SLURM_ARRAY_TASK_ID", (k - 1).to_string()), ("SLURM_ARRAY_TASK_MIN", "0".into()), ("SLURM_ARRAY_TASK_COUNT", "4".into())],
            3 => vec![("SGE_TASK_ID", "3".into()), ("SGE_TASK_FIRST", "1".into()), ("SGE_TASK_LAST", "4".into()), ("SGE_TASK_STEPSIZE", "1".into())],
            _ => Vec::new(),
        };
        let spec = if k == 4 { "4/4".to_string() } else { "auto".to_string() };
        let env: Vec<(&str, &str)> = env.iter().map(|(a, b)| (*a, b.as_str())).collect();
        let o = canonode(&survey_args(&["--shard", &spec, "-o", &f]), &env);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        assert!(std::fs::read_to_string(&f).unwrap().contains(&format!("shard={k}/4")));
        f
    };
    let parts: Vec<String> = (1..=4).map(shard).collect();
    let merged = path(&d.join("merged.csv"));
    let mut args = vec!["merge"];
    args.extend(parts.iter().rev().map(|s| s.as_str()));
    args.extend(["-o", &merged]);
    let o = canonode(&args, &[]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let m = rows(&std::fs::read_to_string(&merged).unwrap());
    assert_eq!(m.len(), whole.len());
    for (x, y) in m.iter().zip(&whole) {
        assert_eq!((x.0, &x.1, x.2), (y.0, &y.1, y.2));
        assert!(close((x.3, x.4), (y.3, y.4)), "{x:?} {y:?}");
    }
    let merge_err = |files: &[&str]| -> String {
        let mut a = vec!["merge"];
        a.extend_from_slice(files);
        let o = canonode(&a, &[]);
        assert_eq!(o.status.code(), Some(1), "{files:?}");
        assert!(o.stdout.is_empty());
        String::from_utf8_lossy(&o.stderr).to_string()
    };
    // A missing shard.
    let e = merge_err(&[&parts[0], &parts[1], &parts[3]]);
    assert!(e.contains("points 19..27 (9 points) are missing") && e.contains("a shard is missing"), "{e}");
    // A shard killed while it wrote its last point (half a line): that
    // point counts as missing, and the file is named.
    let killed = path(&d.join("killed.csv"));
    let two = std::fs::read_to_string(&parts[1]).unwrap();
    std::fs::write(&killed, &two[..two.len() - 25]).unwrap();
    let e = merge_err(&[&parts[0], &killed, &parts[2], &parts[3]]);
    assert!(e.contains("point 18 is missing") && e.contains("killed.csv (shard 2/4) stops before them"), "{e}");
    // 38 points (2 multipoles × 19 charges) in shards 0..9, 9..19, 19..28, 28..38.
    // A point twice: the last point of shard 2 copied into shard 3.
    let dup = path(&d.join("dup.csv"));
    let two = std::fs::read_to_string(&parts[1]).unwrap();
    let last_point: Vec<&str> = two.lines().rev().take(2).collect();
    let mut three = std::fs::read_to_string(&parts[2]).unwrap();
    let cut = three.find("\n19,").unwrap() + 1;
    three.insert_str(cut, &format!("{}\n{}\n", last_point[1], last_point[0]));
    std::fs::write(&dup, three.replace("rows=19..28", "rows=18..28")).unwrap();
    let e = merge_err(&[&parts[0], &parts[1], &dup, &parts[3]]);
    assert!(e.contains("point 18 is there twice"), "{e}");
    // A jump to another mode at the first point of shard 4 (its fundamental
    // replaced by the first overtone's value).
    let jump = path(&d.join("jump.csv"));
    let four = std::fs::read_to_string(&parts[3]).unwrap();
    let mut lines: Vec<String> = four.lines().map(String::from).collect();
    let n1: Vec<String> = lines[3].split(',').map(String::from).collect();
    let mut n0: Vec<String> = lines[2].split(',').map(String::from).collect();
    n0[4] = n1[4].clone();
    n0[5] = n1[5].clone();
    lines[2] = n0.join(",");
    std::fs::write(&jump, lines.join("\n") + "\n").unwrap();
    let e = merge_err(&[&parts[0], &parts[1], &parts[2], &jump]);
    assert!(e.contains("jump at point 28") && e.contains("l=2, q=0.45"), "{e}");
    // Tables of different surveys are not merged.
    let other = path(&d.join("other.csv"));
    ok(&["scan", RN, "--vary", "l=1:2:1", "--vary", "q=0:0.9:0.05", "--at", "M=1", "--no-check", "--shard", "4/4", "-o", &other]);
    let o = canonode(&["merge", &parts[0], &parts[1], &parts[2], &other], &[]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("another survey"));
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn bad_surveys_are_refused_before_any_work() {
    let d = dir("bad");
    let f = d.join("p.txt");
    let fs = path(&f);
    for (text, why) in [
        ("q l\n0.1\n", "expected 2 values"),
        ("x\n0.1\n", "'x' is not a parameter"),
        ("q\n0.1i\n", "not real"),
        ("q\n", "no points"),
        ("omega\n1\n", "frequency"),
    ] {
        std::fs::write(&f, text).unwrap();
        let o = canonode(&["scan", RN, "--points", &fs, "--at", "M=1,l=2"], &[]);
        assert_eq!(o.status.code(), Some(2), "{text}");
        assert!(String::from_utf8_lossy(&o.stderr).contains(why), "{text}: {}", String::from_utf8_lossy(&o.stderr));
    }
    for (args, why) in [
        (vec!["--vary", "q=0:0.5:0.1", "--vary", "q=0:1:0.5", "--at", "M=1,l=2"], "varied twice"),
        (vec!["--vary", "q=0:1:0.0001", "--vary", "l=0:100:0.1", "--at", "M=1"], "more than"),
        (vec!["--vary", "q=0:0.5:0.1", "--at", "M=1,l=2", "--shard", "auto"], "no job-array variable"),
        (vec!["--vary", "q=0:0.5:0.1", "--at", "M=1,l=2", "--shard", "7/9"], "1 ≤ K ≤ N ≤ 6"),
        (vec!["--vary", "q=0:0.5:0.1", "--at", "M=1,l=2", "--format", "json", "-o", "x.json", "--resume"], "streamed table"),
    ] {
        let mut a = vec!["scan", RN];
        a.extend(args.iter());
        let o = canonode(&a, &[]);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        assert!(String::from_utf8_lossy(&o.stderr).contains(why), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
    }
    // A scheduler that gives the index only needs the count.
    let o = canonode(&["scan", RN, "--vary", "q=0:0.5:0.1", "--at", "M=1,l=2", "--no-check", "--shard", "auto"], &[("PBS_ARRAY_INDEX", "2")]);
    assert!(String::from_utf8_lossy(&o.stderr).contains("auto/N"), "{}", String::from_utf8_lossy(&o.stderr));
    let o = canonode(&["scan", RN, "--vary", "q=0:0.5:0.1", "--at", "M=1,l=2", "--no-check", "--shard", "auto/3"], &[("PBS_ARRAY_INDEX", "2")]);
    assert!(o.status.success());
    assert!(String::from_utf8_lossy(&o.stdout).contains("shard=2/3 rows=2..4"), "{}", String::from_utf8_lossy(&o.stdout));
    std::fs::remove_dir_all(&d).ok();
}

/// The Kerr coupling of the Teukolsky radial and spin-weighted spheroidal
/// samples (Teukolsky 1973: λ = A + a²ω² − 2amω, c = aω).
const KERR: [&str; 6] =
    ["--couple", "samples/spheroidal_spin_weighted.ode", "--link", "lam = A + a^2*omega^2 - 2*a*m*omega", "--link", "c = a*omega"];

#[test]
fn tables_carry_the_checks_and_the_angular_eigenvalue() {
    // `spectrum --format csv`: the direct-integration check beside each
    // mode, as in `scan`, and every line as long as the header.
    let csv = ok(&["spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--overtones", "0..1", "--format", "csv"]);
    let mut lines = csv.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| head.iter().position(|c| *c == name).unwrap_or_else(|| panic!("no column {name}: {head:?}"));
    for l in lines {
        let f: Vec<&str> = l.split(',').collect();
        assert_eq!(f.len(), head.len(), "{l}");
        let (re, im): (f64, f64) = (f[col("re")].parse().unwrap(), f[col("im")].parse().unwrap());
        let (cre, cim): (f64, f64) = (f[col("check_re")].parse().unwrap(), f[col("check_im")].parse().unwrap());
        assert!(close((cre, cim), (re, im)) || ((cre - re).hypot(cim - im) < 1e-8), "{l}");
        assert!(f[col("agreement")].parse::<f64>().unwrap() < 1e-8);
    }
    // A coupled scan over the spin: the angular eigenvalue in its own
    // columns (CSV) and key (JSON lines). At a = 0 it is the spin-weighted
    // spherical value l(l+1) − s(s+1) = 4 for l = 2, s = −2 (Teukolsky &
    // Press 1974's convention, from memory), and it agrees with `spectrum`'s
    // `coupled.value` at a = 0.3.
    let mut args =
        vec!["scan", "samples/teukolsky_radial.ode", "--vary", "a=0:0.3:0.3", "--at", "M=1,m=2,s=-2", "--guess", "0.37-0.09i", "--no-check"];
    args.extend(KERR);
    let table = ok(&args);
    let mut lines = table.lines().skip(1);
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(&head[head.len() - 3..], &["angular_re", "angular_im", "reason"]);
    let rows: Vec<Vec<String>> = lines.map(|l| l.split(',').map(String::from).collect()).collect();
    let a0: (f64, f64) = (rows[0][head.len() - 3].parse().unwrap(), rows[0][head.len() - 2].parse().unwrap());
    assert!((a0.0 - 4.0).abs() < 1e-10 && a0.1.abs() < 1e-10, "{a0:?}");
    let mut sargs = vec!["spectrum", "samples/teukolsky_radial.ode", "--at", "M=1,a=0.3,m=2,s=-2", "--guess", "0.42-0.088i", "--format", "json"];
    sargs.extend(KERR);
    let doc: serde_json::Value = serde_json::from_str(&ok(&sargs)).unwrap();
    let want = &doc["modes"][0]["coupled"]["value"];
    let got: (f64, f64) = (rows[1][head.len() - 3].parse().unwrap(), rows[1][head.len() - 2].parse().unwrap());
    assert!(close(got, (want[0].as_f64().unwrap(), want[1].as_f64().unwrap())), "{got:?} against {want}");
    // The same survey with both equations in LaTeX: the angular file is read
    // as LaTeX too, and the table is the same to rounding.
    let mut targs =
        vec!["scan", "samples/teukolsky_radial.tex", "--vary", "a=0:0.3:0.3", "--at", "M=1,m=2,s=-2", "--guess", "0.37-0.09i", "--no-check"];
    targs.extend(["--couple", "samples/spheroidal_spin_weighted.tex", "--link", "lambda = A + a^2*omega^2 - 2*a*m*omega", "--link", "c = a*omega"]);
    let ttable = ok(&targs);
    let trows: Vec<Vec<String>> = ttable.lines().skip(2).map(|l| l.split(',').map(String::from).collect()).collect();
    assert_eq!(trows.len(), rows.len(), "{ttable}");
    for (t, r) in trows.iter().zip(&rows) {
        let num = |v: &Vec<String>, i: usize| v[i].parse::<f64>().unwrap_or(f64::NAN);
        for i in [3, 4, head.len() - 3, head.len() - 2] {
            assert!((num(t, i) - num(r, i)).abs() < 1e-9, "{ttable}\n{table}");
        }
    }
    args.extend(["--format", "jsonl"]);
    let lines: Vec<serde_json::Value> = ok(&args).lines().map(|l| serde_json::from_str(l).unwrap()).collect();
    assert_eq!(lines[0]["angular"], true);
    assert!((lines[1]["modes"][0]["angular"][0].as_f64().unwrap() - 4.0).abs() < 1e-10);
}

#[test]
fn a_two_parameter_survey_is_plotted_one_colour_per_pass() {
    // The plot of a charge × multipole survey: one series per multipole
    // (named in the legend), the check over them, the fixed parameters in
    // the titles. Only the presence of these texts is checked, not the picture.
    let d = dir("plot");
    let svg = d.join("rn.svg");
    ok(&["scan", RN, "--vary", "l=1:2:1", "--vary", "q=0:0.6:0.3", "--at", "M=1", "--plot", &path(&svg)]);
    let text = std::fs::read_to_string(&svg).unwrap();
    for want in ["l=1", "l=2", "direct integration", "(omega; M=1)"] {
        assert!(text.contains(want), "no {want:?} in the plot");
    }
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn scans_need_no_guess_at_their_first_point() {
    // A coupled scan over the spin with no --guess: the first point starts
    // from the uncoupled limit (a = 0) and is continued in a; a = 0.9 gives
    // 0.67161 − 0.06487i (Leaver 1985; Berti, Cardoso & Will 2006, from
    // memory; M = 1, s = −2, l = m = 2, n = 0).
    let mut args = vec!["scan", "samples/teukolsky_radial.ode", "--vary", "a=0.8:0.9:0.1", "--at", "M=1,m=2,s=-2", "--no-check", "--format", "json"];
    args.extend(KERR);
    let doc: serde_json::Value = serde_json::from_str(&ok(&args)).unwrap();
    let m = &doc["points"][1]["modes"][0];
    assert_eq!(m["converged"], true, "{m}");
    let w = (m["omega"][0].as_f64().unwrap(), m["omega"][1].as_f64().unwrap());
    assert!((w.0 - 0.67161).abs() < 5e-6 && (w.1 + 0.06487).abs() < 5e-6, "{w:?}");
    // An uncoupled equation without a barrier (the Teukolsky radial
    // equation at a fixed separation constant): the global spectral method
    // seeds the first point. a = 0, λ = 4 is Schwarzschild s = 2, l = 2
    // (Leaver 1985: 0.37367168 − 0.08896232i).
    let doc: serde_json::Value = serde_json::from_str(&ok(&[
        "scan",
        "samples/teukolsky_radial.ode",
        "--vary",
        "m=0:0.1:0.1",
        "--at",
        "M=1,a=0,s=-2,lam=4",
        "--no-check",
        "--format",
        "json",
    ]))
    .unwrap();
    let m = &doc["points"][0]["modes"][0];
    let w = (m["omega"][0].as_f64().unwrap(), m["omega"][1].as_f64().unwrap());
    assert!((w.0 - 0.37367168).abs() < 5e-9 && (w.1 + 0.08896232).abs() < 5e-9, "{w:?}");
}

#[test]
fn a_survey_equals_the_exact_derivation_at_each_point() {
    // The survey derives its recurrence once with M and q symbolic and
    // only evaluates it per point; `spectrum` substitutes each point
    // exactly and derives again. The two must agree (1e-10 relative) at
    // generic points (the horizon a root of an irreducible quadratic), at
    // q = 0 (r² − 2Mr + q² splits: solved exactly in the survey too) and
    // where M² − q² is a rational square (M = 0.5, q = 0.3: r₊ = 0.9).
    let out = ok(&["scan", RN, "--vary", "M=0.5:0.7:0.1", "--vary", "q=0:0.3:0.1", "--at", "l=2", "--no-check"]);
    let got = rows(&out);
    assert_eq!(got.len(), 12);
    for (_, v, _, re, im) in got {
        let at = format!("M={},q={},l=2", v[0], v[1]);
        let doc: serde_json::Value = serde_json::from_str(&ok(&["spectrum", RN, "--at", &at, "--format", "json", "--tol", "1e-12"])).unwrap();
        let w = &doc["modes"][0]["omega"];
        let want = (w[0].as_f64().unwrap(), w[1].as_f64().unwrap());
        let d = ((re - want.0).powi(2) + (im - want.1).powi(2)).sqrt() / (want.0.powi(2) + want.1.powi(2)).sqrt();
        assert!(d < 1e-10, "at {at}: ({re}, {im}) against {want:?}");
    }
}

#[test]
fn a_two_parameter_grid_is_drawn_as_colour_maps() {
    // Colour maps of Re ω and Im ω over the grid, the axes named, the
    // "no value" colour explained in the legend. Only the presence of
    // these texts is checked, not the picture.
    let d = dir("map");
    let svg = d.join("map.svg");
    ok(&["scan", RN, "--vary", "M=0.5:0.9:0.1", "--vary", "q=0:0.2:0.05", "--at", "l=2", "--no-check", "--plot", &path(&svg)]);
    let text = std::fs::read_to_string(&svg).unwrap();
    for want in ["Re omega, n=0 (omega; l=2)", "Im omega, n=0", "no value (the mode did not converge, or the point failed): 0 at n=0, of 25 points"] {
        assert!(text.contains(want), "no {want:?} in the map");
    }
    texts_inside(&text);
    // Asked for on a survey of one parameter: refused before any work.
    let o = canonode(&["scan", RN, "--vary", "q=0:0.2:0.1", "--at", "M=1,l=2", "--plot", &path(&d.join("x.svg")), "--plot-style", "map"], &[]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("a colour map needs a grid of exactly two --vary parameters"));
    assert!(!d.join("x.svg").exists());
    std::fs::remove_dir_all(&d).ok();
}

/// The layout of an SVG picture: every text lies inside the picture and
/// off every coloured rectangle (map cells, colour bars, swatches), judged by
/// its anchor, its font size and 0.62 em per character.
fn texts_inside(svg: &str) {
    let attr = |tag: &str, name: &str| -> Option<String> {
        let i = tag.find(&format!(" {name}=\""))? + name.len() + 3;
        Some(tag[i..].split('"').next()?.to_string())
    };
    let head = svg.split('>').next().unwrap();
    let width: f64 = attr(head, "width").unwrap().parse().unwrap();
    let num = |tag: &str, name: &str| -> f64 { attr(tag, name).unwrap().parse().unwrap() };
    let rects: Vec<[f64; 4]> = svg
        .split("<rect")
        .skip(1)
        .map(|p| p.split('>').next().unwrap())
        .filter(|t| !matches!(attr(t, "fill").as_deref(), Some("none" | "#FFFFFF")))
        .map(|t| [num(t, "x"), num(t, "y"), num(t, "x") + num(t, "width"), num(t, "y") + num(t, "height")])
        .collect();
    let mut seen = 0;
    for part in svg.split("<text").skip(1) {
        let (tag, rest) = part.split_once('>').unwrap();
        if tag.contains("rotate(") {
            continue;
        }
        let label = rest.split("</text>").next().unwrap().trim();
        let x: f64 = attr(tag, "x").unwrap().parse().unwrap();
        let size: f64 = attr(tag, "font-size").unwrap().parse().unwrap();
        let w = 0.62 * size * label.chars().count() as f64;
        let (left, right) = match attr(tag, "text-anchor").as_deref() {
            Some("middle") => (x - w / 2.0, x + w / 2.0),
            Some("end") => (x - w, x),
            _ => (x, x + w),
        };
        assert!(left >= 0.0 && right <= width, "{label:?} spans {left:.0}..{right:.0} of a picture {width} wide");
        let y = num(tag, "y");
        let (top, bottom) = (y - 0.4 * size, y + 0.4 * size);
        for r in &rects {
            let apart = right <= r[0] || left >= r[2] || bottom <= r[1] || top >= r[3];
            assert!(apart, "{label:?} at {left:.0}..{right:.0} × {top:.0}..{bottom:.0} overlaps the rectangle {r:?}");
        }
        seen += 1;
    }
    assert!(seen > 10, "only {seen} texts");
}

#[test]
fn a_quasi_bound_survey_equals_each_point_s_own_levels() {
    // A massive scalar's quasi-bound states on Schwarzschild (M = 1, l = 1)
    // over the field mass: every point equals `spectrum --boundary
    // quasi-bound` at that mass to 1e-10 relative; the levels are
    // hydrogen-like, Re ω ≈ μ(1 − (Mμ)²/(2(l + n + 1)²)) (Detweiler, Phys.
    // Rev. D 22 (1980) 2323, from memory), to a few (Mμ)⁴ at the smallest
    // masses, and decay (Im ω < 0) ever faster as Mμ grows.
    const MASSIVE: &str = "tests/boundary/massive_scalar_schwarzschild.ode";
    let survey = rows(&ok(&[
        "scan",
        MASSIVE,
        "--boundary",
        "quasi-bound",
        "--vary",
        "mu=0.05:0.25:0.05",
        "--at",
        "M=1,l=1",
        "--overtones",
        "0..1",
        "--no-check",
    ]));
    assert_eq!(survey.len(), 5 * 2);
    for (_, v, n, re, im) in &survey {
        let at = format!("M=1,l=1,mu={}", v[0]);
        let doc: serde_json::Value =
            serde_json::from_str(&ok(&["spectrum", MASSIVE, "--boundary", "quasi-bound", "--at", &at, "--overtones", "0..1", "--format", "json"]))
                .unwrap();
        let w = &doc["modes"][*n as usize]["omega"];
        assert!(close((*re, *im), (w[0].as_f64().unwrap(), w[1].as_f64().unwrap())), "μ={} n={n}: ({re}, {im}) against {w}", v[0]);
        let mu = v[0];
        let hydrogen = mu * (1.0 - mu * mu / (2.0 * f64::from(2 + n).powi(2)));
        assert!(*im < 0.0 && (re - hydrogen).abs() <= 5.0 * mu.powi(5), "μ={mu} n={n}: {re} against {hydrogen}");
    }
    let decay: Vec<f64> = survey.iter().filter(|r| r.2 == 0).map(|r| -r.4).collect();
    assert!(decay.windows(2).all(|d| d[1] > d[0]), "{decay:?}");
    // Only the two problems a survey follows are taken.
    let o = canonode(&["scan", MASSIVE, "--boundary", "bound", "--vary", "mu=0.1:0.2:0.1", "--at", "M=1,l=1"], &[]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--boundary"), "{}", String::from_utf8_lossy(&o.stderr));
}

/// Each point of a one-parameter survey `scan FILE --vary VARY --at AT`
/// (overtones 0 and 1) equals that point's own `spectrum` run to 1e-10,
/// found by the numeric series between the ends, with its
/// direct-integration check beside it.
fn each_point_is_its_own_spectrum(file: &str, vary: &str, at: &str) {
    let out = ok(&["scan", file, "--vary", vary, "--at", at, "--overtones", "0..1", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let name = v["parameter"].as_str().expect("the parameter").to_string();
    let points = v["points"].as_array().expect("points");
    assert_eq!(points.len(), 3, "{out}");
    let pair = |x: &serde_json::Value| (x[0].as_f64().unwrap(), x[1].as_f64().unwrap());
    for p in points {
        let value = p["value"].as_f64().unwrap();
        let here = format!("{at},{name}={value}");
        let own: serde_json::Value =
            serde_json::from_str(&ok(&["spectrum", file, "--at", &here, "--overtones", "0..1", "--format", "json"])).unwrap();
        assert!(own["series"].is_object(), "{own}");
        let modes = p["modes"].as_array().expect("modes");
        assert_eq!(modes.len(), 2, "{p}");
        for (m, o) in modes.iter().zip(own["modes"].as_array().expect("own modes")) {
            assert_eq!(m["converged"], true, "{p}");
            let (w, x) = (pair(&m["omega"]), pair(&o["omega"]));
            let size = w.0.hypot(w.1);
            assert!((w.0 - x.0).hypot(w.1 - x.1) <= 1e-10 * size, "{here}: {w:?} vs {x:?}");
            assert_eq!(m["check"]["method"], "integrate", "{p}");
            let c = pair(&m["check"]["omega"]);
            assert!((c.0 - w.0).hypot(c.1 - w.1) <= 1e-9 * size, "{here}: check {c:?} vs {w:?}");
        }
    }
}

#[test]
fn a_survey_with_no_exact_recurrence_gives_each_point_s_own_spectrum() {
    // Schwarzschild–de Sitter: both horizons are roots of a cubic, so no
    // exact recurrence sets up; the first point is seeded by the global
    // spectral method, the others by their neighbour.
    each_point_is_its_own_spectrum("samples/schwarzschild_de_sitter_scalar.ode", "Lambda=0.02:0.04:0.01", "M=1,l=1");
    // Schwarzschild–anti-de Sitter (L = 1, l = 0): a regular boundary at
    // infinity, which `spectrum` always takes by the numeric series; at
    // M = 1 (r₊ = 1) the fundamental is Horowitz & Hubeny's 2.7982 − 2.6712i
    // (Phys. Rev. D 62 (2000) 024027, from memory), checked in tests/spectrum.rs.
    each_point_is_its_own_spectrum("tests/boundary/schwarzschild_ads_scalar.ode", "M=1:1.2:0.1", "L=1,l=0");
}

#[test]
fn a_survey_infers_the_spectral_parameter_left_without_a_value() {
    // The BTZ sample names its frequency `freq`: neither given in --at nor
    // varied, it is the one solved for, as in `spectrum`. Each row equals
    // the exact ω = k − 2i r₊ (Birmingham, Sachs & Solodukhin, Phys. Rev.
    // Lett. 88 (2002) 151301).
    let csv = ok(&["scan", "tests/boundary/btz_scalar.ode", "--at", "rp=1", "--vary", "k=1:2:1", "--guess", "1.03-1.94i"]);
    assert!(csv.lines().next().unwrap().contains("frequency=freq"), "{csv}");
    let got = rows(&csv);
    assert_eq!(got.len(), 2, "{csv}");
    for (_, p, n, re, im) in got {
        assert_eq!(n, 0);
        assert!(close((re, im), (p[0], -2.0)), "k={}: {re} {im}", p[0]);
    }
}
