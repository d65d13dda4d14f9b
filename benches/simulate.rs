//! Speed of the hourly engine: one simulated year (`run_year`) for every sample, and the
//! 30-weather-year ensemble (`run_ensemble`) for the solar samples.
//! Targets: ≤ 1 ms per simulated year, ≤ 30 ms per 30-year ensemble (release build).

use std::hint::black_box;
use std::path::Path;

use criterion::{Criterion, criterion_group, criterion_main};
use tapplan::simulate::{Design, Model};

fn samples() -> Vec<(String, Model, Design)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut paths: Vec<_> = std::fs::read_dir(dir)
        .expect("samples/")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().and_then(|e| e.to_str()) == Some("yaml"))
        .collect();
    paths.sort();
    paths
        .into_iter()
        .map(|p| {
            let s = tapplan::scheme::load_file(&p).expect("sample loads").scheme;
            let d = Design::from_scheme(&s).expect("sample states a design");
            let m = Model::new(&s).expect("model");
            let name = p.file_stem().unwrap().to_string_lossy().into_owned();
            (name, m, d)
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let all = samples();
    let mut g = c.benchmark_group("run_year");
    for (name, m, d) in &all {
        g.bench_function(name.as_str(), |b| {
            b.iter(|| {
                black_box(m.simulate_year(black_box(d), 0, 0, false, &Default::default(), None))
            })
        });
    }
    g.finish();
    let mut g = c.benchmark_group("run_ensemble");
    g.sample_size(20);
    for (name, m, d) in &all {
        if !m.scheme.uses_solar() {
            continue;
        }
        g.bench_function(name.as_str(), |b| {
            b.iter(|| {
                // the model remembers years: forget them so every iteration runs all 30
                m.forget_years();
                black_box(m.run_ensemble(black_box(d), 0))
            })
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
