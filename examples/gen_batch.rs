//! Writes N variants of the sample schemes into a folder, for timing `tapplan check` on a batch.
//!
//! Usage: `cargo run --release --example gen_batch -- N OUT_DIR`
//! Then:  `time target/release/tapplan check OUT_DIR/*.yaml > /dev/null`
//!
//! Each file is one of the samples (in turn) with its population, tank size and weather seed
//! varied by a fixed-seed generator, so the batch is the same on every run.

use std::path::PathBuf;

use serde_yaml::Value;

/// A small fixed-seed generator (SplitMix64), so the batch never depends on the clock.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in [lo, hi).
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn scale(v: &mut Value, path: &[&str], factor: f64, round: bool) {
    let mut cur = v;
    for k in path {
        match cur.get_mut(*k) {
            Some(x) => cur = x,
            None => return,
        }
    }
    if let Some(x) = cur.as_f64() {
        let y = x * factor;
        *cur = Value::from(if round { y.round() } else { y });
    }
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    if args.len() != 3 {
        eprintln!("usage: gen_batch N OUT_DIR");
        std::process::exit(2);
    }
    let n: usize = args[1].parse()?;
    let out = PathBuf::from(&args[2]);
    std::fs::create_dir_all(&out)?;
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut samples: Vec<(String, Value)> = Vec::new();
    let mut names: Vec<PathBuf> = std::fs::read_dir(&root)?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .collect();
    names.sort();
    for p in names {
        let stem = p.file_stem().unwrap().to_string_lossy().into_owned();
        samples.push((stem, serde_yaml::from_str(&std::fs::read_to_string(&p)?)?));
    }
    let mut rng = Rng(20_261_120);
    for i in 0..n {
        let (stem, base) = &samples[i % samples.len()];
        let mut v = base.clone();
        scale(&mut v, &["demand", "population"], rng.range(0.8, 1.2), true);
        scale(&mut v, &["tank", "capacity_m3"], rng.range(0.8, 1.5), true);
        if let Some(w) = v.get_mut("weather")
            && let Some(seed) = w.get_mut("seed")
        {
            *seed = Value::from(rng.next() % 1_000_000);
        }
        let text = serde_yaml::to_string(&v)?;
        std::fs::write(out.join(format!("{i:04}-{stem}.yaml")), text)?;
    }
    eprintln!("wrote {n} scheme files to {}", out.display());
    Ok(())
}
