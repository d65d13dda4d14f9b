//! File safety of the binary: outputs are written whole (temp file beside the target, then a
//! rename), an interrupted run leaves the previous output byte for byte, inputs are never
//! overwritten, `-` writes to standard output, unwritable paths give exit 2 and a clear message,
//! and stale temp files left by killed runs are cleaned up on the next successful write.

use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::time::Duration;

use assert_cmd::Command;

const LIMIT: Duration = Duration::from_secs(120);

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn sample_text() -> String {
    std::fs::read_to_string(root().join("samples/kessa-ridge-solar.yaml")).unwrap()
}

/// The Kessa Ridge sample with one synthetic weather year: quick to run.
fn quick_scheme(dir: &Path) -> PathBuf {
    let p = dir.join("quick.yaml");
    let text = sample_text().replace("  years: 30\n", "  years: 1\n");
    assert!(text.contains("  years: 1\n"));
    std::fs::write(&p, text).unwrap();
    p
}

/// The Kessa Ridge sample with 100 synthetic years and a 50-year horizon: seconds to run.
fn slow_scheme(dir: &Path) -> PathBuf {
    let p = dir.join("slow.yaml");
    let text = sample_text()
        .replace("  years: 30\n", "  years: 100\n")
        .replace("  horizon_years: 15\n", "  horizon_years: 50\n");
    assert!(text.contains("  years: 100\n") && text.contains("horizon_years: 50"));
    std::fs::write(&p, text).unwrap();
    p
}

fn tapplan() -> Command {
    Command::cargo_bin("tapplan").unwrap()
}

/// Names in `dir`, sorted.
fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn killed_run_leaves_the_previous_output_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let scheme = slow_scheme(dir.path());
    let bin = assert_cmd::cargo::cargo_bin("tapplan");
    // a whole run first, to time it on this machine: the kills below come at fixed fractions
    // of that time, so they land mid-run however fast the machine is
    let start = std::time::Instant::now();
    let whole = std::process::Command::new(&bin)
        .current_dir(dir.path())
        .args(["run", "slow.yaml", "--json", "whole.json", "--quiet"])
        .output()
        .unwrap();
    let took = start.elapsed();
    assert_eq!(whole.status.code(), Some(0));
    std::fs::remove_file(dir.path().join("whole.json")).unwrap();
    let out = dir.path().join("out.json");
    let previous = b"{\"previous\": \"run\", \"bytes\": [1, 2, 3]}\n".to_vec();
    std::fs::write(&out, &previous).unwrap();
    for fraction in [0.1, 0.4] {
        let delay = took.mul_f64(fraction);
        let mut child = std::process::Command::new(&bin)
            .current_dir(dir.path())
            .args(["run", "slow.yaml", "--json", "out.json"])
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(delay);
        let still_running = child.try_wait().unwrap().is_none();
        child.kill().unwrap(); // SIGKILL on Unix
        let _ = child.wait();
        assert!(
            still_running,
            "the slow scheme finished within {delay:?} ({fraction} of a whole run, {took:?})"
        );
        assert_eq!(std::fs::read(&out).unwrap(), previous, "after {delay:?}");
        let left = names(dir.path());
        assert!(
            left.iter()
                .all(|n| n == "out.json" || n == "slow.yaml" || n.starts_with(".out.json.")),
            "unexpected files after kill: {left:?}"
        );
    }
    assert!(scheme.exists());
}

#[test]
fn run_killed_while_writing_leaves_the_previous_output_and_the_temp_is_cleaned_later() {
    // the sample as it is (30 weather years) writes about 2 MB of JSON: a window to kill in
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("k.yaml"), sample_text()).unwrap();
    let out = dir.path().join("out.json");
    std::fs::write(&out, "previous\n").unwrap();
    let bin = assert_cmd::cargo::cargo_bin("tapplan");
    let mut child = std::process::Command::new(&bin)
        .current_dir(dir.path())
        .args(["run", "k.yaml", "--json", "out.json", "--quiet"])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let start = std::time::Instant::now();
    let mut caught = false;
    while child.try_wait().unwrap().is_none() && start.elapsed() < LIMIT {
        if names(dir.path())
            .iter()
            .any(|n| n.starts_with(".out.json."))
        {
            child.kill().unwrap();
            caught = true;
            break;
        }
        std::thread::sleep(Duration::from_micros(200));
    }
    let _ = child.wait();
    let now = std::fs::read(&out).unwrap();
    eprintln!(
        "killed while the temp file existed: {caught}; target untouched: {}",
        now == b"previous\n"
    );
    if caught && now == b"previous\n" {
        // killed between creating the temp file and the rename: the target is untouched and
        // only the hidden temp file is left
        let left = names(dir.path());
        assert_eq!(left.len(), 3, "{left:?}");
        assert!(left[0].starts_with(".out.json.") && left[0].ends_with(".tmp"));
        // the next successful write removes it
        tapplan()
            .current_dir(dir.path())
            .args([
                "run",
                "k.yaml",
                "--json",
                "out.json",
                "--quiet",
                "--tank-m3",
                "80",
            ])
            .timeout(LIMIT)
            .assert()
            .success();
        assert_eq!(names(dir.path()), vec!["k.yaml", "out.json"]);
    } else {
        // the rename came first: the output is the whole new file, never a part
        let v: serde_json::Value = serde_json::from_slice(&now).unwrap();
        assert!(v.is_object());
    }
}

#[test]
fn completed_run_replaces_the_output_and_leaves_no_temp_file() {
    let dir = tempfile::tempdir().unwrap();
    quick_scheme(dir.path());
    std::fs::write(dir.path().join("out.json"), "old").unwrap();
    tapplan()
        .current_dir(dir.path())
        .args(["run", "quick.yaml", "--json", "out.json", "--quiet"])
        .timeout(LIMIT)
        .assert()
        .success();
    let text = std::fs::read_to_string(dir.path().join("out.json")).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert!(v.is_object());
    assert_eq!(names(dir.path()), vec!["out.json", "quick.yaml"]);
}

#[test]
fn stale_temp_files_of_the_target_are_removed_on_the_next_write() {
    let dir = tempfile::tempdir().unwrap();
    quick_scheme(dir.path());
    // left by killed runs: a process id that is not running, an old modification time
    let old = std::time::SystemTime::now() - Duration::from_secs(3600);
    // FNV-1a 64 of the target's name (offset basis and prime from the published algorithm)
    let fnv = |s: &str| {
        s.bytes().fold(0xcbf2_9ce4_8422_2325u64, |h, b| {
            (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
        })
    };
    let short = format!(".tapplan-{:016x}.3999999.0.tmp", fnv("out.json"));
    let other = format!(".tapplan-{:016x}.3999999.0.tmp", fnv("other.json"));
    for n in [
        ".out.json.3999999.0.tmp",
        ".other.json.3999999.0.tmp",
        short.as_str(),
        other.as_str(),
    ] {
        let f = std::fs::File::create(dir.path().join(n)).unwrap();
        f.set_modified(old).unwrap();
    }
    tapplan()
        .current_dir(dir.path())
        .args(["run", "quick.yaml", "--json", "out.json", "--quiet"])
        .timeout(LIMIT)
        .assert()
        .success();
    // the target's stale temp file is gone; another target's is left alone
    assert_eq!(names(dir.path()), {
        let mut want = vec![
            ".other.json.3999999.0.tmp".to_string(),
            other.clone(),
            "out.json".to_string(),
            "quick.yaml".to_string(),
        ];
        want.sort();
        want
    });
}

#[test]
fn writing_to_an_input_file_is_refused_and_the_input_is_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    let scheme = quick_scheme(dir.path());
    let before = std::fs::read(&scheme).unwrap();
    for flag in ["--json", "--hourly"] {
        let out = tapplan()
            .current_dir(dir.path())
            .args(["run", "quick.yaml", flag, "quick.yaml"])
            .timeout(LIMIT)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "{flag}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            err.contains("it is one of the input files"),
            "{flag}: {err}"
        );
        assert_eq!(std::fs::read(&scheme).unwrap(), before, "{flag}");
        // the same file through another spelling of its path
        let out = tapplan()
            .current_dir(dir.path())
            .args(["run", "quick.yaml", flag, "./quick.yaml"])
            .timeout(LIMIT)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "{flag} ./");
        assert_eq!(std::fs::read(&scheme).unwrap(), before, "{flag} ./");
    }
    let out = tapplan()
        .current_dir(dir.path())
        .args(["size", "quick.yaml", "--json", "quick.yaml"])
        .timeout(LIMIT)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2), "size");
    assert_eq!(std::fs::read(&scheme).unwrap(), before, "size");
    assert_eq!(names(dir.path()), vec!["quick.yaml"]);
}

#[test]
fn json_dash_writes_to_standard_output() {
    let dir = tempfile::tempdir().unwrap();
    quick_scheme(dir.path());
    let out = tapplan()
        .current_dir(dir.path())
        .args(["run", "quick.yaml", "--json", "-"])
        .timeout(LIMIT)
        .output()
        .unwrap();
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v.get("year").is_some(), "{v}");
    assert_eq!(names(dir.path()), vec!["quick.yaml"]);
}

#[test]
fn missing_folder_gives_a_clear_error_and_exit_2() {
    let dir = tempfile::tempdir().unwrap();
    quick_scheme(dir.path());
    for flag in ["--json", "--hourly"] {
        let out = tapplan()
            .current_dir(dir.path())
            .args([
                "run",
                "quick.yaml",
                flag,
                "no-such-folder/out.txt",
                "--quiet",
            ])
            .timeout(LIMIT)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "{flag}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            err.contains("could not write") && err.contains("no-such-folder/out.txt"),
            "{flag}: {err}"
        );
    }
}

#[test]
fn read_only_folder_gives_a_clear_error_and_exit_2() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    quick_scheme(dir.path());
    let ro = dir.path().join("ro");
    std::fs::create_dir(&ro).unwrap();
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o555)).unwrap();
    // a superuser writes anyway: then there is nothing to test here
    let probe = ro.join("probe");
    if std::fs::write(&probe, "x").is_ok() {
        let _ = std::fs::remove_file(&probe);
        eprintln!("running with permission to write into read-only folders; check skipped");
        std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o755)).unwrap();
        return;
    }
    let out = tapplan()
        .current_dir(dir.path())
        .args(["run", "quick.yaml", "--json", "ro/out.json", "--quiet"])
        .timeout(LIMIT)
        .output()
        .unwrap();
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o755)).unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("could not write"), "{err}");
    assert!(names(&ro).is_empty());
}

#[test]
fn output_that_is_a_folder_gives_exit_2_and_the_folder_is_kept() {
    let dir = tempfile::tempdir().unwrap();
    quick_scheme(dir.path());
    std::fs::create_dir(dir.path().join("taken")).unwrap();
    std::fs::write(dir.path().join("taken/keep.txt"), "keep").unwrap();
    let out = tapplan()
        .current_dir(dir.path())
        .args(["run", "quick.yaml", "--json", "taken", "--quiet"])
        .timeout(LIMIT)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("could not write"), "{err}");
    assert_eq!(
        std::fs::read_to_string(dir.path().join("taken/keep.txt")).unwrap(),
        "keep"
    );
    assert_eq!(names(dir.path()), vec!["quick.yaml", "taken"]);
}
