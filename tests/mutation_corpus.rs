//! Mutation corpus: every sample with one number changed (to 0, −1, 1e12, NaN or the text
//! `abc`) or one key misspelt (two letters swapped, or an `x` appended), made line by line so
//! line numbers stay those of the sample. Each mutated file goes through `load_str` and, when it
//! loads, `Model::new` and one simulated year of its design (synthetic weather clamped to one
//! year). Every case must end cleanly — loaded, or refused with a message that names the
//! changed field (its path, its key or its line) — never with a panic, and within a time limit.

#[path = "support/load_and_simulate.rs"]
mod harness;
#[path = "support/mutate.rs"]
mod mutate;

use std::path::{Path, PathBuf};
use std::time::Duration;

use tapplan::error::SchemeError;

/// Longest one case may take in a debug build.
const LIMIT: Duration = Duration::from_secs(20);

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

/// How one mutated file ended.
enum End {
    Refused(SchemeError),
    Ran(harness::Outcome),
}

/// Loads and simulates on its own thread; Err on a panic or a time-out.
fn run_case(text: String, label: String) -> Result<End, String> {
    let (tx, rx) = std::sync::mpsc::channel();
    let base = root().join("samples");
    std::thread::spawn(move || {
        let r = std::panic::catch_unwind(move || {
            match tapplan::scheme::load_str(&text, &label, &base) {
                Ok(l) => End::Ran(harness::simulate_loaded(l.scheme)),
                Err(e) => End::Refused(e),
            }
        });
        let _ = tx.send(r.map_err(|e| {
            e.downcast_ref::<String>()
                .cloned()
                .or_else(|| e.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_else(|| "panic".into())
        }));
    });
    match rx.recv_timeout(LIMIT) {
        Ok(Ok(end)) => Ok(end),
        Ok(Err(msg)) => Err(format!("panicked: {msg}")),
        Err(_) => Err(format!("no result within {LIMIT:?}")),
    }
}

/// True when some problem names the field at `site` (its path, a parent path on its line or
/// naming its key, or its line).
fn names_field(e: &SchemeError, site: &mutate::Site) -> bool {
    let line = site.line + 1;
    let key = last_key(&site.path);
    e.problems.iter().any(|p| {
        p.line == Some(line)
            || (!p.field.is_empty()
                && (p.field == site.path
                    || site.path.starts_with(&format!("{}.", p.field))
                    || site.path.starts_with(&format!("{}[", p.field))))
            || p.message.contains(&format!("`{key}`"))
            || p.message.contains(&site.path)
    })
}

/// The last key of a field path (`pumps[0].curve[2].head_m` → `head_m`, `a.b[3]` → `b`).
fn last_key(path: &str) -> &str {
    let k = path.rsplit('.').next().unwrap_or(path);
    k.split('[').next().unwrap_or(k)
}

#[test]
fn mutated_samples_end_cleanly_with_the_field_named() {
    let mut files: Vec<PathBuf> = std::fs::read_dir(root().join("samples"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "yaml"))
        .collect();
    files.sort();
    let mut tried = 0usize;
    let mut loaded = 0usize;
    let mut simulated = 0usize;
    let mut failures: Vec<String> = Vec::new();
    for f in &files {
        let name = f.file_name().unwrap().to_string_lossy().into_owned();
        let text = std::fs::read_to_string(f).unwrap();
        let sites = mutate::sites(&text);
        assert!(sites.numbers.len() > 20 && sites.keys.len() > 40, "{name}");
        // value mutations
        for site in &sites.numbers {
            for with in ["0", "-1", "1e12", ".nan", "abc"] {
                tried += 1;
                let label = format!("{name}[{}={with}]", site.path);
                let m = mutate::replace(&text, site, with);
                match run_case(m, label.clone()) {
                    Err(why) => failures.push(format!("{label}: {why}")),
                    Ok(End::Refused(e)) => {
                        if !names_field(&e, site) {
                            failures.push(format!(
                                "{label}: the refusal does not name the field:\n{e}"
                            ));
                        }
                    }
                    Ok(End::Ran(o)) => {
                        loaded += 1;
                        match o {
                            harness::Outcome::Simulated { .. } => simulated += 1,
                            harness::Outcome::ModelRefused(msg)
                            | harness::Outcome::NoDesign(msg) => {
                                let key = last_key(&site.path);
                                if !msg.contains(key) && !msg.contains(&site.path) {
                                    failures.push(format!(
                                        "{label}: loaded, then refused without naming the field: {msg}"
                                    ));
                                }
                            }
                            harness::Outcome::Refused(msg) => {
                                failures.push(format!("{label}: unexpected refusal {msg}"))
                            }
                        }
                    }
                }
            }
        }
        // key misspellings: must be refused, naming the misspelt key
        for site in &sites.keys {
            for bad in [mutate::swap_letters(&site.text), format!("{}x", site.text)] {
                tried += 1;
                let label = format!("{name}[{}->{bad}]", site.path);
                let m = mutate::replace(&text, site, &bad);
                match run_case(m, label.clone()) {
                    Err(why) => failures.push(format!("{label}: {why}")),
                    Ok(End::Refused(e)) => {
                        let named = e.problems.iter().any(|p| {
                            p.message.contains(&format!("`{bad}`")) && p.line == Some(site.line + 1)
                        });
                        if !named {
                            failures.push(format!(
                                "{label}: the refusal does not name `{bad}` on line {}:\n{e}",
                                site.line + 1
                            ));
                        }
                    }
                    Ok(End::Ran(_)) => {
                        failures.push(format!("{label}: a misspelt key was accepted"))
                    }
                }
            }
        }
    }
    eprintln!(
        "mutation corpus: {tried} mutated files tried, {loaded} loaded, {simulated} simulated one year"
    );
    assert!(tried > 1000, "{tried}");
    assert!(
        failures.is_empty(),
        "{} of {tried} mutated files failed:\n{}",
        failures.len(),
        failures.join("\n")
    );
}
