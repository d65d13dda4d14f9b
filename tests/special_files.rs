//! Inputs and outputs that are not plain files: folders, named pipes, devices, links, long
//! names. Inputs must be regular files, read with a bound; outputs to devices and pipes are
//! written straight through, links are followed to the file they name.
#![cfg(unix)]

use std::path::{Path, PathBuf};
use std::process::Output;
use std::time::Duration;

use assert_cmd::Command;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn tapplan(dir: &Path, args: &[&str]) -> Output {
    Command::cargo_bin("tapplan")
        .unwrap()
        .current_dir(dir)
        .args(args)
        .timeout(Duration::from_secs(60))
        .output()
        .unwrap()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn mkfifo(p: &Path) {
    let ok = std::process::Command::new("mkfifo")
        .arg(p)
        .status()
        .unwrap()
        .success();
    assert!(ok, "mkfifo {}", p.display());
}

/// A folder with a pipe, a link to /dev/zero and a folder, each named like an input.
fn specials(dir: &Path, ext: &str) -> Vec<(PathBuf, &'static str)> {
    let fifo = dir.join(format!("pipe.{ext}"));
    mkfifo(&fifo);
    let zero = dir.join(format!("zero.{ext}"));
    std::os::unix::fs::symlink("/dev/zero", &zero).unwrap();
    let folder = dir.join(format!("folder.{ext}"));
    std::fs::create_dir(&folder).unwrap();
    vec![
        (fifo, "named pipe (FIFO)"),
        (zero, "character device"),
        (folder, "a folder"),
        (PathBuf::from("/dev/zero"), "character device"),
    ]
}

#[test]
fn scheme_rules_and_plan_inputs_that_are_not_files_are_refused_and_named() {
    let dir = tempfile::tempdir().unwrap();
    let scheme = root().join("samples/kessa-ridge-solar.yaml");
    for (p, kind) in specials(dir.path(), "yaml") {
        let p = p.to_str().unwrap();
        for args in [
            vec!["check", p],
            vec!["run", p],
            vec!["rules", "--rules", p],
            vec!["check", scheme.to_str().unwrap(), "--rules", p],
            vec!["verify", p],
        ] {
            let o = tapplan(dir.path(), &args);
            assert_eq!(o.status.code(), Some(2), "{args:?}: {}", err(&o));
            assert!(err(&o).contains(kind), "{args:?}: {}", err(&o));
            assert!(!err(&o).contains("os error"), "{args:?}: {}", err(&o));
        }
    }
}

#[test]
fn a_weather_file_that_is_not_a_file_is_named_not_called_missing() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(root().join("tests/data/broken/weather_file_missing.yaml"))
        .unwrap();
    for (p, kind) in specials(dir.path(), "epw") {
        let t = text.replace("no-such-weather.epw", p.to_str().unwrap());
        std::fs::write(dir.path().join("s.yaml"), t).unwrap();
        let o = tapplan(dir.path(), &["check", "s.yaml"]);
        assert_eq!(o.status.code(), Some(2), "{}", err(&o));
        let e = err(&o);
        // line 51 holds weather.file (counted in the corpus file)
        assert!(
            e.contains("s.yaml:51:") && e.contains("weather.file: ") && e.contains(kind),
            "{kind}: {e}"
        );
        assert!(!e.contains("not found"), "{e}");
    }
}

#[test]
fn verify_reads_no_more_than_its_limit() {
    let dir = tempfile::tempdir().unwrap();
    let big = dir.path().join("big.pdf");
    let f = std::fs::File::create(&big).unwrap();
    // sparse: 65 MiB reported, no disk used
    f.set_len(65 * 1024 * 1024).unwrap();
    let o = tapplan(dir.path(), &["verify", "big.pdf"]);
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert!(
        err(&o).contains("larger than 67108864 bytes (64 MiB)"),
        "{}",
        err(&o)
    );
}
