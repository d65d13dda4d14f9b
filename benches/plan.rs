//! End-to-end time of `tapplan plan` on the largest sample (about 6,000 people): load and
//! validate the scheme, size it, and make the PDF bytes (target: at most 300 ms).

use std::path::Path;

use criterion::{Criterion, criterion_group, criterion_main};
use tapplan::output::pdf::plan::run_plan;

fn plan_largest_sample(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/tolomba-market-generator.yaml");
    let bytes = std::fs::read(&path).expect("sample exists");
    let mut g = c.benchmark_group("plan");
    g.sample_size(10);
    g.bench_function("tolomba-market-generator end to end", |b| {
        b.iter(|| {
            let loaded = tapplan::scheme::load_bytes(&bytes, "tolomba", path.parent().unwrap())
                .expect("valid sample");
            let run = run_plan(
                &loaded,
                &bytes,
                "tolomba-market-generator.yaml",
                None,
                &tapplan::rules::RuleSet::defaults(),
                None,
            )
            .expect("plans");
            std::hint::black_box(run.pdf.len())
        })
    });
    g.finish();
}

criterion_group!(benches, plan_largest_sample);
criterion_main!(benches);
