#![allow(dead_code)] // each user takes a part
//! The bundled samples, listed or loaded and prepared, for tests that run every one of them.

use std::path::{Path, PathBuf};

use tapplan::scheme::Scheme;
use tapplan::simulate::{Design, Model};

/// The paths of every `samples/*.yaml`, in name order.
pub fn sample_paths() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().and_then(|x| x.to_str()) == Some("yaml"))
        .collect();
    paths.sort();
    paths
}

/// Every `samples/*.yaml` in name order: its path, scheme, prepared model and the file's own
/// design.
pub fn every_sample() -> Vec<(PathBuf, Scheme, Model, Design)> {
    sample_paths()
        .into_iter()
        .map(|p| {
            let s = tapplan::scheme::load_file(&p).unwrap().scheme;
            let m = Model::new(&s).unwrap();
            let d = Design::from_scheme(&s).unwrap();
            (p, s, m, d)
        })
        .collect()
}
