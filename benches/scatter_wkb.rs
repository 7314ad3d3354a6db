//! In-process timing of the WKB series to order 12 and of greybody factors
//! (Schwarzschild s = 0, l = 0..5, 200 frequencies), the figures behind the
//! README's whole-process numbers.

use canonode::numeric::{barrier_estimates, qnm_recurrence, substitute, SpectrumOptions};
use canonode::{reduce, GRat, Input, Rat, ReduceOptions};
use criterion::{criterion_group, criterion_main, Criterion};
use rayon::prelude::*;

fn bench(c: &mut Criterion) {
    let path = format!("{}/samples/regge_wheeler.ode", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).expect("sample exists");
    let red = reduce(&Input::Program(&text), &ReduceOptions::default()).expect("reduces");
    let g = |x: i64| GRat::real(Rat::int(x.into()));
    // Field order: r, M, omega, l, s.
    let at = |l: i64, s: i64| SpectrumOptions::new(2, vec![g(0), g(1), g(0), g(l), g(s)], (0, 0), 1e-10, None);
    let opts = at(2, 2);
    let r = substitute(&red, &opts.values, 2).expect("substitutes");
    c.bench_function("wkb/schwarzschild_l2_order12", |b| {
        b.iter(|| {
            let (_, setup) = qnm_recurrence(&r, &opts).expect("recurrence");
            let est = barrier_estimates(&r, &opts, setup.horizon_value, 12).expect("barrier");
            est(0).expect("estimate").series.omega()
        })
    });
    let problems: Vec<_> = (0..=5)
        .map(|l| {
            let o = at(l, 0);
            let r = substitute(&red, &o.values, 2).expect("substitutes");
            let (_, setup) = qnm_recurrence(&r, &o).expect("recurrence");
            canonode::numeric::scatter_problem(&r, &o, &setup).expect("problem")
        })
        .collect();
    let freqs: Vec<f64> = (1..=200).map(|i| 0.005 * i as f64).collect();
    let mut group = c.benchmark_group("scatter");
    group.sample_size(10);
    group.bench_function("schwarzschild_s0_l0-5_200_frequencies", |b| {
        b.iter(|| {
            let jobs: Vec<(usize, f64)> = problems.iter().enumerate().flat_map(|(j, _)| freqs.iter().map(move |w| (j, *w))).collect();
            let out: Vec<_> = jobs.par_iter().map(|(j, w)| canonode::numeric::scatter_at(&problems[*j], *w).expect("scatters")).collect();
            out
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
