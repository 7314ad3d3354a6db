//! In-process timing of the exact pipeline (parse, lower, normal form) on
//! the samples: the figure compared with python-flint in the README.

use canonode::{reduce, Input, ReduceOptions};
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

/// Schwarzschild s = 2, l = 2, overtones 0..7 to 1e-10 by the continued
/// fraction, from a reduced equation (the compute the README reports).
fn bench_spectrum(c: &mut Criterion) {
    use canonode::numeric::{barrier_estimates, qnm_modes, qnm_recurrence, SpectrumOptions};
    use canonode::{GRat, Rat};
    let path = format!("{}/samples/regge_wheeler.ode", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).expect("sample exists");
    let red = reduce(&Input::Program(&text), &ReduceOptions::default()).expect("reduces");
    let g = |x: i64| GRat::real(Rat::int(x.into()));
    let opts = SpectrumOptions::new(2, vec![g(0), g(1), g(0), g(2), g(2)], (0, 7), 1e-10, None);
    let (_, setup) = qnm_recurrence(&red, &opts).expect("recurrence");
    let seeds: Vec<_> = {
        let est = barrier_estimates(&red, &opts, setup.horizon_value, canonode::numeric::SEED_ORDER).expect("barrier");
        (0..2).filter_map(|n| est(n).and_then(|b| b.series.seed()).map(|(w, _)| w)).collect()
    };
    let opts = SpectrumOptions { seeds, ..opts.clone() };
    c.bench_function("spectrum/schwarzschild_l2_n0-7_cf", |b| {
        b.iter(|| {
            let none = |_n: u32| None;
            let (modes, _) = qnm_modes(&red, &opts, &none).expect("modes");
            assert!(modes.iter().all(|m| m.root.converged));
            modes
        })
    });
}

/// The numeric part alone: the continued fractions of overtones 0..7 on
/// the already derived recurrence, each seeded from the previous ones.
fn bench_cf_only(c: &mut Criterion) {
    use canonode::numeric::{find_root, qnm_recurrence, try_numeric, SpectrumOptions};
    use canonode::{GRat, Rat};
    use num_complex::Complex64;
    let path = format!("{}/samples/regge_wheeler.ode", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).expect("sample exists");
    let red = reduce(&Input::Program(&text), &ReduceOptions::default()).expect("reduces");
    let g = |x: i64| GRat::real(Rat::int(x.into()));
    let opts = SpectrumOptions::new(2, vec![g(0), g(1), g(0), g(2), g(2)], (0, 7), 1e-10, None);
    let (rec, _) = qnm_recurrence(&red, &opts).expect("recurrence");
    let num = try_numeric(&rec, &opts.values, 2).expect("numeric");
    c.bench_function("cf/schwarzschild_l2_n0-7", |b| {
        b.iter(|| {
            let mut found: Vec<Complex64> = Vec::new();
            for n in 0..8usize {
                let seed = match found.len() {
                    0 => Complex64::new(0.3732, -0.0892),
                    1 => Complex64::new(0.3460, -0.2749),
                    k => found[k - 1] * 2.0 - found[k - 2],
                };
                let r = find_root(&num, n, seed, 1e-10, 64, 1 << 17);
                assert!(r.converged);
                found.push(r.omega);
            }
            found
        })
    });
}

criterion_group!(benches, bench, bench_spectrum, bench_cf_only);
criterion_main!(benches);
