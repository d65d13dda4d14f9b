//! `tapplan pumptest` end to end: the sample record reproduces its scheme's borehole figures,
//! a synthetic record generated here from Theis with known T and S plus well losses is
//! recovered to 1 %, and bad records give `file:line:column` messages or visible notes.

use std::path::Path;
use std::process::{Command, Output};

use tapplan::physics::aquifer::{theis_drawdown_m, well_loss_m};

fn tapplan_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapplan"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("run tapplan")
}

fn tapplan(args: &[&str]) -> Output {
    tapplan_in(Path::new(env!("CARGO_MANIFEST_DIR")), args)
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

const SAMPLE: &str = "samples/pumptests/kessa-bh1.yaml";

fn json_of(out: &Output) -> serde_json::Value {
    assert!(
        out.status.success(),
        "exit {:?}: {}",
        out.status,
        text(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("json")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn sample_record_reproduces_the_scheme_borehole() {
    let out = tapplan(&["pumptest", SAMPLE, "--json", "-"]);
    let j = json_of(&out);
    let f = &j["report"]["figures"];
    // The scheme's figures (samples/kessa-ridge-solar.yaml, sources.boreholes[0]) from which the
    // invented record was generated: T = 35 m²/day, S = 0.0008, B = 400 s/m², C = 150000 s²/m⁵,
    // tested yield 22 m³/h, safe-yield fraction 0.7. Readings are rounded to 1 cm (pumped well)
    // and 1 mm (observation well), so the analysis returns them to within a few per mille.
    let t_m2_per_day = f["t_m2_per_s"].as_f64().unwrap() * 86_400.0;
    assert!(rel(t_m2_per_day, 35.0) < 0.01, "T {t_m2_per_day}");
    assert!(rel(f["storativity"].as_f64().unwrap(), 0.0008) < 0.02);
    let wl = &f["well_losses"];
    assert!(rel(wl["b_well_s_per_m2"].as_f64().unwrap(), 400.0) < 0.02);
    assert!(rel(wl["c_s2_per_m5"].as_f64().unwrap(), 150_000.0) < 0.01);
    assert!(rel(f["tested_m3_per_s"].as_f64().unwrap() * 3600.0, 22.0) < 1e-9);
    assert_eq!(f["safe_yield_fraction"].as_f64().unwrap(), 0.7);

    // The pasted block carries the scheme's own values for every key it writes.
    let block = j["scheme_block"].as_str().unwrap();
    let b: serde_yaml::Value = serde_yaml::from_str(block).unwrap();
    let b = &b["sources"]["boreholes"][0];
    let scheme: serde_yaml::Value = serde_yaml::from_str(
        &std::fs::read_to_string(
            Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/kessa-ridge-solar.yaml"),
        )
        .unwrap(),
    )
    .unwrap();
    let s = &scheme["sources"]["boreholes"][0];
    for key in [
        "name",
        "static_water_level_m",
        "tested_yield_m3_per_h",
        "safe_yield_fraction",
        "transmissivity_m2_per_day",
        "storativity",
        "well_loss_linear_s_per_m2",
        "well_loss_quadratic_s2_per_m5",
        "pump_intake_depth_m",
        "diameter_mm",
        "submergence_margin_m",
    ] {
        let (x, y) = (&b[key], &s[key]);
        match (x.as_f64(), y.as_f64()) {
            (Some(x), Some(y)) => assert!(rel(x, y) < 1e-9, "{key}: block {x}, scheme {y}"),
            _ => assert_eq!(x, y, "{key}"),
        }
    }
}

#[test]
fn text_report_shows_fits_validity_and_the_rule() {
    let out = tapplan(&["pumptest", SAMPLE]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let t = text(&out.stdout);
    for want in [
        "Cooper–Jacob, late time",
        "Theis, least squares",
        "Theis recovery",
        "valid (< 0.05)",
        "Hantush–Bierschenk at Δt = 100 min",
        "well efficiency at",
        "Safe-yield rule: the smaller of",
        "well_loss_quadratic_s2_per_m5:",
        "readings after the pump stopped in the step test are not used",
    ] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
}

#[test]
fn pdf_pages_carry_the_records_and_are_repeatable() {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("a.pdf");
    let b = dir.path().join("b.pdf");
    for p in [&a, &b] {
        let out = tapplan(&["pumptest", SAMPLE, "--pdf", p.to_str().unwrap()]);
        assert!(out.status.success(), "{}", text(&out.stderr));
    }
    let pa = std::fs::read(&a).unwrap();
    assert_eq!(pa, std::fs::read(&b).unwrap(), "same input, same bytes");
    let names = tapplan::output::pdf::list_attachments(&pa).unwrap();
    for n in [
        "pumptest-kessa-bh1.yaml",
        "pumptest-kessa-bh1-steps.csv",
        "pumptest-kessa-bh1-constant.csv",
    ] {
        assert!(names.iter().any(|x| x == n), "{n} not in {names:?}");
    }
    let csv = tapplan::output::pdf::extract_attachment(&pa, "pumptest-kessa-bh1-steps.csv")
        .unwrap()
        .unwrap();
    let orig = std::fs::read(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/pumptests/kessa-bh1-steps.csv"),
    )
    .unwrap();
    assert_eq!(csv, orig);
}

/// Writes a test folder: the YAML and the two CSV records.
fn write_case(dir: &Path, yaml: &str, steps: &str, constant: &str) -> std::path::PathBuf {
    std::fs::write(dir.join("steps.csv"), steps).unwrap();
    std::fs::write(dir.join("constant.csv"), constant).unwrap();
    let p = dir.join("test.yaml");
    std::fs::write(&p, yaml).unwrap();
    p
}

const YAML: &str = "borehole:
  name: Test well
  diameter_mm: 200
  static_water_level_m: 12
  pump_intake_depth_m: 45
tests:
  - name: steps
    kind: step
    file: steps.csv
  - name: constant
    kind: constant_rate
    file: constant.csv
";

/// A synthetic record generated from Theis with known T and S plus Jacob's well loss:
/// T = 120 m²/day, S = 2e-4, r_w = 0.1 m, B = 150 s/m², C = 3e4 s²/m⁵; steps of 90 min at
/// 20, 35, 50, 65 m³/h; constant rate 40 m³/h for 24 h with an observation well at 20 m.
/// `rate_unit` is `m3_per_h` or `l_per_s` (the same rates, converted here).
fn synthetic(rate_unit: &str) -> (String, String) {
    let t = 120.0 / 86_400.0;
    let s = 2e-4;
    let rw = 0.1;
    let (bw, c) = (150.0, 3e4);
    let conv = |q_m3h: f64| match rate_unit {
        "m3_per_h" => q_m3h,
        _ => q_m3h / 3.6,
    };
    let rates = [20.0, 35.0, 50.0, 65.0];
    let len_min = 90.0;
    let into = [
        1.0, 2.0, 4.0, 6.0, 10.0, 15.0, 20.0, 30.0, 45.0, 60.0, 75.0, 90.0,
    ];
    let mut steps = format!(
        "elapsed_min,rate_{rate_unit},drawdown_m\n0,{},0\n",
        conv(20.0)
    );
    for (n, &qn) in rates.iter().enumerate() {
        for &e in &into {
            let time = n as f64 * len_min + e;
            let mut sw = 0.0;
            let mut prev = 0.0;
            for (j, &qj) in rates[..=n].iter().enumerate() {
                sw += theis_drawdown_m(
                    (qj - prev) / 3600.0,
                    t,
                    s,
                    rw,
                    (time - j as f64 * len_min) * 60.0,
                );
                prev = qj;
            }
            sw += well_loss_m(bw, c, qn / 3600.0);
            let next = if e == len_min && n + 1 < rates.len() {
                format!("{}", conv(rates[n + 1]))
            } else {
                String::new()
            };
            steps.push_str(&format!("{time},{next},{sw:.4}\n"));
        }
    }
    let q = 40.0 / 3600.0;
    let mut constant = format!(
        "elapsed_min,rate_{rate_unit},drawdown_m,distance_m\n0,{},0,\n",
        conv(40.0)
    );
    let times: Vec<f64> = (0..40).map(|i| 1.2 * 1.2_f64.powi(i)).collect();
    let tp = 1440.0;
    for &tm in times.iter().filter(|&&x| x < tp) {
        let sw = theis_drawdown_m(q, t, s, rw, tm * 60.0) + well_loss_m(bw, c, q);
        constant.push_str(&format!("{tm:.3},,{sw:.4},\n"));
    }
    constant.push_str(&format!(
        "{tp},0,{:.4},\n",
        theis_drawdown_m(q, t, s, rw, tp * 60.0) + well_loss_m(bw, c, q)
    ));
    for &tr in times.iter().filter(|&&x| x < 1000.0) {
        let sr = theis_drawdown_m(q, t, s, rw, (tp + tr) * 60.0)
            - theis_drawdown_m(q, t, s, rw, tr * 60.0);
        constant.push_str(&format!("{:.3},,{sr:.4},\n", tp + tr));
    }
    for &tm in times.iter().filter(|&&x| x <= tp) {
        let so = theis_drawdown_m(q, t, s, 20.0, tm * 60.0);
        constant.push_str(&format!("{tm:.3},,{so:.5},20\n"));
    }
    (steps, constant)
}

#[test]
fn synthetic_theis_record_with_well_losses_is_recovered_to_one_percent() {
    let dir = tempfile::tempdir().unwrap();
    let (steps, constant) = synthetic("m3_per_h");
    let p = write_case(dir.path(), YAML, &steps, &constant);
    let out = tapplan(&["pumptest", p.to_str().unwrap(), "--json", "-"]);
    let j = json_of(&out);
    let f = &j["report"]["figures"];
    // Known values used to generate the record above (analytic case).
    assert!(rel(f["t_m2_per_s"].as_f64().unwrap() * 86_400.0, 120.0) < 0.01);
    assert!(rel(f["storativity"].as_f64().unwrap(), 2e-4) < 0.01);
    assert!(rel(f["well_losses"]["c_s2_per_m5"].as_f64().unwrap(), 3e4) < 0.01);
    assert!(rel(f["well_losses"]["b_well_s_per_m2"].as_f64().unwrap(), 150.0) < 0.01);
    // Recovery in the pumped well gives T too (well losses vanish when the pump stops).
    let pumped = &j["report"]["constant_rate"]["wells"][0];
    assert!(pumped["distance_m"].is_null());
    let rec_t = pumped["theis_recovery"]["t_m2_per_s"].as_f64().unwrap() * 86_400.0;
    assert!(rel(rec_t, 120.0) < 0.01, "recovery T {rec_t}");
}

#[test]
fn rates_in_litres_per_second_in_one_file_are_converted_and_said() {
    let dir = tempfile::tempdir().unwrap();
    let (steps_ls, _) = synthetic("l_per_s");
    let (_, constant) = synthetic("m3_per_h");
    let p = write_case(dir.path(), YAML, &steps_ls, &constant);
    let mixed = tapplan(&["pumptest", p.to_str().unwrap(), "--json", "-"]);
    let jm = json_of(&mixed);
    let notes = jm["report"]["notes"].to_string();
    assert!(notes.contains("rate_l_per_s in steps.csv"), "{notes}");
    assert!(text(&mixed.stderr).contains("different units"));
    let (steps, constant) = synthetic("m3_per_h");
    let dir2 = tempfile::tempdir().unwrap();
    let p2 = write_case(dir2.path(), YAML, &steps, &constant);
    let j2 = json_of(&tapplan(&["pumptest", p2.to_str().unwrap(), "--json", "-"]));
    let c1 = jm["report"]["figures"]["well_losses"]["c_s2_per_m5"]
        .as_f64()
        .unwrap();
    let c2 = j2["report"]["figures"]["well_losses"]["c_s2_per_m5"]
        .as_f64()
        .unwrap();
    assert!(rel(c1, c2) < 1e-6, "same figures either way: {c1} vs {c2}");
}

/// Runs on a copy of the synthetic case with one CSV edited; returns (exit code, stderr, stdout).
fn edited(which: &str, edit: impl Fn(&str) -> String) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let (mut steps, mut constant) = synthetic("m3_per_h");
    if which == "steps" {
        steps = edit(&steps);
    } else {
        constant = edit(&constant);
    }
    let p = write_case(dir.path(), YAML, &steps, &constant);
    let out = tapplan_in(
        dir.path(),
        &["pumptest", p.file_name().unwrap().to_str().unwrap()],
    );
    (
        out.status.code().unwrap_or(-1),
        text(&out.stderr),
        text(&out.stdout),
    )
}

/// Replaces line `n` (1-based) of a text.
fn replace_line(t: &str, n: usize, new: &str) -> String {
    t.lines()
        .enumerate()
        .map(|(i, l)| {
            if i + 1 == n {
                new.to_string()
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

#[test]
fn a_missing_reading_is_left_out_with_a_note() {
    // Line 5 of steps.csv is a reading of step 1; its drawdown cell is blanked.
    let (code, _, out) = edited("steps", |t| {
        let l = t.lines().nth(4).unwrap();
        let time = l.split(',').next().unwrap();
        replace_line(t, 5, &format!("{time},,"))
    });
    assert_eq!(code, 0);
    assert!(
        out.contains("steps.csv:5:") && out.contains("blank reading; the row is left out"),
        "{out}"
    );
}

#[test]
fn a_reading_before_pumping_is_left_out_with_a_note() {
    let (code, _, out) = edited("constant", |t| {
        let mut lines: Vec<&str> = t.lines().collect();
        lines.insert(1, "-5,,0.01,");
        lines.join("\n") + "\n"
    });
    assert_eq!(code, 0);
    assert!(
        out.contains("constant.csv:2: reading at elapsed -5 before pumping started"),
        "{out}"
    );
}

#[test]
fn a_step_with_one_reading_is_refused_with_its_line() {
    // Keep only the first reading of step 2 (elapsed 91 min): the next reading changes rate.
    let (code, err, _) = edited("steps", |t| {
        let mut out = String::new();
        for l in t.lines() {
            let time: f64 = l.split(',').next().unwrap().parse().unwrap_or(-1.0);
            if time > 91.0 && time < 180.0 {
                continue;
            }
            if time == 91.0 {
                // the rate changes to step 3 here instead of at 180 min
                out.push_str("91,50,");
                out.push_str(l.rsplit(',').next().unwrap());
                out.push('\n');
                continue;
            }
            out.push_str(l);
            out.push('\n');
        }
        out
    });
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("steps.csv:"), "{err}");
    assert!(
        err.contains("step 2") && err.contains("at least two"),
        "{err}"
    );
}

#[test]
fn bad_cells_name_file_line_and_column() {
    let (code, err, _) = edited("constant", |t| replace_line(t, 4, "2.0,,abc,"));
    assert_eq!(code, 2);
    assert!(
        err.contains("constant.csv:4:6: drawdown_m: `abc` is not a number"),
        "{err}"
    );
    let (code, err, _) = edited("constant", |t| replace_line(t, 4, "0.5,,0.3,"));
    assert_eq!(code, 2);
    assert!(err.contains("is not after the previous reading"), "{err}");
    let (code, err, _) = edited("steps", |t| t.replacen("drawdown_m", "drawdown_ft", 1));
    assert_eq!(code, 2);
    assert!(
        err.contains("steps.csv:1:") && err.contains("unknown column `drawdown_ft`"),
        "{err}"
    );
}

#[test]
fn a_varying_rate_in_a_constant_rate_test_is_refused() {
    let (code, err, _) = edited("constant", |t| {
        let l = t.lines().nth(10).unwrap().to_string();
        let cells: Vec<&str> = l.split(',').collect();
        replace_line(t, 11, &format!("{},55,{},", cells[0], cells[2]))
    });
    assert_eq!(code, 2);
    assert!(err.contains("set `kind: step`"), "{err}");
}

#[test]
fn yaml_problems_name_the_line() {
    let dir = tempfile::tempdir().unwrap();
    let (steps, constant) = synthetic("m3_per_h");
    let yaml = YAML.replace("diameter_mm: 200", "diameter_mm: 20");
    let p = write_case(dir.path(), &yaml, &steps, &constant);
    let out = tapplan(&["pumptest", p.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(
        err.contains("test.yaml:3:3: borehole.diameter_mm: 20 is outside 50 to 1000 mm"),
        "{err}"
    );
    let yaml = YAML.replace("kind: step", "kind: steps");
    let p = write_case(dir.path(), &yaml, &steps, &constant);
    let err = text(&tapplan(&["pumptest", p.to_str().unwrap()]).stderr);
    assert!(
        err.contains("tests[0].kind: `steps` is not a kind of test"),
        "{err}"
    );
    let yaml = YAML.replace("static_water_level_m", "static_level_m");
    let p = write_case(dir.path(), &yaml, &steps, &constant);
    let err = text(&tapplan(&["pumptest", p.to_str().unwrap()]).stderr);
    assert!(
        err.contains("test.yaml:4:") && err.contains("static_level_m"),
        "{err}"
    );
    let yaml = YAML.replace("file: constant.csv", "file: missing.csv");
    let p = write_case(dir.path(), &yaml, &steps, &constant);
    let err = text(&tapplan(&["pumptest", p.to_str().unwrap()]).stderr);
    assert!(err.contains("cannot read `missing.csv`"), "{err}");
}

#[test]
fn plan_shows_the_fit_carries_the_records_and_verifies() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("kessa.pdf");
    let out = tapplan(&[
        "plan",
        "samples/kessa-ridge-solar.yaml",
        "-o",
        pdf.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let bytes = std::fs::read(&pdf).unwrap();
    let names = tapplan::output::pdf::list_attachments(&bytes).unwrap();
    for n in [
        "pumptest/pumptests/kessa-bh1.yaml",
        "pumptest/pumptests/kessa-bh1-steps.csv",
        "pumptest/pumptests/kessa-bh1-constant.csv",
    ] {
        assert!(names.iter().any(|x| x == n), "{n} not in {names:?}");
    }
    // The source page names the test and compares its figures with the scheme's.
    if let Ok(o) = Command::new("pdftotext").arg(&pdf).arg("-").output() {
        let t = text(&o.stdout);
        assert!(
            t.contains("the scheme file's figures against the pumping test"),
            "no comparison table"
        );
        assert!(t.contains("Pumping test of BH-Kessa-1"));
        assert!(!t.contains("DIFFER by more than 5 %"));
    }
    // verify re-runs from the embedded scheme and test records alone.
    let v = tapplan(&["verify", pdf.to_str().unwrap()]);
    assert!(v.status.success(), "{}{}", text(&v.stdout), text(&v.stderr));
    assert!(text(&v.stdout).contains("bytes match"));
}

#[test]
fn a_scheme_naming_a_missing_test_file_gets_a_warning_and_a_visible_plan_note() {
    let dir = tempfile::tempdir().unwrap();
    let scheme = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/kessa-ridge-solar.yaml"),
    )
    .unwrap();
    let p = dir.path().join("kessa.yaml");
    std::fs::write(&p, scheme).unwrap();
    let out = tapplan(&["check", p.to_str().unwrap()]);
    let all = format!("{}{}", text(&out.stdout), text(&out.stderr));
    assert!(
        all.contains("pumping-test file") && all.contains("not found"),
        "{all}"
    );
    assert_ne!(out.status.code(), Some(2), "{all}");
}

#[test]
fn several_tests_can_share_one_file_with_a_test_column() {
    let dir = tempfile::tempdir().unwrap();
    let (steps, constant) = synthetic("m3_per_h");
    // One file: a `test` column in front of each record's columns.
    let mut one = String::from("test,elapsed_min,rate_m3_per_h,drawdown_m,distance_m\n");
    for l in steps.lines().skip(1) {
        one.push_str(&format!("steps,{l},\n"));
    }
    for l in constant.lines().skip(1) {
        one.push_str(&format!("constant,{l}\n"));
    }
    std::fs::write(dir.path().join("all.csv"), one).unwrap();
    let yaml = YAML
        .replace("file: steps.csv", "file: all.csv")
        .replace("file: constant.csv", "file: all.csv");
    let p = dir.path().join("one.yaml");
    std::fs::write(&p, yaml).unwrap();
    let j1 = json_of(&tapplan(&["pumptest", p.to_str().unwrap(), "--json", "-"]));
    let p2 = write_case(dir.path(), YAML, &steps, &constant);
    let j2 = json_of(&tapplan(&["pumptest", p2.to_str().unwrap(), "--json", "-"]));
    assert_eq!(j1["report"]["figures"], j2["report"]["figures"]);
}

#[test]
fn for_scheme_compares_and_names_the_test_file_relative_to_the_scheme() {
    let out = tapplan(&[
        "pumptest",
        SAMPLE,
        "--for-scheme",
        "samples/kessa-ridge-solar.yaml",
        "--json",
        "-",
    ]);
    let j = json_of(&out);
    let rows = j["scheme_comparison"].as_array().unwrap();
    assert_eq!(rows.len(), 6);
    for r in rows {
        assert!(r[3].as_str().unwrap().starts_with("agree"), "{r}");
    }
    let block: serde_yaml::Value =
        serde_yaml::from_str(j["scheme_block"].as_str().unwrap()).unwrap();
    // The sample scheme names its test as `pumptests/kessa-bh1.yaml`.
    assert_eq!(
        block["sources"]["boreholes"][0]["pumping_test_file"].as_str(),
        Some("pumptests/kessa-bh1.yaml")
    );
    // A scheme without a borehole of that name is refused with the names it has.
    let out = tapplan(&[
        "pumptest",
        SAMPLE,
        "--for-scheme",
        "samples/tolomba-market-generator.yaml",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("its boreholes: Tolomba-BH-A"));
}
