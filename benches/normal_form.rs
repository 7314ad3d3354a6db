//! In-process timing of the exact pipeline (parse, lower, normal form) on
//! the samples: the figure compared with python-flint in the README.

use canonode::ode::{reduce, Input, ReduceOptions};
use criterion::{criterion_group, criterion_main, Criterion};

fn bench(c: &mut Criterion) {
    let names = ["teukolsky_radial", "regge_wheeler", "reissner_nordstrom_scalar", "heun_general", "spheroidal_spin_weighted", "demo_tamarind_halo"];
    let opts = ReduceOptions::default();
    let mut g = c.benchmark_group("reduce");
    for n in names {
        let path = format!("{}/samples/{n}.ode", env!("CARGO_MANIFEST_DIR"));
        let text = std::fs::read_to_string(&path).expect("sample exists");
        g.bench_function(n, |b| b.iter(|| reduce(&Input::Program(&text), &opts).expect("sample reduces")));
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
