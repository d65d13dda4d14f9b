//! `tapplan run` end to end: exit codes, the summary line, the hourly CSV, the JSON output and
//! byte-identical output across runs.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn tapplan(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapplan"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run tapplan")
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

fn samples() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> =
        std::fs::read_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("samples"))
            .unwrap()
            .map(|e| e.unwrap().path())
            .filter(|p| p.extension().and_then(|e| e.to_str()) == Some("yaml"))
            .collect();
    v.sort();
    v
}

/// The summary line: "<design>: shortfall N h/year and P % of demand met in YEAR (...); ...".
fn is_summary(line: &str) -> bool {
    line.contains(": shortfall ")
        && line.contains(" h/year and ")
        && line.contains(" % of demand met in ")
        && line.contains("; target ")
}

const FAST: &str = "samples/tolomba-market-generator.yaml";

#[test]
fn every_sample_runs_and_prints_the_summary_line() {
    let all = samples();
    assert!(all.len() >= 4);
    for p in &all {
        let out = tapplan(&["run", p.to_str().unwrap(), "--quiet"]);
        assert_eq!(
            out.status.code(),
            Some(0),
            "{}: {}",
            p.display(),
            text(&out.stderr)
        );
        let stdout = text(&out.stdout);
        let last = stdout.lines().last().unwrap_or("");
        assert!(is_summary(last), "{}: last line `{last}`", p.display());
    }
    // without --quiet the tables come first and the summary line still closes the output
    let out = tapplan(&["run", FAST]);
    assert_eq!(out.status.code(), Some(0));
    let stdout = text(&out.stdout);
    assert!(stdout.lines().count() > 20);
    assert!(is_summary(stdout.lines().last().unwrap()));
}

#[test]
fn hourly_csv_has_a_row_per_hour_and_units_in_the_header() {
    let dir = tempfile::tempdir().unwrap();
    let csv = dir.path().join("out.csv");
    let out = tapplan(&["run", FAST, "--quiet", "--hourly", csv.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let body = std::fs::read_to_string(&csv).unwrap();
    let lines: Vec<&str> = body.lines().collect();
    assert_eq!(lines.len(), 8761, "header + 8760 hours");
    let header: Vec<&str> = lines[0].split(',').collect();
    assert_eq!(header[0], "hour_start");
    for name in &header[1..] {
        assert!(
            ["_m3", "_m", "_w", "_ratio", "_below_ground"]
                .iter()
                .any(|u| name.ends_with(u)),
            "column `{name}` names no unit"
        );
    }
    assert!(header.contains(&"tank_level_m3") && header.contains(&"pump_power_w"));
    // every row has as many fields as the header; the first is an ISO date-hour
    for l in &lines[1..] {
        assert_eq!(l.split(',').count(), header.len(), "row `{l}`");
    }
    assert!(lines[1].starts_with("2026-01-01T00:00,"));
    assert!(lines[8760].starts_with("2026-12-31T23:00,"));
}

#[test]
fn json_file_and_json_to_stdout() {
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("out.json");
    let out = tapplan(&["run", FAST, "--quiet", "--json", json.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
    // the design of the file: 100 m³ tank, 3 units of its one pump type
    assert_eq!(v["design"]["tank_m3"].as_f64(), Some(100.0));
    assert_eq!(v["design"]["units"], serde_json::json!([3]));
    assert!(v["design_text"].as_str().unwrap().contains("100 m³ tank"));
    assert!(v["first_year"]["years_run"].as_u64().unwrap() >= 1);

    // `--json -`: JSON alone on standard output, the summary line on standard error
    let out = tapplan(&["run", FAST, "--tank-m3", "200", "--json", "-"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("stdout is JSON");
    assert_eq!(v["design"]["tank_m3"].as_f64(), Some(200.0));
    assert!(is_summary(text(&out.stderr).lines().last().unwrap_or("")));
}

#[test]
fn unknown_pump_type_is_refused_with_exit_2() {
    let out = tapplan(&["run", FAST, "--pumps", "Unknown=2"]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(err.contains("Unknown"), "{err}");
    assert!(err.contains("no pump type"), "{err}");
    assert!(
        err.contains("Sub-15"),
        "names the scheme's pump types: {err}"
    );
    assert!(out.stdout.is_empty());
}

#[test]
fn zero_tank_is_refused_with_exit_2() {
    let out = tapplan(&["run", FAST, "--tank-m3", "0"]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(err.contains("--tank-m3"), "{err}");
    assert!(out.stdout.is_empty());
}

/// The array size is needed only while the design runs a solar unit: without one the run
/// needs no `array_kwp`, with one it says which field or option gives it.
#[test]
fn array_size_is_asked_for_only_when_a_solar_unit_runs() {
    let dir = tempfile::tempdir().unwrap();
    let text_in = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/sabuya-handpumps.yaml"),
    )
    .unwrap();
    let without = text_in.replace("    array_kwp: 1.0\n", "");
    assert_ne!(without, text_in, "the sample states its array size");
    let f = dir.path().join("no-array.yaml");
    std::fs::write(&f, without).unwrap();
    let f = f.to_str().unwrap();

    // hand pumps only: runs
    let out = tapplan(&["run", f, "--quiet", "--pumps", "SolarSub-3=0"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let line = text(&out.stdout);
    assert!(
        line.starts_with("10 m³ tank, 3 × Lever hand pump: shortfall "),
        "{line}"
    );

    // the solar unit without an array size: refused, naming the field and the option
    let out = tapplan(&["run", f, "--quiet"]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(
        err.contains("drives.solar.array_kwp") && err.contains("--array-kwp"),
        "{err}"
    );
    assert!(out.stdout.is_empty());

    // given on the command line, the run is the sample's own
    let given = tapplan(&["run", f, "--quiet", "--array-kwp", "1"]);
    let sample = tapplan(&["run", "samples/sabuya-handpumps.yaml", "--quiet"]);
    assert_eq!(given.status.code(), Some(0), "{}", text(&given.stderr));
    assert_eq!(text(&given.stdout), text(&sample.stdout));
}

#[test]
fn output_is_byte_identical_across_runs() {
    let dir = tempfile::tempdir().unwrap();
    let mut got = Vec::new();
    for i in 0..2 {
        let csv = dir.path().join(format!("h{i}.csv"));
        let json = dir.path().join(format!("r{i}.json"));
        for sample in [FAST, "samples/sabuya-handpumps.yaml"] {
            let out = tapplan(&[
                "run",
                sample,
                "--hourly",
                csv.to_str().unwrap(),
                "--json",
                json.to_str().unwrap(),
            ]);
            assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
            got.push((
                out.stdout,
                std::fs::read(&csv).unwrap(),
                std::fs::read(&json).unwrap(),
            ));
        }
    }
    assert_eq!(
        got[0], got[2],
        "generator sample: stdout, CSV and JSON repeat"
    );
    assert_eq!(
        got[1], got[3],
        "hand-pump/solar sample: stdout, CSV and JSON repeat"
    );
}
