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

fn sample_path() -> String {
    root()
        .join("samples/kessa-ridge-solar.yaml")
        .to_str()
        .unwrap()
        .to_string()
}

#[test]
fn an_output_link_is_followed_and_a_pipe_is_written_through() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // a link to a file not there yet, and a link to a file that is
    std::os::unix::fs::symlink("real.json", d.join("link.json")).unwrap();
    std::fs::write(d.join("old.json"), "old").unwrap();
    std::os::unix::fs::symlink(d.join("old.json"), d.join("abs.json")).unwrap();
    for name in ["link.json", "abs.json"] {
        let o = tapplan(d, &["run", &sample_path(), "-q", "--json", name]);
        assert_eq!(o.status.code(), Some(0), "{}", err(&o));
        let m = std::fs::symlink_metadata(d.join(name)).unwrap();
        assert!(m.file_type().is_symlink(), "{name} is no longer a link");
    }
    let real = std::fs::read_to_string(d.join("real.json")).unwrap();
    assert!(real.starts_with('{'), "{real}");
    let old = std::fs::read_to_string(d.join("old.json")).unwrap();
    assert!(old.starts_with('{'), "the link's target was not replaced");

    // a named pipe: its reader gets the CSV, and the pipe stays a pipe
    let fifo = d.join("hours.csv");
    mkfifo(&fifo);
    let reader = {
        let fifo = fifo.clone();
        std::thread::spawn(move || std::fs::read(fifo).unwrap())
    };
    let o = tapplan(d, &["run", &sample_path(), "-q", "--hourly", "hours.csv"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let got = reader.join().unwrap();
    assert!(got.starts_with(b"hour"), "{:?}", &got[..got.len().min(40)]);
    use std::os::unix::fs::FileTypeExt;
    let t = std::fs::symlink_metadata(&fifo).unwrap().file_type();
    assert!(t.is_fifo(), "the pipe was replaced by a regular file");
    // a folder is refused by name
    std::fs::create_dir(d.join("out.json")).unwrap();
    let o = tapplan(d, &["run", &sample_path(), "-q", "--json", "out.json"]);
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert!(err(&o).contains("it is a folder"), "{}", err(&o));
}

#[test]
fn a_255_byte_output_name_works_and_a_too_long_path_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let name = format!("{}.json", "n".repeat(250));
    assert_eq!(name.len(), 255, "the longest name most file systems allow");
    let o = tapplan(d, &["run", &sample_path(), "-q", "--json", &name]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(d.join(&name).is_file());
    let names: Vec<String> = std::fs::read_dir(d)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec![name], "no temporary file left");
    // a path of about 5,000 bytes: too long, not "missing"
    let long = format!("{}/p.pdf", vec!["d".repeat(200); 25].join("/"));
    let o = tapplan(d, &["plan", &sample_path(), "-o", &long]);
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert!(err(&o).contains("File name too long"), "{}", err(&o));
    assert!(!err(&o).contains("does not exist"), "{}", err(&o));
}

#[test]
fn sigterm_and_sigint_during_a_write_remove_the_temporary_file() {
    for sig in ["-TERM", "-INT"] {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("tapplan"))
            .current_dir(d)
            .args(["new", "v.yaml"])
            .env("TAPPLAN_TEST_HOLD_TEMP_MS", "20000")
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .unwrap();
        // wait for the temporary file to appear
        let has_temp = || {
            std::fs::read_dir(d)
                .unwrap()
                .any(|e| e.unwrap().file_name().to_string_lossy().ends_with(".tmp"))
        };
        let start = std::time::Instant::now();
        while !has_temp() && start.elapsed() < Duration::from_secs(20) {
            std::thread::sleep(Duration::from_millis(20));
        }
        assert!(
            has_temp(),
            "{sig}: the write never reached its temporary file"
        );
        let ok = std::process::Command::new("kill")
            .args([sig, &child.id().to_string()])
            .status()
            .unwrap()
            .success();
        assert!(ok);
        let status = child.wait().unwrap();
        assert!(
            !status.success(),
            "{sig}: the run finished instead of being stopped"
        );
        let left: Vec<String> = std::fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        assert!(left.is_empty(), "{sig}: left behind {left:?}");
    }
}

#[test]
fn new_on_a_folder_and_a_full_standard_output_say_what_they_are() {
    let dir = tempfile::tempdir().unwrap();
    let o = tapplan(dir.path(), &["new", ".", "--force"]);
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert!(err(&o).contains("is a folder"), "{}", err(&o));
    assert!(!err(&o).contains("os error"), "{}", err(&o));
    if Path::new("/dev/full").exists() {
        for args in [
            vec!["run", &sample_path(), "-q", "--json", "-"],
            vec!["run", &sample_path()],
        ] {
            let full = std::fs::OpenOptions::new()
                .write(true)
                .open("/dev/full")
                .unwrap();
            let o = std::process::Command::new(assert_cmd::cargo::cargo_bin("tapplan"))
                .args(&args)
                .stdout(full)
                .output()
                .unwrap();
            assert_eq!(o.status.code(), Some(2), "{args:?}: {}", err(&o));
            assert!(err(&o).contains("standard output"), "{args:?}: {}", err(&o));
        }
    }
}

#[test]
fn standard_output_and_error_aliases_are_written_directly() {
    let dir = tempfile::tempdir().unwrap();
    let o = tapplan(
        dir.path(),
        &["run", &sample_path(), "-q", "--json", "/dev/stdout"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(
        o.stdout.starts_with(b"{"),
        "{}",
        String::from_utf8_lossy(&o.stdout)
    );
    let o = tapplan(
        dir.path(),
        &["run", &sample_path(), "-q", "--hourly", "/dev/stderr"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(err(&o).starts_with("hour"), "{}", err(&o));
    let o = tapplan(
        dir.path(),
        &[
            "run",
            &sample_path(),
            "--hourly",
            "/dev/stdout",
            "--json",
            "-",
        ],
    );
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert!(err(&o).contains("would mix CSV and JSON"), "{}", err(&o));
}

/// A character device as the output (a null device made in a temporary folder, so a failure
/// cannot touch the system's own `/dev/null`) is written through and stays a device. Needs
/// the right to make device nodes (root); skipped without it.
#[test]
fn a_character_device_output_stays_a_device() {
    use std::os::unix::fs::FileTypeExt;
    let dir = tempfile::tempdir().unwrap();
    let node = dir.path().join("null.json");
    let made = std::process::Command::new("mknod")
        .arg(&node)
        .args(["c", "1", "3"])
        .stderr(std::process::Stdio::null())
        .status()
        .is_ok_and(|s| s.success());
    if !made {
        eprintln!("cannot make a device node here; skipped");
        return;
    }
    for args in [
        vec!["run", &sample_path(), "-q", "--json", "null.json"],
        vec!["plan", &sample_path(), "-o", "null.json"],
    ] {
        let o = tapplan(dir.path(), &args);
        assert!(
            matches!(o.status.code(), Some(0 | 1)),
            "{args:?}: {}",
            err(&o)
        );
        let t = std::fs::symlink_metadata(&node).unwrap().file_type();
        assert!(
            t.is_char_device(),
            "{args:?}: the device was replaced by a file"
        );
    }
}
