//! Keeps the "Scheme file format" reference in README.md true to the loader.
//!
//! The documented keys are the backticked paths in the first column of the reference tables
//! (and the `### \`section\`` headings). They are compared with
//! (a) every key used in the samples and templates, and
//! (b) every key the loader knows, found by asking the loader itself: a key it does not know
//!     (`zz_unknown_key`) is put in each place a mapping can go, and the "keys allowed here:"
//!     list in `tapplan check`'s message is read back. Each allowed key is then probed in turn
//!     (as a mapping, then as a list of mappings) to find the sections below it.
//!
//! Paths are dotted without list indices: `pumps.curve.head_m`.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use std::time::Duration;

use assert_cmd::Command;
use serde_yaml::{Mapping, Value};

const PROBE: &str = "zz_unknown_key";

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Keys documented in README.md's "Scheme file format" section.
fn documented() -> BTreeSet<String> {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let start = readme
        .find("\n## Scheme file format")
        .expect("README.md has a `## Scheme file format` section");
    let rest = &readme[start + 1..];
    let end = rest[3..].find("\n## ").map_or(rest.len(), |i| i + 3);
    let mut keys = BTreeSet::new();
    for line in rest[..end].lines() {
        let cell = if let Some(h) = line.strip_prefix("### ") {
            h
        } else if let Some(row) = line.strip_prefix("| ") {
            row.split(" |").next().unwrap_or("")
        } else {
            continue;
        };
        if let Some(key) = cell.split('`').nth(1) {
            keys.insert(key.replace("[]", ""));
        }
    }
    keys
}

/// Every mapping key path in a YAML value.
fn walk(v: &Value, prefix: &str, out: &mut BTreeSet<String>) {
    match v {
        Value::Mapping(m) => {
            for (k, v) in m {
                let k = k.as_str().expect("keys are strings");
                let p = if prefix.is_empty() {
                    k.to_string()
                } else {
                    format!("{prefix}.{k}")
                };
                out.insert(p.clone());
                walk(v, &p, out);
            }
        }
        Value::Sequence(s) => s.iter().for_each(|x| walk(x, prefix, out)),
        _ => {}
    }
}

fn used_in_examples() -> BTreeMap<String, BTreeSet<String>> {
    let mut out = BTreeMap::new();
    for dir in ["samples", "templates"] {
        for e in std::fs::read_dir(root().join(dir)).unwrap() {
            let p = e.unwrap().path();
            if p.extension().is_none_or(|x| x != "yaml") {
                continue;
            }
            let v: Value = serde_yaml::from_str(&std::fs::read_to_string(&p).unwrap()).unwrap();
            let mut keys = BTreeSet::new();
            walk(&v, "", &mut keys);
            out.insert(p.display().to_string(), keys);
        }
    }
    out
}

/// One step of a probe path: a mapping key, or "the first item of a list".
#[derive(Clone, Debug)]
enum Step {
    Key(String),
    Item,
}

/// A document with `{zz_unknown_key: 1}` at `path`.
fn probe_doc(path: &[Step]) -> Value {
    let mut leaf = Mapping::new();
    leaf.insert(Value::from(PROBE), Value::from(1));
    let mut v = Value::Mapping(leaf);
    for s in path.iter().rev() {
        v = match s {
            Step::Key(k) => {
                let mut m = Mapping::new();
                m.insert(Value::from(k.as_str()), v);
                Value::Mapping(m)
            }
            Step::Item => Value::Sequence(vec![v]),
        };
    }
    v
}

fn dotted(path: &[Step]) -> String {
    path.iter()
        .filter_map(|s| match s {
            Step::Key(k) => Some(k.as_str()),
            Step::Item => None,
        })
        .collect::<Vec<_>>()
        .join(".")
}

/// Runs `tapplan check` on one probe document per path (all in one run) and returns, per
/// path, the keys allowed where the probe was put — `None` when the probe did not land in a
/// mapping with known keys (the place holds a number, a word, a list of numbers …).
fn allowed_keys(paths: &[Vec<Step>]) -> Vec<Option<Vec<String>>> {
    let dir = tempfile::tempdir().unwrap();
    let names: Vec<String> = (0..paths.len()).map(|i| format!("p{i}.yaml")).collect();
    for (p, n) in paths.iter().zip(&names) {
        let text = serde_yaml::to_string(&probe_doc(p)).unwrap();
        std::fs::write(dir.path().join(n), text).unwrap();
    }
    let out = Command::cargo_bin("tapplan")
        .unwrap()
        .current_dir(dir.path())
        .arg("check")
        .args(&names)
        .timeout(Duration::from_secs(120))
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!stderr.contains("panicked"), "{stderr}");
    names
        .iter()
        .map(|n| {
            let prefix = format!("  {n}");
            stderr
                .lines()
                .filter(|l| l.starts_with(&prefix))
                .find(|l| l.contains(&format!("unknown key `{PROBE}`")))
                .map(|l| {
                    let list = l
                        .split("keys allowed here: ")
                        .nth(1)
                        .expect("the unknown-key message lists the allowed keys");
                    list.split(", ").map(|k| k.trim().to_string()).collect()
                })
        })
        .collect()
}

/// Every key path the loader accepts, discovered breadth-first from the top of the file.
fn loader_keys() -> BTreeSet<String> {
    let mut known = BTreeSet::new();
    let mut level: Vec<Vec<Step>> = vec![Vec::new()];
    let top = allowed_keys(&level);
    let mut structs: Vec<(Vec<Step>, Vec<String>)> = vec![(
        Vec::new(),
        top[0].clone().expect("the top level is a mapping"),
    )];
    while !structs.is_empty() {
        level.clear();
        for (path, keys) in &structs {
            for k in keys {
                let mut p = path.clone();
                p.push(Step::Key(k.clone()));
                known.insert(dotted(&p));
                level.push(p.clone());
                p.push(Step::Item);
                level.push(p);
            }
        }
        let answers = allowed_keys(&level);
        let mut next = Vec::new();
        let mut seen = BTreeSet::new();
        for (p, a) in level.iter().zip(answers) {
            if let Some(keys) = a {
                // a mapping and a list of mappings cannot both be right for one key
                if seen.insert(dotted(p)) {
                    next.push((p.clone(), keys));
                }
            }
        }
        structs = next;
    }
    known
}

#[test]
fn every_key_in_samples_and_templates_is_documented() {
    let doc = documented();
    let mut missing = Vec::new();
    for (file, keys) in used_in_examples() {
        for k in keys.difference(&doc) {
            missing.push(format!("{file}: `{k}`"));
        }
    }
    assert!(
        missing.is_empty(),
        "keys used but not in README.md's format reference:\n{}",
        missing.join("\n")
    );
}

#[test]
fn reference_matches_the_keys_the_loader_knows() {
    let doc = documented();
    let loader = loader_keys();
    // The probe must have reached deep sections, or this test proves nothing.
    for k in [
        "scheme.plan_date",
        "demand.other_users.grows_with_population",
        "drives.grid.supply_hours.end_hour",
        "pumps.curve.efficiency_percent",
        "tank.capacity_range_m3.step_m3",
        "declared.demand_met_percent",
    ] {
        assert!(
            loader.contains(k),
            "loader probe did not find `{k}`: {loader:?}"
        );
    }
    let undocumented: Vec<_> = loader.difference(&doc).collect();
    let unknown: Vec<_> = doc.difference(&loader).collect();
    assert!(
        undocumented.is_empty(),
        "keys the loader accepts but README.md does not document: {undocumented:?}"
    );
    assert!(
        unknown.is_empty(),
        "keys README.md documents but the loader refuses: {unknown:?}"
    );
}
