//! Speed of the whole least-cost search (`size`, with alternatives, front, staging and
//! sensitivity) for every sample. Targets (release build, this 2-core machine): ≤ 100 ms per
//! sample for the full search (the least-cost design issue); the search with a 30-year weather
//! ensemble in ≤ 1 s per sample (the varying-weather issue). The solar samples meet the
//! second and not yet the first.

use std::hint::black_box;
use std::path::Path;

use criterion::{Criterion, criterion_group, criterion_main};
use tapplan::simulate::Model;

fn bench(c: &mut Criterion) {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut paths: Vec<_> = std::fs::read_dir(dir)
        .expect("samples/")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().and_then(|e| e.to_str()) == Some("yaml"))
        .collect();
    paths.sort();
    let mut g = c.benchmark_group("size");
    g.sample_size(10);
    for p in paths {
        let s = tapplan::scheme::load_file(&p).expect("sample loads").scheme;
        let name = p.file_stem().unwrap().to_string_lossy().into_owned();
        g.bench_function(name.as_str(), |b| {
            b.iter(|| {
                // a fresh model each time: the search's own cost, weather and tables included
                let m = Model::new(black_box(&s)).expect("model");
                black_box(tapplan::sizing::size_with_model(&m).expect("sized"))
            })
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
