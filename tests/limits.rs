//! Limits that keep bad or hostile input cheap: file size, alias expansion ("billion laughs"),
//! nesting depth, non-finite and absurd numbers in every numeric field, non-UTF-8 text, and the
//! size of a sizing search. Each must be refused quickly with a message saying what to change.

#[path = "support/mutate.rs"]
mod mutate;

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use assert_cmd::Command;
use tapplan::scheme::{load_bytes, load_str};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn sample(name: &str) -> String {
    std::fs::read_to_string(root().join("samples").join(name)).unwrap()
}

fn samples() -> Vec<(String, String)> {
    let mut v: Vec<(String, String)> = std::fs::read_dir(root().join("samples"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "yaml"))
        .map(|p| {
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                std::fs::read_to_string(&p).unwrap(),
            )
        })
        .collect();
    v.sort();
    v
}

/// Loads bytes and returns the error text, failing if they load or take longer than `limit`.
fn refused(bytes: &[u8], limit: Duration) -> String {
    let t = Instant::now();
    let r = load_bytes(bytes, "limit.yaml", &root());
    let took = t.elapsed();
    assert!(took < limit, "took {took:?}, limit {limit:?}");
    match r {
        Ok(_) => panic!("input was accepted"),
        Err(e) => e.to_string(),
    }
}

#[test]
fn file_over_one_mib_is_refused_with_the_limit_named() {
    let mut text = sample("kessa-ridge-solar.yaml");
    while text.len() <= 1024 * 1024 {
        text.push_str("# padding comment line to push the file over the size limit\n");
    }
    let msg = refused(text.as_bytes(), Duration::from_secs(2));
    assert!(msg.contains("at most 1048576 bytes (1 MiB)"), "{msg}");
    // the same through the binary, from a file on disk
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("big.yaml");
    std::fs::write(&p, &text).unwrap();
    let out = Command::cargo_bin("tapplan")
        .unwrap()
        .arg("check")
        .arg(&p)
        .timeout(Duration::from_secs(20))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("at most 1048576 bytes"), "{err}");
}

/// The classic exponential alias file: ten levels, each naming the previous nine times
/// (10⁹ leaves when expanded).
fn billion_laughs() -> String {
    let mut t = String::from("a0: &a0 [\"lol\"]\n");
    for i in 1..=9 {
        let prev = format!("*a{}", i - 1);
        let items = [prev.as_str(); 9].join(", ");
        t.push_str(&format!("a{i}: &a{i} [{items}]\n"));
    }
    t.push_str("scheme: *a9\n");
    t
}

#[test]
fn billion_laughs_is_refused_quickly_without_expanding() {
    let msg = refused(billion_laughs().as_bytes(), Duration::from_secs(2));
    assert!(msg.contains("aliases"), "{msg}");
    assert!(msg.contains("at most 10000"), "{msg}");
}

#[test]
fn quadratic_alias_file_is_refused_quickly() {
    // one large anchored list, then as many aliases to it as fit in 1 MiB: linear in the
    // file's events per alias, so a per-alias count alone would let it expand ~10¹⁰ values
    let mut t = String::from("big: &big [");
    t.push_str(&vec!["1"; 150_000].join(","));
    t.push_str("]\nmany: [");
    t.push_str(&vec!["*big"; 130_000].join(","));
    t.push_str("]\n");
    assert!(t.len() < 1024 * 1024);
    let msg = refused(t.as_bytes(), Duration::from_secs(10));
    assert!(msg.contains("aliases"), "{msg}");
}

#[test]
fn a_few_aliases_in_a_real_scheme_still_load() {
    // reusing a list through an anchor is ordinary YAML and stays allowed
    let text = sample("kessa-ridge-solar.yaml")
        .replace(
            "  monthly_factors: [1.10,",
            "  monthly_factors: &months [1.10,",
        )
        .replace(
            "    air_temperature_c: [24, 24, 23, 22, 21, 19, 19, 20, 22, 24, 25, 24]",
            "    air_temperature_c: &temps [24, 24, 23, 22, 21, 19, 19, 20, 22, 24, 25, 24]",
        );
    assert!(text.contains("&months") && text.contains("&temps"));
    assert!(load_str(&text, "alias.yaml", &root()).is_ok());
    // the demand's monthly factors reused for the stream's flow factors through an alias
    let list = "[0.7, 0.6, 0.8, 1.2, 1.4, 1.1, 0.9, 0.8, 0.9, 1.1, 1.3, 1.0]";
    let ram = sample("wendi-hamlet-ram.yaml")
        .replace(
            "  daily_profile: communal_taps\n",
            &format!("  daily_profile: communal_taps\n  monthly_factors: &months {list}\n"),
        )
        .replace(
            &format!("      monthly_flow_factors: {list}"),
            "      monthly_flow_factors: *months",
        );
    assert!(ram.contains("*months") && ram.contains("&months"));
    let l = load_str(&ram, "alias2.yaml", &root()).unwrap();
    assert_eq!(l.scheme.demand.monthly_factors[4], 1.4);
}

#[test]
fn nesting_beyond_the_limit_is_refused() {
    let depth = 200;
    let mut t = String::from("scheme: ");
    t.push_str(&"[".repeat(depth));
    t.push_str(&"]".repeat(depth));
    t.push('\n');
    let msg = refused(t.as_bytes(), Duration::from_secs(2));
    assert!(
        msg.contains("nested") || msg.contains("recursion limit"),
        "{msg}"
    );
}

/// Files of just under 1 MiB nested as deeply as their size allows, in every shape the YAML
/// readers nest: flow sequences and mappings, block sequences on one line, indented block
/// mappings, and brackets after a syntax error. Before nesting was refused while reading, the
/// time grew with the square of the depth (64k levels took about 9 s, a whole MiB about 20
/// minutes). The bound is generous for a debug build on a busy machine; the release figure is
/// in DEVELOPERS.md.
#[test]
fn a_mebibyte_nested_as_deep_as_it_can_be_is_refused_quickly() {
    const MIB: usize = 1024 * 1024;
    let fill = |head: &str, open: &str, mid: &str, close: &str| {
        let n = (MIB - head.len() - mid.len() - 2) / (open.len() + close.len());
        format!("{head}{}{mid}{}\n", open.repeat(n), close.repeat(n))
    };
    let mut indented = String::from("scheme:\n");
    let mut level = 1;
    while indented.len() + 2 * level + 8 < MIB {
        indented.push_str(&" ".repeat(2 * level));
        indented.push_str(&format!("k{level}:\n"));
        level += 1;
    }
    let cases = [
        ("flow sequences", fill("scheme: ", "[", "", "]")),
        ("flow mappings", fill("scheme: ", "{a: ", "1", "}")),
        (
            "block sequence on one line",
            fill("scheme:\n  ", "- ", "x", ""),
        ),
        ("indented mappings", indented),
        (
            "brackets after a syntax error",
            fill("a: b: c\nscheme: ", "[", "", ""),
        ),
    ];
    for (what, text) in cases {
        assert!(text.len() <= MIB, "{what}: {} bytes", text.len());
        let msg = refused(text.as_bytes(), Duration::from_secs(5));
        assert!(msg.contains("nested"), "{what}: {msg}");
    }
}

#[test]
fn non_utf8_text_is_refused_with_the_line() {
    let mut bytes = b"scheme:\n  name: caf".to_vec();
    bytes.push(0xe9); // Latin-1 e-acute, not UTF-8
    bytes.extend_from_slice(b"\n");
    let msg = refused(&bytes, Duration::from_secs(2));
    assert!(msg.contains("not UTF-8"), "{msg}");
    assert!(msg.contains("limit.yaml:2"), "{msg}");
}

/// Every numeric field of every sample, set to NaN, ±infinity or ±1e308, must be refused by
/// validation with a problem on that field (its path or its line).
#[test]
fn non_finite_and_huge_numbers_are_refused_in_every_numeric_field() {
    let mut tried = 0;
    for (name, text) in samples() {
        let sites = mutate::sites(&text);
        assert!(sites.numbers.len() > 20, "{name}: too few numbers found");
        for site in &sites.numbers {
            for bad in [".nan", ".inf", "-.inf", "1e308", "-1e308"] {
                let m = mutate::replace(&text, site, bad);
                let label = format!("{name}+{}={bad}", site.path);
                tried += 1;
                let e = match load_str(&m, &label, &root().join("samples")) {
                    Ok(_) => panic!("{label}: accepted"),
                    Err(e) => e,
                };
                let line = site.line + 1;
                let named = e.problems.iter().any(|p| {
                    p.line == Some(line)
                        || (!p.field.is_empty()
                            && (p.field == site.path || site.path.starts_with(&p.field)))
                });
                assert!(
                    named,
                    "{label}: no problem names the field or line {line}:\n{e}"
                );
            }
        }
    }
    assert!(tried > 500, "{tried}");
}

/// A sizing search bigger than the bound is refused before it starts (exit 2), with the
/// estimate and what to narrow.
#[test]
fn oversized_search_is_refused_before_it_runs() {
    // 2 pump types × up to 20 units (21² − 1 = 440 sets), 301 array sizes and 4 tank sizes:
    // 529,760 designs (under the 2,000,000 design limit), but 440 × 301 × 3 bisection steps ×
    // 30 weather years ≈ 11.9 million year-simulations
    let text = sample("kessa-ridge-solar.yaml")
        .replace(
            "capacity_range_m3: {min_m3: 10, max_m3: 400, step_m3: 5}",
            "capacity_range_m3: {min_m3: 10, max_m3: 400, step_m3: 100}",
        )
        .replace(
            "array_range_kwp: {min_kwp: 3.0, max_kwp: 18.0, module_kwp: 0.5}",
            "array_range_kwp: {min_kwp: 3.0, max_kwp: 153.0, module_kwp: 0.5}",
        )
        .replace("    max_units: 3\n", "    max_units: 20\n");
    let second_pump = {
        let start = text.find("  - name: SolarSub-9").unwrap();
        let end = text.find("\nrising_main:").unwrap();
        text[start..end].replace("SolarSub-9", "SolarSub-9b")
    };
    let text = text.replace("\nrising_main:", &format!("{second_pump}\nrising_main:"));
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("big-search.yaml");
    std::fs::write(&p, &text).unwrap();
    assert!(load_str(&text, "big-search.yaml", &root()).is_ok());
    let t = Instant::now();
    let out = Command::cargo_bin("tapplan")
        .unwrap()
        .arg("size")
        .arg(&p)
        .timeout(Duration::from_secs(60))
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("ensemble checks"), "{err}");
    // the size of the search is said up front
    assert!(
        err.contains(
            "large search: 440 pump sets × 301 array sizes × 4 tank sizes = 529760 designs"
        ),
        "{err}"
    );
    assert!(err.contains("narrow"), "{err}");
    assert!(t.elapsed() < Duration::from_secs(30), "{:?}", t.elapsed());
}
