//! Options that contradict each other or the scheme are refused with exit 2 and the reason,
//! instead of one silently winning.

use std::path::{Path, PathBuf};
use std::process::Output;

use assert_cmd::Command;

fn sample(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("samples")
        .join(name)
        .to_str()
        .unwrap()
        .to_string()
}

fn tapplan(dir: &Path, args: &[&str]) -> Output {
    Command::cargo_bin("tapplan")
        .unwrap()
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

fn refused(dir: &Path, args: &[&str], why: &str) {
    let o = tapplan(dir, args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert!(err.contains(why), "{args:?}: {err}");
}

fn files_in(dir: &Path) -> Vec<PathBuf> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect()
}

#[test]
fn hourly_and_json_to_one_place_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let s = sample("kessa-ridge-solar.yaml");
    refused(
        d,
        &["run", &s, "--hourly", "o.csv", "--json", "o.csv"],
        "--hourly and --json both name 'o.csv'",
    );
    refused(
        d,
        &["run", &s, "--hourly", "./o.csv", "--json", "o.csv"],
        "both name",
    );
    refused(
        d,
        &["run", &s, "--hourly", "-", "--json", "-"],
        "would mix CSV and JSON in one stream",
    );
    assert!(files_in(d).is_empty(), "nothing written");
}

#[test]
fn a_pump_type_given_twice_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    refused(
        dir.path(),
        &[
            "run",
            &sample("kessa-ridge-solar.yaml"),
            "--pumps",
            "SolarSub-9=1",
            "--pumps",
            "SolarSub-9=3",
        ],
        "--pumps names `SolarSub-9` twice (1 and 3 units)",
    );
}

#[test]
fn an_array_size_for_a_scheme_without_solar_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let s = sample("tolomba-market-generator.yaml");
    refused(
        dir.path(),
        &["run", &s, "--array-kwp", "5"],
        "--array-kwp: the scheme has no solar-driven pump",
    );
    refused(
        dir.path(),
        &["plan", &s, "-o", "p.pdf", "--array-kwp", "5"],
        "no solar-driven pump",
    );
    assert!(files_in(dir.path()).is_empty(), "no plan written");
}

#[test]
fn a_negative_tank_size_gets_the_range_not_a_tip_about_dashes() {
    let dir = tempfile::tempdir().unwrap();
    let o = tapplan(
        dir.path(),
        &["run", &sample("kessa-ridge-solar.yaml"), "--tank-m3", "-5"],
    );
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("--tank-m3 -5: give a tank capacity above 0"),
        "{err}"
    );
    assert!(!err.contains("-- -5"), "{err}");
}

/// `plan -o -` with a terminal as standard output (a pseudo-terminal from `script`).
#[cfg(target_os = "linux")]
#[test]
fn a_pdf_is_not_written_to_a_terminal() {
    if std::process::Command::new("script")
        .arg("--version")
        .output()
        .is_err()
    {
        eprintln!("`script` (util-linux) is not installed; skipped");
        return;
    }
    let bin = assert_cmd::cargo::cargo_bin("tapplan");
    let cmd = format!(
        "{} plan {} -o -",
        bin.display(),
        sample("kessa-ridge-solar.yaml")
    );
    let o = std::process::Command::new("script")
        .args(["-qec", &cmd, "/dev/null"])
        .output()
        .unwrap();
    let all = String::from_utf8_lossy(&o.stdout);
    assert!(
        all.contains("would write the PDF's bytes to the terminal"),
        "{all}"
    );
    assert!(!all.contains("%PDF"), "PDF bytes reached the terminal");
    assert_eq!(o.status.code(), Some(2), "{all}");
}
