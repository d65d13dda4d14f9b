//! `tapplan check` and `tapplan rules` end to end: tables, JSON, exit codes, district files.

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use serde_json::Value;
use tapplan::rules::{Check, Quantity, RuleSet, Severity};

fn samples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("samples")
}

fn sample(name: &str) -> PathBuf {
    samples().join(name)
}

fn all_samples() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(samples())
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .collect();
    v.sort();
    v
}

fn tapplan() -> Command {
    Command::cargo_bin("tapplan").unwrap()
}

/// Runs `tapplan check ARGS --json`, returning (exit code, JSON).
fn check_json(args: &[&std::ffi::OsStr]) -> (i32, Value) {
    let out = tapplan()
        .arg("check")
        .args(args)
        .arg("--json")
        .output()
        .unwrap();
    let v: Value = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    (out.status.code().unwrap(), v)
}

/// The outcome of rule `id` for the file whose path ends with `file_end`.
fn outcome<'a>(v: &'a Value, file_end: &str, id: &str) -> &'a Value {
    let f = v["files"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["file"].as_str().unwrap().ends_with(file_end))
        .unwrap_or_else(|| panic!("no file {file_end}"));
    f["outcomes"]
        .as_array()
        .unwrap()
        .iter()
        .find(|o| o["id"] == id)
        .unwrap_or_else(|| panic!("no rule {id} for {file_end}"))
}

fn write_variant(dir: &Path, name: &str, from: &str, edits: &[(&str, &str)]) -> PathBuf {
    let mut text = std::fs::read_to_string(sample(from)).unwrap();
    for (a, b) in edits {
        assert!(text.contains(a), "`{a}` not in {from}");
        text = text.replacen(a, b, 1);
    }
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn published_default_limits_with_their_sources() {
    let set = RuleSet::defaults();
    let limit = |id: &str| {
        let r = set.get(id).unwrap_or_else(|| panic!("no rule {id}"));
        (r.quantity.from_si(r.limit_si.unwrap()), r.check, r.severity)
    };
    // WHO basic access, about 20 L/person/day: Howard & Bartram, "Domestic Water Quantity,
    // Service Level and Health", WHO 2003 (from memory).
    assert_eq!(
        limit("supply-per-person"),
        (20.0, Check::AtLeast, Severity::Fail)
    );
    assert!(set.get("supply-per-person").unwrap().scheme_target);
    assert!(
        set.get("supply-per-person")
            .unwrap()
            .source
            .contains("Howard & Bartram 2003")
    );
    // Sphere Handbook 2018, water supply standard 2.1: 15 L/person/day (from memory).
    assert_eq!(
        limit("supply-per-person-floor"),
        (15.0, Check::AtLeast, Severity::Warn)
    );
    // Sphere 2018, standard 2.1 guidance: 250 people per tap at 7.5 L/min (from memory).
    assert_eq!(
        limit("people-per-tap"),
        (250.0, Check::AtMost, Severity::Warn)
    );
    // Sphere 2018, standard 2.1: nearest water point under 500 m (from memory).
    assert_eq!(limit("walk-to-tap"), (500.0, Check::AtMost, Severity::Warn));
    for id in ["supply-per-person-floor", "people-per-tap", "walk-to-tap"] {
        assert!(
            set.get(id).unwrap().source.contains("Sphere Handbook 2018"),
            "{id}"
        );
    }
    // Rising-main velocity 0.5–2.5 m/s (common practice).
    assert_eq!(
        limit("main-velocity-low"),
        (0.5, Check::AtLeast, Severity::Warn)
    );
    assert_eq!(
        limit("main-velocity-high"),
        (2.5, Check::AtMost, Severity::Warn)
    );
    // 70–120 % of the best-efficiency flow (common practice).
    assert_eq!(
        limit("pump-bep-low"),
        (70.0, Check::AtLeast, Severity::Warn)
    );
    assert_eq!(
        limit("pump-bep-high"),
        (120.0, Check::AtMost, Severity::Warn)
    );
    // Half a day of storage (common practice).
    assert_eq!(limit("storage-days"), (0.5, Check::AtLeast, Severity::Warn));
    for id in [
        "main-velocity-low",
        "main-velocity-high",
        "pump-bep-low",
        "pump-bep-high",
        "storage-days",
        "yield-capped",
        "dry-run-stops",
    ] {
        assert_eq!(set.get(id).unwrap().source, "common practice", "{id}");
    }
    // Targets come from the scheme itself.
    let s = set.get("shortfall-first-year").unwrap();
    assert!(s.limit_si.is_none() && s.scheme_target);
    assert_eq!(s.quantity, Quantity::ShortfallHoursFirstYear);
    // Declared figures: max(24 h, 10 %) (this tool's tolerance).
    let d = set.get("declared-shortfall").unwrap();
    assert_eq!(d.limit_si, Some(24.0));
    assert_eq!(d.relative_fraction, Some(0.10));
}

#[test]
fn samples_print_a_table_per_scheme_and_a_summary() {
    let out = tapplan().arg("check").args(all_samples()).output().unwrap();
    let stdout = String::from_utf8(out.stdout).unwrap();
    // every sample's own design is a sound proposal: no rule fails
    assert_eq!(out.status.code(), Some(0), "{stdout}");
    for f in all_samples() {
        let name = f.display().to_string();
        assert!(stdout.contains(&format!("{name}: valid")), "{name}");
    }
    for header in ["rule", "status", "value", "limit", "source"] {
        assert!(stdout.contains(header));
    }
    // one row per rule per scheme
    let n_rules = RuleSet::defaults().rules.len();
    let rows = stdout
        .lines()
        .filter(|l| l.contains("│ supply-per-person "))
        .count();
    assert_eq!(rows, all_samples().len());
    // rule rows: five cells, the second a status
    let rows = stdout
        .lines()
        .filter(|l| {
            let cells: Vec<&str> = l.split('┆').map(|c| c.trim()).collect();
            cells.len() == 5 && ["pass", "warn", "fail", "n/a"].contains(&cells[1])
        })
        .count();
    // rules on displacement pumps only for schemes that have one
    let expected: usize = all_samples()
        .iter()
        .map(|f| {
            let s = tapplan::scheme::load_file(f).unwrap().scheme;
            let pd = s
                .pumps
                .iter()
                .any(|p| matches!(p.kind, tapplan::scheme::PumpKind::Displacement { .. }));
            RuleSet::defaults()
                .rules
                .iter()
                .filter(|r| pd || !r.quantity.displacement_only())
                .count()
        })
        .sum();
    assert!(expected < n_rules * all_samples().len());
    assert_eq!(rows, expected);
    assert!(stdout.contains("WHO, Howard & Bartram 2003"));
    assert!(stdout.contains(&format!("{} files:", all_samples().len())));
}

#[test]
fn sabuya_on_hand_pumps_alone_fails() {
    let dir = tempfile::tempdir().unwrap();
    let p = write_variant(
        dir.path(),
        "hand-only.yaml",
        "sabuya-handpumps.yaml",
        &[
            (
                "    units: 1\n    max_units: 1\n",
                "    units: 0\n    max_units: 1\n",
            ),
            ("  capacity_m3: 10\n", "  capacity_m3: 5\n"),
        ],
    );
    // With the solar pump at 0 units nothing fills the tank, and the hand pumps serve only
    // 06–12 and 14–19 h, while the communal-taps profile puts 20 % of the day's demand in 8
    // other hours (04–06, 12–14, 19–23). So every day has 8 shortfall hours once the 5 m³ tank
    // is empty, ≥ 2,800 h/year against its 300 h target: a rule fails, exit 1.
    let (code, v) = check_json(&[p.as_os_str()]);
    assert_eq!(code, 1);
    let o = outcome(&v, "hand-only.yaml", "shortfall-first-year");
    assert_eq!(o["status"], "fail");
    let hours: f64 = o["value"]
        .as_str()
        .unwrap()
        .split(' ')
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!(hours >= 2800.0, "{hours}");
    // ... and with 20 % of 20 L unserved it delivers at most 16 L/person/day (< WHO's 20 L).
    assert_eq!(
        outcome(&v, "hand-only.yaml", "supply-per-person")["status"],
        "fail"
    );
}

#[test]
fn an_under_sized_ram_scheme_fails_the_reliability_rule() {
    // Lower Wendi with one ram instead of two. D'Aubuisson efficiency q = η·Q·h/H (Fraenkel,
    // FAO Irrigation and Drainage Paper 43, 1986 — from memory): one ram on 60 L/min of drive
    // flow, 6 m of fall and 48 m of lift (1648 − 1600 m) at η = 0.6 delivers at most
    // 0.6 × 1 L/s × 6 / 48 = 0.075 L/s = 6.48 m³/day, before any main friction.
    // Demand: (310 × 20 L + 150 L) / (1 − 0.10) = 7.056 m³/day. So at least
    // (7.056 − 6.48) × 365 − 10 m³ (a full tank at the start) ≈ 200 m³ a year goes unmet, and
    // with at most 11 % of a day's demand in any hour (communal-taps profile, 0.78 m³) that is
    // at least 200 / 0.78 ≈ 258 shortfall hours, above the scheme's 150 h target.
    let dir = tempfile::tempdir().unwrap();
    let p = write_variant(
        dir.path(),
        "wendi-one-ram.yaml",
        "wendi-hamlet-ram.yaml",
        &[("    units: 2\n", "    units: 1\n")],
    );
    let out = tapplan().arg("check").arg(&p).output().unwrap();
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert_eq!(out.status.code(), Some(1), "{stdout}");
    let row = stdout
        .lines()
        .find(|l| l.contains("│ shortfall-first-year "))
        .unwrap();
    assert!(row.contains("┆ fail "), "{row}");
    assert!(row.contains("≤ 150 h/year (scheme target)"), "{row}");
    let (_, v) = check_json(&[p.as_os_str()]);
    let o = outcome(&v, "wendi-one-ram.yaml", "shortfall-first-year");
    let hours: f64 = o["value"]
        .as_str()
        .unwrap()
        .split(' ')
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!(hours >= 258.0, "{hours}");
}

#[test]
fn a_district_limit_of_60_litres_fails_a_passing_sample() {
    // Tolomba allows 35 L/person/day, so what it delivers can never reach 60 L.
    let dir = tempfile::tempdir().unwrap();
    let rules = dir.path().join("strict.yaml");
    std::fs::write(
        &rules,
        "district: Strict district (invented)\nchange:\n  supply-per-person:\n    limit: 60\n",
    )
    .unwrap();
    let f = sample("tolomba-market-generator.yaml");
    let (_, v) = check_json(&[f.as_os_str()]);
    assert_eq!(
        outcome(&v, "tolomba-market-generator.yaml", "supply-per-person")["status"],
        "pass"
    );
    let (code, v) = check_json(&[f.as_os_str(), "--rules".as_ref(), rules.as_os_str()]);
    assert_eq!(code, 1);
    let o = outcome(&v, "tolomba-market-generator.yaml", "supply-per-person");
    assert_eq!(o["status"], "fail");
    assert_eq!(o["limit"], "≥ 60.0 L/person/day");
    assert_eq!(v["rules_district"], "Strict district (invented)");
}

#[test]
fn the_sample_district_file_changes_and_adds_rules() {
    let f = samples().join("rules/district-example.yaml");
    let out = tapplan()
        .args(["rules", "--rules"])
        .arg(&f)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert!(stdout.contains("Marula Hills"));
    assert!(stdout.contains("district-supply-level"));
    let row = stdout
        .lines()
        .find(|l| l.contains("│ main-velocity-low "))
        .unwrap();
    assert!(row.contains("┆ off "), "{row}");
    let k = sample("kessa-ridge-solar.yaml");
    let (_, v) = check_json(&[k.as_os_str(), "--rules".as_ref(), f.as_os_str()]);
    // switched-off rules are not reported; added ones are
    let ids: Vec<&str> = v["files"][0]["outcomes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|o| o["id"].as_str().unwrap())
        .collect();
    assert!(!ids.contains(&"main-velocity-low"));
    assert!(ids.contains(&"district-people-per-tap"));
    assert_eq!(
        outcome(&v, "kessa-ridge-solar.yaml", "storage-days")["limit"],
        "≥ 1.00 days"
    );
}

#[test]
fn a_broken_rules_file_exits_2_naming_the_line() {
    let dir = tempfile::tempdir().unwrap();
    let rules = dir.path().join("broken.yaml");
    std::fs::write(
        &rules,
        "district: Broken (invented)\nchange:\n  storage-days:\n    limt: 1.0\n",
    )
    .unwrap();
    for cmd in [
        vec!["rules"],
        vec!["check", sample("wendi-hamlet-ram.yaml").to_str().unwrap()],
    ] {
        let out = tapplan()
            .args(&cmd)
            .arg("--rules")
            .arg(&rules)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "{cmd:?}");
        let stderr = String::from_utf8(out.stderr).unwrap();
        assert!(stderr.contains("broken.yaml:4"), "{stderr}");
        assert!(stderr.contains("change.storage-days.limt"), "{stderr}");
        assert!(stderr.contains("did you mean `limit`"), "{stderr}");
    }
    // an unknown rule id and a value out of range, both reported with their lines
    std::fs::write(
        &rules,
        "change:\n  walk-to-tapp:\n    limit: 400\n  storage-days:\n    limit: -1\n",
    )
    .unwrap();
    let out = tapplan()
        .arg("rules")
        .arg("--rules")
        .arg(&rules)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert!(
        stderr.contains("broken.yaml:2") && stderr.contains("did you mean `walk-to-tap`"),
        "{stderr}"
    );
    assert!(stderr.contains("broken.yaml:5"), "{stderr}");
}

#[test]
fn an_invalid_scheme_makes_the_exit_status_2() {
    let dir = tempfile::tempdir().unwrap();
    let bad = write_variant(
        dir.path(),
        "bad.yaml",
        "wendi-hamlet-ram.yaml",
        &[("  population: 310\n", "  populaton: 310\n")],
    );
    let good = sample("wendi-hamlet-ram.yaml");
    let out = tapplan()
        .arg("check")
        .arg(&good)
        .arg(&bad)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert!(stderr.contains("populaton"), "{stderr}");
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert!(stdout.contains("bad.yaml: invalid"));
    assert!(stdout.contains("wendi-hamlet-ram.yaml: valid"));
}

#[test]
fn a_scheme_without_a_fixed_design_gets_the_rules_that_need_no_simulation() {
    let dir = tempfile::tempdir().unwrap();
    let p = write_variant(
        dir.path(),
        "open.yaml",
        "sabuya-handpumps.yaml",
        &[("  capacity_m3: 10\n", "")],
    );
    let (code, v) = check_json(&[p.as_os_str()]);
    let f = &v["files"][0];
    assert_eq!(f["simulated"], false);
    assert!(f["note"].as_str().unwrap().contains("tank.capacity_m3"));
    assert_eq!(
        outcome(&v, "open.yaml", "shortfall-first-year")["status"],
        "not_applicable"
    );
    assert_eq!(
        outcome(&v, "open.yaml", "storage-days")["status"],
        "not_applicable"
    );
    // Sabuya's longest walk is 650 m against Sphere's 500 m (a warning by default).
    let w = outcome(&v, "open.yaml", "walk-to-tap");
    assert_eq!(w["status"], "warn");
    assert_eq!(w["value"], "650 m");
    // 880 people growing 2.2 %/year for 10 years on 4 taps: 880 × 1.022¹⁰ / 4 ≈ 273 (> 250).
    let t = outcome(&v, "open.yaml", "people-per-tap");
    assert_eq!(
        t["value"],
        format!("{:.0} people", 880.0 * 1.022f64.powi(10) / 4.0)
    );
    assert_eq!(code, 0);
}

#[test]
fn output_is_identical_across_runs_and_in_input_order() {
    let mut files = all_samples();
    let run = |files: &[PathBuf], json: bool| {
        let mut c = tapplan();
        c.arg("check").args(files);
        if json {
            c.arg("--json");
        }
        c.output().unwrap().stdout
    };
    assert_eq!(run(&files, false), run(&files, false));
    assert_eq!(run(&files, true), run(&files, true));
    files.reverse();
    let v: Value = serde_json::from_slice(&run(&files, true)).unwrap();
    let got: Vec<String> = v["files"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["file"].as_str().unwrap().to_string())
        .collect();
    let want: Vec<String> = files.iter().map(|f| f.display().to_string()).collect();
    assert_eq!(got, want);
}

#[test]
fn rules_lists_every_rule_with_its_source() {
    let out = tapplan().arg("rules").output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    let stdout = String::from_utf8(out.stdout).unwrap();
    for r in &RuleSet::defaults().rules {
        assert!(stdout.contains(&format!("│ {} ", r.id)), "{}", r.id);
        assert!(stdout.contains(&r.reference), "{}", r.id);
    }
    let out = tapplan().args(["rules", "--json"]).output().unwrap();
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let r = v["rules"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["id"] == "supply-per-person")
        .unwrap();
    assert_eq!(r["limit"], 20.0);
    assert_eq!(r["unit"], "L/person/day");
}
