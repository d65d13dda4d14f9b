//! The command line as a user meets it: the bundled samples pass `check`, every template
//! written by `new` passes `check`, `new` never overwrites by accident, and `--help` /
//! `--version` work everywhere with the caution text shown.

use std::path::Path;
use std::time::Duration;

use assert_cmd::Command;
use predicates::prelude::*;

const TEMPLATES: [&str; 5] = ["solar", "generator", "ram", "hand", "oscillating"];
/// Subcommands that exist today. The lead adds run, size, plan, verify and rules here as they land.
const SUBCOMMANDS: [&str; 7] = ["new", "check", "rules", "run", "size", "plan", "verify"];

fn tapplan() -> Command {
    let mut c = Command::cargo_bin("tapplan").unwrap();
    c.timeout(Duration::from_secs(60));
    c
}

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn all_samples_check_clean() {
    let mut samples: Vec<String> = std::fs::read_dir(root().join("samples"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .map(|p| p.display().to_string())
        .collect();
    samples.sort();
    assert!(samples.len() >= 4, "expected the four bundled samples");
    tapplan()
        .arg("check")
        .args(&samples)
        .assert()
        .code(0)
        .stdout(predicate::str::contains(": valid").count(samples.len()));
}

#[test]
fn every_template_written_by_new_checks_clean_and_runs() {
    for t in TEMPLATES {
        let dir = tempfile::tempdir().unwrap();
        tapplan()
            .current_dir(dir.path())
            .args(["new", "x.yaml", "--template", t])
            .assert()
            .code(0);
        let text = std::fs::read_to_string(dir.path().join("x.yaml")).unwrap();
        assert!(
            text.contains("INVENTED PLACEHOLDER"),
            "template {t} must say its numbers are placeholders"
        );
        tapplan()
            .current_dir(dir.path())
            .args(["check", "x.yaml"])
            .assert()
            .code(0)
            .stdout(predicate::str::contains("x.yaml: valid"));
        // the template's own design runs as written (the hand template's solar unit has its
        // array size)
        tapplan()
            .current_dir(dir.path())
            .args(["run", "x.yaml", "--quiet"])
            .assert()
            .code(0)
            .stdout(predicate::str::contains(": shortfall "));
    }
}

/// Runs tapplan with `args` in `dir`, reads the first bytes of its standard output and closes
/// the pipe; returns the exit status and standard error.
fn with_reader_gone(dir: &Path, args: &[&str]) -> (Option<i32>, String) {
    use std::io::Read;
    use std::process::{Command as Std, Stdio};
    let mut child = Std::new(env!("CARGO_BIN_EXE_tapplan"))
        .current_dir(dir)
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = [0u8; 16];
    child.stdout.take().unwrap().read_exact(&mut first).unwrap();
    // the read end is dropped here
    let out = child.wait_with_output().unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// A reader that stops early (`tapplan run … --hourly - | head`) ends tapplan quietly: no
/// panic, no error, and the exit status of the command's own outcome. The outputs (an
/// 8,760-row hourly CSV; 100 files checked) are far larger than a pipe's buffer, so the writes
/// after the reader has gone surely fail.
#[test]
fn a_closed_pipe_ends_quietly() {
    let (code, stderr) = with_reader_gone(
        root(),
        &[
            "run",
            "samples/tolomba-market-generator.yaml",
            "--hourly",
            "-",
        ],
    );
    assert_eq!(code, Some(0), "stderr: {stderr}");
    assert!(!stderr.contains("panicked"), "stderr: {stderr}");
    assert!(!stderr.contains("error"), "stderr: {stderr}");

    // a check that fails still says so in its status (1), not 0
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(root().join("samples/tolomba-market-generator.yaml"))
        .unwrap()
        .replace("capacity_m3: 100", "capacity_m3: 25");
    assert!(
        text.contains("capacity_m3: 25"),
        "a tank far too small fails the target"
    );
    std::fs::write(dir.path().join("strict.yaml"), text).unwrap();
    tapplan()
        .current_dir(dir.path())
        .args(["check", "strict.yaml"])
        .assert()
        .code(1);
    let mut args = vec!["check"];
    args.extend(std::iter::repeat_n("strict.yaml", 100));
    let (code, stderr) = with_reader_gone(dir.path(), &args);
    assert_eq!(code, Some(1), "stderr: {stderr}");
    assert!(!stderr.contains("panicked"), "stderr: {stderr}");
}

#[test]
fn templates_in_the_binary_are_the_files_in_templates() {
    for t in TEMPLATES {
        let dir = tempfile::tempdir().unwrap();
        tapplan()
            .current_dir(dir.path())
            .args(["new", "x.yaml", "--template", t])
            .assert()
            .code(0);
        let written = std::fs::read_to_string(dir.path().join("x.yaml")).unwrap();
        let file = std::fs::read_to_string(root().join(format!("templates/{t}.yaml"))).unwrap();
        assert_eq!(written, file, "template {t}");
    }
}

#[test]
fn new_refuses_to_overwrite_without_force() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("mine.yaml");
    std::fs::write(&f, "my own work\n").unwrap();
    tapplan()
        .current_dir(dir.path())
        .args(["new", "mine.yaml", "--template", "ram"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--force"));
    assert_eq!(std::fs::read_to_string(&f).unwrap(), "my own work\n");
    tapplan()
        .current_dir(dir.path())
        .args(["new", "mine.yaml", "--template", "ram", "--force"])
        .assert()
        .code(0);
    assert!(std::fs::read_to_string(&f).unwrap().contains("scheme:"));
}

#[test]
fn new_with_an_unknown_template_names_the_known_ones() {
    let dir = tempfile::tempdir().unwrap();
    tapplan()
        .current_dir(dir.path())
        .args(["new", "x.yaml", "--template", "wind"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "solar, generator, ram, hand, oscillating",
        ));
    assert!(!dir.path().join("x.yaml").exists());
}

#[test]
fn new_list_shows_every_template() {
    let out = tapplan().args(["new", "--list"]).assert().code(0);
    let stdout = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    for t in TEMPLATES {
        assert!(
            stdout
                .lines()
                .any(|l| l.split_whitespace().next() == Some(t)),
            "`{t}` missing from:\n{stdout}"
        );
    }
}

#[test]
fn check_of_a_missing_file_exits_2() {
    tapplan()
        .args(["check", "no-such-scheme.yaml"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot read the file"));
}

#[test]
fn check_without_files_is_a_usage_error() {
    tapplan().arg("check").assert().code(2);
}

#[test]
fn top_level_help_and_version() {
    for flag in ["--help", "-h"] {
        tapplan()
            .arg(flag)
            .assert()
            .code(0)
            .stdout(predicate::str::contains("does not certify"));
    }
    for flag in ["--version", "-V"] {
        tapplan()
            .arg(flag)
            .assert()
            .code(0)
            .stdout(predicate::str::contains(env!("CARGO_PKG_VERSION")));
    }
}

#[test]
fn every_subcommand_has_help() {
    for sub in SUBCOMMANDS {
        tapplan()
            .args([sub, "--help"])
            .assert()
            .code(0)
            .stdout(predicate::str::contains("Usage:"));
        tapplan().args(["help", sub]).assert().code(0);
    }
}

#[test]
fn every_subcommand_help_shows_the_caution() {
    for sub in SUBCOMMANDS {
        tapplan()
            .args([sub, "--help"])
            .assert()
            .code(0)
            .stdout(predicate::str::contains("does not certify"));
    }
}

#[test]
fn every_subcommand_has_version() {
    for sub in SUBCOMMANDS {
        tapplan()
            .args([sub, "--version"])
            .assert()
            .code(0)
            .stdout(predicate::str::contains(env!("CARGO_PKG_VERSION")));
    }
}
