//! Time per call of the emitted C evaluator of Q for the Teukolsky radial
//! equation: emitted at bench start, compiled with `cc -O2 -shared -fPIC`
//! into a temporary directory and loaded with libloading. A small C wrapper
//! passes the complex numbers through pointers, so no complex-number calling
//! convention is assumed between Rust and C.

use canonode::code::{emit_code, CodeRequest, FunctionKind, FunctionSpec, Lang};
use canonode::{reduce, Input, ReduceOptions};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

type Wrapper = unsafe extern "C" fn(*const f64, *const f64, *mut f64);

fn bench(c: &mut Criterion) {
    let path = format!("{}/samples/teukolsky_radial.ode", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).expect("sample exists");
    let red = reduce(&Input::Program(&text), &ReduceOptions::default()).expect("reduces");
    let params = red.field.names()[1..].to_vec();
    let np = params.len();
    let functions = vec![FunctionSpec {
        kind: FunctionKind::Q,
        field: &red.field,
        outputs: vec![red.normal.q.clone()],
        about: vec![],
        named: red.ode.lets.iter().map(|(_, v)| v.clone()).collect(),
    }];
    let req =
        CodeRequest { lang: Lang::C, prefix: "teuk".into(), source: path.clone(), params, functions, skipped: vec![], limits: Default::default() };
    let mut code = emit_code(&req).expect("emits").text;
    code.push_str(&format!(
        "\nvoid teuk_q_ptr(const double *z, const double *p, double *out)\n{{\n    double complex pc[{np}];\n    for (int i = 0; i < {np}; i++) pc[i] = p[2*i] + p[2*i+1]*I;\n    double complex v = teuk_q(z[0] + z[1]*I, pc);\n    out[0] = creal(v);\n    out[1] = cimag(v);\n}}\n"
    ));
    let dir = std::env::temp_dir().join(format!("canonode-bench-emitted-c-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    std::fs::write(dir.join("teuk.c"), &code).expect("write source");
    let so = dir.join("libteuk.so");
    let status = std::process::Command::new("cc")
        .args(["-std=c99", "-O2", "-shared", "-fPIC", "teuk.c", "-o"])
        .arg(&so)
        .current_dir(&dir)
        .status()
        .expect("cc runs");
    assert!(status.success(), "cc failed");
    // SAFETY: the library is the one just compiled from the emitted source; the
    // symbol has the wrapper's signature written above.
    let lib = unsafe { libloading::Library::new(&so) }.expect("loads");
    let f: libloading::Symbol<Wrapper> = unsafe { lib.get(b"teuk_q_ptr") }.expect("symbol");
    // M, a, omega, m, s, lam: a Kerr-like point with a complex frequency.
    let p = [1.0, 0.0, 0.7, 0.0, 0.5, -0.09, 2.0, 0.0, -2.0, 0.0, 3.7, 0.1];
    assert_eq!(p.len(), 2 * np);
    let z = [3.1, 0.4];
    let mut out = [0.0f64; 2];
    c.bench_function("emitted_c/teukolsky_radial_q", |b| {
        b.iter(|| {
            // SAFETY: the pointers cover 2, 2·np and 2 doubles as the wrapper reads and writes.
            unsafe { f(black_box(z.as_ptr()), black_box(p.as_ptr()), out.as_mut_ptr()) };
            black_box(out)
        })
    });
    drop(lib);
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
