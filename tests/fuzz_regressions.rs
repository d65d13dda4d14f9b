//! Runs the fuzz target's load-and-simulate path on every input kept in
//! `tests/data/fuzz-regressions/` (each once made the fuzzer find a crash, hang or OOM), so CI
//! checks them without fuzzing. Each must end cleanly within the time limit; the seeds of the
//! fuzz corpus (the samples and templates) are run too, as the fuzzer starts from them.

#[path = "support/load_and_simulate.rs"]
mod harness;

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// Longest one input may take in a debug build.
const LIMIT: Duration = Duration::from_secs(20);

fn files_in(dir: &Path, ext: Option<&str>) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_file())
        .filter(|p| ext.is_none_or(|x| p.extension().is_some_and(|e| e == x)))
        .filter(|p| p.file_name().is_some_and(|n| n != "README.md"))
        .collect();
    v.sort();
    v
}

/// Runs one input on its own thread; fails on a panic or when it takes longer than LIMIT.
fn run_one(path: &Path) -> harness::Outcome {
    let bytes = std::fs::read(path).unwrap();
    let (tx, rx) = std::sync::mpsc::channel();
    let t = Instant::now();
    std::thread::spawn(move || {
        let r = std::panic::catch_unwind(|| harness::load_and_simulate(&bytes));
        let _ = tx.send(r.map_err(|e| {
            e.downcast_ref::<String>()
                .cloned()
                .or_else(|| e.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_default()
        }));
    });
    match rx.recv_timeout(LIMIT) {
        Ok(Ok(o)) => o,
        Ok(Err(msg)) => panic!("{}: panicked: {msg}", path.display()),
        Err(_) => panic!(
            "{}: no result within {LIMIT:?} ({:?})",
            path.display(),
            t.elapsed()
        ),
    }
}

#[test]
fn every_fuzz_regression_input_ends_cleanly() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/fuzz-regressions");
    let files = files_in(&dir, None);
    assert!(
        !files.is_empty(),
        "no regression inputs in {}",
        dir.display()
    );
    for f in &files {
        let o = run_one(f);
        eprintln!("{}: {o:?}", f.file_name().unwrap().to_string_lossy());
    }
}

#[test]
fn fuzz_seeds_load_and_simulate() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for dir in ["samples", "templates"] {
        for f in files_in(&root.join(dir), Some("yaml")) {
            match run_one(&f) {
                harness::Outcome::Simulated { .. } | harness::Outcome::NoDesign(_) => {}
                o => panic!("{}: a seed should load: {o:?}", f.display()),
            }
        }
    }
}
